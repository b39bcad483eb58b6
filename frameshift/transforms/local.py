"""Rotating <-> inertial on the same local east/north/up axes, at the same instant.

Ω × r has no north or up component on local axes, so only the eastward
component changes, by ± Ω (N + h) cos φ (Ω at each time for a changing rate).
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import velocity as vk
from frameshift.cf import INERTIAL, append_history, float_encoding, set_conventions, velocity_attrs
from frameshift.detect import (
    Layout,
    VelocitySet,
    floor_of,
    height_values,
    mask_poles,
    position_values,
    time_instants,
)
from frameshift.errors import MissingInputError, check_choice
from frameshift.frames import Frame
from frameshift.storage import PRECISIONS, stored_precision

__all__ = ["CHANGED_RANGE_ATTRS", "convert_local", "stamped"]

#: attributes that describe the old values' range, dropped where values change
CHANGED_RANGE_ATTRS = ("valid_min", "valid_max", "valid_range", "actual_range")


def convert_local(ds: xr.Dataset, frame: Frame, target: str, layout: Layout,
                  precision: str = "float64") -> xr.Dataset:
    """Every velocity set of ``layout`` converted to ``target`` on local axes.

    ``precision="input"``: each new eastward component is rounded, as it is
    computed, to the precision its input is stored in
    (:func:`frameshift.storage.stored_precision`); the addition is float64 either way.
    """
    check_choice("precision", precision, PRECISIONS)
    sign = 1.0 if target == INERTIAL else -1.0
    new_data = {}
    for vset in layout.sets:
        east = ds.variables[vset.eastward]
        dtype = stored_precision(east) if precision == "input" else np.dtype(np.float64)
        new_data[vset.eastward] = _new_eastward(ds, frame, vset, sign, dtype)
    names = {c.name for s in layout.sets for c in s.components}
    if names <= set(ds.data_vars):
        # one shallow copy with the new eastward data; the metadata of the copied
        # velocity variables (fresh Variable objects) is then set in place
        data = {k: ds.variables[k].data for k in ds.data_vars}
        data.update(new_data)
        out = ds.copy(deep=False, data=data)
    else:  # a velocity held as a coordinate: assign variable by variable
        out = ds.copy(deep=False)
        for name in names:
            var = ds.variables[name]
            out[name] = xr.Variable(
                var.dims, new_data.get(name, var.data), attrs=var.attrs, encoding=var.encoding
            )
    for vset in layout.sets:
        for comp in vset.components:
            var = ds.variables[comp.name]
            notes = [n for n in vset.notes if comp.axis == "eastward" or "upward" not in n]
            attrs = velocity_attrs(
                var.attrs,
                comp.axis,
                family=vset.family,
                frame_name=frame.name,
                target=target,
                units=comp.units,
                notes=notes,
            )
            changed = comp.axis == "eastward"
            if changed:
                for key in CHANGED_RANGE_ATTRS:
                    attrs.pop(key, None)
            target_var = out.variables[comp.name]
            target_var.attrs = attrs
            target_var.encoding = float_encoding(var.encoding) if changed else dict(var.encoding)
    op = "to_inertial" if target == INERTIAL else "to_rotating"
    converted = [list(s.names()) for s in layout.sets]
    listing = converted[0] if len(converted) == 1 else converted
    return stamped(out, f"{op}(basis='local', frame={frame.name!r}) on {listing}")


def _new_eastward(ds: xr.Dataset, frame: Frame, vset: VelocitySet, sign: float,
                  dtype: np.dtype):
    east = ds.variables[vset.eastward]
    lat, _ = position_values(ds, vset.position)
    h = height_values(ds, vset.position, floor=floor_of(frame))
    # Ω, the direction and the eastward unit fold into one factor of the small
    # position-only kernel; the full-size work is the one addition below
    factor = sign / vset.component("eastward").to_si
    geometry = frame.figure.kernel_geometry()
    if frame.steady:
        omega = frame.rotation_rate * factor
        shift = apply_kernel(vk.eastward_frame_speed, lat, h, kwargs={"omega": omega, **geometry})
    else:
        speed = apply_kernel(vk.eastward_frame_speed, lat, h, kwargs={"omega": 1.0, **geometry})
        shift = speed * (_rate_over_time(ds, frame, vset) * factor)
    extra = set(shift.dims) - set(east.dims)
    if extra:
        raise MissingInputError(
            f"the position varies along {sorted(extra)}, which the velocity "
            f"{vset.eastward!r} {east.dims} does not have",
            variable=vset.eastward,
            expected=f"position on dimensions within {east.dims}",
            found=str(shift.dims),
        )
    if vset.position.kind == "geodetic":  # east is undefined at the poles: NaN there,
        # put in the small position-only term, so the field gets it in the one addition
        shift = mask_poles(shift, lat, repr(vset.eastward), sizes=east.sizes)
    # Variables broadcast by dimension name without index alignment (the
    # position arrays are the Dataset's own coordinates); the one full-size pass,
    # rounded in it to ``dtype``
    new = apply_kernel(vk.shifted, xr.DataArray(xr.Variable(east.dims, east.data)),
                       xr.DataArray(shift.variable), kwargs={"dtype": dtype}, dtype=dtype)
    return new.transpose(*east.dims).data


def _rate_over_time(ds: xr.Dataset, frame: Frame, vset: VelocitySet) -> xr.DataArray:
    if vset.position.time is None:
        raise MissingInputError(
            f"frame {frame.name!r} changes its rotation rate in time; the velocity "
            f"{vset.eastward!r} needs a time coordinate",
            variable="time",
            expected="a time coordinate",
            found="none",
        )
    t, instants = time_instants(ds, vset.position)
    rate = np.asarray(frame.rotation_rate_at(instants), dtype=np.float64).reshape(t.shape)
    return xr.DataArray(rate, dims=t.dims)


def stamped(out: xr.Dataset, operation: str) -> xr.Dataset:
    """``out`` with a history line and Conventions set (no further copy)."""
    attrs = dict(out.attrs)
    append_history(attrs, operation)
    set_conventions(attrs)
    out.attrs = attrs
    return out

