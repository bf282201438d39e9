"""``build --summary``: every cast's status and layer values; serial equals a dask cluster."""

import csv
import json

import pytest
from _cli_helpers import DEMO

from seaprofile.cli import main

CASTS = [
    str(DEMO / "shelf_summer_ctd.csv"),
    str(DEMO / "broken" / "bad_number.csv"),  # a bad file in the middle of the batch
    str(DEMO / "svp_cast.csv"),
    str(DEMO / "xbt_drop.csv"),
]


def _summary(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def test_summary_reports_the_bad_file_and_builds_the_rest(tmp_path, capsys):
    code = main(
        ["build", *CASTS, "--out", str(tmp_path / "out"), "--summary", str(tmp_path / "s.csv")]
    )
    assert code == 2  # a failed file: exit status 2, the rest still built
    rows = _summary(tmp_path / "s.csv")
    assert [r["status"] for r in rows] == ["built", "failed", "built", "built"]
    assert "bad_number.csv" in rows[1]["message"] and "line" in rows[1]["message"]
    assert all(r["written"] for r in rows if r["status"] == "built")
    assert float(rows[0]["surface_speed"]) > 1400
    assert capsys.readouterr().err.count("error") == 1


def test_summary_json_and_existing_file_refused(tmp_path, capsys):
    target = tmp_path / "s.json"
    assert main(["build", CASTS[0], "--summary", str(target), "--quiet"]) == 0
    data = json.loads(target.read_text())
    assert data["casts"][0]["status"] == "built" and "caution" in data
    assert main(["build", CASTS[0], "--summary", str(target)]) == 2  # exists, no --overwrite
    assert "--summary" in capsys.readouterr().err
    assert main(["build", CASTS[0], "--summary", str(tmp_path / "s.txt")]) == 2


def _untimed(text):
    """A profile's attribute JSON with every UTC time stamp replaced by one placeholder."""
    import re

    return re.sub(r"\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z", "<time>", str(text))


def test_serial_and_a_distributed_cluster_give_identical_results(tmp_path):
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=2, processes=False, dashboard_address=None
    ) as cluster:
        address = cluster.scheduler_address
        main(["build", *CASTS, "--out", str(tmp_path / "a"), "--summary", str(tmp_path / "a.csv")])
        main(
            ["build", *CASTS, "--out", str(tmp_path / "b"), "--summary", str(tmp_path / "b.csv")]
            + ["--scheduler", address]
        )
    a, b = _summary(tmp_path / "a.csv"), _summary(tmp_path / "b.csv")
    for row in a + b:
        row["written"] = " ".join(p.split("/")[-1] for p in row["written"].split())
    assert a == b
    for name in (tmp_path / "a").iterdir():
        import xarray as xr

        with xr.open_dataset(name) as x, xr.open_dataset(tmp_path / "b" / name.name) as y:
            # the two builds may run in different seconds: the processing times written in
            # each profile's attributes (history, date_created) are the one allowed difference
            xr.testing.assert_identical(
                x.drop_attrs().drop_vars("profile_attributes"),
                y.drop_attrs().drop_vars("profile_attributes"),
            )
            assert [_untimed(v) for v in x["profile_attributes"].values] == [
                _untimed(v) for v in y["profile_attributes"].values
            ]
