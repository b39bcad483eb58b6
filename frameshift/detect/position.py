"""Where a variable's values sit: its own coordinates, read as the file states them.

A CF variable names the coordinates that belong to it: its dimension
coordinates, plus the variables listed in its ``coordinates`` attribute
(xarray keeps that attribute in ``encoding`` after decoding a file). Those
decide which latitude, longitude, vertical and time belong to a velocity.
Only a variable that declares no ``coordinates`` at all has its position
guessed, and then only among coordinates whose dimensions it shares. A
variable outside a velocity's declared coordinates (a bathymetry, the
latitude of cell nodes) is never taken for its position.

Values come out in SI and float64 (degrees for latitude/longitude, metres
positive up for the vertical) as plain DataArrays, lazy when the input is.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Hashable, Mapping
from dataclasses import dataclass, field

import numpy as np
import xarray as xr

from frameshift.detect import criteria
from frameshift.errors import (
    FrameshiftWarning,
    InputTypeError,
    MissingInputError,
    UnitsError,
    UnsupportedInputError,
)
from frameshift.frames.timescales import Instants, instants_of
from frameshift.units import parse_units, scale_to

__all__ = [
    "Position",
    "declared_coordinates",
    "find_axis",
    "find_dataset_axis",
    "find_time",
    "find_vertical",
    "floor_of",
    "given_height",
    "height_values",
    "is_time",
    "length_values",
    "mask_poles",
    "plain",
    "position_values",
    "time_instants",
]


@dataclass(frozen=True)
class Position:
    """The coordinates that place one set of velocities.

    ``kind`` is ``"geodetic"`` (``latitude``, ``longitude``) or ``"planar"``
    (``x``, ``y``); ``vertical`` (name) with ``vertical_sign`` (+1 if positive
    up) and ``vertical_to_si`` (factor to m), or ``height`` (a value given by
    the caller); ``time`` (name or None); ``notes``: what was assumed.
    """

    kind: str
    latitude: str | None = None
    longitude: str | None = None
    x: str | None = None
    y: str | None = None
    vertical: str | None = None
    vertical_sign: float = 1.0
    vertical_to_si: float = 1.0
    time: str | None = None
    notes: tuple[str, ...] = ()
    height: object = field(default=None, compare=False, repr=False)


def plain(var: xr.DataArray | xr.Variable) -> xr.DataArray:
    """A DataArray with the same data and dims but no attributes or coordinates."""
    data = var.variable if isinstance(var, xr.DataArray) else var
    return xr.DataArray(data.data, dims=data.dims)


def _std(var: xr.Variable) -> str | None:
    return var.attrs.get("standard_name")


def declared_coordinates(ds: xr.Dataset, name: Hashable) -> tuple[bool, list[str]]:
    """``(declares, names)``: whether ``name`` has a ``coordinates`` attribute, and its
    coordinates (dimension coordinates, then those listed), as present in ``ds``."""
    var = ds.variables[name]
    text = var.attrs.get("coordinates", var.encoding.get("coordinates"))
    names = [str(d) for d in var.dims if d in ds.variables and ds.variables[d].dims == (d,)]
    declares = isinstance(text, str)
    if declares:
        names += [n for n in text.split() if n in ds.variables and n not in names]
    return declares, names


def _candidates(ds: xr.Dataset, name: Hashable | None, test) -> tuple[list[str], bool]:
    """Variables that pass ``test``: among ``name``'s own coordinates, else guessed.

    With ``name`` None, among all of the Dataset's variables (coordinates first).
    Returns ``(names, guessed)``.
    """
    if name is None:
        hits = [str(n) for n, v in ds.variables.items() if test(v)]
        coords = [n for n in hits if n in ds.coords]
        return coords or hits, True
    declares, own = declared_coordinates(ds, name)
    hits = [n for n in own if test(ds.variables[n])]
    if hits or declares:
        return hits, False
    dims = set(ds.variables[name].dims)
    shared = {
        str(n): v for n, v in ds.variables.items() if n != name and set(v.dims) <= dims
    }
    coords = [n for n, v in shared.items() if n in ds.coords and test(v)]
    if coords:
        return coords, True
    return [n for n, v in shared.items() if test(v)], True


def _is_axis(axis: str):
    units = criteria.AXIS_UNITS[axis]
    std = criteria.AXIS_STANDARD_NAMES[axis]

    def test(var: xr.Variable) -> bool:
        return _std(var) == std or (_std(var) is None and var.attrs.get("units") in units)

    return test


def find_axis(ds: xr.Dataset, name: Hashable, axis: str, given: str | None = None) -> str:
    """The latitude or longitude variable of ``name`` (see the module docstring)."""
    if given is not None:
        return _given(ds, given, axis)
    hits, guessed = _candidates(ds, name, _is_axis(axis))
    if len(hits) == 1:
        return hits[0]
    if len(hits) > 1:
        where = "its coordinates" if not guessed else "the coordinates it shares dimensions with"
        raise UnsupportedInputError(
            f"{name!r} has more than one {axis} among {where}: {sorted(hits)}; say which "
            f"with {axis}= (--{axis} on the command line)",
            variable=str(name),
            expected=f"one {axis}",
            found=", ".join(sorted(hits)),
        )
    grid = [str(n) for n, v in ds.variables.items() if _std(v) == f"grid_{axis}"]
    hint = f"; {grid[0]!r} is a rotated-pole grid_{axis}, give the true {axis} too" if grid else ""
    declares, own = declared_coordinates(ds, name)
    listed = f" (its coordinates: {', '.join(own) or 'none'})" if declares else ""
    raise MissingInputError(
        f"no {axis} found for {name!r}{listed}: expected a coordinate with standard_name "
        f"{axis!r} or units 'degrees_{'north' if axis == 'latitude' else 'east'}'{hint}; "
        f"or name it with {axis}= (--{axis} on the command line)",
        variable=axis,
        expected=f"standard_name={axis} or CF {axis} units",
        found="none",
    )


def find_dataset_axis(ds: xr.Dataset, axis: str, given: str | None = None) -> str:
    """The one latitude or longitude of a Dataset given for its positions alone.

    Marked by standard name or CF units; a coordinate is preferred to a data
    variable; several are refused (name one with ``latitude=``/``longitude=``).
    """
    if given is not None:
        return _given(ds, given, axis)
    test = _is_axis(axis)
    hits = [str(n) for n, v in ds.variables.items() if test(v)]
    coords = [n for n in hits if n in ds.coords]
    hits = coords or hits
    if len(hits) == 1:
        return hits[0]
    if hits:
        raise UnsupportedInputError(
            f"more than one {axis} variable: {sorted(hits)}; say which with {axis}=",
            variable=axis,
            expected=f"one {axis}",
            found=", ".join(sorted(hits)),
        )
    raise MissingInputError(
        f"no {axis} found: expected a variable with standard_name {axis!r} or units "
        f"'degrees_{'north' if axis == 'latitude' else 'east'}'",
        variable=axis,
        expected=f"standard_name={axis} or CF {axis} units",
        found="none",
    )


def _given(ds: xr.Dataset, given: object, what: str) -> str:
    if not isinstance(given, str):
        raise InputTypeError(
            f"{what}= must name a variable of the Dataset; found {type(given).__name__}",
            variable=what,
            expected="a variable name",
            found=type(given).__name__,
        )
    if given not in ds.variables:
        raise MissingInputError(
            f"{what}={given!r} names no variable of the Dataset; it has "
            f"{sorted(map(str, ds.variables))}",
            variable=given,
            expected="a variable of the Dataset",
            found="absent",
        )
    return given


def is_time(var: xr.Variable) -> bool:
    """True for decoded times (datetime64, cftime, timedelta64) or a ``time`` standard name."""
    if np.issubdtype(var.dtype, np.datetime64) or np.issubdtype(var.dtype, np.timedelta64):
        return True
    if var.dtype == object and var.size and hasattr(var.values.flat[0], "calendar"):
        return True
    return _std(var) in criteria.TIME_STANDARD_NAMES


def find_time(ds: xr.Dataset, name: Hashable | None = None, given: str | None = None) -> str | None:
    """The time coordinate of variable ``name`` (or of the Dataset), or None."""
    if given is not None:
        return _given(ds, given, "time")
    if name is None:
        hits = [str(n) for n, v in ds.variables.items() if n in ds.coords and is_time(v)]
        preferred = [n for n in hits if n in ds.dims] or hits
        return preferred[0] if preferred else None
    hits, _ = _candidates(ds, name, is_time)
    if len(hits) > 1:
        on_dims = [n for n in hits if n in ds.variables[name].dims]
        if len(on_dims) == 1:
            return on_dims[0]
        raise UnsupportedInputError(
            f"{name!r} has more than one time among its coordinates: {sorted(hits)}; say "
            "which with time= (--time on the command line)",
            variable=str(name),
            expected="one time coordinate",
            found=", ".join(sorted(hits)),
        )
    return hits[0] if hits else None


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


def _sign(var: xr.Variable, default: float) -> float:
    """+1 for a vertical positive up, -1 positive down: the ``positive`` attribute decides."""
    positive = str(var.attrs.get("positive", "")).strip().lower()
    if positive == "up":
        return 1.0
    if positive == "down":
        return -1.0
    return default


def find_vertical(
    ds: xr.Dataset, name: Hashable | None, given: str | None = None
) -> tuple[str | None, float, str | None]:
    """``(vertical, sign, note)`` for variable ``name``: its height/depth coordinate.

    With ``name`` None, the vertical of the Dataset as a whole.

    By standard name in the order of :data:`criteria.VERTICAL_STANDARD_NAMES`,
    then a length coordinate with a ``positive`` attribute. The ``positive``
    attribute, where present, gives the sign. A pressure-only vertical is
    refused (it places nothing without a height).
    """
    if given is not None:
        vname = _given(ds, given, "vertical")
        var = ds.variables[vname]
        table = criteria.VERTICAL_STANDARD_NAMES.get(_std(var), (1.0, None))
        return vname, _sign(var, table[0]), f"vertical position taken from {vname!r} (vertical=)"
    for sname, (sign, note) in criteria.VERTICAL_STANDARD_NAMES.items():
        hits, _ = _candidates(ds, name, lambda v, s=sname: _std(v) == s)
        if hits:
            hits.sort(key=lambda n: (n not in ds.coords, n))
            var = ds.variables[hits[0]]
            return hits[0], _sign(var, sign), note

    def z_axis(v: xr.Variable) -> bool:
        positive = str(v.attrs.get("positive", "")).strip().lower()
        return positive in ("up", "down") and _is_length(v)

    hits, _ = _candidates(ds, name, z_axis)
    if hits:
        hit = sorted(hits, key=lambda n: (n not in ds.coords, n))[0]
        var = ds.variables[hit]
        positive = str(var.attrs["positive"]).strip().lower()
        note = f"{hit!r} (positive {positive}) taken as height above the ellipsoid"
        return hit, _sign(var, 1.0), note
    pressure, _ = _candidates(
        ds, name, lambda v: _std(v) in criteria.PRESSURE_STANDARD_NAMES or _is_pressure(v)
    )
    if pressure:
        raise UnsupportedInputError(
            f"the vertical coordinate {pressure[0]!r} of {name!r} is pressure, and the Dataset "
            "has no height for it; pass height= (a number in m, a DataArray with length units, "
            "or the name of a variable; --height on the command line) or include geopotential "
            "height (standard_name geopotential_height)",
            variable=pressure[0],
            expected="a height, altitude, depth or geopotential_height",
            found="pressure only",
        )
    return None, 1.0, None


def length_values(var: xr.DataArray | xr.Variable, name: str, sign: float = 1.0) -> xr.DataArray:
    """A length variable in metres (times ``sign``), float64, units checked, attributes dropped."""
    factor = sign * scale_to(parse_units(name, var.attrs.get("units"), "length"), "m")
    out = plain(var).astype(np.float64)
    return out * factor if factor != 1.0 else out


def given_height(ds: xr.Dataset | None, height: object) -> xr.DataArray:
    """A ``height=`` argument (variable name, DataArray with length units, or metres)."""
    if isinstance(height, str):
        if ds is None or height not in ds.variables:
            raise MissingInputError(
                f"height={height!r} names no variable of the input",
                variable=height,
                expected="a variable of the Dataset",
                found="absent",
            )
        return length_values(ds.variables[height], height)
    if isinstance(height, xr.DataArray):
        return length_values(height, str(height.name or "height"))
    if isinstance(height, bool):
        height = object()  # refused below
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


def height_values(
    ds: xr.Dataset, position: Position, *, floor: float | None = None
) -> xr.DataArray:
    """Height above the figure (m, positive up) as a DataArray (may be 0-d).

    Every value must be finite and, with ``floor`` (e.g. minus the body's
    polar radius), above it: a height at or below the body's centre is not a
    place. Checked now for values in memory, as the data are computed for
    Dask-backed ones (a failure then stops the write; no file is left).
    """
    if position.height is not None:
        out = given_height(ds, position.height)
        name = position.height if isinstance(position.height, str) else "height"
    elif position.vertical is None:
        return xr.DataArray(0.0)
    else:
        out = plain(ds.variables[position.vertical]).astype(np.float64)
        factor = position.vertical_sign * position.vertical_to_si
        out = out * factor if factor != 1.0 else out
        name = position.vertical
    return _checked(out, _height_check(str(name), floor))


def _height_check(name: str, floor: float | None) -> Callable[[np.ndarray], None]:
    def check(values: np.ndarray) -> None:
        bad = ~np.isfinite(values)
        if bad.any():
            raise MissingInputError(
                f"{name!r} holds {int(bad.sum())} missing or infinite height value(s); every "
                "point needs a finite height (drop or fill those points first)",
                variable=name, expected="finite heights", found=f"{int(bad.sum())} not finite",
            )
        if floor is not None and values.size and values.min() <= floor:
            raise UnsupportedInputError(
                f"{name!r} puts a point {float(values.min()):.6g} m from the reference surface, "
                f"at or below the body's centre ({floor:.6g} m); check its units and its "
                "'positive' attribute",
                variable=name, expected=f"heights above {floor:.6g} m",
                found=f"{float(values.min()):.6g} m",
            )

    return check


def _checked(values: xr.DataArray, check: Callable[[np.ndarray], None]) -> xr.DataArray:
    """``values`` checked now if in memory, or as each Dask block is computed."""
    data = values.data
    if hasattr(data, "dask"):

        def block(part: np.ndarray) -> np.ndarray:
            check(part)
            return part

        return values.copy(data=data.map_blocks(block, dtype=data.dtype))
    check(np.asarray(data))
    return values


#: Units CF accepts for latitude and longitude, plus plain degrees (common practice)
_DEGREES = {"latitude": criteria.LATITUDE_UNITS | {"degree", "degrees"},
            "longitude": criteria.LONGITUDE_UNITS | {"degree", "degrees"}}


def _angle_check(name: str, axis: str, attrs: dict) -> Callable[[np.ndarray], None]:
    units = attrs.get("units")
    if units is None:
        raise UnitsError(
            f"{axis} {name!r} has no units; CF {axis} is in "
            f"{'degrees_north' if axis == 'latitude' else 'degrees_east'} (CF 1.11 §4.1, §4.2)",
            variable=name, expected="degrees_north" if axis == "latitude" else "degrees_east",
            found="no units",
        )
    text = str(units).strip()
    other = "longitude" if axis == "latitude" else "latitude"
    if text in criteria.AXIS_UNITS[other]:
        raise UnitsError(
            f"{axis} {name!r} has {other} units {text!r}; check which variable is which",
            variable=name, expected=f"{axis} units", found=text,
        )
    if text not in _DEGREES[axis]:
        try:
            parse_units(name, text, "angle")
        except UnitsError:
            raise UnitsError(
                f"{axis} {name!r} has units {text!r}, not an angle; CF {axis} is in "
                f"{'degrees_north' if axis == 'latitude' else 'degrees_east'}",
                variable=name, expected="degrees", found=text,
            ) from None
        raise UnitsError(
            f"{axis} {name!r} is in {text!r}; CF {axis} is in degrees: convert it first, e.g. "
            f"ds[{name!r}] = np.rad2deg(ds[{name!r}]) (for radians, × 180/π) and set units to "
            f"{'degrees_north' if axis == 'latitude' else 'degrees_east'}",
            variable=name, expected="degrees", found=text,
        )

    def check(values: np.ndarray) -> None:
        bad = ~np.isfinite(values)
        if bad.any():
            raise MissingInputError(
                f"{axis} {name!r} holds {int(bad.sum())} missing or infinite value(s); every "
                "point needs a position (drop or fill those points first)",
                variable=name, expected=f"finite {axis}", found=f"{int(bad.sum())} not finite",
            )
        if axis == "latitude" and values.size and np.abs(values).max() > 90.0:
            worst = float(values.flat[np.argmax(np.abs(values))])
            raise UnsupportedInputError(
                f"latitude {name!r} holds {int((np.abs(values) > 90).sum())} value(s) outside "
                f"-90..90 degrees (e.g. {worst:g}); check the variable and its units",
                variable=name, expected="latitude within -90..90 degrees_north",
                found=f"{worst:g}",
            )

    return check


def floor_of(frame: object) -> float | None:
    """Minus the polar radius of ``frame``'s figure (the lowest height allowed), or None."""
    b = getattr(getattr(frame, "figure", None), "b", None)
    return -float(b) if b else None


