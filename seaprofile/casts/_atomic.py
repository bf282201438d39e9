"""Safe writing: atomic replacement, SIGTERM cleanup, inputs never overwritten, one netCDF lock.

Private to :mod:`seaprofile.casts.write` (which re-exports :func:`atomic_write`,
:func:`refuse_input_as_output` and :data:`NETCDF_LOCK`, the names other modules use).
"""

from __future__ import annotations

import os
import signal
import tempfile
import threading
from pathlib import Path

from .._validate import SeaprofileError

#: one process-wide re-entrant lock around every netCDF open, read and write: the
#: netCDF-C/HDF5 libraries are not thread-safe, and two threads inside them at once crash
#: the process (``build --scheduler threads``)
NETCDF_LOCK = threading.RLock()


def _identities(path):
    """The keys under which ``path`` is one file: its resolved name, and (when it exists)
    its device and inode, so that symbolic and hard links are the same file."""
    keys = {("path", os.path.realpath(path))}
    try:
        st = os.stat(path)
    except OSError:
        return keys
    keys.add(("inode", st.st_dev, st.st_ino))
    return keys


def file_identities(paths):
    """The identities of ``paths`` as one frozen set: found once, checked in O(1) with
    :func:`is_among` (a batch of thousands of files compares each output to it)."""
    out = set()
    for p in paths:
        out |= _identities(p)
    return frozenset(out)


def is_among(path, identities):
    """True when ``path`` is (or links to) one of the files of :func:`file_identities`."""
    return not _identities(path).isdisjoint(identities)


def refuse_input_as_output(inputs, outputs):
    """Raise :class:`SeaprofileError` when an output path is (or links to) an input file.

    Parameters
    ----------
    inputs, outputs : iterable of str or pathlib.Path
        The files read, and the files about to be written (these need not exist yet).
        A path is the same file as another when both resolve to one path (symbolic links
        followed) or, for existing files, share device and inode (hard links).
    """
    seen = {}
    for p in inputs:
        for key in _identities(p):
            seen.setdefault(key, str(p))
    for out in outputs:
        hit = next((seen[k] for k in _identities(out) if k in seen), None)
        if hit is not None:
            raise SeaprofileError(
                f"{out}: is the input file {hit}; an input is never "
                "overwritten, choose another output name or directory"
            )


class _Terminated(BaseException):
    """SIGTERM arrived during an atomic write (raised by the handler, so cleanup runs)."""

    def __init__(self, signum):
        super().__init__(signum)
        self.signum = signum


def _on_terminate(signum, frame):
    raise _Terminated(signum)


def _terminate_handler():
    """Install the SIGTERM handler in the main thread; returns the previous one (or None)."""
    if threading.current_thread() is not threading.main_thread():
        return None  # signal handlers can only be set in the main thread
    previous = signal.getsignal(signal.SIGTERM)
    if previous in (signal.SIG_IGN, None):  # ignored or set outside Python: leave it
        return None
    signal.signal(signal.SIGTERM, _on_terminate)
    return previous


def _resume_terminate(previous, exc):
    """After cleanup: hand the SIGTERM to the handler that was there before ours."""
    if callable(previous):
        previous(exc.signum, None)
        raise SystemExit(128 + exc.signum)  # the old handler returned: still stop
    os.kill(os.getpid(), exc.signum)  # default action: die by the signal, as without us
    raise SystemExit(128 + exc.signum)  # pragma: no cover - not reached


def atomic_write(path, overwrite, fill):
    """Write through ``fill(tmp_path)`` to a temporary name, then rename into place.

    The temporary file sits in the target directory (so the rename is atomic); an existing
    ``path`` is kept unless ``overwrite``; on any failure nothing is left behind. In the
    main thread, a SIGTERM during the write removes the temporary file, then the previous
    SIGTERM handler (by default: the process ends by the signal) takes over.
    """
    path = Path(path)
    if path.exists() and not overwrite:
        raise SeaprofileError(f"{path}: exists; pass overwrite=True (--overwrite) to replace it")
    if not path.parent.is_dir():
        raise SeaprofileError(f"{path}: directory {path.parent} does not exist")
    previous = _terminate_handler()
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
        os.close(fd)
        fill(tmp)
        os.chmod(tmp, 0o666 & ~_UMASK)  # as an ordinary new file, not mkstemp's 0600
        if overwrite:
            os.replace(tmp, path)
        else:  # link fails if the file appeared meanwhile: never replace it silently
            try:
                os.link(tmp, path)
            except FileExistsError:
                raise SeaprofileError(
                    f"{path}: exists; pass overwrite=True (--overwrite) to replace it"
                ) from None
            except OSError:  # file systems without hard links
                os.replace(tmp, path)
            else:
                os.remove(tmp)
    except BaseException as exc:
        if tmp is not None and os.path.exists(tmp):
            os.remove(tmp)
        if isinstance(exc, _Terminated):
            if previous is not None:
                signal.signal(signal.SIGTERM, previous)
                previous = None
            _resume_terminate(signal.getsignal(signal.SIGTERM), exc)
        raise
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
    return path


def _read_umask():
    mask = os.umask(0)
    os.umask(mask)
    return mask


_UMASK = _read_umask()  # read once at import: os.umask is process-wide, not thread-safe
