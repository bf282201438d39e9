"""Progress on the terminal: tqdm bars for batches, dask progress for lazy graphs.

Everything here writes to stderr only, and only when stderr is a terminal (a pipe, a log
file or a test never gets bar characters) and the user did not ask for quiet. The bar
itself is tqdm's; dask graphs use :class:`dask.diagnostics.ProgressBar` on the local
schedulers and :func:`distributed.progress` on a cluster.

:func:`compile_notice` prints one honest line before the first numerical work of a
process when the compiled-kernel cache (:mod:`seaprofile._jitcache`) is empty or missing:
numba then compiles the kernels, which takes a while once.

:class:`Pieces` gives long compiled work (a large ray fan, a large loss field: one
compiled call each) a bar: the work is cut into :data:`PIECES` groups of rays or beams,
one compiled call per group, and the bar moves after each. Off a terminal, when quiet, or
for small work it is a single group, i.e. the one call of before, at no cost.
"""

from __future__ import annotations

import contextlib
import sys

__all__ = [
    "enabled",
    "bar",
    "dask_progress",
    "compile_notice",
    "cache_is_cold",
    "Pieces",
    "pieces",
    "PIECES",
    "MIN_PIECE_SECONDS",
    "BAR_DELAY",
]

#: Groups long compiled work is cut into when a bar is shown: the bar moves in steps of
#: about a tenth of the work (common practice, no source).
PIECES = 10
#: Shortest group worth its own compiled call, s. A parallel kernel (the ray fans) starts
#: and joins its threads at every call: about 0.5-1 ms of CPU a call, and more wall time
#: when other work holds the cores (``benchmarks/bench_progress.py``). So after the first
#: group (a tenth of the work) the groups are made long enough to take this long each: a
#: job of under about ``PIECES x MIN_PIECE_SECONDS`` is done in fewer, longer groups.
MIN_PIECE_SECONDS = 0.25
#: A bar is drawn only once the job has run this long, s (tqdm's ``delay``): a job that
#: ends sooner prints nothing.
BAR_DELAY = 0.5

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


def bar(iterable=None, *, total=None, desc=None, unit="file", quiet=False, delay=0.0):
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
    delay : float
        Draw nothing until this many seconds have passed, s (tqdm's ``delay``).
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
        delay=delay,
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


def _whole(n):
    """The one group of the unsplit work: ``(slice(0, n),)``."""
    return (slice(0, n),)


class Pieces:
    """Groups of a long compiled job (rays, beams) and one tqdm bar that moves after each.

    Use as a context manager; :meth:`split` gives consecutive slices of ``n`` items to
    hand to the compiled kernel one after the other, and advances the bar by each group's
    size once the caller comes back for the next one. When ``show`` is False
    :meth:`split` returns the single ``slice(0, n)`` and nothing is printed or created:
    the work is the one compiled call it would be without progress.

    Parameters
    ----------
    total : int
        Items the bar expects (rays x passes, beams); a pass beyond it raises the total.
    show : bool
        Cut the work and show the bar (see :func:`pieces`).
    desc : str
        Label in front of the bar.
    unit : str
        What one item is (``"ray"``, ``"beam"``).
    count : int, optional
        Groups per pass at most (default :data:`PIECES`).

    min_seconds : float, optional
        Shortest group, s (default :data:`MIN_PIECE_SECONDS`); 0 keeps ``count`` equal
        groups (a serial kernel, whose calls cost microseconds).

    Notes
    -----
    The first group of a pass is ``n / count`` items; each later one is at least that and
    at least the items the previous group did in ``min_seconds`` (its measured rate), but
    at most twice the previous group (rays differ in cost across a fan), so a short job
    is a few calls and a long one ``count`` calls of ``min_seconds`` or more. Group sizes
    never change a result: callers only cut work whose items are computed, or summed,
    one after the other in the same order anyway.
    """

    def __init__(self, total, *, show, desc, unit="ray", count=None, min_seconds=None):
        self.count = PIECES if count is None else int(count)
        self.min_seconds = min_seconds
        self._bar = bar(total=int(total), desc=desc, unit=unit, delay=BAR_DELAY) if show else None

    @property
    def shown(self):
        """True when the work is cut into groups and a bar is (or will be) on stderr."""
        return self._bar is not None

    def split(self, n):
        """Consecutive slices covering ``range(n)`` (one slice when hidden)."""
        if self._bar is None or n < 2:
            yield from _whole(n)
            return
        import math
        import time

        b = self._bar
        if b.n + n > (b.total or 0):
            b.total = b.n + n
        shortest = MIN_PIECE_SECONDS if self.min_seconds is None else self.min_seconds
        least = max(1, math.ceil(n / max(1, self.count)))
        size, lo = least, 0
        while lo < n:
            hi = min(n, lo + size)
            t0 = time.perf_counter()
            yield slice(lo, hi)
            spent = time.perf_counter() - t0
            b.update(hi - lo)
            rate = (hi - lo) / max(spent, 1e-9)  # items per second of this group
            wanted = min(math.ceil(rate * shortest), 2 * (hi - lo))
            size = max(least, wanted)
            lo = hi

    def close(self):
        """Remove the bar (it is not left on the terminal)."""
        if self._bar is not None:
            self._bar.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False


def pieces(total, *, progress, large, desc, unit="ray", min_seconds=None):
    """The :class:`Pieces` of a compiled job: cut and shown only when it is worth it.

    Parameters
    ----------
    total : int
        Items the bar expects.
    progress : bool
        The caller's ``progress`` keyword (the CLI passes ``not --quiet``).
    large : bool
        The job is long enough for a bar (each caller documents its threshold).
    desc, unit : str
        Bar label and item name.
    min_seconds : float, optional
        Shortest group, s (see :class:`Pieces`).

    Returns
    -------
    Pieces
        Shown when ``progress`` and ``large`` and stderr is a terminal (:func:`enabled`).
    """
    show = bool(progress) and bool(large) and enabled()
    return Pieces(total, show=show, desc=desc, unit=unit, min_seconds=min_seconds)
