"""Matrices from body-fixed axes to inertial axes at given times.

``"cirs"``: the body's rotation angle only (for the Earth, the Earth Rotation
Angle of UT1, which takes the terrestrial intermediate frame to the celestial
intermediate frame, CIRS). ``"gcrs"``: for the Earth, also precession-nutation
(IAU 2006/2000A: the celestial intermediate pole X, Y and the CIO locator s
from pyerfa's ``xys06a``), giving GCRS axes. Polar motion is not applied: it
moves Earth-fixed points by about 10 m (IERS Conventions 2010, ch. 5).

Precession-nutation changes slowly (its fastest terms have periods of days),
while one evaluation of the IAU 2006/2000A series costs some 30 µs. For more
distinct times than nodes, X, Y and s are evaluated on nodes 12 h apart and
interpolated to each time with the 12-point Lagrange polynomial centred on
its node interval (tabulated on a grid 32 times finer, then cubic): the
interpolation error is below 2e-15 rad (about 1e-8 m at the Earth's surface,
the float64 rounding of the series itself). A span with a leap second
is interpolated in TT, so the step in UTC - TT does not enter the polynomial.
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels.rotation import rotation_about_z, terrestrial_to_celestial
from frameshift.errors import ConventionError, check_choice
from frameshift.frames.timescales import require_erfa, utc_to_tt

__all__ = [
    "AXES_DEFINITIONS",
    "CELESTIAL_AXES",
    "body_to_inertial_matrix",
    "cip_coordinates",
    "resolve_axes",
]

CELESTIAL_AXES = ("cirs", "gcrs", "pole", "icrf")
#: What each choice of inertial axes is, written beside ``inertial_axes``
AXES_DEFINITIONS = {
    "cirs": "Earth's celestial intermediate reference system: Earth Rotation Angle only",
    "gcrs": "geocentric celestial reference system: rotation angle and precession-nutation",
    "pole": "the body's own non-rotating axes: z along its pole, x towards the ascending "
    "node of its equator on the ICRF equator (angle W of the IAU WGCCRE 2015 report)",
    "icrf": "ICRF axes through the body's pole (alpha0, delta0) and prime meridian W of the "
    "IAU WGCCRE 2015 report",
}

#: Spacing of the interpolation nodes for X, Y, s (days), and points per polynomial.
NODE_STEP = 0.5
NODE_POINTS = 12
_OFFSETS = np.arange(1 - NODE_POINTS // 2, NODE_POINTS // 2 + 1)  # -5 .. 6 around an interval
_BLOCK = 1 << 15


def resolve_axes(frame, celestial: str) -> str:
    """The inertial axes a choice means for ``frame``.

    For the Earth (a frame on the Earth Rotation Angle) ``"pole"`` is
    ``"cirs"``; for any other body ``"cirs"`` is its own ``"pole"`` axes, and
    ``"gcrs"`` is refused. ``"icrf"`` needs a named body's IAU elements.

    Examples
    --------
    >>> from frameshift import EARTH, MARS
    >>> resolve_axes(EARTH, "pole"), resolve_axes(MARS, "cirs")
    ('cirs', 'pole')
    """
    from frameshift.frames.planets import iau_elements

    check_choice("celestial", celestial, CELESTIAL_AXES)
    if getattr(frame, "uses_earth_rotation_angle", False):
        if celestial == "icrf":
            raise ConventionError(
                "celestial='icrf' applies a body's IAU pole and prime meridian; for the Earth "
                "use celestial='gcrs' (precession-nutation, IAU 2006/2000A)",
                variable="celestial",
                expected="'cirs', 'gcrs' or 'pole' for the Earth",
                found="'icrf'",
            )
        return "cirs" if celestial == "pole" else celestial
    if celestial in ("cirs", "pole"):
        return "pole"
    if celestial == "gcrs":
        raise ConventionError(
            f"celestial='gcrs' applies Earth precession-nutation; frame {frame.name!r} is "
            "not the Earth. Use celestial='pole' (its own axes) or 'icrf' (named bodies)",
            variable="celestial",
            expected="'pole' or 'icrf' for this frame",
            found="'gcrs'",
        )
    if celestial == "icrf" and iau_elements(frame) is None:
        raise ConventionError(
            f"celestial='icrf' needs the pole and prime meridian of a named body (MARS, "
            f"VENUS, JUPITER, SATURN, TITAN); frame {frame.name!r} has none. Use "
            "celestial='pole' (the body's own non-rotating axes)",
            variable="celestial",
            expected="'pole' for this frame",
            found="'icrf'",
        )
    return celestial


def body_to_inertial_matrix(frame, jd1, jd2, dut1=0.0, celestial: str = "cirs") -> np.ndarray:
    """Matrices ``(..., 3, 3)`` with r_inertial = M @ r_body at UTC dates ``jd1 + jd2``.

    Parameters
    ----------
    frame : Planet
    jd1, jd2 : array_like
        Two-part UTC Julian dates.
    dut1 : float or array_like
        UT1 - UTC in seconds (broadcast against the dates).
    celestial : {"cirs", "gcrs", "pole", "icrf"}
        See :func:`resolve_axes`.

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
    celestial = resolve_axes(frame, celestial)
    if celestial in ("pole", "icrf"):  # a body other than the Earth
        return _body_matrix(frame, jd1, jd2, celestial)
    ut1_2 = jd2 + np.asarray(dut1, dtype=np.float64) / 86400.0
    angle = frame.rotation_angle(jd1, ut1_2)
    if celestial == "cirs":
        return rotation_about_z(angle)
    x, y, s = cip_coordinates(jd1, jd2)
    return terrestrial_to_celestial(x, y, s, angle)


