"""Normal gravity: WGS 84 values of NIMA TR8350.2, Somigliana's formula, the
TR8350.2 height series, the gradient of the closed-form normal potential, and
the split into gravitation and centrifugal acceleration."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import EARTH, EARTH_SPHERE, ConventionError, FrameError, MissingInputError, Planet
from frameshift._kernels import accelerations as ak
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

# WGS 84 (NIMA TR8350.2): defining constants and derived values
A = 6378137.0
F = 1.0 / 298.257223563
GM = 3.986004418e14
OMEGA = 7.292115e-5
GAMMA_E = 9.7803253359  # m s-2, normal gravity at the equator (TR8350.2)
GAMMA_P = 9.8321849378  # m s-2, normal gravity at the pole (TR8350.2)
E2 = 0.00669437999014  # first eccentricity squared (computed; shared/REFERENCE_VALUES.md)
B = 6356752.314245  # m, semi-minor axis (computed; shared/REFERENCE_VALUES.md)
M_RATIO = 0.00344978650684  # m = ω²a²b/GM (computed; shared/REFERENCE_VALUES.md)


def _lat(values, layout="eager"):
    """A latitude DataArray (degrees north), eager or chunked."""
    da = xr.DataArray(
        np.asarray(values, dtype=float),
        dims="lat",
        name="lat",
        attrs={"standard_name": "latitude", "units": "degrees_north"},
    )
    return da.chunk({"lat": max(1, (da.size + 1) // 2)}) if layout == "chunked" else da


@eager_and_chunked
def test_equator_and_pole_match_tr8350(layout):
    # γe = 9.7803253359, γp = 9.8321849378 m s-2 (NIMA TR8350.2; recomputation ends
    # ...379 in the last digit of γp, shared/REFERENCE_VALUES.md): test to 1e-9
    g = frameshift.normal_gravity(_lat([0.0, 90.0, -90.0], layout))["normal_gravity"].values
    np.testing.assert_allclose(g, [GAMMA_E, GAMMA_P, GAMMA_P], rtol=0, atol=1e-9)
    ge, gp, m = ak.equator_and_pole_gravity(a=A, f=F, gm=GM, omega=OMEGA)
    np.testing.assert_allclose([ge, gp], [GAMMA_E, GAMMA_P], rtol=0, atol=1e-9)
    np.testing.assert_allclose(m, M_RATIO, rtol=0, atol=1e-14)
    # Somigliana's constant k = bγp/(aγe) - 1 = 0.00193185265241 (TR8350.2; from memory)
    np.testing.assert_allclose(B * gp / (A * ge) - 1.0, 0.00193185265241, atol=1e-13)


@eager_and_chunked
def test_somigliana_on_the_ellipsoid(layout):
    # TR8350.2 eq. 4-1 with its published γe, γp and e², written out here
    lat = np.linspace(-90.0, 90.0, 37)
    s2 = np.sin(np.deg2rad(lat)) ** 2
    k = B * GAMMA_P / (A * GAMMA_E) - 1.0
    somigliana = GAMMA_E * (1.0 + k * s2) / np.sqrt(1.0 - E2 * s2)
    for method in ("exact", "second_order"):
        out = frameshift.normal_gravity(_lat(lat, layout), method=method)
        np.testing.assert_allclose(out["normal_gravity"].values, somigliana, rtol=0, atol=1e-9)
    # on the ellipsoid, a level surface, gravity is along the normal
    exact = frameshift.normal_gravity(_lat(lat, layout))
    assert np.abs(exact["normal_gravity_northward"].values).max() < 1e-12
    np.testing.assert_allclose(exact["normal_gravity_upward"].values, -somigliana, atol=1e-9)


def _potential_gradient(lat_deg, h, step=10.0):
    """North and up components of grad U by centred differences of the closed-form
    normal potential U = GM/E arctan(E/u) + ½ω²a²(q/q0)(sin²β - 1/3) + ½ω²(x² + y²)
    (Heiskanen & Moritz 1967, ch. 2, from memory), q from the arctan series."""
    big_e = np.sqrt(A * A - B * B)

    def q(u):
        t = big_e / u
        return sum(
            (-1) ** (j + 1) * 2 * j * t ** (2 * j + 1) / ((2 * j + 1) * (2 * j + 3))
            for j in range(1, 15)
        )

    def potential(rho, z):
        d = rho**2 + z**2 - big_e**2
        u = np.sqrt(0.5 * d * (1 + np.sqrt(1 + 4 * big_e**2 * z**2 / d**2)))
        sin_beta = z / u
        return (
            GM / big_e * np.arctan(big_e / u)
            + 0.5 * OMEGA**2 * A**2 * q(u) / q(B) * (sin_beta**2 - 1 / 3)
            + 0.5 * OMEGA**2 * rho**2
        )

    lat = np.deg2rad(lat_deg)
    s, c = np.sin(lat), np.cos(lat)
    n = A / np.sqrt(1 - E2 * s * s)
    rho, z = (n + h) * c, (n * (1 - E2) + h) * s
    g_rho = (potential(rho + step, z) - potential(rho - step, z)) / (2 * step)
    g_z = (potential(rho, z + step) - potential(rho, z - step)) / (2 * step)
    return -g_rho * s + g_z * c, g_rho * c + g_z * s


@pytest.mark.parametrize("h", [0.0, 1000.0, 10000.0, 50000.0])
@eager_and_chunked
def test_exact_field_is_the_gradient_of_the_normal_potential(h, layout):
    # finite differences of U (10 m steps; rounding ~1e-9 m s-2) against the
    # analytic gradient used by method="exact"
    lat = np.array([0.0, 30.0, 45.0, 60.0, 89.0])
    north, up = _potential_gradient(lat, h)
    out = frameshift.normal_gravity(_lat(lat, layout), height=h)
    np.testing.assert_allclose(out["normal_gravity_northward"].values, north, atol=3e-9)
    np.testing.assert_allclose(out["normal_gravity_upward"].values, up, atol=3e-9)


@pytest.mark.parametrize("h", [1.0, 100.0, 1000.0, 10000.0, 20000.0, 50000.0])
@eager_and_chunked
def test_exact_against_tr8350_height_series(h, layout):
    # TR8350.2 eq. 4-3 (second order in h, first order in f and m). Bound on the
    # difference: the free-air gradient is kept to first order, dropping terms of
    # order (f² + fm + m²)·2γ/a ≈ 1.1e-10 s-2, i.e. ~1.1e-10 m s-2 per metre of
    # height; and the series stops at h², dropping ~4γ(h/a)³ (expansion of (a/(a+h))²).
    lat = np.linspace(-90.0, 90.0, 19)
    exact = frameshift.normal_gravity(_lat(lat, layout), height=h)["normal_gravity"].values
    series = frameshift.normal_gravity(_lat(lat, layout), height=h, method="second_order")
    bound = 1.5e-10 * h + 5 * GAMMA_P * (h / A) ** 3
    assert np.abs(exact - series["normal_gravity"].values).max() <= bound


@eager_and_chunked
def test_free_air_gradient_and_plumb_line_curvature(layout):
    # free-air gradient about -0.3086 mGal/m (common practice value of gravity
    # reductions) and the curvature of the normal plumb line, 0.17" per km of height
    # times sin 2φ (Heiskanen & Moritz 1967, from memory): checked to 0.3 % and 1 %
    lat = _lat([45.0], layout)
    g0 = frameshift.normal_gravity(lat)["normal_gravity"].values[0]
    g1 = frameshift.normal_gravity(lat, height=1.0)
    gradient = (g1["normal_gravity"].values[0] - g0) / 1e-5  # mGal per m
    np.testing.assert_allclose(gradient, -0.3086, rtol=3e-3)
    up = frameshift.normal_gravity(lat, height=1000.0)
    tilt = np.arctan2(
        abs(up["normal_gravity_northward"].values[0]), -up["normal_gravity_upward"].values[0]
    )
    np.testing.assert_allclose(np.rad2deg(tilt) * 3600.0, 0.17, rtol=1e-2)


@eager_and_chunked
def test_split_into_gravitation_and_centrifugal(layout):
    lat = np.array([0.0, 20.0, 45.0, 75.0, 90.0])
    h = 2500.0
    for method in ("exact", "second_order"):
        out = frameshift.normal_gravity(_lat(lat, layout), height=h, method=method)
        for c in ("northward", "upward"):
            np.testing.assert_allclose(
                out[f"normal_gravity_{c}"].values,
                out[f"gravitation_{c}"].values + out[f"centrifugal_{c}"].values,
                rtol=0,
                atol=1e-15,
            )
        # the centrifugal part is the apparent-acceleration term at the same points
        ds = xr.Dataset(
            {
                "u": (
                    "lat",
                    np.zeros(lat.size),
                    {"standard_name": "eastward_wind", "units": "m s-1"},
                ),
                "v": (
                    "lat",
                    np.zeros(lat.size),
                    {"standard_name": "northward_wind", "units": "m s-1"},
                ),
            },
            coords={"lat": _lat(lat), "lon": ((), 0.0, {"units": "degrees_east"})},
        )
        acc = frameshift.apparent_accelerations(
            as_layout(ds, layout), terms="centrifugal", height=h
        )
        for c in ("northward", "upward"):
            np.testing.assert_allclose(
                out[f"centrifugal_{c}"].values,
                acc[f"centrifugal_{c}"].values,
                rtol=1e-14,
                atol=1e-18,
            )
    # at the equator on the ellipsoid: gravitation = γe + Ω²a downward (Ω²a = 0.0339157
    # m s-2, computed from WGS 84 constants)
    eq = frameshift.normal_gravity(_lat([0.0], layout))
    np.testing.assert_allclose(-eq["gravitation_upward"].values, GAMMA_E + 0.0339157, atol=1e-7)


@eager_and_chunked
def test_sphere_is_a_level_surface(layout):
    # flattening 0: the same field in its limit; the rotating sphere is level, so
    # gravity on it has no horizontal part
    out = frameshift.normal_gravity(_lat(np.linspace(-90, 90, 13), layout), EARTH_SPHERE)
    assert np.abs(out["normal_gravity_northward"].values).max() < 1e-12
    assert np.all(np.isfinite(out["normal_gravity"].values))


@all_kinds
@eager_and_chunked
def test_data_shapes_lazy_and_metadata(kind, layout):
    ds = BUILDERS[kind]()
    eager = frameshift.normal_gravity(ds)
    data = as_layout(ds, layout)
    with raise_if_dask_computes():
        out = frameshift.normal_gravity(data)
    xr.testing.assert_allclose(out.compute(), eager, rtol=1e-14, atol=0)
    assert written_standard_names(out.drop_vars(list(out.coords))) == set()
    assert written_standard_names(out) <= cf_standard_names()
    for name in out.data_vars:
        assert out[name].attrs["units"] == "m s-2"
        assert_udunits(out[name].attrs["units"])
        assert out[name].dtype == np.float64
        assert out[name].attrs["reference_body"] == EARTH.name
    assert "normal_gravity" in out.attrs["history"]
    assert out.attrs["Conventions"].startswith("CF-")
    assert np.all((out["normal_gravity"].values > 9.7) & (out["normal_gravity"].values < 9.9))


@eager_and_chunked
def test_height_options_and_depth_sign(layout):
    ds = as_layout(BUILDERS["station"](), layout)  # depth positive down
    by_depth = frameshift.normal_gravity(ds)
    km = xr.DataArray(-ds["depth"].values / 1000.0, dims="depth", attrs={"units": "km"})
    by_array = frameshift.normal_gravity(ds, height=km)
    np.testing.assert_allclose(
        by_depth["normal_gravity"].values, by_array["normal_gravity"].values, rtol=1e-15
    )
    assert "depth" in by_depth["normal_gravity"].attrs["assumptions"]
    # below the ellipsoid the (exterior) formula grows with depth
    assert np.all(np.diff(by_depth["normal_gravity"].values, axis=-1) > 0)
    traj = as_layout(BUILDERS["trajectory"](), layout)
    named = frameshift.normal_gravity(traj, height="alt")
    number = frameshift.normal_gravity(45.0, height=1000.0)  # a number has no chunked form
    lat32 = _lat([12.5, 47.0], layout).astype("float32")
    single = frameshift.normal_gravity(lat32)["normal_gravity"].values
    assert single.dtype == np.float64
    double = frameshift.normal_gravity(lat32.astype("float64"))["normal_gravity"].values
    np.testing.assert_array_equal(single, double)
    assert named["normal_gravity"].dims == ("time",)
    assert number["normal_gravity"].shape == ()
    assert traj.frameshift.normal_gravity()["normal_gravity"].dims == ("time",)


@eager_and_chunked
def test_errors(layout):
    no_gm = Planet("no gm", OMEGA, A, 298.257223563)
    with pytest.raises(FrameError, match="gm") as info:
        frameshift.normal_gravity(0.0, no_gm)
    assert info.value.variable == "gm"
    with pytest.raises(MissingInputError, match="latitude"):
        frameshift.normal_gravity(xr.Dataset({"x": ("n", [1.0])}))
    with pytest.raises(ConventionError, match="exact"):
        frameshift.normal_gravity(0.0, method="third_order")
    with pytest.raises(MissingInputError, match="nothing"):
        frameshift.normal_gravity(as_layout(BUILDERS["grid"](), layout), height="nothing")
    with pytest.raises(frameshift.InputTypeError):
        frameshift.normal_gravity("45N")