def mask_poles(values: xr.DataArray, lat: xr.DataArray, what: str, *,
               sizes: Mapping[str, int] | None = None) -> xr.DataArray:
    """``values`` with NaN where |latitude| is 90 degrees, where east and north are undefined.

    Warns (:class:`~frameshift.errors.FrameshiftWarning`) with the number of
    points, counted from a latitude in memory over the dimensions ``sizes``
    (default: those of ``values``; give the field's when ``values`` is a
    small term that will be added to it); a Dask-backed latitude is
    masked lazily without a count. Just off the pole nothing changes.
    """
    at_pole = np.abs(lat) == 90.0
    if not hasattr(lat.data, "dask"):
        n_lat = int(np.count_nonzero(np.asarray(at_pole)))
        if not n_lat:
            return values
        sizes = values.sizes if sizes is None else sizes
        spread = int(np.prod([n for d, n in sizes.items() if d not in lat.dims]))
        warnings.warn(
            f"{n_lat * spread} point(s) of {what} lie at a pole (|latitude| = 90 degrees), where "
            "east and north are undefined: the quantities that depend on them are NaN there",
            FrameshiftWarning, stacklevel=3,
        )
    return values.where(~at_pole)


def position_values(ds: xr.Dataset, position: Position) -> tuple[xr.DataArray, xr.DataArray]:
    """The horizontal position: (latitude, longitude) in degrees, or (x, y) in m; float64."""
    if position.kind == "planar":
        return (
            length_values(ds.variables[position.x], position.x),
            length_values(ds.variables[position.y], position.y),
        )
    out = []
    for axis, name in (("latitude", position.latitude), ("longitude", position.longitude)):
        var = ds.variables[name]
        if var.dtype.kind not in "fiu":
            raise InputTypeError(
                f"{axis} {name!r} holds values of type {var.dtype}; expected numbers in degrees",
                variable=name, expected="numbers", found=str(var.dtype),
            )
        check = _angle_check(name, axis, var.attrs)
        out.append(_checked(plain(var).astype(np.float64), check))
    return out[0], out[1]


def time_instants(ds: xr.Dataset, position: Position) -> tuple[xr.DataArray, Instants]:
    """The time variable of ``position`` and its values as Instants (flattened)."""
    t = ds[position.time]
    return t, instants_of(np.asarray(t.values).ravel(), position.time)