def _body_matrix(frame, jd1, jd2, axes: str) -> np.ndarray:
    """Body-fixed -> pole axes (Rz(W)) or ICRF (Rz(α0 + 90°) Rx(90° - δ0) Rz(W)) at UTC dates.

    For a named body W, α0, δ0 follow the IAU 2015 expressions in TDB
    (taken as TT from UTC with pyerfa: TDB - TT is under 2 ms). Any other
    frame turns by its own rotation angle about its pole.
    """
    from frameshift._kernels import orientation
    from frameshift.frames.planets import iau_elements

    elements = iau_elements(frame)
    if elements is None:
        return rotation_about_z(frame.rotation_angle(jd1, jd2))
    tt1, tt2 = utc_to_tt(jd1, jd2)
    ra, dec, w = orientation.element_angles(elements, tt1, tt2)
    if axes == "pole":
        return rotation_about_z(w)
    return orientation.body_to_icrf(ra, dec, w)


def cip_coordinates(jd1, jd2) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """CIP X, Y and CIO locator s (radians, IAU 2006/2000A) at UTC dates ``jd1 + jd2``.

    Exact (pyerfa ``xys06a`` at each date) for fewer dates than interpolation
    nodes; otherwise interpolated from nodes :data:`NODE_STEP` days apart
    (see the module docstring).

    Examples
    --------
    >>> x, y, s = cip_coordinates(np.array([2451545.0]), np.array([0.0]))
    >>> bool(abs(x[0]) < 1e-4 and abs(y[0]) < 1e-4 and abs(s[0]) < 1e-7)  # small angles, rad
    True
    """
    erfa = require_erfa()
    jd1, jd2 = np.broadcast_arrays(np.asarray(jd1, np.float64), np.asarray(jd2, np.float64))
    shape = jd1.shape
    j1, j2 = jd1.ravel(), jd2.ravel()
    grid = _node_grid(j1, j2)
    if grid is None:
        xys = erfa.xys06a(*utc_to_tt(j1, j2))
        return tuple(np.reshape(q, shape) for q in xys)
    ref, t, first, count = grid
    node_t = (first + np.arange(count)) * NODE_STEP
    tt1, tt2 = utc_to_tt(np.full(count, ref), node_t)
    offset = ((tt1 - ref) + tt2) - node_t  # TT - UTC at the nodes, days
    if np.ptp(offset) * 86400.0 > 1e-6:  # a leap second in the span: interpolate in TT
        tt1, tt2 = utc_to_tt(j1, j2)
        grid = _node_grid(tt1, tt2, always=True)
        ref, t, first, count = grid
        node_t = (first + np.arange(count)) * NODE_STEP
        tt1, tt2 = np.full(count, ref), node_t
    table = np.stack(erfa.xys06a(tt1, tt2), axis=-1)  # (nodes, 3)
    values = _lagrange(table, t / NODE_STEP - first)
    return tuple(values[:, k].reshape(shape) for k in range(3))


