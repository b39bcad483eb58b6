"""Apparent accelerations: values against published constants, handbook formulas,
independent vector algebra (pyproj positions, numpy cross products), pyerfa,
and a closure test (an inertial straight line seen from the rotating frame)."""

from __future__ import annotations

import itertools

import erfa
import numpy as np
import pytest
import xarray as xr
from pyproj import Transformer

import frameshift
from frameshift import (
    EARTH,
    EARTH_SPHERE,
    ConventionError,
    FrameError,
    MissingInputError,
    Planet,
    UnsupportedInputError,
)
from frameshift._kernels import accelerations as ak
from frameshift.frames import Ellipsoid, Frame, RateSeries, SteadyRate
from frameshift.frames.timescales import julian_date_parts
from tests.helpers import (
    BUILDERS,
    all_kinds,
    as_layout,
    assert_udunits,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    written_standard_names,
)

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1; WGS 84 (NIMA TR8350.2)
A_WGS84 = 6378137.0  # m, NIMA TR8350.2
F_WGS84 = 1.0 / 298.257223563  # NIMA TR8350.2
KNOT = 1852.0 / 3600.0  # m s-1: 1 international nautical mile (1852 m) per hour
MGAL = 1e-5  # m s-2
COMPONENTS = ("eastward", "northward", "upward")
VELOCITY_NAMES = {
    "eastward": "eastward_velocity",
    "northward": "northward_velocity",
    "upward": "upward_velocity",
}


