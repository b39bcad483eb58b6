"""Rotating local velocities <-> inertial position and velocity on x/y/z axes.

r_I = M r_B and v_I = M (E^T (u, v, w) + Ω × r_B), with r_B the body-fixed
position of each point, E its east/north/up basis and M the matrix from
body-fixed to inertial axes at each time (rotation angle, and for the Earth
on GCRS axes precession-nutation). One set of velocities becomes the
variables ``position`` and ``velocity``; several sets become
``position_<set>`` and ``velocity_<set>``, each velocity naming its position
in ``position_variable``.
"""

from __future__ import annotations

import json

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import velocity as vk
from frameshift.cf import INERTIAL, restored_velocity_attrs, stamp
from frameshift.detect import (
    Layout,
    VelocitySet,
    find_time,
    floor_of,
    height_values,
    mask_poles,
    plain,
    position_values,
)
from frameshift.detect.criteria import COMPONENTS
from frameshift.errors import ConventionError, FrameError, MissingInputError, UnitsError
from frameshift.frames import Frame, instants_of
from frameshift.frames.celestial import AXES_DEFINITIONS, body_to_inertial_matrix
from frameshift.transforms.local import stamped
from frameshift.units import parse_units, scale_to

__all__ = ["DUT1_ATTR", "STASH", "from_cartesian", "is_cartesian", "recorded", "to_cartesian"]

#: attribute of a Cartesian velocity recording the body-relative components it came from
STASH = "rotating_frame_variables"


def _time_matrices(ds, frame: Frame, time_name: str, celestial: str, dut1):
    t = ds[time_name]
    instants = instants_of(np.asarray(t.values), time_name)
    dut1_values = _dut1_values(dut1, t)
    matrix = body_to_inertial_matrix(frame, instants.jd1, instants.jd2, dut1_values, celestial)
    m = xr.DataArray(matrix, dims=(*t.dims, "row", "col"))
    if frame.steady:  # one rotation vector for all times
        o = xr.DataArray(frame.rotation_vector(np.asarray(0.0)), dims=("component",))
    else:
        ut1 = type(instants).from_julian(instants.jd1, instants.jd2 + dut1_values / 86400.0)
        o = xr.DataArray(frame.rotation_vector(ut1), dims=(*t.dims, "component"))
    return m, o


def _dut1_values(dut1, t: xr.DataArray) -> np.ndarray:
    if isinstance(dut1, xr.DataArray):
        factor = 1.0
        if "units" in dut1.attrs:
            factor = scale_to(parse_units("dut1", dut1.attrs["units"], "time"), "s")
        try:
            aligned = xr.align(t, dut1, join="exact")[1]
        except ValueError as exc:
            raise ConventionError(
                f"dut1 must be given on the same times as {t.name!r}: {exc}",
                variable="dut1",
                expected=f"a DataArray on {t.dims}",
                found=str(dut1.dims),
            ) from exc
        values = np.broadcast_to(aligned.transpose(*t.dims).values * factor, t.shape)
    else:
        try:
            values = np.broadcast_to(np.asarray(dut1, dtype=np.float64), t.shape)
        except (TypeError, ValueError) as exc:
            raise UnitsError(
                f"dut1 must be UT1 - UTC in seconds (a number, or a DataArray on the times); "
                f"found {dut1!r}",
                variable="dut1",
                expected="seconds",
                found=repr(dut1),
            ) from exc
    if not np.all(np.abs(values) <= 1.0):
        raise ConventionError(
            "dut1 (UT1 - UTC) must be in seconds and within ±1 s (UTC is kept within 0.9 s "
            f"of UT1); found values up to {float(np.nanmax(np.abs(values))):g} s",
            variable="dut1",
            expected="|dut1| <= 1 s",
            found=f"{float(np.nanmax(np.abs(values))):g} s",
        )
    return np.array(values, dtype=np.float64)


def _require_time(time_name, what):
    if time_name is None:
        raise MissingInputError(
            f"basis='cartesian' needs time to place the rotating frame; {what} has no decoded "
            "time coordinate (datetime64 or cftime)",
            variable="time",
            expected="a time coordinate",
            found="none",
        )
    return time_name


