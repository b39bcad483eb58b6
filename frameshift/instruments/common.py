"""What the instrument conversions share: finding variables, units of angles, outputs.

Every conversion reads its inputs here (by CF standard name or by the
caller's names), checks units once, and hands its outputs back through
:func:`assemble`, which rebuilds their attributes, refuses name clashes and
appends the ``history`` line.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

import numpy as np
import pint
import xarray as xr

from frameshift import cf
from frameshift.errors import InputTypeError, MissingInputError, UnitsError, UnsupportedInputError
from frameshift.units import parse_units, scale_to, ureg

__all__ = [
    "angle_to_degrees",
    "as_input",
    "assemble",
    "check_dataset",
    "factor_between",
    "find_standard",
    "output_names",
    "pick",
    "speed_unit",
]

# Unit spellings of latitude and longitude: pint reads them as plain degrees,
# but a bearing never carries them (CF: directions are in "degree").
_GEOGRAPHIC_UNITS = ("north", "east", "_n", "_e", "degreen", "degreee")


def check_dataset(ds: object, name: str = "ds") -> xr.Dataset:
    """Return ``ds`` if it is a Dataset; raise :class:`InputTypeError` naming what it is.

    Examples
    --------
    >>> len(check_dataset(xr.Dataset()).data_vars)
    0
    """
    if not isinstance(ds, xr.Dataset):
        raise InputTypeError(
            f"{name}: expected an xarray.Dataset; found {type(ds).__name__}. "
            "Wrap a DataArray with .to_dataset() so its coordinates come along",
            variable=name,
            expected="xarray.Dataset",
            found=type(ds).__name__,
        )
    return ds


def find_standard(ds: xr.Dataset, names: Iterable[str]) -> list[str]:
    """Names of the data variables (then coordinates) whose standard_name is in ``names``.

    Examples
    --------
    >>> ds = xr.Dataset({"ws": ((), 1.0, {"standard_name": "wind_speed"})})
    >>> find_standard(ds, ["wind_speed", "sea_water_speed"])
    ['ws']
    """
    wanted = set(names)
    hits = [str(n) for n, v in ds.data_vars.items() if v.attrs.get("standard_name") in wanted]
    if not hits:
        hits = [str(n) for n, v in ds.coords.items() if v.attrs.get("standard_name") in wanted]
    return hits


def pick(ds: xr.Dataset, spec: object, standard_names: Iterable[str], role: str,
         *, required: bool = True) -> str | None:
    """The name of the variable playing ``role``: given by name, or found by standard name.

    Raises :class:`MissingInputError` when a given name is absent, when none
    is found (if ``required``), and :class:`UnsupportedInputError` when more
    than one is found.

    Examples
    --------
    >>> ds = xr.Dataset({"ws": ((), 1.0, {"standard_name": "wind_speed"})})
    >>> pick(ds, None, ["wind_speed"], "speed"), pick(ds, "ws", [], "speed")
    ('ws', 'ws')
    """
    names = tuple(standard_names)
    if spec is not None:
        if not isinstance(spec, str):
            raise InputTypeError(
                f"{role}= must name a variable of the Dataset; found {type(spec).__name__}",
                variable=role, expected="a variable name", found=type(spec).__name__,
            )
        if spec not in ds.variables:
            raise MissingInputError(
                f"{role}={spec!r} names no variable of the Dataset "
                f"(variables: {', '.join(map(str, ds.data_vars))})",
                variable=spec, expected="a variable of the Dataset", found="absent",
            )
        return spec
    hits = find_standard(ds, names)
    if len(hits) > 1:
        raise UnsupportedInputError(
            f"more than one {role} variable ({', '.join(hits)}); name the one to use with "
            f"{role}=",
            variable=role, expected=f"one variable with standard_name {' or '.join(names)}",
            found=", ".join(hits),
        )
    if not hits:
        if not required:
            return None
        raise MissingInputError(
            f"no {role} found: looked for a variable with standard_name "
            f"{' or '.join(map(repr, names))}; name it with {role}=",
            variable=role, expected=f"standard_name {' or '.join(names)}", found="none",
        )
    return hits[0]


def angle_to_degrees(name: str, units: object) -> float:
    """Factor that turns an angle in ``units`` into degrees (``degree`` and ``radian`` units).

    Latitude and longitude units (``degrees_north``, ``degrees_east``) are
    refused: a bearing carrying them is a mislabelled variable.

    Examples
    --------
    >>> angle_to_degrees("wdir", "degree"), round(angle_to_degrees("a", "rad"), 4)
    (1.0, 57.2958)
    """
    text = str(units).strip() if units is not None else ""
    if not text:
        raise UnitsError(
            f"variable {name!r} has no 'units' attribute; expected an angle, e.g. 'degree'",
            variable=name, expected="degree", found="no units",
        )
    if any(tag in text.lower() for tag in _GEOGRAPHIC_UNITS):
        raise UnitsError(
            f"variable {name!r} has units {text!r}, which are latitude or longitude units; "
            "a direction or angle is in 'degree'",
            variable=name, expected="degree", found=text,
        )
    try:
        unit = ureg.Unit(text)
        factor = scale_to(unit, "degree")
    except (pint.errors.PintError, ValueError, TypeError, AttributeError) as exc:
        raise UnitsError(
            f"variable {name!r} has units {text!r}; expected an angle, e.g. 'degree'",
            variable=name, expected="degree", found=text,
        ) from exc
    if unit == ureg.Unit("dimensionless"):
        raise UnitsError(
            f"variable {name!r} has units {text!r}, a pure number; expected an angle, "
            "e.g. 'degree'",
            variable=name, expected="degree", found=text,
        )
    return factor


def factor_between(unit: pint.Unit, target: pint.Unit) -> float:
    """The factor that turns a value in ``unit`` into ``target`` (both parsed units).

    Examples
    --------
    >>> round(factor_between(ureg.Unit("knot"), ureg.Unit("m/s")), 6)
    0.514444
    """
    return 1.0 if unit == target else float(ureg.Quantity(1.0, unit).to(target).magnitude)


def speed_unit(name: str, units: object) -> pint.Unit:
    """The parsed speed unit of variable ``name`` (raises :class:`UnitsError`).

    Examples
    --------
    >>> speed_unit("U", "cm s-1")
    <Unit('centimeter / second')>
    """
    return parse_units(name, units, "speed")


def as_input(value: object, role: str, kind: str) -> tuple[xr.DataArray, str]:
    """A DataArray (with a ``units`` attribute) for ``value``: DataArray, Quantity or number.

    Numbers are taken as degrees (``kind="angle"``) or m s-1 (``kind="speed"``).
    Returns the DataArray and the units string it carries.

    Examples
    --------
    >>> as_input(3.0, "heading", "angle")[1]
    'degree'
    """
    if isinstance(value, xr.DataArray):
        units = value.attrs.get("units")
        if units is None and kind == "angle":
            raise UnitsError(
                f"{role}: the DataArray has no 'units' attribute; expected 'degree'",
                variable=role, expected="degree", found="no units",
            )
        return value, units
    if isinstance(value, pint.Quantity):
        return xr.DataArray(np.asarray(value.magnitude, dtype=np.float64)), str(value.units)
    if isinstance(value, (int, float, np.integer, np.floating)) or (
        isinstance(value, np.ndarray) and value.ndim == 0
    ):
        return xr.DataArray(float(value)), ("degree" if kind == "angle" else "m s-1")
    raise InputTypeError(
        f"{role}: expected a DataArray with units, a pint Quantity or a number; "
        f"found {type(value).__name__}",
        variable=role, expected="DataArray | Quantity | number", found=type(value).__name__,
    )


def output_names(defaults: Mapping[str, str], names: Mapping[str, str] | None) -> dict[str, str]:
    """The variable names of the outputs: the defaults, overridden by ``names``.

    Examples
    --------
    >>> output_names({"eastward": "eastward_wind", "northward": "northward_wind"},
    ...              {"eastward": "U"})
    {'eastward': 'U', 'northward': 'northward_wind'}
    """
    out = dict(defaults)
    if names is None:
        return out
    if not isinstance(names, Mapping):
        raise InputTypeError(
            f"names= must be a mapping such as {{{next(iter(defaults))!r}: 'U'}}; "
            f"found {type(names).__name__}",
            variable="names", expected="mapping", found=type(names).__name__,
        )
    unknown = set(names) - set(defaults)
    if unknown:
        raise UnsupportedInputError(
            f"names= has keys {sorted(unknown)} this conversion does not write; "
            f"its outputs are {sorted(defaults)}",
            variable="names", expected=", ".join(sorted(defaults)),
            found=", ".join(sorted(unknown)),
        )
    out.update({k: str(v) for k, v in names.items()})
    return out


def assemble(
    ds: xr.Dataset,
    outputs: Mapping[str, xr.DataArray],
    *,
    inputs: Iterable[str],
    keep_inputs: bool,
    operation: str,
) -> xr.Dataset:
    """The result Dataset: ``ds`` with ``outputs`` added (and ``inputs`` dropped unless kept).

    Each output must already carry its full attributes; any clash with a
    variable that stays is refused. ``history`` gains a line naming
    ``operation`` and ``Conventions`` is set.

    Examples
    --------
    >>> ds = xr.Dataset({"a": ("x", [1.0])})
    >>> out = assemble(ds, {"b": (ds["a"] * 2).assign_attrs(units="1")}, inputs=["a"],
    ...                keep_inputs=False, operation="doubling")
    >>> list(out.data_vars), "doubling" in out.attrs["history"]
    (['b'], True)
    """
    dropped = [] if keep_inputs else [n for n in dict.fromkeys(inputs) if n in ds.data_vars]
    base = ds.drop_vars(dropped)
    clash = [n for n in outputs if n in base.variables]
    if clash:
        raise UnsupportedInputError(
            f"the output name(s) {clash} are already taken by variables of the Dataset; "
            "choose others with names={...}",
            variable=clash[0], expected="a free variable name", found="taken",
        )
    new = {}
    for name, arr in outputs.items():
        arr = arr.variable if isinstance(arr, xr.DataArray) else arr
        new[name] = xr.DataArray(arr.astype(np.float64, copy=False), attrs=dict(arr.attrs))
    coords = {}
    for arr in outputs.values():
        for cname, coord in arr.coords.items():
            if cname not in base.variables:
                coords[cname] = coord
    result = base.assign_coords(coords).assign(
        {n: (v.dims, v.data, v.attrs) for n, v in new.items()}
    )
    return cf.stamp(result, operation)

