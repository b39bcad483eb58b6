"""The reading layer on real-style CF structures: each velocity's own coordinates.

The files are built here the way CF describes them (CF 1.11 §5 "coordinates"
attribute, Appendix H discrete sampling geometries). The positions that
frameshift uses are checked against independent computations at the
positions the ``coordinates`` attribute names:

- the eastward frame speed Ω (N + h) cos φ, with N = a / sqrt(1 - e² sin²φ)
  (prime-vertical radius; WGS 84 constants from NIMA TR8350.2), by numpy here;
- Cartesian positions: body-fixed ECEF from pyproj (EPSG:4979 -> EPSG:4978),
  turned by the Earth Rotation Angle from pyerfa's ``era00`` (IERS Conventions
  2010 eq. 5.15).
"""

from __future__ import annotations

import erfa
import numpy as np
import pytest
import xarray as xr
from pyproj import Transformer

import frameshift
from frameshift.errors import UnsupportedInputError
from tests.helpers import as_layout, eager_and_chunked, raise_if_dask_computes

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1
A = 6378137.0  # m, WGS 84 (NIMA TR8350.2)
F = 1 / 298.257223563  # WGS 84 (NIMA TR8350.2)
E2 = F * (2 - F)
TO_ECEF = Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)

SEA_U = {"standard_name": "eastward_sea_water_velocity", "units": "m s-1"}
SEA_V = {"standard_name": "northward_sea_water_velocity", "units": "m s-1"}
WIND_U = {"standard_name": "eastward_wind", "units": "m s-1"}
WIND_V = {"standard_name": "northward_wind", "units": "m s-1"}
LAT = {"standard_name": "latitude", "units": "degrees_north"}
LON = {"standard_name": "longitude", "units": "degrees_east"}
TIME = {"standard_name": "time"}


def frame_speed(lat_deg, h):
    """Ω (N + h) cos φ on WGS 84, by hand (numpy)."""
    phi = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    n = A / np.sqrt(1 - E2 * np.sin(phi) ** 2)
    return OMEGA * (n + np.asarray(h, dtype=np.float64)) * np.cos(phi)


def inertial_position(lat_deg, lon_deg, h, times):
    """CIRS position: pyproj ECEF turned about z by the ERA of pyerfa (UT1 = UTC)."""
    x, y, z = TO_ECEF.transform(lon_deg, lat_deg, h)
    days = (np.asarray(times, "datetime64[ns]") - np.datetime64("2000-01-01T12:00", "ns"))
    jd2 = days / np.timedelta64(86400_000_000_000, "ns")
    theta = erfa.era00(2451545.0, jd2)
    c, s = np.cos(theta), np.sin(theta)
    x, y, z, c, s = np.broadcast_arrays(x, y, z, c, s)
    return np.stack([c * x - s * y, s * x + c * y, z], axis=-1)


def reopened(ds: xr.Dataset, tmp_path, name: str) -> xr.Dataset:
    """``ds`` written to NetCDF and read back (xarray moves ``coordinates`` into encoding)."""
    path = tmp_path / f"{name}.nc"
    ds.to_netcdf(path)
    return xr.open_dataset(path).load()


# --- a glider: trajectoryProfile whose depth-mean currents have their own time and place
def glider() -> xr.Dataset:
    n = 4
    t0 = np.datetime64("2031-05-02T00:00", "ns")
    hours = np.timedelta64(3_600_000_000_000, "ns")
    profile_time = t0 + np.arange(n) * 3 * hours
    uv_time = profile_time + 90 * np.timedelta64(60_000_000_000, "ns")  # mid-dive
    return xr.Dataset(
        {
            "u": ("profile", [0.10, 0.12, 0.08, 0.05],
                  {**SEA_U, "long_name": "depth-mean eastward current",
                   "coordinates": "time_uv lat_uv lon_uv"}),
            "v": ("profile", [-0.02, 0.00, 0.03, 0.01],
                  {**SEA_V, "long_name": "depth-mean northward current",
                   "coordinates": "time_uv lat_uv lon_uv"}),
            "temperature": (("profile", "obs"), np.full((n, 3), 12.0),
                            {"standard_name": "sea_water_temperature", "units": "degree_Celsius",
                             "coordinates": "time lat lon depth"}),
            "depth": (("profile", "obs"), np.tile([5.0, 50.0, 150.0], (n, 1)),
                      {"standard_name": "depth", "units": "m", "positive": "down"}),
            "time": ("profile", profile_time, TIME),
            "lat": ("profile", [52.0, 52.1, 52.2, 52.3], LAT),
            "lon": ("profile", [-20.0, -20.1, -20.2, -20.3], LON),
            "time_uv": ("profile", uv_time, {**TIME, "long_name": "time of depth-mean current"}),
            "lat_uv": ("profile", [40.0, 40.5, 41.0, 41.5], LAT),
            "lon_uv": ("profile", [-30.0, -30.5, -31.0, -31.5], LON),
        },
        attrs={"Conventions": "CF-1.11", "featureType": "trajectoryProfile"},
    )


