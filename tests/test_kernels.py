"""Pure-numpy kernels against published constants and reference libraries."""

import erfa
import numpy as np
import pyproj
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from frameshift._kernels import geodesy, rotation

A = 6378137.0  # WGS 84 semi-major axis, NIMA TR8350.2 Table 3.1
F = 1 / 298.257223563  # WGS 84 flattening, NIMA TR8350.2 Table 3.1
OMEGA = 7.292115e-5  # IERS Conventions (2010) Table 1.1; WGS 84 (NIMA TR8350.2)


def test_polar_radius_and_eccentricity_match_wgs84_derived_constants():
    # NIMA TR8350.2 Table 3.3: b = 6356752.3142 m, e^2 = 0.00669437999014
    sin_pole = np.array(1.0)
    b = geodesy.geodetic_to_cartesian(np.pi / 2, 0.0, 0.0, A, F)[..., 2]
    assert b == pytest.approx(6356752.314245, abs=1e-6)
    assert F * (2 - F) == pytest.approx(0.00669437999014, abs=1e-14)
    # N at the pole = a^2 / b (standard ellipsoid geometry)
    assert geodesy.prime_vertical_radius(sin_pole, A, F) == pytest.approx(A * A / b, rel=1e-15)


def test_axis_distance_at_45n_matches_wgs84_value():
    # (N cos φ) at 45° N on WGS 84 = 4517590.879 m (computed from the WGS 84
    # defining constants; shared/REFERENCE_VALUES.md, re-derived here by hand:
    # N = a / sqrt(1 - e² / 2) = 6388838.290 m, times cos 45°).
    p = geodesy.axis_distance(np.deg2rad(45.0), 0.0, A, F)
    assert p == pytest.approx(4517590.879, abs=1e-3)


_ECEF = pyproj.Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)


@settings(max_examples=200, deadline=None)
@given(
    lat=st.floats(-90, 90),
    lon=st.floats(-180, 180),
    h=st.floats(-11000, 100000),
)
def test_geodetic_to_cartesian_matches_pyproj(lat, lon, h):
    # pyproj: EPSG:4979 (WGS 84 geographic 3-D) -> EPSG:4978 (WGS 84 geocentric)
    ref = np.array(_ECEF.transform(lon, lat, h))
    got = geodesy.geodetic_to_cartesian(np.deg2rad(lat), np.deg2rad(lon), h, A, F)
    np.testing.assert_allclose(got, ref, atol=1e-3)  # 1 mm, the tolerance


@settings(max_examples=200, deadline=None)
@given(
    lat=st.floats(-90, 90),
    lon=st.floats(-179.999, 179.999),
    h=st.floats(-11000, 100000),
)
def test_cartesian_to_geodetic_matches_pyproj(lat, lon, h):
    # Heights from the deep ocean to the top of the middle atmosphere; beyond a
    # few hundred km pyproj's own inverse drifts at the mm level, so far-out
    # points are checked against the exact input in the round-trip test below.
    x, y, z = _ECEF.transform(lon, lat, h)
    lon_ref, lat_ref, h_ref = _ECEF.transform(x, y, z, direction="INVERSE")
    la, lo, hh = geodesy.cartesian_to_geodetic(np.array([x, y, z]), A, F)
    # 1 mm along the surface: 1e-3 m / 6.4e6 m = 1.6e-10 rad
    assert abs(np.rad2deg(la) - lat_ref) * np.pi / 180 * A < 1e-3
    if abs(lat) < 89.99:
        assert abs(((np.rad2deg(lo) - lon_ref + 180) % 360) - 180) * np.pi / 180 * A < 1e-3
    assert hh == pytest.approx(h_ref, abs=1e-3)


@settings(max_examples=200, deadline=None)
@given(lat=st.floats(-90, 90), lon=st.floats(-179.999, 179.999), h=st.floats(-1e5, 4e7))
def test_geodetic_round_trip_is_exact_to_rounding(lat, lon, h):
    # Vermeille (2002) is a closed form, exact to rounding wherever it applies.
    xyz = geodesy.geodetic_to_cartesian(np.deg2rad(lat), np.deg2rad(lon), h, A, F)
    la, lo, hh = geodesy.cartesian_to_geodetic(xyz, A, F)
    assert abs(np.rad2deg(la) - lat) * np.pi / 180 * (A + abs(h)) < 1e-6
    assert hh == pytest.approx(h, abs=1e-6 + 1e-14 * abs(h))
    if abs(lat) < 89.999:
        assert abs(np.rad2deg(lo) - lon) < 1e-9


