"""Moving platforms: true wind from a ship's anemometer, and profiler currents on ship axes.

Headings are ``platform_orientation`` (clockwise from true north, the
fore-aft axis), courses ``platform_course`` and speeds over ground
``platform_speed_wrt_ground`` (CF standard names). ``platform_yaw`` and the
pitch and roll names whose sign CF leaves open are refused when found by
standard name: say which variable to use and its sign is taken as stated.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift import cf
from frameshift._apply import apply_kernel
from frameshift._kernels import instruments as kern
from frameshift.errors import InputTypeError, MissingInputError, UnsupportedInputError
from frameshift.instruments import criteria
from frameshift.instruments.common import (
    angle_to_degrees,
    as_input,
    assemble,
    factor_between,
    find_standard,
    output_names,
    pick,
    speed_unit,
)
from frameshift.units import udunits_string

__all__ = ["platform_to_earth", "true_wind"]

_METHOD = ("Smith, Bourassa and Sharp 1999 (J. Atmos. Oceanic Technol. 16, 939-952): "
           "true wind = apparent wind + platform velocity over ground")


def _refuse_unknown(ds: xr.Dataset, role: str) -> None:
    for sn, why in criteria.UNKNOWN_SIGN.items():
        if role in sn or (role == "heading" and sn == "platform_yaw"):
            hits = find_standard(ds, [sn])
            if hits:
                raise UnsupportedInputError(
                    f"{hits[0]!r} has standard_name {sn}: {why}. Name the {role} variable "
                    f"with {role}= (taken as {_SIGN_TEXT[role]})",
                    variable=hits[0], expected=_SIGN_TEXT[role], found=sn,
                )


_SIGN_TEXT = {"heading": "clockwise from true north", "pitch": "positive bow up",
              "roll": "positive starboard down"}


def _angle(ds: xr.Dataset, spec, standard_names, role: str, *, required: bool = True):
    """(degrees DataArray, name) of an angle variable found by name or standard name."""
    if isinstance(spec, (xr.DataArray, int, float)) and not isinstance(spec, bool):
        arr, units = as_input(spec, role, "angle")
        return arr * angle_to_degrees(role, units), role
    if spec is None:
        hits = find_standard(ds, standard_names)
        if not hits:
            _refuse_unknown(ds, role)
    name = pick(ds, spec, standard_names, role, required=required)
    if name is None:
        return None, None
    factor = angle_to_degrees(name, ds[name].attrs.get("units"))
    return (ds[name] if factor == 1.0 else ds[name] * factor), name


def _speed(ds: xr.Dataset, spec, standard_names, role: str, unit, *, required: bool = True):
    name = pick(ds, spec, standard_names, role, required=required)
    if name is None:
        return None, None
    factor = factor_between(speed_unit(name, ds[name].attrs.get("units")), unit)
    return (ds[name] if factor == 1.0 else ds[name] * factor), name


def _bare(arr: xr.DataArray) -> xr.DataArray:
    return xr.DataArray(arr.variable)


def true_wind(
    heading: object,
    course: object = None,
    speed_over_ground: object = None,
    relative_direction: object = None,
    relative_speed: object = None,
    *,
    zero_reference: object = 0.0,
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """True wind from a moving platform (Smith, Bourassa and Sharp 1999).

    Parameters
    ----------
    heading, course, speed_over_ground, relative_direction, relative_speed
        Either values (DataArrays with units, pint Quantities, or numbers
        taken as degrees and m s-1), or, with a Dataset as first argument,
        names of its variables. In a Dataset the heading, course and speed
        over ground are found by their CF standard names
        (``platform_orientation``, ``platform_course``,
        ``platform_speed_wrt_ground``); the anemometer's relative direction
        and speed have no standard name and must be named.
        ``heading`` and ``course`` are clockwise from true north; the relative
        direction is where the wind comes from, clockwise from the
        anemometer's zero line.
    zero_reference : number, str or DataArray
        The anemometer's zero line, clockwise from the bow (default 0).
    names : mapping, optional
        Output names for ``speed``, ``direction``, ``eastward``, ``northward``
        (default the CF standard names).
    keep_inputs : bool
        In a Dataset, keep the relative wind variables (default: replaced).

    Returns
    -------
    xarray.Dataset
        ``wind_speed`` (in the relative speed's units), ``wind_from_direction``
        (degree, clockwise from true north), ``eastward_wind``,
        ``northward_wind``; for a Dataset, added to it.

    Examples
    --------
    >>> out = true_wind(0.0, 0.0, 5.0, 0.0, 5.0)   # ship at 5 m s-1 north, wind dead ahead 5
    >>> round(float(out["wind_speed"]), 12)       # true calm
    0.0
    """
    is_ds = isinstance(heading, xr.Dataset)
    ds = heading if is_ds else xr.Dataset()
    if is_ds:
        for role, spec in (("relative_direction", relative_direction),
                           ("relative_speed", relative_speed)):
            if spec is None:
                raise MissingInputError(
                    f"{role}= must name the anemometer's variable: CF has no standard name "
                    "for wind relative to a platform",
                    variable=role, expected="a variable name", found="none",
                )
        rs_name = pick(ds, relative_speed, [], "relative_speed")
        unit = speed_unit(rs_name, ds[rs_name].attrs.get("units"))
        rel_speed = ds[rs_name]
        head, _ = _angle(ds, None, [criteria.HEADING], "heading")
        cog, _ = _angle(ds, course, [criteria.PLATFORM_COURSE], "course")
        sog, _ = _speed(ds, speed_over_ground, [criteria.PLATFORM_SPEED], "speed_over_ground",
                        unit)
        rel_dir, rd_name = _angle(ds, relative_direction, [], "relative_direction")
        zero, _ = _angle(ds, zero_reference, [], "zero_reference")
        inputs = [rd_name, rs_name]
    else:
        values = {}
        for role, value, kind in (("heading", heading, "angle"), ("course", course, "angle"),
                                  ("speed_over_ground", speed_over_ground, "speed"),
                                  ("relative_direction", relative_direction, "angle"),
                                  ("relative_speed", relative_speed, "speed"),
                                  ("zero_reference", zero_reference, "angle")):
            if value is None:
                raise MissingInputError(f"true_wind needs {role}=", variable=role,
                                        expected="a value", found="none")
            arr, units = as_input(value, role, kind)
            values[role] = (arr, units)
        unit = speed_unit("relative_speed", values["relative_speed"][1])
        head, cog, rel_dir, zero = (
            values[r][0] * angle_to_degrees(r, values[r][1])
            for r in ("heading", "course", "relative_direction", "zero_reference"))
        sog = values["speed_over_ground"][0] * factor_between(
            speed_unit("speed_over_ground", values["speed_over_ground"][1]), unit)
        rel_speed = values["relative_speed"][0]
        inputs = []
    u, v, spd, drc = apply_kernel(
        kern.true_wind, _bare(head), _bare(cog), _bare(sog), _bare(rel_dir), _bare(rel_speed),
        _bare(zero), output_core_dims=((), (), (), ()),
    )
    out = output_names({"speed": "wind_speed", "direction": "wind_from_direction",
                        "eastward": "eastward_wind", "northward": "northward_wind"}, names)
    units = udunits_string(unit)
    coords = {c: x for src in (head, cog, sog, rel_dir, rel_speed, zero)
              for c, x in src.coords.items()}
    outputs = {}
    for key, arr, attrs in (
        ("speed", spd, {"standard_name": "wind_speed", "long_name": "true wind speed",
                        "units": units}),
        ("direction", drc, {"standard_name": "wind_from_direction", "units": "degree",
                            "long_name": "true wind direction (from), clockwise from true north"}),
        ("eastward", u, {"standard_name": "eastward_wind", "long_name": "eastward wind",
                         "units": units, "velocity_component": "eastward"}),
        ("northward", v, {"standard_name": "northward_wind", "long_name": "northward wind",
                          "units": units, "velocity_component": "northward"}),
    ):
        attrs["comment"] = _METHOD
        outputs[out[key]] = arr.assign_coords(
            {c: x for c, x in coords.items() if set(x.dims) <= set(arr.dims)}
        ).assign_attrs(attrs)
    if is_ds:
        return assemble(ds, outputs, inputs=inputs, keep_inputs=keep_inputs,
                        operation=f"true_wind ({', '.join(inputs)} -> true wind; {_METHOD})")
    return cf.stamp(xr.Dataset(outputs), f"true_wind ({_METHOD})")


def _check_velocity(ds: xr.Dataset, velocity: object, role: str, required: tuple[str, ...]):
    if velocity is None:
        return None
    if not isinstance(velocity, Mapping):
        raise InputTypeError(
            f"{role}= must be a mapping such as {{'forward': 'U', 'starboard': 'V', 'up': 'W'}}; "
            f"found {type(velocity).__name__}",
            variable=role, expected="mapping", found=type(velocity).__name__,
        )
    unknown = set(velocity) - {"forward", "starboard", "up"}
    missing = [k for k in required if k not in velocity]
    if unknown or missing:
        raise UnsupportedInputError(
            f"{role}= needs keys forward and starboard (and optionally up); found "
            f"{sorted(velocity)}",
            variable=role, expected="forward, starboard[, up]", found=", ".join(sorted(velocity)),
        )
    return {k: pick(ds, v, [], f"{role}[{k!r}]") for k, v in velocity.items()}


def platform_to_earth(
    ds: xr.Dataset,
    *,
    velocity: Mapping[str, str],
    heading: str | None = None,
    pitch: str | None = None,
    roll: str | None = None,
    course: str | None = None,
    speed_over_ground: str | None = None,
    bottom_velocity: Mapping[str, str] | None = None,
    kind: str = "sea_water",
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """Velocities on a platform's axes (forward, starboard, up) to east/north/up over ground.

    The measured velocity (relative to the platform) is turned to the Earth's
    axes by heading, then pitch, then roll: C = Rz(heading) Ry(pitch) Rx(roll)
    from (forward, starboard, down) to (north, east, down), the order in which
    the three attitude angles are defined (heading about the vertical, pitch
    about the once-turned athwartship axis, roll about the twice-turned
    fore-aft axis); pitch is positive bow up and roll positive starboard down.
    Then the platform's velocity over ground is added: from its course and
    speed over ground (navigation), or, with ``bottom_velocity=``, by taking
    the bottom's velocity relative to the platform (bottom tracking, on the
    same axes) away from the measured velocity before turning.

    Parameters
    ----------
    ds : xarray.Dataset
    velocity : mapping
        ``{"forward": name, "starboard": name, "up": name}`` (``up`` optional, taken as 0).
    heading, pitch, roll, course, speed_over_ground : str, optional
        Variable names; by default found by standard name (``platform_orientation``,
        ``platform_pitch_fore_up`` or ``..._fore_down``, ``platform_roll_starboard_down``
        or ``..._up``, ``platform_course``, ``platform_speed_wrt_ground``). Missing
        pitch and roll are taken as 0 (and said so).
    bottom_velocity : mapping, optional
        Bottom-track velocity of the bottom relative to the platform, keys as ``velocity``.
    kind : {"sea_water", "wind"}
        The family of the output names.
    names : mapping, optional
        Output names for ``eastward``, ``northward``, ``upward``.
    keep_inputs : bool
        Keep the platform-axis velocities (default: replaced).

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"f": ((), 1.0, {"units": "m s-1"}), "s": ((), 0.0, {"units": "m s-1"}),
    ...     "hdg": ((), 90.0, {"standard_name": "platform_orientation", "units": "degree"}),
    ...     "cog": ((), 90.0, {"standard_name": "platform_course", "units": "degree"}),
    ...     "sog": ((), 2.0, {"standard_name": "platform_speed_wrt_ground", "units": "m s-1"})})
    >>> out = platform_to_earth(ds, velocity={"forward": "f", "starboard": "s"})
    >>> round(float(out["eastward_sea_water_velocity"]), 12)   # 1 relative + 2 of the ship
    3.0
    """
    from frameshift.instruments.common import check_dataset

    ds = check_dataset(ds)
    vel = _check_velocity(ds, velocity, "velocity", ("forward", "starboard"))
    if vel is None:
        raise MissingInputError(
            "velocity= must name the components on the platform's axes: CF has no standard "
            "names for them",
            variable="velocity", expected="{'forward': ..., 'starboard': ...[, 'up': ...]}",
            found="none",
        )
    if kind not in criteria.EARTH_COMPONENTS:
        raise UnsupportedInputError(f"kind={kind!r} is not 'sea_water' or 'wind'",
                                    variable="kind", expected="sea_water | wind", found=kind)
    unit = speed_unit(vel["forward"], ds[vel["forward"]].attrs.get("units"))
    comps = {}
    for key in ("forward", "starboard", "up"):
        if key in vel:
            comps[key], _ = _speed(ds, vel[key], [], f"velocity[{key!r}]", unit)
        else:
            comps[key] = xr.zeros_like(comps["forward"])
    notes = [] if "up" in vel else ["no upward component given; taken as 0"]
    head, _ = _angle(ds, heading, [criteria.HEADING], "heading")
    tilt = {}
    for role, table in (("pitch", criteria.PLATFORM_PITCH), ("roll", criteria.PLATFORM_ROLL)):
        spec = pitch if role == "pitch" else roll
        arr, name = _angle(ds, spec, list(table), role, required=False)
        if arr is None:
            tilt[role] = xr.DataArray(0.0)
            notes.append(f"no {role} given; taken as 0")
            continue
        sign = table.get(ds[name].attrs.get("standard_name"))
        if sign is None:
            sign = 1.0
            notes.append(f"{role} {name!r} taken as {_SIGN_TEXT[role]}")
        tilt[role] = arr * sign if sign != 1.0 else arr
    if bottom_velocity is not None:
        bot = _check_velocity(ds, bottom_velocity, "bottom_velocity", ("forward", "starboard"))
        for key in ("forward", "starboard", "up"):
            if key in bot:
                b, _ = _speed(ds, bot[key], [], f"bottom_velocity[{key!r}]", unit)
                comps[key] = comps[key] - b
        ship_e = ship_n = xr.DataArray(0.0)
        how = f"bottom track {sorted(bot.values())} taken away before turning"
    else:
        cog, _ = _angle(ds, course, [criteria.PLATFORM_COURSE], "course")
        sog, _ = _speed(ds, speed_over_ground, [criteria.PLATFORM_SPEED], "speed_over_ground",
                        unit)
        rad = np.deg2rad(cog)
        ship_e, ship_n = sog * np.sin(rad), sog * np.cos(rad)
        how = "platform velocity over ground from its course and speed over ground added"
    e, n, up = apply_kernel(
        kern.platform_to_earth, _bare(comps["forward"]), _bare(comps["starboard"]),
        _bare(comps["up"]), _bare(head), _bare(tilt["pitch"]), _bare(tilt["roll"]),
        _bare(ship_e), _bare(ship_n), output_core_dims=((), (), ()),
    )
    sns = criteria.EARTH_COMPONENTS[kind]
    out = output_names(dict(zip(("eastward", "northward", "upward"), sns, strict=True)), names)
    label = "sea water velocity" if kind == "sea_water" else "wind"
    coords = {c: x for src in (ds[vel["forward"]], head) for c, x in src.coords.items()}
    outputs = {}
    for comp, arr, sn in (("eastward", e, sns[0]), ("northward", n, sns[1]),
                          ("upward", up, sns[2])):
        attrs = {"standard_name": sn,
                 "long_name": f"{comp} {label}" if comp != "upward" else sn.replace("_", " "),
                 "units": udunits_string(unit), "velocity_component": comp,
                 "comment": f"from platform axes {sorted(vel.values())} turned by heading, "
                 f"pitch, roll (C = Rz(heading) Ry(pitch) Rx(roll)); {how}"}
        if notes:
            attrs["assumptions"] = "; ".join(notes)
        outputs[out[comp]] = arr.assign_coords(
            {c: x for c, x in coords.items() if set(x.dims) <= set(arr.dims)}
        ).assign_attrs(attrs)
    return assemble(ds, outputs, inputs=list(vel.values()), keep_inputs=keep_inputs,
                    operation=f"platform_to_earth ({', '.join(vel.values())} -> "
                    f"east/north/up; {how})")
