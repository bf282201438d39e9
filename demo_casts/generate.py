"""Write the synthetic demo casts of seaprofile (an invented survey; nothing here is measured).

Scenario: the survey vessel *SV Tallis Reach*, out of the invented port of Ellisan Harbour,
surveys the invented *Varrow Sea*: its deep basin, its shelf in summer and winter, and a
shelf-edge front. Positions are nominal numbers chosen for realistic latitudes; the sea,
port, vessels and stations do not exist.

Run ``python demo_casts/generate.py`` to rewrite every file in this directory; the output is
deterministic (fixed seeds, fixed formats), so a second run is byte-identical. Use
``--output DIR`` to write somewhere else (the tests regenerate into a temporary directory and
compare).
"""

from __future__ import annotations

import argparse
import os
import tempfile
from pathlib import Path

import numpy as np

from seaprofile.seawater.depth import pressure_from_depth
from seaprofile.seawater.soundspeed import sound_speed

HERE = Path(__file__).resolve().parent
SURVEY = "Varrow Sea acoustic survey VS-31 (synthetic)"
VESSEL = "SV Tallis Reach"
PORT = "Ellisan Harbour"
NOTE = "SYNTHETIC demo data for seaprofile; invented survey, not a real measurement"


# --- writing ---------------------------------------------------------------------------
def _text(header, columns):
    """The file text: ``# key: value`` lines, one header row, then the rows."""
    lines = [f"# note: {NOTE}"]
    lines += [f"# {k}: {v}" for k, v in header.items()]
    lines.append(",".join(name for name, _, _ in columns))
    cols = [[fmt.format(x) for x in values] for _, values, fmt in columns]
    lines += [",".join(row) for row in zip(*cols)]
    return "\n".join(lines) + "\n"


