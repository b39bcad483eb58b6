#!/usr/bin/env python
"""Regenerate the two frame examples of the frameshift demo (data_demo/examples/).

All data written by this script are INVENTED:

* ``tank_spinup.nc``  a laboratory run of the fictional Tollaven Shelf Experiment's
  rotating-tank companion study: a 60 cm tank on a table spun up from 6 to 10 rpm
  (counter-clockwise seen from above), filmed by a camera riding on the table
  (velocities relative to the table, mm s-1, on x/y in cm). The table's rate is the
  variable ``table_rate``; the demo reads it with the frame name ``table:table_rate``.
* ``cloud_winds.nc``  cloud-tracked winds 70 km up on a slowly rotating planet turning
  as Venus does (retrograde), for the frame ``venus``.

Every random number comes from ``numpy.random.default_rng(RANDOM_STATE)``.

Usage::

    python data_demo/make_example_data.py            # write into data_demo/examples/
    python data_demo/make_example_data.py --out DIR
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import xarray as xr

RANDOM_STATE = 20261202
COMMENT = (
    "All values in this file are invented for the frameshift demo; do not use them for science."
)
INSTITUTION = "frameshift project (demo data; fictional programme)"
COORD_ENC = {"_FillValue": None}
HISTORY = "created by data_demo/make_example_data.py (frameshift demo data generator)"
TIME_ATTRS = {"standard_name": "time", "long_name": "time", "units_metadata": "leap_seconds: none"}
COMPRESS = {"zlib": True, "complevel": 5, "shuffle": True}


def tank_spinup(rng: np.random.Generator) -> xr.Dataset:
    seconds = np.arange(0.0, 30.5, 0.5)
    rpm = 6.0 + 4.0 * np.clip(seconds / 10.0, 0.0, 1.0)
    omega_table = rpm * 2 * np.pi / 60
    omega_fluid = np.empty_like(omega_table)  # the water catches up, e-folding time 8 s
    omega_fluid[0] = omega_table[0]
    for i in range(1, seconds.size):
        step = seconds[i] - seconds[i - 1]
        omega_fluid[i] = omega_fluid[i - 1] + step * (omega_table[i - 1] - omega_fluid[i - 1]) / 8.0
    x = np.linspace(-27.0, 27.0, 19)  # cm
    y = np.linspace(-27.0, 27.0, 19)
    yy, xx = np.meshgrid(y / 100, x / 100, indexing="ij")
    lag = (omega_fluid - omega_table)[:, None, None]
    inside = np.hypot(xx, yy) <= 0.28
    noise = rng.normal(0.0, 0.05, (2, seconds.size, y.size, x.size))
    u = np.where(inside, -lag * yy * 1000 + noise[0], np.nan)
    v = np.where(inside, lag * xx * 1000 + noise[1], np.nan)
    time = np.datetime64("2026-04-20T09:00:00", "ns") + (seconds * 1e9).astype("timedelta64[ns]")
    piv = {"units": "mm s-1", "reference_frame": "rotating"}
    ds = xr.Dataset(
        {
            "u": (
                ("time", "y", "x"),
                u,
                {**piv, "long_name": "x component of velocity relative to the table (PIV)"},
            ),
            "v": (
                ("time", "y", "x"),
                v,
                {**piv, "long_name": "y component of velocity relative to the table (PIV)"},
            ),
            "table_rate": (
                "time",
                rpm,
                {
                    "units": "rpm",
                    "long_name": "rotation rate of the table, counter-clockwise seen from above",
                },
            ),
        },
        coords={
            "time": ("time", time, dict(TIME_ATTRS)),
            "y": (
                "y",
                y,
                {
                    "units": "cm",
                    "long_name": "y position on the table",
                    "axis": "Y",
                    "standard_name": "projection_y_coordinate",
                },
            ),
            "x": (
                "x",
                x,
                {
                    "units": "cm",
                    "long_name": "x position on the table",
                    "axis": "X",
                    "standard_name": "projection_x_coordinate",
                },
            ),
        },
        attrs={
            "title": "Rotating-tank spin-up, camera on the table (invented demo data)",
            "institution": INSTITUTION,
            "source": "synthetic: solid-body lag during spin-up plus noise, "
            "data_demo/make_example_data.py",
            "comment": COMMENT,
            "history": HISTORY,
            "Conventions": "CF-1.11",
        },
    )
    ds["time"].encoding = {
        "units": "seconds since 2026-04-20 09:00:00",
        "dtype": "float64",
        **COORD_ENC,
    }
    return ds


def cloud_winds(rng: np.random.Generator) -> xr.Dataset:
    lat = np.arange(-60.0, 61.0, 10.0)
    lon = np.arange(0.0, 360.0, 30.0)
    hours = np.array([0.0, 6.0])
    time = np.datetime64("2026-03-01T00:00:00", "ns") + (hours * 3.6e12).astype("timedelta64[ns]")
    coslat = np.cos(np.deg2rad(lat))[None, :, None]
    sinlat = np.sin(np.deg2rad(lat))[None, :, None]
    shape = (hours.size, lat.size, lon.size)
    u = -95.0 * coslat + rng.normal(0.0, 2.0, shape)  # westward, with the planet's spin
    v = -5.0 * sinlat * coslat + rng.normal(0.0, 1.0, shape)
    ds = xr.Dataset(
        {
            "u": (
                ("time", "lat", "lon"),
                u,
                {
                    "standard_name": "eastward_wind",
                    "units": "m s-1",
                    "long_name": "cloud-tracked eastward wind",
                },
            ),
            "v": (
                ("time", "lat", "lon"),
                v,
                {
                    "standard_name": "northward_wind",
                    "units": "m s-1",
                    "long_name": "cloud-tracked northward wind",
                },
            ),
        },
        coords={
            "time": ("time", time, dict(TIME_ATTRS)),
            "lat": (
                "lat",
                lat,
                {"standard_name": "latitude", "units": "degrees_north", "long_name": "latitude"},
            ),
            "lon": (
                "lon",
                lon,
                {"standard_name": "longitude", "units": "degrees_east", "long_name": "longitude"},
            ),
            "height": (
                (),
                70000.0,
                {
                    "standard_name": "height",
                    "units": "m",
                    "positive": "up",
                    "long_name": "height of the tracked cloud features",
                },
            ),
        },
        attrs={
            "title": "Cloud-tracked winds on a slowly rotating planet (invented demo data)",
            "institution": INSTITUTION,
            "source": "synthetic: superrotating zonal wind plus noise, "
            "data_demo/make_example_data.py",
            "comment": COMMENT + " The planet turns as Venus does (frame 'venus').",
            "history": HISTORY,
            "Conventions": "CF-1.11",
        },
    )
    ds["time"].encoding = {
        "units": "hours since 2026-03-01 00:00:00",
        "dtype": "float64",
        **COORD_ENC,
    }
    return ds


def write(out_dir: Path) -> list[Path]:
    rng = np.random.default_rng(RANDOM_STATE)
    out_dir.mkdir(parents=True, exist_ok=True)
    paths = []
    for name, ds in (("tank_spinup.nc", tank_spinup(rng)), ("cloud_winds.nc", cloud_winds(rng))):
        encoding = {v: dict(COMPRESS) for v in ds.data_vars}
        encoding.update({c: dict(COORD_ENC) for c in ds.coords if c != "time"})
        path = out_dir / name
        ds.to_netcdf(path, encoding=encoding)
        paths.append(path)
    return paths


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).resolve().parent / "examples")
    args = parser.parse_args(argv)
    for path in write(args.out):
        print("wrote", path)


if __name__ == "__main__":
    main()
