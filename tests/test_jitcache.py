"""The compiled-kernel cache lives in a per-user folder, never inside the package."""

import os
import subprocess
import sys
from pathlib import Path

import seaprofile
from seaprofile import _jitcache

PACKAGE = Path(seaprofile.__file__).resolve().parent


def _cache_files(folder):
    return sorted(p for p in Path(folder).rglob("*") if p.suffix in (".nbi", ".nbc"))


def test_kernels_cache_outside_the_package(tmp_path):
    before = _cache_files(PACKAGE)
    code = (
        "import numpy as np, seaprofile; "
        "seaprofile.sound_speed(np.array([10.0]), np.array([35.0]), "
        "depth=np.array([100.0]), equation='mackenzie1981')"
    )
    env = dict(os.environ, SEAPROFILE_CACHE_DIR=str(tmp_path))
    env.pop("NUMBA_CACHE_DIR", None)
    subprocess.run([sys.executable, "-c", code], check=True, env=env)
    assert _cache_files(PACKAGE) == before
    written = _cache_files(tmp_path)
    assert written, "the kernel cache was not written to SEAPROFILE_CACHE_DIR"
    assert all(seaprofile.__version__ in p.parts for p in written)


def test_locator_ignores_other_packages(tmp_path):
    assert not _jitcache._inside_package(tmp_path / "elsewhere.py")
    assert _jitcache._inside_package(PACKAGE / "seawater" / "soundspeed.py")


def test_user_cache_dir_honours_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv("SEAPROFILE_CACHE_DIR", str(tmp_path))
    assert _jitcache.user_cache_dir() == tmp_path / seaprofile.__version__
    monkeypatch.delenv("SEAPROFILE_CACHE_DIR")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    if sys.platform.startswith("linux"):
        assert (
            _jitcache.user_cache_dir() == tmp_path / "xdg" / "seaprofile" / seaprofile.__version__
        )