@eager_and_chunked
def test_glider_currents_sit_where_their_coordinates_say(layout, tmp_path):
    for ds in (glider(), reopened(glider(), tmp_path, "glider")):
        ds = as_layout(ds, layout)
        read = frameshift.detect.read_layout(ds).velocity.position
        assert (read.latitude, read.longitude, read.time) == ("lat_uv", "lon_uv", "time_uv")
        assert read.vertical is None  # the currents declare no vertical: not the obs depth
        with raise_if_dask_computes():
            out = frameshift.to_inertial(ds)
        shift = out["u"].values - ds["u"].values
        np.testing.assert_allclose(shift, frame_speed(ds["lat_uv"].values, 0.0), rtol=1e-12)
        wrong = frame_speed(ds["lat"].values, 0.0)  # the profile latitude would differ a lot
        assert np.all(np.abs(shift - wrong) > 5.0)


@eager_and_chunked
def test_glider_cartesian_positions_at_the_velocity_times_and_places(layout):
    ds = as_layout(glider(), layout)
    out = frameshift.to_inertial(ds, basis="cartesian")
    expected = inertial_position(
        ds["lat_uv"].values, ds["lon_uv"].values, np.zeros(4), ds["time_uv"].values
    )
    position = out["position"].transpose(..., "component")  # stored component first
    np.testing.assert_allclose(position.values, expected, rtol=0, atol=1e-3)  # 1 mm
    back = frameshift.to_rotating(out, basis="cartesian")
    np.testing.assert_allclose(back["u"].values, ds["u"].values, atol=1e-9 * 500)


# --- a model grid: cell centres and nodes both hold latitude/longitude ---------------
def model_grid(*, declare: bool = True) -> xr.Dataset:
    eta, xi = np.meshgrid(np.arange(3.0), np.arange(4.0), indexing="ij")
    lat_c = 30.0 + 2.0 * eta + 0.3 * xi
    lon_c = -60.0 + 2.5 * xi - 0.2 * eta
    rng = np.random.default_rng(9)
    coords = {"coordinates": "lat_c lon_c"} if declare else {}
    times = np.datetime64("2031-01-01", "ns") + np.arange(2) * np.timedelta64(3600, "s")
    return xr.Dataset(
        {
            "u": (("time", "eta", "xi"), rng.normal(0, 0.3, (2, 3, 4)), {**SEA_U, **coords}),
            "v": (("time", "eta", "xi"), rng.normal(0, 0.3, (2, 3, 4)), {**SEA_V, **coords}),
            "vorticity_like": (("time", "eta", "xi"), np.zeros((2, 3, 4)),
                               {"units": "s-1", "coordinates": "lat_n lon_n"}),
        },
        coords={
            "time": ("time", times, TIME),
            "lat_c": (("eta", "xi"), lat_c, {**LAT, "long_name": "latitude of cell centres"}),
            "lon_c": (("eta", "xi"), lon_c, {**LON, "long_name": "longitude of cell centres"}),
            "lat_n": (("eta", "xi"), lat_c + 1.0, {**LAT, "long_name": "latitude of nodes"}),
            "lon_n": (("eta", "xi"), lon_c + 1.25, {**LON, "long_name": "longitude of nodes"}),
        },
        attrs={"Conventions": "CF-1.11"},
    )


