"""Flag arithmetic: merging the flags of a test, and the flag of a derived quantity.

Flags follow Argo reference table 2 (:mod:`seaprofile._cf`). :func:`raise_flags` merges a
test's flags into the current ones so that none is ever lowered, comparing by severity
``0 < 1 < 2 < 5 < 3 < 4`` (Argo's order 0 < 1 < 2 < 3 < 4, with 5 "changed" counted as
usable data below "probably bad") and never changing 8 (estimated) or 9 (missing).
:func:`worst_flag` gives a quantity derived from several inputs the most severe of their
flags in the order ``0 < 1 < 2 < 5 < 8 < 3 < 4 < 9``.
"""

from __future__ import annotations

import numpy as np

from .. import _cf

__all__ = ["raise_flags", "worst_flag"]

# severity rank indexed by the flag value 0..9 (6 and 7 are unused by Argo table 2)
_RAISE_RANK = np.array([0, 1, 2, 4, 5, 3, 0, 0, 0, 0], dtype=np.int8)
_DERIVED_RANK = np.array([0, 1, 2, 5, 6, 3, 0, 0, 4, 7], dtype=np.int8)


def raise_flags(old, new):
    """Merge flags so that none is ever lowered.

    Parameters
    ----------
    old : array_like of int
        Current Argo flags (0..9).
    new : array_like of int
        Flags a test proposes (0 where it has nothing to say).

    Returns
    -------
    numpy.ndarray of int8
        ``new`` where it is more severe than ``old`` (order 0 < 1 < 2 < 5 < 3 < 4), else
        ``old``; flags 8 (estimated) and 9 (missing) in ``old`` are kept as they are.
    """
    old = np.asarray(old, dtype=np.int8)
    new = np.broadcast_to(np.asarray(new, dtype=np.int8), old.shape)
    out = np.where(_RAISE_RANK[new] > _RAISE_RANK[old], new, old)
    out = np.where((old == _cf.ESTIMATED) | (old == _cf.MISSING), old, out)
    return out.astype(np.int8)


def worst_flag(*flags):
    """Flag of a quantity derived from inputs with the given flags.

    The most severe input flag in the order 0 < 1 < 2 < 5 < 8 < 3 < 4 < 9 (estimated
    inputs give an estimated result; bad or missing inputs a bad or missing one).
    """
    arrays = np.broadcast_arrays(*[np.asarray(f, dtype=np.int8) for f in flags])
    out = arrays[0].copy()
    for f in arrays[1:]:
        out = np.where(_DERIVED_RANK[f] > _DERIVED_RANK[out], f, out)
    return out.astype(np.int8)
