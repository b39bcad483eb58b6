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
    "rotation_about_z",
    "to_inertial_cartesian",
    "to_rotating_cartesian",
]

#: Julian date of the J2000.0 epoch (2000 January 1, 12 h).
J2000 = 2451545.0
_TWO_PI = 2.0 * np.pi


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
    turns = np.fmod(jd1, 1.0) + np.fmod(jd2, 1.0) + 0.7790572732640 + 0.00273781191135448 * tu
    return np.mod(_TWO_PI * turns, _TWO_PI)


def rotation_about_z(angle: np.ndarray) -> np.ndarray:
    """Matrices ``(..., 3, 3)`` that turn body-fixed components into the axes
    of a frame the body has rotated by ``angle`` (right-handed, about z) from:
    r_fixed-space = R(angle) @ r_body.
    """
    angle = np.asarray(angle, dtype=np.float64)
    c, s = np.cos(angle), np.sin(angle)
    out = np.zeros((*angle.shape, 3, 3))
    out[..., 0, 0], out[..., 0, 1] = c, -s
    out[..., 1, 0], out[..., 1, 1] = s, c
    out[..., 2, 2] = 1.0
    return out


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
