"""Planar frames (a rotating table) in pure numpy.

A table turns about a vertical axis through the point ``(cx, cy)``. Its axes
coincide with the lab's when its angle θ is 0, so the axis foot has the same
coordinates in both frames, and a point's coordinates relative to the axis
turn by θ (counter-clockwise seen from above for θ > 0):

    r_lab - c = R(θ) (r_table - c),       R(θ) = [[cos θ, -sin θ], [sin θ, cos θ]]

A velocity relative to the table V and the same velocity relative to the lab
U differ by the table's own motion Ω ẑ × (r - c) = Ω (-(y - cy), x - cx):

    U = R(θ) (V + Ω ẑ × (r_table - c)),   V = R(-θ) U - Ω ẑ × (r_table - c)

Vertical components are the same in both frames (the axis is vertical).

Apparent accelerations on the table's axes, for a velocity (u, v) relative to
the table and a position (x, y) relative to the axis (Ω the rate, Ω̇ its rate
of change, both signed, counter-clockwise positive):

============  ============================  ===================
term          vector form                   x, y (z is 0)
============  ============================  ===================
coriolis      -2 Ω × V                      (2Ω v, -2Ω u)
centrifugal   -Ω × (Ω × r)                  (Ω² x, Ω² y)
euler         -(dΩ/dt) × r                  (Ω̇ y, -Ω̇ x)
============  ============================  ===================

Arguments are bare float arrays in SI units and radians, broadcast-compatible
(a position on ``(1, ny, nx)`` against a time series on ``(nt, 1, 1)``); each
component is its own array, as the xarray layer holds them. Nothing here
imports xarray or pint.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "DIRECTIONS",
    "PLANAR_COMPONENTS",
    "PLANAR_TERMS",
    "centrifugal",
    "coriolis",
    "euler",
    "fixed_grid_change",
    "fixed_grid_sample",
    "lab_to_table",
    "planar_accelerations",
    "rotate",
    "sample_linear",
    "solid_body_surface",
    "surface_departure",
    "table_to_lab",
]

PLANAR_TERMS = ("coriolis", "centrifugal", "euler")
PLANAR_COMPONENTS = ("x", "y", "z")
#: ``"to_inertial"``: table -> lab; ``"to_rotating"``: lab -> table
DIRECTIONS = ("to_inertial", "to_rotating")


def rotate(x, y, angle):
    """Turn the vector (x, y) counter-clockwise by ``angle`` (rad): R(angle) (x, y)."""
    c, s = np.cos(angle), np.sin(angle)
    return c * x - s * y, s * x + c * y


def table_to_lab(x, y, u, v, angle, rate, cx=0.0, cy=0.0):
    """Points and velocities on the table's axes to the lab's.

    Parameters
    ----------
    x, y : array_like
        Position in table coordinates, m.
    u, v : array_like
        Velocity relative to the table, on its axes, m s-1.
    angle, rate : array_like
        Angle the table has turned through (rad) and its rate (rad s-1).
    cx, cy : float
        Axis foot, m (the same in both frames).

    Returns
    -------
    X, Y, U, V : ndarray
        Lab position (m) and velocity relative to the lab on its axes (m s-1),
        each of the full broadcast shape.

    Examples
    --------
    >>> X, Y, U, V = table_to_lab(1.0, 0.0, 0.0, 0.0, np.pi / 2, 2.0)
    >>> [round(float(q), 12) for q in (X, Y, U, V)]
    [0.0, 1.0, -2.0, 0.0]
    """
    dx, dy = np.subtract(x, cx), np.subtract(y, cy)
    ua = u - rate * dy
    va = v + rate * dx
    rx, ry = rotate(dx, dy, angle)
    uu, vv = rotate(ua, va, angle)
    shape = np.broadcast_shapes(*(np.shape(q) for q in (x, y, u, v, angle, rate)))
    return (
        np.broadcast_to(rx + cx, shape),
        np.broadcast_to(ry + cy, shape),
        np.broadcast_to(uu, shape),
        np.broadcast_to(vv, shape),
    )


def lab_to_table(x, y, u, v, angle, rate, cx=0.0, cy=0.0):
    """Inverse of :func:`table_to_lab`: lab points and velocities to the table's axes.

    Examples
    --------
    >>> x, y, u, v = lab_to_table(0.0, 1.0, 0.0, 0.0, np.pi / 2, 2.0)
    >>> [round(float(q), 12) for q in (x, y, u, v)]
    [1.0, 0.0, 0.0, -2.0]
    """
    dx, dy = rotate(np.subtract(x, cx), np.subtract(y, cy), np.negative(angle))
    ur, vr = rotate(u, v, np.negative(angle))
    shape = np.broadcast_shapes(*(np.shape(q) for q in (x, y, u, v, angle, rate)))
    return (
        np.broadcast_to(dx + cx, shape),
        np.broadcast_to(dy + cy, shape),
        np.broadcast_to(ur + rate * dy, shape),
        np.broadcast_to(vr - rate * dx, shape),
    )


# --- apparent accelerations on the table's axes ------------------------------------------
def coriolis(u, v, rate):
    """Coriolis acceleration -2 Ω × V on the table's axes: (2Ω v, -2Ω u), m s-2.

    For Ω > 0 (counter-clockwise) it deflects motion to the right.
    """
    f = 2.0 * np.asarray(rate, dtype=np.float64)
    return f * v, -f * u


def centrifugal(dx, dy, rate):
    """Centrifugal acceleration -Ω × (Ω × r) = Ω² (x, y), away from the axis, m s-2."""
    k = np.square(np.asarray(rate, dtype=np.float64))
    return k * dx, k * dy


def euler(dx, dy, rate_of_change):
    """Euler acceleration -(dΩ/dt) × r = Ω̇ (y, -x), m s-2 (zero at a steady rate)."""
    a = np.asarray(rate_of_change, dtype=np.float64)
    return a * dy + 0.0, -a * dx + 0.0  # "+ 0.0" turns the -0.0 of a zero rate into 0.0


def planar_accelerations(x, y, u, v, rate, rate_of_change, cx=0.0, cy=0.0, *, terms=PLANAR_TERMS):
    """The chosen terms and their total on the table's x, y, z axes.

    Returns a tuple of arrays in the order ``<term>_x, <term>_y, <term>_z``
    for each term of ``terms`` and then ``total_x, total_y, total_z``, each of
    the full broadcast shape of the inputs. The z parts are zero: the axis is
    vertical, so every term lies in the table's plane.
    """
    dx, dy = np.subtract(x, cx), np.subtract(y, cy)
    shape = np.broadcast_shapes(*(np.shape(q) for q in (x, y, u, v, rate, rate_of_change)))
    parts = {
        "coriolis": lambda: coriolis(u, v, rate),
        "centrifugal": lambda: centrifugal(dx, dy, rate),
        "euler": lambda: euler(dx, dy, rate_of_change),
    }
    out = []
    total_x, total_y = np.zeros(shape), np.zeros(shape)
    for term in terms:
        ax, ay = (np.broadcast_to(q, shape) for q in parts[term]())
        total_x += ax
        total_y += ay
        out += [np.array(ax), np.array(ay), np.zeros(shape)]
    return (*out, total_x, total_y, np.zeros(shape))


# --- the free surface of solid-body rotation ------------------------------------------------
def solid_body_surface(dx, dy, rate, gravity):
    """Height of the free surface of fluid turning with the table, above its lowest point.

    Ω² r² / (2 g), with r the distance from the axis (m), Ω in rad s-1 and g in
    m s-2: the surface on which gravity and the centrifugal acceleration have
    no component along it (a paraboloid).

    Examples
    --------
    >>> round(float(solid_body_surface(0.3, 0.0, 2 * np.pi / 6, 9.80665)), 6)
    0.005032
    """
    r2 = np.square(dx) + np.square(dy)
    return np.square(rate) * r2 / (2.0 * gravity)


def surface_departure(height, dx, dy, rate, gravity, weights=None):
    """Departure of a measured surface height from the solid-body surface of the same volume.

    ``height - (Ω² r²/(2g) + level)`` with ``level`` chosen so that the
    departure averages to zero over the points where ``height`` is finite
    (weighted by ``weights``, e.g. cell areas): the equilibrium surface
    holding the same fluid as the measurement over the measured area.
    ``height`` has the positions on its trailing axes (the shape of
    ``dx, dy`` broadcast); leading axes (time) are treated one by one, with
    ``rate`` broadcast against them.
    """
    height = np.asarray(height, dtype=np.float64)
    paraboloid = solid_body_surface(dx, dy, rate, gravity)
    anomaly = height - paraboloid
    nd = np.broadcast(np.asarray(dx), np.asarray(dy)).nd
    axes = tuple(range(anomaly.ndim - nd, anomaly.ndim)) if nd else None
    w = np.ones(np.shape(anomaly)) if weights is None else np.broadcast_to(weights, anomaly.shape)
    valid = np.isfinite(anomaly)
    w = np.where(valid, w, 0.0)
    total = np.sum(w, axis=axes, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        level = np.sum(np.where(valid, anomaly, 0.0) * w, axis=axes, keepdims=True) / total
    return anomaly - level


# --- fields on a grid fixed in the target frame -----------------------------------------
def sample_linear(axis_y, axis_x, values, qy, qx):
    """Linear interpolation of ``values`` (shape ``(ny, nx, ...)``) at points (qy, qx).

    ``axis_y`` and ``axis_x`` are the grid's 1-D coordinates, strictly
    monotonic (increasing or decreasing); points outside the grid, or next to
    a missing value, come back as NaN. Bilinear interpolation reproduces a
    field linear in x and y exactly.
    """
    axis_y = np.asarray(axis_y, dtype=np.float64)
    axis_x = np.asarray(axis_x, dtype=np.float64)
    values = np.asarray(values, dtype=np.float64)
    if axis_y.size > 1 and axis_y[0] > axis_y[-1]:
        axis_y, values = axis_y[::-1], values[::-1]
    if axis_x.size > 1 and axis_x[0] > axis_x[-1]:
        axis_x, values = axis_x[::-1], values[:, ::-1]
    from scipy.interpolate import RegularGridInterpolator  # here: importing frameshift stays quick

    interp = RegularGridInterpolator(
        (axis_y, axis_x), values, method="linear", bounds_error=False, fill_value=np.nan
    )
    qy, qx = np.broadcast_arrays(np.asarray(qy, dtype=np.float64), np.asarray(qx, np.float64))
    qy, qx = _snap_to_edges(qy, axis_y), _snap_to_edges(qx, axis_x)
    points = np.stack([qy.ravel(), qx.ravel()], axis=-1)
    return interp(points).reshape(*qy.shape, *values.shape[2:])


def _snap_to_edges(q, axis):
    """Move points within rounding of the grid's edges onto them (not counted as outside)."""
    lo, hi = axis[0], axis[-1]
    tol = 1e-9 * max(hi - lo, abs(lo), abs(hi), 1e-300)
    q = np.where((q < lo) & (q > lo - tol), lo, q)
    return np.where((q > hi) & (q < hi + tol), hi, q)


