"""`seaprofile build DIR`: a directory stands for its cast files, in name order."""

import json

import pytest
from _cli_helpers import DEMO

import seaprofile.cli as cli


@pytest.fixture
def folder(tmp_path):
    d = tmp_path / "casts"
    d.mkdir()
    (d / "b.csv").write_bytes((DEMO / "shelf_winter_ctd.csv").read_bytes())
    (d / "a.csv").write_bytes((DEMO / "shelf_summer_ctd.csv").read_bytes())
    (d / "README.md").write_text("synthetic demo casts; this note is not a cast")
    return d


def test_directory_is_expanded_in_name_order(folder, capsys):
    assert cli.main(["build", str(folder), "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["casts"]
    assert [r["file"].rsplit("/", 1)[-1] for r in rows] == ["a.csv", "b.csv"]
    assert all(r["cast"] for r in rows)


def test_build_dot_names_every_cast(folder, capsys, monkeypatch):
    monkeypatch.chdir(folder)
    assert cli.main(["build", ".", "--out", "profiles", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert [r["cast"] for r in out["casts"]] == ["VS31-S04", "VS31-W02"]
    assert sorted(p.name for p in (folder / "profiles").iterdir()) == ["VS31-S04.nc", "VS31-W02.nc"]


def test_directory_without_cast_files_reported_clearly(tmp_path, capsys):
    empty = tmp_path / "empty"
    empty.mkdir()
    (empty / "notes.md").write_text("nothing to build")
    assert cli.main(["build", str(empty)]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "Traceback" not in err
    assert str(empty) in err and "no cast or profile files" in err and ".csv" in err


def test_help_says_directories_go_in_name_order(capsys):
    with pytest.raises(SystemExit):
        cli.main(["build", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "directories" in text and "in name order" in text


def test_missing_file_still_fails_alone(folder, tmp_path, capsys):
    assert cli.main(["build", str(tmp_path / "nope.csv"), str(folder), "--json"]) == 2
    rows = json.loads(capsys.readouterr().out)["casts"]
    assert len(rows) == 3 and sum(r["status"] == "ok" for r in rows) == 2
