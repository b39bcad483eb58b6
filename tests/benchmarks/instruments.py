"""B7: the instrument conversions on 1e7 records, beside hand-written numpy of the same formulas.

Each pair is checked to give the same numbers before it is timed, then the two
are timed turn about; the ratio is frameshift's median wall time over numpy's
(target <= 1.5, eager input).
"""

from __future__ import annotations

import gc
import statistics
import time

import numpy as np
import xarray as xr

import frameshift
from tests.benchmarks.harness import Row, verdict

__all__ = ["run"]

TARGET = 1.5


def _records(n: int, seed: int = 7) -> xr.Dataset:
    rng = np.random.default_rng(seed)
    dims = ("time",)
    time = np.datetime64("2027-01-01", "ns") + np.arange(n) * np.timedelta64(1, "s")

    def var(values, **attrs):
        return (dims, values, attrs)

    return xr.Dataset(
        {
            "wspd": var(rng.uniform(0, 20, n), standard_name="wind_speed", units="m s-1"),
            "wdir": var(rng.uniform(0, 360, n), standard_name="wind_from_direction",
                        units="degree"),
            "u": var(rng.normal(0, 5, n), standard_name="eastward_wind", units="m s-1"),
            "v": var(rng.normal(0, 5, n), standard_name="northward_wind", units="m s-1"),
            "heading": var(rng.uniform(0, 360, n), standard_name="platform_orientation",
                           units="degree"),
            "cog": var(rng.uniform(0, 360, n), standard_name="platform_course", units="degree"),
            "sog": var(rng.uniform(0, 6, n), standard_name="platform_speed_wrt_ground",
                       units="m s-1"),
            "pitch": var(rng.normal(0, 2, n), standard_name="platform_pitch_fore_up",
                         units="degree"),
            "roll": var(rng.normal(0, 3, n), standard_name="platform_roll_starboard_down",
                        units="degree"),
            "rdir": var(rng.uniform(0, 360, n), units="degree"),
            "rspd": var(rng.uniform(0, 20, n), units="m s-1"),
            "fwd": var(rng.normal(-3, 1, n), units="m s-1"),
            "stbd": var(rng.normal(0, 1, n), units="m s-1"),
            "up": var(rng.normal(0, 0.05, n), units="m s-1"),
        },
        coords={"time": ("time", time),
                "lat": ((), 40.0, {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ((), -30.0, {"standard_name": "longitude", "units": "degrees_east"})},
    )


def _grid(n: int, seed: int = 8) -> xr.Dataset:
    rng = np.random.default_rng(seed)
    ny, nx = 200, 250
    nt = max(1, n // (ny * nx))
    dims = ("time", "y", "x")
    return xr.Dataset({
        "uas": (dims, rng.normal(0, 5, (nt, ny, nx)), {"standard_name": "x_wind",
                                                       "units": "m s-1"}),
        "vas": (dims, rng.normal(0, 5, (nt, ny, nx)), {"standard_name": "y_wind",
                                                       "units": "m s-1"}),
        "alpha": (("y", "x"), rng.uniform(-40, 40, (ny, nx)),
                  {"standard_name": "angle_of_rotation_from_east_to_x", "units": "degree"}),
    })


# --- hand-written numpy, as a scientist would type it ---------------------------------------
def hand_polar(ds):
    d = np.deg2rad(ds["wdir"].values)
    s = ds["wspd"].values
    return -s * np.sin(d), -s * np.cos(d)


def hand_to_polar(ds):
    u, v = ds["u"].values, ds["v"].values
    return np.hypot(u, v), np.rad2deg(np.arctan2(-u, -v)) % 360.0


def hand_grid(ds):
    a = np.deg2rad(ds["alpha"].values)
    c, s = np.cos(a), np.sin(a)
    x, y = ds["uas"].values, ds["vas"].values
    return x * c - y * s, x * s + y * c


def hand_magnetic(ds, decl=10.0):
    d = np.deg2rad(decl)
    u, v = ds["u"].values, ds["v"].values
    return u * np.cos(d) + v * np.sin(d), -u * np.sin(d) + v * np.cos(d)


def hand_true_wind(ds):
    a = np.deg2rad(270.0 - (ds["heading"].values + ds["rdir"].values))
    c = np.deg2rad(90.0 - ds["cog"].values)
    r, s = ds["rspd"].values, ds["sog"].values
    u, v = r * np.cos(a) + s * np.cos(c), r * np.sin(a) + s * np.sin(c)
    return u, v, np.hypot(u, v), np.rad2deg(np.arctan2(-u, -v)) % 360.0


def hand_platform(ds):
    h, p, r = (np.deg2rad(ds[n].values) for n in ("heading", "pitch", "roll"))
    ch, sh, cp, sp, cr, sr = np.cos(h), np.sin(h), np.cos(p), np.sin(p), np.cos(r), np.sin(r)
    f, s, d = ds["fwd"].values, ds["stbd"].values, -ds["up"].values
    north = cp * ch * f + (-cr * sh + sr * sp * ch) * s + (sr * sh + cr * sp * ch) * d
    east = cp * sh * f + (cr * ch + sr * sp * sh) * s + (-sr * ch + cr * sp * sh) * d
    down = -sp * f + sr * cp * s + cr * cp * d
    cog = np.deg2rad(ds["cog"].values)
    sog = ds["sog"].values
    return east + sog * np.sin(cog), north + sog * np.cos(cog), -down


CASES = [
    ("from_speed_direction", "records",
     lambda ds: frameshift.from_speed_direction(ds[["wspd", "wdir"]]),
     ("eastward_wind", "northward_wind"), hand_polar),
    ("to_speed_direction", "records",
     lambda ds: frameshift.to_speed_direction(ds[["u", "v"]]),
     ("wind_speed", "wind_from_direction"), hand_to_polar),
    ("grid_to_earth (angle variable)", "grid",
     lambda ds: frameshift.grid_to_earth(ds),
     ("eastward_wind", "northward_wind"), hand_grid),
    ("magnetic_to_true (components)", "records",
     lambda ds: frameshift.magnetic_to_true(ds[["u", "v"]], declination=10.0,
                                            components=("u", "v")),
     ("u", "v"), hand_magnetic),
    ("true_wind", "records",
     lambda ds: frameshift.true_wind(ds[["heading", "cog", "sog", "rdir", "rspd"]],
                                     relative_direction="rdir", relative_speed="rspd"),
     ("eastward_wind", "northward_wind", "wind_speed", "wind_from_direction"), hand_true_wind),
    ("platform_to_earth", "records",
     lambda ds: frameshift.platform_to_earth(
         ds[["fwd", "stbd", "up", "heading", "pitch", "roll", "cog", "sog"]],
         velocity={"forward": "fwd", "starboard": "stbd", "up": "up"}),
     ("eastward_sea_water_velocity", "northward_sea_water_velocity",
      "upward_sea_water_velocity"), hand_platform),
]


def interleaved(first, second, repeats: int) -> tuple[float, float]:
    """Median wall times of ``first()`` and ``second()``, timed turn about.

    On a shared machine the load changes from one second to the next; timing
    the two in alternation lets both see the same load.
    """
    first()
    second()
    times: tuple[list[float], list[float]] = ([], [])
    for _ in range(repeats):
        for fn, out in ((first, times[0]), (second, times[1])):
            gc.collect()
            t0 = time.perf_counter()
            fn()
            out.append(time.perf_counter() - t0)
    return statistics.median(times[0]), statistics.median(times[1])


def run(quick: bool) -> list[Row]:
    n = 10**6 if quick else 10**7
    repeats = 3 if quick else 7
    data = {"records": _records(n), "grid": _grid(n)}
    rows = []
    for what, kind, call, outputs, hand in CASES:
        ds = data[kind]

        def ours(ds=ds, call=call, outputs=outputs):
            result = call(ds)
            return [np.asarray(result[o].values) for o in outputs]

        mine, theirs = ours(), hand(ds)
        for name, a, b in zip(outputs, mine, theirs, strict=True):
            if "direction" in name:  # bearings: compare modulo 360
                a = (a - b + 180.0) % 360.0 - 180.0
                b = np.zeros_like(a)
            np.testing.assert_allclose(a, b, rtol=0, atol=1e-9)
        t_fs, t_hand = interleaved(ours, lambda ds=ds, hand=hand: hand(ds), repeats)
        size = data[kind]["uas" if kind == "grid" else "u"].size
        ratio = t_fs / t_hand
        rows.append(Row("B7", what, f"{size:.2e} float64 records ({kind})", str(repeats), ratio,
                        "frameshift / numpy", f"<= {TARGET}", verdict(ratio, at_most=TARGET),
                        {"frameshift": t_fs, "hand-written numpy": t_hand}))
    return rows
