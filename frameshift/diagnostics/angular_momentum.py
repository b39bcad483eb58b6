"""Angular momentum of air and water, its integrals, and its excitation of Earth rotation.

Everything here is in the thin-shell approximation usual in angular-momentum
budgets: air or water at latitude φ sits on the surface of the frame's
ellipsoid, at distance p = N cos φ from the rotation axis (for a sphere,
a cos φ). Velocities are relative to the rotating body (Earth-relative
winds and currents); the frame part is the solid-body rotation Ω p.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import geodesy, integrals
from frameshift.diagnostics import common
from frameshift.errors import (
    ConventionError,
    MissingInputError,
    UnsupportedInputError,
    check_choice,
)
from frameshift.frames import EARTH, Ellipsoid, check_frame

__all__ = [
    "EXCITATION_CONSTANTS",
    "STANDARD_GRAVITY",
    "axial_angular_momentum",
    "excitation",
    "integrate_angular_momentum",
]

#: Standard acceleration of gravity, m s-2 (3rd CGPM, 1901; BIPM SI Brochure).
STANDARD_GRAVITY = 9.80665

#: Transfer factors and moments of inertia of the excitation functions:
#: ``matter`` and ``motion`` factors of the axial (3) and equatorial (12)
#: components, the mantle's axial moment ``c_m`` and ``c_minus_a`` (kg m2).
#: Barnes, Hide, White & Wilson (1983, Proc. R. Soc. Lond. A 387, 31-73) and
#: Eubanks (1993), as tabulated in the project's reference values.
EXCITATION_CONSTANTS: dict[str, dict[str, float]] = {
    "barnes1983": {"matter3": 0.70, "motion3": 1.00, "c_m": 7.04e37,
                   "matter12": 1.00, "motion12": 1.43, "c_minus_a": 2.344e35},
    "eubanks1993": {"matter3": 0.753, "motion3": 0.998, "c_m": 7.1236e37,
                    "matter12": 1.098, "motion12": 1.5913, "c_minus_a": 2.610e35},
}
#: Length of the nominal day, s (ΔLOD = χ3 × 86400 s, IERS practice).
DAY = 86400.0
_OVER = ("global", "latitude", "column")
_MOMENTUM_UNITS = "kg m2 s-1"


def axial_angular_momentum(
    ds: xr.Dataset, frame=EARTH, *, velocity: Mapping[str, str] | None = None
) -> xr.Dataset:
    """Axial angular momentum per unit mass of Earth-relative winds or currents.

    m = (u + Ω p) p with p the distance from the rotation axis on the frame's
    ellipsoid, split into ``angular_momentum_relative`` (u p) and
    ``angular_momentum_frame`` (Ω p²), their sum ``angular_momentum_absolute``
    (m2 s-1), and the local ``superrotation_index`` m / (Ω a²) - 1, positive
    where the fluid turns faster than the body in the body's own sense (also
    for a retrograde body, whose Ω is negative).

    Parameters
    ----------
    ds : xarray.Dataset
        Earth-relative eastward and northward velocity with latitude (gridded,
        station or track data); found by ``standard_name`` or named with ``velocity=``.
    frame : Planet, default EARTH
    velocity : mapping, optional
        ``{"eastward": name, "northward": name}``.

    Returns
    -------
    xarray.Dataset

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> def cf(name, units):
    ...     return {"standard_name": name, "units": units}
    >>> ds = xr.Dataset({"u": ("lat", [10.0], cf("eastward_wind", "m s-1")),
    ...                  "v": ("lat", [0.0], cf("northward_wind", "m s-1"))},
    ...                 coords={"lat": ("lat", [0.0], cf("latitude", "degrees_north")),
    ...                         "lon": ((), 0.0, cf("longitude", "degrees_east"))})
    >>> out = frameshift.axial_angular_momentum(ds)
    >>> round(float(out.superrotation_index[0] * 465.1011), 3)  # u / (Ω a)
    10.0
    """
    frame = check_frame(frame, Ellipsoid)
    vel = common.velocity_in_si(ds, velocity, frame)
    lat = common.as_plain(ds.variables[vel.latitude])
    omega = float(frame.rotation_rate)
    a = float(frame.equatorial_radius)
    if omega == 0.0:
        raise UnsupportedInputError(
            "the frame does not rotate (rotation_rate 0): its angular momentum has no frame part "
            "and no superrotation index",
            variable="frame", expected="a rotating frame", found="rotation_rate 0",
        )
    relative, frame_part = apply_kernel(
        integrals.axial_momentum, lat, xr.DataArray(0.0), vel.u,
        output_core_dims=((), ()), kwargs={"omega": omega, "a": a, "f": float(frame.flattening)},
        dims_order=vel.u.dims,
    )
    absolute = relative + frame_part
    index = absolute / (omega * a * a) - 1.0
    base = {**common.frame_attrs(frame), "velocity_variables": f"{vel.eastward} {vel.northward}",
            "assumptions": "thin shell: at the distance from the axis of the ellipsoid surface"}
    out = xr.Dataset({
        "angular_momentum_relative": relative.assign_attrs(
            long_name="axial angular momentum per unit mass relative to the rotating body (u p)",
            units="m2 s-1", **base),
        "angular_momentum_frame": frame_part.assign_attrs(
            long_name="axial angular momentum per unit mass of the body's rotation (Ω p²)",
            units="m2 s-1", **base),
        "angular_momentum_absolute": absolute.assign_attrs(
            long_name="absolute axial angular momentum per unit mass ((u + Ω p) p)",
            units="m2 s-1", **base),
        "superrotation_index": index.assign_attrs(
            long_name="local superrotation index m / (Ω a²) - 1", units="1", **base),
    })
    out = out.assign_coords(_coords_on(ds, out.dims))
    return common.finish(out, ds, f"axial angular momentum per unit mass ({frame.name})")


def integrate_angular_momentum(
    ds: xr.Dataset,
    frame=EARTH,
    *,
    surface_pressure: object = None,
    density: object = None,
    over: str = "global",
    velocity: Mapping[str, str] | None = None,
    vertical: str | None = None,
    gravity: float = STANDARD_GRAVITY,
) -> xr.Dataset:
    """Axial angular momentum of an atmosphere or ocean on a latitude-longitude grid (kg m2 s-1).

    Cell masses come from ellipsoidal cell areas (CF ``bounds`` of latitude
    and longitude where given, else half-way between grid points, latitudes
    clipped at the poles) times the mass per unit area of each layer:

    - pressure levels: dm = dp / g. Layer edges are the CF ``bounds`` of the
      level coordinate or half-way between levels, the top layer reaching
      p = 0. With ``surface_pressure``, the lowest layer reaches the surface
      and the part of every layer below the surface is cut off (levels below
      the ground weigh nothing, a level the surface cuts weighs what is above
      it); without it, the lowest layer ends half a spacing below the lowest level.
    - height or depth levels with ``density``: dm = ρ dz, layers from the
      ``bounds`` or half-way between levels (a depth axis starts at 0).
    - one level and ``surface_pressure``: the whole column, ps / g, moving
      with the given velocity.

    Parameters
    ----------
    ds : xarray.Dataset
    frame : Planet, default EARTH
    surface_pressure : str, DataArray or float, optional
        Variable name, DataArray with pressure units, or Pa.
    density : str, DataArray or float, optional
        For height/depth levels: variable name, DataArray with units, or kg m-3.
    over : {"global", "latitude", "column"}
        Sum over the whole grid (a series over time), over longitude and the
        vertical (one value per latitude band), or over the vertical only
        (per grid column).
    velocity : mapping, optional
    vertical : str, optional
        Name of the vertical coordinate (default: found by its CF attributes).
    gravity : float, default 9.80665
        Acceleration of gravity for dm = dp / g, m s-2.

    Returns
    -------
    xarray.Dataset
        ``angular_momentum_relative``, ``angular_momentum_frame``,
        ``angular_momentum_absolute`` (kg m2 s-1) and ``mass`` (kg), lazy when
        the input is Dask-backed.

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> lat = np.linspace(-89.5, 89.5, 180); lon = np.arange(0.0, 360.0, 1.0)
    >>> u = 10.0 * np.cos(np.deg2rad(lat))[:, None] * np.ones(lon.size)
    >>> def cf(name, units):
    ...     return {"standard_name": name, "units": units}
    >>> ds = xr.Dataset({"u": (("lat", "lon"), u, cf("eastward_wind", "m s-1")),
    ...                  "v": (("lat", "lon"), 0 * u, cf("northward_wind", "m s-1"))},
    ...                 coords={"lat": ("lat", lat, cf("latitude", "degrees_north")),
    ...                         "lon": ("lon", lon, cf("longitude", "degrees_east"))})
    >>> out = frameshift.integrate_angular_momentum(ds, frameshift.EARTH_SPHERE,
    ...                                             surface_pressure=1.0e5)
    >>> mass, a = float(out.mass), frameshift.EARTH_SPHERE.equatorial_radius
    >>> round(float(out.angular_momentum_relative) / (2 / 3 * mass * a * 10.0), 4)
    1.0
    """
    check_choice("over", over, _OVER)
    frame = check_frame(frame, Ellipsoid)
    vel = common.velocity_in_si(ds, velocity, frame)
    grid = _Grid(ds, vel, frame, surface_pressure, density, vertical, gravity)
    reduce = grid.reduce_dims(over)
    p = geodesy.axis_distance(np.deg2rad(grid.lat.values), 0.0, grid.a, grid.f)
    sums = grid.sums(vel, {
        "relative": ("u", grid.zone * p, grid.width),
        "frame": ("1", float(frame.rotation_rate) * grid.zone * p * p, grid.width),
        "mass": ("1", grid.zone, grid.width),
    }, over)
    relative, frame_part, mass = sums["relative"], sums["frame"], sums["mass"]
    base = {**common.frame_attrs(frame), "velocity_variables": f"{vel.eastward} {vel.northward}",
            # not cell_methods: CF names there only dimensions the result still has
            "summed_over": " ".join(reduce),
            "assumptions": grid.notes}
    base = {k: v for k, v in base.items() if v}
    out = xr.Dataset(_momentum_variables(relative, frame_part, mass, base))
    out = out.assign_coords(_coords_on(ds, out.dims))
    return common.finish(out, ds, f"angular momentum integrated over: {over} ({frame.name})",
                         sums=True)


def excitation(
    ds: xr.Dataset,
    frame=EARTH,
    *,
    surface_pressure: object = None,
    density: object = None,
    constants: str | Mapping[str, float] = "barnes1983",
    velocity: Mapping[str, str] | None = None,
    vertical: str | None = None,
    gravity: float = STANDARD_GRAVITY,
    anomalies: bool = False,
    include_integrals: bool = False,
) -> xr.Dataset:
    """Excitation functions χ1, χ2, χ3 of Earth rotation and the length-of-day change.

    From the motion (wind or current) term, the relative angular momentum h,
    and the matter term, the fluid's products and moment of inertia:

    χ1 = (k_matter I13 + k_motion h1 / Ω) / (C - A), χ2 likewise with I23 and h2,
    χ3 = (k_matter I33 + k_motion h3 / Ω) / C_m, and ΔLOD = χ3 × 86400 s (in ms),

    with I13 = -Σ x z dm, I23 = -Σ y z dm, I33 = Σ (x² + y²) dm and h = Σ r × v dm
    in body-fixed axes (Barnes et al. 1983, Proc. R. Soc. Lond. A 387; their
    transfer factors and moments by default, ``constants="eubanks1993"`` for
    Eubanks 1993, or a mapping with keys ``matter3, motion3, c_m, matter12,
    motion12, c_minus_a``). Masses are those of :func:`integrate_angular_momentum`.

    The matter terms are of the whole mass given: differences between times
    (or ``anomalies=True``, which subtracts the time mean of every term) are
    what excites changes of rotation. The result also holds the axial
    ``angular_momentum_relative`` h3; ``include_integrals=True`` adds the rest
    of :func:`integrate_angular_momentum`'s global output (frame part,
    absolute, mass) from the same pass over the data.

    Examples
    --------
    >>> from frameshift.diagnostics.angular_momentum import EXCITATION_CONSTANTS
    >>> k = EXCITATION_CONSTANTS["barnes1983"]
    >>> h3 = 1e-3 / DAY * k["c_m"] * 7.292115e-5 / k["motion3"]  # h3 giving 1 ms of LOD
    >>> round(h3 / 1e25, 2)
    5.94
    """
    k = _constants(constants)
    frame = check_frame(frame, Ellipsoid)
    vel = common.velocity_in_si(ds, velocity, frame)
    grid = _Grid(ds, vel, frame, surface_pressure, density, vertical, gravity)
    factors = integrals.equatorial_factors(grid.lat.values, grid.lon.values, a=grid.a, f=grid.f)
    omega = float(frame.rotation_rate)
    fields = {"h1_u": "u", "h1_v": "v", "h2_u": "u", "h2_v": "v", "h3": "u",
              "i13": "1", "i23": "1", "i33": "1"}
    weights = {n: (field, grid.zone * factors[n][0], grid.width * factors[n][1])
               for n, field in fields.items()}
    if include_integrals:
        weights["frame"] = ("1", omega * grid.zone * factors["i33"][0], grid.width)
        weights["mass"] = ("1", grid.zone, grid.width)
    sums = grid.sums(vel, weights, "global")
    h1 = sums["h1_u"] + sums["h1_v"]
    h2 = sums["h2_u"] + sums["h2_v"]
    h3, i13, i23, i33 = sums["h3"], sums["i13"], sums["i23"], sums["i33"]
    terms = {
        "chi1_matter": k["matter12"] * i13 / k["c_minus_a"],
        "chi1_motion": k["motion12"] * h1 / (omega * k["c_minus_a"]),
        "chi2_matter": k["matter12"] * i23 / k["c_minus_a"],
        "chi2_motion": k["motion12"] * h2 / (omega * k["c_minus_a"]),
        "chi3_matter": k["matter3"] * i33 / k["c_m"],
        "chi3_motion": k["motion3"] * h3 / (omega * k["c_m"]),
    }
    if anomalies:
        if grid.time_dim is None or grid.time_dim not in h3.dims:
            raise MissingInputError(
                "anomalies=True subtracts the time mean, but the result has no time dimension",
                variable="anomalies", expected="data along time", found="no time dimension",
            )
        terms = {n: t - t.mean(grid.time_dim) for n, t in terms.items()}
    label = constants if isinstance(constants, str) else "given by the caller"
    base = {**common.frame_attrs(frame), "excitation_constants": str(label),
            "assumptions": grid.notes + ("; anomalies from the time mean" if anomalies else "")}
    out = {}
    for axis in ("1", "2", "3"):
        for part in ("matter", "motion"):
            out[f"chi{axis}_{part}"] = terms[f"chi{axis}_{part}"].assign_attrs(
                long_name=f"excitation function chi{axis}, {part} term", units="1", **base)
        out[f"chi{axis}"] = (terms[f"chi{axis}_matter"] + terms[f"chi{axis}_motion"]).assign_attrs(
            long_name=f"excitation function chi{axis} (matter + motion)", units="1", **base)
    out["length_of_day_change"] = (out["chi3"] * DAY * 1e3).assign_attrs(
        long_name="change of the length of day excited (chi3 x 86400 s)", units="ms", **base)
    if include_integrals:
        cells = {**base, "summed_over": " ".join(grid.reduce_dims("global"))}
        out.update(_momentum_variables(h3, sums["frame"], sums["mass"], cells))
    else:
        out["angular_momentum_relative"] = h3.assign_attrs(
            long_name="axial angular momentum relative to the rotating body",
            units=_MOMENTUM_UNITS, **base)
    result = xr.Dataset(out)
    result = result.assign_coords(_coords_on(ds, result.dims))
    return common.finish(result, ds, f"excitation functions ({label}; {frame.name})",
                         sums=True)


# --- the grid and its masses ------------------------------------------------------------
class _Grid:
    """Cell masses (kg) of a latitude-longitude grid, as a (lazy) DataArray."""

    def __init__(self, ds, vel, frame, surface_pressure, density, vertical, gravity) -> None:
        dims = tuple(map(str, vel.u.dims))
        self.a, self.f = float(frame.equatorial_radius), float(frame.flattening)
        self.lat_dim, self.lon_dim = common.grid_axes(ds, vel)
        self.lat = common.as_plain(ds.variables[vel.latitude]).astype(np.float64)
        self.lon = common.as_plain(ds.variables[vel.longitude]).astype(np.float64)
        self.time_dim = None
        if vel.time is not None and ds.variables[vel.time].ndim == 1:
            self.time_dim = str(ds.variables[vel.time].dims[0])
        if not np.isfinite(gravity) or gravity <= 0:
            raise UnsupportedInputError(
                f"gravity= must be a positive number in m s-2; found {gravity!r}",
                variable="gravity", expected="> 0 m s-2", found=repr(gravity),
            )
        self.zone, self.width = self._areas(ds, vel)
        self.levels = common.find_levels(ds, dims, vertical)
        self.gravity = float(gravity)
        self.bounds = self.thickness = None
        self.notes = self._mass_per_area(ds, surface_pressure, density)

    def reduce_dims(self, over: str) -> tuple[str, ...]:
        vertical = (self.levels.dim,) if self.levels is not None else ()
        return {"global": (*vertical, self.lat_dim, self.lon_dim),
                "latitude": (*vertical, self.lon_dim), "column": vertical}[over]

    def sums(self, vel, weights: dict[str, tuple], over: str) -> dict:
        """Σ field × dm × w over the levels and (per ``over``) the grid, one DataArray each."""
        horizontal = [self.lat_dim, self.lon_dim]
        core = ([self.levels.dim] if self.levels is not None else []) + horizontal
        keep = {"global": [], "latitude": [self.lat_dim], "column": horizontal}[over]
        uses = {w[0] for w in weights.values()}
        inputs = [(vel.u, core) if "u" in uses else None, (vel.v, core) if "v" in uses else None]
        if self.kind in ("density", "surface", "column"):
            inputs.append((self.source, core if self.kind == "density" else horizontal))
        else:
            inputs.append(None)
        args, arg_dims, absent = [], [], []
        for i, item in enumerate(inputs):
            if item is None:
                absent.append(i)
                continue
            arr, dims = item
            for d in dims:
                if d not in arr.dims:
                    arr = arr.expand_dims({d: vel.u.sizes[d]})
            if arr.chunks is not None:
                arr = arr.chunk({d: -1 for d in dims})
            args.append(arr)
            arg_dims.append(dims)
        names = list(weights)
        kwargs = {"kind": self.kind, "weights": [weights[n] for n in names], "keep": len(keep),
                  "bounds": self.bounds, "thickness": self.thickness, "gravity": self.gravity}
        loop = [d for d in vel.u.dims if d not in core]
        if any(a.chunks is not None for a in args):
            stacked = _blockwise(_ShellSums(tuple(absent)), args, arg_dims, loop, keep,
                                 len(names), kwargs)
            if stacked.nbytes <= _GATHER_BYTES:  # sums are small: one block, so what is
                # made of them (and written) is a few tasks, not a few per input chunk
                stacked = stacked.chunk(dict.fromkeys(stacked.dims, -1))
        else:
            stacked = apply_kernel(
                _ShellSums(tuple(absent)), *args, input_core_dims=arg_dims,
                output_core_dims=([*keep, "quantity"],), output_sizes={"quantity": len(names)},
                kwargs=kwargs,
            )
        return {n: stacked.isel(quantity=i).transpose(*loop, *keep)
                for i, n in enumerate(names)}

    def _areas(self, ds, vel) -> np.ndarray:
        lat = self.lat.values
        lat_b = common.bounds_of(ds, vel.latitude)
        if lat_b is None:
            if lat.size < 2:
                raise UnsupportedInputError(
                    f"latitude {vel.latitude!r} has one value and no bounds: cell areas need "
                    "either several latitudes or a CF bounds variable",
                    variable=vel.latitude, expected="2+ latitudes or bounds", found="1 value",
                )
            edges = integrals.cell_edges(lat, -90.0, 90.0)
            lat_b = np.stack([edges[:-1], edges[1:]], axis=1)
        lon = self.lon.values
        lon_b = common.bounds_of(ds, vel.longitude)
        if lon_b is None:
            if lon.size < 2:
                raise UnsupportedInputError(
                    f"longitude {vel.longitude!r} has one value and no bounds",
                    variable=vel.longitude, expected="2+ longitudes or bounds", found="1 value",
                )
            widths = np.diff(integrals.cell_edges(lon))
        else:
            widths = np.abs(lon_b[:, 1] - lon_b[:, 0])
        if np.sum(np.abs(widths)) > 360.0 * (1 + 1e-9):
            raise UnsupportedInputError(
                f"longitude {vel.longitude!r} cells span {np.sum(np.abs(widths)):.6g} degrees, "
                "more than once around; drop the repeated column",
                variable=vel.longitude, expected="at most 360 degrees", found="more",
            )
        return integrals.cell_area_factors(lat_b, widths, self.a, self.f)

    def _mass_per_area(self, ds, surface_pressure, density) -> str:
        """Set how each level's mass per unit area is made; return the note saying so."""
        lev = self.levels
        ps = None
        if surface_pressure is not None:
            ps = common.surface_pressure_in_pa(ds, surface_pressure)
        self.source = None
        if lev is None:
            if density is not None:
                raise MissingInputError(
                    "density= needs height or depth levels to make layer thicknesses; the "
                    "velocity has no vertical coordinate",
                    variable="density", expected="a vertical coordinate", found="none",
                )
            if ps is None:
                raise MissingInputError(
                    "no vertical coordinate and no surface_pressure=: the mass of the air or "
                    "water is unknown; give surface_pressure= (column mass ps / g) or levels",
                    variable="surface_pressure", expected="surface pressure or levels",
                    found="neither",
                )
            self.kind, self.source = "column", ps
            return "one level: the whole column (ps / g) moves with the velocity"
        if lev.kind == "pressure":
            if density is not None:
                raise ConventionError(
                    f"density= is not used on pressure levels ({lev.name!r}): the mass of a "
                    "layer is dp / g; leave density out",
                    variable="density", expected="no density on pressure levels",
                    found="density given",
                )
            bounds = lev.bounds
            if bounds is None:
                edges = integrals.cell_edges(lev.values)
                edges[np.argmin(edges)] = 0.0
                if ps is not None:
                    edges[np.argmax(edges)] = np.inf
                bounds = np.stack([edges[:-1], edges[1:]], axis=1)
            note = (f"layers of {lev.name!r} " + ("from its bounds" if lev.bounds is not None
                    else "half-way between levels, the top one reaching p = 0"))
            if ps is None:
                self.kind = "levels"
                self.thickness = integrals.pressure_thickness(bounds) / self.gravity
                return note
            self.kind, self.source, self.bounds = "surface", ps, bounds
            return note + "; cut at the surface pressure"
        if ps is not None:
            raise ConventionError(
                f"surface_pressure= is for pressure levels or a single level; {lev.name!r} is "
                "a height or depth: give density= instead",
                variable="surface_pressure", expected="density on height/depth levels",
                found="surface pressure",
            )
        if density is None:
            raise MissingInputError(
                f"the levels {lev.name!r} are heights or depths: give density= (a variable "
                "name, a DataArray with units, or kg m-3) to make their masses",
                variable="density", expected="density", found="none",
            )
        bounds = lev.bounds
        if bounds is None:
            edges = integrals.cell_edges(lev.values)
            if lev.positive_down:
                edges = np.clip(edges, 0.0, None)
            bounds = np.stack([edges[:-1], edges[1:]], axis=1)
        thickness = integrals.layer_thickness(bounds)
        rho = common.density_in_si(ds, density)
        note = f"layers of {lev.name!r} " + ("from its bounds" if lev.bounds is not None
                                               else "half-way between levels")
        if rho.ndim == 0:
            self.kind, self.thickness = "levels", thickness * float(rho)
        else:
            self.kind, self.source, self.thickness = "density", rho, thickness
        return note + "; mass = density x thickness"


