"""Relative vorticity on a latitude-longitude grid of the ellipsoid, in numpy.

On the ellipsoid surface with the orthogonal coordinates longitude λ and
geodetic latitude φ, whose scale factors are p = N cos φ (distance from the
axis) and M (meridian radius of curvature), the upward component of the
curl of the horizontal velocity (u east, v north) is

    ζ = (1 / p) ∂v/∂λ - (1 / (p M)) ∂(p u)/∂φ

(for a sphere, the familiar (1 / (a cos φ)) [∂v/∂λ - ∂(u cos φ)/∂φ]; the
metric term is the ∂(cos φ)/∂φ inside). Derivatives are second-order
differences (centred inside, second-order one-sided at open edges; longitude
wraps round on a global grid). At a pole, where p = 0, the value is the
circulation round the nearest ring of grid points divided by the area of the
polar cap inside it (Stokes' theorem): the mean vorticity of that cap.

Inputs: ``u`` and ``v`` with trailing axes (latitude, longitude), latitude
and longitude in degrees (1-D), a and f of the ellipsoid.
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels import geodesy, integrals

__all__ = ["planetary_vorticity", "relative_vorticity"]

_POLE_TOLERANCE = 1e-9


def planetary_vorticity(lat_deg, omega: float) -> np.ndarray:
    """The planetary vorticity 2 Ω sin φ (s-1).

    Examples
    --------
    >>> float(np.round(planetary_vorticity(45.0, 7.292115e-5), 10))
    0.0001031261
    """
    return 2.0 * omega * np.sin(np.deg2rad(np.asarray(lat_deg, dtype=np.float64)))


def relative_vorticity(u, v, *, lat_deg, lon_deg, a: float, f: float, periodic: bool):
    """Upward relative vorticity (s-1) on trailing (latitude, longitude) axes.

    Examples
    --------
    >>> lat = np.linspace(-60.0, 60.0, 121); lon = np.arange(0.0, 360.0, 1.0)
    >>> omega, a = 7.292115e-5, 6371000.0
    >>> u = omega * a * np.cos(np.deg2rad(lat))[:, None] * np.ones(lon.size)
    >>> z = relative_vorticity(u, 0 * u, lat_deg=lat, lon_deg=lon, a=a, f=0.0, periodic=True)
    >>> bool(np.allclose(z[:, 0], 2 * omega * np.sin(np.deg2rad(lat)), rtol=1e-3, atol=1e-12))
    True
    """
    u = np.asarray(u, dtype=np.float64)
    v = np.asarray(v, dtype=np.float64)
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    lon = np.deg2rad(np.asarray(lon_deg, dtype=np.float64))
    sin_lat = np.sin(lat)
    p = geodesy.axis_distance(lat, 0.0, a, f)
    m = geodesy.meridian_radius(sin_lat, a, f)
    pole = np.abs(np.abs(lat) - 0.5 * np.pi) < _POLE_TOLERANCE
    p = np.where(pole, 0.0, p)
    dv = _d_lon(v, lon, periodic)
    pu = u * p[:, None]
    dpu = np.gradient(pu, lat, axis=-2, edge_order=2)
    with np.errstate(divide="ignore", invalid="ignore"):
        zeta = dv / p[:, None] - dpu / (p * m)[:, None]
    for j in np.flatnonzero(pole):
        zeta[..., j, :] = _pole_value(u, lat, lon, j, a, f, periodic)[..., None]
    return zeta


def _d_lon(x: np.ndarray, lon: np.ndarray, periodic: bool) -> np.ndarray:
    if not periodic:
        return np.gradient(x, lon, axis=-1, edge_order=2)
    padded = np.concatenate([x[..., -1:], x, x[..., :1]], axis=-1)
    coords = np.concatenate([lon[-1:] - 2 * np.pi, lon, lon[:1] + 2 * np.pi])
    return np.gradient(padded, coords, axis=-1)[..., 1:-1]


def _pole_value(u, lat, lon, j, a, f, periodic) -> np.ndarray:
    """Mean vorticity of the polar cap inside the ring next to pole row ``j``."""
    if not periodic:
        return np.full(u.shape[:-2], np.nan)
    ring = j + 1 if j + 1 < lat.size and j == 0 else j - 1
    sign = 1.0 if lat[j] > 0 else -1.0
    p_ring = geodesy.axis_distance(lat[ring], 0.0, a, f)
    widths = np.diff(integrals.cell_edges(lon)) if lon.size > 1 else np.array([2 * np.pi])
    circulation = sign * p_ring * np.sum(u[..., ring, :] * widths, axis=-1)
    cap = abs(integrals.zone_area(lat[j], a, f) - integrals.zone_area(lat[ring], a, f))
    return circulation / (cap * np.sum(widths))