def _set_names(layout: Layout) -> list[tuple[str, str]]:
    """``(position, velocity)`` variable names for each set."""
    if len(layout.sets) == 1:
        return [("position", "velocity")]
    families = [s.family for s in layout.sets]
    tags = [
        s.family if families.count(s.family) == 1 else s.eastward for s in layout.sets
    ]
    return [(f"position_{t}", f"velocity_{t}") for t in tags]


def to_cartesian(ds, frame: Frame, layout: Layout, celestial: str, dut1) -> xr.Dataset:
    """Each set's inertial position and velocity on x/y/z axes (see the module docstring)."""
    axes = celestial.upper()
    new: dict[str, xr.DataArray] = {}
    matrices: dict[str, tuple] = {}
    for vset, (pname, vname) in zip(layout.sets, _set_names(layout), strict=True):
        time_name = _require_time(vset.position.time, f"the velocity {vset.eastward!r}")
        if time_name not in matrices:
            matrices[time_name] = _time_matrices(ds, frame, time_name, celestial, dut1)
        m, o = matrices[time_name]
        pos, vel = _one_set(ds, frame, vset, m, o)
        # component first, left of the space-time dimensions (CF 1.11 §2.4), in memory
        # as on disk
        pos, vel = pos.transpose("component", ...), vel.transpose("component", ...)
        common = {
            "reference_frame": INERTIAL,
            "reference_body": frame.name,
            "inertial_axes": axes,
            "inertial_axes_definition": AXES_DEFINITIONS[celestial],
            "assumptions": "; ".join(
                [*vset.notes]
                + (["polar motion not applied"] if celestial in ("cirs", "gcrs") else [])
                + (["UT1 - UTC (dut1) taken as 0 s"] if _is_zero(dut1) and celestial in (
                    "cirs", "gcrs") else [])
            ),
        }
        if not isinstance(dut1, xr.DataArray) and np.ndim(dut1) == 0:
            common[DUT1_ATTR] = float(dut1)  # the way back needs the same value
        record = {"family": vset.family}
        for comp in vset.components:
            attrs = ds.variables[comp.name].attrs
            record[comp.axis] = {
                "name": comp.name,
                "units": comp.units,
                **{k: attrs[k] for k in ("standard_name", "long_name") if k in attrs},
            }
        new[pname] = pos.assign_attrs(
            long_name=f"position relative to the centre of {frame.name} on inertial {axes} axes",
            units="m",
            **common,
        )
        new[vname] = vel.assign_attrs(
            long_name=f"velocity relative to the inertial (non-rotating) frame on {axes} axes",
            units="m s-1",
            **common,
            **({"position_variable": pname} if pname != "position" else {}),
            **{STASH: json.dumps(record, sort_keys=True)},
        )
        declared = _declared_text(ds, vset.eastward)
        if declared:  # the new variables sit where the velocity sat: say so, as it did
            new[pname].encoding["coordinates"] = declared
            new[vname].encoding["coordinates"] = declared
    component = xr.Variable("component", ["x", "y", "z"], {"long_name": "Cartesian axis"})
    names = {c.name for s in layout.sets for c in s.components}
    clash = "component" in ds.variables or bool(set(new) & set(ds.coords))
    if names <= set(ds.data_vars) and not clash:
        # one Dataset of the kept variables, the coordinates (indexes kept) and the new ones
        keep = {k: ds.variables[k] for k in ds.data_vars if k not in names}
        for k, v in new.items():
            keep[k] = v.variable
            keep[k].encoding = dict(v.encoding)
        new_coord = xr.Coordinates({"component": component})
        coords = xr.Coordinates(
            {**ds.coords.variables, **new_coord.variables},
            indexes={**ds.xindexes, **new_coord.xindexes},
        )
        out = xr.Dataset(keep, coords=coords, attrs=dict(ds.attrs))
    else:
        out = ds.drop_vars(list(names)).assign(new).assign_coords(component=component)
    converted = [list(s.names()) for s in layout.sets]
    listing = converted[0] if len(converted) == 1 else converted
    return stamped(
        out,
        f"to_inertial(basis='cartesian', celestial={celestial!r}, frame={frame.name!r}) "
        f"on {listing}",
    )


