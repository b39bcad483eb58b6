"""Find lab velocities, x/y positions and time for planar (rotating-table) frames.

A lab Dataset names its velocity components on the tank's axes explicitly
(``velocity={"x": "u", "y": "v"}``, optionally ``"z"``), or carries the
``velocity_component`` marks frameshift writes. Positions are the velocity's
coordinates with ``axis`` "X"/"Y", the CF standard names
``projection_x_coordinate``/``projection_y_coordinate``, or the names x and
y, in length units; positions a conversion added carry ``planar_axis`` and
``reference_frame``, and are preferred for a velocity of that frame. Time is a
decoded time coordinate (datetime64, cftime, timedelta64) or one with ``axis``
"T" / standard name ``time``.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pint
import xarray as xr

from frameshift.errors import (
    ConventionError,
    FrameError,
    InputTypeError,
    MissingInputError,
    UnsupportedInputError,
)
from frameshift.units import parse_units, scale_to

__all__ = [
    "PLANAR_AXES",
    "PlanarLayout",
    "read_planar_grid",
    "read_planar_layout",
    "rotation_series",
]

PLANAR_AXES = ("x", "y", "z")
#: What marks a coordinate as the x or y position (data, not logic)
POSITION_AXIS = {"x": "X", "y": "Y"}
POSITION_STANDARD_NAMES = {"x": "projection_x_coordinate", "y": "projection_y_coordinate"}
TIME_STANDARD_NAME = "time"


@dataclass(frozen=True)
class PlanarLayout:
    """Names of a lab Dataset's velocity components, positions and time, with unit factors."""

    x_velocity: str
    y_velocity: str
    z_velocity: str | None
    x: str
    y: str
    time: str | None
    length_units: pint.Unit
    speed_scales: tuple[tuple[str, float], ...]

    def names(self) -> tuple[str, ...]:
        return tuple(n for n in (self.x_velocity, self.y_velocity, self.z_velocity) if n)

    def components(self) -> tuple[tuple[str, str], ...]:
        pairs = zip(PLANAR_AXES, (self.x_velocity, self.y_velocity, self.z_velocity), strict=True)
        return tuple((c, n) for c, n in pairs if n is not None)

    def speed_scale(self, name: str) -> float:
        """Factor from the variable's speed units to m s-1."""
        return dict(self.speed_scales)[name]


def read_planar_layout(
    ds: xr.Dataset, velocity: Mapping[str, str] | None, *, target: str
) -> PlanarLayout:
    """Find what a planar conversion needs, refusing what cannot be used.

    ``target`` is ``"inertial"``, ``"rotating"`` (the frame the velocities
    are to be moved to: a velocity already there is refused) or ``None``
    (no check of the frame the velocities are relative to).

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> ds = xr.Dataset(
    ...     {"u": (("y", "x"), np.zeros((1, 2)), {"units": "mm s-1"}),
    ...      "v": (("y", "x"), np.zeros((1, 2)), {"units": "mm s-1"})},
    ...     coords={"x": ("x", [0.0, 1.0], {"units": "cm"}), "y": ("y", [0.0], {"units": "cm"})})
    >>> lay = read_planar_layout(ds, {"x": "u", "y": "v"}, target="inertial")
    >>> lay.x, lay.y, lay.speed_scale("u")
    ('x', 'y', 0.001)
    """
    if not isinstance(ds, xr.Dataset):
        raise InputTypeError(
            f"expected an xarray.Dataset; found {type(ds).__name__}",
            variable="ds",
            expected="xarray.Dataset",
            found=type(ds).__name__,
        )
    names = _velocity_names(ds, velocity)
    scales = []
    for comp, name in names.items():
        unit = parse_units(name, ds[name].attrs.get("units"), "speed")
        scales.append((name, scale_to(unit, "m s-1")))
        found = ds[name].attrs.get("reference_frame")
        if target is not None and found == target:
            raise FrameError(
                f"{name!r} is already relative to the {target} frame "
                f"(reference_frame={found!r}); nothing to convert",
                variable=name,
                expected=f"a velocity not yet relative to the {target} frame",
                found=f"reference_frame={found!r}",
            )
        if comp != "x" and ds[name].dims != ds[names["x"]].dims:
            raise UnsupportedInputError(
                f"velocity components must share their dimensions; {name!r} is on "
                f"{ds[name].dims} and {names['x']!r} on {ds[names['x']].dims}",
                variable=name,
                expected=str(ds[names["x"]].dims),
                found=str(ds[name].dims),
            )
    x, y, time, length_units = read_planar_grid(ds, names["x"])
    return PlanarLayout(
        x_velocity=names["x"],
        y_velocity=names["y"],
        z_velocity=names.get("z"),
        x=x,
        y=y,
        time=time,
        length_units=length_units,
        speed_scales=tuple(scales),
    )


def read_planar_grid(ds: xr.Dataset, name: str | None = None):
    """x and y coordinate names, time name and length unit of a variable's grid (or the Dataset's).

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset(coords={"x": ("x", [0.0, 1.0], {"units": "cm"}),
    ...                         "y": ("y", [0.0], {"units": "cm"})})
    >>> read_planar_grid(ds)[:3]
    ('x', 'y', None)
    """
    if name is not None and name not in ds.variables:
        raise MissingInputError(
            f"{name!r} is not in the Dataset",
            variable=name,
            expected="a variable of the Dataset",
            found="absent",
        )
    holder = ds[name] if name is not None else ds
    x, y = (_position(ds, holder, axis) for axis in ("x", "y"))
    units = {a: parse_units(n, ds[n].attrs.get("units"), "length") for a, n in (("x", x), ("y", y))}
    if scale_to(units["x"], "m") != scale_to(units["y"], "m"):
        raise UnsupportedInputError(
            f"x and y positions must share their units; {x!r} is in {units['x']} and "
            f"{y!r} in {units['y']}",
            variable=y,
            expected=str(units["x"]),
            found=str(units["y"]),
        )
    return x, y, _time(holder), units["x"]


