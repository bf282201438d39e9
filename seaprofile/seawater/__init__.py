"""Sea-water properties: sound speed, depth <-> pressure, state, sound absorption.

The public functions live in their topic modules (``soundspeed``, ``depth``, ``state``,
``absorption``) and the most used are re-exported by :mod:`seaprofile`; nothing is
re-exported here, so that each module stays importable under its own name.
"""
