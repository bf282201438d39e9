"""Progress on the terminal: tqdm bars for batches, dask progress for lazy graphs.

Everything here writes to stderr only, and only when stderr is a terminal (a pipe, a log
file or a test never gets bar characters) and the user did not ask for quiet. The bar
itself is tqdm's; dask graphs use :class:`dask.diagnostics.ProgressBar` on the local
schedulers and :func:`distributed.progress` on a cluster.

:func:`compile_notice` prints one honest line before the first numerical work of a
process when the compiled-kernel cache (:mod:`seaprofile._jitcache`) is empty or missing:
numba then compiles the kernels, which takes a while once.
"""

from __future__ import annotations

import contextlib
import sys

__all__ = ["enabled", "bar", "dask_progress", "compile_notice", "cache_is_cold"]

_NOTICE = "seaprofile: compiling numerical kernels (first run only; later runs start fast)..."
_noticed = False


def enabled(quiet=False, stream=None):
    """True when progress should be shown: not ``quiet`` and ``stream`` is a terminal.

    Parameters
    ----------
    quiet : bool
        The user's ``--quiet``.
    stream : file, optional
        Where progress goes (default ``sys.stderr``).
    """
    stream = sys.stderr if stream is None else stream
    if quiet:
        return False
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):  # closed or replaced stream
        return False


def bar(iterable=None, *, total=None, desc=None, unit="file", quiet=False):
    """A tqdm bar on stderr, disabled (a plain pass-through) when :func:`enabled` is False.

    Parameters
    ----------
    iterable : iterable, optional
        What to wrap.
    total : int, optional
        Number of items (when ``iterable`` has no length).
    desc : str, optional
        Label in front of the bar.
    unit : str
        What one item is (``"file"``, ``"cast"``).
    quiet : bool
        The user's ``--quiet``.
    """
    from tqdm import tqdm

    return tqdm(
        iterable,
        total=total,
        desc=desc,
        unit=unit,
        file=sys.stderr,
        disable=not enabled(quiet),
        leave=False,
        dynamic_ncols=True,
    )


@contextlib.contextmanager
def dask_progress(quiet=False):
    """Show :class:`dask.diagnostics.ProgressBar` for local dask computations in this block.

    Does nothing when progress is not :func:`enabled`. For a ``dask.distributed`` cluster
    use :func:`distributed_progress` on the futures instead (the local bar does not see
    the tasks a cluster runs).
    """
    if not enabled(quiet):
        yield
        return
    from dask.diagnostics import ProgressBar

    with ProgressBar(out=sys.stderr, minimum=1.0):
        yield


def distributed_progress(futures, quiet=False):
    """:func:`distributed.progress` on ``futures`` (a cluster), when :func:`enabled`."""
    if enabled(quiet):
        from distributed import progress

        progress(futures)
        print(file=sys.stderr)


def cache_is_cold():
    """True when the compiled-kernel cache folder is missing or holds no compiled kernel.

    The folder is :func:`seaprofile._jitcache.user_cache_dir` (``$SEAPROFILE_CACHE_DIR``
    when set). A user who set numba's own ``NUMBA_CACHE_DIR`` is not second-guessed: False.
    """
    import os

    from ._jitcache import user_cache_dir

    if os.environ.get("NUMBA_CACHE_DIR"):
        return False
    folder = user_cache_dir()
    if not folder.is_dir():
        return True
    return not any(folder.rglob("*.nbi"))


def compile_notice(quiet=False):
    """Print, once per process, that kernels are being compiled when the cache is cold.

    Printed on stderr even when stderr is not a terminal (it is one line, and explains a
    slow first run in a log), but not with ``quiet``. Returns True when it printed.
    """
    global _noticed
    if _noticed or quiet:
        return False
    _noticed = True
    if not cache_is_cold():
        return False
    print(_NOTICE, file=sys.stderr, flush=True)
    return True
