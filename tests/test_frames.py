"""Frames: published constants, immutability, pickling, validation."""

import dataclasses
import pickle

import numpy as np
import pytest

from frameshift import EARTH, EARTH_SPHERE, FrameError, Planet


def test_earth_constants_are_wgs84_and_iers2010():
    # NIMA TR8350.2 (WGS 84): a = 6378137 m, 1/f = 298.257223563, GM = 3.986004418e14 m3 s-2
    assert EARTH.equatorial_radius == 6378137.0
    assert EARTH.inverse_flattening == 298.257223563
    assert EARTH.gm == 3.986004418e14
    # IERS Conventions (2010) Table 1.1: nominal mean angular velocity 7.292115e-5 rad s-1
    assert EARTH.rotation_rate == 7.292115e-5
    # WGS 84 derived: b = 6356752.3142 m (NIMA TR8350.2 Table 3.3)
    assert EARTH.polar_radius == pytest.approx(6356752.3142, abs=1e-4)


def test_earth_sphere_uses_iugg_mean_radius():
    # R1 = (2a + b) / 3 = 6371008.7714 m (Moritz, Geodetic Reference System 1980)
    assert EARTH_SPHERE.equatorial_radius == pytest.approx(
        (2 * EARTH.equatorial_radius + EARTH.polar_radius) / 3, abs=1e-4
    )
    assert EARTH_SPHERE.flattening == 0.0
    assert EARTH_SPHERE.rotation_rate == EARTH.rotation_rate


def test_omega_a_at_equator():
    # Ω a = 465.1011 m s-1 (computed from the WGS 84 constants)
    v = EARTH.frame_velocity(0.0, 0.0, 0.0)
    assert np.linalg.norm(v) == pytest.approx(465.1011, abs=5e-5)


def test_place_and_locate_round_trip():
    xyz = EARTH.place([10.0, -45.0], [20.0, 190.0], [100.0, -4000.0])
    lat, lon, h = EARTH.locate(xyz)
    np.testing.assert_allclose(lat, [10.0, -45.0], atol=1e-12)
    np.testing.assert_allclose(lon, [20.0, -170.0], atol=1e-12)
    np.testing.assert_allclose(h, [100.0, -4000.0], atol=1e-8)


def test_frames_are_immutable_hashable_and_pickle():
    with pytest.raises(dataclasses.FrozenInstanceError):
        EARTH.name = "another"
    with pytest.raises(AttributeError):  # derived from the rotation law: read-only
        EARTH.rotation_rate = 1.0
    assert pickle.loads(pickle.dumps(EARTH)) == EARTH
    assert hash(EARTH) == hash(pickle.loads(pickle.dumps(EARTH)))
    assert EARTH != EARTH_SPHERE


def test_rotation_vector_and_its_rate():
    jd = np.array([2451545.0, 2460000.5])
    omega = EARTH.rotation_vector(jd, np.zeros(2))
    np.testing.assert_array_equal(omega, [[0, 0, 7.292115e-5]] * 2)
    np.testing.assert_array_equal(EARTH.rotation_vector_rate(jd, np.zeros(2)), np.zeros((2, 3)))


def test_uniform_angle_model_turns_at_the_rotation_rate():
    body = Planet("test body", rotation_rate=1e-4, equatorial_radius=1e6, prime_meridian_angle=0.5)
    assert body.rotation_angle(2451545.0, 0.0) == pytest.approx(0.5)
    dt = 100.0
    a1 = body.rotation_angle(2451545.0, dt / 86400.0)
    assert a1 - 0.5 == pytest.approx(1e-4 * dt, rel=1e-9)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"equatorial_radius": -1.0}, "equatorial_radius"),
        ({"inverse_flattening": 0.5}, "inverse_flattening"),
        ({"rotation_rate": float("nan")}, "rotation_rate"),
        ({"angle_model": "wobbly"}, "angle_model"),
    ],
)
def test_bad_planets_are_refused_with_the_field_named(kwargs, field):
    args = {"name": "x", "rotation_rate": 1e-5, "equatorial_radius": 1e6, **kwargs}
    with pytest.raises(ValueError, match=field) as info:
        Planet(**args)
    assert isinstance(info.value, FrameError) or info.value.variable == field


def test_errors_pickle_with_their_fields():
    from frameshift import UnitsError

    err = UnitsError("bad", variable="u", expected="m s-1", found="K")
    back = pickle.loads(pickle.dumps(err))
    assert (back.variable, back.expected, back.found, str(back)) == ("u", "m s-1", "K", "bad")
    assert isinstance(back, ValueError)
