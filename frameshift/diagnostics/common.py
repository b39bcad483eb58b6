"""What the diagnostics share: finding things in a Dataset, units at the boundary, outputs.

Velocities, latitude, longitude and time come from
:func:`frameshift.detect.find_layout`; this module adds what the diagnostics
need beyond it (grids with cell bounds, vertical levels to integrate over,
surface pressure and density, seconds along a record) and builds their
outputs with explicit attributes.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import xarray as xr

from frameshift.cf import stamp
from frameshift.detect import find_layout, position_values, require_dataset
from frameshift.errors import InputTypeError, MissingInputError, UnitsError, UnsupportedInputError
from frameshift.frames import Ellipsoid, check_frame
from frameshift.storage import SUMS_KEY
from frameshift.units import parse_units, scale_to, ureg

__all__ = [
    "Levels",
    "Velocity",
    "as_plain",
    "bounds_of",
    "density_in_si",
    "find_levels",
    "finish",
    "frame_attrs",
    "grid_axes",
    "grid_axis",
    "require_dataset",
    "seconds_along",
    "surface_pressure_in_pa",
    "velocity_in_si",
]

PRESSURE_NAMES = ("air_pressure", "sea_water_pressure")
LENGTH_NAMES = (
    "height",
    "altitude",
    "depth",
    "height_above_reference_ellipsoid",
    "height_above_mean_sea_level",
    "height_above_geopotential_datum",
    "geopotential_height",
)


@dataclass(frozen=True)
class Velocity:
    """Eastward and northward velocity in m s-1 (plain DataArrays) and where they came from."""

    u: xr.DataArray
    v: xr.DataArray
    eastward: str
    northward: str
    family: str
    latitude: str
    longitude: str
    vertical: str | None
    vertical_sign: float
    time: str | None


def as_plain(var: xr.DataArray | xr.Variable) -> xr.DataArray:
    """The same data on the same dimensions, without attributes or coordinates."""
    data = var.variable if isinstance(var, xr.DataArray) else var
    return xr.DataArray(data.data, dims=data.dims)


def _scaled(var: xr.Variable, name: str, kind: str, target: str) -> xr.DataArray:
    factor = scale_to(parse_units(name, var.attrs.get("units"), kind), target)
    plain = as_plain(var)
    return plain * factor if factor != 1.0 else plain


def velocity_in_si(ds: xr.Dataset, velocity: Mapping[str, str] | None, frame) -> Velocity:
    """Find the Earth-relative east/north velocity of ``ds`` and return it in m s-1."""
    require_dataset(ds)
    check_frame(frame, Ellipsoid)
    layout = find_layout(ds, velocity, height=0.0, target="inertial")
    vel = layout.velocity
    # the door's checks (latitude in degrees and within ±90, finite longitude) on the
    # positions the diagnostics read; in-memory coordinates are checked here and now
    position_values(ds, vel.position)
    u = _scaled(ds.variables[vel.eastward], vel.eastward, "speed", "m s-1")
    v = _scaled(ds.variables[vel.northward], vel.northward, "speed", "m s-1")
    return Velocity(u, v, vel.eastward, vel.northward, vel.family, layout.latitude,
                    layout.longitude, layout.vertical, layout.vertical_sign, layout.time)


def grid_axis(ds: xr.Dataset, name: str, axis: str, dims: tuple[str, ...]) -> str:
    """The dimension of a 1-D latitude or longitude coordinate; refuse other grids."""
    var = ds.variables[name]
    if var.ndim != 1 or var.dims[0] not in dims:
        raise UnsupportedInputError(
            f"{axis} {name!r} has dimensions {var.dims}; this diagnostic needs a "
            f"latitude-longitude grid whose {axis} is a 1-D coordinate along one of the "
            f"velocity's dimensions {dims}",
            variable=name,
            expected=f"1-D {axis} along a velocity dimension",
            found=str(var.dims),
        )
    values = np.asarray(var.values, dtype=np.float64)
    steps = np.diff(values)
    if values.size > 1 and not (np.all(steps > 0) or np.all(steps < 0)):
        raise UnsupportedInputError(
            f"{axis} {name!r} is not strictly monotonic; sort the grid first",
            variable=name,
            expected=f"strictly increasing or decreasing {axis}",
            found="unsorted or repeated values",
        )
    return str(var.dims[0])


def grid_axes(ds: xr.Dataset, vel: Velocity) -> tuple[str, str]:
    """Latitude and longitude dimensions of a latitude-longitude grid; refuse anything else."""
    dims = tuple(map(str, vel.u.dims))
    lat_var, lon_var = ds.variables[vel.latitude], ds.variables[vel.longitude]
    if lat_var.ndim == 1 and lat_var.dims == lon_var.dims:
        lat_dim = str(lat_var.dims[0])
        raise UnsupportedInputError(
            f"latitude {vel.latitude!r} and longitude {vel.longitude!r} share the dimension "
            f"{lat_dim!r} (stations or a track); this diagnostic needs a latitude-longitude grid",
            variable=vel.latitude, expected="latitude and longitude on their own dimensions",
            found=f"both on {lat_dim!r}",
        )
    return (grid_axis(ds, vel.latitude, "latitude", dims),
            grid_axis(ds, vel.longitude, "longitude", dims))


def bounds_of(ds: xr.Dataset, name: str) -> np.ndarray | None:
    """Values of the CF ``bounds`` variable of coordinate ``name`` (shape (n, 2)), or None."""
    bname = ds.variables[name].attrs.get("bounds")
    if bname is None:
        return None
    if bname not in ds.variables or ds.variables[bname].shape != (ds.variables[name].size, 2):
        raise UnsupportedInputError(
            f"coordinate {name!r} names bounds {bname!r}, which the Dataset does not hold with "
            f"shape ({ds.variables[name].size}, 2)",
            variable=str(bname),
            expected=f"a ({ds.variables[name].size}, 2) bounds variable",
            found="absent" if bname not in ds.variables else str(ds.variables[bname].shape),
        )
    return np.asarray(ds.variables[bname].values, dtype=np.float64)


@dataclass(frozen=True)
class Levels:
    """A vertical coordinate to integrate over: ``kind`` "pressure" (Pa) or "length" (m)."""

    name: str
    dim: str
    kind: str
    values: np.ndarray
    bounds: np.ndarray | None
    positive_down: bool


def find_levels(ds: xr.Dataset, dims: tuple[str, ...], vertical: str | None = None):
    """The vertical coordinate along one of ``dims`` (pressure or length), or None."""
    if vertical is not None:
        if vertical not in ds.variables:
            raise MissingInputError(
                f"vertical={vertical!r} names no variable of the Dataset",
                variable=vertical, expected="a coordinate of the Dataset", found="absent",
            )
        candidates = [vertical]
    else:
        candidates = [
            str(n) for n, v in ds.coords.items()
            if v.ndim == 1 and v.dims[0] in dims and _looks_vertical(v)
        ]
    if not candidates:
        return None
    if len(candidates) > 1:
        raise UnsupportedInputError(
            f"more than one vertical coordinate {candidates}; pick one with vertical=",
            variable="vertical", expected="one vertical coordinate", found=", ".join(candidates),
        )
    name = candidates[0]
    var = ds.variables[name]
    if var.ndim != 1 or var.dims[0] not in dims:
        raise UnsupportedInputError(
            f"vertical coordinate {name!r} must be 1-D along a velocity dimension {dims}; "
            f"found dimensions {var.dims}",
            variable=name, expected="1-D coordinate", found=str(var.dims),
        )
    units = var.attrs.get("units")
    kind, target = ("pressure", "Pa") if _is_kind(units, "pressure") else ("length", "m")
    factor = scale_to(parse_units(name, units, kind), target)
    values = np.asarray(var.values, dtype=np.float64) * factor
    bounds = bounds_of(ds, name)
    if bounds is not None:
        bounds = bounds * factor
    down = str(var.attrs.get("positive", "")).lower() == "down" or (
        var.attrs.get("standard_name") == "depth"
    )
    return Levels(name, str(var.dims[0]), kind, values, bounds, down)


def _is_kind(units: object, kind: str) -> bool:
    try:
        parse_units("?", units, kind)
    except UnitsError:
        return False
    return True


def _looks_vertical(var: xr.DataArray) -> bool:
    attrs = var.attrs
    said = (
        attrs.get("axis") == "Z"
        or str(attrs.get("positive", "")).lower() in ("up", "down")
        or attrs.get("standard_name") in PRESSURE_NAMES + LENGTH_NAMES
    )
    units = attrs.get("units")
    return said and (_is_kind(units, "pressure") or _is_kind(units, "length"))


def surface_pressure_in_pa(ds: xr.Dataset, surface_pressure: object) -> xr.DataArray:
    """``surface_pressure=`` (a variable name, a DataArray with units, or a number in Pa)."""
    if isinstance(surface_pressure, str):
        if surface_pressure not in ds.variables:
            raise MissingInputError(
                f"surface_pressure={surface_pressure!r} names no variable of the Dataset",
                variable=surface_pressure, expected="a variable of the Dataset", found="absent",
            )
        return _scaled(ds.variables[surface_pressure], surface_pressure, "pressure", "Pa")
    if isinstance(surface_pressure, xr.DataArray):
        return _scaled(surface_pressure.variable, str(surface_pressure.name or "surface_pressure"),
                       "pressure", "Pa")
    return xr.DataArray(_number(surface_pressure, "surface_pressure", "Pa"))


def density_in_si(ds: xr.Dataset, density: object) -> xr.DataArray:
    """``density=`` (a variable name, a DataArray with units, or a number in kg m-3)."""
    if isinstance(density, str | xr.DataArray):
        if isinstance(density, str):
            if density not in ds.variables:
                raise MissingInputError(
                    f"density={density!r} names no variable of the Dataset",
                    variable=density, expected="a variable of the Dataset", found="absent",
                )
            var, name = ds.variables[density], density
        else:
            var, name = density.variable, str(density.name or "density")
        units = var.attrs.get("units")
        try:
            unit = ureg.Unit(str(units)) if units is not None else None
        except Exception:  # pint raises several types for text it cannot read
            unit = None
        if unit is None or unit.dimensionality != ureg.Unit("kg m-3").dimensionality:
            raise UnitsError(
                f"variable {name!r} has units {units!r}; expected units of density, e.g. 'kg m-3'",
                variable=name, expected="[mass] / [length] ** 3", found=str(units),
            )
        factor = float(ureg.Quantity(1.0, unit).to("kg m-3").magnitude)
        plain = as_plain(var)
        return plain * factor if factor != 1.0 else plain
    return xr.DataArray(_number(density, "density", "kg m-3"))


def _number(value: object, name: str, unit: str) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError) as exc:
        raise InputTypeError(
            f"{name}= must be a variable name, a DataArray with units or a number in {unit}; "
            f"found {type(value).__name__}",
            variable=name, expected=f"str, DataArray or number ({unit})",
            found=type(value).__name__,
        ) from exc
    if not np.isfinite(number) or number < 0:
        raise UnsupportedInputError(
            f"{name}= must be a finite, non-negative number in {unit}; found {value!r}",
            variable=name, expected=f">= 0 {unit}", found=repr(value),
        )
    return number


def seconds_along(
    ds: xr.Dataset, time: str | None, dims: tuple[str, ...]
) -> tuple[str, np.ndarray]:
    """The time dimension along ``dims`` and its values in seconds from the first."""
    if time is None or ds.variables[time].ndim != 1 or ds.variables[time].dims[0] not in dims:
        raise MissingInputError(
            "this diagnostic needs a 1-D time coordinate along a dimension of the velocity "
            f"{dims}; found {'none' if time is None else repr(time)}",
            variable="time", expected="decoded 1-D time coordinate",
            found="none" if time is None else str(ds.variables[time].dims),
        )
    values = ds.variables[time].values
    if np.issubdtype(values.dtype, np.datetime64) or np.issubdtype(values.dtype, np.timedelta64):
        seconds = (values - values[0]) / np.timedelta64(1, "s")
    elif values.dtype == object and values.size and hasattr(values[0], "calendar"):
        seconds = np.array([(t - values[0]).total_seconds() for t in values])
    else:
        raise UnsupportedInputError(
            f"time {time!r} is not decoded (dtype {values.dtype}); open the file with "
            "decode_times=True",
            variable=time, expected="datetime64 or cftime values", found=str(values.dtype),
        )
    seconds = np.asarray(seconds, dtype=np.float64)
    if seconds.size > 1 and not np.all(np.diff(seconds) > 0):
        raise UnsupportedInputError(
            f"time {time!r} is not strictly increasing; sort the record by time first",
            variable=time, expected="strictly increasing time", found="unsorted or repeated",
        )
    return str(ds.variables[time].dims[0]), seconds


def finish(out: xr.Dataset, ds: xr.Dataset, operation: str, *,
           sums: bool = False) -> xr.Dataset:
    """The output Dataset with the input's global attributes, a history line and Conventions.

    ``sums=True`` marks its float variables as sums over many points (integrals):
    they are stored in float64 whatever the input's precision (a float32 total
    would keep 7 digits of a quantity whose changes are often smaller than that).
    """
    out.attrs = dict(ds.attrs)
    if sums:
        for var in out.data_vars.values():
            if var.dtype.kind == "f":
                var.encoding[SUMS_KEY] = True
    return stamp(out, operation)


def frame_attrs(frame) -> dict:
    """Attributes naming the frame a diagnostic used."""
    return {"reference_body": str(frame.name),
            "rotation_rate": f"{float(frame.rotation_rate)!r} rad s-1"}
