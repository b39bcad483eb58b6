"""Invented benchmark inputs with CF metadata (random values, fixed seeds)."""

from __future__ import annotations

import numpy as np
import xarray as xr

__all__ = ["grid_shape", "grid_winds", "obs_points", "station_points"]

#: WGS 84 constants as a scientist would type them (NIMA TR8350.2; IERS 2010 rate)
A_WGS84 = 6378137.0
F_WGS84 = 1.0 / 298.257223563
OMEGA = 7.292115e-5


def grid_shape(points: int) -> tuple[int, int, int, int]:
    """A (time, level, lat, lon) shape of about ``points`` points (1° × 1°-like grids)."""
    nlev, nlat, nlon = 20, 250, 400
    ntime = max(1, round(points / (nlev * nlat * nlon)))
    if ntime * nlev * nlat * nlon > 1.5 * points:  # small runs: shrink the grid instead
        nlev, nlat = (10, 100) if points >= 10**5 else (5, 10)
        nlon, ntime = max(1, points // (nlev * nlat)), 1
    return ntime, nlev, nlat, nlon


def grid_winds(points: int, *, seed: int = 0, upward: bool = False) -> xr.Dataset:
    """Gridded winds ``ua``, ``va`` (, ``wa``) on (time, z, lat, lon), float64, m s-1."""
    ntime, nlev, nlat, nlon = grid_shape(points)
    rng = np.random.default_rng(seed)
    shape = (ntime, nlev, nlat, nlon)
    dims = ("time", "z", "lat", "lon")
    time = np.datetime64("2020-01-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(6, "h")
    data = {
        "ua": (
            dims,
            rng.normal(5.0, 10.0, shape),
            {"standard_name": "eastward_wind", "units": "m s-1"},
        ),
        "va": (
            dims,
            rng.normal(0.0, 5.0, shape),
            {"standard_name": "northward_wind", "units": "m s-1"},
        ),
    }
    if upward:
        data["wa"] = (
            dims,
            rng.normal(0.0, 0.1, shape),
            {"standard_name": "upward_air_velocity", "units": "m s-1"},
        )
    return xr.Dataset(
        data,
        coords={
            "time": ("time", time, {"standard_name": "time"}),
            "z": (
                "z",
                np.linspace(100.0, 20000.0, nlev),
                {
                    "standard_name": "height_above_reference_ellipsoid",
                    "units": "m",
                    "positive": "up",
                },
            ),
            "lat": (
                "lat",
                np.linspace(-89.5, 89.5, nlat),
                {"standard_name": "latitude", "units": "degrees_north"},
            ),
            "lon": (
                "lon",
                np.linspace(0.0, 360.0, nlon, endpoint=False),
                {"standard_name": "longitude", "units": "degrees_east"},
            ),
        },
    )


def _wind(dims, shape) -> dict:
    zeros = np.zeros(shape)
    return {
        "u": (dims, zeros, {"standard_name": "eastward_wind", "units": "m s-1"}),
        "v": (dims, zeros.copy(), {"standard_name": "northward_wind", "units": "m s-1"}),
    }


def _sites(n: int, rng) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return rng.uniform(-80.0, 80.0, n), rng.uniform(-180.0, 180.0, n), rng.uniform(0.0, 3000.0, n)


def station_points(nsite: int, ntime: int, *, seed: int = 1) -> xr.Dataset:
    """Earth-fixed stations (zero wind) on (site, time): hourly times from 2020-01-01."""
    rng = np.random.default_rng(seed)
    lat, lon, h = _sites(nsite, rng)
    time = np.datetime64("2020-01-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(1, "h")
    return xr.Dataset(
        _wind(("site", "time"), (nsite, ntime)),
        coords={
            "time": ("time", time, {"standard_name": "time"}),
            "lat": ("site", lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("site", lon, {"standard_name": "longitude", "units": "degrees_east"}),
            "h": ("site", h, {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
        },
    )


def obs_points(n: int, *, seed: int = 2) -> xr.Dataset:
    """``n`` Earth-fixed observations (zero wind), each with its own place and time.

    The layout of a flattened station archive (CF discrete sampling geometry,
    one ``obs`` dimension): times drawn to the second over 2020-2021, sorted.
    """
    rng = np.random.default_rng(seed)
    lat, lon, h = _sites(n, rng)
    seconds = np.sort(rng.integers(0, 2 * 365 * 86400, n))
    time = np.datetime64("2020-01-01T00:00", "ns") + seconds * np.timedelta64(1, "s")
    return xr.Dataset(
        _wind(("obs",), (n,)),
        coords={
            "time": ("obs", time, {"standard_name": "time"}),
            "lat": ("obs", lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("obs", lon, {"standard_name": "longitude", "units": "degrees_east"}),
            "h": ("obs", h, {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
        },
    )