#: Sums up to this size are gathered into one Dask block before further arithmetic.
_GATHER_BYTES = 64 * 2**20


def _blockwise(func, args, arg_dims, loop, keep, n, kwargs) -> xr.DataArray:
    """Run ``func`` block by block on Dask data whose core dimensions are whole.

    Like ``apply_kernel``, but each task gets the stored blocks themselves
    (``dask.array.blockwise`` without concatenation: no copy of every block),
    and arguments lacking a loop dimension get a length-1 axis in its place.
    """
    import dask.array as da

    letters = {d: chr(ord("a") + i) for i, d in enumerate([*loop, *arg_dims[0]])}
    for dims in arg_dims:
        for d in dims:
            letters.setdefault(d, chr(ord("a") + len(letters)))
    pairs, expand = [], []
    for arr, dims in zip(args, arg_dims, strict=True):
        own = [d for d in loop if d in arr.dims]
        data = arr.transpose(*own, *dims).data
        pairs += [data, "".join(letters[d] for d in (*own, *dims))]
        expand.append(tuple(i for i, d in enumerate(loop) if d not in own))
    out = "".join(letters[d] for d in (*loop, *keep)) + "Q"
    data = da.blockwise(_Blocks(func, tuple(expand), kwargs), out, *pairs, new_axes={"Q": n},
                        dtype=np.float64, concatenate=None, meta=np.empty((0,) * len(out)))
    return xr.DataArray(data, dims=[*loop, *keep, "quantity"])


