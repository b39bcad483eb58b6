"""Orientation of a body from its pole and prime meridian, in pure numpy.

A body's north pole points to right ascension α0 and declination δ0 in the
inertial axes (ICRF), and its prime meridian lies at the angle W, measured
eastward along the body's equator from the ascending node Q of that equator
on the ICRF equator. Q sits at right ascension α0 + 90°, so

    r_ICRF = Rz(α0 + 90°) Rx(90° - δ0) Rz(W) r_body

with Rz, Rx turning vectors counter-clockwise about z and x. The product of
the first two is :func:`pole_axes_to_icrf`: it takes the body's own
non-rotating axes (z along the pole, x towards Q) to the ICRF, and Rz(W)
takes body-fixed axes to those. α0, δ0 and W follow the expressions of the
IAU Working Group on Cartographic Coordinates and Rotational Elements
(linear in time plus periodic terms), evaluated by :func:`element_angles`.

Times are two-part Julian dates of TDB ``(jd1, jd2)``; angles in radians
unless a name says degrees.
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels.rotation import J2000, matrix_array

__all__ = [
    "DAYS_PER_CENTURY",
    "body_to_icrf",
    "element_angles",
    "elements_series",
    "icrf_rotation_vector",
    "pole_axes_to_icrf",
    "pole_vector",
]

DAYS_PER_CENTURY = 36525.0
_TURN_DEG = 360.0


def elements_series(base, slope, terms, x, centuries, trig):
    """``base + slope * x + Σ a trig(phase + rate * centuries)`` in degrees.

    ``terms`` is a sequence of (amplitude, phase, phase rate per century),
    degrees; ``trig`` is ``np.sin`` or ``np.cos``.
    """
    out = base + slope * np.asarray(x, dtype=np.float64)
    for amplitude, phase, rate in terms:
        out = out + amplitude * trig(np.deg2rad(phase + rate * centuries))
    return out


def element_angles(elements, jd1, jd2):
    """α0, δ0 and W (radians; W in [0, 2π)) of a body at two-part TDB Julian dates.

    ``elements`` carries ``pole_ra``, ``pole_dec`` ((deg, deg per century)),
    ``meridian`` ((deg, deg per day)) and the three tuples of periodic terms,
    as :class:`frameshift.frames.iau2015.RotationalElements` does. The
    secular part of W is summed as whole days and day fraction separately,
    each reduced to one turn, so a rate of hundreds of degrees a day keeps
    full precision decades from J2000.0.
    """
    jd1 = np.asarray(jd1, dtype=np.float64)
    jd2 = np.asarray(jd2, dtype=np.float64)
    days = (jd1 - J2000) + jd2
    centuries = days / DAYS_PER_CENTURY
    ra = elements_series(*elements.pole_ra, elements.pole_ra_terms, centuries, centuries, np.sin)
    dec = elements_series(*elements.pole_dec, elements.pole_dec_terms, centuries, centuries, np.cos)
    w0, w_rate = elements.meridian
    whole = np.round(jd1 - J2000)
    rest = (jd1 - J2000 - whole) + jd2
    secular = np.fmod(w_rate * whole, _TURN_DEG) + np.fmod(w_rate * rest, _TURN_DEG)
    w = elements_series(w0, 1.0, elements.meridian_terms, secular, centuries, np.sin)
    return np.deg2rad(ra), np.deg2rad(dec), np.mod(np.deg2rad(w), 2.0 * np.pi)


def pole_vector(alpha0, delta0):
    """Unit vector of the pole on ICRF axes, ``(..., 3)``."""
    cd = np.cos(delta0)
    parts = np.broadcast_arrays(cd * np.cos(alpha0), cd * np.sin(alpha0), np.sin(delta0))
    return np.stack(parts, axis=-1)


def pole_axes_to_icrf(alpha0, delta0):
    """Matrices ``(..., 3, 3)`` from the body's pole axes to the ICRF: Rz(α0 + 90°) Rx(90° - δ0).

    Columns: the node Q (x), the direction 90° ahead of it on the body's
    equator (y) and the pole (z), each on ICRF axes.
    """
    alpha0, delta0 = np.broadcast_arrays(
        np.asarray(alpha0, dtype=np.float64), np.asarray(delta0, dtype=np.float64)
    )
    sa, ca = np.sin(alpha0), np.cos(alpha0)
    sd, cd = np.sin(delta0), np.cos(delta0)
    out = matrix_array(alpha0.shape)
    # Rz(α + 90°) = [[-sin α, -cos α, 0], [cos α, -sin α, 0], [0, 0, 1]]
    # Rx(90° - δ) = [[1, 0, 0], [0, sin δ, -cos δ], [0, cos δ, sin δ]]
    out[..., 0, 0], out[..., 0, 1], out[..., 0, 2] = -sa, -ca * sd, ca * cd
    out[..., 1, 0], out[..., 1, 1], out[..., 1, 2] = ca, -sa * sd, sa * cd
    out[..., 2, 0], out[..., 2, 1], out[..., 2, 2] = 0.0, cd, sd
    return out


def body_to_icrf(alpha0, delta0, w):
    """Matrices ``(..., 3, 3)`` with r_ICRF = M r_body: Rz(α0 + 90°) Rx(90° - δ0) Rz(W)."""
    pole = pole_axes_to_icrf(alpha0, delta0)
    w = np.asarray(w, dtype=np.float64)
    shape = np.broadcast_shapes(pole.shape[:-2], w.shape)
    c, s = np.broadcast_to(np.cos(w), shape), np.broadcast_to(np.sin(w), shape)
    pole = np.broadcast_to(pole, (*shape, 3, 3))
    out = matrix_array(shape)
    for i in range(3):
        out[..., i, 0] = pole[..., i, 0] * c + pole[..., i, 1] * s
        out[..., i, 1] = pole[..., i, 1] * c - pole[..., i, 0] * s
        out[..., i, 2] = pole[..., i, 2]
    return out


def icrf_rotation_vector(alpha0, delta0, rate):
    """Rotation vector on ICRF axes, ``(..., 3)`` rad s-1: the rate along the pole.

    The slow drift of the pole (tenths of a degree a century) adds a part
    some 1e-9 of the spin and is left out.
    """
    return np.asarray(rate, dtype=np.float64)[..., None] * pole_vector(alpha0, delta0)
