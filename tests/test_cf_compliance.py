"""CF compliance of what seaprofile writes, checked by an outside checker.

The checker is the IOOS compliance-checker (``compliance-checker`` on PyPI), CF 1.10 suite,
with the CF standard-name table it bundles (so no network is needed). The test fails when
the checker reports any failed check, and a negative control proves that it can fail.
"""

import shutil

import netCDF4
import numpy as np
import pytest

import seaprofile
from seaprofile.casts.model import make_cast

checker = pytest.importorskip(
    "compliance_checker.runner", reason="compliance-checker is in the test extras"
)


def _failures(path):
    suite = checker.CheckSuite()
    suite.load_all_available_checkers()
    results, errors = suite.run_all(suite.load_dataset(str(path)), ["cf:1.10"], skip_checks=[])[
        "cf:1.10"
    ]
    assert not errors, errors
    return [(r.name, r.msgs) for r in results if r.value[0] < r.value[1]]


def _casts():
    # invented test data (synthetic), two casts of different lengths
    out = []
    for k, n in enumerate((40, 25)):
        p = np.linspace(1.0, 120.0, n)
        out.append(
            make_cast(
                pressure=p,
                temperature=14.0 - 0.05 * p,
                salinity=np.full(n, 35.0),
                latitude=47.0 + k,
                longitude=-8.5,
                time="2022-09-03T06:15:30",
                cast_name=f"Test-{k}",
                vessel="RV Imaginary Petrel",
                instrument="ctd",
            )
        )
    return out


# Both formats are checked under a ".nc" name: CF section 2.1 asks for that extension (the
# checker fails "profile.nc4" on it), so the netcdf4 format is named explicitly here.
@pytest.fixture(scope="module", params=["netcdf", "netcdf4"])
def written(tmp_path_factory, request):
    folder = tmp_path_factory.mktemp("cf")
    casts = _casts()
    profiles = [seaprofile.build_profile(c) for c in casts]
    fmt = request.param
    return fmt, {
        "casts": seaprofile.write(casts, folder / "casts.nc", fmt),
        "profile": seaprofile.write(profiles[0], folder / "profile.nc", fmt),
        "profiles": seaprofile.write(profiles, folder / "profiles.nc", fmt),
    }


@pytest.mark.parametrize("kind", ["casts", "profile", "profiles"])
def test_written_files_pass_the_cf_checker(written, kind):
    fmt, paths = written
    with netCDF4.Dataset(paths[kind]) as nc:
        assert nc.data_model == {"netcdf": "NETCDF3_64BIT_OFFSET", "netcdf4": "NETCDF4"}[fmt]
    assert _failures(paths[kind]) == []


def test_the_checker_catches_a_wrong_standard_name(written, tmp_path):
    # negative control: the same file with an invented standard name must fail
    bad = tmp_path / "bad.nc"
    shutil.copy(written[1]["profile"], bad)
    with netCDF4.Dataset(bad, "a") as nc:
        nc["sound_speed"].standard_name = "speed_of_noise_in_sea_water"
    names = [name for name, _ in _failures(bad)]
    assert any("Standard Name" in n for n in names), names
