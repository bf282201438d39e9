"""The table look-up of usable values gives what seaprofile._cf.usable gives."""

import numpy as np

from seaprofile import _cf
from seaprofile.casts._fastds import usable


def test_usable_matches_cf_usable_for_every_flag_byte():
    flags = np.arange(-128, 128, dtype=np.int8)
    values = np.where(np.arange(flags.size) % 3 == 0, np.nan, 1.0)
    values[5] = np.inf
    np.testing.assert_array_equal(usable(values, flags), _cf.usable(values, flags))
    unsigned = flags.view(np.uint8)
    np.testing.assert_array_equal(usable(values, unsigned), _cf.usable(values, unsigned))
    wide = np.array([3, 4, 9, 259, -3, 1], np.int64)  # not a flag byte: numpy.isin's answer
    np.testing.assert_array_equal(usable(np.ones(6), wide), _cf.usable(np.ones(6), wide))
