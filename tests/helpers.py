"""Shared test helpers: data builders, eager/chunked parametrisation, guards.

Data built here are arbitrary test inputs (not demo data and not reference
values); reference values sit in the tests beside their sources.
"""

from __future__ import annotations

import contextlib
import functools
import importlib.resources
import os
import xml.etree.ElementTree as ET
from pathlib import Path

import dask
import numpy as np
import pytest
import xarray as xr

LAYOUTS = ("eager", "chunked")


def as_layout(ds: xr.Dataset, layout: str) -> xr.Dataset:
    """Return ``ds`` itself (eager) or a Dask-chunked copy of it."""
    if layout == "eager":
        return ds
    chunks = {d: max(1, (n + 1) // 2) for d, n in ds.sizes.items() if d != "component"}
    return ds.chunk(chunks)


#: parametrise a test over eager and chunked input: use ``layout`` as argument
eager_and_chunked = pytest.mark.parametrize("layout", LAYOUTS)


class _CountingScheduler:
    def __init__(self, max_computes: int = 0) -> None:
        self.total = 0
        self.max_computes = max_computes

    def __call__(self, dsk, keys, **kwargs):
        self.total += 1
        if self.total > self.max_computes:
            raise RuntimeError(f"too many Dask computations: {self.total} > {self.max_computes}")
        return dask.get(dsk, keys, **kwargs)


@contextlib.contextmanager
def raise_if_dask_computes(max_computes: int = 0):
    """Fail if Dask computes more than ``max_computes`` times inside the block."""
    with dask.config.set(scheduler=_CountingScheduler(max_computes)):
        yield


@functools.cache
def cf_standard_names() -> frozenset[str]:
    """Standard names (entries and aliases) of the CF table v93 that compliance-checker ships."""
    path = importlib.resources.files("compliance_checker") / "data" / "cf-standard-name-table.xml"
    root = ET.fromstring(path.read_bytes())
    names = {e.get("id") for e in root.iter("entry")} | {a.get("id") for a in root.iter("alias")}
    return frozenset(n for n in names if n)


def written_standard_names(ds: xr.Dataset) -> set[str]:
    return {
        str(v.attrs["standard_name"]) for v in ds.variables.values() if "standard_name" in v.attrs
    }


def assert_udunits(units: str) -> None:
    """Check a unit string parses in UDUNITS-2 (cf_units, which compliance-checker brings)."""
    import cf_units

    cf_units.Unit(units)  # raises ValueError for strings UDUNITS-2 rejects


def grid_dataset(
    ntime: int = 3, nlev: int = 2, nlat: int = 5, nlon: int = 4, *, rng_key: int = 1
) -> xr.Dataset:
    """A small gridded wind Dataset (time, height, lat, lon) with CF metadata."""
    rng = np.random.default_rng(rng_key)
    shape = (ntime, nlev, nlat, nlon)
    time = np.datetime64("2030-03-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(6, "h")
    return xr.Dataset(
        {
            "ua": (
                ("time", "z", "lat", "lon"),
                rng.normal(5, 10, shape),
                {"standard_name": "eastward_wind", "units": "m s-1", "cell_methods": "time: mean"},
            ),
            "va": (
                ("time", "z", "lat", "lon"),
                rng.normal(0, 5, shape),
                {"standard_name": "northward_wind", "units": "m s-1"},
            ),
            "wa": (
                ("time", "z", "lat", "lon"),
                rng.normal(0, 0.1, shape),
                {"standard_name": "upward_air_velocity", "units": "m s-1"},
            ),
            "ta": (
                ("time", "z", "lat", "lon"),
                rng.normal(280, 5, shape),
                {"standard_name": "air_temperature", "units": "K"},
            ),
        },
        coords={
            "time": ("time", time, {"standard_name": "time"}),
            "z": (
                "z",
                np.linspace(100.0, 10000.0, nlev),
                {
                    "standard_name": "height_above_reference_ellipsoid",
                    "units": "m",
                    "positive": "up",
                    "axis": "Z",
                },
            ),
            "lat": (
                "lat",
                np.linspace(-80.0, 80.0, nlat),
                {"standard_name": "latitude", "units": "degrees_north"},
            ),
            "lon": (
                "lon",
                np.linspace(0.0, 350.0, nlon),
                {"standard_name": "longitude", "units": "degrees_east"},
            ),
        },
        attrs={"Conventions": "CF-1.8", "title": "test grid"},
    )


def station_dataset(nstation: int = 3, ntime: int = 4, *, rng_key: int = 2) -> xr.Dataset:
    """Current records at fixed stations: lat/lon per station, depth bins, time."""
    rng = np.random.default_rng(rng_key)
    time = np.datetime64("2030-07-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(1, "h")
    shape = (nstation, ntime, 2)
    return xr.Dataset(
        {
            "u": (
                ("station", "time", "depth"),
                rng.normal(0, 0.3, shape),
                {"standard_name": "eastward_sea_water_velocity", "units": "cm s-1"},
            ),
            "v": (
                ("station", "time", "depth"),
                rng.normal(0, 0.3, shape),
                {"standard_name": "northward_sea_water_velocity", "units": "cm s-1"},
            ),
        },
        coords={
            "time": ("time", time),
            "depth": (
                "depth",
                [10.0, 50.0],
                {"standard_name": "depth", "units": "m", "positive": "down"},
            ),
            "lat": (
                "station",
                rng.uniform(-60, 60, nstation),
                {"standard_name": "latitude", "units": "degrees_north"},
            ),
            "lon": (
                "station",
                rng.uniform(-180, 180, nstation),
                {"standard_name": "longitude", "units": "degrees_east"},
            ),
        },
    )


def trajectory_dataset(ntime: int = 6, *, rng_key: int = 3) -> xr.Dataset:
    """A balloon-like trajectory: latitude, longitude and height vary along time."""
    rng = np.random.default_rng(rng_key)
    time = np.datetime64("2030-01-15T00:00", "ns") + np.arange(ntime) * np.timedelta64(10, "m")
    return xr.Dataset(
        {
            "u": (
                "time",
                rng.normal(20, 5, ntime),
                {"standard_name": "eastward_wind", "units": "knot"},
            ),
            "v": (
                "time",
                rng.normal(0, 5, ntime),
                {"standard_name": "northward_wind", "units": "knot"},
            ),
            "w": (
                "time",
                rng.normal(0, 1, ntime),
                {"standard_name": "upward_air_velocity", "units": "m s-1"},
            ),
            "alt": (
                "time",
                rng.uniform(1000, 20000, ntime),
                {"standard_name": "altitude", "units": "m"},
            ),
        },
        coords={
            "time": ("time", time),
            "lat": (
                "time",
                np.linspace(30, 35, ntime),
                {"standard_name": "latitude", "units": "degrees_north"},
            ),
            "lon": (
                "time",
                np.linspace(-20, -10, ntime),
                {"standard_name": "longitude", "units": "degrees_east"},
            ),
        },
    )


BUILDERS = {"grid": grid_dataset, "station": station_dataset, "trajectory": trajectory_dataset}

#: parametrise over the three data shapes users hold: use ``kind`` as argument
all_kinds = pytest.mark.parametrize("kind", list(BUILDERS))


PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def assert_real_png(path: str | os.PathLike, *, min_bytes: int = 20_000) -> tuple[int, int]:
    """Check ``path`` is a PNG figure: readable, of sensible size, and not blank.

    Sensible: 500-2400 pixels wide and 400-2000 high (readable on a screen, not
    a poster). Not blank: more than 100 distinct colours, and between 5 % and
    97 % of the pixels not white. Returns ``(height, width)`` in pixels. Needs
    matplotlib (the ``plot`` extra) to decode the image.
    """
    from matplotlib.image import imread

    path = Path(path)
    assert path.read_bytes()[:8] == PNG_SIGNATURE, f"{path} is not a PNG file"
    assert path.stat().st_size > min_bytes, f"{path}: only {path.stat().st_size} bytes"
    image = imread(path)
    height, width = image.shape[:2]
    assert image.ndim == 3 and image.shape[2] in (3, 4), image.shape
    assert 500 <= width <= 2400 and 400 <= height <= 2000, (path, image.shape)
    rgb = image[..., :3].reshape(-1, 3)
    packed = np.round(rgb * 255).astype(np.uint32) @ np.array([1 << 16, 1 << 8, 1], np.uint32)
    colours = np.unique(packed)  # one integer per RGB colour: far faster than unique rows
    assert len(colours) > 100, f"{path} is (nearly) a single colour"
    not_white = np.any(rgb < 0.95, axis=1).mean()
    assert 0.05 < not_white < 0.97, f"{path}: {not_white:.0%} of the pixels are not white"
    return int(height), int(width)
