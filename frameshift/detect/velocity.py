"""Velocity component sets: found by CF standard name, or named by the caller.

A Dataset may hold several sets (winds and currents; surface and depth-mean
currents). Each set is a family (``wind``, ``sea_water``, or plain
``velocity``), a basis (``local``: east/north/up; a lab's x/y/z fields have
their own reader, :mod:`frameshift.detect.planar`) and its components, each
with its units parsed once.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import xarray as xr

from frameshift.detect import criteria
from frameshift.errors import (
    ConventionError,
    FrameError,
    InputTypeError,
    MissingInputError,
    UnsupportedInputError,
)
from frameshift.units import parse_units, scale_to, udunits_string

__all__ = [
    "INERTIAL",
    "ROTATING",
    "Component",
    "earth_standard_name",
    "find_component_sets",
    "frame_of",
]

INERTIAL = "inertial"
ROTATING = "rotating"


@dataclass(frozen=True)
class Component:
    """One velocity component: its axis, variable, units (UDUNITS text) and factor to m s-1."""

    axis: str
    name: str
    units: str
    to_si: float
    standard_name: str | None = None


def earth_standard_name(var: xr.Variable) -> str | None:
    """The body-relative standard name a variable has, or had before conversion."""
    return var.attrs.get("standard_name") or var.attrs.get("standard_name_in_rotating_frame")


def frame_of(var: xr.Variable) -> str | None:
    """The frame a velocity is relative to, from its attributes (None if unknown)."""
    frame = var.attrs.get("reference_frame")
    if frame is None and var.attrs.get("standard_name"):
        # Earth-relative standard names mean "relative to the rotating body".
        frame = ROTATING
    return frame


def _component(ds: xr.Dataset, axis: str, name: str, parsed: dict) -> Component:
    var = ds.variables[name]
    if var.dtype.kind not in "fiu":
        raise InputTypeError(
            f"velocity component {name!r} holds values of type {var.dtype}; expected numbers "
            "(a speed with units)",
            variable=name, expected="numbers", found=str(var.dtype),
        )
    text = var.attrs.get("units")
    key = text if isinstance(text, str) else None
    if key is None or key not in parsed:
        unit = parse_units(name, text, "speed")
        found = (udunits_string(unit), scale_to(unit, "m s-1"))
        if key is not None:
            parsed[key] = found
    else:
        found = parsed[key]
    return Component(axis, name, found[0], found[1], earth_standard_name(var))


def refuse_grid_relative(name: str, std: str | None) -> None:
    """Refuse components on a model grid's own axes (they must be turned to east/north)."""
    if std in criteria.GRID_RELATIVE_STANDARD_NAMES:
        raise UnsupportedInputError(
            f"variable {name!r} is grid-relative ({std}); rotate the components to "
            "east/north first with frameshift.grid_to_earth (frameshift earth on the "
            "command line), then convert",
            variable=name,
            expected="eastward/northward components",
            found=std,
        )


def _mappings(velocity: object) -> list[Mapping[str, str]]:
    if isinstance(velocity, Mapping):
        return [velocity]
    if isinstance(velocity, Sequence) and not isinstance(velocity, str) and velocity:
        if all(isinstance(v, Mapping) for v in velocity):
            return list(velocity)
    raise InputTypeError(
        "velocity= must be a mapping such as {'eastward': 'U', 'northward': 'V'}, or a list "
        f"of such mappings (one per set); found {type(velocity).__name__}",
        variable="velocity",
        expected="mapping of component to variable name, or a list of them",
        found=type(velocity).__name__,
    )


