"""Earth-rotating <-> inertial velocity transforms on xarray Datasets."""

from __future__ import annotations

import json
from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift import criteria
from frameshift._apply import apply_kernel
from frameshift._kernels import velocity as vk
from frameshift.celestial import CELESTIAL_AXES, body_to_inertial_matrix
from frameshift.cf import append_history, float_encoding, set_conventions, stamp
from frameshift.detect import (
    INERTIAL,
    ROTATING,
    Layout,
    _plain,
    find_layout,
    find_time,
    height_in_metres,
    require_dataset,
)
from frameshift.errors import ConventionError, FrameError, MissingInputError, check_choice
from frameshift.frames import EARTH, Planet, check_frame
from frameshift.timescales import julian_date_parts
from frameshift.units import parse_units, read_unit, scale_to, udunits_string, ureg

__all__ = ["to_inertial", "to_rotating"]

BASES = ("local", "cartesian")
_CHANGED_RANGE_ATTRS = ("valid_min", "valid_max", "valid_range", "actual_range")
_STASH = "rotating_frame_variables"


def to_inertial(
    ds: xr.Dataset,
    frame: Planet = EARTH,
    *,
    basis: str = "local",
    velocity: Mapping[str, str] | None = None,
    height: object = None,
    celestial: str = "cirs",
    dut1: float | xr.DataArray = 0.0,
) -> xr.Dataset:
    """Velocities relative to a rotating body, seen from the inertial frame.

    Parameters
    ----------
    ds : xarray.Dataset
        Earth-relative (body-relative) velocities with CF metadata: components
        found by standard name (``eastward_wind``, ``northward_sea_water_velocity``...)
        or named with ``velocity=``; latitude/longitude by standard name or units;
        vertical position from ``height_above_reference_ellipsoid``, ``altitude``,
        ``height``, ``depth`` (positive down) or ``geopotential_height``.
    frame : Planet, default EARTH
        The rotating frame the velocities are relative to.
    basis : {"local", "cartesian"}
        ``"local"``: same Dataset, velocity variables now relative to the
        inertial frame on the same local east/north/up axes at the same instant
        (only the eastward component changes, by Ω (N + h) cos φ).
        ``"cartesian"``: variables ``position`` (m) and ``velocity`` (m s-1)
        on inertial x, y, z axes (dimension ``component``); needs time.
    velocity : mapping, optional
        ``{"eastward": name, "northward": name, "upward": name}``; upward optional
        (taken as 0, and said so in the attributes).
    height : float, str or DataArray, optional
        Height above the reference ellipsoid (m) overriding what the Dataset holds.
    celestial : {"cirs", "gcrs"}
        Inertial axes for ``basis="cartesian"``: rotation angle only (CIRS) or
        with precession-nutation (GCRS, IAU 2006/2000A, needs pyerfa).
    dut1 : float or DataArray over time
        UT1 - UTC in seconds, for ``basis="cartesian"``.

    Returns
    -------
    xarray.Dataset

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": ("lat", [0.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...      "v": ("lat", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
    ...     coords={"lat": ("lat", [0.0], {"units": "degrees_north"}),
    ...             "lon": ((), 0.0, {"units": "degrees_east"})})
    >>> round(float(frameshift.to_inertial(ds)["u"][0]), 4)
    465.1011
    """
    return _convert(ds, frame, INERTIAL, basis, velocity, height, celestial, dut1)


def to_rotating(
    ds: xr.Dataset,
    frame: Planet = EARTH,
    *,
    basis: str = "local",
    velocity: Mapping[str, str] | None = None,
    height: object = None,
    celestial: str = "cirs",
    dut1: float | xr.DataArray = 0.0,
) -> xr.Dataset:
    """Inertial velocities back to velocities relative to the rotating body.

    The inverse of :func:`to_inertial`, with the same keywords. With
    ``basis="local"`` the Dataset holds inertial velocities on local axes
    (as :func:`to_inertial` writes them). With ``basis="cartesian"`` it holds
    ``position`` and ``velocity`` on inertial axes with a time coordinate; the
    result then has data variables ``latitude``, ``longitude`` (degrees),
    ``height`` (m above the ellipsoid) and the east/north/up velocity
    components, named and in the units they had before :func:`to_inertial`
    when it recorded them (else ``eastward_velocity``... in m s-1). A name
    already taken in the Dataset gets the suffix ``_from_position``.

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": ("lat", [10.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...      "v": ("lat", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
    ...     coords={"lat": ("lat", [45.0], {"units": "degrees_north"}),
    ...             "lon": ((), 0.0, {"units": "degrees_east"})})
    >>> back = frameshift.to_rotating(frameshift.to_inertial(ds))
    >>> round(float(back["u"][0]), 9)
    10.0
    """
    return _convert(ds, frame, ROTATING, basis, velocity, height, celestial, dut1)


