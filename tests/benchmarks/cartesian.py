"""B2: ``to_inertial(basis="cartesian", celestial="gcrs")`` beside astropy.

astropy's ``EarthLocation.get_gcrs_posvel`` gives the GCRS position and
velocity of Earth-fixed points (with UT1 and polar motion from its bundled
IERS tables, read offline). frameshift gets the same points with zero wind.
Two layouts of 10^6 station-times: 1,000 stations × 1,000 hourly times (a
station network on a common clock), and 10^6 observations each with its own
place and time (a flattened archive, one ``obs`` dimension).
"""

from __future__ import annotations

import numpy as np
import xarray as xr

import frameshift
from frameshift.frames.timescales import julian_date_parts
from tests.benchmarks.data import obs_points, station_points
from tests.benchmarks.harness import Row, median_time, verdict

__all__ = ["run"]


def _astropy():
    from astropy.utils import iers

    iers.conf.auto_download = False
    iers.conf.auto_max_age = None
    from astropy import units as u
    from astropy.coordinates import EarthLocation
    from astropy.time import Time

    return u, EarthLocation, Time


def _case(ds: xr.Dataset, layout: str, repeats: int, astropy_repeats: int) -> list[Row]:
    u, EarthLocation, Time = _astropy()
    times = ds["time"].values
    jd1, jd2 = julian_date_parts(times)
    t = Time(jd1, jd2, format="jd", scale="utc")
    dut1 = xr.DataArray(
        u.Quantity(t.delta_ut1_utc, u.s).to_value(u.s),
        dims=ds["time"].dims,
        coords={"time": ds["time"]},
        attrs={"units": "s"},
    )
    lat, lon, h = (ds[k].values for k in ("lat", "lon", "h"))
    if layout == "stations":  # stations along rows, times along columns: let astropy broadcast
        lat, lon, h = lat[:, None], lon[:, None], h[:, None]
        t = t[None, :]

    def astropy_call():
        loc = EarthLocation.from_geodetic(lon * u.deg, lat * u.deg, h * u.m, ellipsoid="WGS84")
        pos, vel = loc.get_gcrs_posvel(t)
        return pos.xyz.to_value(u.m), vel.xyz.to_value(u.m / u.s)

    def fs_call(d):
        out = frameshift.to_inertial(ds, basis="cartesian", celestial="gcrs", dut1=d)
        # component last, as astropy's moved axes below (files keep it first: CF 2.4)
        return tuple(np.asarray(out[k].transpose(..., "component").values)
                     for k in ("position", "velocity"))

    # warm astropy's IERS tables and erfa on a few points, not on the timed ones
    loc0 = EarthLocation.from_geodetic(0.0 * u.deg, 0.0 * u.deg, 0.0 * u.m)
    loc0.get_gcrs_posvel(Time(jd1[:3], jd2[:3], format="jd", scale="utc"))
    t_ap, _ = median_time(astropy_call, astropy_repeats, warmup=0)
    t_fs0, _ = median_time(lambda: fs_call(0.0), repeats)
    t_fs1, _ = median_time(lambda: fs_call(dut1), repeats)
    p_ap, v_ap = (np.moveaxis(x, 0, -1) for x in astropy_call())
    err = {}
    for label, d in (("with dut1", dut1), ("dut1=0", 0.0)):
        p, v = fs_call(d)
        err[label] = (
            float(np.linalg.norm(p - p_ap, axis=-1).max()),
            float(np.linalg.norm(v - v_ap, axis=-1).max()),
        )
    n = ds["u"].size
    sizes = (
        f"{n:.0e} points, {ds['u'].dims} {tuple(ds['u'].shape)}, "
        f"{np.unique(times).size} distinct times"
    )
    timings = {"frameshift (dut1)": t_fs1, "frameshift (dut1=0)": t_fs0, "astropy": t_ap}
    speed = t_ap / t_fs1
    dp, dv = err["with dut1"]
    dp0, dv0 = err["dut1=0"]
    reps = f"{repeats} (astropy {astropy_repeats})"
    return [
        Row(
            "B2",
            f"GCRS speed vs astropy, {layout}",
            sizes,
            reps,
            speed,
            "astropy / frameshift",
            ">= 20",
            verdict(speed, at_least=20.0),
            timings,
            extra={"astropy / frameshift(dut1=0)": f"{t_ap / t_fs0:.3g}"},
        ),
        Row(
            "B2",
            f"GCRS agreement with astropy, {layout}",
            sizes,
            "-",
            dp,
            "max |Δr| m with dut1",
            "<= 50 m, <= 0.02 m s-1",
            "PASS" if dp <= 50.0 and dv <= 0.02 else "MISS",
            extra={
                "max |Δv| with dut1": f"{dv:.2e} m s-1",
                "without dut1 (dut1=0)": f"max |Δr| {dp0:.1f} m, max |Δv| {dv0:.2e} m s-1",
            },
            note="frameshift applies no polar motion (~10 m); without dut1 UT1-UTC is ignored",
        ),
    ]


def run(quick: bool) -> list[Row]:
    if quick:
        return _case(station_points(100, 1000), "stations", 3, 1) + _case(
            obs_points(10**5), "obs", 3, 1
        )
    return _case(station_points(1000, 1000), "stations", 5, 3) + _case(
        obs_points(10**6), "obs", 5, 3
    )
