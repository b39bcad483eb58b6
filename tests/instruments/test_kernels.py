"""Instrument kernels against outside sources.

Sources: the CF standard name table v93 (definitions of the direction and
component names), Smith, Bourassa & Sharp 1999 (J. Atmos. Oceanic Technol.
16, 939-952; the true-wind equations, cases worked by hand below), scipy's
``Rotation`` (Euler-angle matrices), pyproj (rotated-pole positions and
geodesic azimuths).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from frameshift._kernels import instruments as kern

S2 = math.sqrt(2.0)


# --- CF definitions --------------------------------------------------------------------
def test_wind_from_270_blows_eastward():
    # CF v93, wind_from_direction: "the direction from which it is blowing", clockwise
    # from north; a wind from 270 (west) at 10 m s-1 has u = +10, v = 0.
    u, v = kern.bearing_to_components(10.0, 270.0, sign=-1.0)
    assert u == pytest.approx(10.0, abs=1e-12)
    assert v == pytest.approx(0.0, abs=1e-12)


def test_current_to_90_flows_eastward():
    # CF v93, sea_water_velocity_to_direction: "the direction towards which the velocity
    # vector points", clockwise from north; to 90 at 1 m s-1 gives u = +1, v = 0.
    u, v = kern.bearing_to_components(1.0, 90.0, sign=1.0)
    assert u == pytest.approx(1.0, abs=1e-12)
    assert v == pytest.approx(0.0, abs=1e-12)


def test_bearings_wrap_calm_and_missing():
    # 360 and 0 are one direction (common practice); a calm has bearing 0, not NaN;
    # a missing component gives a missing speed and bearing.
    u, v = kern.bearing_to_components(5.0, np.array([0.0, 360.0]), sign=-1.0)
    np.testing.assert_allclose(u[0], u[1], atol=1e-12)
    np.testing.assert_allclose(v[0], v[1], atol=1e-12)
    speed, bearing = kern.components_to_bearing(np.array([0.0, -1e-17, np.nan]),
                                                np.array([0.0, -3.0, 1.0]), sign=-1.0)
    assert speed[0] == 0.0 and bearing[0] == 0.0
    assert 0.0 <= bearing[1] < 360.0  # a hair west of north wraps into [0, 360)
    assert np.isnan(speed[2]) and np.isnan(bearing[2])


# --- true wind: Smith, Bourassa & Sharp (1999), worked by hand --------------------------
# Their equations: A' = 270 - (heading + zero reference + relative direction),
# C' = 90 - course, u = |A| cos A' + |C| cos C', v = |A| sin A' + |C| sin C';
# true direction (from) = atan2(-u, -v) clockwise from true north.
TRUE_WIND_CASES = [
    # ship stationary: hd 30, rel. dir 60, 8 m s-1 -> apparent from 90; A' = 180:
    # u = 8 cos 180 = -8, v = 0; true wind from 90 at 8.
    pytest.param(dict(hd=30, crse=0, sog=0, rdir=60, rspd=8, zrf=0), (-8.0, 0.0, 8.0, 90.0),
                 id="stationary"),
    # wind from dead ahead equal to the ship's speed: hd = course = 45, sog 6, rel. from 0
    # at 6. A' = 225: (-4.2426, -4.2426); C' = 45: (4.2426, 4.2426); sum 0: true calm
    # (direction 0 by our calm convention).
    pytest.param(dict(hd=45, crse=45, sog=6, rdir=0, rspd=6, zrf=0), (0.0, 0.0, 0.0, 0.0),
                 id="true-calm"),
    # starboard beam: hd = course = 0, sog 5, rel. from 90 at 5. A' = 180: (-5, 0);
    # C' = 90: (0, 5); sum (-5, 5): speed 5 sqrt 2, from atan2(5, -5) = 135.
    pytest.param(dict(hd=0, crse=0, sog=5, rdir=90, rspd=5, zrf=0), (-5.0, 5.0, 5 * S2, 135.0),
                 id="starboard-beam"),
    # port beam: rel. from 270 at 5. A' = 0: (5, 0); + (0, 5) = (5, 5): from 225.
    pytest.param(dict(hd=0, crse=0, sog=5, rdir=270, rspd=5, zrf=0), (5.0, 5.0, 5 * S2, 225.0),
                 id="port-beam"),
    # course differs from heading: hd 0, course 90, sog 4, rel. from 0 at 10.
    # A' = 270: (0, -10); C' = 0: (4, 0); sum (4, -10): speed sqrt(116) = 10.7703,
    # from atan2(-4, 10) = -21.8014 -> 338.1986.
    pytest.param(dict(hd=0, crse=90, sog=4, rdir=0, rspd=10, zrf=0),
                 (4.0, -10.0, math.sqrt(116.0), 360.0 - math.degrees(math.atan(0.4))),
                 id="course-not-heading"),
    # zero line at 90 (starboard), stationary, rel. from 0 at 3 -> apparent from 90:
    # A' = 180: (-3, 0); from 90.
    pytest.param(dict(hd=0, crse=0, sog=0, rdir=0, rspd=3, zrf=90), (-3.0, 0.0, 3.0, 90.0),
                 id="zero-reference"),
    # zero line at 10, heading 350, rel. from 0 at 3: apparent from 360 = 0: A' = 270:
    # (0, -3); from 0 (360 wraps to 0).
    pytest.param(dict(hd=350, crse=0, sog=0, rdir=0, rspd=3, zrf=10), (0.0, -3.0, 3.0, 0.0),
                 id="zero-reference-wraps"),
]


@pytest.mark.parametrize(("given", "expected"), TRUE_WIND_CASES)
def test_true_wind_hand_worked(given, expected):
    u, v, speed, direction = kern.true_wind(given["hd"], given["crse"], given["sog"],
                                            given["rdir"], given["rspd"], given["zrf"])
    eu, ev, es, ed = expected
    assert u == pytest.approx(eu, abs=1e-12)
    assert v == pytest.approx(ev, abs=1e-12)
    assert speed == pytest.approx(es, abs=1e-12)
    if es > 1e-9:
        assert direction == pytest.approx(ed, abs=1e-9)


# --- platform axes: scipy Rotation as reference -----------------------------------------
def test_platform_matrix_matches_scipy_intrinsic_zyx():
    # scipy.spatial.transform.Rotation.from_euler("ZYX", [heading, pitch, roll]) is the
    # intrinsic z-y'-x'' sequence, matrix Rz Ry Rx: what platform_matrix states it builds.
    from scipy.spatial.transform import Rotation

    rng = np.random.default_rng(5)
    angles = np.column_stack([rng.uniform(0, 360, 20), rng.uniform(-20, 20, 20),
                              rng.uniform(-30, 30, 20)])
    ours = kern.platform_matrix(angles[:, 0], angles[:, 1], angles[:, 2])
    ref = Rotation.from_euler("ZYX", angles, degrees=True).as_matrix()
    np.testing.assert_allclose(ours, ref, atol=1e-14)


def test_platform_attitude_signs():
    # common practice (ship attitude): bow up pitch lifts the forward axis, starboard-down
    # roll lowers the starboard axis; heading 90 points the bow east.
    e, n, up = kern.platform_to_earth(1.0, 0.0, 0.0, 0.0, 10.0, 0.0, 0.0, 0.0)
    assert up == pytest.approx(math.sin(math.radians(10.0)), abs=1e-15)
    e, n, up = kern.platform_to_earth(0.0, 1.0, 0.0, 0.0, 0.0, 10.0, 0.0, 0.0)
    assert up == pytest.approx(-math.sin(math.radians(10.0)), abs=1e-15)
    e, n, up = kern.platform_to_earth(1.0, 0.0, 0.0, 90.0, 0.0, 0.0, 0.0, 0.0)
    assert (e, n) == pytest.approx((1.0, 0.0), abs=1e-15)


# --- rotated pole: pyproj as reference --------------------------------------------------
def test_rotated_pole_angle_matches_pyproj_differences():
    # pyproj's CF rotated pole (PROJ ob_tran) gives true lon/lat of rotated points; the
    # azimuth of a tiny step along rotated longitude (pyproj.Geod on a sphere: the rotation
    # is spherical) is the direction of the grid's x axis.
    from pyproj import CRS, Geod, Transformer

    pole_lat, pole_lon = 39.25, -162.0
    crs = CRS.from_cf({"grid_mapping_name": "rotated_latitude_longitude",
                       "grid_north_pole_latitude": pole_lat,
                       "grid_north_pole_longitude": pole_lon})
    base = CRS.from_json_dict(crs.to_json_dict()["base_crs"])
    to_geo = Transformer.from_crs(crs, base, always_xy=True)
    rlon, rlat = np.meshgrid(np.linspace(-30, 30, 7), np.linspace(-25, 25, 6))
    lon, lat = to_geo.transform(rlon, rlat)
    lon2, lat2 = to_geo.transform(rlon + 1e-5, rlat)
    az, _, _ = Geod(a=6371229.0, b=6371229.0).inv(lon, lat, lon2, lat2)
    expected = np.deg2rad(90.0 - az)
    ours = kern.rotated_pole_angle(lat, lon, pole_lat, pole_lon)
    diff = np.angle(np.exp(1j * (ours - expected)))
    np.testing.assert_allclose(diff, 0.0, atol=1e-6)  # the 1e-5 degree step's own error


def test_rotation_preserves_speed():
    rng = np.random.default_rng(9)
    x, y, a = rng.normal(size=1000), rng.normal(size=1000), rng.uniform(-np.pi, np.pi, 1000)
    e, n = kern.rotate_components(x, y, a)
    np.testing.assert_allclose(np.hypot(e, n), np.hypot(x, y), rtol=1e-12)


def test_large_inputs_worked_in_blocks_match_the_references():
    # beyond one block (2 x 32768 elements) the kernels work block by block; the results
    # still match scipy's Euler matrices and the printed Smith, Bourassa & Sharp equations
    from scipy.spatial.transform import Rotation

    rng = np.random.default_rng(21)
    t, d = 40_000, 3
    body = rng.normal(size=(t, d, 3))
    hd, pitch, roll = rng.uniform(0, 360, t), rng.normal(0, 3, t), rng.normal(0, 5, t)
    se, sn = rng.normal(size=t), rng.normal(size=t)
    e, n, up = kern.platform_to_earth(body[..., 0], body[..., 1], body[..., 2], hd[:, None],
                                      pitch[:, None], roll[:, None], se[:, None], sn[:, None])
    m = Rotation.from_euler("ZYX", np.column_stack([hd, pitch, roll]), degrees=True).as_matrix()
    ned = np.einsum("tij,tbj->tbi", m, body * np.array([1.0, 1.0, -1.0]))
    np.testing.assert_allclose(e, ned[..., 1] + se[:, None], atol=1e-12)
    np.testing.assert_allclose(n, ned[..., 0] + sn[:, None], atol=1e-12)
    np.testing.assert_allclose(up, -ned[..., 2], atol=1e-12)
    rdir, rspd, crse, sog = (rng.uniform(0, 360, t), rng.uniform(0, 20, t),
                             rng.uniform(0, 360, t), rng.uniform(0, 6, t))
    u, v, _, _ = kern.true_wind(hd, crse, sog, rdir, rspd, 7.5)
    a = np.deg2rad(270.0 - (hd + 7.5 + rdir))
    c = np.deg2rad(90.0 - crse)
    np.testing.assert_allclose(u, rspd * np.cos(a) + sog * np.cos(c), atol=1e-12)
    np.testing.assert_allclose(v, rspd * np.sin(a) + sog * np.sin(c), atol=1e-12)
    su, _ = kern.bearing_to_components(rspd, rdir, sign=-1.0)
    np.testing.assert_allclose(su, -rspd * np.sin(np.deg2rad(rdir)), atol=1e-12)
