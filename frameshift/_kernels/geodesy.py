"""Ellipsoid geometry: geodetic <-> body-fixed Cartesian, radii, local basis.

Conventions: geodetic latitude ``lat`` and longitude ``lon`` in radians,
ellipsoidal height ``h`` in metres, semi-major axis ``a`` in metres and
flattening ``f`` (0 for a sphere). Body-fixed Cartesian axes: z along the
rotation axis, x through the prime meridian, y completing a right-handed set.
Local axes are east, north, up (ENU), up along the ellipsoid normal.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "axis_distance",
    "cartesian_to_enu",
    "cartesian_to_geodetic",
    "enu_basis",
    "enu_to_cartesian",
    "geodetic_to_cartesian",
    "meridian_radius",
    "prime_vertical_radius",
]


def _e2(f: float) -> float:
    return f * (2.0 - f)


def prime_vertical_radius(sin_lat: np.ndarray, a: float, f: float) -> np.ndarray:
    """Radius of curvature in the prime vertical, N = a / sqrt(1 - e² sin²φ)."""
    return a / np.sqrt(1.0 - _e2(f) * sin_lat * sin_lat)


def meridian_radius(sin_lat: np.ndarray, a: float, f: float) -> np.ndarray:
    """Meridian radius of curvature, M = a (1 - e²) / (1 - e² sin²φ)^(3/2)."""
    e2 = _e2(f)
    return a * (1.0 - e2) / (1.0 - e2 * sin_lat * sin_lat) ** 1.5


def axis_distance(lat: np.ndarray, h: np.ndarray, a: float, f: float) -> np.ndarray:
    """Distance from the rotation axis, p = (N + h) cos φ, in metres."""
    sin_lat = np.sin(lat)
    return (prime_vertical_radius(sin_lat, a, f) + h) * np.cos(lat)


def geodetic_to_cartesian(
    lat: np.ndarray, lon: np.ndarray, h: np.ndarray, a: float, f: float
) -> np.ndarray:
    """Geodetic latitude, longitude, height to body-fixed x, y, z (trailing axis).

    Standard closed form, e.g. NIMA TR8350.2 (WGS 84) eq. 4-14:
    x = (N + h) cos φ cos λ, y = (N + h) cos φ sin λ, z = (N (1 - e²) + h) sin φ.
    """
    lat, lon, h = np.broadcast_arrays(lat, lon, h)
    sin_lat = np.sin(lat)
    cos_lat = np.cos(lat)
    n = prime_vertical_radius(sin_lat, a, f)
    p = (n + h) * cos_lat
    out = np.empty((*lat.shape, 3), dtype=np.result_type(lat, lon, h, np.float64))
    out[..., 0] = p * np.cos(lon)
    out[..., 1] = p * np.sin(lon)
    out[..., 2] = (n * (1.0 - _e2(f)) + h) * sin_lat
    return out


def cartesian_to_geodetic(
    xyz: np.ndarray, a: float, f: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Body-fixed x, y, z (trailing axis) to geodetic latitude, longitude, height.

    Closed form of Vermeille, H. (2002), "Direct transformation from geocentric
    coordinates to geodetic coordinates", Journal of Geodesy 76, 451-454,
    valid everywhere outside a small region around the centre of the body
    (well inside any planet); exact to rounding, no iteration.
    """
    xyz = np.asarray(xyz, dtype=np.float64)
    x, y, z = xyz[..., 0], xyz[..., 1], xyz[..., 2]
    e2 = _e2(f)
    e4 = e2 * e2
    rho2 = x * x + y * y
    rho = np.sqrt(rho2)
    p = rho2 / (a * a)
    q = (1.0 - e2) * z * z / (a * a)
    r = (p + q - e4) / 6.0
    with np.errstate(divide="ignore", invalid="ignore"):
        if e2 == 0.0:
            k = np.sqrt(p + q)
        else:
            s = e4 * p * q / (4.0 * r**3)
            t = np.cbrt(1.0 + s + np.sqrt(s * (2.0 + s)))
            u = r * (1.0 + t + 1.0 / t)
            v = np.sqrt(u * u + e4 * q)
            w = e2 * (u + v - q) / (2.0 * v)
            k = np.sqrt(u + v + w * w) - w
        d = k * rho / (k + e2)
        dz = np.hypot(d, z)
        lat = 2.0 * np.arctan2(z, d + dz)
        h = (k + e2 - 1.0) / k * dz
    lon = np.arctan2(y, x)
    return lat, lon, h


def enu_basis(lat: np.ndarray, lon: np.ndarray) -> np.ndarray:
    """Unit vectors east, north, up in body-fixed axes.

    Returns an array of shape ``(..., 3, 3)`` whose ``[..., i, :]`` is the
    i-th local unit vector (east, north, up) in body-fixed x, y, z. It is the
    rotation matrix that takes body-fixed components to ENU components.
    """
    lat, lon = np.broadcast_arrays(lat, lon)
    sl, cl = np.sin(lat), np.cos(lat)
    so, co = np.sin(lon), np.cos(lon)
    out = np.empty((*lat.shape, 3, 3), dtype=np.result_type(lat, lon, np.float64))
    out[..., 0, 0], out[..., 0, 1], out[..., 0, 2] = -so, co, 0.0
    out[..., 1, 0], out[..., 1, 1], out[..., 1, 2] = -sl * co, -sl * so, cl
    out[..., 2, 0], out[..., 2, 1], out[..., 2, 2] = cl * co, cl * so, sl
    return out


def enu_to_cartesian(lat: np.ndarray, lon: np.ndarray, enu: np.ndarray) -> np.ndarray:
    """Rotate vectors from local east/north/up components to body-fixed x, y, z."""
    basis = enu_basis(lat, lon)
    return np.einsum("...ij,...i->...j", basis, enu)


def cartesian_to_enu(lat: np.ndarray, lon: np.ndarray, xyz: np.ndarray) -> np.ndarray:
    """Rotate vectors from body-fixed x, y, z components to local east/north/up."""
    basis = enu_basis(lat, lon)
    return np.einsum("...ij,...j->...i", basis, xyz)
