"""Real-style CF structures, built the way the CF conventions' own examples are.

Each builder returns a small Dataset laid out as in CF 1.11 (chapter and
appendix named beside it): discrete sampling geometries of Appendix H
(orthogonal and incomplete multidimensional arrays, contiguous and indexed
ragged arrays, ``featureType`` and ``cf_role``), compression by gathering
(§8.2), a rotated-pole grid with ``grid_mapping`` (§5.6, Example 5.10), ocean
sigma layers with ``formula_terms`` (§4.3.3, Appendix D), and a curvilinear
model grid with auxiliary coordinates, ``bounds`` (§7.1) and
``cell_measures`` (§7.2). Extra references CF allows (``ancillary_variables``
§3.4, ``cell_methods`` §7.3) are spread over them so every kind is exercised.

Values are arbitrary test inputs drawn from a seeded generator (not demo
data, not reference values). :func:`write` stores a structure as CF says:
no ``_FillValue`` on coordinates, char arrays for identifiers, time as
numbers with units and calendar.
"""

from __future__ import annotations

import os
from collections.abc import Callable

import numpy as np
import xarray as xr

__all__ = ["STRUCTURES", "write"]

_T0 = np.datetime64("2031-05-04T00:00", "ns")
_TIME_ENCODING = {"units": "seconds since 2031-05-01 00:00:00", "calendar": "standard",
                  "dtype": "float64"}
_LAT = {"standard_name": "latitude", "units": "degrees_north", "long_name": "latitude"}
_LON = {"standard_name": "longitude", "units": "degrees_east", "long_name": "longitude"}
_TIME = {"standard_name": "time", "long_name": "time", "axis": "T",
         "units_metadata": "leap_seconds: none"}


def _wind(rng, shape, coordinates: str | None = None, **extra) -> dict:
    attrs_u = {"standard_name": "eastward_wind", "units": "m s-1", "long_name": "eastward wind"}
    attrs_v = {"standard_name": "northward_wind", "units": "m s-1", "long_name": "northward wind"}
    if coordinates:
        attrs_u["coordinates"] = attrs_v["coordinates"] = coordinates
    attrs_u.update(extra)
    attrs_v.update(extra)
    return {"u": rng.normal(6.0, 4.0, shape), "v": rng.normal(-1.0, 4.0, shape),
            "attrs": (attrs_u, attrs_v)}


def _current(rng, shape, **extra) -> dict:
    attrs_u = {"standard_name": "eastward_sea_water_velocity", "units": "m s-1",
               "long_name": "eastward current", **extra}
    attrs_v = {"standard_name": "northward_sea_water_velocity", "units": "m s-1",
               "long_name": "northward current", **extra}
    return {"u": rng.normal(0.2, 0.3, shape), "v": rng.normal(0.0, 0.3, shape),
            "attrs": (attrs_u, attrs_v)}


def _ids(prefix: str, n: int) -> np.ndarray:
    return np.array([f"{prefix}{i:02d}" for i in range(n)], dtype="S")


def _globals(feature: str | None, title: str) -> dict:
    attrs = {"Conventions": "CF-1.11", "title": title,
             "history": "built by tests/cf_structures.py"}
    if feature:
        attrs["featureType"] = feature
    return attrs


def time_series(rng: np.random.Generator) -> xr.Dataset:
    """Stations on an orthogonal multidimensional array (CF Example H.2)."""
    ns, nt = 3, 5
    w = _wind(rng, (ns, nt), "time lat lon alt station_name",
              ancillary_variables="wind_quality")
    return xr.Dataset(
        {
            "u": (("station", "time"), w["u"], w["attrs"][0]),
            "v": (("station", "time"), w["v"], w["attrs"][1]),
            "wind_quality": (("station", "time"), np.ones((ns, nt), "i1"),
                             {"long_name": "quality flag of the wind",
                              "flag_values": np.array([0, 1], "i1"),
                              "flag_meanings": "bad good"}),
            "station_name": (("station",), _ids("station_", ns),
                             {"cf_role": "timeseries_id", "long_name": "station name"}),
        },
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(1, "h"), _TIME),
            "lat": ("station", rng.uniform(-60, 60, ns), _LAT),
            "lon": ("station", rng.uniform(-180, 180, ns), _LON),
            "alt": ("station", rng.uniform(0, 500, ns),
                    {"standard_name": "altitude", "units": "m", "positive": "up",
                     "axis": "Z", "long_name": "station altitude"}),
        },
        attrs=_globals("timeSeries", "stations, orthogonal multidimensional array"),
    )