def _convert(ds, frame, target, basis, velocity, height, celestial, dut1) -> xr.Dataset:
    require_dataset(ds)
    check_choice("basis", basis, BASES)
    check_choice("celestial", celestial, CELESTIAL_AXES)
    check_frame(frame)
    if target == ROTATING and basis == "cartesian":
        if velocity is not None or height is not None:
            raise ConventionError(
                "to_rotating(basis='cartesian') reads 'position' and 'velocity'; "
                "velocity= and height= do not apply",
                variable="velocity" if velocity is not None else "height",
                expected="None",
                found="a value",
            )
        return _from_cartesian(ds, frame, celestial, dut1)
    layout = find_layout(ds, velocity, height=height, target=target)
    if basis == "local":
        return _local(ds, frame, target, layout, height)
    return _to_cartesian(ds, frame, layout, height, celestial, dut1)


# --- local east/north/up axes -------------------------------------------------------
def _local(ds: xr.Dataset, frame: Planet, target: str, layout: Layout, height) -> xr.Dataset:
    sign = 1.0 if target == INERTIAL else -1.0
    lat = _plain(ds.variables[layout.latitude])
    h = height_in_metres(ds, layout, height)
    names = dict(layout.velocity.items())
    units = _speed_units(ds, names)
    east = ds.variables[names["eastward"]]
    # Ω, the direction and the eastward unit fold into one factor of the small
    # position-only kernel; the full-size work is the one addition below
    factor = sign / scale_to(units[names["eastward"]][0], "m s-1")
    geometry = {"a": frame.equatorial_radius, "f": frame.flattening}
    if frame.steady:
        omega = float(frame.rotation_rate) * factor
        shift = apply_kernel(vk.eastward_frame_speed, lat, h, kwargs={"omega": omega, **geometry})
    else:  # pragma: no cover - no unsteady frame ships yet
        speed = apply_kernel(vk.eastward_frame_speed, lat, h, kwargs={"omega": 1.0, **geometry})
        shift = speed * _rate_over_time(ds, frame, layout) * factor
    extra = set(shift.dims) - set(east.dims)
    if extra:
        raise MissingInputError(
            f"the position varies along {sorted(extra)}, which the velocity "
            f"{layout.velocity.eastward!r} {east.dims} does not have",
            variable=layout.velocity.eastward,
            expected=f"position on dimensions within {east.dims}",
            found=str(shift.dims),
        )
    # Variables broadcast by dimension name without index alignment (the
    # position arrays are the Dataset's own coordinates)
    new_east = (xr.Variable(east.dims, east.data) + shift.variable).transpose(*east.dims)
    if set(names.values()) <= set(ds.data_vars):
        # one shallow copy with the new eastward data; the metadata of the copied
        # velocity variables (fresh Variable objects) is then set in place
        data = {k: ds.variables[k].data for k in ds.data_vars}
        data[names["eastward"]] = new_east.data
        out = ds.copy(deep=False, data=data)
    else:  # a velocity held as a coordinate: assign variable by variable
        out = ds.copy(deep=False)
        for comp, name in names.items():
            var = ds.variables[name]
            new_data = new_east.data if comp == "eastward" else var.data
            out[name] = xr.Variable(var.dims, new_data, attrs=var.attrs, encoding=var.encoding)
    for comp, name in names.items():
        var = ds.variables[name]
        attrs = _velocity_attrs(var.attrs, comp, layout, frame, target, units[name][1])
        encoding = float_encoding(var.encoding) if comp == "eastward" else dict(var.encoding)
        if comp == "eastward":
            for key in _CHANGED_RANGE_ATTRS:
                attrs.pop(key, None)
        target_var = out.variables[name]
        target_var.attrs = attrs
        target_var.encoding = encoding
    op = "to_inertial" if target == INERTIAL else "to_rotating"
    return _stamped(
        out, f"{op}(basis='local', frame={frame.name!r}) on {list(layout.velocity.names())}"
    )