def _write(path, text):
    """Write ``text`` atomically (temporary file in the same directory, then rename)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp_", suffix=path.suffix)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as f:
            f.write(text)
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def _header(cast_name, lat, lon, time, instrument, bottom_depth, **more):
    out = {
        "survey": SURVEY,
        "cast_name": cast_name,
        "vessel": more.pop("vessel", VESSEL),
        "port": PORT,
        "instrument": instrument,
        "latitude": f"{lat:.5f}",
        "longitude": f"{lon:.5f}",
        "time": time,
        "bottom_depth": f"{bottom_depth:.1f}",
    }
    out.update(more)
    return out


# --- water columns: temperature (degC) and salinity against depth (m) --------------------
def _smooth_excess(z, top, width):
    """Depth below ``top`` with the corner rounded over ``width`` m (softplus)."""
    x = (z - top) / width
    return width * np.logaddexp(0.0, x)


def deep_basin(z):
    """Warm mixed layer, main thermocline, a warm salty intrusion near 1100 m, cold deep water."""
    zeta = _smooth_excess(z, 45.0, 2.0)
    bump = np.exp(-(((z - 1150.0) / 260.0) ** 2))
    t = 2.30 + 13.5 * np.exp(-zeta / 260.0) + 5.0 * np.exp(-zeta / 1200.0) + 0.35 * bump
    s = 34.92 + 1.16 * np.exp(-zeta / 420.0) + 0.12 * bump
    return t, s


def shelf_summer(z):
    """About 35 m isothermal mixed layer over a sharp seasonal thermocline."""
    zeta = _smooth_excess(z, 38.0, 1.2)
    t = 11.0 - 0.004 * zeta + 6.6 * np.exp(-zeta / 6.0)
    s = 35.46 - 0.30 * np.exp(-zeta / 8.0)
    return t, s


def shelf_winter(z):
    """Winter-mixed shelf: nearly isothermal and isohaline to the bottom."""
    return 11.85 - 0.0002 * z, np.full(np.shape(z), 35.52)


def xbt_site(z):
    """Warm-side deep water for the expendable-probe drop."""
    zeta = _smooth_excess(z, 60.0, 5.0)
    return 3.0 + 12.5 * np.exp(-zeta / 260.0) + 4.0 * np.exp(-zeta / 900.0), None


def front_station(fraction):
    """Water column at a point of the front: 0 = warm and salty side, 1 = cold and fresh."""
    w = 0.5 * (1.0 + np.tanh((fraction - 0.5) / 0.12))

    def column(z):
        h = 22.0 + 20.0 * w
        zeta = _smooth_excess(z, h, 1.0)
        t_top = 18.6 * (1 - w) + 13.1 * w
        t_low = 11.8 * (1 - w) + 9.4 * w
        s_top = 35.78 * (1 - w) + 34.55 * w
        s_low = 35.62 * (1 - w) + 34.90 * w
        t = t_low - 0.003 * zeta + (t_top - t_low) * np.exp(-zeta / 15.0)
        s = s_low + (s_top - s_low) * np.exp(-zeta / 20.0)
        return t, s

    return column


# --- the instrument's path: soak, then descent with ship heave ---------------------------
def ctd_path(
    rng,
    max_depth,
    *,
    soak_depth=10.0,
    soak_s=90,
    speed=1.0,
    heave=0.35,
    period=8.5,
    start_depth=1.5,
    heave_depths=None,
):
    """Depth of a CTD sampled at 1 Hz: lowered to the soak, held, raised, then lowered.

    ``heave_depths`` = (top, bottom, amplitude) adds stronger heave between two depths.
    """
    down_to_soak = np.linspace(0.3, soak_depth, int(soak_depth / 0.5))
    soak = np.full(soak_s, soak_depth)
    up = np.linspace(soak_depth, start_depth, 20)
    n = int((max_depth - start_depth) / speed) + 1
    descent = start_depth + speed * np.arange(n)
    z = np.concatenate([down_to_soak, soak, up, descent])
    t = np.arange(z.size, dtype=float)
    phase = rng.uniform(0, 2 * np.pi)
    amp = np.full(z.size, heave)
    if heave_depths is not None:
        top, bottom, big = heave_depths
        inside = (z > top) & (z < bottom) & (t > t[down_to_soak.size + soak_s + 20])
        amp[inside] = big
    z = z + amp * np.sin(2 * np.pi * t / period + phase) * np.minimum(1.0, z / 3.0)
    z = np.clip(z, 0.05, None)
    return z[z <= max_depth + 0.5]


def ctd_record(rng, column, z, lat, *, t_noise=0.002, s_noise=0.003):
    """Pressure (dbar), temperature (degC) and salinity along the path, with sensor noise."""
    t, s = column(z)
    p = np.asarray(pressure_from_depth(z, lat), dtype=float) + rng.normal(0, 0.02, z.size)
    return (p, t + rng.normal(0, t_noise, z.size), s + rng.normal(0, s_noise, z.size))


CTD_COLUMNS = ("pressure [dbar]", "temperature [degC]", "salinity [PSS-78]")
CTD_FORMATS = ("{:.2f}", "{:.4f}", "{:.4f}")


def ctd_text(header, p, t, s):
    return _text(header, list(zip(CTD_COLUMNS, (p, t, s), CTD_FORMATS)))


# --- the files ----------------------------------------------------------------------------
def deep_ocean(out):
    rng = np.random.default_rng(3101)
    lat, lon = 41.80250, -15.20410
    z = ctd_path(rng, 5000.0, soak_depth=10.0, soak_s=90, speed=1.0)
    p, t, s = ctd_record(rng, deep_basin, z, lat)
    h = _header(
        "VS31-D01",
        lat,
        lon,
        "2031-07-18T02:14:00Z",
        "ctd",
        5012.0,
        comment="deep basin station; downcast only; stopped 12 m above the bottom",
    )
    _write(out / "deep_ocean_ctd.csv", ctd_text(h, p, t, s))


def shelf_summer_cast(out):
    rng = np.random.default_rng(3102)
    lat, lon = 44.06120, -9.61750
    z = ctd_path(rng, 117.0, soak_depth=6.0, soak_s=60, speed=0.8, heave=0.3)
    p, t, s = ctd_record(rng, shelf_summer, z, lat)
    h = _header(
        "VS31-S04",
        lat,
        lon,
        "2031-07-14T09:12:00Z",
        "ctd",
        120.0,
        comment="summer shelf station; surface duct over a sharp thermocline",
    )
    _write(out / "shelf_summer_ctd.csv", ctd_text(h, p, t, s))


def shelf_winter_cast(out):
    rng = np.random.default_rng(3103)
    lat, lon = 44.09880, -9.58020
    z = ctd_path(rng, 147.0, soak_depth=6.0, soak_s=60, speed=0.8, heave=0.4)
    p, t, s = ctd_record(rng, shelf_winter, z, lat)
    h = _header(
        "VS31-W02",
        lat,
        lon,
        "2032-02-03T13:40:00Z",
        "ctd",
        150.0,
        comment="winter shelf station; mixed from surface to bottom",
    )
    _write(out / "shelf_winter_ctd.csv", ctd_text(h, p, t, s))


def xbt_drop(out):
    rng = np.random.default_rng(3104)
    lat, lon = 42.31500, -13.88200
    # Hanawa et al. (1995), Deep-Sea Res. I 42, 1423-1451: z = 6.691 t - 2.25e-3 t^2
    t_end = (6.691 - np.sqrt(6.691**2 - 4 * 2.25e-3 * 760.0)) / (2 * 2.25e-3)
    et = np.arange(0.0, t_end, 0.1)
    z = 6.691 * et - 2.25e-3 * et**2
    temp, _ = xbt_site(z)
    temp = temp + rng.normal(0, 0.008, et.size)
    h = _header(
        "VS31-X07",
        lat,
        lon,
        "2031-07-17T21:05:00Z",
        "xbt",
        3350.0,
        vessel="MV Quenby Star",
        probe="760 m rated expendable probe (synthetic)",
        fall_rate="hanawa1995 (z = 6.691 t - 2.25e-3 t^2)",
        comment="expendable probe drop from a ship of opportunity; no salinity",
    )
    cols = [("elapsed time [s]", et, "{:.1f}"), ("temperature [degC]", temp, "{:.3f}")]
    _write(out / "xbt_drop.csv", _text(h, cols))


def svp_cast(out):
    rng = np.random.default_rng(3105)
    lat, lon = 43.87400, -9.98300
    z = np.arange(1.0, 401.0, 1.0) + rng.normal(0, 0.02, 400)
    t, s = front_station(0.15)(z)
    t = t + rng.normal(0, 0.003, z.size)
    s = s + rng.normal(0, 0.004, z.size)
    p = np.asarray(pressure_from_depth(z, lat), dtype=float)
    c = np.asarray(sound_speed(t, s, p, equation="chen_millero1977"), dtype=float)
    c = c + rng.normal(0, 0.03, z.size)
    h = _header(
        "VS31-V03",
        lat,
        lon,
        "2031-07-19T11:30:00Z",
        "svp",
        410.0,
        comment="sound-speed probe; sound speed made with chen_millero1977 "
        "(UNESCO 1983) from the synthetic T and S plus noise",
    )
    cols = [
        ("depth [m]", z, "{:.2f}"),
        ("sound speed [m/s]", c, "{:.3f}"),
        ("temperature [degC]", t, "{:.4f}"),
        ("salinity [PSS-78]", s, "{:.4f}"),
    ]
    _write(out / "svp_cast.csv", _text(h, cols))


def section(out):
    """Ten CTD casts 7.5 km apart along a line across the shelf-edge front."""
    rng = np.random.default_rng(3106)
    lat0, lon0, bearing = 44.20000, -9.30000, np.deg2rad(235.0)
    n, spacing_km = 10, 7.5
    start = np.datetime64("2031-07-20T06:00:00")
    for i in range(n):
        d = i * spacing_km
        lat = lat0 + d * np.cos(bearing) / 111.195
        lon = lon0 + d * np.sin(bearing) / (111.195 * np.cos(np.deg2rad(lat0)))
        bottom = 160.0 + 260.0 * i / (n - 1)
        z = ctd_path(rng, bottom - 4.0, soak_depth=5.0, soak_s=30, speed=1.0)
        p, t, s = ctd_record(rng, front_station(i / (n - 1)), z, lat)
        when = str(start + np.timedelta64(55 * i, "m")) + "Z"
        h = _header(
            f"VS31-F{i + 1:02d}",
            lat,
            lon,
            when,
            "ctd",
            bottom,
            section="VS31-F line across the Varrow shelf-edge front, bearing 235 deg",
            along_section_km=f"{d:.1f}",
        )
        _write(out / "section" / f"front_{i + 1:02d}.csv", ctd_text(h, p, t, s))


def messy_shelf(out):
    """Every QC defect at a known place (see README.md)."""
    rng = np.random.default_rng(3107)
    lat, lon = 44.01500, -9.70100
    z = ctd_path(
        rng,
        176.0,
        soak_depth=8.0,
        soak_s=120,
        speed=0.6,
        heave=0.3,
        period=7.0,
        heave_depths=(30.0, 90.0, 1.3),
    )
    p, t, s = ctd_record(rng, shelf_summer, z, lat)
    # in air: the first 6 records before the package is wet
    p = np.concatenate([np.array([-0.12, -0.08, -0.10, -0.05, 0.02, 0.04]), p])
    t = np.concatenate([np.array([24.31, 24.35, 24.28, 24.30, 23.9, 21.2]), t])
    s = np.concatenate([np.array([0.012, 0.011, 0.013, 0.010, 0.85, 12.4]), s])
    z = np.concatenate([np.zeros(6), z])
    descent = np.flatnonzero(np.arange(z.size) > 6 + 16 + 120 + 20)

    def first_at(depth):
        return int(descent[np.argmax(z[descent] >= depth)])

    t[first_at(22.0)] += 7.5  # temperature spike (above the 6.0 degC shallow threshold)
    t[first_at(64.0)] -= 6.8  # temperature spike, negative
    t[first_at(52.0)] += 2.5  # small temperature step: below the shallow spike threshold
    s[first_at(47.0)] += 1.40  # salinity spike (above the 0.9 shallow threshold)
    s[first_at(96.0)] -= 1.20  # salinity spike, negative
    t[first_at(80.0)] = 99.0  # impossible temperature
    s[first_at(88.0)] = 45.5  # impossible salinity
    warm = (z >= 110.0) & (z <= 115.0)  # warm lighter water below colder: density inversion
    t[warm] += 0.8
    stuck = np.flatnonzero((z >= 140.0) & (z <= 160.0))
    s[stuck] = np.round(s[stuck[0]], 4)  # stuck salinity sensor
    h = _header(
        "VS31-M01",
        lat,
        lon,
        "2031-07-15T16:48:00Z",
        "ctd",
        180.0,
        comment="messy test cast: in-air records, long soak, heave reversals, "
        "spikes, impossible values, density inversion, stuck salinity",
    )
    _write(out / "messy" / "messy_shelf_ctd.csv", ctd_text(h, p, t, s))


def messy_deep(out):
    """Defects below 500 dbar, where the spike thresholds are smaller."""
    rng = np.random.default_rng(3108)
    lat, lon = 41.95000, -15.01000
    z = ctd_path(rng, 1500.0, soak_depth=10.0, soak_s=60, speed=0.9, heave=1.6, period=8.0)
    p, t, s = ctd_record(rng, deep_basin, z, lat)
    down = np.arange(z.size) > 20 + 60 + 20

    def first_at(depth):
        return int(np.argmax(down & (z >= depth)))

    t[first_at(800.0)] += 2.6  # deep temperature spike (above the 2.0 degC deep threshold)
    s[first_at(1200.0)] += 0.45  # deep salinity spike (above the 0.3 deep threshold)
    t[first_at(300.0)] += 4.0  # shallow: below the 6.0 degC threshold, not a spike by rule
    h = _header(
        "VS31-M02",
        lat,
        lon,
        "2031-07-18T09:02:00Z",
        "ctd",
        4980.0,
        comment="messy test cast: strong heave (pressure reversals throughout), "
        "spikes below 500 dbar",
    )
    _write(out / "messy" / "messy_deep_ctd.csv", ctd_text(h, p, t, s))


def messy_stuck(out):
    """A salinity sensor that reports one value for the whole cast (Argo "stuck value")."""
    rng = np.random.default_rng(3110)
    lat, lon = 44.03000, -9.66000
    z = ctd_path(rng, 95.0, soak_depth=5.0, soak_s=30, speed=0.8)
    p, t, s = ctd_record(rng, shelf_summer, z, lat)
    s[:] = 35.3127
    h = _header(
        "VS31-M03",
        lat,
        lon,
        "2031-07-16T05:55:00Z",
        "ctd",
        98.0,
        comment="messy test cast: salinity sensor stuck at one value all the way",
    )
    _write(out / "messy" / "stuck_salinity_ctd.csv", ctd_text(h, p, t, s))


BROKEN_LINE = 41  # 1-based line number of the bad value in broken/bad_number.csv


def broken(out):
    """A good shelf cast with one non-numeric temperature on a known line."""
    rng = np.random.default_rng(3109)
    lat, lon = 44.11000, -9.55000
    z = ctd_path(rng, 60.0, soak_depth=5.0, soak_s=10, speed=0.8)
    p, t, s = ctd_record(rng, shelf_summer, z, lat)
    h = _header(
        "VS31-B01",
        lat,
        lon,
        "2031-07-16T07:20:00Z",
        "ctd",
        64.0,
        comment=f"deliberately broken: line {BROKEN_LINE} holds a non-numeric temperature",
    )
    lines = ctd_text(h, p, t, s).split("\n")
    cells = lines[BROKEN_LINE - 1].split(",")
    cells[1] = cells[1].replace(".", "O", 1)  # e.g. 17O5123: letter O for a decimal point
    lines[BROKEN_LINE - 1] = ",".join(cells)
    _write(out / "broken" / "bad_number.csv", "\n".join(lines))


# --- the swath line: a later shelf cast and beam records traced through it ---------------
def shelf_summer_late(z):
    """The summer shelf some hours later: the top 10 m or so warmed by the sun."""
    t, s = shelf_summer(z)
    return t + 1.8 * np.exp(-z / 7.0), s


def shelf_summer_late_cast(out):
    rng = np.random.default_rng(3104)
    lat, lon = 44.06480, -9.60910
    z = ctd_path(rng, 117.0, soak_depth=6.0, soak_s=60, speed=0.8, heave=0.3)
    p, t, s = ctd_record(rng, shelf_summer_late, z, lat)
    h = _header(
        "VS31-S05",
        lat,
        lon,
        "2031-07-14T16:05:00Z",
        "ctd",
        120.0,
        comment="summer shelf station, afternoon: warmer surface layer than VS31-S04",
    )
    _write(out / "shelf_summer_late_ctd.csv", ctd_text(h, p, t, s))


SWATH_PINGS = 100
SWATH_ANGLES = np.linspace(-65.0, 65.0, 53)
SWATH_TRANSDUCER_DEPTH = 4.5


def swath_line(out):
    """Beam records of one survey line, forward-traced through the afternoon water column.

    Seabed 116 m at nadir sloping 0.02 m per m to port; the true beam angle is the recorded
    one plus the roll; two-way travel times found by bisection on the exact sounding.
    """
    from seaprofile.survey import beam_to_sounding

    rng = np.random.default_rng(3105)
    lat = 44.06480
    zc = np.arange(0.0, 401.0, 1.0)
    t, s = shelf_summer_late(zc)
    c = np.asarray(sound_speed(t, s, depth=zc, latitude=lat), dtype=float)
    ping = np.repeat(np.arange(1, SWATH_PINGS + 1), SWATH_ANGLES.size)
    roll = np.repeat(2.5 * np.sin(2 * np.pi * np.arange(SWATH_PINGS) / 23.0), SWATH_ANGLES.size)
    recorded = np.tile(SWATH_ANGLES, SWATH_PINGS)
    true = recorded + roll
    z0 = SWATH_TRANSDUCER_DEPTH
    c0 = float(np.interp(z0, zc, c))
    lo, hi = np.zeros(true.size), np.full(true.size, 2.0)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        d, x = beam_to_sounding(zc, c, true, mid, transducer_depth=z0)
        below = d > 116.0 - 0.02 * x
        hi, lo = np.where(below, mid, hi), np.where(below, lo, mid)
    tt = 0.5 * (lo + hi) + rng.normal(0, 2e-5, true.size)
    speed = np.repeat(c0 + rng.normal(0, 0.05, SWATH_PINGS), SWATH_ANGLES.size)
    start = np.datetime64("2031-07-14T15:20:00.000")
    times = start + np.repeat(np.arange(SWATH_PINGS) * 400, SWATH_ANGLES.size).astype(
        "timedelta64[ms]"
    )
    lines = [
        f"# note: {NOTE}",
        f"# survey: {SURVEY}",
        "# line: VS31-L07 (synthetic swath line)",
        f"# vessel: {VESSEL}",
        f"# transducer_depth: {z0} m",
        "# travel_time: two-way",
        "# comment: beam records forward-traced through the water column of VS31-S05",
        "ping,time,beam_angle [deg],roll [deg],travel_time [s],transducer_sound_speed [m/s]",
    ]
    for row in zip(ping, times, recorded, roll, tt, speed):
        lines.append(f"{row[0]},{str(row[1])}Z,{row[2]:.2f},{row[3]:.3f},{row[4]:.6f},{row[5]:.2f}")
    _write(out / "swath" / "line07_beams.txt", "\n".join(lines) + "\n")


def synthetic_grid(out):
    """A small invented gridded temperature/salinity field for ``seaprofile grid``.

    From :func:`seaprofile.gridded.synthetic_field` (a warm mixed layer over a thermocline,
    varying smoothly with position): 12 x 16 columns of 81 levels (every 25 m) to 2000 m, labelled
    synthetic in its attributes. Written without timestamps so that a rerun is identical.
    """
    from seaprofile.gridded import synthetic_field

    ds = synthetic_field(nlat=12, nlon=16, ndepth=81, max_depth=2000.0)
    ds.attrs.update(
        title="Varrow Sea synthetic temperature/salinity grid (demo)",
        comment=NOTE + "; gridded values are invented, not a model or a climatology",
        source="seaprofile.gridded.synthetic_field (demo_casts/generate.py)",
    )
    (out / "grid").mkdir(parents=True, exist_ok=True)
    target = out / "grid" / "synthetic_grid.nc"
    tmp = target.with_suffix(".nc.tmp")
    encoding = {k: {"zlib": True, "complevel": 4} for k in ds.data_vars}
    ds.to_netcdf(tmp, format="NETCDF4", encoding=encoding)
    os.replace(tmp, target)


ALL = (
    deep_ocean,
    shelf_summer_cast,
    shelf_winter_cast,
    shelf_summer_late_cast,
    swath_line,
    xbt_drop,
    svp_cast,
    section,
    messy_shelf,
    messy_deep,
    messy_stuck,
    broken,
    synthetic_grid,
)


def main(argv=None):
    parser = argparse.ArgumentParser(description="Write the synthetic seaprofile demo casts.")
    parser.add_argument(
        "--output",
        type=Path,
        default=HERE,
        help="directory to write into (default: this script's directory)",
    )
    args = parser.parse_args(argv)
    for make in ALL:
        make(args.output)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
