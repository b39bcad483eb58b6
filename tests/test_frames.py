"""Frames: published constants, immutability, pickling, validation."""

import dataclasses
import pickle

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import EARTH, EARTH_SPHERE, FrameError, Planet
from frameshift.frames import (
    EarthRotationAngle,
    Ellipsoid,
    Frame,
    Instants,
    Plane,
    RateSeries,
    SteadyRate,
)
from tests.helpers import BUILDERS


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


# --- the frame model: rotation laws × figures ----------------------------------------
def _constant_series(rate: float, start: str, end: str) -> xr.DataArray:
    times = np.array([start, end], "datetime64[ns]")
    return xr.DataArray([rate, rate], dims="t", coords={"t": times}, attrs={"units": "rad s-1"})


def test_a_constant_rate_series_equals_the_steady_frame_to_the_last_bit():
    # the same body turning at the same constant rate, said two ways: a steady law, and
    # a rate series that happens to be constant (the path a spin-up takes)
    steady = Planet("test body", 7.292115e-5, 6378137.0, 298.257223563)
    series = steady.with_rotation(
        RateSeries(
            _constant_series(7.292115e-5, "1999-01-01", "2040-01-01"),
            epoch="2000-01-01T12:00",
        )
    )
    assert not series.steady
    ds = BUILDERS["grid"]()
    for kwargs in ({}, {"basis": "cartesian"}):
        a = frameshift.to_inertial(ds, steady, **kwargs)
        b = frameshift.to_inertial(ds, series, **kwargs)
        for name in a.data_vars:
            np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)
    a = frameshift.apparent_accelerations(ds, steady)
    b = frameshift.apparent_accelerations(ds, series)
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


def test_a_linear_spin_up_has_the_analytic_angle_rate_and_rate_of_change():
    # Ω(t) = Ω0 + α t: angle Ω0 t + α t²/2, dΩ/dt = α (calculus; the law is exact for a
    # rate linear between samples). Times as elapsed seconds on a lab clock.
    omega0, alpha = 0.5, 0.01
    law = RateSeries(
        xr.DataArray([omega0, omega0 + alpha * 100.0], dims="t",
                     coords={"t": ("t", [0.0, 100.0], {"units": "s"})},
                     attrs={"units": "rad s-1"})
    )
    t = np.array([0.0, 12.5, 60.0, 100.0])
    instants = Instants.from_seconds(t)
    np.testing.assert_allclose(law.rate(instants), omega0 + alpha * t, rtol=1e-15)
    np.testing.assert_allclose(law.rate_of_change(instants), alpha, rtol=1e-12)
    expected = np.mod(omega0 * t + 0.5 * alpha * t**2, 2 * np.pi)
    np.testing.assert_allclose(law.angle(instants), expected, rtol=0, atol=1e-12)
    with pytest.raises(FrameError, match="never extrapolated"):
        law.rate(Instants.from_seconds([120.0]))
    with pytest.raises(FrameError, match="real dates"):
        law.rate(Instants.from_julian([2451545.0]))


def test_rates_in_rpm_and_degrees_per_second():
    # 10 rpm = 10 × 2π / 60 rad s-1 (definition of the revolution per minute)
    rpm = RateSeries(
        xr.DataArray([10.0, 10.0], dims="t", coords={"t": np.array([0, 60], "timedelta64[s]")},
                     attrs={"units": "rpm"})
    )
    assert rpm.nominal_rate == pytest.approx(10 * 2 * np.pi / 60, rel=1e-15)
    deg = RateSeries(
        xr.DataArray([-90.0, -90.0], dims="t", coords={"t": np.array([0, 1], "timedelta64[s]")},
                     attrs={"units": "degree s-1"})
    )
    assert deg.nominal_rate == pytest.approx(-np.pi / 2, rel=1e-15)  # clockwise: negative


def test_steady_laws_count_from_their_epoch():
    law = SteadyRate(2.0, epoch=10.0, angle_at_epoch=0.25)
    np.testing.assert_allclose(law.angle(Instants.from_seconds([10.0, 11.0])), [0.25, 2.25])
    with pytest.raises(FrameError, match="epoch"):
        law.angle(Instants.from_julian([2451545.0]))


def test_plane_figure_places_points_about_its_axis():
    plane = Plane(center=(1.0, -2.0))
    xyz = plane.place([1.0, 3.0], [-2.0, 0.0], 0.5)
    np.testing.assert_array_equal(xyz, [[0.0, 0.0, 0.5], [2.0, 2.0, 0.5]])
    np.testing.assert_array_equal(np.stack(plane.locate(xyz), axis=-1),
                                  [[1.0, -2.0, 0.5], [3.0, 0.0, 0.5]])
    table = Frame("test table", SteadyRate(1.0), plane)
    # Ω × r for Ω = (0, 0, 1) and r = (2, 2, 0.5) is (-2, 2, 0) (vector algebra)
    np.testing.assert_allclose(table.frame_velocity(3.0, 0.0, 0.5), [-2.0, 2.0, 0.0])
    with pytest.raises(FrameError, match="plane figure"):
        table.equatorial_radius


def spin(seconds):
    """A module-level rate function (so that the frame pickles): 1 + 0.1 t rad s-1."""
    return 1.0 + 0.1 * np.asarray(seconds)


@pytest.mark.parametrize(
    "frame",
    [
        EARTH,
        EARTH_SPHERE,
        Planet("uniform body", -2.9924494e-7, 6051800.0),
        Frame("lab table", SteadyRate(1.0472, epoch=0.0), Plane(center=(0.1, 0.2))),
        Frame("spin-up", RateSeries(spin, epoch=0.0), Plane()),
        EARTH.with_rotation(
            RateSeries(_constant_series(7.3e-5, "2020-01-01", "2021-01-01"))
        ),
        Frame("ellipsoid and ERA", EarthRotationAngle(), Ellipsoid(6378137.0, 298.257223563)),
    ],
    ids=lambda f: f.name,
)
def test_every_kind_of_frame_pickles_compares_and_hashes(frame):
    back = pickle.loads(pickle.dumps(frame))
    assert back == frame and hash(back) == hash(frame)
    assert back.rotation_rate == frame.rotation_rate
    assert frameshift.frames.check_frame(back) is back
