"""Velocity, acceleration and the real force along a track of positions, in numpy.

Positions (geodetic latitude and longitude in degrees, ellipsoidal height in
m) at times t (s) on a trailing axis are placed in body-fixed Cartesian axes
X(t), which turn with the body. Differencing X in time gives the velocity V
and acceleration A relative to the rotating frame; both are then put on the
local east/north/up axes of each point (so A includes what the turning of
those axes along the path adds, the curvature terms). Newton's second law in a
frame turning steadily at Ω about z (e.g. Goldstein, Classical Mechanics, ch. 4):

    A = F/m - 2 Ω × V - Ω × (Ω × X),

so the real force per unit mass is F/m = A - (Coriolis + centrifugal),
the two apparent terms being -2 Ω × V and -Ω × (Ω × X).

Differences: three-point formulas on the actual (possibly uneven) times,
exact for quadratics inside the track; at the two ends, three points for the
velocity and four for the acceleration (exact for quadratics and cubics). The
error is second order in the time step for evenly spaced samples.
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels import geodesy

__all__ = ["OUTPUTS", "differentiate", "stencil_weights", "track_terms"]

#: what :func:`track_terms` returns, each with east, north, up components
OUTPUTS = ("velocity", "acceleration", "coriolis", "centrifugal", "force")


def stencil_weights(nodes: np.ndarray, at: float, order: int) -> np.ndarray:
    """Finite-difference weights of the ``order``-th derivative at ``at`` (Fornberg 1988).

    Examples
    --------
    >>> stencil_weights(np.array([0.0, 1.0, 2.0]), 1.0, 2).tolist()
    [1.0, -2.0, 1.0]
    """
    n = len(nodes)
    c = np.zeros((n, order + 1))
    c1, c4 = 1.0, nodes[0] - at
    c[0, 0] = 1.0
    for i in range(1, n):
        mn = min(i, order)
        c2, c5 = 1.0, c4
        c4 = nodes[i] - at
        for j in range(i):
            c3 = nodes[i] - nodes[j]
            c2 *= c3
            if j == i - 1:
                for k in range(mn, 0, -1):
                    c[i, k] = c1 * (k * c[i - 1, k - 1] - c5 * c[i - 1, k]) / c2
                c[i, 0] = -c1 * c5 * c[i - 1, 0] / c2
            for k in range(mn, 0, -1):
                c[j, k] = (c4 * c[j, k] - k * c[j, k - 1]) / c3
            c[j, 0] = c4 * c[j, 0] / c3
        c1 = c2
    return c[:, order]


def differentiate(x: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First and second time derivatives of ``x`` along its trailing axis (times ``t``).

    Examples
    --------
    >>> t = np.array([0.0, 1.0, 3.0, 4.0, 6.0])
    >>> d1, d2 = differentiate(t**2, t)
    >>> bool(np.allclose(d1, 2 * t) and np.allclose(d2, 2.0))
    True
    """
    x = np.asarray(x, dtype=np.float64)
    t = np.asarray(t, dtype=np.float64)
    if t.size < 4:
        raise ValueError("a track needs at least 4 positions to difference")
    h0 = t[1:-1] - t[:-2]
    h1 = t[2:] - t[1:-1]
    xm, x0, xp = x[..., :-2], x[..., 1:-1], x[..., 2:]
    d1 = np.empty_like(x)
    d2 = np.empty_like(x)
    d1[..., 1:-1] = (-h1 / (h0 * (h0 + h1)) * xm + (h1 - h0) / (h0 * h1) * x0
                     + h0 / (h1 * (h0 + h1)) * xp)
    d2[..., 1:-1] = 2.0 * (xm / (h0 * (h0 + h1)) - x0 / (h0 * h1) + xp / (h1 * (h0 + h1)))
    for end, idx in ((0, [0, 1, 2, 3]), (-1, [-1, -2, -3, -4])):
        nodes = t[idx]
        w1 = stencil_weights(nodes[:3], nodes[0], 1)
        w2 = stencil_weights(nodes, nodes[0], 2)
        d1[..., end] = x[..., idx[:3]] @ w1
        d2[..., end] = x[..., idx] @ w2
    return d1, d2


def track_terms(lat_deg, lon_deg, h, *, seconds, omega: float, a: float, f: float):
    """Velocity, acceleration, apparent terms and real force per unit mass along tracks.

    ``lat_deg``, ``lon_deg``, ``h`` have the time on their trailing axis.
    Returns an array of shape ``(..., 5, 3, n)``: :data:`OUTPUTS` by east,
    north, up, by time (m s-1 for the velocity, m s-2 for the rest).
    """
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    lon = np.deg2rad(np.asarray(lon_deg, dtype=np.float64))
    lat, lon, h = np.broadcast_arrays(lat, lon, np.asarray(h, dtype=np.float64))
    xyz = geodesy.geodetic_to_cartesian(lat, lon, h, a, f)  # (..., n, 3)
    xyz_t = np.moveaxis(xyz, -1, -2)  # (..., 3, n)
    vel, acc = differentiate(xyz_t, seconds)
    coriolis = np.zeros_like(vel)
    coriolis[..., 0, :] = 2.0 * omega * vel[..., 1, :]
    coriolis[..., 1, :] = -2.0 * omega * vel[..., 0, :]
    centrifugal = np.zeros_like(vel)
    centrifugal[..., 0, :] = omega * omega * xyz_t[..., 0, :]
    centrifugal[..., 1, :] = omega * omega * xyz_t[..., 1, :]
    force = acc - coriolis - centrifugal
    stacked = np.stack([vel, acc, coriolis, centrifugal, force], axis=-3)  # (..., 5, 3, n)
    basis = geodesy.enu_basis(lat, lon)  # (..., n, 3 enu, 3 xyz)
    return np.einsum("...tij,...kjt->...kit", basis, stacked)