def _declared_text(ds: xr.Dataset, name: str) -> str | None:
    var = ds.variables[name]
    text = var.attrs.get("coordinates", var.encoding.get("coordinates"))
    return text if isinstance(text, str) else None


def _one_set(ds, frame: Frame, vset: VelocitySet, m, o):
    comps, scales = [], []
    for axis in COMPONENTS:
        comp = vset.component(axis)
        if comp is None:
            comps.append(xr.DataArray(0.0))
            scales.append(1.0)
        else:
            comps.append(plain(ds.variables[comp.name]))
            scales.append(comp.to_si)
    lat, lon = position_values(ds, vset.position)
    # east and north are undefined at the poles: the velocity is NaN there
    masked = mask_poles(comps[0], lat, repr(vset.eastward))
    if masked is not comps[0]:  # some point at a pole (or a lazy latitude): north too
        comps[0], comps[1] = masked, comps[1].where(np.abs(lat) != 90.0)
    return apply_kernel(
        vk.geodetic_to_inertial,
        lat,
        lon,
        height_values(ds, vset.position, floor=floor_of(frame)),
        *comps,
        m,
        o,
        input_core_dims=[(), (), (), (), (), (), ("row", "col"), ("component",)],
        output_core_dims=[("component",), ("component",)],
        output_sizes={"component": 3},
        kwargs={**frame.figure.kernel_geometry(), "scale": tuple(scales)},
        dims_order=tuple(ds.variables[vset.eastward].dims),
    )


#: Attribute of Cartesian outputs recording the UT1 - UTC (s) they were made with.
DUT1_ATTR = "ut1_minus_utc_seconds"


def _is_zero(dut1) -> bool:
    return not isinstance(dut1, xr.DataArray) and np.all(np.asarray(dut1) == 0)


def cartesian_pairs(ds: xr.Dataset) -> list[tuple[str, str]]:
    """``(position, velocity)`` names of the inertial Cartesian sets in ``ds``."""
    pairs = []
    for name, var in ds.data_vars.items():
        if "component" in var.dims and (STASH in var.attrs or name == "velocity"):
            pairs.append((str(var.attrs.get("position_variable", "position")), str(name)))
    return pairs


def is_cartesian(ds: xr.Dataset) -> bool:
    """Whether ``ds`` holds inertial positions and velocities on a ``component`` axis (as
    ``--basis cartesian`` writes them).

    Examples
    --------
    >>> import xarray as xr
    >>> is_cartesian(xr.Dataset())
    False
    """
    return bool(cartesian_pairs(ds))


def recorded(ds: xr.Dataset, key: str, default: object) -> object:
    """What the (first) Cartesian velocity of ``ds`` records under ``key`` (its
    ``inertial_axes``, its :data:`DUT1_ATTR`), as the type of ``default``; else ``default``.

    Examples
    --------
    >>> import xarray as xr
    >>> recorded(xr.Dataset(), "inertial_axes", "cirs")
    'cirs'
    """
    for _, name in cartesian_pairs(ds):
        value = ds[name].attrs.get(key)
        if value is not None:
            try:
                return type(default)(value) if not isinstance(default, str) else str(value)
            except (TypeError, ValueError):
                return default
    return default


def from_cartesian(ds: xr.Dataset, frame: Frame, celestial: str, dut1) -> xr.Dataset:
    """Inertial Cartesian sets back to body-relative positions and local velocities."""
    pairs = cartesian_pairs(ds) or [("position", "velocity")]
    out = ds
    taken = set(map(str, ds.variables))
    for pname, vname in pairs:
        out = _from_one(ds, out, frame, celestial, dut1, pname, vname, taken, len(pairs) > 1)
    out = out.drop_vars("component", errors="ignore")
    return stamp(
        out, f"to_rotating(basis='cartesian', celestial={celestial!r}, frame={frame.name!r})"
    )