def trajectory(rng: np.random.Generator) -> xr.Dataset:
    """One trajectory with its identifier as a scalar (CF Example H.8)."""
    n = 8
    w = _wind(rng, n, "time lat lon z", cell_methods="time: mean (interval: 10 minutes)")
    return xr.Dataset(
        {
            "u": ("time", w["u"], w["attrs"][0]),
            "v": ("time", w["v"], w["attrs"][1]),
            "trajectory": ((), np.array(b"flight_07"),
                           {"cf_role": "trajectory_id", "long_name": "flight identifier"}),
        },
        coords={
            "time": ("time", _T0 + np.arange(n) * np.timedelta64(10, "m"), _TIME),
            "lat": ("time", np.linspace(41.0, 44.0, n), _LAT),
            "lon": ("time", np.linspace(-30.0, -24.0, n), _LON),
            "z": ("time", np.linspace(1000.0, 9000.0, n),
                  {"standard_name": "altitude", "units": "m", "positive": "up", "axis": "Z",
                   "long_name": "altitude"}),
        },
        attrs=_globals("trajectory", "single trajectory"),
    )


def profile(rng: np.random.Generator) -> xr.Dataset:
    """One profile: position and time scalar, depth along the profile (CF Example H.10)."""
    nz = 6
    c = _current(rng, nz)
    return xr.Dataset(
        {
            "u": ("z", c["u"], {**c["attrs"][0], "coordinates": "time lat lon z"}),
            "v": ("z", c["v"], {**c["attrs"][1], "coordinates": "time lat lon z"}),
            "profile": ((), np.array(b"cast_3"), {"cf_role": "profile_id"}),
        },
        coords={
            "z": ("z", np.linspace(5.0, 300.0, nz),
                  {"standard_name": "depth", "units": "m", "positive": "down", "axis": "Z",
                   "long_name": "depth"}),
            "time": ((), _T0, _TIME),
            "lat": ((), 57.25, _LAT),
            "lon": ((), 8.5, _LON),
        },
        attrs=_globals("profile", "single profile"),
    )


def time_series_profile(rng: np.random.Generator) -> xr.Dataset:
    """Profiles at stations on orthogonal arrays (CF Example H.16)."""
    ns, nt, nz = 2, 4, 3
    c = _current(rng, (ns, nt, nz), cell_methods="time: mean (interval: 1 hour)")
    coords = "time lat lon z station_name"
    return xr.Dataset(
        {
            "u": (("station", "time", "z"), c["u"], {**c["attrs"][0], "coordinates": coords}),
            "v": (("station", "time", "z"), c["v"], {**c["attrs"][1], "coordinates": coords}),
            "station_name": (("station",), _ids("mooring_", ns),
                             {"cf_role": "timeseries_id", "long_name": "mooring name"}),
        },
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(1, "h"), _TIME),
            "z": ("z", [10.0, 40.0, 90.0],
                  {"standard_name": "depth", "units": "m", "positive": "down", "axis": "Z",
                   "long_name": "depth"}),
            "lat": ("station", rng.uniform(-50, 50, ns), _LAT),
            "lon": ("station", rng.uniform(0, 360, ns), _LON),
        },
        attrs=_globals("timeSeriesProfile", "moorings, orthogonal arrays"),
    )