@eager_and_chunked
def test_model_grid_takes_the_cell_centres_its_velocities_name(layout, tmp_path):
    for ds in (model_grid(), reopened(model_grid(), tmp_path, "model")):
        ds = as_layout(ds, layout)
        out = frameshift.to_inertial(ds)
        np.testing.assert_allclose(
            (out["u"] - ds["u"]).values,
            np.broadcast_to(frame_speed(ds["lat_c"].values, 0.0), (2, 3, 4)),
            rtol=1e-12,
        )
        terms = frameshift.apparent_accelerations(ds, terms="coriolis")
        f = 2 * OMEGA * np.sin(np.deg2rad(ds["lat_c"].values))  # f = 2Ω sin φ (textbook)
        np.testing.assert_allclose(
            terms["coriolis_northward"].values, -f * ds["u"].values, rtol=1e-12
        )


@eager_and_chunked
def test_model_grid_without_coordinates_asks_which_latitude(layout):
    ds = as_layout(model_grid(declare=False), layout)
    with pytest.raises(UnsupportedInputError, match="latitude=") as info:
        frameshift.to_inertial(ds)
    assert "lat_c" in info.value.found and "lat_n" in info.value.found
    out = frameshift.to_inertial(ds, latitude="lat_n", longitude="lon_n")
    np.testing.assert_allclose(
        (out["u"] - ds["u"]).values,
        np.broadcast_to(frame_speed(ds["lat_n"].values, 0.0), (2, 3, 4)),
        rtol=1e-12,
    )


# --- a lake model: 10 m winds beside a 2-D bathymetry --------------------------------
def lake(*, with_height: bool = True) -> xr.Dataset:
    ny, nx = 3, 4
    yy, xx = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
    rng = np.random.default_rng(4)
    listed = "lat lon height" if with_height else "lat lon"
    ds = xr.Dataset(
        {
            "u10": (("time", "ny", "nx"), rng.normal(3, 2, (2, ny, nx)),
                    {**WIND_U, "coordinates": listed}),
            "v10": (("time", "ny", "nx"), rng.normal(0, 2, (2, ny, nx)),
                    {**WIND_V, "coordinates": listed}),
            "bottom_temperature": (("time", "ny", "nx"), np.full((2, ny, nx), 4.0),
                                   {"standard_name": "sea_water_temperature",
                                    "units": "degree_Celsius", "coordinates": "lat lon depth"}),
        },
        coords={
            "time": ("time", np.array(["2031-08-01T00", "2031-08-01T01"], "datetime64[ns]"),
                     TIME),
            "lat": (("ny", "nx"), 61.0 + 0.05 * yy + 0.01 * xx, LAT),
            "lon": (("ny", "nx"), 24.0 + 0.08 * xx, LON),
            # the lake's depth at each cell (bathymetry): a vertical that is not the winds'
            "depth": (("ny", "nx"), 5.0 + 10.0 * yy + xx,
                      {"standard_name": "depth", "units": "m", "positive": "down",
                       "long_name": "lake depth"}),
        },
        attrs={"Conventions": "CF-1.11"},
    )
    if with_height:
        ds = ds.assign_coords(height=((), 10.0, {"standard_name": "height", "units": "m",
                                                 "positive": "up", "axis": "Z"}))
    return ds


@eager_and_chunked
def test_ten_metre_winds_never_take_the_bathymetry_as_their_height(layout, tmp_path):
    for with_height, h in ((True, 10.0), (False, 0.0)):
        for ds in (lake(with_height=with_height),
                   reopened(lake(with_height=with_height), tmp_path, f"lake{with_height}")):
            ds = as_layout(ds, layout)
            read = frameshift.detect.read_layout(ds).velocity.position
            assert read.vertical == ("height" if with_height else None)
            out = frameshift.to_inertial(ds)
            np.testing.assert_allclose(
                (out["u10"] - ds["u10"]).values,
                np.broadcast_to(frame_speed(ds["lat"].values, h), (2, 3, 4)),
                rtol=1e-12,
            )


