"""Grid-relative components on rotated-pole, projected and curvilinear grids.

Outside sources: pyproj (CF grid mappings, forward transforms and geodesic
azimuths: the angle of the grid's x axis from finite differences of
pyproj-transformed points), the CF standard name table v93
(angle_of_rotation_from_east_to_x: anticlockwise from east to the x axis).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import MissingInputError, UnsupportedInputError
from frameshift.instruments.grid import grid_angle
from frameshift.units import ureg
from tests.helpers import (
    as_layout,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    written_standard_names,
)
from tests.instruments.builders import curvilinear_grid, projected_grid, rotated_pole_grid


def _wrap(a):
    return np.angle(np.exp(1j * np.asarray(a)))


def _fd_angle(crs_attrs, gx, gy, *, sphere: bool):
    """Angle of the x axis from pyproj: transform (x, y) and (x + dx, y), take the azimuth."""
    from pyproj import CRS, Geod, Transformer

    crs = CRS.from_cf(crs_attrs)
    if crs.is_projected:
        target = crs.geodetic_crs
        step = 1.0  # metres
    else:
        target = CRS.from_json_dict(crs.to_json_dict()["base_crs"])
        step = 1e-5  # degrees
    to_geo = Transformer.from_crs(crs, target, always_xy=True)
    lon, lat = to_geo.transform(gx, gy)
    lon2, lat2 = to_geo.transform(gx + step, gy)
    geod = Geod(a=6371229.0, b=6371229.0) if sphere else Geod(ellps="WGS84")
    az, _, _ = geod.inv(lon, lat, lon2, lat2)
    return np.deg2rad(90.0 - az)


@eager_and_chunked
def test_rotated_pole_angle_matches_pyproj_differences(layout):
    ds = as_layout(rotated_pole_grid(), layout)
    angle, how = grid_angle(ds, "uas")
    assert "rotated pole" in how
    rlon, rlat = np.meshgrid(ds["rlon"].values, ds["rlat"].values)
    expected = _fd_angle(dict(ds["rotated_pole"].attrs), rlon, rlat, sphere=True)
    np.testing.assert_allclose(_wrap(angle.transpose("rlat", "rlon").values - expected), 0.0,
                               atol=1e-6)


@eager_and_chunked
def test_projected_angle_matches_pyproj_differences(layout):
    # polar stereographic (conformal): PROJ's grid convergence against the azimuth of a 1 m
    # step along x on the WGS 84 ellipsoid (pyproj.Geod)
    ds = as_layout(projected_grid(), layout)
    angle, how = grid_angle(ds, "uo")
    assert "convergence" in how
    xx, yy = np.meshgrid(ds["x"].values * 1000.0, ds["y"].values * 1000.0)
    expected = _fd_angle(dict(ds["crs"].attrs), xx, yy, sphere=False)
    np.testing.assert_allclose(_wrap(angle.transpose("y", "x").values - expected), 0.0,
                               atol=1e-6)


@eager_and_chunked
def test_curvilinear_angle_from_latlon_matches_the_rotated_pole(layout):
    # the same geometry without a grid mapping: centred differences of great-circle
    # bearings on a 1.1 x 0.6 degree grid approach the exact rotated-pole angle
    exact, _ = grid_angle(rotated_pole_grid(nt=1, ny=40, nx=30, rng_key=14), "uas")
    with raise_if_dask_computes():
        approx, how = grid_angle(as_layout(curvilinear_grid(), layout), "uas")
    assert "centred differences" in how and "'i'" in how
    err = np.abs(_wrap(exact.transpose("rlat", "rlon").values - approx.values))
    assert err[:, 1:-1].max() < 2e-4  # interior: second order
    assert err.max() < 3e-3  # edges: one-sided


@eager_and_chunked
@pytest.mark.parametrize("builder", [rotated_pole_grid, projected_grid, curvilinear_grid])
def test_grid_to_earth_preserves_speed_and_metadata(builder, layout):
    raw = builder()
    ds = as_layout(raw, layout)
    with raise_if_dask_computes():
        out = frameshift.grid_to_earth(ds)
    fam = "wind" if "uas" in raw else "sea_water_velocity"
    east = "eastward_wind" if fam == "wind" else "eastward_sea_water_velocity"
    north = "northward_wind" if fam == "wind" else "northward_sea_water_velocity"
    x, y = (raw["uas"], raw["vas"]) if fam == "wind" else (raw["uo"], raw["vo"])
    e, n = out[east].transpose(*x.dims).values, out[north].transpose(*x.dims).values
    # a rotation keeps the speed (to 1e-12 relative)
    np.testing.assert_allclose(np.hypot(e, n), np.hypot(x.values, y.values), rtol=1e-12)
    assert out[east].attrs["units"] == x.attrs["units"]
    assert out[east].attrs.get("grid_mapping") == x.attrs.get("grid_mapping")
    assert written_standard_names(out) <= cf_standard_names()
    back = frameshift.earth_to_grid(out)
    xs = "x_wind" if fam == "wind" else "sea_water_x_velocity"
    np.testing.assert_allclose(back[xs].transpose(*x.dims).values, x.values, atol=1e-12)


@eager_and_chunked
def test_rotated_winds_reach_to_inertial(layout):
    out = frameshift.grid_to_earth(as_layout(rotated_pole_grid(), layout))
    with raise_if_dask_computes():
        inertial = frameshift.to_inertial(out)
    assert inertial["eastward_wind"].attrs["reference_frame"] == "inertial"


@eager_and_chunked
def test_angle_variable_wins_and_angle_argument(layout):
    ds = as_layout(rotated_pole_grid(), layout)
    alpha = xr.full_like(ds["uas"].isel(time=0, drop=True), 90.0).assign_attrs(
        standard_name="angle_of_rotation_from_east_to_x", units="degree")
    out = frameshift.grid_to_earth(ds.assign(alpha=alpha))
    # CF v93: anticlockwise from east to x; at 90 degrees x points north
    np.testing.assert_allclose(out["northward_wind"].transpose(*ds["uas"].dims),
                               ds["uas"], atol=1e-12)
    out2 = frameshift.grid_to_earth(ds, angle=ureg.Quantity(np.pi / 2, "radian"))
    np.testing.assert_allclose(out2["northward_wind"].transpose(*ds["uas"].dims),
                               ds["uas"], atol=1e-12)


@eager_and_chunked
def test_staggered_components_are_refused_with_a_how_to(layout):
    ds = as_layout(rotated_pole_grid(), layout)
    stag = ds.assign(vas=ds["vas"].rename(rlat="rlat_v"))
    with pytest.raises(UnsupportedInputError, match="staggered") as info:
        frameshift.grid_to_earth(stag)
    assert "rolling" in str(info.value)


@eager_and_chunked
def test_non_conformal_projection_and_missing_geometry_are_refused(layout):
    ds = as_layout(projected_grid(), layout)
    ds["crs"].attrs = {"grid_mapping_name": "lambert_azimuthal_equal_area",
                       "longitude_of_projection_origin": 0.0,
                       "latitude_of_projection_origin": 90.0}
    with pytest.raises(UnsupportedInputError, match="not conformal"):
        frameshift.grid_to_earth(ds)
    bare = xr.Dataset({"u": ("x", [1.0], {"standard_name": "x_wind", "units": "m s-1"}),
                       "v": ("x", [1.0], {"standard_name": "y_wind", "units": "m s-1"})})
    with pytest.raises(MissingInputError, match="angle_of_rotation_from_east_to_x"):
        frameshift.grid_to_earth(as_layout(bare, layout))
