"""Angular momentum of a fluid shell, and the mass and area weights to integrate it, in numpy.

Conventions as in :mod:`frameshift._kernels.geodesy`: geodetic latitude and
longitude in radians (degrees where the name says so), lengths in metres,
``a`` the equatorial radius and ``f`` the flattening of the ellipsoid,
``omega`` the signed rotation rate about the body's z axis (rad s-1; negative
for a retrograde body). Body-fixed axes: z along the rotation axis, x through
the prime meridian.

Axial angular momentum per unit mass of air or water moving eastward at u at
distance p from the axis (AMS Glossary, "absolute angular momentum", with
p = r cos φ): m = (u + Ω p) p, the sum of a relative part u p and a frame
(solid-body) part Ω p². The equatorial components follow from r × v in
body-fixed axes.

Weights: the area of a latitude-longitude cell on the ellipsoid from the
authalic zone formula (area from the equator to φ, per radian of longitude,
is (b²/2) [sin φ / (1 - e² sin²φ) + artanh(e sin φ) / e]; a sphere gives a² sin φ),
and the mass of a layer from its pressure thickness (dm = dp / g per unit area)
or from density times thickness (dm = ρ dz per unit area).
"""

from __future__ import annotations

import math

import numpy as np

from frameshift._kernels import geodesy

__all__ = [
    "axial_momentum",
    "cell_area_factors",
    "cell_areas",
    "cell_edges",
    "equatorial_factors",
    "layer_thickness",
    "pressure_thickness",
    "pressure_thickness_above",
    "shell_sums",
    "weighted_sum",
    "zone_area",
]


def axial_momentum(lat_deg, h, u, omega: float, *, a: float, f: float):
    """Axial angular momentum per unit mass, relative and frame parts (m2 s-1).

    ``p = (N + h) cos φ`` is the distance from the rotation axis; the relative
    part is ``u p`` and the frame part ``Ω p²``.

    Examples
    --------
    >>> rel, frame = axial_momentum(0.0, 0.0, 10.0, 7.292115e-5, a=6378137.0, f=0.0)
    >>> round(float(rel / 6378137.0), 6), round(float(frame / 6378137.0**2 / 7.292115e-5), 6)
    (10.0, 1.0)
    """
    p = geodesy.axis_distance(np.deg2rad(lat_deg), np.asarray(h, dtype=np.float64), a, f)
    u = np.asarray(u)
    relative = u * p
    frame = np.broadcast_to(omega * p * p, np.broadcast_shapes(np.shape(p), u.shape))
    return np.asarray(relative, dtype=np.float64), np.array(frame, dtype=np.float64)


def equatorial_factors(lat_deg, lon_deg, *, a: float, f: float) -> dict:
    """Position factors of the angular momentum on the ellipsoid surface, as (lat, lon) pairs.

    With r = (x, y, z) the body-fixed position and v = u ê + v n̂, the
    relative angular momentum per unit mass r × v has the components
    ``h1 = -z cos λ u + q sin λ v``, ``h2 = -z sin λ u - q cos λ v`` and
    ``h3 = p u`` with ``q = p cos φ + z sin φ``; the matter terms use the
    products of inertia ``-x z``, ``-y z`` and the axial moment ``x² + y²``
    per unit mass. Each factor is a product of a function of latitude and one
    of longitude: returned as ``{name: (of_latitude, of_longitude)}``.

    Examples
    --------
    >>> fac = equatorial_factors(np.array([0.0]), np.array([0.0, 90.0]), a=1.0, f=0.0)
    >>> fac["h1_v"][0].tolist(), fac["h1_v"][1].round(12).tolist()  # q = a on a sphere
    ([1.0], [0.0, 1.0])
    """
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    lon = np.deg2rad(np.asarray(lon_deg, dtype=np.float64))
    sin_lat, cos_lat = np.sin(lat), np.cos(lat)
    n = geodesy.prime_vertical_radius(sin_lat, a, f)
    e2 = f * (2.0 - f)
    p = n * cos_lat
    z = n * (1.0 - e2) * sin_lat
    q = p * cos_lat + z * sin_lat
    cos_lon, sin_lon = np.cos(lon), np.sin(lon)
    ones = np.ones_like(lon)
    return {
        "h1_u": (-z, cos_lon), "h1_v": (q, sin_lon),
        "h2_u": (-z, sin_lon), "h2_v": (-q, cos_lon),
        "h3": (p, ones),
        "i13": (-p * z, cos_lon), "i23": (-p * z, sin_lon), "i33": (p * p, ones),
    }


