"""Velocity kernels used by the transforms: geodetic points and local
east/north/up velocities in, inertial Cartesian out, and back.

Angles in degrees here (these kernels sit right behind the xarray layer,
which holds degrees); everything else SI. ``scale_*`` factors convert the
caller's velocity units to m s-1 inside the one pass over the data.

Inputs arrive broadcast-compatible, not broadcast (a latitude array may be
``(1, nlat, 1)`` against winds ``(ntime, nlat, nlon)``): whatever depends on
position only (trigonometry, radii, the body-fixed position, the local basis
with the unit factors folded in) is computed at the inputs' own small shapes,
and the full-size work runs block by block over the output, so that the
temporaries of one block stay in the processor's cache.
"""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from frameshift._kernels import geodesy, rotation

__all__ = ["eastward_frame_speed", "geodetic_to_inertial", "inertial_to_geodetic", "shifted"]

#: elements per block of the full-size work (a few hundred kB per temporary)
BLOCK = 1 << 15


def eastward_frame_speed(lat_deg, h, omega, a, f):
    """Eastward speed of the rotating frame at a point: Ω (N + h) cos φ, m s-1.

    Ω × r has no north or up component on local axes, because Ω lies in the
    meridian plane and r does too; its east component is Ω times the distance
    from the axis.
    """
    return omega * geodesy.axis_distance(np.deg2rad(lat_deg), h, a, f)


def shifted(u, shift, *, dtype=np.float64):
    """``u + shift``: added in float64, rounded once to ``dtype``.

    numpy casts in buffers of a few thousand elements, so with a float32
    ``dtype`` no full-size float64 array is made: the values are those of
    ``(u + shift).astype(dtype)``, in one pass over the data.

    Examples
    --------
    >>> u = np.array([1.0, 2.0], np.float32)
    >>> shifted(u, np.float64(0.1), dtype=np.float32).dtype
    dtype('float32')
    """
    out = np.empty(np.broadcast_shapes(np.shape(u), np.shape(shift)), dtype)
    np.add(u, shift, out=out, dtype=np.float64, casting="same_kind")
    return out


def geodetic_to_inertial(lat_deg, lon_deg, h, u, v, w, matrix, omega, *, a, f, scale):
    """Points and local velocities (rotating frame) to inertial position and velocity.

    r_I = M r_B and v_I = M (E^T (u, v, w) + Ω × r_B), with r_B the body-fixed
    position of the geodetic point, E the east/north/up basis there, M
    (``matrix``, ``(..., 3, 3)``) from body-fixed to inertial axes and Ω
    (``omega``, ``(..., 3)``) the rotation vector on body-fixed axes.

    Returns ``(position, velocity)``, each of shape ``(*loop, 3)`` where
    ``loop`` is the broadcast shape of all inputs' leading axes.
    """
    matrix = np.asarray(matrix, dtype=np.float64)
    omega = _constant_rows(np.asarray(omega, dtype=np.float64), 1)
    u, v, w = (np.asarray(x) for x in (u, v, w))
    loop = np.broadcast_shapes(
        np.shape(lat_deg),
        np.shape(lon_deg),
        np.shape(h),
        u.shape,
        v.shape,
        w.shape,
        matrix.shape[:-2],
        omega.shape[:-1],
    )
    lat = np.deg2rad(lat_deg)
    lon = np.deg2rad(lon_deg)
    sl, cl = np.sin(lat), np.cos(lat)
    so, co = np.sin(lon), np.cos(lon)
    n = geodesy.prime_vertical_radius(sl, a, f)
    p = (n + h) * cl
    r = (p * co, p * so, (n * (1.0 - geodesy._e2(f)) + h) * sl)  # body-fixed position
    s0, s1, s2 = (float(x) for x in scale)
    # body-fixed components of the east, north, up unit vectors (geodesy.enu_basis),
    # times the unit factors: v_B = Σ_k (u, v, w)_k basis_k
    east = (-so * s0, co * s0, None)
    north = (-sl * co * s1, -sl * so * s1, cl * s1)
    up = (cl * co * s2, cl * so * s2, sl * s2)
    terms = [(u, east), (v, north)] + ([] if _is_zero(w) else [(w, up)])
    on_axis = not np.any(omega[..., :2])  # Ω along z: Ω × r = Ω_z (-y, x, 0)

    pos = np.empty((*loop, 3))
    vel = np.empty((*loop, 3))
    for block in _blocks(loop):
        m = _take(matrix, block, 2)
        rb = [_take(x, block) for x in r]
        _matvec_into(m, rb, pos[block])
        o = _take(omega, block, 1)
        if on_axis:  # the frame velocity Ω × r (rotation.frame_velocity) by components
            oz = o[..., 2]
            body = [-(oz * rb[1]), oz * rb[0], None]
        else:
            ox, oy, oz = o[..., 0], o[..., 1], o[..., 2]
            body = [oy * rb[2] - oz * rb[1], oz * rb[0] - ox * rb[2], ox * rb[1] - oy * rb[0]]
        for k in range(3):
            for data, basis in terms:
                if basis[k] is not None:
                    product = _take(data, block) * _take(basis[k], block)
                    body[k] = product if body[k] is None else _add(body[k], product)
        _matvec_into(m, body, vel[block])
    return pos, vel


