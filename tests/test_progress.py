"""Progress output: quiet off a terminal, one honest notice on a cold kernel cache."""

import io
import os
import subprocess
import sys

from seaprofile import _progress


class _Tty(io.StringIO):
    def isatty(self):
        return True


def test_not_enabled_off_a_terminal_or_when_quiet():
    assert not _progress.enabled(stream=io.StringIO())
    assert _progress.enabled(stream=_Tty())
    assert not _progress.enabled(quiet=True, stream=_Tty())


def test_bar_writes_nothing_when_stderr_is_not_a_tty(capsys):
    assert list(_progress.bar(range(5), desc="building")) == list(range(5))
    with _progress.dask_progress():
        pass
    assert capsys.readouterr().err == ""


def _run(cache, code):
    env = dict(os.environ, SEAPROFILE_CACHE_DIR=str(cache))
    env.pop("NUMBA_CACHE_DIR", None)
    return subprocess.run(
        [sys.executable, "-c", code], env=env, capture_output=True, text=True, timeout=120
    )


def test_compile_notice_once_on_a_cold_cache_then_never(tmp_path):
    code = (
        "from seaprofile import _progress\n"
        "print(_progress.compile_notice(), _progress.compile_notice())\n"
    )
    cold = _run(tmp_path / "cache", code)
    assert cold.stdout.split() == ["True", "False"]
    assert cold.stderr.count("compiling numerical kernels") == 1
    # a compiled kernel in the cache folder: warm, no notice
    from seaprofile._version import __version__

    folder = tmp_path / "cache" / __version__ / "seawater"
    folder.mkdir(parents=True)
    (folder / "soundspeed._kernel-1.py311.nbi").write_bytes(b"")
    warm = _run(tmp_path / "cache", code)
    assert warm.stdout.split() == ["False", "False"]
    assert "compiling" not in warm.stderr


def test_quiet_suppresses_the_notice(tmp_path):
    code = "from seaprofile import _progress\nprint(_progress.compile_notice(quiet=True))\n"
    out = _run(tmp_path / "cache", code)
    assert out.stdout.split() == ["False"] and out.stderr == ""


def test_every_command_says_it_compiles_on_a_cold_cache(tmp_path):
    # the first command of a fresh install compiles kernels: one line on stderr, the
    # command's own output unchanged on stdout
    code = (
        "import sys\nfrom seaprofile.cli import main\n"
        "sys.exit(main(['speed', '--temperature', '10', '--salinity', '35', "
        "'--depth', '100', '--latitude', '45', '--equation', 'mackenzie1981']))\n"
    )
    cold = _run(tmp_path / "cache", code)
    assert cold.returncode == 0, cold.stderr
    assert cold.stderr.count("compiling numerical kernels") == 1
    assert "compiling" not in cold.stdout


def test_hidden_pieces_are_one_call_and_print_nothing(capsys):
    # off a terminal (pytest's stderr) progress=True still gives the one unsplit call
    p = _progress.pieces(1000, progress=True, large=True, desc="tracing rays")
    with p:
        assert not p.shown
        assert list(p.split(1000)) == [slice(0, 1000)]
    assert capsys.readouterr().err == ""
    assert not _progress.pieces(10, progress=False, large=True, desc="x").shown
    assert not _progress.pieces(10, progress=True, large=False, desc="x").shown


def test_shown_pieces_cover_the_items_in_order_and_draw_a_bar(monkeypatch):
    tty = _Tty()
    monkeypatch.setattr(sys, "stderr", tty)
    monkeypatch.setattr(_progress, "BAR_DELAY", 0.0)
    monkeypatch.setattr(_progress, "MIN_PIECE_SECONDS", 0.0)
    with _progress.pieces(100, progress=True, large=True, desc="summing beams", unit="beam") as p:
        assert p.shown
        first = list(p.split(50))
        second = list(p.split(50))  # a second pass continues the same bar
    for parts in (first, second):
        assert len(parts) == _progress.PIECES
        assert parts[0].start == 0 and parts[-1].stop == 50
        assert all(a.stop == b.start for a, b in zip(parts[:-1], parts[1:]))
    drawn = tty.getvalue()
    assert "summing beams:" in drawn and "/100" in drawn  # tqdm redraws at most every 0.1 s


def test_slow_groups_stay_small_fast_ones_grow(monkeypatch):
    # after the first tenth, a group is sized to last MIN_PIECE_SECONDS at the rate seen,
    # growing at most twofold
    import time

    monkeypatch.setattr(sys, "stderr", _Tty())
    monkeypatch.setattr(_progress, "MIN_PIECE_SECONDS", 0.02)
    with _progress.Pieces(1000, show=True, desc="x") as p:
        fast = list(p.split(1000))  # instant groups: each twice the one before
    assert fast == [slice(0, 100), slice(100, 300), slice(300, 700), slice(700, 1000)]
    with _progress.Pieces(1000, show=True, desc="x", min_seconds=0.0) as p:
        even = list(p.split(1000))  # a serial kernel: equal tenths whatever the rate
    assert even == [slice(k, k + 100) for k in range(0, 1000, 100)]
    with _progress.Pieces(100, show=True, desc="x") as p:
        slow = []
        for part in p.split(100):
            slow.append(part)
            time.sleep(0.03)  # each group longer than MIN_PIECE_SECONDS: tenths kept
    assert len(slow) == 10