def zone_area(lat: np.ndarray, a: float, f: float) -> np.ndarray:
    """Area (m2) between the equator and latitude ``lat`` (rad), per radian of longitude.

    Examples
    --------
    >>> round(float(zone_area(np.pi / 2, 1.0, 0.0)), 12)  # a hemisphere of the unit sphere / 2π
    1.0
    """
    s = np.sin(np.asarray(lat, dtype=np.float64))
    if f == 0.0:
        return a * a * s
    e2 = f * (2.0 - f)
    e = np.sqrt(e2)
    b = a * (1.0 - f)
    return 0.5 * b * b * (s / (1.0 - e2 * s * s) + np.arctanh(e * s) / e)


def cell_edges(centres: np.ndarray, lower: float | None = None, upper: float | None = None):
    """Edges of cells around sorted or reverse-sorted ``centres``: midpoints, outer halves.

    The outer edges lie half a spacing beyond the outer centres, clipped to
    ``[lower, upper]`` where given. Returns an array one longer than ``centres``.

    Examples
    --------
    >>> cell_edges(np.array([-90.0, 0.0, 90.0]), -90.0, 90.0).tolist()
    [-90.0, -45.0, 45.0, 90.0]
    """
    c = np.asarray(centres, dtype=np.float64)
    if c.size == 1:
        raise ValueError("one centre has no spacing to make cell edges from")
    edges = np.empty(c.size + 1)
    edges[1:-1] = 0.5 * (c[1:] + c[:-1])
    edges[0] = c[0] - 0.5 * (c[1] - c[0])
    edges[-1] = c[-1] + 0.5 * (c[-1] - c[-2])
    if lower is not None or upper is not None:
        edges = np.clip(edges, lower, upper)
    return edges


def cell_area_factors(lat_bounds_deg, lon_widths_deg, a: float, f: float):
    """Cell areas as ``(per_latitude, per_longitude)``: zone area per radian (m2), width (rad).

    ``lat_bounds_deg`` has shape ``(nlat, 2)`` (either order), ``lon_widths_deg``
    shape ``(nlon,)``; the area of cell (j, i) is their product.
    """
    bounds = np.deg2rad(np.asarray(lat_bounds_deg, dtype=np.float64))
    zone = np.abs(zone_area(bounds[:, 1], a, f) - zone_area(bounds[:, 0], a, f))
    return zone, np.deg2rad(np.abs(np.asarray(lon_widths_deg, dtype=np.float64)))


def cell_areas(lat_bounds_deg: np.ndarray, lon_widths_deg: np.ndarray, a: float, f: float):
    """Areas (m2) of latitude-longitude cells on the ellipsoid, shape ``(nlat, nlon)``.

    ``lat_bounds_deg`` has shape ``(nlat, 2)`` (either order), ``lon_widths_deg``
    shape ``(nlon,)``.
    """
    zone, width = cell_area_factors(lat_bounds_deg, lon_widths_deg, a, f)
    return zone[:, None] * width


def pressure_thickness(bounds: np.ndarray) -> np.ndarray:
    """Pressure thickness (Pa) of layers with ``bounds`` of shape ``(nlev, 2)`` (either order).

    Examples
    --------
    >>> pressure_thickness(np.array([[0.0, 300.0], [300.0, 800.0]])).tolist()
    [300.0, 500.0]
    """
    b = np.asarray(bounds, dtype=np.float64)
    return b.max(axis=1) - b.min(axis=1)