def _speed_units(ds: xr.Dataset, names: Mapping[str, str]) -> dict:
    """``{variable: (pint unit, UDUNITS string)}``, each distinct ``units`` text parsed once."""
    parsed: dict[str, tuple] = {}
    out = {}
    for name in names.values():
        text = ds.variables[name].attrs.get("units")
        key = text if isinstance(text, str) else None
        if key is None or key not in parsed:
            unit = parse_units(name, text, "speed")
            found = (unit, udunits_string(unit))
            if key is not None:
                parsed[key] = found
        else:
            found = parsed[key]
        out[name] = found
    return out


def _stamped(out: xr.Dataset, operation: str) -> xr.Dataset:
    """:func:`frameshift.cf.stamp` for a Dataset made here (no further copy)."""
    attrs = dict(out.attrs)
    append_history(attrs, operation)
    set_conventions(attrs)
    out.attrs = attrs
    return out


def _velocity_attrs(
    old: Mapping, comp: str, layout: Layout, frame: Planet, target: str, units: str
) -> dict:
    attrs = dict(old)
    label = criteria.FAMILY_LABELS[layout.velocity.family]
    if target == INERTIAL:
        std = attrs.pop("standard_name", None)
        if std:
            attrs["standard_name_in_rotating_frame"] = std
        if "long_name" in old:
            attrs["long_name_in_rotating_frame"] = old["long_name"]
        attrs["long_name"] = (
            f"{comp} {label} relative to the inertial (non-rotating) frame, "
            "on local east/north/up axes"
        )
    else:
        std = attrs.pop("standard_name_in_rotating_frame", None)
        if std:
            attrs["standard_name"] = std
        attrs["long_name"] = attrs.pop(
            "long_name_in_rotating_frame", f"{comp} {label} relative to {frame.name}"
        )
    attrs["units"] = units
    attrs["reference_frame"] = target
    attrs["reference_body"] = frame.name
    attrs["velocity_component"] = comp
    notes = [n for n in layout.notes if comp == "eastward" or "upward" not in n]
    if notes and target == INERTIAL:
        attrs["assumptions"] = "; ".join(notes)
    elif target == ROTATING:
        attrs.pop("assumptions", None)
    return attrs


def _rate_over_time(ds, frame, layout):  # pragma: no cover - for unsteady frames
    if layout.time is None:
        raise MissingInputError(
            f"frame {frame.name!r} changes its rotation rate in time; the Dataset needs time",
            variable="time",
            expected="a time coordinate",
            found="none",
        )
    t = ds[layout.time]
    jd1, jd2 = julian_date_parts(t.values, layout.time)
    return xr.DataArray(frame.rotation_rate_at(jd1, jd2), dims=t.dims)


# --- inertial Cartesian axes --------------------------------------------------------
def _time_matrices(ds, frame, time_name, celestial, dut1):
    t = ds[time_name]
    jd1, jd2 = julian_date_parts(t.values, time_name)
    dut1_values = _dut1_values(dut1, t)
    matrix = body_to_inertial_matrix(frame, jd1, jd2, dut1_values, celestial)
    m = xr.DataArray(matrix, dims=(*t.dims, "row", "col"))
    if frame.steady:  # one rotation vector for all times
        o = xr.DataArray(frame.rotation_vector(np.asarray(0.0)), dims=("component",))
    else:  # pragma: no cover - no unsteady frame ships yet
        omega = frame.rotation_vector(jd1, jd2 + dut1_values / 86400.0)
        o = xr.DataArray(omega, dims=(*t.dims, "component"))
    return m, o


def _dut1_values(dut1, t: xr.DataArray) -> np.ndarray:
    if isinstance(dut1, xr.DataArray):
        if "units" in dut1.attrs:
            factor = float(ureg.Quantity(1.0, ureg.Unit(dut1.attrs["units"])).to("s").magnitude)
        else:
            factor = 1.0
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
        values = np.broadcast_to(np.asarray(dut1, dtype=np.float64), t.shape)
    if not np.all(np.abs(values) <= 1.0):
        raise ConventionError(
            "dut1 (UT1 - UTC) must be in seconds and within ±1 s (UTC is kept within 0.9 s "
            f"of UT1); found values up to {float(np.nanmax(np.abs(values))):g} s",
            variable="dut1",
            expected="|dut1| <= 1 s",
            found=f"{float(np.nanmax(np.abs(values))):g} s",
        )
    return np.array(values, dtype=np.float64)


