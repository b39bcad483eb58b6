"""Matrices from body-fixed axes to inertial axes at given times.

``"cirs"``: the body's rotation angle only (for the Earth, the Earth Rotation
Angle of UT1, which takes the terrestrial intermediate frame to the celestial
intermediate frame, CIRS). ``"gcrs"``: for the Earth, also precession-nutation
(IAU 2006/2000A via pyerfa's ``c2i06a``), giving GCRS axes. Polar motion is not
applied: it moves Earth-fixed points by about 10 m (IERS Conventions 2010, ch. 5).
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels.rotation import rotation_about_z
from frameshift.errors import ConventionError, check_choice
from frameshift.timescales import _require_erfa, utc_to_tt

__all__ = ["CELESTIAL_AXES", "body_to_inertial_matrix"]

CELESTIAL_AXES = ("cirs", "gcrs")


def body_to_inertial_matrix(frame, jd1, jd2, dut1=0.0, celestial: str = "cirs") -> np.ndarray:
    """Matrices ``(..., 3, 3)`` with r_inertial = M @ r_body at UTC dates ``jd1 + jd2``.

    Parameters
    ----------
    frame : Planet
    jd1, jd2 : array_like
        Two-part UTC Julian dates.
    dut1 : float or array_like
        UT1 - UTC in seconds (broadcast against the dates).
    celestial : {"cirs", "gcrs"}

    Examples
    --------
    >>> from frameshift import EARTH
    >>> m = body_to_inertial_matrix(EARTH, np.array([2451545.0]), np.array([0.0]))
    >>> m.shape
    (1, 3, 3)
    """
    check_choice("celestial", celestial, CELESTIAL_AXES)
    jd1 = np.asarray(jd1, dtype=np.float64)
    jd2 = np.asarray(jd2, dtype=np.float64)
    ut1_2 = jd2 + np.asarray(dut1, dtype=np.float64) / 86400.0
    matrix = rotation_about_z(frame.rotation_angle(jd1, ut1_2))
    if celestial == "cirs":
        return matrix
    if frame.angle_model != "earth_rotation_angle":
        raise ConventionError(
            f"celestial='gcrs' applies Earth precession-nutation; frame {frame.name!r} is "
            "not the Earth. Use celestial='cirs' (rotation angle only)",
            variable="celestial",
            expected="'cirs' for this frame",
            found="'gcrs'",
        )
    erfa = _require_erfa()
    tt1, tt2 = utc_to_tt(jd1, jd2)
    c2i = erfa.c2i06a(tt1, tt2)  # r_CIRS = C2I @ r_GCRS
    return np.einsum("...ji,...jk->...ik", c2i, matrix)
