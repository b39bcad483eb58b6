"""Real-style CF inputs for the instrument tests (arbitrary test values, not reference values)."""

from __future__ import annotations

import numpy as np
import xarray as xr

__all__ = [
    "adcp_record",
    "curvilinear_grid",
    "met_station",
    "projected_grid",
    "rotated_pole_grid",
    "ship_record",
]

POLE_LAT, POLE_LON = 39.25, -162.0
#: CF 1.11 section 4.4.3: say how leap seconds are handled
TIME_ATTRS = {"standard_name": "time", "units_metadata": "leap_seconds: none"}


def _attrs(title: str, **extra: str) -> dict:
    return {"Conventions": "CF-1.11", "title": title, **extra}


def met_station(ntime: int = 8, *, rng_key: int = 11) -> xr.Dataset:
    """A met station file: wind_speed + wind_from_direction, scalar lat/lon."""
    rng = np.random.default_rng(rng_key)
    time = np.datetime64("2027-04-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(10, "m")
    speed = rng.uniform(0.0, 15.0, ntime)
    speed[1] = 0.0  # a calm
    direction = rng.uniform(0.0, 360.0, ntime)
    direction[1] = np.nan  # calm with no direction reported
    direction[2] = 360.0  # 360 and 0 are the same
    direction[3] = np.nan  # a speed whose direction is missing
    return xr.Dataset(
        {
            "wspd": ("time", speed, {"standard_name": "wind_speed", "units": "knot",
                                     "long_name": "10 min mean wind speed",
                                     "cell_methods": "time: mean"}),
            "wdir": ("time", direction, {"standard_name": "wind_from_direction",
                                         "units": "degree"}),
            "tas": ("time", rng.normal(285, 3, ntime),
                    {"standard_name": "air_temperature", "units": "K",
                     "units_metadata": "temperature: on_scale"}),
        },
        coords={
            "time": ("time", time, TIME_ATTRS),
            "lat": ((), 52.5, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ((), 4.25, {"standard_name": "longitude", "units": "degrees_east"}),
            "height": ((), 10.0, {"standard_name": "height", "units": "m", "positive": "up"}),
        },
        attrs=_attrs("test met station", featureType="timeSeries"),
    )


def rotated_pole_grid(nt: int = 2, ny: int = 6, nx: int = 5, *, rng_key: int = 12) -> xr.Dataset:
    """A rotated-pole model grid: x_wind/y_wind on (time, rlat, rlon), 2-D lat/lon, grid_mapping."""
    from pyproj import CRS, Transformer

    rng = np.random.default_rng(rng_key)
    rlat = np.linspace(-10.0, 12.0, ny)
    rlon = np.linspace(-15.0, 18.0, nx)
    attrs = {"grid_mapping_name": "rotated_latitude_longitude",
             "grid_north_pole_latitude": POLE_LAT, "grid_north_pole_longitude": POLE_LON}
    crs = CRS.from_cf(attrs)
    base = CRS.from_json_dict(crs.to_json_dict()["base_crs"])
    glon, glat = np.meshgrid(rlon, rlat)
    lon, lat = Transformer.from_crs(crs, base, always_xy=True).transform(glon, glat)
    dims = ("time", "rlat", "rlon")
    time = np.datetime64("2031-01-01", "ns") + np.arange(nt) * np.timedelta64(3, "h")
    common = {"grid_mapping": "rotated_pole", "coordinates": "lat lon"}
    return xr.Dataset(
        {
            "uas": (dims, rng.normal(3, 6, (nt, ny, nx)),
                    {"standard_name": "x_wind", "units": "m s-1", **common}),
            "vas": (dims, rng.normal(-1, 6, (nt, ny, nx)),
                    {"standard_name": "y_wind", "units": "m s-1", **common}),
            "rotated_pole": ((), 0, attrs),
        },
        coords={
            "time": ("time", time, TIME_ATTRS),
            "rlat": ("rlat", rlat, {"standard_name": "grid_latitude", "units": "degrees",
                                    "axis": "Y"}),
            "rlon": ("rlon", rlon, {"standard_name": "grid_longitude", "units": "degrees",
                                    "axis": "X"}),
            "lat": (("rlat", "rlon"), lat, {"standard_name": "latitude",
                                            "units": "degrees_north"}),
            "lon": (("rlat", "rlon"), lon, {"standard_name": "longitude",
                                            "units": "degrees_east"}),
        },
        attrs=_attrs("test rotated-pole grid"),
    )


def projected_grid(ny: int = 5, nx: int = 7, *, rng_key: int = 13) -> xr.Dataset:
    """An Arctic polar-stereographic grid (x/y in km) of sea_water_x/y_velocity in cm s-1."""
    rng = np.random.default_rng(rng_key)
    attrs = {"grid_mapping_name": "polar_stereographic",
             "straight_vertical_longitude_from_pole": -45.0,
             "latitude_of_projection_origin": 90.0, "standard_parallel": 70.0,
             "false_easting": 0.0, "false_northing": 0.0,
             "semi_major_axis": 6378137.0, "inverse_flattening": 298.257223563}
    x = np.linspace(-1500.0, 1500.0, nx)
    y = np.linspace(-1200.0, 1800.0, ny)
    dims = ("depth", "y", "x")
    common = {"grid_mapping": "crs"}
    return xr.Dataset(
        {
            "uo": (dims, rng.normal(0, 20, (2, ny, nx)),
                   {"standard_name": "sea_water_x_velocity", "units": "cm s-1", **common}),
            "vo": (dims, rng.normal(0, 20, (2, ny, nx)),
                   {"standard_name": "sea_water_y_velocity", "units": "cm s-1", **common}),
            "crs": ((), 0, attrs),
        },
        coords={
            "depth": ("depth", [5.0, 50.0], {"standard_name": "depth", "units": "m",
                                             "positive": "down"}),
            "y": ("y", y, {"standard_name": "projection_y_coordinate", "units": "km",
                           "axis": "Y"}),
            "x": ("x", x, {"standard_name": "projection_x_coordinate", "units": "km",
                           "axis": "X"}),
        },
        attrs=_attrs("test polar-stereographic grid"),
    )


def curvilinear_grid(ny: int = 40, nx: int = 30, *, rng_key: int = 14) -> xr.Dataset:
    """A curvilinear ocean grid with only 2-D lat/lon (the rotated-pole geometry, no mapping)."""
    ds = rotated_pole_grid(nt=1, ny=ny, nx=nx, rng_key=rng_key)
    ds = ds.drop_vars("rotated_pole").rename({"rlat": "j", "rlon": "i"})
    ds = ds.drop_vars(["j", "i"])
    for name in ("uas", "vas"):
        ds[name].attrs.pop("grid_mapping")
    return ds


def ship_record(ntime: int = 6, *, rng_key: int = 15) -> xr.Dataset:
    """A ship's met record: heading, course, speed over ground, the anemometer's wind."""
    rng = np.random.default_rng(rng_key)
    time = np.datetime64("2031-06-10T12:00", "ns") + np.arange(ntime) * np.timedelta64(1, "m")
    return xr.Dataset(
        {
            "heading": ("time", rng.uniform(0, 360, ntime),
                        {"standard_name": "platform_orientation", "units": "degree"}),
            "cog": ("time", rng.uniform(0, 360, ntime),
                    {"standard_name": "platform_course", "units": "degree"}),
            "sog": ("time", rng.uniform(0, 12, ntime),
                    {"standard_name": "platform_speed_wrt_ground", "units": "knot"}),
            "rel_wdir": ("time", rng.uniform(0, 360, ntime),
                         {"long_name": "wind direction relative to the bow (from)",
                          "units": "degree"}),
            "rel_wspd": ("time", rng.uniform(0, 20, ntime),
                         {"long_name": "wind speed relative to the ship", "units": "m s-1"}),
        },
        coords={
            "time": ("time", time, TIME_ATTRS),
            "lat": ("time", np.linspace(-34.0, -33.9, ntime),
                    {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("time", np.linspace(18.0, 18.2, ntime),
                    {"standard_name": "longitude", "units": "degrees_east"}),
        },
        attrs=_attrs("test ship record"),
    )


def adcp_record(ntime: int = 5, nbin: int = 4, *, rng_key: int = 16) -> xr.Dataset:
    """A ship-mounted current profiler: velocities on ship axes, heading/pitch/roll, navigation."""
    rng = np.random.default_rng(rng_key)
    time = np.datetime64("2031-06-10T12:00", "ns") + np.arange(ntime) * np.timedelta64(2, "m")
    dims = ("time", "depth")
    return xr.Dataset(
        {
            "vel_fwd": (dims, rng.normal(-4.0, 0.3, (ntime, nbin)),
                        {"long_name": "water velocity toward the bow, relative to the ship",
                         "units": "m s-1"}),
            "vel_stbd": (dims, rng.normal(0.2, 0.3, (ntime, nbin)),
                         {"long_name": "water velocity toward starboard, relative to the ship",
                          "units": "m s-1"}),
            "vel_up": (dims, rng.normal(0.0, 0.02, (ntime, nbin)),
                       {"long_name": "water velocity upward, relative to the ship",
                        "units": "m s-1"}),
            "heading": ("time", rng.uniform(0, 360, ntime),
                        {"standard_name": "platform_orientation", "units": "degree"}),
            "pitch": ("time", rng.normal(0, 2, ntime),
                      {"standard_name": "platform_pitch_fore_up", "units": "degree"}),
            "roll": ("time", rng.normal(0, 3, ntime),
                     {"standard_name": "platform_roll_starboard_down", "units": "degree"}),
            "cog": ("time", rng.uniform(0, 360, ntime),
                    {"standard_name": "platform_course", "units": "degree"}),
            "sog": ("time", rng.uniform(3, 5, ntime),
                    {"standard_name": "platform_speed_wrt_ground", "units": "m s-1"}),
        },
        coords={
            "time": ("time", time, TIME_ATTRS),
            "depth": ("depth", 8.0 + 4.0 * np.arange(nbin),
                      {"standard_name": "depth", "units": "m", "positive": "down"}),
            "lat": ("time", np.linspace(10.0, 10.1, ntime),
                    {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("time", np.linspace(-30.0, -29.9, ntime),
                    {"standard_name": "longitude", "units": "degrees_east"}),
        },
        attrs=_attrs("test ship-mounted current profiler"),
    )