def pressure_thickness_above(surface, *, bounds: np.ndarray) -> np.ndarray:
    """Pressure thickness (Pa) of the part of each layer above the surface pressure.

    ``surface`` has any shape; the result has a trailing level axis. A layer
    wholly below the surface has thickness 0; a layer the surface passes
    through keeps the part above it.

    Examples
    --------
    >>> bounds = np.array([[np.inf, 925.0], [925.0, 775.0], [775.0, 0.0]])
    >>> pressure_thickness_above(np.array(800.0), bounds=bounds).tolist()
    [0.0, 25.0, 775.0]
    """
    b = np.asarray(bounds, dtype=np.float64)
    top, bottom = b.min(axis=1), b.max(axis=1)
    ps = np.asarray(surface, dtype=np.float64)[..., None]
    return np.clip(np.minimum(bottom, ps) - top, 0.0, None)


def layer_thickness(bounds: np.ndarray) -> np.ndarray:
    """Thickness (m) of layers with ``bounds`` of shape ``(nlev, 2)`` (either order)."""
    b = np.asarray(bounds, dtype=np.float64)
    return np.abs(b[:, 1] - b[:, 0])


def weighted_sum(values, weights, *, ncore: int) -> np.ndarray:
    """Sum of ``values * weights`` over the trailing ``ncore`` axes, in float64.

    ``weights`` broadcast against ``values`` (its leading axes may be of
    length 1). Cells of zero weight add nothing even where the value is NaN
    (levels below the ground); elsewhere a NaN value makes the sum NaN.

    Examples
    --------
    >>> weighted_sum(np.array([[1.0, np.nan], [2.0, 3.0]]), np.array([2.0, 0.0]), ncore=1)
    array([2., 4.])
    """
    values = np.asarray(values)
    weights = np.asarray(weights, dtype=np.float64)
    core = values.shape[values.ndim - ncore:]
    loop = values.shape[: values.ndim - ncore]
    k = int(np.prod(core, dtype=np.int64))
    w_loop = weights.shape[: weights.ndim - ncore]
    w = np.broadcast_to(weights, (*w_loop, *core)).reshape(*w_loop, k)
    vals = values.reshape(*loop, k)
    zero = w == 0.0
    if zero.any():
        vals = np.where(zero, 0.0, vals)
    if all(n == 1 for n in w_loop):
        out = vals.reshape(-1, k) @ w.reshape(k)
        return out.reshape(loop).astype(np.float64, copy=False)
    return np.einsum("...k,...k->...", vals, w, dtype=np.float64)


_KINDS = ("surface", "levels", "density", "column")


