"""Kernels that turn what instruments record into Earth-relative east/north/up.

Pure numpy: no xarray, no pint. Directions are bearings in degrees clockwise
from (true) north, as stored in CF files; rotation angles of grids are in
radians, anticlockwise from east (CF ``angle_of_rotation_from_east_to_x``).
Speeds arrive in any one unit and leave in the same unit, except where a
``scale`` factor is given (folded into the one pass over the data).

Inputs are broadcast-compatible, not broadcast: an angle that depends on the
grid only is turned into its cosine and sine on the grid's own shape, and only
the final products run at full size.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "bearing_to_components",
    "components_to_bearing",
    "earth_to_platform",
    "platform_matrix",
    "platform_to_earth",
    "rotate_bearing",
    "rotate_components",
    "rotated_pole_angle",
    "true_wind",
]

#: elements per block of the full-size work: the temporaries of one block stay in cache
BLOCK = 1 << 15


def _in_blocks(func, args, nout):
    """``func(*args)`` evaluated over blocks of the leading axis of the broadcast shape.

    Arguments that do not span that axis (fewer dimensions, or length 1 there)
    are passed whole to every block; the results are written into full-size
    outputs. Small inputs are evaluated in one go.
    """
    args = [np.asarray(a, dtype=np.float64) for a in args]
    shape = np.broadcast_shapes(*(a.shape for a in args))
    size = int(np.prod(shape)) if shape else 1
    if not shape or size <= 2 * BLOCK or shape[0] == 1:
        return func(*args)
    outs = tuple(np.empty(shape) for _ in range(nout))
    rows = max(1, BLOCK // max(1, size // shape[0]))
    spans = [a.ndim == len(shape) and a.shape[0] == shape[0] for a in args]
    for start in range(0, shape[0], rows):
        part = slice(start, start + rows)
        results = func(*(a[part] if span else a for a, span in zip(args, spans, strict=True)))
        for out, result in zip(outs, results, strict=True):
            out[part] = result
    return outs


def bearing_to_components(speed, bearing_deg, *, sign=1.0):
    """Speed and bearing to eastward and northward components.

    ``sign`` is +1 for a direction the motion goes "to" and -1 for one it
    comes "from" (winds), optionally times a unit factor for the speed.
    A missing (NaN) speed or bearing gives missing components; a zero speed
    gives zero components whatever the bearing.

    Examples
    --------
    >>> [round(float(c), 12) + 0.0 for c in bearing_to_components(10.0, 270.0, sign=-1.0)]
    [10.0, 0.0]
    """
    return _in_blocks(lambda s, b: _polar_block(s, b, sign), (speed, bearing_deg), 2)


def _polar_block(speed, bearing_deg, sign):
    b = np.deg2rad(bearing_deg)
    s = np.multiply(speed, sign)
    return s * np.sin(b), s * np.cos(b)


def components_to_bearing(u, v, *, sign=1.0):
    """Eastward and northward components to speed and bearing in [0, 360).

    ``sign`` as in :func:`bearing_to_components` (-1 for "from"). A calm
    (zero speed) gets bearing 0, never NaN; a missing component gives a
    missing speed and bearing.

    Examples
    --------
    >>> [float(x) for x in components_to_bearing(0.0, -5.0, sign=-1.0)]  # wind from the north
    [5.0, 0.0]
    """
    u = np.asarray(u, dtype=np.float64)
    v = np.asarray(v, dtype=np.float64)
    speed = np.hypot(u, v)
    # atan2(u, v) is the "to" bearing in (-180, 180]; "from" is it plus 180, in [0, 360]
    bearing = np.rad2deg(np.arctan2(u, v))
    bearing = np.asarray(bearing)
    if sign < 0:
        np.add(bearing, 180.0, out=bearing)
        np.subtract(bearing, 360.0, out=bearing, where=bearing >= 360.0)
    else:
        np.add(bearing, 360.0, out=bearing, where=bearing < 0.0)
        np.subtract(bearing, 360.0, out=bearing, where=bearing >= 360.0)  # -1e-17 + 360
        np.add(bearing, 0.0, out=bearing)  # no -0.0
    np.copyto(bearing, 0.0, where=speed == 0.0)
    return speed, bearing


def rotate_components(x, y, angle_rad, *, scale=1.0):
    """Turn components on axes rotated by ``angle_rad`` (anticlockwise from east) to east/north.

    With the x axis at angle a anticlockwise from east and the y axis a
    quarter turn further: east = x cos a - y sin a, north = x sin a + y cos a.
    A negative angle turns the other way (east/north back to grid axes).

    Examples
    --------
    >>> [round(float(c), 12) + 0.0 for c in rotate_components(1.0, 0.0, np.pi / 2)]
    [0.0, 1.0]
    """
    c = np.cos(angle_rad)
    s = np.sin(angle_rad)
    if np.size(c) == 1 and np.ndim(c) <= max(np.ndim(x), np.ndim(y)):
        c, s = float(np.ravel(c)[0]), float(np.ravel(s)[0])  # scalar: numpy's fast path
    if scale != 1.0:
        c = c * scale
        s = s * scale
    return x * c - y * s, x * s + y * c


def rotate_bearing(bearing_deg, offset_deg):
    """Add ``offset_deg`` to a bearing and wrap into [0, 360).

    Examples
    --------
    >>> float(rotate_bearing(355.0, 10.0))
    5.0
    """
    out = np.mod(np.add(bearing_deg, offset_deg), 360.0)
    return np.where(out >= 360.0, out - 360.0, out)


def rotated_pole_angle(lat_deg, lon_deg, pole_lat_deg, pole_lon_deg):
    """Angle (rad, anticlockwise from true east) of rotated-grid east at true (lat, lon).

    On the sphere the rotated grid's east direction at a point r is along
    p x r, with p the unit vector of the rotated north pole; true east is
    along z x r. The angle is that between them, measured in the local
    tangent plane: atan2((p x r) . north, (p x r) . east). The grid's own
    ``north_pole_grid_longitude`` turns the grid about p and leaves this
    direction unchanged.

    Examples
    --------
    >>> float(rotated_pole_angle(0.0, 0.0, 90.0, 0.0))
    0.0
    """
    phi = np.deg2rad(lat_deg)
    lam = np.deg2rad(lon_deg)
    pphi = np.deg2rad(pole_lat_deg)
    plam = np.deg2rad(pole_lon_deg)
    px, py, pz = np.cos(pphi) * np.cos(plam), np.cos(pphi) * np.sin(plam), np.sin(pphi)
    cphi, sphi, clam, slam = np.cos(phi), np.sin(phi), np.cos(lam), np.sin(lam)
    rx, ry, rz = cphi * clam, cphi * slam, sphi
    # p x r
    ax = py * rz - pz * ry
    ay = pz * rx - px * rz
    az = px * ry - py * rx
    east = -slam * ax + clam * ay
    north = -sphi * clam * ax - sphi * slam * ay + cphi * az
    return np.arctan2(north, east)


def true_wind(heading, course, sog, rel_dir, rel_speed, zero_ref, *, speed_scale=1.0,
              ship_scale=1.0):
    """True wind from a moving platform (Smith, Bourassa & Sharp 1999, J. Atmos. Oceanic
    Technol. 16, 939-952).

    All angles in degrees clockwise: ``heading`` and ``course`` from true
    north, ``rel_dir`` (the direction the wind comes from, relative to the
    anemometer's zero line) and ``zero_ref`` (the zero line, from the bow).
    With the apparent wind's mathematical angle
    A' = 270 - (heading + zero_ref + rel_dir) and the course's C' = 90 - course,
    the true wind is u = |A| cos A' + |C| cos C', v = |A| sin A' + |C| sin C'.
    ``speed_scale`` and ``ship_scale`` bring the two speeds to the output unit.

    Returns ``(eastward, northward, speed, from_direction)``.

    Examples
    --------
    >>> [round(float(x), 9) for x in true_wind(0.0, 0.0, 0.0, 90.0, 5.0, 0.0)]
    [-5.0, 0.0, 5.0, 90.0]
    """
    return _in_blocks(
        lambda h, c, g, d, r, z: _true_wind_block(h, c, g, d, r, z, speed_scale, ship_scale),
        (heading, course, sog, rel_dir, rel_speed, zero_ref), 4)


def _true_wind_block(heading, course, sog, rel_dir, rel_speed, zero_ref, speed_scale,
                     ship_scale):
    a_math = np.deg2rad(270.0 - (np.add(np.add(heading, zero_ref), rel_dir)))
    c_math = np.deg2rad(90.0 - np.asarray(course, dtype=np.float64))
    a = np.multiply(rel_speed, speed_scale)
    c = np.multiply(sog, ship_scale)
    u = a * np.cos(a_math) + c * np.cos(c_math)
    v = a * np.sin(a_math) + c * np.sin(c_math)
    speed, direction = components_to_bearing(u, v, sign=-1.0)
    return u, v, speed, direction


def _matrix_entries(heading_deg, pitch_deg, roll_deg):
    """The nine entries of :func:`platform_matrix`, row by row, each on the angles' shape."""
    psi, theta, phi = (np.deg2rad(np.asarray(a, dtype=np.float64))
                       for a in (heading_deg, pitch_deg, roll_deg))
    cps, sps = np.cos(psi), np.sin(psi)
    cth, sth = np.cos(theta), np.sin(theta)
    cph, sph = np.cos(phi), np.sin(phi)
    sth_cps, sth_sps = sth * cps, sth * sps
    return (
        (cth * cps, -cph * sps + sph * sth_cps, sph * sps + cph * sth_cps),
        (cth * sps, cph * cps + sph * sth_sps, -sph * cps + cph * sth_sps),
        (-sth, sph * cth, cph * cth),
    )


def platform_matrix(heading_deg, pitch_deg, roll_deg):
    """Rotation from platform axes (forward, starboard, down) to (north, east, down).

    C = Rz(heading) Ry(pitch) Rx(roll): the platform is turned first by its
    heading about the vertical, then by its pitch (bow up positive) about the
    once-turned athwartship axis, then by its roll (starboard down positive)
    about the twice-turned fore-aft axis: the order in which a ship's attitude
    angles (heading, pitch, roll) are defined. Returns a ``(..., 3, 3)`` array.

    Examples
    --------
    >>> float(platform_matrix(90.0, 0.0, 0.0)[1, 0])   # bow east: forward -> east
    1.0
    """
    rows = _matrix_entries(heading_deg, pitch_deg, roll_deg)
    shape = np.broadcast_shapes(*(np.shape(e) for row in rows for e in row))
    m = np.empty((*shape, 3, 3))
    for i, row in enumerate(rows):
        for j, entry in enumerate(row):
            m[..., i, j] = entry
    return m


def platform_to_earth(forward, starboard, up, heading, pitch, roll, ship_east, ship_north,
                      *, scale=1.0):
    """Velocities on platform axes (forward, starboard, up) to east/north/up over ground.

    The platform-relative velocity is turned by :func:`platform_matrix` and
    the platform's own velocity over ground (``ship_east``, ``ship_north``,
    already in the output unit) is added; ``scale`` brings the measured
    components to the output unit. Returns ``(east, north, up)``.

    Examples
    --------
    >>> east, north, up = platform_to_earth(1.0, 0.0, 0.0, 90.0, 0.0, 0.0, 0.0, 0.0)
    >>> [round(float(x), 12) + 0.0 for x in (east, north, up)]
    [1.0, 0.0, 0.0]
    """
    return _in_blocks(lambda *a: _platform_to_earth_block(*a, scale),
                      (forward, starboard, up, heading, pitch, roll, ship_east, ship_north), 3)


def _platform_to_earth_block(forward, starboard, up, heading, pitch, roll, ship_east,
                             ship_north, scale):
    (n0, n1, n2), (e0, e1, e2), (d0, d1, d2) = _matrix_entries(heading, pitch, roll)
    if scale != 1.0:
        forward, starboard, up = (np.multiply(a, scale) for a in (forward, starboard, up))
    # up = -down: the third column enters with its sign flipped
    north = n0 * forward + n1 * starboard - n2 * up + ship_north
    east = e0 * forward + e1 * starboard - e2 * up + ship_east
    upward = -(d0 * forward) - d1 * starboard + d2 * up
    return east, north, upward


def earth_to_platform(east, north, up, heading, pitch, roll, ship_east, ship_north):
    """The inverse of :func:`platform_to_earth` (with ``scale=1``).

    Examples
    --------
    >>> fwd, stbd, up = earth_to_platform(1.0, 0.0, 0.0, 90.0, 0.0, 0.0, 0.0, 0.0)
    >>> [round(float(x), 12) + 0.0 for x in (fwd, stbd, up)]
    [1.0, 0.0, 0.0]
    """
    m = platform_matrix(heading, pitch, roll)
    n = np.subtract(north, ship_north)
    e = np.subtract(east, ship_east)
    d = -np.asarray(up, dtype=np.float64)
    forward = m[..., 0, 0] * n + m[..., 1, 0] * e + m[..., 2, 0] * d
    starboard = m[..., 0, 1] * n + m[..., 1, 1] * e + m[..., 2, 1] * d
    down = m[..., 0, 2] * n + m[..., 1, 2] * e + m[..., 2, 2] * d
    return forward, starboard, -down
