"""How numbers are written for people, shared by the figures and the commands.

No matplotlib here: the commands import this module without loading a plotting library.
"""

from __future__ import annotations

import math

__all__ = ["cutoff_text"]


def cutoff_text(frequency):
    """The duct cut-off frequency (Hz) as printed: two significant figures, no unit.

    The cut-off of a surface duct is a rule of thumb good to an order of magnitude
    (``# common practice, no source`` for the number of figures), so the figure and
    ``seaprofile inspect`` both print it to two significant figures: 1444.3 -> ``"1400"``.
    Returns None for a missing or non-finite value.
    """
    try:
        f = float(frequency)
    except (TypeError, ValueError):
        return None
    if not math.isfinite(f):
        return None
    return f"{float(f'{f:.2g}'):g}"