def fixed_grid_change(axis_y, axis_x, u, v, angle, rate, cx=0.0, cy=0.0, *, direction):
    """Velocity fields moved to a grid fixed in the other frame, by linear interpolation.

    Parameters
    ----------
    axis_y, axis_x : array_like
        The measured grid's coordinates (1-D, m). The output grid has the same
        coordinate values, held in the target frame.
    u, v : array_like
        Velocity components on the source frame's axes, shape ``(..., ny, nx)``
        (leading axes are times), m s-1.
    angle, rate : array_like
        The table's angle (rad) and rate (rad s-1), broadcast against the
        leading axes of ``u`` (shape ``(...)`` or scalars).
    cx, cy : float
        Axis foot, m.
    direction : {"to_inertial", "to_rotating"}
        ``"to_inertial"`` takes table-frame fields to a lab-fixed grid,
        ``"to_rotating"`` lab-frame fields to a table-fixed grid.

    Returns
    -------
    U, V : ndarray
        Components on the target frame's axes at the target grid points,
        shape of ``u`` broadcast; NaN where a target point falls outside the
        measured area (or next to a missing value).

    Notes
    -----
    The velocity is changed frame at each measured point first (where the
    frame's own motion is known exactly) and only then interpolated: at
    target point p the result is the changed field at p's position in the
    source frame, c + R(∓θ)(p - c).
    """
    axis_y = np.asarray(axis_y, dtype=np.float64)
    axis_x = np.asarray(axis_x, dtype=np.float64)
    u = np.asarray(u, dtype=np.float64)
    v = np.asarray(v, dtype=np.float64)
    lead = np.broadcast_shapes(u.shape[:-2], v.shape[:-2], np.shape(angle), np.shape(rate))
    grid = (axis_y.size, axis_x.size)
    u = np.broadcast_to(u, (*lead, *grid))
    v = np.broadcast_to(v, (*lead, *grid))
    angle = np.broadcast_to(np.asarray(angle, dtype=np.float64), lead)
    rate = np.broadcast_to(np.asarray(rate, dtype=np.float64), lead)
    gy, gx = np.meshgrid(axis_y, axis_x, indexing="ij")
    change = {"to_inertial": table_to_lab, "to_rotating": lab_to_table}[direction]
    sign = -1.0 if direction == "to_inertial" else 1.0  # where a target point sits in the source
    out_u, out_v = np.empty((*lead, *grid)), np.empty((*lead, *grid))
    for idx in np.ndindex(*lead):
        _, _, tu, tv = change(gx, gy, u[idx], v[idx], angle[idx], rate[idx], cx, cy)
        qx, qy = rotate(gx - cx, gy - cy, sign * angle[idx])
        both = sample_linear(axis_y, axis_x, np.stack([tu, tv], axis=-1), qy + cy, qx + cx)
        out_u[idx], out_v[idx] = both[..., 0], both[..., 1]
    return out_u, out_v


