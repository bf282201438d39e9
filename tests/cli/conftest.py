"""Fixtures shared by the command tests (helpers are in _cli_helpers.py)."""

import pytest
from _cli_helpers import DEMO, rewrite_cast

import seaprofile.cli.plot as plot_cmd


@pytest.fixture
def renamed_cast(tmp_path):
    """The demo summer shelf cast (synthetic) with unrecognisable column names and the
    pressure in kPa: it needs ``RENAMED_OPTIONS`` (--columns, --units)."""
    return rewrite_cast(
        DEMO / "shelf_summer_ctd.csv",
        tmp_path / "renamed.csv",
        header="col_a,col_b,col_c",
        pressure_scale=10.0,
    )


@pytest.fixture
def unplaced_cast(tmp_path):
    """The demo summer shelf cast (synthetic) without latitude and longitude."""
    return rewrite_cast(
        DEMO / "shelf_summer_ctd.csv", tmp_path / "unplaced.csv", drop=("latitude", "longitude")
    )


@pytest.fixture
def drawn(monkeypatch):
    """The figures the `plot` command saves (the real save still runs)."""
    figures = []
    real = plot_cmd.save_figure

    def keep(fig, path, **kw):
        figures.append(fig)
        return real(fig, path, **kw)

    monkeypatch.setattr(plot_cmd, "save_figure", keep)
    return figures