def _require_time(ds, layout_time, what):
    if layout_time is None:
        raise MissingInputError(
            f"basis='cartesian' needs time to place the rotating frame; {what} has no decoded "
            "time coordinate (datetime64 or cftime)",
            variable="time",
            expected="a time coordinate",
            found="none",
        )
    return layout_time


def _to_cartesian(ds, frame, layout: Layout, height, celestial, dut1) -> xr.Dataset:
    time_name = _require_time(ds, layout.time, "the Dataset")
    m, o = _time_matrices(ds, frame, time_name, celestial, dut1)
    vset = layout.velocity
    comps = []
    scales = []
    record = {"family": vset.family}
    for comp, name in zip(
        criteria.COMPONENTS, (vset.eastward, vset.northward, vset.upward), strict=True
    ):
        if name is None:
            comps.append(xr.DataArray(0.0))
            scales.append(1.0)
            continue
        var = ds[name]
        unit = parse_units(name, var.attrs.get("units"), "speed")
        comps.append(_plain(var))
        scales.append(scale_to(unit, "m s-1"))
        record[comp] = {
            "name": str(name),
            "units": udunits_string(unit),
            **{k: var.attrs[k] for k in ("standard_name", "long_name") if k in var.attrs},
        }
    dims = tuple(ds[vset.eastward].dims)
    pos, vel = apply_kernel(
        vk.geodetic_to_inertial,
        _plain(ds[layout.latitude]),
        _plain(ds[layout.longitude]),
        height_in_metres(ds, layout, height),
        *comps,
        m,
        o,
        input_core_dims=[(), (), (), (), (), (), ("row", "col"), ("component",)],
        output_core_dims=[("component",), ("component",)],
        output_sizes={"component": 3},
        kwargs={"a": frame.equatorial_radius, "f": frame.flattening, "scale": tuple(scales)},
        dims_order=dims,
    )
    axes = celestial.upper()
    common = {
        "reference_frame": INERTIAL,
        "reference_body": frame.name,
        "inertial_axes": axes,
        "assumptions": "; ".join(
            [*layout.notes, "polar motion not applied"]
            + (["UT1 - UTC (dut1) taken as 0 s"] if _is_zero(dut1) else [])
        ),
    }
    if not isinstance(dut1, xr.DataArray) and np.ndim(dut1) == 0:
        common[DUT1_ATTR] = float(dut1)  # the way back needs the same value
    pos_attrs = {
        "long_name": f"position relative to the centre of {frame.name} on inertial {axes} axes",
        "units": "m",
        **common,
    }
    vel_attrs = {
        "long_name": f"velocity relative to the inertial (non-rotating) frame on {axes} axes",
        "units": "m s-1",
        **common,
        _STASH: json.dumps(record, sort_keys=True),
    }
    component = xr.Variable("component", ["x", "y", "z"], {"long_name": "Cartesian axis"})
    # component first, left of the space-time dimensions (CF 1.11 §2.4), in memory as on disk
    pos = pos.transpose("component", ...)
    vel = vel.transpose("component", ...)
    new = {"position": pos.assign_attrs(pos_attrs), "velocity": vel.assign_attrs(vel_attrs)}
    names = set(vset.names())
    clash = "component" in ds.variables or bool({"position", "velocity"} & set(ds.coords))
    if names <= set(ds.data_vars) and not clash:
        # one Dataset of the kept variables, the coordinates (indexes kept) and the new ones
        keep = {k: ds.variables[k] for k in ds.data_vars if k not in names}
        keep.update({k: v.variable for k, v in new.items()})
        new_coord = xr.Coordinates({"component": component})
        coords = xr.Coordinates(
            {**ds.coords.variables, **new_coord.variables},
            indexes={**ds.xindexes, **new_coord.xindexes},
        )
        out = xr.Dataset(keep, coords=coords, attrs=dict(ds.attrs))
    else:
        out = ds.drop_vars(list(names)).assign(new).assign_coords(component=component)
    return _stamped(
        out,
        f"to_inertial(basis='cartesian', celestial={celestial!r}, frame={frame.name!r}) "
        f"on {list(vset.names())}",
    )