def shell_sums(u, v, source, *, kind: str, weights, keep: int = 0, bounds=None,
               thickness=None, gravity: float = 1.0) -> np.ndarray:
    """Mass-weighted sums over the levels and the grid, one pass over each level.

    ``u`` and ``v`` have trailing axes (level, lat, lon), or (lat, lon) when
    ``kind`` is ``"column"`` (either may be None when no weight uses it). The
    mass per unit area of level k is:

    - ``"surface"``: the pressure thickness of its ``bounds`` above the
      surface pressure ``source`` (trailing (lat, lon)), over ``gravity``;
    - ``"levels"``: ``thickness[k]`` (kg m-2, the same everywhere);
    - ``"density"``: ``source[..., k, :, :] * thickness[k]`` (density times m);
    - ``"column"``: ``source / gravity`` (one level: the whole column).

    ``weights`` is a sequence of ``(field, of_lat, of_lon)`` with field ``"u"``,
    ``"v"`` or ``"1"`` and w = of_lat ⊗ of_lon (cell area times a position factor):
    each output is Σ field × mass per area × w, summed over the levels and,
    for ``keep`` 0, 1, 2, over (lat, lon), lon only, or nothing. Where a
    level weighs nothing (below the surface) its values are ignored, NaN or
    not. Returns the sums on a trailing axis, one per weight, in float64.
    Sums run in a fixed order (no threaded BLAS), so results do not depend
    on the machine's thread count.

    Examples
    --------
    >>> u = np.ones((2, 1, 2))  # 2 levels, 1 x 2 cells
    >>> bounds = np.array([[np.inf, 500.0], [500.0, 0.0]])
    >>> shell_sums(u, None, np.array([[800.0, 400.0]]), kind="surface", bounds=bounds,
    ...            weights=[("u", np.ones(1), np.ones(2)), ("1", np.ones(1), np.ones(2))]).tolist()
    [1200.0, 1200.0]
    """
    if kind not in _KINDS:
        raise ValueError(f"kind must be one of {_KINDS}")
    fields = {"u": np.asarray(u), "v": np.asarray(v)}
    used = [fields[w[0]] for w in weights if w[0] != "1"]
    if kind == "column":
        fields = {k: x[..., None, :, :] if x.ndim >= 2 else x for k, x in fields.items()}
        used = [x[..., None, :, :] for x in used]
    source = None if source is None else np.asarray(source)
    grid = used[0].shape if used else (*source.shape[:-2], 1, *source.shape[-2:])
    nlev, horizontal = grid[-3], grid[-2:]
    if kind == "levels" and not used:
        nlev = len(thickness)
    source_loop = () if source is None else source.shape[:-3 if kind == "density" else -2]
    loop = np.broadcast_shapes(*(x.shape[:-3] for x in used), source_loop)
    out = np.zeros((*loop, *{0: (), 1: horizontal[:1], 2: horizontal}[keep], len(weights)))
    groups = {}  # each field's weights, as (index, of_lat, of_lon) and their sums once
    for field in dict.fromkeys(w[0] for w in weights):
        index = [n for n, w in enumerate(weights) if w[0] == field]
        lat_f = [np.asarray(weights[n][1], dtype=np.float64) for n in index]
        lon_f = [np.asarray(weights[n][2], dtype=np.float64) for n in index]
        groups[field] = (index, lat_f, lon_f)
    ps, ps_low = None, 0.0
    if kind in ("surface", "column"):
        ps = np.asarray(source, dtype=np.float64)
        ps_low = float(np.nanmin(ps)) if ps.size else 0.0
    edges = None
    if kind == "surface":
        b = np.asarray(bounds, dtype=np.float64)
        edges = np.stack([b.min(axis=1), b.max(axis=1)], axis=1).tolist()  # (top, bottom)
    masses = [_level_mass(kind, k, ps, ps_low, source, edges, thickness, gravity)
              for k in range(nlev)]
    # levels whose mass per area is one number everywhere (above the surface, or set
    # thicknesses) are summed in one pass over the field: Σ_i v w_lon first, for all
    # of them at once, then Σ_k m_k and Σ_j w_lat; the others cell by cell
    uniform = [k for k in range(nlev) if np.ndim(masses[k]) == 0]
    varying = [k for k in range(nlev) if np.ndim(masses[k])]
    for field, (index, lat_f, lon_f) in groups.items():
        if field == "1":
            if uniform:
                mass = float(sum(float(masses[k]) for k in uniform))
                out[..., index] += mass * _unit_sum(lat_f, lon_f, keep)
            for k in varying:
                out[..., index] += _mass_sum(masses[k], lat_f, lon_f, keep)
            continue
        values = fields[field]
        if uniform:
            out[..., index] += _uniform_sum(values, uniform, masses, lat_f, lon_f, keep)
        for k in varying:
            level = values[..., k, :, :]
            total = _field_sum(level, masses[k], lat_f, lon_f, keep)
            if kind == "surface" and np.isnan(total).any():
                level = np.where(masses[k] == 0.0, 0.0, level)
                total = _field_sum(level, masses[k], lat_f, lon_f, keep)
            out[..., index] += total
    return out