def fixed_grid_sample(axis_y, axis_x, values, angle, cx=0.0, cy=0.0, *, direction):
    """A scalar field (or a vertical component) moved to a grid fixed in the other frame.

    As :func:`fixed_grid_change` for a quantity that does not change with the
    frame: ``values`` has shape ``(..., ny, nx)``, ``angle`` broadcasts
    against its leading axes; NaN outside the measured area.
    """
    axis_y = np.asarray(axis_y, dtype=np.float64)
    axis_x = np.asarray(axis_x, dtype=np.float64)
    values = np.asarray(values, dtype=np.float64)
    lead = np.broadcast_shapes(values.shape[:-2], np.shape(angle))
    grid = (axis_y.size, axis_x.size)
    values = np.broadcast_to(values, (*lead, *grid))
    angle = np.broadcast_to(np.asarray(angle, dtype=np.float64), lead)
    gy, gx = np.meshgrid(axis_y, axis_x, indexing="ij")
    sign = -1.0 if direction == "to_inertial" else 1.0
    out = np.empty((*lead, *grid))
    for idx in np.ndindex(*lead):
        qx, qy = rotate(gx - cx, gy - cy, sign * angle[idx])
        out[idx] = sample_linear(axis_y, axis_x, values[idx], qy + cy, qx + cx)
    return out
