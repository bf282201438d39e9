"""Test-wide settings: no screen for matplotlib, modest hypothesis budgets."""

import os

os.environ.setdefault("MPLBACKEND", "Agg")

from hypothesis import settings  # noqa: E402

settings.register_profile("seaprofile", max_examples=60, deadline=None)
settings.load_profile("seaprofile")

# The one-line "compiling kernels" notice is tested in subprocesses (tests/test_progress.py);
# in this process it would land in whichever command test happens to run first on a cold
# cache, so it is marked as already shown.
import seaprofile._progress  # noqa: E402

seaprofile._progress._noticed = True


# --- shared array-kind fixtures (numpy, xarray, dask) ----------------------------------
import numpy as np  # noqa: E402
import pytest  # noqa: E402

ARRAY_KINDS = ("numpy", "xarray", "dask", "xarray-dask")


class ArrayKind:
    """Turns numpy test inputs into one array kind and results back into numpy.

    ``kind(a)`` gives: ``numpy`` the array itself; ``xarray`` a numpy-backed DataArray with
    dims ``("profile", "depth")`` (the last ``a.ndim`` of them, or ``dims=``) and a
    ``depth`` coordinate when ``depth=`` is given; ``dask`` a dask array; ``xarray-dask``
    the DataArray chunked. Chunks split the profile axis (two profiles a chunk) and keep
    the vertical axis whole unless ``vertical_chunks`` is given.
    """

    def __init__(self, name):
        self.name = name
        self.lazy = "dask" in name
        self.labelled = "xarray" in name

    def __call__(self, a, *, dims=None, depth=None, vertical_chunks=None):
        import xarray as xr

        a = np.asarray(a, dtype=np.float64)
        if dims is None:
            dims = ("profile", "depth")[2 - a.ndim :]
        dims = tuple(dims)
        chunks = tuple(2 if d == "profile" else (vertical_chunks or -1) for d in dims)
        if self.name == "numpy":
            return a
        if self.name == "dask":
            import dask.array as da

            return da.from_array(a, chunks=chunks)
        coords = {"depth": depth} if depth is not None and "depth" in dims else None
        out = xr.DataArray(a, dims=dims, coords=coords)
        return out.chunk(dict(zip(dims, chunks))) if self.lazy else out

    def values(self, result):
        """The numbers of a result as numpy (computing lazy results)."""
        if isinstance(result, dict):
            return {k: self.values(v) for k, v in result.items()}
        if isinstance(result, tuple):
            return tuple(self.values(v) for v in result)
        if hasattr(result, "data_vars"):
            return {k: self.values(v) for k, v in result.data_vars.items()}
        if hasattr(result, "compute"):
            result = result.compute()
        return np.asarray(getattr(result, "values", result))


@pytest.fixture(params=ARRAY_KINDS)
def array_kind(request):
    """Each public numeric function is run once per array kind from this one fixture."""
    return ArrayKind(request.param)


class TaskCounter:
    """A dask callback counting executed tasks: zero until something is computed."""

    def __init__(self):
        from dask.callbacks import Callback

        counter = self

        class _Count(Callback):
            def _pretask(self, key, dsk, state):
                counter.tasks += 1

        self.tasks = 0
        self._callback = _Count()

    def __enter__(self):
        self._callback.__enter__()
        return self

    def __exit__(self, *exc):
        self._callback.__exit__(*exc)


@pytest.fixture
def count_tasks():
    """``with count_tasks() as c: ...`` then ``c.tasks``: laziness checks (no timing)."""
    return TaskCounter


# --- progress bars of large compiled jobs ----------------------------------------------
@pytest.fixture
def small_jobs_show_progress(monkeypatch):
    """Every fan and loss field counts as large and its bar draws at once (thresholds 0).

    stderr itself must be faked in the test body: pytest's capture puts its own
    ``sys.stderr`` back between the setup and call phases.
    """
    from seaprofile import _progress
    from seaprofile.propagation import codes
    from seaprofile.propagation import loss as loss_module

    monkeypatch.setattr(codes, "PROGRESS_RAYS", 0)
    monkeypatch.setattr(codes, "PROGRESS_RAYS_INTEGRATED", 0)
    monkeypatch.setattr(loss_module, "PROGRESS_WORK", 0)
    monkeypatch.setattr(_progress, "BAR_DELAY", 0.0)
