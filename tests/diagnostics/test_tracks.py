"""Forces along tracks: closure against inertial motion and Newton's law in a rotating frame.

An inertial straight line seen from the turning Earth must show no real
force; a track integrated under a known force (scipy's ODE solver, Newton's
second law in a steadily rotating frame, e.g. Goldstein, Classical Mechanics,
ch. 4) must give that force back; a point at rest on the ellipsoid is held
up by normal gravity (Somigliana, NIMA TR8350.2).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr
from pyproj import Transformer
from scipy.integrate import solve_ivp

import frameshift
from frameshift import EARTH, MissingInputError, UnsupportedInputError
from frameshift._kernels.tracks import differentiate
from tests.diagnostics.data import run_lazily, times, track
from tests.helpers import as_layout, assert_udunits, eager_and_chunked, raise_if_dask_computes

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1; WGS 84
TO_GEODETIC = Transformer.from_crs("EPSG:4978", "EPSG:4979", always_xy=True)
TO_ECEF = Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)


def rotate(xyz: np.ndarray, angle: np.ndarray) -> np.ndarray:
    c, s = np.cos(angle), np.sin(angle)
    return np.stack([c * xyz[..., 0] + s * xyz[..., 1], -s * xyz[..., 0] + c * xyz[..., 1],
                     xyz[..., 2]], axis=-1)


def inertial_line(step_s: float, n: int, lat0: float = 35.0, speed=(150.0, -80.0, 20.0)):
    """A free body: straight line in inertial axes, seen in Earth-fixed axes (pyproj geodetic)."""
    x0 = np.array(TO_ECEF.transform(20.0, lat0, 1000.0))
    t = times(n, step_s / 60.0)
    s = (t - t[0]) / np.timedelta64(1, "s")
    inertial = x0 + s[:, None] * (np.asarray(speed) - OMEGA * np.cross([0, 0, 1.0], x0))
    fixed = rotate(inertial, OMEGA * s)
    lon, lat, h = TO_GEODETIC.transform(fixed[:, 0], fixed[:, 1], fixed[:, 2])
    return t, lat, lon, h


@eager_and_chunked
def test_free_track_has_no_real_force(layout):
    # An inertial straight line (no force) seen from the rotating Earth: all of its
    # acceleration is apparent, so the residual is zero to the differencing accuracy.
    t, lat, lon, h = inertial_line(30.0, 121)
    ds = track(np.stack([lat, lat]), np.stack([lon, lon]), np.stack([h, h]), t)
    original = ds.copy(deep=True)
    with raise_if_dask_computes():
        out = frameshift.track_forces(as_layout(ds, layout))
    assert out.force_eastward.dims == ("drifter", "time")
    centrifugal = float(np.abs(out.centrifugal_northward).max())
    assert centrifugal > 0.01  # the apparent terms are large...
    for comp in ("eastward", "northward", "upward"):
        assert float(np.abs(out[f"force_{comp}"]).max()) < 1e-6  # ...the residual is not
        assert_udunits(out[f"force_{comp}"].attrs["units"])
    xr.testing.assert_identical(ds, original)


@eager_and_chunked
def test_second_order_differencing(layout):
    # Stated order: halving the time step divides the residual by about 4.
    errors = []
    for step in (240.0, 120.0):
        t, lat, lon, h = inertial_line(step, int(7200 / step) + 1)
        out = run_lazily(frameshift.track_forces, track(lat, lon, h, t), layout)
        errors.append(max(float(np.abs(out[f"force_{c}"]).max())
                          for c in ("eastward", "northward", "upward")))
    assert 3.3 < errors[0] / errors[1] < 4.7
    # the kernel's three-point formulas are exact for quadratics on uneven times
    s = np.array([0.0, 7.0, 9.0, 20.0, 21.0, 33.0])
    d1, d2 = differentiate(3 * s**2 - s + 2, s)
    np.testing.assert_allclose(d1, 6 * s - 1, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(d2, 6.0, rtol=1e-10)


@eager_and_chunked
def test_known_eastward_force_comes_back(layout):
    # Integrate dV/dt = F ê - 2Ω × V - Ω × (Ω × X) in Earth-fixed axes (Newton's second
    # law in a steadily rotating frame) with F = 2e-3 m s-2 along the local east; the
    # track's residual force is F eastward and nothing else.
    force = 2.0e-3
    x0 = np.array(TO_ECEF.transform(-40.0, 50.0, 0.0))

    def rhs(_, y):
        x, v = y[:3], y[3:]
        east = np.cross([0, 0, 1.0], x)
        east /= np.linalg.norm(east)
        omega = np.array([0, 0, OMEGA])
        acc = force * east - 2 * np.cross(omega, v) - np.cross(omega, np.cross(omega, x))
        return np.concatenate([v, acc])

    t = times(61, 0.5)
    s = (t - t[0]) / np.timedelta64(1, "s")
    sol = solve_ivp(rhs, (0, s[-1]), np.concatenate([x0, [5.0, 3.0, 0.0]]), t_eval=s,
                    rtol=1e-12, atol=1e-9, method="DOP853")
    lon, lat, h = TO_GEODETIC.transform(*sol.y[:3])
    out = run_lazily(frameshift.track_forces, track(lat, lon, h, t), layout)
    np.testing.assert_allclose(out.force_eastward.values, force, atol=2e-7)
    assert float(np.abs(out.force_northward).max()) < 2e-7
    assert float(np.abs(out.force_upward).max()) < 2e-7


@eager_and_chunked
def test_at_rest_the_support_balances_normal_gravity(layout):
    # At rest on the WGS 84 ellipsoid at the equator, the real force beyond the attraction
    # of the normal body is the support: normal gravity upward, γe = 9.7803253359 m s-2
    # (NIMA TR8350.2, Somigliana); none along the ground.
    t = times(8, 60.0)
    zeros = np.zeros(8)
    out = run_lazily(frameshift.track_forces, track(zeros, zeros + 30.0, zeros, t), layout, EARTH)
    np.testing.assert_allclose(out.force_beyond_gravitation_upward.values, 9.7803253359,
                               rtol=1e-9)
    assert float(np.abs(out.force_beyond_gravitation_northward).max()) < 1e-9
    np.testing.assert_allclose(out.velocity_eastward.values, 0.0, atol=1e-9)


@eager_and_chunked
def test_heights_and_refusals(layout):
    t, lat, lon, h = inertial_line(60.0, 20)
    ds = track(lat, lon, -h, t, height_name="depth")
    ds["z"].attrs["positive"] = "down"
    out = run_lazily(frameshift.track_forces, ds, layout)
    ds = as_layout(ds, layout)
    assert "height from 'z'" in out.force_upward.attrs["assumptions"]
    with pytest.raises(UnsupportedInputError, match="at least 4"):
        frameshift.track_forces(ds.isel(time=slice(0, 3)))
    with pytest.raises(MissingInputError, match="latitude"):
        frameshift.track_forces(ds.drop_vars("lat"))
    with pytest.raises(MissingInputError, match="names no variable"):
        frameshift.track_forces(ds, height="alt")
    numbers = frameshift.track_forces(ds.drop_vars("z"), height=10.0)
    assert "10 m given" in numbers.force_upward.attrs["assumptions"]
    table = frameshift.Frame("turntable", frameshift.SteadyRate(1.0), frameshift.Plane())
    with pytest.raises(frameshift.ConventionError, match="latitude/longitude"):
        frameshift.track_forces(ds, table)
    spin_up = frameshift.Frame("spin-up", frameshift.RateSeries(lambda s: OMEGA + 1e-9 * s),
                               frameshift.Ellipsoid(6.4e6))
    with pytest.raises(UnsupportedInputError, match="steady rotation"):
        frameshift.track_forces(ds, spin_up)
