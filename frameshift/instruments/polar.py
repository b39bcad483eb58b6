"""Speed and direction <-> eastward and northward components.

Directions are bearings clockwise from true north in CF files, and say in
their standard name whether they are where the flow comes from (winds:
``wind_from_direction``) or where it goes to (currents:
``sea_water_velocity_to_direction``). A direction that does not say so is
refused unless the caller says it.
"""

from __future__ import annotations

from collections.abc import Mapping

import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import instruments as kern
from frameshift.detect import criteria
from frameshift.errors import ConventionError, MissingInputError, check_choice
from frameshift.instruments.common import (
    angle_to_degrees,
    assemble,
    check_dataset,
    factor_between,
    find_standard,
    output_names,
    pick,
    speed_unit,
)
from frameshift.units import udunits_string

__all__ = ["DEFAULT_CONVENTION", "from_speed_direction", "to_speed_direction"]

#: the direction each trade writes when it has the choice (common practice:
#: meteorology reports where the wind comes from, oceanography where the current goes)
DEFAULT_CONVENTION = {"wind": "from", "sea_water": "to"}
_LABEL = criteria.FAMILY_LABELS  # how each family is named in long names
_FAMILY_OF_SPEED = {t["speed"]: f for f, t in criteria.POLAR.items()}
_FAMILY_OF_COMPONENT = {
    sn: (fam, axis)
    for fam, names in criteria.EARTH_COMPONENTS.items()
    for axis, sn in zip(("eastward", "northward"), names[:2], strict=True)
}


def _family(ds: xr.Dataset, names: tuple[str | None, ...], kind: str | None,
            table: Mapping[str, object]) -> str:
    """The family (wind or sea_water) from the variables' standard names, or ``kind``."""
    found = set()
    for name in names:
        if name is None:
            continue
        sn = ds[name].attrs.get("standard_name")
        fam = table.get(sn)
        if fam is not None:
            found.add(fam[0] if isinstance(fam, tuple) else fam)
    if kind is not None:
        check_choice("kind", kind, tuple(criteria.POLAR))
        if found and found != {kind}:
            raise ConventionError(
                f"kind={kind!r} contradicts the standard names of {names} ({sorted(found)})",
                variable="kind", expected=" | ".join(sorted(found)), found=kind,
            )
        return kind
    if len(found) != 1:
        raise ConventionError(
            f"cannot tell whether {', '.join(n for n in names if n)} describe wind or sea water "
            "velocity (no standard name says so); pass kind='wind' or kind='sea_water'",
            variable=next(n for n in names if n), expected="kind='wind' | 'sea_water'",
            found="no family in the standard names" if not found else ", ".join(sorted(found)),
        )
    return found.pop()


def _direction_convention(ds: xr.Dataset, direction: str, convention: str | None) -> str:
    sn = ds[direction].attrs.get("standard_name")
    stated = criteria.DIRECTION_CONVENTIONS.get(sn, (None, None))[1]
    if convention is not None:
        check_choice("convention", convention, ("from", "to"))
        if stated is not None and stated != convention:
            raise ConventionError(
                f"convention={convention!r} contradicts the standard name of {direction!r} "
                f"({sn}, a direction the flow goes {stated!r})",
                variable=direction, expected=stated, found=convention,
            )
        return convention
    if stated is None:
        raise ConventionError(
            f"direction {direction!r} does not say its convention (standard_name "
            f"{sn!r}): is it where the flow comes from (convention='from', as "
            "wind_from_direction) or where it goes to (convention='to', as "
            "sea_water_velocity_to_direction)? Pass convention=",
            variable=direction, expected="convention='from' | 'to'", found=str(sn),
        )
    return stated


def _polar_pairs(ds, speed, direction) -> list[tuple[str, str]]:
    if speed is not None or direction is not None:
        speeds = tuple(t["speed"] for t in criteria.POLAR.values())
        dirs = tuple(criteria.DIRECTION_CONVENTIONS)
        return [(pick(ds, speed, speeds, "speed"), pick(ds, direction, dirs, "direction"))]
    pairs = []
    for table in criteria.POLAR.values():
        s = find_standard(ds, [table["speed"]])
        d = find_standard(ds, [table["from"], table["to"]])
        if s or d:
            pairs.append((pick(ds, None, [table["speed"]], "speed"),
                          pick(ds, None, [table["from"], table["to"]], "direction")))
    if not pairs:
        looked = ", ".join(n for t in criteria.POLAR.values() for n in t.values())
        raise MissingInputError(
            f"no speed and direction found: looked for standard names {looked}; name the "
            "variables with speed= and direction=",
            variable="speed", expected="a speed and a direction", found="none",
        )
    return pairs


