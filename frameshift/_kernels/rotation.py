"""Rotation of the body-fixed frame: angles, matrices, frame velocity.

Times are two-part Julian dates ``(jd1, jd2)``: their sum is the date, and
splitting it (a large whole part and a small fraction) keeps the full float64
precision that a single Julian date loses (about 20 microseconds, 1e-9 rad of
Earth rotation).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "J2000",
    "apply_matrix",
    "earth_rotation_angle",
    "frame_velocity",
    "matrix_array",
    "rotation_about_z",
    "terrestrial_to_celestial",
    "to_inertial_cartesian",
    "to_rotating_cartesian",
]

#: Julian date of the J2000.0 epoch (2000 January 1, 12 h).
J2000 = 2451545.0
_TWO_PI = 2.0 * np.pi
_BLOCK = 1 << 15  # elements per block of per-date work


def earth_rotation_angle(jd1: np.ndarray, jd2: np.ndarray) -> np.ndarray:
    """Earth Rotation Angle (radians, in [0, 2π)) for a two-part UT1 Julian date.

    IAU 2000 Resolution B1.8; IERS Conventions (2010) eq. 5.15:
    θ = 2π (0.7790572732640 + 1.00273781191135448 Tu), Tu = JD(UT1) - 2451545.0.
    The whole days of ``Tu`` contribute only their fractional turns, which
    is evaluated as frac(jd1) + frac(jd2) + 0.00273781191135448 Tu so that no
    large number is multiplied by the rate.
    """
    jd1 = np.asarray(jd1, dtype=np.float64)
    jd2 = np.asarray(jd2, dtype=np.float64)
    tu = (jd1 - J2000) + jd2
    # x - trunc(x) is fmod(x, 1) exactly (the subtraction is exact), at a fraction of the cost
    turns = (jd1 - np.trunc(jd1)) + (jd2 - np.trunc(jd2))
    turns += 0.7790572732640
    turns += 0.00273781191135448 * tu
    return np.mod(_TWO_PI * turns, _TWO_PI)


def matrix_array(shape: tuple[int, ...], zeros: bool = False) -> np.ndarray:
    """An array of 3 × 3 matrices, shape ``(*shape, 3, 3)``, stored element by element.

    Each element ``[..., i, j]`` is contiguous over ``shape`` (the array is a
    transposed view of a ``(3, 3, *shape)`` block), so kernels that combine
    matrix elements with per-point arrays read them at unit stride.
    """
    block = np.zeros((3, 3, *shape)) if zeros else np.empty((3, 3, *shape))
    return np.moveaxis(block, (0, 1), (-2, -1))


def rotation_about_z(angle: np.ndarray) -> np.ndarray:
    """Matrices ``(..., 3, 3)`` that turn body-fixed components into the axes
    of a frame the body has rotated by ``angle`` (right-handed, about z) from:
    r_fixed-space = R(angle) @ r_body.
    """
    angle = np.asarray(angle, dtype=np.float64)
    c, s = np.cos(angle), np.sin(angle)
    out = matrix_array(angle.shape, zeros=True)
    out[..., 0, 0], out[..., 0, 1] = c, -s
    out[..., 1, 0], out[..., 1, 1] = s, c
    out[..., 2, 2] = 1.0
    return out


def terrestrial_to_celestial(
    x: np.ndarray, y: np.ndarray, s: np.ndarray, angle: np.ndarray
) -> np.ndarray:
    """Matrices ``(..., 3, 3)`` from body-fixed (terrestrial intermediate) axes to GCRS.

    M = Q(X, Y, s) R3(-θ), with the celestial intermediate pole coordinates
    X, Y, the CIO locator s and the Earth Rotation Angle θ (all radians),
    polar motion not applied. Q is the closed form of IERS Conventions (2010)
    eq. 5.10, Q = P(X, Y) R3(s) with P = [[1 - aX², -aXY, X], [-aXY, 1 - aY², Y],
    [-X, -Y, 1 - a(X² + Y²)]] and a = 1 / (1 + cos d), cos d = sqrt(1 - X² - Y²).
    R3(s) R3(-θ) = R3(s - θ) is :func:`rotation_about_z` of θ - s, so
    M[:, 0] = c P[:, 0] + sn P[:, 1], M[:, 1] = c P[:, 1] - sn P[:, 0], M[:, 2] = P[:, 2]
    with c, sn the cosine and sine of θ - s.
    """
    x, y, s, angle = (np.asarray(q, dtype=np.float64) for q in (x, y, s, angle))
    shape = np.broadcast_shapes(x.shape, y.shape, s.shape, angle.shape)
    out = matrix_array(shape)
    if len(shape) == 1 and shape[0] > _BLOCK:  # many dates: in blocks that stay in cache
        x, y, s, angle = np.broadcast_arrays(x, y, s, angle)
        for start in range(0, shape[0], _BLOCK):
            part = slice(start, start + _BLOCK)
            _fill_terrestrial_to_celestial(x[part], y[part], s[part], angle[part], out[part])
        return out
    _fill_terrestrial_to_celestial(x, y, s, angle, out)
    return out


def _fill_terrestrial_to_celestial(x, y, s, angle, out) -> None:
    r2 = x * x + y * y
    a = 1.0 / (1.0 + np.sqrt(1.0 - r2))
    axy = a * x * y
    p = (
        (1.0 - a * x * x, -axy, x),
        (-axy, 1.0 - a * y * y, y),
        (-x, -y, 1.0 - a * r2),
    )
    phi = angle - s
    c, sn = np.cos(phi), np.sin(phi)
    for i, (p0, p1, p2) in enumerate(p):
        out[..., i, 0] = c * p0 + sn * p1
        out[..., i, 1] = c * p1 - sn * p0
        out[..., i, 2] = p2


def apply_matrix(matrix: np.ndarray, vec: np.ndarray) -> np.ndarray:
    """Matrix-vector product on trailing axes, broadcasting the leading ones."""
    return np.einsum("...ij,...j->...i", matrix, vec)


def frame_velocity(omega: np.ndarray, r: np.ndarray) -> np.ndarray:
    """Velocity of a point fixed in the rotating frame, Ω × r (trailing axis)."""
    return np.cross(omega, r)


def to_inertial_cartesian(
    r_body: np.ndarray,
    v_body: np.ndarray,
    omega: np.ndarray,
    matrix: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Body-fixed position and rotating-frame velocity to inertial ones.

    r_I = M r_B and v_I = M (v_B + Ω × r_B), with ``matrix`` M taking
    body-fixed components to inertial ones at the same instant and ``omega``
    the rotation vector in body-fixed axes.
    """
    v_abs = v_body + frame_velocity(omega, r_body)
    return apply_matrix(matrix, r_body), apply_matrix(matrix, v_abs)


def to_rotating_cartesian(
    r_inertial: np.ndarray,
    v_inertial: np.ndarray,
    omega: np.ndarray,
    matrix: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Inverse of :func:`to_inertial_cartesian`: r_B = Mᵀ r_I, v_B = Mᵀ v_I - Ω × r_B."""
    mt = np.swapaxes(matrix, -1, -2)
    r_body = apply_matrix(mt, r_inertial)
    v_body = apply_matrix(mt, v_inertial) - frame_velocity(omega, r_body)
    return r_body, v_body