def _velocity_names(ds: xr.Dataset, velocity: Mapping[str, str] | None) -> dict[str, str]:
    if velocity is None:
        found = {
            str(v.attrs["velocity_component"]): str(k)
            for k, v in ds.variables.items()
            if v.attrs.get("velocity_component") in PLANAR_AXES and "reference_frame" in v.attrs
        }
        if "x" not in found or "y" not in found:
            raise MissingInputError(
                "name the velocity components on the table's axes, e.g. "
                "velocity={'x': 'u', 'y': 'v'} (optionally 'z')",
                variable="velocity",
                expected="a mapping with keys 'x' and 'y'",
                found="none given and none marked by frameshift",
            )
        return found
    if not isinstance(velocity, Mapping):
        raise InputTypeError(
            f"velocity= must be a mapping such as {{'x': 'u', 'y': 'v'}}; found "
            f"{type(velocity).__name__}",
            variable="velocity",
            expected="mapping",
            found=type(velocity).__name__,
        )
    unknown = sorted(set(velocity) - set(PLANAR_AXES))
    if unknown or "x" not in velocity or "y" not in velocity:
        raise ConventionError(
            f"velocity= for a planar frame takes the keys 'x', 'y' and optionally 'z'; "
            f"found {sorted(velocity)}",
            variable="velocity",
            expected="'x', 'y' [, 'z']",
            found=str(sorted(velocity)),
        )
    for name in velocity.values():
        if name not in ds.variables:
            raise MissingInputError(
                f"velocity component {name!r} is not in the Dataset",
                variable=name,
                expected="a variable of the Dataset",
                found="absent",
            )
    return {c: velocity[c] for c in PLANAR_AXES if c in velocity}


def _position(ds: xr.Dataset, var: xr.DataArray | xr.Dataset, axis: str) -> str:
    hits = []
    for name, coord in var.coords.items():
        attrs = coord.attrs
        if (
            attrs.get("axis") == POSITION_AXIS[axis]
            or attrs.get("planar_axis") == axis
            or attrs.get("standard_name") == POSITION_STANDARD_NAMES[axis]
            or str(name).lower() == axis
        ):
            hits.append(str(name))
    if len(hits) > 1:  # positions written by a conversion: those of the velocity's frame
        frame = var.attrs.get("reference_frame")
        same = [h for h in hits if frame and ds[h].attrs.get("reference_frame") == frame]
        hits = same or [h for h in hits if "reference_frame" not in ds[h].attrs]
    if len(hits) != 1:
        found = "none" if not hits else ", ".join(map(repr, hits))
        raise MissingInputError(
            f"cannot tell the {axis} position of {_label(var)}: expected one coordinate with "
            f"axis={POSITION_AXIS[axis]!r}, standard_name={POSITION_STANDARD_NAMES[axis]!r} "
            f"or the name {axis!r}; found {found}",
            variable=str(var.name) if isinstance(var, xr.DataArray) else "ds",
            expected=f"one {axis} coordinate in length units",
            found=found,
        )
    return hits[0]


def _label(holder: xr.DataArray | xr.Dataset) -> str:
    return repr(holder.name) if isinstance(holder, xr.DataArray) else "the Dataset"


def _time(var: xr.DataArray | xr.Dataset) -> str | None:
    hits = []
    for name, coord in var.coords.items():
        kind = coord.dtype.kind
        decoded = kind in "Mm" or (
            kind == "O" and coord.size and hasattr(coord.values.flat[0], "calendar")
        )
        marked = (
            coord.attrs.get("axis") == "T" or coord.attrs.get("standard_name") == TIME_STANDARD_NAME
        )
        if decoded or marked:
            hits.append(str(name))
    if len(hits) > 1:
        dims = [h for h in hits if h in var.dims]  # a dimension coordinate first
        hits = dims if len(dims) == 1 else hits
    if len(hits) > 1:
        raise UnsupportedInputError(
            f"{_label(var)} has several time coordinates ({', '.join(hits)}); keep one",
            variable=str(var.name) if isinstance(var, xr.DataArray) else "ds",
            expected="one time coordinate",
            found=", ".join(hits),
        )
    return hits[0] if hits else None


def rotation_series(ds: xr.Dataset, frame, time_name: str):
    """The frame's angle (rad), rate (rad s-1) and rate of change (rad s-2) over time.

    DataArrays on the time coordinate's dimensions, from the frame's rotation
    law at the Dataset's decoded times.
    """
    from frameshift.frames.timescales import instants_of

    t = ds[time_name]
    values = np.asarray(t.values)
    instants = instants_of(values.ravel(), time_name)
    angle = np.asarray(frame.rotation_angle(instants), dtype=np.float64)
    rate = np.asarray(frame.rotation_vector(instants), dtype=np.float64)[..., 2]
    change = np.asarray(frame.rotation_vector_rate(instants), dtype=np.float64)[..., 2]

    def on_time(a: np.ndarray) -> xr.DataArray:
        return xr.DataArray(np.broadcast_to(a, values.size).reshape(values.shape), dims=t.dims)

    return on_time(angle), on_time(rate), on_time(change)