#: Attribute of Cartesian outputs recording the UT1 - UTC (s) they were made with.
DUT1_ATTR = "ut1_minus_utc_seconds"


def _is_zero(dut1) -> bool:
    return not isinstance(dut1, xr.DataArray) and np.all(np.asarray(dut1) == 0)


def _from_cartesian(ds: xr.Dataset, frame: Planet, celestial: str, dut1) -> xr.Dataset:
    for name in ("position", "velocity"):
        if name not in ds.data_vars:
            raise MissingInputError(
                f"to_rotating(basis='cartesian') needs a variable {name!r} with a "
                "'component' dimension (as to_inertial(basis='cartesian') writes)",
                variable=name,
                expected=f"{name}(..., component)",
                found="absent",
            )
        var = ds[name]
        if "component" not in var.dims or var.sizes["component"] != 3:
            raise MissingInputError(
                f"{name!r} must have a dimension 'component' of length 3; found {var.sizes}",
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
        if axes is not None and axes.lower() != celestial:
            raise ConventionError(
                f"{name!r} is on {axes} axes but celestial={celestial!r} was asked",
                variable="celestial",
                expected=repr(axes.lower()),
                found=repr(celestial),
            )
    pos, vel = ds["position"], ds["velocity"]
    pos_unit = parse_units("position", pos.attrs.get("units"), "length")
    vel_unit = parse_units("velocity", vel.attrs.get("units"), "speed")
    loop_dims = tuple(d for d in vel.dims if d != "component")
    time_name = _require_time(ds, find_time(ds, loop_dims), "the Dataset")
    m, o = _time_matrices(ds, frame, time_name, celestial, dut1)
    record = json.loads(vel.attrs.get(_STASH, "{}"))
    scales, names, unit_strings = [], [], []
    for comp in criteria.COMPONENTS:
        info = record.get(comp, {})
        units = info.get("units", "m s-1")
        scales.append(scale_to(read_unit(units), "m s-1"))
        names.append(info.get("name", f"{comp}_velocity"))
        unit_strings.append(units)
    to_m = scale_to(pos_unit, "m")
    to_ms = scale_to(vel_unit, "m s-1")
    results = apply_kernel(
        vk.inertial_to_geodetic,
        _plain(pos.transpose(..., "component")) * to_m,
        _plain(vel.transpose(..., "component")) * to_ms,
        m,
        o,
        input_core_dims=[("component",), ("component",), ("row", "col"), ("component",)],
        output_core_dims=[()] * 6,
        kwargs={"a": frame.equatorial_radius, "f": frame.flattening, "scale": tuple(scales)},
        dims_order=loop_dims,
    )
    out = ds.drop_vars(["position", "velocity", "component"], errors="ignore")
    taken = set(map(str, out.variables))

    def free(name: str) -> str:
        return f"{name}_from_position" if name in taken else name

    pos_meta = [
        ("latitude", {"standard_name": "latitude", "units": "degrees_north"}),
        ("longitude", {"standard_name": "longitude", "units": "degrees_east"}),
        ("height", {"standard_name": "height_above_reference_ellipsoid", "units": "m"}),
    ]
    new = {}
    for (base, attrs), data in zip(pos_meta, results[:3], strict=True):
        new[free(base)] = data.assign_attrs(
            long_name=f"{base} of the point, from its inertial position", **attrs
        )
    for comp, name, units, data in zip(
        criteria.COMPONENTS, names, unit_strings, results[3:], strict=True
    ):
        info = record.get(comp, {})
        attrs = {k: info[k] for k in ("standard_name", "long_name") if k in info}
        attrs.setdefault("long_name", f"{comp} velocity relative to {frame.name}")
        attrs.update(
            units=units,
            reference_frame=ROTATING,
            reference_body=frame.name,
            velocity_component=comp,
        )
        new[free(name)] = data.assign_attrs(attrs)
    out = out.assign(new)
    return stamp(
        out, f"to_rotating(basis='cartesian', celestial={celestial!r}, frame={frame.name!r})"
    )
