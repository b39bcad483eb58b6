"""Inertial Cartesian axes: CIRS against pyerfa, GCRS against astropy, round trips."""

import erfa
import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import EARTH, MissingInputError, UnsupportedInputError
from tests.helpers import (
    BUILDERS,
    all_kinds,
    as_layout,
    assert_udunits,
    eager_and_chunked,
    raise_if_dask_computes,
)


def _fixed_points(times, lat, lon, h):
    """Earth-fixed points (zero Earth-relative velocity) at the given times."""
    n = len(lat)
    shape = (n, len(times))
    return xr.Dataset(
        {
            "u": (
                ("site", "time"),
                np.zeros(shape),
                {"standard_name": "eastward_wind", "units": "m s-1"},
            ),
            "v": (
                ("site", "time"),
                np.zeros(shape),
                {"standard_name": "northward_wind", "units": "m s-1"},
            ),
        },
        coords={
            "time": ("time", times),
            "lat": ("site", lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("site", lon, {"standard_name": "longitude", "units": "degrees_east"}),
            "h": ("site", h, {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
        },
    )


SITES = dict(
    lat=np.array([0.0, 45.0, -33.0, 70.0]),
    lon=np.array([0.0, 0.0, 151.0, -20.0]),
    h=np.array([0.0, 0.0, 500.0, 3000.0]),
)
TIMES = np.array(["2000-01-01T12:00", "2012-06-30T23:00", "2024-03-15T06:30"], "datetime64[ns]")


@eager_and_chunked
def test_cirs_matches_erfa_pvtob(layout):
    # pyerfa pvtob(elong, phi, hm, xp, yp, sp, theta): position/velocity of an
    # Earth-fixed site in CIRS (SOFA), with polar motion set to zero and θ = ERA(UT1=UTC).
    out = frameshift.to_inertial(
        as_layout(_fixed_points(TIMES, **SITES), layout), basis="cartesian"
    ).transpose(..., "component")
    jd1, jd2 = frameshift.frames.timescales.julian_date_parts(TIMES)
    for i in range(len(SITES["lat"])):
        for k in range(len(TIMES)):
            theta = erfa.era00(jd1[k], jd2[k])
            pv = erfa.pvtob(
                np.deg2rad(SITES["lon"][i]),
                np.deg2rad(SITES["lat"][i]),
                SITES["h"][i],
                0.0,
                0.0,
                0.0,
                theta,
            )
            np.testing.assert_allclose(out["position"][i, k].values, pv["p"], atol=1e-6)
            # SOFA uses the ERA rate 7.292115146706979e-5 rad s-1, frameshift the
            # nominal 7.292115e-5 (IERS 2010 Table 1.1): 1.5e-12 × 6.4e6 m ~ 1e-5 m s-1
            np.testing.assert_allclose(out["velocity"][i, k].values, pv["v"], atol=2e-5)


@eager_and_chunked
def test_speed_of_earth_fixed_points(layout):
    # 465.101094 m s-1 at the equator and 329.4279 m s-1 at 45° N, 0 m
    # (astropy EarthLocation.get_gcrs_posvel; shared/REFERENCE_VALUES.md)
    out = frameshift.to_inertial(
        as_layout(_fixed_points(TIMES, **SITES), layout), basis="cartesian", celestial="gcrs"
    )
    speed = np.linalg.norm(out["velocity"].values, axis=0)
    np.testing.assert_allclose(speed[0], 465.101094, atol=5e-3)
    np.testing.assert_allclose(speed[1], 329.4279, atol=5e-3)


@eager_and_chunked
@pytest.mark.parametrize("use_dut1", [False, True])
def test_gcrs_matches_astropy(use_dut1, layout):
    from astropy import units as u
    from astropy.coordinates import EarthLocation
    from astropy.time import Time

    t = Time(TIMES.astype("datetime64[us]").astype(str).tolist(), scale="utc")
    ds = as_layout(_fixed_points(TIMES, **SITES), layout)
    dut1 = 0.0
    if use_dut1:  # astropy's bundled IERS tables give UT1 - UTC
        # (Time.delta_ut1_utc, seconds; a Quantity in some astropy versions)
        seconds = u.Quantity(t.delta_ut1_utc, u.s).to_value(u.s)
        dut1 = xr.DataArray(seconds, dims="time", coords={"time": TIMES}, attrs={"units": "s"})
    out = frameshift.to_inertial(ds, basis="cartesian", celestial="gcrs", dut1=dut1)
    out = out.transpose(..., "component")
    for i in range(len(SITES["lat"])):
        loc = EarthLocation.from_geodetic(
            SITES["lon"][i] * u.deg, SITES["lat"][i] * u.deg, SITES["h"][i] * u.m, ellipsoid="WGS84"
        )
        pos, vel = loc.get_gcrs_posvel(t)
        dp = np.linalg.norm(out["position"][i].values - pos.xyz.to_value(u.m).T, axis=-1)
        dv = np.linalg.norm(out["velocity"][i].values - vel.xyz.to_value(u.m / u.s).T, axis=-1)
        # Tolerances: frameshift applies no polar motion (up to ~0.5", about 15 m at
        # the surface; IERS Conventions 2010 ch. 5), and without dut1 the Earth
        # angle is off by UT1 - UTC < 0.9 s, i.e. up to 465 m/s × 0.9 s ≈ 420 m along the path.
        assert dp.max() < (50.0 if use_dut1 else 450.0)
        assert dv.max() < 0.02  # polar motion and the ERA-vs-nominal rate: mm s-1 level


@all_kinds
@eager_and_chunked
def test_cartesian_round_trip(kind, layout):
    ds = as_layout(BUILDERS[kind](), layout)
    with raise_if_dask_computes():
        cart = frameshift.to_inertial(ds, basis="cartesian")
        back = frameshift.to_rotating(cart, basis="cartesian")
    assert cart["position"].dims[0] == "component"  # CF 1.11 §2.4: left of space-time
    assert list(cart["component"].values) == ["x", "y", "z"]
    assert cart["velocity"].attrs["units"] == "m s-1" and cart["position"].attrs["units"] == "m"
    for name in ("u", "v", "w", "ua", "va", "wa"):
        if name in ds:
            np.testing.assert_allclose(
                back[name].values, ds[name].broadcast_like(back[name]).values, rtol=1e-10, atol=1e-9
            )
            assert back[name].attrs["units"] == ds[name].attrs["units"]
            assert back[name].attrs["standard_name"] == ds[name].attrs["standard_name"]
            assert_udunits(back[name].attrs["units"])
    lat = ds["lat"].broadcast_like(back["latitude"]).transpose(*back["latitude"].dims)
    np.testing.assert_allclose(back["latitude"].values, lat.values, atol=1e-10)


@eager_and_chunked
def test_speed_in_the_inertial_frame_includes_the_frame_velocity(layout):
    # For a point moving with speed s eastward at the equator, the inertial speed is s + Ω a
    # (Galilean addition of the frame velocity; WGS 84: Ω a = 465.1011 m s-1)
    ds = _fixed_points(TIMES[:1], np.array([0.0]), np.array([30.0]), np.array([0.0]))
    ds["u"][:] = 10.0
    out = frameshift.to_inertial(as_layout(ds, layout), basis="cartesian")
    assert np.linalg.norm(out["velocity"].values) == pytest.approx(475.1011, abs=5e-5)


@eager_and_chunked
def test_cartesian_needs_real_time(layout):
    ds = as_layout(BUILDERS["grid"](), layout).drop_vars("time")
    with pytest.raises(MissingInputError, match="needs time"):
        frameshift.to_inertial(ds, basis="cartesian")
    import cftime

    noleap = as_layout(BUILDERS["trajectory"](), layout).assign_coords(
        time=[cftime.DatetimeNoLeap(2001, 1, 1, h) for h in range(6)]
    )
    with pytest.raises(UnsupportedInputError, match="model calendar 'noleap'"):
        frameshift.to_inertial(noleap, basis="cartesian")
    # a real calendar held as cftime values is fine and gives the same as datetime64
    greg = as_layout(BUILDERS["trajectory"](), layout)
    as_cf = greg.assign_coords(
        time=[cftime.DatetimeProlepticGregorian(2030, 1, 15, 0, 10 * i) for i in range(6)]
    )
    a = frameshift.to_inertial(greg, basis="cartesian")["position"].values
    b = frameshift.to_inertial(as_cf, basis="cartesian")["position"].values
    np.testing.assert_allclose(a, b, atol=1e-6)


@eager_and_chunked
def test_dut1_must_be_seconds(layout):
    with pytest.raises(ValueError, match="within ±1 s"):
        frameshift.to_inertial(
            as_layout(BUILDERS["trajectory"](), layout), basis="cartesian", dut1=300.0
        )


@eager_and_chunked
def test_gcrs_needs_the_earth(layout):
    body = frameshift.Planet("test body", 1e-4, 1e6)
    with pytest.raises(ValueError, match="not the Earth"):
        frameshift.to_inertial(
            as_layout(BUILDERS["trajectory"](), layout), body, basis="cartesian", celestial="gcrs"
        )


@eager_and_chunked
def test_earth_fixed_point_moves_on_a_circle_in_cirs(layout):
    # An Earth-fixed point turns about the z axis once per sidereal day in CIRS:
    # constant z, constant distance from the axis, speed Ω p (kinematics of rotation).
    times = np.datetime64("2030-01-01", "ns") + np.arange(0, 86400, 3600) * np.timedelta64(1, "s")
    out = frameshift.to_inertial(
        as_layout(_fixed_points(times, **SITES), layout), basis="cartesian"
    ).transpose(..., "component")
    r = out["position"].values
    p = np.hypot(r[..., 0], r[..., 1])
    np.testing.assert_allclose(p, p[:, :1] * np.ones_like(p), rtol=1e-14)
    np.testing.assert_allclose(r[..., 2], r[:, :1, 2] * np.ones_like(p), rtol=1e-14)
    speed = np.linalg.norm(out["velocity"].values, axis=-1)
    np.testing.assert_allclose(speed, EARTH.rotation_rate * p, rtol=1e-13)