def _from_mapping(
    ds: xr.Dataset, velocity: Mapping[str, str]
) -> tuple[str, str, tuple[tuple[str, str], ...]]:
    """``(family, basis, ((axis, name), ...))`` of a set named by the caller."""
    keys = set(velocity)
    if keys & set(criteria.PLANAR_COMPONENTS):
        raise ConventionError(
            f"velocity= names components on a lab's x/y/z axes ({sorted(keys)}); these "
            "belong to a plane frame: pass frame=frameshift.RotatingTable(...) (the lab-field "
            "reader then places them); on a planet name eastward/northward[/upward]",
            variable="velocity",
            expected=", ".join(criteria.COMPONENTS),
            found=", ".join(sorted(keys)),
        )
    basis = "local"
    valid = criteria.COMPONENTS
    unknown = keys - set(valid)
    if unknown:
        raise ConventionError(
            f"velocity= has unknown component(s) {sorted(unknown)}; valid components are "
            f"{list(criteria.COMPONENTS)} (east/north/up axes), or "
            f"{list(criteria.PLANAR_COMPONENTS)} with a plane frame (a lab table)",
            variable="velocity",
            expected=", ".join(valid),
            found=", ".join(sorted(unknown)),
        )
    needed = valid[:2]
    for comp in needed:
        if comp not in velocity:
            raise MissingInputError(
                f"velocity= must name the {comp!r} component; found only {sorted(velocity)}",
                variable="velocity",
                expected=" and ".join(needed),
                found=", ".join(sorted(velocity)),
            )
    for comp, name in velocity.items():
        if not isinstance(name, str) or name not in ds.variables:
            raise MissingInputError(
                f"velocity= names {name!r} for the {comp} component, but the Dataset has no "
                f"such variable; it has {sorted(map(str, ds.data_vars))}",
                variable=str(name),
                expected="a variable of the Dataset",
                found="absent",
            )
        refuse_grid_relative(name, ds.variables[name].attrs.get("standard_name"))
    family = "velocity"
    first = velocity[needed[0]]
    std = earth_standard_name(ds.variables[first])
    for fam, table in criteria.VELOCITY_STANDARD_NAMES.items():
        if std == table["eastward"]:
            family = fam
    items = tuple((c, velocity[c]) for c in valid if c in velocity)
    return family, basis, items


def _by_standard_name(ds: xr.Dataset) -> dict[str, dict[str, list[str]]]:
    found: dict[str, dict[str, list[str]]] = {}
    for name, var in ds.variables.items():
        std = earth_standard_name(var)
        for fam, table in criteria.VELOCITY_STANDARD_NAMES.items():
            for comp, sname in table.items():
                if std == sname:
                    found.setdefault(fam, {}).setdefault(comp, []).append(str(name))
    return found


def _signature(ds: xr.Dataset, name: str) -> tuple:
    """What components of one set share: dimensions and declared coordinates."""
    var = ds.variables[name]
    text = var.attrs.get("coordinates", var.encoding.get("coordinates"))
    coords = tuple(sorted(text.split())) if isinstance(text, str) else None
    return (tuple(var.dims), coords)


def _affinity(a: str, b: str) -> int:
    """How alike two variable names are: shared leading plus trailing characters."""
    def shared(x: str, y: str) -> int:
        n = 0
        while n < min(len(x), len(y)) and x[n] == y[n]:
            n += 1
        return n

    return shared(a, b) + shared(a[::-1], b[::-1])


def _pair(ds: xr.Dataset, family: str, comps: dict[str, list[str]]) -> list[tuple]:
    """Sets ``((axis, name), ...)`` of one family, pairing components that belong together."""
    easts, norths = comps.get("eastward", []), comps.get("northward", [])
    ups = list(comps.get("upward", []))
    if len(easts) == 1 and len(norths) == 1:
        pairs = [(easts[0], norths[0])]
    else:
        pairs = []
        left = list(norths)
        for east in easts:
            same = [n for n in left if _signature(ds, n) == _signature(ds, east)]
            if len(same) > 1:
                scores = sorted(((_affinity(east, n), n) for n in same), reverse=True)
                same = [scores[0][1]] if scores[0][0] > scores[1][0] else same
            if len(same) != 1:
                listing = ", ".join(easts + norths)
                raise UnsupportedInputError(
                    f"the Dataset holds several {criteria.FAMILY_LABELS[family]} components "
                    f"({listing}) that cannot be paired by their dimensions, coordinates and "
                    "names; name each set with velocity=[{'eastward': ..., 'northward': ...}, "
                    "...] (--velocity eastward=U,northward=V, repeated, on the command line)",
                    variable="velocity",
                    expected="eastward/northward components that pair one to one",
                    found=listing,
                )
            pairs.append((east, same[0]))
            left.remove(same[0])
    sets = []
    for east, north in pairs:
        items = [("eastward", east), ("northward", north)]
        match = [u for u in ups if _signature(ds, u)[0] == _signature(ds, east)[0]]
        if len(match) > 1:
            scores = sorted(((_affinity(east, u), u) for u in match), reverse=True)
            match = [scores[0][1]] if scores[0][0] > scores[1][0] else []
        if len(match) == 1:
            items.append(("upward", match[0]))
            ups.remove(match[0])
        sets.append(tuple(items))
    return sets