def trajectory_profile(rng: np.random.Generator) -> xr.Dataset:
    """Profiles along a ship's track, multidimensional arrays (CF Example H.18)."""
    ntr, npf, nz = 1, 4, 3
    c = _current(rng, (ntr, npf, nz))
    coords = "time lat lon z"
    times = (_T0 + np.arange(npf) * np.timedelta64(3, "h"))[None, :]
    return xr.Dataset(
        {
            "u": (("trajectory", "profile", "z"), c["u"],
                  {**c["attrs"][0], "coordinates": coords}),
            "v": (("trajectory", "profile", "z"), c["v"],
                  {**c["attrs"][1], "coordinates": coords}),
            "trajectory_name": (("trajectory",), _ids("cruise_", ntr),
                                {"cf_role": "trajectory_id", "long_name": "cruise name"}),
        },
        coords={
            "time": (("trajectory", "profile"), times, _TIME),
            "lat": (("trajectory", "profile"), np.linspace(-20, -18, npf)[None, :], _LAT),
            "lon": (("trajectory", "profile"), np.linspace(100, 103, npf)[None, :], _LON),
            "z": ("z", [5.0, 25.0, 60.0],
                  {"standard_name": "depth", "units": "m", "positive": "down", "axis": "Z",
                   "long_name": "depth"}),
        },
        attrs=_globals("trajectoryProfile", "profiles along a track"),
    )


def _ragged_track(rng, counts) -> tuple[dict, dict]:
    nobs = int(sum(counts))
    w = _wind(rng, nobs, "time lat lon z")
    data = {"u": ("obs", w["u"], w["attrs"][0]), "v": ("obs", w["v"], w["attrs"][1]),
            "trajectory_name": (("trajectory",), _ids("drifter_", len(counts)),
                                {"cf_role": "trajectory_id", "long_name": "drifter"})}
    coords = {
        "time": ("obs", _T0 + np.arange(nobs) * np.timedelta64(20, "m"), _TIME),
        "lat": ("obs", rng.uniform(-70, 70, nobs), _LAT),
        "lon": ("obs", rng.uniform(-180, 180, nobs), _LON),
        "z": ("obs", rng.uniform(0, 3000, nobs),
              {"standard_name": "altitude", "units": "m", "positive": "up", "axis": "Z",
               "long_name": "altitude"}),
    }
    return data, coords


def contiguous_ragged(rng: np.random.Generator) -> xr.Dataset:
    """Trajectories as a contiguous ragged array (CF Example H.6, count variable)."""
    counts = np.array([4, 2, 5], "i4")
    data, coords = _ragged_track(rng, counts)
    data["row_size"] = (("trajectory",), counts,
                        {"long_name": "number of observations of each trajectory",
                         "sample_dimension": "obs"})
    return xr.Dataset(data, coords=coords,
                      attrs=_globals("trajectory", "trajectories, contiguous ragged array"))


def indexed_ragged(rng: np.random.Generator) -> xr.Dataset:
    """Trajectories as an indexed ragged array (CF Example H.7, index variable)."""
    counts = np.array([3, 4], "i4")
    data, coords = _ragged_track(rng, counts)
    index = rng.permutation(np.repeat(np.arange(len(counts), dtype="i4"), counts))
    data["trajectory_index"] = (("obs",), index,
                                {"long_name": "which trajectory this observation is for",
                                 "instance_dimension": "trajectory"})
    return xr.Dataset(data, coords=coords,
                      attrs=_globals("trajectory", "trajectories, indexed ragged array"))


def gathered_grid(rng: np.random.Generator) -> xr.Dataset:
    """Land points gathered from a lat x lon grid (CF §8.2, Example 8.2).

    As in the example, ``landpoint`` holds indices into the grid flattened
    in C order and ``compress`` names the grid dimensions; the true
    positions of the points are also given as auxiliary coordinates on
    ``landpoint`` (CF §5), which is what frameshift reads.
    """
    lats, lons = np.array([-30.0, 0.0, 30.0, 60.0]), np.array([0.0, 90.0, 180.0, 270.0])
    points = np.array([1, 4, 6, 11, 15], "i4")
    plat = lats[points // len(lons)]
    plon = lons[points % len(lons)]
    nt = 3
    w = _wind(rng, (nt, len(points)), "point_lat point_lon")
    return xr.Dataset(
        {"u": (("time", "landpoint"), w["u"], w["attrs"][0]),
         "v": (("time", "landpoint"), w["v"], w["attrs"][1])},
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(6, "h"), _TIME),
            "lat": ("lat", lats, {"units": "degrees_north", "long_name": "grid latitude",
                                  "axis": "Y"}),
            "lon": ("lon", lons, {"units": "degrees_east", "long_name": "grid longitude",
                                  "axis": "X"}),
            "landpoint": ("landpoint", points, {"compress": "lat lon",
                                                "long_name": "index of the land point"}),
            "point_lat": ("landpoint", plat, _LAT),
            "point_lon": ("landpoint", plon, _LON),
        },
        attrs=_globals(None, "gathered land points"),
    )


