"""Helpers shared by the command tests: demo files, casts that need options, stderr."""

from pathlib import Path

DEMO = Path(__file__).resolve().parents[2] / "demo_casts"

#: options that read the cast of the ``renamed_cast`` fixture
RENAMED_OPTIONS = [
    "--columns",
    "pressure=col_a,temperature=col_b,salinity=col_c",
    "--units",
    "pressure=kPa",
]


def one_line_error(capsys):
    """The single stderr line of a failed command (asserts there is exactly one)."""
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "error" in err and "Traceback" not in err, err
    return err


def rewrite_cast(src, dest, header=None, pressure_scale=1.0, drop=()):
    """A copy of a demo cast with another header row, scaled pressure or metadata dropped."""
    out = []
    for line in src.read_text().splitlines():
        if line.startswith("#"):
            if not line.startswith(tuple(f"# {k}:" for k in drop)):
                out.append(line)
        elif not line[:1].isdigit():
            out.append(header or line)
        else:
            p, rest = line.split(",", 1)
            out.append(f"{float(p) * pressure_scale:.2f},{rest}")
    dest.write_text("\n".join(out) + "\n")
    return dest
