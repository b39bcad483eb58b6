"""Property tests (hypothesis): each instrument conversion and its inverse return the input."""

from __future__ import annotations

import numpy as np
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

import frameshift
from frameshift._kernels import instruments as kern

finite = st.floats(-60.0, 60.0, allow_nan=False)
angles = st.floats(0.0, 360.0, allow_nan=False)
vectors = hnp.arrays(np.float64, st.integers(1, 12), elements=finite)


@settings(max_examples=60, deadline=None)
@given(vectors, st.sampled_from([-1.0, 1.0]), st.data())
def test_components_speed_direction_components(u, sign, data):
    v = data.draw(hnp.arrays(np.float64, u.shape, elements=finite))
    speed, bearing = kern.components_to_bearing(u, v, sign=sign)
    assert np.all((bearing >= 0.0) & (bearing < 360.0))
    u2, v2 = kern.bearing_to_components(speed, bearing, sign=sign)
    np.testing.assert_allclose(u2, u, atol=1e-12 * (1 + np.abs(u).max()))
    np.testing.assert_allclose(v2, v, atol=1e-12 * (1 + np.abs(v).max()))


@settings(max_examples=40, deadline=None)
@given(vectors, st.data())
def test_grid_earth_grid(x, data):
    y = data.draw(hnp.arrays(np.float64, x.shape, elements=finite))
    angle = data.draw(hnp.arrays(np.float64, x.shape, elements=angles))
    ds = xr.Dataset({
        "u": ("i", x, {"standard_name": "x_wind", "units": "m s-1"}),
        "v": ("i", y, {"standard_name": "y_wind", "units": "m s-1"}),
        "alpha": ("i", angle, {"standard_name": "angle_of_rotation_from_east_to_x",
                               "units": "degree"}),
    })
    back = frameshift.earth_to_grid(frameshift.grid_to_earth(ds))
    np.testing.assert_allclose(back["x_wind"], x, atol=1e-12 * (1 + np.abs(x).max()))
    np.testing.assert_allclose(back["y_wind"], y, atol=1e-12 * (1 + np.abs(y).max()))


@settings(max_examples=40, deadline=None)
@given(vectors, st.data())
def test_platform_earth_platform(f, data):
    n = f.shape
    s = data.draw(hnp.arrays(np.float64, n, elements=finite))
    w = data.draw(hnp.arrays(np.float64, n, elements=st.floats(-1, 1)))
    hd = data.draw(hnp.arrays(np.float64, n, elements=angles))
    pitch = data.draw(hnp.arrays(np.float64, n, elements=st.floats(-30, 30)))
    roll = data.draw(hnp.arrays(np.float64, n, elements=st.floats(-45, 45)))
    se = data.draw(hnp.arrays(np.float64, n, elements=st.floats(-8, 8)))
    sn = data.draw(hnp.arrays(np.float64, n, elements=st.floats(-8, 8)))
    e, nn, up = kern.platform_to_earth(f, s, w, hd, pitch, roll, se, sn)
    f2, s2, w2 = kern.earth_to_platform(e, nn, up, hd, pitch, roll, se, sn)
    for a, b in ((f2, f), (s2, s), (w2, w)):
        np.testing.assert_allclose(a, b, atol=1e-11)
