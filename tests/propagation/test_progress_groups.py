"""Large fans and loss fields cut into groups for a progress bar give the same bytes.

The bar (seaprofile._progress.Pieces) hands the compiled kernels consecutive groups of
rays or beams. Rays are traced alone and beams are summed in launch order whatever the
groups, so every output value must be bit-identical to the one-call result: compared here
as raw bytes of every variable and coordinate (NaN positions, padding and dtypes
included). The groups are drawn by hypothesis (any consecutive cut), then the real path
(progress=True on a faked terminal, thresholds lowered) is checked end to end. The
environments are invented (the Munk 1974 canonical profile shape, a synthetic sloping
bottom).
"""

import io
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from seaprofile import _progress
from seaprofile.propagation import Environment, trace_fan
from seaprofile.propagation import loss as loss_module
from seaprofile.propagation.boundaries import Seabed
from seaprofile.propagation.loss import transmission_loss


class _Tty(io.StringIO):
    def isatty(self):
        return True


def munk(z):
    eta = 2.0 * (z - 1300.0) / 1300.0
    return 1500.0 * (1.0 + 0.00737 * (eta + np.exp(-eta) - 1.0))


Z = np.linspace(0.0, 5000.0, 41)
FLAT = Environment.from_arrays(Z, munk(Z), 5000.0, seabed=Seabed.named("sand"))
SLOPING = Environment.from_arrays(
    Z,
    munk(Z),
    bathymetry=([0.0, 6000.0, 12000.0], [5000.0, 3500.0, 4200.0]),
    seabed=Seabed.named("silt"),
)


class _Cuts:
    """Stand-in for _progress.Pieces: consecutive groups at drawn fractions of n."""

    def __init__(self, fractions):
        self.fractions = fractions
        self.calls = []

    def split(self, n):
        inner = sorted({int(round(f * n)) for f in self.fractions} - {0, n})
        edges = [0, *inner, n]
        self.calls.append(len(edges) - 1)
        for lo, hi in zip(edges[:-1], edges[1:]):
            yield slice(lo, hi)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


def assert_same_bytes(a, b):
    assert sorted(a.variables) == sorted(b.variables)
    for name in a.variables:
        x, y = np.asarray(a[name].values), np.asarray(b[name].values)
        assert x.dtype == y.dtype and x.shape == y.shape, name
        assert x.tobytes() == y.tobytes(), name


def _cut(monkeypatch, fractions):
    cuts = _Cuts(fractions)
    monkeypatch.setattr(_progress, "pieces", lambda *a, **k: cuts)
    return cuts


fractions = st.lists(st.floats(0.0, 1.0), min_size=1, max_size=6)


@settings(max_examples=25, deadline=None)
@given(
    fractions=fractions,
    rays=st.integers(2, 40),
    span=st.tuples(st.floats(-30.0, 0.0), st.floats(0.5, 30.0)),
    source=st.floats(10.0, 4000.0),
    max_range=st.floats(2000.0, 30000.0),
    step=st.one_of(st.none(), st.floats(200.0, 3000.0)),
    sloping=st.booleans(),
)
def test_fan_groups_give_the_same_bytes(fractions, rays, span, source, max_range, step, sloping):
    env = SLOPING if sloping else FLAT
    if sloping:  # the integrator is slower: keep its examples short
        rays, max_range = min(rays, 12), min(max_range, 12000.0)
    angles = np.linspace(span[0], span[1], rays)
    kw = dict(range_step=step)
    whole = trace_fan(env, source, angles, max_range, **kw)
    with pytest.MonkeyPatch.context() as mp:
        cuts = _cut(mp, fractions)
        grouped = trace_fan(env, source, angles, max_range, progress=True, **kw)
    assert cuts.calls  # the groups were used
    assert_same_bytes(whole.drop_attrs(), grouped.drop_attrs())


@settings(max_examples=25, deadline=None)
@given(
    fractions=fractions,
    beams=st.integers(10, 80),
    mode=st.sampled_from(sorted(loss_module.MODES)),
    band=st.booleans(),
    source=st.floats(5.0, 3000.0),
    cells=st.tuples(st.integers(1, 30), st.integers(1, 20)),
    sloping=st.booleans(),
)
def test_loss_groups_give_the_same_bytes(fractions, beams, mode, band, source, cells, sloping):
    env = SLOPING if sloping else FLAT
    nr, nz = cells
    ranges = np.linspace(200.0, 10000.0, nr)
    depths = np.linspace(0.0, 3400.0, nz)
    kw = dict(
        ranges=ranges,
        depths=depths,
        mode=mode,
        beams=beams,
        angles=(-25.0, 25.0),
        band=(150.0, 400.0) if band else None,
    )
    whole = transmission_loss(env, source, 250.0, **kw)
    with pytest.MonkeyPatch.context() as mp:
        cuts = _cut(mp, fractions)
        grouped = transmission_loss(env, source, 250.0, progress=True, **kw)
    assert len(cuts.calls) >= 2  # the fan and the beam sum
    a, b = whole.to_dataset(), grouped.to_dataset()
    assert_same_bytes(a.drop_attrs(), b.drop_attrs())
    # inf (no beam) cells are where they were
    assert np.array_equal(np.isinf(whole.values), np.isinf(grouped.values))


@pytest.fixture
def low_thresholds(small_jobs_show_progress, monkeypatch):
    """Thresholds at 0 (tests/conftest.py), and all PIECES groups kept however fast."""
    monkeypatch.setattr(_progress, "MIN_PIECE_SECONDS", 0.0)


def _terminal(monkeypatch):
    # in the test body: pytest's capture puts its own sys.stderr back between phases
    tty = _Tty()
    monkeypatch.setattr(sys, "stderr", tty)
    return tty


@pytest.mark.parametrize("mode", sorted(loss_module.MODES))
@pytest.mark.parametrize("env", [FLAT, SLOPING], ids=["flat", "sloping"])
def test_bar_on_a_terminal_and_same_bytes(low_thresholds, monkeypatch, env, mode):
    terminal = _terminal(monkeypatch)
    kw = dict(
        ranges=np.linspace(100.0, 12000.0, 60),
        depths=np.linspace(0.0, 3400.0, 30),
        beams=120,
        mode=mode,
    )
    shown = transmission_loss(env, 300.0, 400.0, progress=True, **kw)
    drawn = terminal.getvalue()
    assert "tracing rays" in drawn and "summing beams" in drawn and "beam/s" in drawn
    terminal.seek(0)
    terminal.truncate()
    hidden = transmission_loss(env, 300.0, 400.0, progress=False, **kw)
    assert terminal.getvalue() == ""
    assert_same_bytes(shown.to_dataset().drop_attrs(), hidden.to_dataset().drop_attrs())


def test_small_work_is_one_call_even_on_a_terminal(monkeypatch):
    # default thresholds: a small field is not cut (no bar, no extra call)
    terminal = _terminal(monkeypatch)
    seen = []
    real = _progress.pieces

    def spy(total, **kw):
        p = real(total, **kw)
        seen.append(p.shown)
        return p

    monkeypatch.setattr(_progress, "pieces", spy)
    ranges = np.linspace(100.0, 5000.0, 20)
    transmission_loss(FLAT, 300.0, 400.0, ranges=ranges, depths=[10.0, 50.0], progress=True)
    assert seen == [False, False]
    assert terminal.getvalue() == ""