def from_speed_direction(
    ds: xr.Dataset,
    *,
    speed: str | None = None,
    direction: str | None = None,
    convention: str | None = None,
    kind: str | None = None,
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """Speed and direction to eastward and northward components.

    Parameters
    ----------
    ds : xarray.Dataset
    speed, direction : str, optional
        Variable names; by default found by standard name (``wind_speed`` with
        ``wind_from_direction`` or ``wind_to_direction``, ``sea_water_speed``
        with ``sea_water_velocity_to_direction`` or ``..._from_direction``).
        With neither given, every such pair in ``ds`` is converted.
    convention : {"from", "to"}, optional
        Whether the direction is where the flow comes from or goes to. Needed
        only when the direction's standard name does not say it; refused when
        it contradicts it.
    kind : {"wind", "sea_water"}, optional
        Needed only when no standard name tells the family.
    names : mapping, optional
        ``{"eastward": ..., "northward": ...}``: output names (default: the
        CF standard names, e.g. ``eastward_wind``).
    keep_inputs : bool
        Keep the speed and direction variables (default: replaced by the components).

    Returns
    -------
    xarray.Dataset
        ``ds`` with the components (in the speed's units, standard names
        ``eastward_wind``/``northward_wind`` or ``eastward_sea_water_velocity``/
        ``northward_sea_water_velocity``), ready for :func:`frameshift.to_inertial`.
        A calm (zero speed) gives zero components even without a direction; a
        speed whose direction is missing gives missing components.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"ws": ((), 10.0, {"standard_name": "wind_speed", "units": "m s-1"}),
    ...                  "wd": ((), 270.0, {"standard_name": "wind_from_direction",
    ...                                     "units": "degree"})})
    >>> out = from_speed_direction(ds)
    >>> round(float(out["eastward_wind"]), 12), round(float(out["northward_wind"]), 12)
    (10.0, 0.0)
    """
    ds = check_dataset(ds)
    pairs = _polar_pairs(ds, speed, direction)
    if names is not None and len(pairs) > 1:
        raise ConventionError(
            f"names= is ambiguous with {len(pairs)} speed/direction pairs {pairs}; convert "
            "one pair at a time with speed= and direction=",
            variable="names", expected="one pair", found=str(pairs),
        )
    outputs: dict[str, xr.DataArray] = {}
    inputs: list[str] = []
    for spd, drc in pairs:
        fam = _family(ds, (spd, drc), kind, {**_FAMILY_OF_SPEED, **{
            k: v[0] for k, v in criteria.DIRECTION_CONVENTIONS.items()}})
        conv = _direction_convention(ds, drc, convention)
        unit = speed_unit(spd, ds[spd].attrs.get("units"))
        to_deg = angle_to_degrees(drc, ds[drc].attrs.get("units"))
        east_sn, north_sn = criteria.EARTH_COMPONENTS[fam][:2]
        out = output_names({"eastward": east_sn, "northward": north_sn}, names)
        bearing = ds[drc].variable if to_deg == 1.0 else ds[drc].variable * to_deg
        u, v = apply_kernel(
            _from_polar, xr.DataArray(ds[spd].variable), xr.DataArray(bearing),
            output_core_dims=((), ()), kwargs={"sign": -1.0 if conv == "from" else 1.0},
        )
        note = (f"from {spd!r} and {drc!r} (direction the {_LABEL[fam]} goes {conv!r}, "
                "clockwise from true north)")
        assumptions = _averaging_note(ds, spd, drc)
        for comp, arr, sn in (("eastward", u, east_sn), ("northward", v, north_sn)):
            attrs = {"standard_name": sn, "long_name": f"{comp} {_LABEL[fam]}",
                     "units": udunits_string(unit), "velocity_component": comp,
                     "comment": note}
            if assumptions:
                attrs["assumptions"] = assumptions
            outputs[out[comp]] = _on(ds, arr, spd, drc).assign_attrs(attrs)
        inputs += [spd, drc]
    done = ", ".join(f"{s} + {d}" for s, d in pairs)
    return assemble(ds, outputs, inputs=inputs, keep_inputs=keep_inputs,
                    operation=f"from_speed_direction ({done} -> eastward/northward components)")


def _from_polar(speed, bearing, *, sign):
    import numpy as np

    bearing = np.where(np.equal(speed, 0.0), 0.0, bearing)  # calm: no direction needed
    return kern.bearing_to_components(speed, bearing, sign=sign)


def _on(ds: xr.Dataset, arr: xr.DataArray, *names: str) -> xr.DataArray:
    """``arr`` with the coordinates of the variables it was made from."""
    coords = {}
    for n in names:
        for c, v in ds[n].coords.items():
            if set(v.dims) <= set(arr.dims):
                coords[c] = v
    return arr.assign_coords(coords)


def _averaging_note(ds: xr.Dataset, *names: str) -> str | None:
    methods = {ds[n].attrs.get("cell_methods") for n in names} - {None}
    if not methods or all("point" in m for m in methods):
        return None
    return ("components of averaged speed and direction (cell_methods "
            f"{' / '.join(sorted(methods))}), not averages of components")


def to_speed_direction(
    ds: xr.Dataset,
    *,
    eastward: str | None = None,
    northward: str | None = None,
    convention: str | None = None,
    kind: str | None = None,
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """Eastward and northward components to speed and direction.

    Parameters
    ----------
    ds : xarray.Dataset
    eastward, northward : str, optional
        Variable names; by default found by standard name (``eastward_wind``,
        ``eastward_sea_water_velocity``, ...). With neither given every pair is converted.
    convention : {"from", "to"}, optional
        Default: "from" for wind and "to" for sea water velocity (the habit of
        each trade).
    kind : {"wind", "sea_water"}, optional
        Needed only when no standard name tells the family.
    names : mapping, optional
        ``{"speed": ..., "direction": ...}``: output names (default: the CF
        standard names, e.g. ``wind_speed`` and ``wind_from_direction``).
    keep_inputs : bool
        Keep the components (default: replaced by speed and direction).

    Returns
    -------
    xarray.Dataset
        Speed in the components' units and direction in ``degree`` clockwise
        from true north, in [0, 360); a calm has direction 0.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"u": ((), 1.0, {"standard_name": "eastward_sea_water_velocity",
    ...                                  "units": "m s-1"}),
    ...                  "v": ((), 0.0, {"standard_name": "northward_sea_water_velocity",
    ...                                  "units": "m s-1"})})
    >>> float(to_speed_direction(ds)["sea_water_velocity_to_direction"])
    90.0
    """
    ds = check_dataset(ds)
    if eastward is not None or northward is not None:
        east_names = [n[0] for n in criteria.EARTH_COMPONENTS.values()]
        north_names = [n[1] for n in criteria.EARTH_COMPONENTS.values()]
        pairs = [(pick(ds, eastward, east_names, "eastward"),
                  pick(ds, northward, north_names, "northward"))]
    else:
        pairs = []
        for e_sn, n_sn, _ in criteria.EARTH_COMPONENTS.values():
            if find_standard(ds, [e_sn]) or find_standard(ds, [n_sn]):
                pairs.append((pick(ds, None, [e_sn], "eastward"),
                              pick(ds, None, [n_sn], "northward")))
        if not pairs:
            looked = ", ".join(n for t in criteria.EARTH_COMPONENTS.values() for n in t[:2])
            raise MissingInputError(
                f"no eastward/northward components found: looked for standard names {looked}; "
                "name them with eastward= and northward=",
                variable="eastward", expected="eastward and northward components", found="none",
            )
    if names is not None and len(pairs) > 1:
        raise ConventionError(
            f"names= is ambiguous with {len(pairs)} component pairs {pairs}; convert one pair "
            "at a time with eastward= and northward=",
            variable="names", expected="one pair", found=str(pairs),
        )
    outputs: dict[str, xr.DataArray] = {}
    inputs: list[str] = []
    table = {sn: fa for sn, (fa, _) in _FAMILY_OF_COMPONENT.items()}
    for east, north in pairs:
        fam = _family(ds, (east, north), kind, table)
        conv = convention if convention is not None else DEFAULT_CONVENTION[fam]
        check_choice("convention", conv, ("from", "to"))
        unit = speed_unit(east, ds[east].attrs.get("units"))
        factor = factor_between(speed_unit(north, ds[north].attrs.get("units")), unit)
        north_var = ds[north].variable if factor == 1.0 else ds[north].variable * factor
        spd, drc = apply_kernel(
            _to_polar, xr.DataArray(ds[east].variable), xr.DataArray(north_var),
            output_core_dims=((), ()), kwargs={"sign": -1.0 if conv == "from" else 1.0},
        )
        speed_sn, dir_sn = criteria.POLAR[fam]["speed"], criteria.POLAR[fam][conv]
        out = output_names({"speed": speed_sn, "direction": dir_sn}, names)
        source = f"from {east!r} and {north!r}"
        outputs[out["speed"]] = _on(ds, spd, east, north).assign_attrs({
            "standard_name": speed_sn, "long_name": f"{_LABEL[fam]} speed".replace(
                "velocity speed", "speed"), "units": udunits_string(unit), "comment": source})
        outputs[out["direction"]] = _on(ds, drc, east, north).assign_attrs({
            "standard_name": dir_sn,
            "long_name": f"direction the {_LABEL[fam]} "
            f"{'comes from' if conv == 'from' else 'goes to'}, clockwise from true north",
            "units": "degree",
            "comment": f"{source}; a calm (zero speed) has direction 0",
        })
        inputs += [east, north]
    done = ", ".join(f"{e} + {n}" for e, n in pairs)
    return assemble(ds, outputs, inputs=inputs, keep_inputs=keep_inputs,
                    operation=f"to_speed_direction ({done} -> speed and direction)")


def _to_polar(east, north, *, sign):
    return kern.components_to_bearing(east, north, sign=sign)