# --- a buoy: winds above, currents below, in one file --------------------------------
def buoy() -> xr.Dataset:
    times = np.datetime64("2031-03-01", "ns") + np.arange(3) * np.timedelta64(600, "s")
    rng = np.random.default_rng(5)
    return xr.Dataset(
        {
            "wind_u": ("time", rng.normal(5, 2, 3), {**WIND_U, "units": "knot",
                                                     "coordinates": "lat lon wind_height"}),
            "wind_v": ("time", rng.normal(0, 2, 3), {**WIND_V, "units": "knot",
                                                     "coordinates": "lat lon wind_height"}),
            "cur_u": (("time", "depth"), rng.normal(0, 20, (3, 2)),
                      {**SEA_U, "units": "cm s-1", "coordinates": "lat lon"}),
            "cur_v": (("time", "depth"), rng.normal(0, 20, (3, 2)),
                      {**SEA_V, "units": "cm s-1", "coordinates": "lat lon"}),
        },
        coords={
            "time": ("time", times, TIME),
            "depth": ("depth", [2.0, 12.0], {"standard_name": "depth", "units": "m",
                                             "positive": "down", "axis": "Z"}),
            "lat": ((), 44.5, LAT),
            "lon": ((), -9.25, LON),
            "wind_height": ((), 4.0, {"standard_name": "height", "units": "m",
                                      "positive": "up"}),
        },
        attrs={"Conventions": "CF-1.11", "featureType": "timeSeries"},
    )


@eager_and_chunked
def test_buoy_winds_and_currents_both_convert_each_at_its_own_height(layout):
    ds = as_layout(buoy(), layout)
    layout_read = frameshift.detect.read_layout(ds)
    assert [s.family for s in layout_read.sets] == ["wind", "sea_water"]
    with raise_if_dask_computes():
        out = frameshift.to_inertial(ds)
    knot = 1852.0 / 3600.0  # m s-1 per knot (international nautical mile, 1852 m)
    np.testing.assert_allclose(
        (out["wind_u"] - ds["wind_u"]).values * knot, frame_speed(44.5, 4.0), rtol=1e-12
    )
    np.testing.assert_allclose(
        (out["cur_u"] - ds["cur_u"]).values * 0.01,
        np.broadcast_to(frame_speed(44.5, -np.array([2.0, 12.0])), (3, 2)),
        rtol=1e-12,
    )
    for name in ("wind_u", "wind_v", "cur_u", "cur_v"):
        assert out[name].attrs["reference_frame"] == "inertial"
    back = frameshift.to_rotating(out)
    for name in ("wind_u", "cur_u"):
        np.testing.assert_allclose(back[name].values, ds[name].values, rtol=1e-12)


@eager_and_chunked
def test_buoy_cartesian_and_terms_hold_both_sets(layout):
    ds = as_layout(buoy(), layout)
    cart = frameshift.to_inertial(ds, basis="cartesian")
    assert {"position_wind", "velocity_wind", "position_sea_water", "velocity_sea_water"} <= set(
        cart.data_vars
    )
    expected = inertial_position(44.5, -9.25, 4.0, ds["time"].values)
    wind = cart["position_wind"].transpose(..., "component")  # stored component first
    np.testing.assert_allclose(wind.values, expected, rtol=0, atol=1e-3)
    below = inertial_position(44.5, -9.25, -12.0, ds["time"].values)
    water = cart["position_sea_water"].transpose(..., "component")
    np.testing.assert_allclose(water.isel(depth=1).values, below, rtol=0, atol=1e-3)
    back = frameshift.to_rotating(cart, basis="cartesian")
    np.testing.assert_allclose(back["cur_u"].values, ds["cur_u"].values, atol=1e-9 * 50000)
    np.testing.assert_allclose(back["wind_v"].values, ds["wind_v"].values, atol=1e-9 * 1000)
    terms = frameshift.apparent_accelerations(ds, terms="coriolis")
    f = 2 * OMEGA * np.sin(np.deg2rad(44.5))  # f = 2Ω sin φ (textbook)
    np.testing.assert_allclose(
        terms["coriolis_northward_wind"].values, -f * ds["wind_u"].values * 1852 / 3600,
        rtol=1e-12,
    )
    np.testing.assert_allclose(
        terms["coriolis_northward_sea_water"].values, -f * ds["cur_u"].values * 0.01, rtol=1e-12
    )


