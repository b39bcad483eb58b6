"""Test inputs for the diagnostics: CF-described grids, moorings and tracks.

Arbitrary test inputs (not demo data and not reference values); the values
the tests compare against sit beside their sources in the tests.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

WIND = {"eastward": "eastward_wind", "northward": "northward_wind"}
CURRENT = {"eastward": "eastward_sea_water_velocity", "northward": "northward_sea_water_velocity"}


def lat_attrs() -> dict:
    return {"standard_name": "latitude", "units": "degrees_north"}


def lon_attrs() -> dict:
    return {"standard_name": "longitude", "units": "degrees_east"}


def grid(u: np.ndarray, v: np.ndarray, lat: np.ndarray, lon: np.ndarray, *, dims=("lat", "lon"),
         coords: dict | None = None, family: dict = WIND, units: str = "m s-1") -> xr.Dataset:
    """Velocity on a latitude-longitude grid (extra leading dims described in ``coords``)."""
    all_coords = {"lat": ("lat", lat, lat_attrs()), "lon": ("lon", lon, lon_attrs())}
    all_coords.update(coords or {})
    return xr.Dataset(
        {"u": (dims, u, {"standard_name": family["eastward"], "units": units}),
         "v": (dims, v, {"standard_name": family["northward"], "units": units})},
        coords=all_coords, attrs={"Conventions": "CF-1.11", "title": "test grid"},
    )


def times(n: int, step_minutes: float = 60.0, start: str = "2031-06-01") -> np.ndarray:
    step = np.timedelta64(round(step_minutes * 60), "s")
    return np.datetime64(start, "ns") + np.arange(n) * step


def seconds(t: np.ndarray) -> np.ndarray:
    return (t - t[0]) / np.timedelta64(1, "s")


def moorings(u: np.ndarray, v: np.ndarray, t: np.ndarray, lat, lon, *, family=CURRENT,
             units: str = "m s-1") -> xr.Dataset:
    """Current records: dims (station, time) when ``lat`` is a list, else (time,)."""
    if np.ndim(lat):
        dims, pos = ("station", "time"), "station"
    else:
        dims, pos = ("time",), ()
    return xr.Dataset(
        {"u": (dims, u, {"standard_name": family["eastward"], "units": units}),
         "v": (dims, v, {"standard_name": family["northward"], "units": units})},
        coords={"time": ("time", t, {"standard_name": "time"}),
                "lat": (pos, np.asarray(lat, dtype=float), lat_attrs()),
                "lon": (pos, np.asarray(lon, dtype=float), lon_attrs())},
        attrs={"Conventions": "CF-1.11"},
    )


def track(lat, lon, h, t, *, height_name: str = "height_above_reference_ellipsoid") -> xr.Dataset:
    """Positions along time (dims (time,) or (drifter, time))."""
    dims = ("time",) if np.ndim(lat) == 1 else ("drifter", "time")
    return xr.Dataset(
        {"z": (dims, h, {"standard_name": height_name, "units": "m", "positive": "up"})},
        coords={"time": ("time", t, {"standard_name": "time"}),
                "lat": (dims, lat, lat_attrs()), "lon": (dims, lon, lon_attrs())},
        attrs={"Conventions": "CF-1.11"},
    )


def run_lazily(func, ds: xr.Dataset, layout: str, *args, computes: int = 0,
               **kwargs) -> xr.Dataset:
    """``func`` on eager or chunked ``ds``: chunked input must build without computing
    (``computes`` allows reads of small metadata such as a chunked bounds variable).

    Returns the computed result, so checks look at numbers either way.
    """
    from tests.helpers import as_layout, raise_if_dask_computes

    with raise_if_dask_computes(computes):
        out = func(as_layout(ds, layout), *args, **kwargs)
    return out.compute()
