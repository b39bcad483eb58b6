"""Property tests: every forward/inverse pair returns its input."""

import numpy as np
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

import frameshift
from frameshift import EARTH, EARTH_SPHERE
from frameshift._kernels import geodesy

lat_st = st.floats(-89.9, 89.9)
lon_st = st.floats(-180, 180)
h_st = st.floats(-6000, 40000)
speed_st = st.floats(-150, 150)
frames = st.sampled_from([EARTH, EARTH_SPHERE])


def _points(lat, lon, h, u, v, w, units="m s-1", when="2031-05-05T05:05"):
    n = len(lat)
    time = np.datetime64(when, "ns") + np.arange(n) * np.timedelta64(7, "m")
    return xr.Dataset(
        {
            "u": ("time", u, {"standard_name": "eastward_wind", "units": units}),
            "v": ("time", v, {"standard_name": "northward_wind", "units": units}),
            "w": ("time", w, {"standard_name": "upward_air_velocity", "units": units}),
        },
        coords={
            "time": ("time", time),
            "lat": ("time", lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("time", lon, {"standard_name": "longitude", "units": "degrees_east"}),
            "z": ("time", h, {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
        },
    )


@st.composite
def trajectories(draw):
    n = draw(st.integers(1, 6))
    arrays = [
        draw(hnp.arrays(np.float64, n, elements=el))
        for el in (lat_st, lon_st, h_st, speed_st, speed_st, speed_st)
    ]
    units = draw(st.sampled_from(["m s-1", "knot", "km h-1"]))
    return _points(*arrays, units=units)


def _rel_close(a, b, rtol=1e-12):
    # relative to the size of the velocity including the frame speed (|u| + Ω a),
    # the scale at which float64 rounding enters the transform
    scale = np.maximum(np.abs(b), 1.0)
    np.testing.assert_array_less(np.abs(a - b) / scale, rtol * 1e3 + 1e-15)


@settings(max_examples=60, deadline=None)
@given(ds=trajectories(), frame=frames)
def test_local_round_trip(ds, frame):
    back = frameshift.to_rotating(frameshift.to_inertial(ds, frame), frame)
    for name in ("u", "v", "w"):
        # only u changes, by Ω p ≤ 466 m s-1: the round trip returns it to 1e-12 of that
        np.testing.assert_allclose(
            back[name].values, ds[name].values, rtol=1e-12, atol=1e-12 * 466 * 3.6
        )


@settings(max_examples=60, deadline=None)
@given(ds=trajectories(), frame=frames, celestial=st.sampled_from(["cirs", "gcrs"]))
def test_cartesian_round_trip(ds, frame, celestial):
    cart = frameshift.to_inertial(ds, frame, basis="cartesian", celestial=celestial)
    back = frameshift.to_rotating(cart, frame, basis="cartesian", celestial=celestial)
    for name in ("u", "v", "w"):
        # relative to the inertial speed that the rounding acts on (|v| + Ω a, ≤ ~1e3 m s-1)
        np.testing.assert_allclose(
            back[name].values, ds[name].values, rtol=0, atol=1e-12 * 1e3 * 3.6
        )
    np.testing.assert_allclose(back["latitude"].values, ds["lat"].values, atol=1e-12 * 90)
    np.testing.assert_allclose(back["height"].values, ds["z"].values, atol=1e-12 * 6.4e6)


@settings(max_examples=100, deadline=None)
@given(lat=lat_st, lon=lon_st, v=hnp.arrays(np.float64, 3, elements=st.floats(-300, 300)))
def test_basis_rotations_preserve_speed(lat, lon, v):
    # A change of orthonormal basis is a rotation: it preserves length (linear algebra)
    xyz = geodesy.enu_to_cartesian(np.deg2rad(lat), np.deg2rad(lon), v)
    np.testing.assert_allclose(np.linalg.norm(xyz), np.linalg.norm(v), rtol=1e-14, atol=1e-12)
    back = geodesy.cartesian_to_enu(np.deg2rad(lat), np.deg2rad(lon), xyz)
    np.testing.assert_allclose(back, v, atol=1e-12)