def inertial_to_geodetic(position, velocity, matrix, omega, *, a, f, scale):
    """Inverse of :func:`geodetic_to_inertial`.

    Returns ``(lat_deg, lon_deg, h, u, v, w)``, velocities divided by ``scale``
    (so in the caller's units).
    """
    loop = np.broadcast_shapes(
        np.shape(position)[:-1],
        np.shape(velocity)[:-1],
        np.shape(matrix)[:-2],
        np.shape(omega)[:-1],
    )
    r_body, v_body = rotation.to_rotating_cartesian(position, velocity, omega, matrix)
    lat, lon, h = geodesy.cartesian_to_geodetic(r_body, a, f)
    enu = geodesy.cartesian_to_enu(lat, lon, v_body)
    out = (
        np.rad2deg(lat),
        np.rad2deg(lon),
        h,
        enu[..., 0] / scale[0],
        enu[..., 1] / scale[1],
        enu[..., 2] / scale[2],
    )
    return tuple(np.broadcast_to(x, loop) for x in out)


# --- blocks ------------------------------------------------------------------------
def _blocks(shape: tuple[int, ...], size: int = BLOCK) -> Iterator[tuple[slice, ...]]:
    """Index tuples cutting an array of ``shape`` into blocks of about ``size`` elements.

    Whole trailing axes go into a block while they fit; the next axis is cut
    into runs; axes before it are taken one index at a time.
    """
    if not shape:
        yield ()
        return
    k, inner = len(shape) - 1, 1
    while k > 0 and inner * shape[k] <= size:
        inner *= shape[k]
        k -= 1
    step = max(1, size // inner)
    tail = (slice(None),) * (len(shape) - k - 1)
    for lead in np.ndindex(*shape[:k]):
        head = tuple(slice(i, i + 1) for i in lead)
        for start in range(0, shape[k], step):
            yield (*head, slice(start, start + step), *tail)


def _take(x, block: tuple[slice, ...], core: int = 0):
    """The part of ``x`` (broadcast-compatible with the loop shape) that meets ``block``."""
    if x is None or np.ndim(x) <= core:
        return x
    lead = np.ndim(x) - core
    shape = np.shape(x)
    parts = block[len(block) - lead :]  # numpy broadcasting aligns trailing axes
    index = tuple(slice(None) if shape[d] == 1 else s for d, s in enumerate(parts))
    return x[index]


def _matvec_into(m: np.ndarray, x: list, out: np.ndarray) -> None:
    """``out[..., i] = Σ_j m[..., i, j] x[j]`` (``None`` in ``x`` stands for an exact 0).

    All nine products of the non-None components are formed, so NaN spreads as
    in ``m @ x``; each row is summed in a contiguous temporary and written once.
    """
    for i in range(3):
        acc = None
        for j in range(3):
            if x[j] is not None:
                product = m[..., i, j] * x[j]
                acc = product if acc is None else _add(acc, product)
        out[..., i] = 0.0 if acc is None else acc


def _add(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """x + y, in place in ``y`` (a fresh product) when it has the broadcast shape."""
    if np.shape(y) == np.broadcast_shapes(np.shape(x), np.shape(y)):
        y += x
        return y
    return x + y


def _is_zero(x) -> bool:
    """True for a scalar exactly 0 (an absent component), whose products can be skipped."""
    return np.ndim(x) == 0 and float(x) == 0.0


def _constant_rows(x: np.ndarray, core: int) -> np.ndarray:
    """``x`` reduced to one row when all its rows (leading axes) are equal, else ``x``."""
    if x.ndim <= core or x.size == 0:
        return x
    rows = x.reshape(-1, *x.shape[x.ndim - core :])
    first = rows[0]
    if np.array_equal(rows, np.broadcast_to(first, rows.shape)):
        return first.reshape((1,) * (x.ndim - core) + first.shape)
    return x