def _points(lat, lon=0.0, h=0.0, u=0.0, v=0.0, w=None, units="m s-1", dim="point", layout="eager"):
    """Velocities at points (one dimension), with CF metadata, eager or chunked."""
    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    shape = lat.shape

    def full(x):
        return np.broadcast_to(np.asarray(x, dtype=float), shape).copy()

    data = {
        "u": (dim, full(u), {"standard_name": "eastward_wind", "units": units}),
        "v": (dim, full(v), {"standard_name": "northward_wind", "units": units}),
    }
    if w is not None:
        data["w"] = (dim, full(w), {"standard_name": "upward_air_velocity", "units": units})
    return xr.Dataset(
        data,
        coords={
            "lat": (dim, lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": (dim, full(lon), {"standard_name": "longitude", "units": "degrees_east"}),
            "h": (
                dim,
                full(h),
                {"standard_name": "height_above_reference_ellipsoid", "units": "m"},
            ),
        },
    )


def _enu_matrix(lat_deg, lon_deg):
    """Rows east, north, up in Earth-centred axes: the standard local-tangent-plane
    rotation (common practice; any geodesy text)."""
    p, lam = np.deg2rad(lat_deg), np.deg2rad(lon_deg)
    sp, cp, sl, cl = np.sin(p), np.cos(p), np.sin(lam), np.cos(lam)
    z = np.zeros_like(p)
    return np.stack(
        [
            np.stack([-sl, cl, z], -1),
            np.stack([-sp * cl, -sp * sl, cp], -1),
            np.stack([cp * cl, cp * sl, sp], -1),
        ],
        -2,
    )


def _ecef(lat, lon, h):
    """WGS 84 geocentric x, y, z from pyproj (EPSG:4979 -> EPSG:4978)."""
    tr = Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
    return np.stack(tr.transform(lon, lat, h), -1)


# --- published and computed constants ------------------------------------------------
@eager_and_chunked
def test_coriolis_parameter_at_45_degrees(layout):
    # f = 2Ω sin 45° = 1.031261e-4 s-1 with Ω of WGS 84 / IERS 2010 (computed;
    # shared/REFERENCE_VALUES.md); CF standard name coriolis_parameter, units s-1
    ds = _points([45.0, -45.0, 0.0], layout=layout)
    out = frameshift.coriolis_parameters(ds)
    np.testing.assert_allclose(
        out["coriolis_parameter"].values[:2], [1.031261e-4, -1.031261e-4], rtol=5e-7
    )
    np.testing.assert_allclose(out["coriolis_parameter"].values[2], 0.0, atol=1e-20)
    # the reciprocal parameter 2Ω cos φ equals f at 45° and 2Ω at the equator
    np.testing.assert_allclose(
        out["reciprocal_coriolis_parameter"].values,
        [1.031261e-4, 1.031261e-4, 2 * OMEGA],
        rtol=5e-7,
    )
    assert out["coriolis_parameter"].attrs["standard_name"] == "coriolis_parameter"
    assert "standard_name" not in out["reciprocal_coriolis_parameter"].attrs
    assert written_standard_names(out.drop_vars(list(out.coords))) <= cf_standard_names()
    for name in out.data_vars:
        assert out[name].attrs["units"] == "s-1"
        assert_udunits(out[name].attrs["units"])
    # the same variables come with include_parameters=True
    acc = frameshift.apparent_accelerations(ds, include_parameters=True)
    xr.testing.assert_allclose(acc["coriolis_parameter"], out["coriolis_parameter"])


@eager_and_chunked
def test_inertial_period_from_f(layout):
    # inertial period 2π/f = 16.9242 h at 45° and 23.9345 h at 30° (computed from
    # WGS 84 Ω; relation as in the AMS Glossary, "inertial period")
    f = frameshift.coriolis_parameters(_points([45.0, 30.0], layout=layout))[
        "coriolis_parameter"
    ].values
    np.testing.assert_allclose(2 * np.pi / f / 3600.0, [16.9242, 23.9345], atol=1e-4)


@eager_and_chunked
def test_centrifugal_at_the_equator_and_45(layout):
    # Ω² a = 0.0339157 m s-2 at the equator, straight up (WGS 84 constants, computed);
    # at 45° N, 0 m: Ω² p with p = 4517590.879 m (REFERENCE_VALUES, computed)
    acc = frameshift.apparent_accelerations(
        _points([0.0, 45.0], layout=layout), terms="centrifugal"
    )
    np.testing.assert_allclose(acc["centrifugal_upward"].values[0], 0.0339157, atol=5e-8)
    np.testing.assert_allclose(acc["centrifugal_northward"].values[0], 0.0, atol=1e-18)
    k = OMEGA**2 * 4517590.879
    s = np.sqrt(0.5)
    np.testing.assert_allclose(acc["centrifugal_northward"].values[1], -k * s, rtol=1e-9)
    np.testing.assert_allclose(acc["centrifugal_upward"].values[1], k * s, rtol=1e-9)
    assert np.all(acc["centrifugal_eastward"].values == 0.0)


# --- independent vector algebra --------------------------------------------------------
def _random_points(n=50, rng_key=7):
    rng = np.random.default_rng(rng_key)
    return dict(
        lat=rng.uniform(-85, 85, n),
        lon=rng.uniform(-180, 180, n),
        h=rng.uniform(-5000, 30000, n),
        u=rng.normal(0, 30, n),
        v=rng.normal(0, 30, n),
        w=rng.normal(0, 5, n),
    )


@eager_and_chunked
def test_coriolis_and_centrifugal_match_vector_algebra(layout):
    # -2Ω×V and -Ω×(Ω×r) formed in Earth-centred axes with numpy's cross product,
    # positions from pyproj (WGS 84), then turned onto local axes with the standard
    # ENU rotation: a path that shares no code with frameshift's kernels.
    p = _random_points()
    acc = frameshift.apparent_accelerations(
        _points(**p, layout=layout), terms=("coriolis", "centrifugal")
    )
    rot = _enu_matrix(p["lat"], p["lon"])
    v_ecef = np.einsum("nij,ni->nj", rot, np.stack([p["u"], p["v"], p["w"]], -1))
    omega = np.array([0.0, 0.0, OMEGA])
    cor = np.einsum("nij,nj->ni", rot, -2.0 * np.cross(omega, v_ecef))
    r = _ecef(p["lat"], p["lon"], p["h"])
    cen = np.einsum("nij,nj->ni", rot, -np.cross(omega, np.cross(omega, r)))
    for i, comp in enumerate(COMPONENTS):
        np.testing.assert_allclose(acc[f"coriolis_{comp}"].values, cor[:, i], rtol=0, atol=1e-15)
        # pyproj positions agree with frameshift's to well under a mm: Ω² × 1e-3 m ~ 5e-12
        np.testing.assert_allclose(acc[f"centrifugal_{comp}"].values, cen[:, i], rtol=0, atol=1e-13)


def test_euler_term_off_axis_matches_vector_algebra():
    # the kernel's general formula -(dΩ/dt)×r, with dΩ/dt off the axis, against the
    # cross product in Earth-centred axes (pyproj positions) turned onto local axes
    p = _random_points(rng_key=11)
    rate = np.array([3e-12, -2e-12, 5e-12])  # rad s-2, arbitrary
    out = ak.accelerations(
        p["lat"],
        p["h"],
        p["u"],
        p["v"],
        OMEGA,
        *rate,
        w=p["w"],
        lon_deg=p["lon"],
        a=A_WGS84,
        f=F_WGS84,
        terms=("euler",),
    )
    r = _ecef(p["lat"], p["lon"], p["h"])
    expected = np.einsum("nij,nj->ni", _enu_matrix(p["lat"], p["lon"]), -np.cross(rate, r))
    for i in range(3):
        np.testing.assert_allclose(out[i], expected[:, i], rtol=0, atol=1e-17)
    # without a longitude an off-axis rate cannot be placed
    with pytest.raises(ValueError, match="lon_deg"):
        ak.accelerations(0.0, 0.0, 1.0, 1.0, OMEGA, *rate, a=A_WGS84, f=F_WGS84)


def test_fused_kernel_matches_term_functions():
    # the one-pass kernel against the readable one-term functions of the same module,
    # with velocity scale factors (knots) folded into the products
    p = _random_points(rng_key=3)
    lat = np.deg2rad(p["lat"])
    for traditional in (False, True):
        out = ak.accelerations(
            p["lat"],
            p["h"],
            p["u"] / KNOT,
            p["v"] / KNOT,
            OMEGA,
            0.0,
            0.0,
            0.0,
            w=p["w"] / KNOT,
            a=A_WGS84,
            f=F_WGS84,
            scale=(KNOT,) * 3,
            traditional=traditional,
        )
        got = dict(zip(ak.output_names(ak.TERMS), out, strict=True))
        want = {
            "coriolis": ak.coriolis(lat, p["u"], p["v"], p["w"], OMEGA, traditional=traditional),
            "centrifugal": ak.centrifugal(lat, p["h"], OMEGA, a=A_WGS84, f=F_WGS84),
            "euler": ak.euler(lat, p["h"], np.zeros(3), a=A_WGS84, f=F_WGS84),
            "curvature": ak.curvature(
                lat, p["h"], p["u"], p["v"], p["w"], a=A_WGS84, f=F_WGS84, traditional=traditional
            ),
        }
        for term, parts in want.items():
            for comp, value in zip(COMPONENTS, parts, strict=True):
                np.testing.assert_allclose(
                    got[f"{term}_{comp}"], np.broadcast_to(value, (50,)), rtol=1e-13, atol=1e-18
                )
        for comp in COMPONENTS:
            total = sum(got[f"{t}_{comp}"] for t in ak.TERMS)
            np.testing.assert_allclose(got[f"total_{comp}"], total, rtol=1e-14, atol=1e-18)


@pytest.mark.parametrize("traditional", [False, True])
@eager_and_chunked
def test_coriolis_and_curvature_do_no_work(traditional, layout):
    # V · (-2Ω×V) = 0, and V · (-ω_b×V) = 0: both are cross products with V
    # (vector identity). The traditional set keeps this property: it is the
    # energy-consistent set (Phillips 1966; White et al. 2005 — from memory).
    p = _random_points(rng_key=5)
    acc = frameshift.apparent_accelerations(_points(**p, layout=layout), traditional=traditional)
    vel = {"eastward": p["u"], "northward": p["v"], "upward": p["w"]}
    for term in ("coriolis", "curvature"):
        power = sum(acc[f"{term}_{c}"].values * vel[c] for c in COMPONENTS)
        scale = sum(np.abs(acc[f"{term}_{c}"].values * vel[c]) for c in COMPONENTS)
        assert np.all(np.abs(power) <= 1e-13 * scale + 1e-300)


@eager_and_chunked
def test_traditional_drops_exactly_the_stated_terms(layout):
    p = _random_points(rng_key=9)
    full = frameshift.apparent_accelerations(_points(**p, layout=layout))
    trad = frameshift.apparent_accelerations(_points(**p, layout=layout), traditional=True)
    lat = np.deg2rad(p["lat"])
    sin_lat = np.sin(lat)
    n = A_WGS84 / np.sqrt(1 - F_WGS84 * (2 - F_WGS84) * sin_lat**2)
    m = n**3 * (1 - F_WGS84 * (2 - F_WGS84)) / A_WGS84**2
    u, v, w, h = p["u"], p["v"], p["w"], p["h"]
    fr = 2 * OMEGA * np.cos(lat)
    dropped = {  # full minus traditional, term by term (formulas of the issue)
        "coriolis_eastward": -fr * w,
        "coriolis_northward": 0.0 * u,
        "coriolis_upward": fr * u,
        "curvature_eastward": -u * w / (n + h),
        "curvature_northward": -v * w / (m + h),
        "curvature_upward": u**2 / (n + h) + v**2 / (m + h),
    }
    for name, diff in dropped.items():
        np.testing.assert_allclose(full[name] - trad[name], diff, rtol=1e-10, atol=1e-16)
        assert "approximation" in trad[name].attrs
    for name in ("coriolis_upward", "curvature_upward"):
        assert np.all(trad[name].values == 0.0)
    for term in ("centrifugal", "euler"):
        for c in COMPONENTS:
            xr.testing.assert_identical(full[f"{term}_{c}"], trad[f"{term}_{c}"])


# --- handbook: the Eötvös correction ---------------------------------------------------
@pytest.mark.parametrize(
    ("frame", "rel_v2"),
    [(EARTH_SPHERE, 3e-5), (EARTH, 7e-3)],
)
@eager_and_chunked
def test_eotvos_correction_of_marine_gravimetry(frame, rel_v2, layout):
    # Eötvös correction as used in marine gravimetry: E ≈ 7.503 V cosφ sinα + 0.004154 V²
    # mGal, V in knots, α the heading (coefficients from the gravimetry literature,
    # recalled from memory; shared/REFERENCE_VALUES.md). It is the upward Coriolis plus
    # upward curvature acceleration of a ship at sea level. Tolerances: the coefficients
    # are rounded (7.503 for 2Ω·1852/3600 s-1 = 7.50284 mGal/kn: 2.1e-5; 0.004154 for
    # (1852/3600)²/R = 0.00415389: 2.6e-5); the handbook uses one spherical R, so on
    # the WGS 84 ellipsoid the V² term differs by the spread of the radii of curvature
    # (M at the equator is 0.6 % below R1), hence 7e-3 on it there.
    lat, heading, speed = np.meshgrid(
        [0.0, 30.0, 60.0], [0.0, 45.0, 90.0, 270.0], [5.0, 10.0, 15.0], indexing="ij"
    )
    lat, heading, speed = lat.ravel(), heading.ravel(), speed.ravel()
    alpha = np.deg2rad(heading)
    ds = _points(lat, u=speed * np.sin(alpha), v=speed * np.cos(alpha), units="knot", layout=layout)
    acc = frameshift.apparent_accelerations(ds, frame, terms=("coriolis", "curvature"))
    ours = (acc["coriolis_upward"] + acc["curvature_upward"]).values / MGAL
    first = 7.503 * speed * np.cos(np.deg2rad(lat)) * np.sin(alpha)
    second = 0.004154 * speed**2
    tol = 3e-5 * np.abs(first) + rel_v2 * second + 1e-12
    assert np.all(np.abs(ours - (first + second)) <= tol)
    # the total of the two requested terms is their sum
    np.testing.assert_allclose(acc["total_upward"].values / MGAL, ours, rtol=1e-14)


# --- closure: an inertial straight line seen from the rotating frame -------------------
#: spin-up of the test frames: Ω(t) = Ω0 + α t from the epoch (Ω changes by 0.2 % per 2 h)
SPIN_UP = 2e-10
SPIN_EPOCH = np.datetime64("2024-03-15T06:00", "ns")


def spin_up_rate(seconds):
    """Ω0 + α t (rad s-1), t in seconds since the epoch: a rate law given as a function."""
    return OMEGA + SPIN_UP * np.asarray(seconds)


def spin_up_rate_of_change(seconds):
    return np.full(np.shape(seconds), SPIN_UP)


#: an arbitrary strongly flattened, fast-rotating body (Saturn-like numbers)
FLAT_BODY = Planet("flattened test body", 1.6378499e-4, 60268e3, inverse_flattening=10.2)
#: a test body spinning up at 2e-10 rad s-2 (Ω changes by 0.2 % over the test)
_SPIN_SERIES = xr.DataArray(  # two samples a day apart: linear in between, so exact
    [OMEGA, OMEGA + SPIN_UP * 86400.0],
    dims="t",
    coords={"t": [SPIN_EPOCH, SPIN_EPOCH + np.timedelta64(1, "D")]},
    attrs={"units": "rad s-1"},
)
#: a WGS 84 body spinning up at α = 2e-10 rad s-2, its rate given as a series over time
SPINNING = Planet("spinning test body", OMEGA, A_WGS84, 298.257223563).with_rotation(
    RateSeries(_SPIN_SERIES)
)
#: the same spin-up given as a function of time, valid at any date
SPINNING_FUNCTION = SPINNING.with_rotation(
    RateSeries(spin_up_rate, epoch=SPIN_EPOCH, rate_of_change=spin_up_rate_of_change)
)


def _inertial_line(frame, dt=1.0, layout="eager", n=601):
    """A point moving in a straight line at constant velocity on inertial CIRS axes,
    taken into ``frame`` with to_rotating(basis="cartesian")."""
    t0 = np.datetime64("2024-03-15T06:00", "ns")
    times = t0 + (np.arange(n) * dt * 1e9).astype("timedelta64[ns]")
    start = _points(40.0, lon=10.0, h=5000.0, u=30.0, v=-20.0, w=5.0, dim="time")
    start = start.assign_coords(time=("time", times[:1]))
    cart = frameshift.to_inertial(start, frame, basis="cartesian").transpose(..., "component")
    r0, v0 = cart["position"].values[0], cart["velocity"].values[0]
    pos = r0 + (np.arange(n) * dt)[:, None] * v0
    attrs = {"reference_frame": "inertial", "inertial_axes": "CIRS"}
    inertial = xr.Dataset(
        {
            "position": (("time", "component"), pos, {"units": "m", **attrs}),
            "velocity": (("time", "component"), np.tile(v0, (n, 1)), {"units": "m s-1", **attrs}),
        },
        coords={"time": times, "component": ["x", "y", "z"]},
    )
    return as_layout(frameshift.to_rotating(inertial, frame, basis="cartesian"), layout)


@pytest.mark.parametrize("frame", [EARTH, FLAT_BODY, SPINNING], ids=lambda f: f.name)
@eager_and_chunked
def test_closure_inertial_straight_line(frame, layout):
    # With no force, the inertial acceleration is zero, so the rate of change of the
    # local velocity components must equal the sum of the four apparent terms.
    # Centred differences over Δt = 1 s: truncation Δt²/6 |d³u/dt³| (second order)
    # and Δt⁴/30 |d⁵u/dt⁵| ≲ 1e-18 m s-2 (fourth order); rounding: each local velocity
    # is an inertial velocity minus the frame's (|v_I| ~ 470 m s-1 on the Earth), good
    # to a few eps |v_I|, so the differences carry ~50 eps |v_I| / Δt. Measured on the
    # Earth: about 1e-10 and 1e-13 m s-2, against terms of order 1e-2 m s-2.
    dt = 1.0
    rot = _inertial_line(frame, dt, layout)
    speed = frame.rotation_rate * frame.equatorial_radius + 50.0  # bound on |v_I|
    rounding = 50 * np.finfo(float).eps * speed / dt
    acc = frameshift.apparent_accelerations(rot, frame, velocity=VELOCITY_NAMES)
    for comp, name in VELOCITY_NAMES.items():
        x = rot[name].values
        total = acc[f"total_{comp}"].values
        d2 = (x[2:] - x[:-2]) / (2 * dt)
        d4 = (-x[4:] + 8 * x[3:-1] - 8 * x[1:-3] + x[:-4]) / (12 * dt)
        third = np.abs(np.diff(x, 3)).max() / dt**3  # |d³u/dt³| from the data
        assert np.abs(d2 - total[1:-1]).max() <= dt**2 / 6 * third * 1.5 + rounding
        assert np.abs(d4 - total[2:-2]).max() <= rounding
        assert np.abs(total).max() > 1e-3  # the check is not vacuous
    if frame is SPINNING:
        # the Euler term is really exercised: -α p eastward, about 1e-3 m s-2
        lat = np.deg2rad(rot["latitude"].values)
        p = (
            A_WGS84 / np.sqrt(1 - F_WGS84 * (2 - F_WGS84) * np.sin(lat) ** 2) + rot["height"].values
        ) * np.cos(lat)
        np.testing.assert_allclose(acc["euler_eastward"].values, -2e-10 * p, rtol=1e-12)
        assert np.all(acc["euler_northward"].values == 0.0)


@eager_and_chunked
def test_closure_fails_without_a_term(layout):
    # the closure is sensitive: leaving out any one term breaks it by far more than
    # the differencing error
    rot = _inertial_line(EARTH, layout=layout)
    x = rot["northward_velocity"].values
    d4 = (-x[4:] + 8 * x[3:-1] - 8 * x[1:-3] + x[:-4]) / 12.0
    for term in ("coriolis", "centrifugal", "curvature"):
        others = tuple(t for t in frameshift.dynamics.TERMS if t != term)
        acc = frameshift.apparent_accelerations(rot, terms=others, velocity=VELOCITY_NAMES)
        assert np.abs(d4 - acc["total_northward"].values[2:-2]).max() > 1e-6


@eager_and_chunked
def test_earth_fixed_point_is_pure_centripetal(layout):
    # An Earth-fixed point (V = 0) has no Coriolis, curvature or (steady) Euler term,
    # and d(u,v,w)/dt = 0, so its inertial acceleration is minus the total, which is
    # the centrifugal term alone. Independently: pyerfa's pvtob gives the CIRS
    # velocity of an Earth-fixed site at ERA θ (SOFA); its centred difference over
    # Δt = 10 s is the inertial acceleration (truncation (ΩΔt)²/6 ≈ 1e-7 relative),
    # which must be perpendicular to the axis (centripetal: no z component), of
    # magnitude Ω² p, and equal to minus our total on local axes. SOFA turns at the ERA
    # rate 7.292115146706979e-5 rad s-1 against frameshift's nominal 7.292115e-5:
    # 4e-9 relative in Ω², ~1.4e-10 m s-2.
    lat = np.array([0.0, 45.0, -33.0, 70.0])
    lon = np.array([0.0, 10.0, 151.0, -20.0])
    h = np.array([0.0, 0.0, 500.0, 3000.0])
    acc = frameshift.apparent_accelerations(_points(lat, lon=lon, h=h, w=0.0, layout=layout))
    for term in ("coriolis", "curvature", "euler"):
        for c in COMPONENTS:
            assert np.all(acc[f"{term}_{c}"].values == 0.0)
    for c in COMPONENTS:
        xr.testing.assert_allclose(acc[f"total_{c}"], acc[f"centrifugal_{c}"], rtol=0, atol=0)
    jd1, jd2 = julian_date_parts(np.array(["2024-03-15T06:00"], "datetime64[ns]"))
    dt = 10.0
    for i in range(len(lat)):
        vel = []
        for k in (-1, 1):
            theta = erfa.era00(jd1[0], jd2[0] + k * dt / 86400.0)
            pv = erfa.pvtob(np.deg2rad(lon[i]), np.deg2rad(lat[i]), h[i], 0, 0, 0, theta)
            vel.append(pv["v"])
        a_cirs = (vel[1] - vel[0]) / (2 * dt)
        theta = erfa.era00(jd1[0], jd2[0])
        c, s = np.cos(theta), np.sin(theta)
        a_body = np.array(
            [c * a_cirs[0] + s * a_cirs[1], -s * a_cirs[0] + c * a_cirs[1], a_cirs[2]]
        )
        a_enu = _enu_matrix(lat[i], lon[i]) @ a_body
        assert abs(a_cirs[2]) < 1e-12  # perpendicular to the axis
        p = np.hypot(*erfa.gd2gc(1, np.deg2rad(lon[i]), np.deg2rad(lat[i]), h[i])[:2])
        np.testing.assert_allclose(np.linalg.norm(a_cirs), OMEGA**2 * p, rtol=1e-6)
        total = np.array([acc[f"total_{c}"].values[i] for c in COMPONENTS])
        np.testing.assert_allclose(a_enu, -total, rtol=0, atol=1e-8)


# --- data shapes, laziness, units, metadata ----------------------------------------------
@all_kinds
@eager_and_chunked
def test_eager_and_chunked_agree_and_stay_lazy(kind, layout):
    ds = BUILDERS[kind]()
    eager = frameshift.apparent_accelerations(ds, include_parameters=True)
    data = as_layout(ds, layout)
    with raise_if_dask_computes():
        out = frameshift.apparent_accelerations(data, include_parameters=True)
    if layout == "chunked":
        assert all(out[n].chunks is not None for n in ak.output_names(ak.TERMS))
    xr.testing.assert_allclose(out.compute(), eager, rtol=1e-14, atol=0)
    dims = ds[next(n for n in ds.data_vars if "standard_name" in ds[n].attrs)].dims
    for name in ak.output_names(ak.TERMS):
        assert out[name].dims == dims
        assert out[name].dtype == np.float64


@all_kinds
@eager_and_chunked
def test_metadata(kind, layout):
    ds = as_layout(BUILDERS[kind](), layout)
    out = frameshift.apparent_accelerations(ds)
    assert set(out.data_vars) == set(ak.output_names(ak.TERMS))
    for name in out.data_vars:
        attrs = out[name].attrs
        term, comp = name.split("_")
        assert attrs["units"] == "m s-2"
        assert_udunits(attrs["units"])
        assert "standard_name" not in attrs  # no CF names exist for these (table v93)
        assert attrs["acceleration_term"] == term
        assert attrs["acceleration_component"] == comp
        assert attrs["reference_body"] == EARTH.name
        assert attrs["long_name"].startswith(comp)
    assert out["coriolis_northward"].attrs["long_name"] == "northward Coriolis acceleration"
    assert out["total_upward"].attrs["terms_included"] == "coriolis centrifugal euler curvature"
    assert written_standard_names(out) <= cf_standard_names()
    assert "apparent_accelerations" in out.attrs["history"].splitlines()[-1]
    assert out.attrs["Conventions"].startswith("CF-")
    # to_array and sum work without surprises: all float64 on the same dims
    arr = out.to_array("variable")
    assert arr.dtype == np.float64
    assert arr.sizes["variable"] == 15
    assert np.isfinite(float(out.sum().to_array().sum()))


@eager_and_chunked
def test_cell_methods_carried_over(layout):
    ds = as_layout(BUILDERS["grid"](), layout)  # ua has cell_methods "time: mean", va and wa none
    out = frameshift.apparent_accelerations(ds)
    assert all(out[n].attrs["cell_methods"] == "time: mean" for n in out.data_vars)
    assert "averaged" in out["curvature_upward"].attrs["comment"]
    ds["va"].attrs["cell_methods"] = "time: point"
    mixed = frameshift.apparent_accelerations(ds)
    assert all("cell_methods" not in mixed[n].attrs for n in mixed.data_vars)


@eager_and_chunked
def test_units_knot_and_cm_per_second(layout):
    # the same physical velocity in m s-1, knot and cm s-1 gives the same accelerations
    p = _random_points(rng_key=2)
    ref = frameshift.apparent_accelerations(_points(**p, layout=layout))
    for units, factor in (("knot", KNOT), ("cm s-1", 0.01)):
        q = dict(p, u=p["u"] / factor, v=p["v"] / factor, w=p["w"] / factor)
        out = frameshift.apparent_accelerations(_points(**q, units=units, layout=layout))
        xr.testing.assert_allclose(out, ref, rtol=1e-12, atol=1e-18)


@eager_and_chunked
def test_single_precision_input_gives_float64(layout):
    # float32 velocities and coordinates are taken as their float64 values
    ds = BUILDERS["grid"]()
    ds32 = ds.astype("float32")
    ds32["time"] = ds["time"]
    out = frameshift.apparent_accelerations(as_layout(ds32, layout)).compute()
    ref = frameshift.apparent_accelerations(ds32.astype("float64").assign_coords(time=ds["time"]))
    for name in out.data_vars:
        assert out[name].dtype == np.float64
        np.testing.assert_allclose(out[name].values, ref[name].values, rtol=1e-15, atol=0)


@eager_and_chunked
def test_station_data_in_cm_per_second_by_hand(layout):
    ds = as_layout(BUILDERS["station"](), layout)  # cm s-1, depth positive down
    out = frameshift.apparent_accelerations(ds, terms="coriolis")
    f = 2 * OMEGA * np.sin(np.deg2rad(ds["lat"]))
    np.testing.assert_allclose(out["coriolis_northward"], -f * ds["u"] * 0.01, rtol=1e-13)
    assert "depth" in out["coriolis_northward"].attrs["assumptions"]


@eager_and_chunked
def test_terms_subset_and_totals(layout):
    ds = as_layout(BUILDERS["trajectory"](), layout)
    out = frameshift.apparent_accelerations(ds, terms=["curvature", "coriolis"])
    assert list(out.data_vars) == list(ak.output_names(("coriolis", "curvature")))
    for c in COMPONENTS:
        xr.testing.assert_allclose(
            out[f"total_{c}"], out[f"coriolis_{c}"] + out[f"curvature_{c}"], rtol=1e-14, atol=0
        )
    one = frameshift.apparent_accelerations(ds, terms="coriolis")
    assert not np.shares_memory(one["total_eastward"].values, one["coriolis_eastward"].values)


def test_position_only_terms_are_views_sharing_nothing():
    # On a grid, the centrifugal term depends on latitude and height only: it comes
    # back as a read-only broadcast view (as numpy.broadcast_to / xarray.broadcast
    # give), full-shaped, sharing memory with no other output and no input.
    ds = BUILDERS["grid"]()
    out = frameshift.apparent_accelerations(ds)
    up = out["centrifugal_upward"]
    assert up.shape == out["coriolis_upward"].shape
    assert not up.values.flags.writeable
    arrays = {k: out[k].values for k in out.data_vars}
    for a, b in itertools.combinations(arrays, 2):
        assert not np.shares_memory(arrays[a], arrays[b]), (a, b)
    for name in ds.data_vars:
        assert not any(np.shares_memory(ds[name].values, x) for x in arrays.values()), name
    # values: Ω² (N + h) cos φ (sin φ, cos φ) on the ellipsoid (WGS 84 TR8350.2 N)
    lat = np.deg2rad(ds["lat"])
    e2 = F_WGS84 * (2 - F_WGS84)
    n = A_WGS84 / np.sqrt(1 - e2 * np.sin(lat) ** 2)
    expected = OMEGA**2 * (n + ds["z"]) * np.cos(lat) ** 2  # z: height above the ellipsoid
    np.testing.assert_allclose(up, expected.broadcast_like(up).transpose(*up.dims), rtol=1e-12)
    doubled = up.copy() * 2  # a copy is an ordinary writeable array
    assert doubled.values.flags.writeable


@eager_and_chunked
def test_input_not_modified_and_accessor(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    before = ds.copy(deep=True)
    out = ds.frameshift.apparent_accelerations(terms="coriolis")
    xr.testing.assert_identical(ds, before)
    xr.testing.assert_identical(
        out.drop_attrs(), frameshift.apparent_accelerations(ds, terms="coriolis").drop_attrs()
    )
    assert "coriolis_parameter" in ds.frameshift.coriolis_parameters()


@eager_and_chunked
def test_euler_of_a_spinning_up_frame_on_a_grid(layout):
    # for dΩ/dt = α on the axis, -(dΩ/dt)×r = -α p eastward (p = (N + h) cos φ);
    # the frame is unsteady, so Ω is taken at each time of the Dataset
    ds = as_layout(BUILDERS["grid"](), layout)
    out = frameshift.apparent_accelerations(ds, SPINNING_FUNCTION)
    lat = np.deg2rad(ds["lat"])
    n = A_WGS84 / np.sqrt(1 - F_WGS84 * (2 - F_WGS84) * np.sin(lat) ** 2)
    p = (n + ds["z"]) * np.cos(lat)
    xr.testing.assert_allclose(
        out["euler_eastward"], (-2e-10 * p).broadcast_like(ds["ua"]), rtol=1e-12
    )
    seconds = (ds["time"].values - SPIN_EPOCH) / np.timedelta64(1, "s")
    omega = xr.DataArray(OMEGA + SPIN_UP * seconds, dims="time")  # the law, by hand
    expected = (-2 * omega * np.sin(lat) * ds["ua"]).transpose(*ds["ua"].dims)
    np.testing.assert_allclose(out["coriolis_northward"].values, expected.values, rtol=1e-12)


# --- errors ------------------------------------------------------------------------------
@eager_and_chunked
def test_errors_name_what_is_missing(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    with pytest.raises(MissingInputError, match="velocity") as info:
        frameshift.apparent_accelerations(ds[["ta"]])
    assert info.value.variable == "velocity"
    with pytest.raises(MissingInputError, match="latitude"):
        frameshift.apparent_accelerations(ds.drop_vars("lat"))
    with pytest.raises(ConventionError, match="'coriolis', 'centrifugal', 'euler', 'curvature'"):
        frameshift.apparent_accelerations(ds, terms=["coriolis", "gyroscopic"])
    with pytest.raises(ConventionError):
        frameshift.apparent_accelerations(ds, terms=[])
    with pytest.raises(ConventionError, match="frame"):
        frameshift.apparent_accelerations(ds, frame="earth")
    inertial = frameshift.to_inertial(ds)
    with pytest.raises(FrameError, match="to_rotating"):
        frameshift.apparent_accelerations(inertial)
    with pytest.raises(MissingInputError, match="time"):
        frameshift.apparent_accelerations(ds.isel(time=0, drop=True), SPINNING_FUNCTION)


@eager_and_chunked
def test_rotation_off_the_figure_axis_is_refused(layout):
    # no rotation law ships with polar motion; a frame that reports one is refused
    class Wobbling(Frame):
        def rotation_vector(self, t, jd2=None):
            out = super().rotation_vector(t, jd2)
            out[..., 0] = 1e-12
            return out

    body = Wobbling("wobbling test body", SteadyRate(OMEGA), Ellipsoid(A_WGS84, 298.257223563))
    with pytest.raises(UnsupportedInputError, match="z axis"):
        frameshift.apparent_accelerations(as_layout(BUILDERS["grid"](), layout), body)
