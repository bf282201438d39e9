"""IHO S-44 uncertainty budgets against the published table."""

import numpy as np
import pytest

from seaprofile.io.errors import ArgumentError
from seaprofile.survey import S44_ORDERS, thu, tvu

# IHO S-44, Standards for Hydrographic Surveys, Edition 6.0.0 (2020), Table 1:
# order: (TVU a m, TVU b, THU fixed m, THU fraction of depth)
TABLE_1 = {
    "exclusive": (0.15, 0.0075, 1.0, 0.0),
    "special": (0.25, 0.0075, 2.0, 0.0),
    "1a": (0.5, 0.013, 5.0, 0.05),
    "1b": (0.5, 0.013, 5.0, 0.05),
    "2": (1.0, 0.023, 20.0, 0.10),
}


def test_every_order_is_in_the_table():
    assert set(S44_ORDERS) == set(TABLE_1)


@pytest.mark.parametrize("order", sorted(TABLE_1))
def test_table_1_values(order):
    a, b, fixed, fraction = TABLE_1[order]
    o = S44_ORDERS[order]
    # IHO S-44 Edition 6.0.0 (2020), Table 1: the coefficients are printed exactly
    assert (o.a, o.b, o.thu_fixed, o.thu_fraction) == (a, b, fixed, fraction)
    depth = np.array([0.0, 10.0, 40.0, 100.0, 1000.0])
    # IHO S-44 Edition 6.0.0 (2020), Table 1: TVU = sqrt(a^2 + (b d)^2) at 95 %
    np.testing.assert_allclose(tvu(depth, order), np.sqrt(a**2 + (b * depth) ** 2), rtol=1e-15)
    # IHO S-44 Edition 6.0.0 (2020), Table 1: THU = fixed + fraction * depth at 95 %
    np.testing.assert_allclose(thu(depth, order), fixed + fraction * depth, rtol=1e-15)


def test_worked_values():
    # IHO S-44 Edition 6.0.0 (2020), Table 1, worked by hand: Order 1a at 100 m,
    # sqrt(0.5^2 + 1.3^2) = sqrt(1.94) = 1.39284 m; Special at 40 m: sqrt(0.0625 + 0.09)
    assert tvu(100.0, "Order 1a") == pytest.approx(1.392839, abs=1e-6)
    assert tvu(40.0, "Special") == pytest.approx(0.390512, abs=1e-6)
    # Order 2 THU at 100 m: 20 m + 10 % of 100 m = 30 m
    assert thu(100.0, "2") == pytest.approx(30.0, abs=1e-12)


def test_custom_coefficients():
    assert tvu(50.0, a=0.3, b=0.01) == pytest.approx(np.hypot(0.3, 0.5), rel=1e-15)


@pytest.mark.parametrize(
    "call, argument",
    [
        (lambda: tvu(10.0, "3"), "order"),
        (lambda: tvu(10.0), "order"),
        (lambda: tvu(10.0, "1a", a=1.0, b=0.1), "order"),
        (lambda: tvu(-1.0, "1a"), "depth"),
        (lambda: tvu(10.0, a=-1.0, b=0.1), "a"),
        (lambda: thu(10.0, "first"), "order"),
    ],
)
def test_bad_arguments_are_named(call, argument):
    with pytest.raises(ArgumentError) as err:
        call()
    assert err.value.argument == argument