def test_the_command_line_says_how_many_sets_it_converted(tmp_path, capsys):
    path = tmp_path / "in" / "buoy.nc"
    path.parent.mkdir()
    buoy().to_netcdf(path)
    from frameshift.cli import main

    assert main(["convert", str(path), "--out", str(tmp_path / "out")]) == 0
    assert "2 velocity sets" in capsys.readouterr().out
    assert main(["convert", str(path), "--out", str(tmp_path / "one"), "--velocity",
                 "eastward=wind_u,northward=wind_v"]) == 0
    assert "1 velocity set," in capsys.readouterr().out


def test_a_station_file_of_speed_and_direction_is_pointed_to_the_instrument_step():
    # CF standard name table v93: wind_speed and wind_from_direction ("from", clockwise
    # from north); frameshift needs east/north components and says how to make them
    ds = xr.Dataset(
        {"wspd": ("time", [5.0], {"standard_name": "wind_speed", "units": "m s-1"}),
         "wdir": ("time", [270.0], {"standard_name": "wind_from_direction", "units": "degree"})},
        coords={"lat": ((), 60.0, LAT), "lon": ((), 5.0, LON)},
    )
    with pytest.raises(frameshift.MissingInputError, match="from_speed_direction") as info:
        frameshift.to_inertial(ds)
    assert "wdir (wind_from_direction)" in str(info.value) and "frameshift earth" in str(info.value)
    converted = frameshift.to_inertial(frameshift.from_speed_direction(ds))
    # a wind from 270° at 5 m s-1 blows eastward: u = +5 (CF definition), plus Ω (N + 0) cos φ
    np.testing.assert_allclose(converted["eastward_wind"].values, 5.0 + frame_speed(60.0, 0.0))


@eager_and_chunked
def test_lab_axes_on_a_planet_are_refused_with_the_frame_that_takes_them(layout):
    # x/y components of a lab (no CF standard names) belong to a plane frame; on the
    # Earth frameshift refuses them by name rather than failing inside (common practice:
    # a tank's axes are not east/north)
    ds = as_layout(xr.Dataset(
        {"u": (("y", "x"), np.ones((2, 3)), {"units": "m s-1"}),
         "v": (("y", "x"), np.zeros((2, 3)), {"units": "m s-1"})},
        coords={"x": ("x", [0.0, 0.1, 0.2], {"units": "m", "axis": "X"}),
                "y": ("y", [0.0, 0.1], {"units": "m", "axis": "Y"})},
    ), layout)
    for operation in (frameshift.to_inertial, frameshift.apparent_accelerations):
        with pytest.raises(frameshift.ConventionError, match="RotatingTable") as info:
            operation(ds, velocity={"x": "u", "y": "v"})
        assert info.value.variable == "velocity"
    # with a table (and the time its angle needs) the same names are taken: tests/lab
    with pytest.raises(frameshift.MissingInputError, match="time coordinate"):
        frameshift.to_inertial(ds, frameshift.RotatingTable("10 rpm"),
                               velocity={"x": "u", "y": "v"})


def test_written_files_keep_what_each_velocity_declares_and_convert_back(tmp_path):
    # CF 1.11 §5: a variable's coordinates attribute names its auxiliary coordinates;
    # frameshift's outputs must keep saying it, or reading them back cannot place them
    import netCDF4

    from frameshift.cli import main

    src = tmp_path / "in" / "glider.nc"
    src.parent.mkdir()
    glider().to_netcdf(src)
    assert main(["convert", str(src), "--out", str(tmp_path / "inertial"), "--quiet"]) == 0
    assert main(["convert", str(tmp_path / "inertial" / "glider.nc"), "--to", "rotating",
                 "--out", str(tmp_path / "back"), "--quiet"]) == 0
    assert main(["terms", str(src), "--out", str(tmp_path / "terms"), "--quiet"]) == 0
    for path, names in ((tmp_path / "inertial" / "glider.nc", ("u", "v")),
                        (tmp_path / "back" / "glider.nc", ("u", "v")),
                        (tmp_path / "terms" / "glider.nc", ("coriolis_eastward", "total_upward"))):
        with netCDF4.Dataset(path) as nc:
            for name in names:
                assert nc[name].getncattr("coordinates") == "time_uv lat_uv lon_uv", (path, name)
    with xr.open_dataset(src) as a, xr.open_dataset(tmp_path / "back" / "glider.nc") as b:
        np.testing.assert_allclose(b["u"].values, a["u"].values, rtol=0, atol=1e-12 * 500)