def _check_cartesian(ds: xr.Dataset, name: str, celestial: str) -> None:
    if name not in ds.data_vars:
        raise MissingInputError(
            f"to_rotating(basis='cartesian') needs a variable {name!r} with a "
            "'component' dimension (as to_inertial(basis='cartesian') writes)",
            variable=name,
            expected=f"{name}(component, ...)",
            found="absent",
        )
    var = ds[name]
    if "component" not in var.dims or var.sizes["component"] != 3:
        raise MissingInputError(
            f"{name!r} must have a dimension 'component' of length 3; found {dict(var.sizes)}",
            variable=name,
            expected="component of length 3",
            found=str(dict(var.sizes)),
        )
    if var.attrs.get("reference_frame", INERTIAL) != INERTIAL:
        raise FrameError(
            f"{name!r} is already relative to the {var.attrs['reference_frame']} frame",
            variable=name,
            expected="reference_frame='inertial'",
            found=str(var.attrs["reference_frame"]),
        )
    axes = var.attrs.get("inertial_axes")
    same = {str(axes).lower(), celestial} == {"cirs", "pole"}  # a body's own axes, either name
    if axes is not None and str(axes).lower() != celestial and not same:
        raise ConventionError(
            f"{name!r} is on {axes} axes but celestial={celestial!r} was asked",
            variable="celestial",
            expected=repr(str(axes).lower()),
            found=repr(celestial),
        )


def _record(vel: xr.DataArray, name: str) -> dict:
    text = vel.attrs.get(STASH, "{}")
    try:
        record = json.loads(text)
        if not isinstance(record, dict):
            raise TypeError("not a JSON object")
    except (TypeError, ValueError) as exc:
        raise UnitsError(
            f"{name!r} has a {STASH} attribute that is not the JSON object frameshift writes: "
            f"{str(text)[:80]!r}",
            variable=name,
            expected="a JSON object of the original components",
            found=str(text)[:80],
        ) from exc
    return record


def _from_one(ds, out, frame, celestial, dut1, pname, vname, taken, several):
    for name in (pname, vname):
        _check_cartesian(ds, name, celestial)
    pos, vel = ds[pname], ds[vname]
    to_m = scale_to(parse_units(pname, pos.attrs.get("units"), "length"), "m")
    to_ms = scale_to(parse_units(vname, vel.attrs.get("units"), "speed"), "m s-1")
    loop_dims = tuple(d for d in vel.dims if d != "component")
    time_name = _require_time(find_time(ds, vname), f"the variable {vname!r}")
    m, o = _time_matrices(ds, frame, time_name, celestial, dut1)
    record = _record(vel, vname)
    scales, names, unit_strings = [], [], []
    for comp in COMPONENTS:
        info = record.get(comp, {})
        units = info.get("units", "m s-1")
        scales.append(scale_to(parse_units(f"{vname}:{comp}", units, "speed"), "m s-1"))
        names.append(info.get("name", f"{comp}_velocity"))
        unit_strings.append(units)
    results = apply_kernel(
        vk.inertial_to_geodetic,
        plain(pos.transpose(..., "component")) * to_m,
        plain(vel.transpose(..., "component")) * to_ms,
        m,
        o,
        input_core_dims=[("component",), ("component",), ("row", "col"), ("component",)],
        output_core_dims=[()] * 6,
        kwargs={**frame.figure.kernel_geometry(), "scale": tuple(scales)},
        dims_order=loop_dims,
    )
    out = out.drop_vars([pname, vname])
    suffix = f"_{vname.removeprefix('velocity_')}" if several else ""

    def free(name: str) -> str:
        chosen = name if name not in taken else f"{name}_from_position"
        taken.add(chosen)
        return chosen

    pos_meta = [
        ("latitude", {"standard_name": "latitude", "units": "degrees_north"}),
        ("longitude", {"standard_name": "longitude", "units": "degrees_east"}),
        ("height", {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
    ]
    new = {}
    for (base, attrs), data in zip(pos_meta, results[:3], strict=True):
        new[free(base + suffix)] = data.assign_attrs(
            long_name=f"{base} of the point, from its inertial position", **attrs
        )
    for comp, name, units, data in zip(COMPONENTS, names, unit_strings, results[3:], strict=True):
        info = {**record.get(comp, {}), "units": units}
        new[free(name)] = data.assign_attrs(restored_velocity_attrs(info, comp, frame.name))
    return out.assign(new)
