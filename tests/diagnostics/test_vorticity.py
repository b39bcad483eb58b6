"""Absolute vorticity on latitude-longitude grids: analytic flows and Stokes' theorem."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import EARTH, EARTH_SPHERE, UnsupportedInputError
from tests.diagnostics.data import CURRENT, grid, run_lazily, times
from tests.helpers import (
    as_layout,
    assert_udunits,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    station_dataset,
)

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1
STEP = np.deg2rad(1.0)
# Centred differences of sin 2φ with step h lose a factor sin(2h)/(2h) ≈ 1 - (2h)²/6:
# 2e-4 at 1° (Taylor series of the difference quotient).
RTOL = 1.1 * (2 * STEP) ** 2 / 6


def solid_body(frame, lat, lon, ntime: int = 2) -> xr.Dataset:
    """u = Ω p (p = N cos φ, the distance from the axis), v = 0, along time."""
    sin = np.sin(np.deg2rad(lat))
    n = frame.equatorial_radius / np.sqrt(1 - frame.eccentricity_squared * sin**2)
    p = n * np.cos(np.deg2rad(lat))
    u = OMEGA * p[None, :, None] * np.ones((ntime, lat.size, lon.size))
    return grid(u, 0 * u, lat, lon, dims=("time", "lat", "lon"),
                coords={"time": ("time", times(ntime))})


@eager_and_chunked
@pytest.mark.parametrize("frame", [EARTH_SPHERE, EARTH], ids=["sphere", "wgs84"])
def test_solid_body_rotation_has_vorticity_two_omega_sin_lat(layout, frame):
    # Analytic: the velocity of solid-body rotation Ω × r has curl 2Ω, whose upward
    # component is 2Ω sin φ (on the sphere u = Ω a cos φ; on the ellipsoid the metric
    # terms make the same result from u = Ω N cos φ).
    lat = np.arange(-89.0, 89.5, 1.0)
    lon = np.arange(0.0, 360.0, 2.0)
    ds = solid_body(frame, lat, lon)
    original = ds.copy(deep=True)
    with raise_if_dask_computes():
        out = frameshift.absolute_vorticity(as_layout(ds, layout), frame)
    expected = 2 * OMEGA * np.sin(np.deg2rad(lat))
    zeta = out.relative_vorticity.values
    assert out.relative_vorticity.dims == ("time", "lat", "lon")
    full = np.broadcast_to(expected[:, None], zeta.shape[1:])
    np.testing.assert_allclose(zeta[:, 1:-1], np.broadcast_to(full[1:-1], zeta[:, 1:-1].shape),
                               rtol=RTOL, atol=1e-14)
    # open latitude edges: second-order one-sided differences, error a few h² (< 1e-3 here)
    np.testing.assert_allclose(zeta[:, [0, -1]], np.broadcast_to(full[[0, -1]], (2, 2, lon.size)),
                               rtol=1e-3)
    np.testing.assert_allclose(out.planetary_vorticity.values, expected, rtol=1e-12)
    np.testing.assert_allclose(out.absolute_vorticity.values, zeta + expected[:, None],
                               rtol=1e-12)
    xr.testing.assert_identical(ds, original)


@eager_and_chunked
def test_pole_rule_is_the_mean_over_the_cap(layout):
    # Stokes' theorem: the circulation round the ring at φ1 over the cap area is the mean
    # vorticity of the cap, ∫ 2Ω sin φ dA / A = Ω (1 + sin φ1) on the sphere (analytic).
    lat = np.arange(-90.0, 90.5, 2.0)
    lon = np.arange(0.0, 360.0, 5.0)
    out = run_lazily(frameshift.absolute_vorticity, solid_body(EARTH_SPHERE, lat, lon, 1), layout,
                     EARTH_SPHERE)
    mean = OMEGA * (1 + np.sin(np.deg2rad(88.0)))
    np.testing.assert_allclose(out.relative_vorticity.values[0, -1], mean, rtol=1e-12)
    np.testing.assert_allclose(out.relative_vorticity.values[0, 0], -mean, rtol=1e-12)


@eager_and_chunked
def test_meridional_flow_and_open_longitudes(layout):
    # Analytic on the sphere: v = V cos λ, u = 0 gives ζ = -V sin λ / (a cos φ); centred
    # differences of cos λ lose sin(h)/h ≈ 1 - h²/6. A regional grid (open longitude
    # edges) uses second-order one-sided differences there (exact for v linear in λ).
    lat = np.arange(-60.0, 61.0, 1.0)
    lon = np.arange(0.0, 360.0, 1.0)
    a = EARTH_SPHERE.equatorial_radius
    v = 3.0 * np.cos(np.deg2rad(lon))[None, :] * np.ones((lat.size, 1))
    ds = grid(0 * v, v, lat, lon, family=CURRENT)
    out = run_lazily(frameshift.absolute_vorticity, ds, layout, EARTH_SPHERE)
    expected = -3.0 * np.sin(np.deg2rad(lon))[None, :] / (a * np.cos(np.deg2rad(lat)))[:, None]
    np.testing.assert_allclose(out.relative_vorticity.values, expected,
                               rtol=STEP**2 / 6 * 1.1, atol=1e-16)
    region = lon[(lon >= 10) & (lon <= 40)]
    lin = 0.01 * region[None, :] * np.ones((lat.size, 1))
    rout = run_lazily(frameshift.absolute_vorticity, grid(0 * lin, lin, lat, region,
                                                          family=CURRENT), layout, EARTH_SPHERE)
    slope = 0.01 / np.deg2rad(1.0) / (a * np.cos(np.deg2rad(lat)))
    np.testing.assert_allclose(rout.relative_vorticity.values,
                               np.broadcast_to(slope[:, None], lin.shape), rtol=1e-9)
    assert "open longitude edges" in rout.relative_vorticity.attrs["assumptions"]


@eager_and_chunked
def test_standard_names_by_family(layout):
    lat = np.arange(-10.0, 11.0, 5.0)
    lon = np.arange(0.0, 360.0, 30.0)
    ones = np.ones((lat.size, lon.size))
    wind = run_lazily(frameshift.absolute_vorticity, grid(ones, ones, lat, lon), layout)
    sea = run_lazily(frameshift.absolute_vorticity, grid(ones, ones, lat, lon, family=CURRENT),
                     layout)
    # CF standard name table v93 (compliance-checker's copy)
    assert wind.relative_vorticity.attrs["standard_name"] == "atmosphere_upward_relative_vorticity"
    assert wind.absolute_vorticity.attrs["standard_name"] == "atmosphere_upward_absolute_vorticity"
    assert sea.relative_vorticity.attrs["standard_name"] == "ocean_relative_vorticity"
    assert "standard_name" not in sea.absolute_vorticity.attrs
    for out in (wind, sea):
        for var in out.data_vars.values():
            assert_udunits(var.attrs["units"])
            if "standard_name" in var.attrs:
                assert var.attrs["standard_name"] in cf_standard_names()


@eager_and_chunked
def test_refusals(layout):
    with pytest.raises(UnsupportedInputError, match="latitude-longitude grid"):
        frameshift.absolute_vorticity(as_layout(station_dataset(), layout))
    lat, lon = np.array([0.0, 1.0]), np.array([0.0, 1.0, 2.0])
    with pytest.raises(UnsupportedInputError, match="at least 3"):
        frameshift.absolute_vorticity(grid(np.ones((2, 3)), np.ones((2, 3)), lat, lon))
    ds = grid(np.ones((3, 3)), np.ones((3, 3)), np.array([0.0, 2.0, 1.0]), np.arange(3.0))
    with pytest.raises(UnsupportedInputError, match="monotonic"):
        frameshift.absolute_vorticity(ds)


@eager_and_chunked
def test_accessor_delegates(layout):
    lat = np.arange(-10.0, 11.0, 5.0)
    lon = np.arange(0.0, 360.0, 30.0)
    ds = grid(np.ones((lat.size, lon.size)), np.zeros((lat.size, lon.size)), lat, lon)
    ds = as_layout(ds, layout)
    xr.testing.assert_allclose(ds.frameshift.absolute_vorticity().drop_attrs(),
                               frameshift.absolute_vorticity(ds).drop_attrs())
