"""Where the compiled-kernel cache lives: a per-user cache directory, never the package.

numba's ``cache=True`` normally writes its index and object files into a ``__pycache__``
folder beside the source. For an installed package that folder lies inside site-packages,
where pip's uninstall does not remove it; the leftover folder then shadows a later editable
install of the same package. This module registers a cache locator, used for seaprofile's
own kernels only, that puts the cache in a per-user directory instead:

1. ``$SEAPROFILE_CACHE_DIR`` when set;
2. otherwise the platform's user cache folder (``$XDG_CACHE_HOME`` or ``~/.cache`` on
   Linux, ``~/Library/Caches`` on macOS, ``%LOCALAPPDATA%`` on Windows) + ``seaprofile``;
3. if that folder cannot be written, a folder in the system temporary directory.

A user who set numba's own ``NUMBA_CACHE_DIR`` keeps it: numba's own locator comes first.
The cache is split by package version so that an upgrade never loads stale machine code.
Other packages' numba functions are not affected.
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

from numba.core import caching

from ._version import __version__

_PACKAGE_DIR = Path(__file__).resolve().parent


def user_cache_dir() -> Path:
    """Return the folder that holds seaprofile's compiled-kernel cache.

    Returns
    -------
    pathlib.Path
        ``$SEAPROFILE_CACHE_DIR`` if set, else the platform's per-user cache folder
        joined with ``seaprofile/<version>``.
    """
    given = os.environ.get("SEAPROFILE_CACHE_DIR")
    if given:
        return Path(given).expanduser() / __version__
    if sys.platform == "win32":
        base = Path(os.environ.get("LOCALAPPDATA") or Path.home() / "AppData" / "Local")
    elif sys.platform == "darwin":
        base = Path.home() / "Library" / "Caches"
    else:
        base = Path(os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache")
    return base / "seaprofile" / __version__


def _fallback_dir() -> Path:
    uid = os.getuid() if hasattr(os, "getuid") else "user"
    return Path(tempfile.gettempdir()) / f"seaprofile-cache-{uid}" / __version__


def _inside_package(py_file) -> bool:
    try:
        Path(py_file).resolve().relative_to(_PACKAGE_DIR)
    except (ValueError, OSError):
        return False
    return True


class _PackageCacheLocator(caching._SourceFileBackedLocatorMixin, caching._CacheLocator):
    """Cache locator for seaprofile's kernels: a per-user folder, outside the package."""

    _base: Path | None = None  # chosen once per process, on the first kernel that compiles

    def __init__(self, py_func, py_file):
        self._py_file = py_file
        self._lineno = py_func.__code__.co_firstlineno
        self._cache_path = str(self._base / self.get_suitable_cache_subpath(py_file))

    def get_cache_path(self):
        return self._cache_path

    @classmethod
    def from_function(cls, py_func, py_file):
        if not _inside_package(py_file):
            return None
        for base in [cls._base] if cls._base else [user_cache_dir(), _fallback_dir()]:
            cls._base = base
            found = super().from_function(py_func, py_file)  # None when not writable
            if found is not None:
                return found
        cls._base = None
        return None


def install() -> None:
    """Register the locator (idempotent); numba's own ``NUMBA_CACHE_DIR`` keeps priority."""
    classes = caching.CacheImpl._locator_classes
    if _PackageCacheLocator in classes:
        return
    at = 1 if classes and classes[0] is caching.UserProvidedCacheLocator else 0
    classes.insert(at, _PackageCacheLocator)


install()
