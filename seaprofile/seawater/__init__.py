"""Sea-water properties: sound speed, depth <-> pressure, state, sound absorption."""

from .absorption import ABSORPTION, absorption

__all__ = ["ABSORPTION", "absorption"]