def test_cartesian_to_geodetic_on_a_sphere_is_spherical_coordinates():
    # On a sphere geodetic latitude is geocentric latitude and h = |r| - R (geometry).
    r = 6371008.7714
    xyz = np.array([[r + 10.0, 0, 0], [0, 0, -(r + 5.0)], [1e6, 1e6, 3e6]])
    lat, _lon, h = geodesy.cartesian_to_geodetic(xyz, r, 0.0)
    np.testing.assert_allclose(lat, np.arcsin(xyz[:, 2] / np.linalg.norm(xyz, axis=-1)), atol=1e-15)
    np.testing.assert_allclose(h, np.linalg.norm(xyz, axis=-1) - r, atol=1e-8)


def test_enu_basis_is_orthonormal_and_right_handed():
    lat = np.deg2rad(np.array([-60.0, 0.0, 33.3, 89.0]))
    lon = np.deg2rad(np.array([10.0, -120.0, 200.0, 5.0]))
    basis = geodesy.enu_basis(lat, lon)
    np.testing.assert_allclose(
        basis @ np.swapaxes(basis, -1, -2), np.broadcast_to(np.eye(3), basis.shape), atol=1e-15
    )
    np.testing.assert_allclose(np.linalg.det(basis), 1.0, atol=1e-15)
    # up is the ellipsoid normal: the gradient direction of x²/a² + y²/a² + z²/b² at the point
    xyz = geodesy.geodetic_to_cartesian(lat, lon, 0.0, A, F)
    b = A * (1 - F)
    normal = xyz / np.array([A * A, A * A, b * b])
    normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    np.testing.assert_allclose(basis[..., 2, :], normal, atol=1e-15)


def test_enu_round_trip_preserves_vectors_and_speed():
    rng = np.random.default_rng(5)
    lat = rng.uniform(-np.pi / 2, np.pi / 2, 50)
    lon = rng.uniform(-np.pi, np.pi, 50)
    v = rng.normal(size=(50, 3))
    xyz = geodesy.enu_to_cartesian(lat, lon, v)
    np.testing.assert_allclose(np.linalg.norm(xyz, axis=-1), np.linalg.norm(v, axis=-1), rtol=1e-14)
    np.testing.assert_allclose(geodesy.cartesian_to_enu(lat, lon, xyz), v, atol=1e-14)


@pytest.mark.parametrize(
    ("jd1", "jd2"),
    [
        (2451545.0, 0.0),
        (2400000.5, 54388.0),
        (2460676.5, 0.123456789),
        (2443144.5, 0.9999),
        (2469807.5, 0.5),
    ],
)
def test_earth_rotation_angle_matches_erfa(jd1, jd2):
    # IAU 2000 ERA; pyerfa's era00 is the SOFA implementation of IERS 2010 eq. 5.15.
    assert rotation.earth_rotation_angle(jd1, jd2) == pytest.approx(erfa.era00(jd1, jd2), abs=1e-12)


def test_earth_rotation_angle_at_j2000():
    # ERA(J2000.0 UT1) = 2π × 0.7790572732640 = 4.894961212823756 rad (IERS 2010 eq. 5.15)
    assert rotation.earth_rotation_angle(2451545.0, 0.0) == pytest.approx(
        4.894961212823756, abs=1e-15
    )


def test_earth_rotation_angle_rate():
    # dθ/dt = 2π × 1.00273781191135448 / 86400 s = 7.292115146706979e-5 rad s-1 (IERS 2010)
    dt = 60.0
    t0 = rotation.earth_rotation_angle(2460000.5, 0.25)
    t1 = rotation.earth_rotation_angle(2460000.5, 0.25 + dt / 86400.0)
    assert (t1 - t0) / dt == pytest.approx(7.292115146706979e-5, rel=1e-9)


def test_frame_velocity_at_equator_is_omega_a():
    # Ω a = 7.292115e-5 × 6378137 = 465.1011 m s-1 (WGS 84 constants)
    r = geodesy.geodetic_to_cartesian(0.0, 0.0, 0.0, A, F)
    v = rotation.frame_velocity(np.array([0, 0, OMEGA]), r)
    np.testing.assert_allclose(v, [0.0, 465.1011, 0.0], atol=5e-5)


def test_inertial_cartesian_round_trip():
    rng = np.random.default_rng(7)
    r = rng.normal(size=(20, 3)) * 6e6
    v = rng.normal(size=(20, 3)) * 30
    m = rotation.rotation_about_z(rng.uniform(0, 2 * np.pi, 20))
    omega = np.array([0.0, 0.0, OMEGA])
    ri, vi = rotation.to_inertial_cartesian(r, v, omega, m)
    rb, vb = rotation.to_rotating_cartesian(ri, vi, omega, m)
    np.testing.assert_allclose(rb, r, rtol=1e-13, atol=1e-6)
    np.testing.assert_allclose(vb, v, rtol=1e-12, atol=1e-9)