def _node_grid(j1: np.ndarray, j2: np.ndarray, always: bool = False):
    """``(ref, t, first, count)``: dates as days ``t`` after ``ref`` and the node range.

    Nodes are ``(first + k) * NODE_STEP`` days after ``ref`` (a midnight), for
    ``k < count``, reaching :data:`_MARGIN` nodes beyond the first and last
    dates. None when there are too few dates for interpolation to pay.
    """
    if j1.size == 0 or not (np.all(np.isfinite(j1)) and np.all(np.isfinite(j2))):
        return None
    ref = np.floor(j1[0] + j2[0] - 0.5) + 0.5
    t = (j1 - ref) + j2
    lo = int(np.floor(t.min() / NODE_STEP)) - _MARGIN
    hi = int(np.floor(t.max() / NODE_STEP)) + _MARGIN + 1
    count = hi - lo + 1
    if not always and count >= j1.size:
        return None
    return float(ref), t, lo, count


def _lagrange_matrix(fractions: np.ndarray) -> np.ndarray:
    """Weights ``(len(fractions), NODE_POINTS)`` of the nodes at :data:`_OFFSETS`."""
    out = np.ones((fractions.size, _OFFSETS.size))
    for j, oj in enumerate(_OFFSETS):
        for ol in _OFFSETS:
            if ol != oj:
                out[:, j] *= (fractions - ol) / (oj - ol)
    return out


#: fine sub-steps per node interval, and the Lagrange weights at those fractions
_FINE = 32
_FINE_WEIGHTS = _lagrange_matrix(np.arange(_FINE) / _FINE)
_MARGIN = 1 - int(_OFFSETS[0]) + 1  # nodes beyond the dates: the stencil plus the cubic's


def _refine(table: np.ndarray) -> np.ndarray:
    """Values on a grid :data:`_FINE` times finer, from node interval -_OFFSETS[0] on."""
    windows = np.lib.stride_tricks.sliding_window_view(table, _OFFSETS.size, axis=0)
    fine = np.einsum("ko,jqo->jkq", _FINE_WEIGHTS, windows)  # (intervals, _FINE, 3)
    return fine.reshape(-1, table.shape[1])


def _lagrange(table: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Values at ``x`` (node index units) interpolated from the node ``table``.

    The :data:`NODE_POINTS`-point Lagrange polynomial centred on each node interval is
    evaluated once on a grid :data:`_FINE` times finer; each date then takes
    the cubic Lagrange polynomial of its four nearest fine values (the
    cubic's error on the fine grid is some 1e-18 rad).
    """
    fine = _refine(table)
    columns = [np.ascontiguousarray(fine[:, k]) for k in range(fine.shape[1])]
    xf = (x + float(_OFFSETS[0])) * _FINE  # fine grid starts at node interval -_OFFSETS[0]
    out = np.empty((x.size, len(columns)))
    for start in range(0, x.size, _BLOCK):  # blocks: the temporaries stay in cache
        xb = xf[start : start + _BLOCK]
        base = np.floor(xb)
        p = xb - base
        index = base.astype(np.intp)
        a, c, d = p + 1.0, p - 1.0, p - 2.0
        pc, ad = p * c, a * d
        weights = (pc * d * (-1.0 / 6.0), ad * c * 0.5, ad * p * -0.5, pc * a * (1.0 / 6.0))
        for k, column in enumerate(columns):
            acc = weights[0] * column.take(index - 1)
            acc += weights[1] * column.take(index)
            acc += weights[2] * column.take(index + 1)
            acc += weights[3] * column.take(index + 2)
            out[start : start + _BLOCK, k] = acc
    return out