def rotated_pole(rng: np.random.Generator) -> xr.Dataset:
    """A rotated-pole grid with true lat/lon as auxiliary coordinates (CF Example 5.10)."""
    nt, ny, nx = 2, 4, 5
    rlat = np.linspace(-4.0, 4.0, ny)
    rlon = np.linspace(-5.0, 5.0, nx)
    pole_lat, pole_lon = 39.25, -162.0
    lat, lon = _unrotate(*np.meshgrid(rlat, rlon, indexing="ij"), pole_lat, pole_lon)
    w = _wind(rng, (nt, ny, nx), "lat lon", grid_mapping="rotated_pole")
    return xr.Dataset(
        {"u": (("time", "rlat", "rlon"), w["u"], w["attrs"][0]),
         "v": (("time", "rlat", "rlon"), w["v"], w["attrs"][1]),
         "rotated_pole": ((), np.array(0, "i4"),
                          {"grid_mapping_name": "rotated_latitude_longitude",
                           "grid_north_pole_latitude": pole_lat,
                           "grid_north_pole_longitude": pole_lon})},
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(1, "D"), _TIME),
            "rlat": ("rlat", rlat, {"standard_name": "grid_latitude", "units": "degrees",
                                    "long_name": "latitude in rotated pole grid", "axis": "Y"}),
            "rlon": ("rlon", rlon, {"standard_name": "grid_longitude", "units": "degrees",
                                    "long_name": "longitude in rotated pole grid", "axis": "X"}),
            "lat": (("rlat", "rlon"), lat, _LAT),
            "lon": (("rlat", "rlon"), lon, _LON),
        },
        attrs=_globals(None, "rotated-pole grid"),
    )


def _unrotate(rlat, rlon, pole_lat, pole_lon):
    """True lat/lon of rotated-pole points (the usual spherical rotation; common practice)."""
    phi, lam = np.deg2rad(rlat), np.deg2rad(rlon)
    p = np.deg2rad(pole_lat)
    x, y, z = np.cos(phi) * np.cos(lam), np.cos(phi) * np.sin(lam), np.sin(phi)
    # rotate about y by -(90 - pole_lat), then about z by the pole's longitude + 180
    theta = -(np.pi / 2 - p)
    x2 = np.cos(theta) * x + np.sin(theta) * z
    z2 = -np.sin(theta) * x + np.cos(theta) * z
    lat = np.rad2deg(np.arcsin(np.clip(z2, -1, 1)))
    lon = np.rad2deg(np.arctan2(y, x2)) + pole_lon + 180.0
    return lat, (lon + 180.0) % 360.0 - 180.0


def ocean_sigma(rng: np.random.Generator) -> xr.Dataset:
    """Currents on ocean sigma layers with formula_terms (CF §4.3.3, Appendix D)."""
    nt, ns, ny, nx = 2, 3, 3, 4
    c = _current(rng, (nt, ns, ny, nx))
    return xr.Dataset(
        {"u": (("time", "sigma", "lat", "lon"), c["u"], c["attrs"][0]),
         "v": (("time", "sigma", "lat", "lon"), c["v"], c["attrs"][1]),
         "eta": (("time", "lat", "lon"), rng.normal(0, 0.2, (nt, ny, nx)),
                 {"standard_name": "sea_surface_height_above_geoid", "units": "m",
                  "long_name": "sea surface height"}),
         "depth": (("lat", "lon"), rng.uniform(50, 400, (ny, nx)),
                   {"standard_name": "sea_floor_depth_below_geoid", "units": "m",
                    "positive": "down", "long_name": "sea floor depth"})},
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(3, "h"), _TIME),
            "sigma": ("sigma", [-0.1, -0.5, -0.9],
                      {"standard_name": "ocean_sigma_coordinate", "units": "1",
                       "positive": "up", "axis": "Z", "long_name": "sigma layer",
                       "computed_standard_name": "altitude",
                       "formula_terms": "sigma: sigma eta: eta depth: depth"}),
            "lat": ("lat", [54.0, 54.5, 55.0], {**_LAT, "axis": "Y"}),
            "lon": ("lon", [6.0, 6.5, 7.0, 7.5], {**_LON, "axis": "X"}),
        },
        attrs=_globals(None, "ocean sigma layers"),
    )