def _level_mass(kind, k, ps, ps_low, source, edges, thickness, gravity):
    """Mass per unit area of level ``k``: a number where it is the same everywhere."""
    if kind == "surface":
        top, bottom = edges[k]
        if bottom <= ps_low:  # above the surface everywhere
            return np.float64((bottom - top) / gravity)
        mass = np.minimum(ps, bottom)
        mass -= top
        np.maximum(mass, 0.0, out=mass)
        mass /= gravity
        return mass
    if kind == "levels":
        return np.float64(thickness[k])
    if kind == "density":
        return np.asarray(source[..., k, :, :], dtype=np.float64) * thickness[k]
    return ps / gravity


def _uniform_sum(values, levels: list[int], masses, lat_f, lon_f, keep: int) -> np.ndarray:
    """Σ over ``levels`` (each of one mass m_k) of values × m_k × w, for each weight."""
    m = np.array([float(masses[k]) for k in levels])
    contiguous = levels == list(range(levels[0], levels[-1] + 1))
    block = values[..., levels[0]:levels[-1] + 1, :, :] if contiguous else values[..., levels, :, :]
    if keep == 2:
        column = np.einsum("...kji,k->...ji", block, m, dtype=np.float64)
        return np.stack([column * a[:, None] * b for a, b in zip(lat_f, lon_f, strict=True)],
                        axis=-1)
    # Σ_i over the longitudes for every distinct longitude weight in one pass over the
    # data (float64 accumulation, a fixed order: no BLAS), then Σ_k m_k and Σ_j w_lat
    distinct: dict[bytes, int] = {}
    for b in lon_f:
        distinct.setdefault(b.tobytes(), len(distinct))
    table = np.stack([np.frombuffer(key, dtype=np.float64) for key in distinct])
    along = np.einsum("...kji,wi->...kjw", block, table, dtype=np.float64)
    sums = []
    for a, b in zip(lat_f, lon_f, strict=True):
        per_lat = np.einsum("...kj,k->...j", along[..., distinct[b.tobytes()]], m)
        sums.append(per_lat * a if keep == 1 else np.einsum("...j,j->...", per_lat, a))
    return np.stack(sums, axis=-1)


def _separable(product, lat_f, lon_f, keep: int) -> np.ndarray:
    """Σ product × (lat_f ⊗ lon_f) over lon then lat (as ``keep`` says), float64, fixed order."""
    if keep == 2:
        return product * lat_f[:, None] * lon_f
    along_lat = np.einsum("...ji,i->...j", product, lon_f, dtype=np.float64)
    if keep == 1:
        return along_lat * lat_f
    return np.einsum("...j,j->...", along_lat, lat_f, dtype=np.float64)


def _field_sum(values, mass, lat_f, lon_f, keep: int) -> np.ndarray:
    scale = 1.0
    if np.ndim(mass) == 0:
        product, scale = values, float(mass)
    else:
        product = np.multiply(values, mass, dtype=np.float64)
    sums = [_separable(product, a, b, keep) for a, b in zip(lat_f, lon_f, strict=True)]
    return scale * np.stack(sums, axis=-1)


def _unit_sum(lat_f, lon_f, keep: int) -> np.ndarray:
    """Σ (lat_f ⊗ lon_f) over lon then lat (as ``keep`` says): what a mass of 1 gives."""
    sums = []
    for a, b in zip(lat_f, lon_f, strict=True):
        if keep == 2:
            sums.append(a[:, None] * b)
        elif keep == 1:
            sums.append(a * math.fsum(b))
        else:
            sums.append(np.float64(math.fsum(a) * math.fsum(b)))
    return np.stack(sums, axis=-1)


def _mass_sum(mass, lat_f, lon_f, keep: int) -> np.ndarray:
    sums = [_separable(mass, a, b, keep) for a, b in zip(lat_f, lon_f, strict=True)]
    return np.stack(sums, axis=-1)
