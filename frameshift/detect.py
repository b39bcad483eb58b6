"""Find velocities, positions and time in a Dataset, and say why when we cannot.

Detection is by CF metadata (standard names, units, ``positive``, ``axis``),
never by variable name alone. The result is a :class:`Layout`: the names of
what was found plus the assumptions made, which converted variables record.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import xarray as xr

from frameshift import criteria
from frameshift.errors import (
    ConventionError,
    FrameError,
    InputTypeError,
    MissingInputError,
    UnsupportedInputError,
)
from frameshift.units import parse_units, scale_to

__all__ = ["Layout", "VelocitySet", "find_layout", "find_time", "find_velocity"]

INERTIAL = "inertial"
ROTATING = "rotating"


@dataclass(frozen=True)
class VelocitySet:
    """Names of the velocity components found, and their family."""

    family: str
    eastward: str
    northward: str
    upward: str | None

    def names(self) -> tuple[str, ...]:
        return tuple(n for n in (self.eastward, self.northward, self.upward) if n is not None)

    def items(self) -> tuple[tuple[str, str], ...]:
        pairs = zip(criteria.COMPONENTS, (self.eastward, self.northward, self.upward), strict=True)
        return tuple((c, n) for c, n in pairs if n is not None)


@dataclass(frozen=True)
class Layout:
    """Everything frameshift found in a Dataset to place and move its velocities."""

    velocity: VelocitySet
    latitude: str
    longitude: str
    vertical: str | None
    vertical_sign: float
    time: str | None
    notes: tuple[str, ...]


def require_dataset(ds: object) -> xr.Dataset:
    if not isinstance(ds, xr.Dataset):
        raise InputTypeError(
            f"expected an xarray.Dataset; found {type(ds).__name__}. "
            "Wrap a DataArray with .to_dataset() so its coordinates come along",
            variable="ds",
            expected="xarray.Dataset",
            found=type(ds).__name__,
        )
    return ds


def _std(var: xr.Variable | xr.DataArray) -> str | None:
    return var.attrs.get("standard_name")


def _earth_standard_name(var: xr.DataArray) -> str | None:
    """The Earth-relative standard name a variable has, or had before conversion."""
    return _std(var) or var.attrs.get("standard_name_in_rotating_frame")


def find_velocity(
    ds: xr.Dataset, velocity: Mapping[str, str] | None = None, *, target: str = INERTIAL
) -> VelocitySet:
    """Find one set of velocity components in ``ds``.

    Parameters
    ----------
    ds : xarray.Dataset
    velocity : mapping, optional
        ``{"eastward": name, "northward": name, "upward": name}`` (upward optional).
    target : {"inertial", "rotating"}
        The frame the caller will convert to; a set already in it is refused.
    """
    if velocity is not None:
        vset = _velocity_from_mapping(ds, velocity)
    else:
        vset = _velocity_from_metadata(ds, target)
    for comp, name in vset.items():
        _check_not_in(ds, name, target)
        parse_units(name, ds.variables[name].attrs.get("units"), "speed")
        del comp
    dims = [set(ds.variables[n].dims) for n in vset.names()]
    if any(d != dims[0] for d in dims):
        found = ", ".join(f"{n}{tuple(ds.variables[n].dims)}" for n in vset.names())
        raise UnsupportedInputError(
            f"velocity components must share their dimensions; found {found}",
            variable=vset.eastward,
            expected="components on the same dimensions",
            found=found,
        )
    return vset


def _velocity_from_mapping(ds: xr.Dataset, velocity: Mapping[str, str]) -> VelocitySet:
    if not isinstance(velocity, Mapping):
        raise InputTypeError(
            "velocity= must be a mapping such as {'eastward': 'U', 'northward': 'V'}; "
            f"found {type(velocity).__name__}",
            variable="velocity",
            expected="mapping of component to variable name",
            found=type(velocity).__name__,
        )
    unknown = set(velocity) - set(criteria.COMPONENTS)
    if unknown:
        raise ConventionError(
            f"velocity= has unknown component(s) {sorted(unknown)}; "
            f"valid components are {list(criteria.COMPONENTS)}",
            variable="velocity",
            expected=", ".join(criteria.COMPONENTS),
            found=", ".join(sorted(unknown)),
        )
    for comp in ("eastward", "northward"):
        if comp not in velocity:
            raise MissingInputError(
                f"velocity= must name the {comp!r} component; found only {sorted(velocity)}",
                variable="velocity",
                expected="eastward and northward",
                found=", ".join(sorted(velocity)),
            )
    for comp, name in velocity.items():
        if name not in ds.variables:
            raise MissingInputError(
                f"velocity= names {name!r} for the {comp} component, but the Dataset has no "
                f"such variable; it has {sorted(map(str, ds.data_vars))}",
                variable=name,
                expected="a variable of the Dataset",
                found="absent",
            )
        _refuse_grid_relative(name, _std(ds.variables[name]))
    family = "velocity"
    std = _earth_standard_name(ds.variables[velocity["eastward"]])
    for fam, table in criteria.VELOCITY_STANDARD_NAMES.items():
        if std == table["eastward"]:
            family = fam
    return VelocitySet(family, velocity["eastward"], velocity["northward"], velocity.get("upward"))


def _velocity_from_metadata(ds: xr.Dataset, target: str) -> VelocitySet:
    found: dict[str, dict[str, list[str]]] = {}
    grid_relative = []
    for name, var in ds.variables.items():
        std = _earth_standard_name(var)
        if std in criteria.GRID_RELATIVE_STANDARD_NAMES:
            grid_relative.append(f"{name} ({std})")
        for fam, table in criteria.VELOCITY_STANDARD_NAMES.items():
            for comp, sname in table.items():
                if std == sname:
                    found.setdefault(fam, {}).setdefault(comp, []).append(str(name))
    complete = {f: c for f, c in found.items() if "eastward" in c and "northward" in c}
    # Where some sets are already in the target frame and others are not (a file
    # whose winds were converted and whose currents were not), the set still to
    # convert is the one meant; with none left, the frame check below explains.
    convertible = {
        f: {k: [n for n in names if _frame_of(ds.variables[n]) != target] for k, names in c.items()}
        for f, c in complete.items()
    }
    convertible = {
        f: {k: n for k, n in c.items() if n}
        for f, c in convertible.items()
        if c.get("eastward") and c.get("northward")
    }
    if convertible:
        complete = convertible
    if not complete:
        if grid_relative:
            _refuse_grid_relative(
                grid_relative[0].split(" ")[0], grid_relative[0].split("(")[1][:-1]
            )
        partial = {f: c for f, c in found.items() if c}
        looked = ", ".join(
            n for t in criteria.VELOCITY_STANDARD_NAMES.values() for n in list(t.values())[:2]
        )
        detail = (
            f"found only {partial}" if partial else "found no variable with those standard names"
        )
        raise MissingInputError(
            f"no eastward/northward velocity pair found: looked for standard names {looked}; "
            f"{detail}. Name the variables with velocity={{'eastward': ..., 'northward': ...}}",
            variable="velocity",
            expected="an eastward and a northward component",
            found=detail,
        )
    if len(complete) > 1 or any(len(v) > 1 for c in complete.values() for v in c.values()):
        listing = "; ".join(
            f"{fam}: " + ", ".join(f"{comp}={names}" for comp, names in comps.items())
            for fam, comps in complete.items()
        )
        raise UnsupportedInputError(
            f"the Dataset holds more than one set of velocities ({listing}); pick one with "
            "velocity={'eastward': ..., 'northward': ..., 'upward': ...}",
            variable="velocity",
            expected="one set of velocity components",
            found=listing,
        )
    fam, comps = next(iter(complete.items()))
    up = comps.get("upward", [None])[0]
    return VelocitySet(fam, comps["eastward"][0], comps["northward"][0], up)


def _refuse_grid_relative(name: str, std: str | None) -> None:
    if std in criteria.GRID_RELATIVE_STANDARD_NAMES:
        raise UnsupportedInputError(
            f"variable {name!r} is grid-relative ({std}); rotate the components to "
            "east/north first (e.g. with the grid's angle_of_rotation_from_east_to_x), "
            "then convert",
            variable=name,
            expected="eastward/northward components",
            found=std,
        )


def _frame_of(var: xr.DataArray) -> str | None:
    """The frame a velocity is relative to, from its attributes (None if unknown)."""
    frame = var.attrs.get("reference_frame")
    if frame is None and _std(var):
        # Earth-relative standard names mean "relative to the rotating body".
        frame = ROTATING
    return frame


def _check_not_in(ds: xr.Dataset, name: str, target: str) -> None:
    attrs = ds.variables[name].attrs
    frame = _frame_of(ds.variables[name])
    if frame == target:
        raise FrameError(
            f"variable {name!r} is already relative to the {target} frame "
            f"(reference_frame={attrs.get('reference_frame', 'implied by its standard_name')!r}); "
            "nothing to convert",
            variable=name,
            expected=f"a velocity not yet in the {target} frame",
            found=str(frame),
        )


def _degrees(ds: xr.Dataset, axis: str) -> str:
    units_table = criteria.LATITUDE_UNITS if axis == "latitude" else criteria.LONGITUDE_UNITS
    by_std = [n for n, v in ds.variables.items() if _std(v) == axis]
    by_units = [
        n
        for n, v in ds.variables.items()
        if v.attrs.get("units") in units_table and n not in by_std
    ]
    candidates = by_std or by_units
    coords = [n for n in candidates if n in ds.coords]
    candidates = coords or candidates
    if not candidates:
        grid = [n for n, v in ds.variables.items() if _std(v) == f"grid_{axis}"]
        hint = (
            f"; {grid[0]!r} is a rotated-pole grid_{axis}, give the true {axis} too" if grid else ""
        )
        raise MissingInputError(
            f"no {axis} found: expected a variable with standard_name {axis!r} or units "
            f"'degrees_{'north' if axis == 'latitude' else 'east'}'{hint}",
            variable=axis,
            expected=f"standard_name={axis} or CF {axis} units",
            found="none",
        )
    if len(candidates) > 1:
        raise UnsupportedInputError(
            f"more than one {axis} variable: {sorted(map(str, candidates))}; keep one",
            variable=axis,
            expected=f"one {axis}",
            found=", ".join(sorted(map(str, candidates))),
        )
    return str(candidates[0])


def find_time(ds: xr.Dataset, dims: tuple[str, ...] | None = None) -> str | None:
    """Name of the time coordinate (decoded datetimes) on ``dims``, or None."""
    hits = []
    for name, var in ds.variables.items():
        if dims is not None and not set(var.dims) <= set(dims):
            continue
        is_time = np.issubdtype(var.dtype, np.datetime64) or (
            var.dtype == object and var.size and hasattr(var.values.flat[0], "calendar")
        )
        if is_time and (name in ds.coords or _std(var) == "time"):
            hits.append(str(name))
    if not hits:
        return None
    preferred = [n for n in hits if n in ds.dims] or hits
    return preferred[0]


def find_layout(
    ds: xr.Dataset,
    velocity: Mapping[str, str] | None = None,
    *,
    height: object = None,
    target: str = INERTIAL,
) -> Layout:
    """Find the velocity set, position and time of ``ds`` (see module docstring)."""
    vset = find_velocity(ds, velocity, target=target)
    vdims = tuple(ds.variables[vset.eastward].dims)
    lat = _degrees(ds, "latitude")
    lon = _degrees(ds, "longitude")
    for name in (lat, lon):
        if not set(ds.variables[name].dims) <= set(vdims):
            raise UnsupportedInputError(
                f"{name!r} has dimensions {ds.variables[name].dims} not all shared by the velocity "
                f"{vset.eastward!r} {vdims}",
                variable=name,
                expected=f"dimensions within {vdims}",
                found=str(ds.variables[name].dims),
            )
    notes: list[str] = []
    if vset.upward is None:
        notes.append("no upward velocity given; taken as 0")
    vertical, sign = None, 1.0
    if height is None:
        vertical, sign, note = _find_vertical(ds, vdims)
        if note:
            notes.append(note)
    elif isinstance(height, str):
        if height not in ds.variables:
            raise MissingInputError(
                f"height={height!r} names no variable of the Dataset",
                variable=height,
                expected="a variable of the Dataset",
                found="absent",
            )
        vertical = height
        notes.append(f"height above the reference ellipsoid taken from {height!r} (height=)")
    else:
        notes.append("height above the reference ellipsoid given by the caller (height=)")
    time = find_time(ds, vdims)
    return Layout(vset, lat, lon, vertical, sign, time, tuple(notes))


def _find_vertical(ds: xr.Dataset, vdims: tuple[str, ...]) -> tuple[str | None, float, str | None]:
    usable = {n: v for n, v in ds.variables.items() if set(v.dims) <= set(vdims)}
    for sname, (sign, note) in criteria.VERTICAL_STANDARD_NAMES.items():
        hits = [n for n, v in usable.items() if _std(v) == sname]
        if hits:
            hits.sort(key=lambda n: (n not in ds.coords, str(n)))
            return str(hits[0]), sign, note
    coords = {n: v for n, v in usable.items() if n in ds.coords}
    for n, v in coords.items():  # a Z axis with a length unit and a 'positive' attribute
        positive = str(v.attrs.get("positive", "")).lower()
        if positive in ("up", "down") and _is_length(v):
            sign = 1.0 if positive == "up" else -1.0
            return str(n), sign, f"{n!r} (positive {positive}) taken as height above the ellipsoid"
    pressure = [
        str(n)
        for n, v in coords.items()
        if _std(v) in criteria.PRESSURE_STANDARD_NAMES or _is_pressure(v)
    ]
    if pressure:
        raise UnsupportedInputError(
            f"the vertical coordinate {pressure[0]!r} is pressure, and the Dataset has no "
            "height for it; pass height= (a number in m, a DataArray with length units, or "
            "the name of a variable; --height on the command line) or include geopotential "
            "height (standard_name geopotential_height)",
            variable=pressure[0],
            expected="a height, altitude, depth or geopotential_height",
            found="pressure only",
        )
    return None, 1.0, "no vertical coordinate; height taken as 0 m on the reference ellipsoid"


def _is_length(var: xr.Variable) -> bool:
    try:
        parse_units("?", var.attrs.get("units"), "length")
    except ValueError:
        return False
    return True


def _is_pressure(var: xr.Variable) -> bool:
    if "units" not in var.attrs or var.attrs.get("axis", "Z") != "Z" or var.ndim > 1:
        return False
    try:
        parse_units("?", var.attrs.get("units"), "pressure")
    except ValueError:
        return False
    return True


def height_in_metres(ds: xr.Dataset, layout: Layout, height: object = None) -> xr.DataArray:
    """The height above the ellipsoid (m, positive up) as a DataArray (may be 0-d)."""
    if layout.vertical is not None:
        return length_in_metres(
            ds.variables[layout.vertical], layout.vertical, layout.vertical_sign
        )
    if height is None:
        return xr.DataArray(0.0)
    return given_height_in_metres(ds, height)


def length_in_metres(var: xr.DataArray | xr.Variable, name: str, sign: float = 1.0) -> xr.DataArray:
    """A length variable in metres (times ``sign``), units checked, attributes dropped."""
    factor = sign * scale_to(parse_units(name, var.attrs.get("units"), "length"), "m")
    return _plain(var) * factor if factor != 1.0 else _plain(var)


def given_height_in_metres(ds: xr.Dataset | None, height: object) -> xr.DataArray:
    """A ``height=`` argument (variable name, DataArray with length units, or metres)."""
    if isinstance(height, str):
        if ds is None or height not in ds.variables:
            raise MissingInputError(
                f"height={height!r} names no variable of the input",
                variable=height,
                expected="a variable of the Dataset",
                found="absent",
            )
        return length_in_metres(ds.variables[height], height)
    if isinstance(height, xr.DataArray):
        return length_in_metres(height, str(height.name or "height"))
    try:
        return xr.DataArray(float(height))
    except (TypeError, ValueError) as exc:
        raise InputTypeError(
            f"height= must be a number (m), a DataArray with length units or a variable "
            f"name; found {type(height).__name__}",
            variable="height",
            expected="number, DataArray or str",
            found=type(height).__name__,
        ) from exc


def _plain(var: xr.DataArray | xr.Variable) -> xr.DataArray:
    """A DataArray with the same data and dims but no attributes or coordinates."""
    data = var.variable if isinstance(var, xr.DataArray) else var
    return xr.DataArray(data.data, dims=data.dims)