def find_component_sets(
    ds: xr.Dataset, velocity: object = None, *, target: str = INERTIAL
) -> list[tuple[str, str, tuple[Component, ...]]]:
    """Every velocity set of ``ds`` not yet in ``target``: ``[(family, basis, components)]``.

    Parameters
    ----------
    ds : xarray.Dataset
    velocity : mapping or list of mappings, optional
        ``{"eastward": name, "northward": name, "upward": name}`` (upward
        optional), or ``{"x": name, "y": name, "z": name}`` on a lab's axes;
        several such mappings for several sets. Default: every set found by
        CF standard name.
    target : {"inertial", "rotating"}
        The frame the caller converts to; sets already in it are left out
        (and refused when named, or when no other set remains).
    """
    named = velocity is not None
    if named:
        raw = [_from_mapping(ds, m) for m in _mappings(velocity)]
    else:
        raw = []
        found = _by_standard_name(ds)
        # components already in the target frame are not candidates: a file whose
        # winds were converted and whose currents were not has the currents to do
        # (an upward component is the same in both frames on local axes)
        todo = {
            fam: {k: [n for n in names if frame_of(ds.variables[n]) != target]
                  for k, names in comps.items()}
            for fam, comps in found.items()
        }
        for family, comps in todo.items():
            if comps.get("eastward") and comps.get("northward"):
                raw += [(family, "local", items) for items in _pair(ds, family, comps)]
        if not raw:
            done = [n for comps in found.values() for k in ("eastward", "northward")
                    for n in comps.get(k, []) if frame_of(ds.variables[n]) == target]
            if done:
                _refuse_already(ds, done[0], target)
            _nothing_found(ds, found)
    seen: set[str] = set()
    parsed: dict = {}
    sets, already = [], []
    for family, basis, items in raw:
        names = [n for _, n in items]
        reused = seen & set(names)
        if reused:
            raise ConventionError(
                f"velocity= names {sorted(reused)} in more than one set",
                variable="velocity",
                expected="each variable in one set",
                found=", ".join(sorted(reused)),
            )
        seen |= set(names)
        frames = {frame_of(ds.variables[n]) for n in names}
        if target in frames:
            if frames != {target} or named:
                name = next(n for n in names if frame_of(ds.variables[n]) == target)
                _refuse_already(ds, name, target)
            already.append(names[0])
            continue
        components = tuple(_component(ds, axis, name, parsed) for axis, name in items)
        dims = {tuple(ds.variables[c.name].dims) for c in components}
        if len({frozenset(d) for d in dims}) > 1:
            found_dims = ", ".join(
                f"{c.name}{tuple(ds.variables[c.name].dims)}" for c in components
            )
            raise UnsupportedInputError(
                f"velocity components must share their dimensions; found {found_dims}",
                variable=components[0].name,
                expected="components on the same dimensions",
                found=found_dims,
            )
        sets.append((family, basis, components))
    if not sets:
        _refuse_already(ds, already[0], target)
    return sets


def _refuse_already(ds: xr.Dataset, name: str, target: str) -> None:
    attrs = ds.variables[name].attrs
    raise FrameError(
        f"variable {name!r} is already relative to the {target} frame "
        f"(reference_frame={attrs.get('reference_frame', 'implied by its standard_name')!r}); "
        "nothing to convert",
        variable=name,
        expected=f"a velocity not yet in the {target} frame",
        found=str(frame_of(ds.variables[name])),
    )


def _nothing_found(ds: xr.Dataset, found: dict) -> None:
    grid = [
        (str(n), earth_standard_name(v))
        for n, v in ds.variables.items()
        if earth_standard_name(v) in criteria.GRID_RELATIVE_STANDARD_NAMES
    ]
    if grid:
        refuse_grid_relative(*grid[0])
    partial = {f: c for f, c in found.items() if c}
    looked = ", ".join(
        n for t in criteria.VELOCITY_STANDARD_NAMES.values() for n in list(t.values())[:2]
    )
    detail = f"found only {partial}" if partial else "found no variable with those standard names"
    polar = [
        f"{n} ({v.attrs['standard_name']})"
        for n, v in ds.variables.items()
        if v.attrs.get("standard_name") in criteria.DIRECTION_CONVENTIONS
    ]
    hint = (
        f"; the Dataset holds speed and direction ({', '.join(polar)}): make east/north "
        "components first with frameshift.from_speed_direction (frameshift earth on the "
        "command line)"
        if polar
        else ""
    )
    raise MissingInputError(
        f"no eastward/northward velocity pair found: looked for standard names {looked}; "
        f"{detail}{hint}. Name the variables with velocity={{'eastward': ..., "
        "'northward': ...} (--velocity eastward=U,northward=V on the command line)",
        variable="velocity",
        expected="an eastward and a northward component",
        found=detail,
    )