def curvilinear(rng: np.random.Generator) -> xr.Dataset:
    """A curvilinear model grid: 2-D lat/lon with bounds and cell areas (CF §5.6, §7.1, §7.2)."""
    nt, ny, nx = 2, 3, 4
    j, i = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
    lat = 10.0 + 2.0 * j + 0.3 * i
    lon = 140.0 + 2.5 * i - 0.4 * j
    w = _wind(rng, (nt, ny, nx), "lat lon", cell_measures="area: cell_area")
    corners = np.array([(-0.5, -0.5), (-0.5, 0.5), (0.5, 0.5), (0.5, -0.5)])
    lat_b = np.stack([10.0 + 2.0 * (j + dj) + 0.3 * (i + di) for dj, di in corners], -1)
    lon_b = np.stack([140.0 + 2.5 * (i + di) - 0.4 * (j + dj) for dj, di in corners], -1)
    return xr.Dataset(
        {"u": (("time", "y", "x"), w["u"], w["attrs"][0]),
         "v": (("time", "y", "x"), w["v"], w["attrs"][1]),
         "cell_area": (("y", "x"), rng.uniform(4e10, 6e10, (ny, nx)),
                       {"standard_name": "cell_area", "units": "m2", "long_name": "cell area"}),
         "lat_bnds": (("y", "x", "nv"), lat_b), "lon_bnds": (("y", "x", "nv"), lon_b)},
        coords={
            "time": ("time", _T0 + np.arange(nt) * np.timedelta64(6, "h"), _TIME),
            "y": ("y", np.arange(ny, dtype="i4"), {"long_name": "grid row index"}),
            "x": ("x", np.arange(nx, dtype="i4"), {"long_name": "grid column index"}),
            "lat": (("y", "x"), lat, {**_LAT, "bounds": "lat_bnds"}),
            "lon": (("y", "x"), lon, {**_LON, "bounds": "lon_bnds"}),
        },
        attrs=_globals(None, "curvilinear model grid"),
    )


#: name -> builder(rng) of every structure
STRUCTURES: dict[str, Callable[[np.random.Generator], xr.Dataset]] = {
    "time_series": time_series,
    "trajectory": trajectory,
    "profile": profile,
    "time_series_profile": time_series_profile,
    "trajectory_profile": trajectory_profile,
    "contiguous_ragged": contiguous_ragged,
    "indexed_ragged": indexed_ragged,
    "gathered_grid": gathered_grid,
    "rotated_pole": rotated_pole,
    "ocean_sigma": ocean_sigma,
    "curvilinear": curvilinear,
}


def build(name: str, seed: int = 11) -> xr.Dataset:
    """The structure ``name`` from a seeded generator."""
    return STRUCTURES[name](np.random.default_rng(seed))


def write(ds: xr.Dataset, path: str | os.PathLike) -> None:
    """Store ``ds`` as CF says: no coordinate fill values, char identifiers, numeric time."""
    encoding = {}
    for name, var in ds.variables.items():
        enc: dict = {"_FillValue": None}
        if var.dtype.kind == "S":
            enc.update(dtype="S1", char_dim_name=f"{name}_strlen")
        if np.issubdtype(var.dtype, np.datetime64):
            enc.update(_TIME_ENCODING)
        encoding[name] = enc
    ds.to_netcdf(path, encoding=encoding, engine="netcdf4")