class _Blocks:
    """Unwrap the one-block lists blockwise hands over, restore missing loop axes, call."""

    def __init__(self, func, expand: tuple[tuple[int, ...], ...], kwargs: dict) -> None:
        self.func, self.expand, self.kwargs = func, expand, kwargs

    def __call__(self, *blocks):
        arrays = []
        for block, missing in zip(blocks, self.expand, strict=True):
            while isinstance(block, list):
                (block,) = block
            arrays.append(np.expand_dims(block, missing) if missing else block)
        return self.func(*arrays, **self.kwargs)


class _ShellSums:
    """:func:`integrals.shell_sums` with the inputs at ``absent`` positions passed as None."""

    def __init__(self, absent: tuple[int, ...]) -> None:
        self.absent = absent

    def __call__(self, *arrays, **kwargs):
        it = iter(arrays)
        full = [None if i in self.absent else next(it) for i in range(3)]
        return integrals.shell_sums(*full, **kwargs)


def _momentum_variables(relative, frame_part, mass, base: dict) -> dict[str, xr.DataArray]:
    return {
        "angular_momentum_relative": relative.assign_attrs(
            long_name="axial angular momentum relative to the rotating body", units=_MOMENTUM_UNITS,
            **base),
        "angular_momentum_frame": frame_part.assign_attrs(
            long_name="axial angular momentum of the body's rotation carried by the fluid",
            units=_MOMENTUM_UNITS, **base),
        "angular_momentum_absolute": (relative + frame_part).assign_attrs(
            long_name="absolute axial angular momentum", units=_MOMENTUM_UNITS, **base),
        "mass": mass.assign_attrs(long_name="mass of the fluid integrated over", units="kg",
                                  **base),
    }


def _constants(constants: str | Mapping[str, float]) -> dict[str, float]:
    if isinstance(constants, str):
        return EXCITATION_CONSTANTS[check_choice("constants", constants,
                                                 tuple(EXCITATION_CONSTANTS))]
    keys = set(EXCITATION_CONSTANTS["barnes1983"])
    if not isinstance(constants, Mapping) or set(constants) != keys:
        found = sorted(constants) if isinstance(constants, Mapping) else type(constants).__name__
        raise ConventionError(
            f"constants= must be one of {sorted(EXCITATION_CONSTANTS)} or a mapping with the "
            f"keys {sorted(keys)}; found {found}",
            variable="constants", expected=", ".join(sorted(keys)), found=str(found),
        )
    return {k: float(v) for k, v in constants.items()}


def _coords_on(ds: xr.Dataset, dims) -> dict:
    """Coordinates of ``ds`` that lie wholly on ``dims``."""
    return {n: c.variable for n, c in ds.coords.items() if set(c.dims) <= set(dims)}
