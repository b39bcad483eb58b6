"""Lab fields between a rotating table and the lab, on xarray Datasets.

A lab Dataset holds velocity components on the tank's x and y axes (and
optionally z) on x/y coordinates in length units and a time coordinate
(elapsed time or dates). The frame is a :class:`~frameshift.frames.Frame`
with a :class:`~frameshift.frames.Plane` figure, such as a
:class:`~frameshift.frames.RotatingTable`. Two placements of the result:

``grid="same"``
    the same physical points: components on the target frame's axes, and
    each point's position in the target frame added as coordinates
    ``<x>_<target>``, ``<y>_<target>`` (on time, y, x);
``grid="fixed"``
    a grid fixed in the target frame, with the input grid's coordinate values:
    every field on the grid is moved there by linear interpolation, missing
    (NaN) where the target point lies outside the measured area.

The numerical work is in :mod:`frameshift._kernels.planar`.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import planar as pk
from frameshift.cf import float_encoding, stamp
from frameshift.detect.planar import PlanarLayout, read_planar_layout, rotation_series
from frameshift.errors import MissingInputError, UnsupportedInputError, check_choice
from frameshift.units import scale_to

__all__ = ["GRIDS", "planar_to_inertial", "planar_to_rotating"]

GRIDS = ("same", "fixed")
_WHAT = {"inertial": "the lab (inertial frame)", "rotating": "the rotating table"}


def planar_to_inertial(
    ds: xr.Dataset,
    frame,
    *,
    velocity: Mapping[str, str] | None = None,
    grid: str = "same",
) -> xr.Dataset:
    """Velocities relative to a rotating table, seen from the lab.

    Parameters
    ----------
    ds : xarray.Dataset
        Velocity components on the table's axes, relative to the table, on
        x/y coordinates (length units, ``axis`` "X"/"Y", the standard names
        ``projection_x_coordinate``/``projection_y_coordinate``, or named x
        and y) and a time coordinate.
    frame : Frame
        A frame with a plane figure (:class:`~frameshift.frames.RotatingTable`).
    velocity : mapping, optional
        ``{"x": name, "y": name}`` and optionally ``"z"``; by default the
        variables frameshift marked with ``velocity_component``.
    grid : {"same", "fixed"}
        ``"same"``: the same points, with their lab positions as coordinates
        ``<x>_inertial``, ``<y>_inertial``; ``"fixed"``: on a lab-fixed grid
        with the input's coordinate values, by linear interpolation.

    Returns
    -------
    xarray.Dataset

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": (("time", "y", "x"), np.zeros((1, 1, 1)), {"units": "m s-1"}),
    ...      "v": (("time", "y", "x"), np.zeros((1, 1, 1)), {"units": "m s-1"})},
    ...     coords={"time": ("time", np.array([0], "timedelta64[s]")),
    ...             "y": ("y", [0.0], {"units": "m"}), "x": ("x", [0.2], {"units": "m"})})
    >>> table = frameshift.RotatingTable("10 rpm")
    >>> lab = frameshift.to_inertial(ds, table, velocity={"x": "u", "y": "v"})
    >>> round(float(lab["v"][0, 0, 0]), 6)  # Ω r: 10 rpm at 0.2 m
    0.20944
    """
    return _convert(ds, frame, "inertial", velocity, grid)


def planar_to_rotating(
    ds: xr.Dataset,
    frame,
    *,
    velocity: Mapping[str, str] | None = None,
    grid: str = "same",
) -> xr.Dataset:
    """Velocities relative to the lab, seen from a rotating table.

    The inverse of :func:`planar_to_inertial`, with the same keywords: the
    Dataset holds lab-frame components on lab axes (a camera fixed in the
    lab), and the result holds components relative to the table on its axes.

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": (("time", "y", "x"), np.zeros((1, 1, 1)), {"units": "m s-1"}),
    ...      "v": (("time", "y", "x"), np.zeros((1, 1, 1)), {"units": "m s-1"})},
    ...     coords={"time": ("time", np.array([0], "timedelta64[s]")),
    ...             "y": ("y", [0.0], {"units": "m"}), "x": ("x", [0.2], {"units": "m"})})
    >>> table = frameshift.RotatingTable("10 rpm")
    >>> seen = frameshift.to_rotating(ds, table, velocity={"x": "u", "y": "v"})
    >>> round(float(seen["v"][0, 0, 0]), 6)  # fluid at rest in the lab: -Ω r
    -0.20944
    """
    return _convert(ds, frame, "rotating", velocity, grid)


def _convert(ds, frame, target, velocity, grid) -> xr.Dataset:
    check_choice("grid", grid, GRIDS)
    layout = read_planar_layout(ds, velocity, target=target)
    if layout.time is None:
        raise MissingInputError(
            f"turning {list(layout.names())} between the table and the lab needs the "
            "table's angle, so the Dataset needs a time coordinate (elapsed time or dates)",
            variable=layout.x_velocity,
            expected="a time coordinate",
            found="none",
        )
    angle, rate, _ = rotation_series(ds, frame, layout.time)
    cx, cy = frame.figure.center
    if grid == "same":
        out = _same_points(ds, layout, target, angle, rate, cx, cy)
    else:
        out = _fixed_grid(ds, layout, target, angle, rate, cx, cy)
    for comp, name in layout.components():
        var = out.variables[name]
        var.attrs = _velocity_attrs(ds[name].attrs, comp, frame, target, grid)
        var.encoding = float_encoding(ds[name].encoding)
    op = "to_inertial" if target == "inertial" else "to_rotating"
    return stamp(out, f"{op}(grid={grid!r}, frame={frame.name!r}) on {list(layout.names())}")


def _plain(ds: xr.Dataset, name: str) -> xr.DataArray:
    """A variable as a DataArray without coordinates or attributes (no alignment work)."""
    return xr.DataArray(ds.variables[name])


def _same_points(ds, layout: PlanarLayout, target, angle, rate, cx, cy) -> xr.Dataset:
    xs = scale_to(layout.length_units, "m")
    x, y = _plain(ds, layout.x) * xs, _plain(ds, layout.y) * xs
    su, sv = layout.speed_scale(layout.x_velocity), layout.speed_scale(layout.y_velocity)
    u, v = _plain(ds, layout.x_velocity) * su, _plain(ds, layout.y_velocity) * sv
    kernel = pk.table_to_lab if target == "inertial" else pk.lab_to_table
    dims = ds[layout.x_velocity].dims
    _, _, new_u, new_v = apply_kernel(
        kernel,
        x,
        y,
        u,
        v,
        angle,
        rate,
        output_core_dims=[(), (), (), ()],
        kwargs={"cx": cx, "cy": cy},
    )
    pos_x, pos_y = apply_kernel(
        _positions,
        x,
        y,
        angle,
        kwargs={"cx": cx, "cy": cy, "kernel": kernel},
        output_core_dims=[(), ()],
    )
    out = ds.copy(deep=False)
    out[layout.x_velocity] = (new_u / su).transpose(*dims).variable
    out[layout.y_velocity] = (new_v / sv).transpose(*dims).variable
    pos_dims = [d for d in dims if d in pos_x.dims]
    for name, data, axis in ((layout.x, pos_x, "x"), (layout.y, pos_y, "y")):
        attrs = {
            "units": str(ds[name].attrs["units"]),
            "long_name": f"{axis} position in {_WHAT[target]}",
            "reference_frame": target,
            "planar_axis": axis,  # not CF "axis": the x/y coordinates keep that
        }
        data = (data / xs).transpose(*pos_dims).data
        out = out.assign_coords({f"{name}_{target}": (pos_dims, data, attrs)})
    return out


def _positions(x, y, angle, *, cx, cy, kernel):
    """The target-frame position of each point (the velocity part of ``kernel`` unused)."""
    px, py, _, _ = kernel(x, y, 0.0, 0.0, angle, 0.0, cx, cy)
    return np.array(px), np.array(py)


def _fixed_grid(ds, layout, target, angle, rate, cx, cy) -> xr.Dataset:
    xdim, ydim = layout.x, layout.y
    for name in (xdim, ydim):
        if ds[name].dims != (name,):
            raise UnsupportedInputError(
                f"grid='fixed' needs 1-D x and y coordinates on their own dimensions; "
                f"{name!r} is on {ds[name].dims}",
                variable=name,
                expected=f"a coordinate on ({name!r},)",
                found=str(ds[name].dims),
            )
    xs = scale_to(layout.length_units, "m")
    axis_x = np.asarray(ds[xdim].values, dtype=np.float64) * xs
    axis_y = np.asarray(ds[ydim].values, dtype=np.float64) * xs
    for name, axis in ((xdim, axis_x), (ydim, axis_y)):
        steps = np.diff(axis)
        if axis.size < 2 or not (np.all(steps > 0) or np.all(steps < 0)):
            raise UnsupportedInputError(
                f"grid='fixed' interpolates on the measured grid; coordinate {name!r} must "
                "have at least two strictly increasing or decreasing values",
                variable=name,
                expected="strictly monotonic values",
                found=str(ds[name].values[:5]),
            )
    direction = "to_inertial" if target == "inertial" else "to_rotating"
    core = [ydim, xdim]

    def whole(da: xr.DataArray) -> xr.DataArray:
        return da.chunk({ydim: -1, xdim: -1}) if da.chunks is not None else da

    su, sv = layout.speed_scale(layout.x_velocity), layout.speed_scale(layout.y_velocity)
    u = whole(_plain(ds, layout.x_velocity)) * su
    v = whole(_plain(ds, layout.y_velocity)) * sv
    new_u, new_v = apply_kernel(
        _fixed_change,
        u,
        v,
        angle,
        rate,
        input_core_dims=[core, core, (), ()],
        output_core_dims=[core, core],
        kwargs={
            "axis_y": axis_y,
            "axis_x": axis_x,
            "cx": cx,
            "cy": cy,
            "direction": direction,
        },
    )
    out = ds.copy(deep=False)
    dims = ds[layout.x_velocity].dims
    out[layout.x_velocity] = (new_u / su).transpose(*dims).variable
    out[layout.y_velocity] = (new_v / sv).transpose(*dims).variable
    for name, var in ds.data_vars.items():  # every other field on the grid moves with it
        if name in (layout.x_velocity, layout.y_velocity):
            continue
        if {xdim, ydim} <= set(var.dims):
            if not np.issubdtype(var.dtype, np.floating):
                raise UnsupportedInputError(
                    f"grid='fixed' moves every field on ({ydim!r}, {xdim!r}) by linear "
                    f"interpolation; {name!r} holds {var.dtype} values, which cannot be "
                    "interpolated. Drop it or convert it to float first",
                    variable=name,
                    expected="floating-point values",
                    found=str(var.dtype),
                )
            sampled = apply_kernel(
                _fixed_sample,
                whole(_plain(ds, name)),
                angle,
                input_core_dims=[core, ()],
                output_core_dims=[core],
                kwargs={
                    "axis_y": axis_y,
                    "axis_x": axis_x,
                    "cx": cx,
                    "cy": cy,
                    "direction": direction,
                },
            )
            out[name] = xr.Variable(
                var.dims,
                sampled.transpose(*var.dims).data,
                attrs=dict(var.attrs),
                encoding=float_encoding(var.encoding),
            )
    dropped = [n for n, c in ds.coords.items() if n not in ds.dims and {xdim, ydim} <= set(c.dims)]
    out = out.drop_vars(dropped)
    for name in (xdim, ydim):
        attrs = dict(ds[name].attrs)
        attrs["reference_frame"] = target
        note = (
            f"grid fixed in {_WHAT[target]}; values moved there by linear interpolation, "
            "missing outside the measured area"
        )
        attrs["comment"] = f"{attrs['comment']}; {note}" if attrs.get("comment") else note
        out.variables[name].attrs = attrs
    return out


def _fixed_change(u, v, angle, rate, *, axis_y, axis_x, cx, cy, direction):
    return pk.fixed_grid_change(axis_y, axis_x, u, v, angle, rate, cx, cy, direction=direction)


def _fixed_sample(values, angle, *, axis_y, axis_x, cx, cy, direction):
    return pk.fixed_grid_sample(axis_y, axis_x, values, angle, cx, cy, direction=direction)


def _velocity_attrs(old: Mapping, comp: str, frame, target: str, grid: str) -> dict:
    attrs = dict(old)
    for key in ("valid_min", "valid_max", "valid_range", "actual_range"):
        attrs.pop(key, None)
    if target == "inertial":
        std = attrs.pop("standard_name", None)
        if std:
            attrs["standard_name_in_rotating_frame"] = std
        if "long_name" in old:
            attrs["long_name_in_rotating_frame"] = old["long_name"]
        attrs["long_name"] = f"{comp} component of velocity relative to the lab (inertial frame)"
    else:
        std = attrs.pop("standard_name_in_rotating_frame", None)
        if std:
            attrs["standard_name"] = std
        attrs["long_name"] = attrs.pop(
            "long_name_in_rotating_frame",
            f"{comp} component of velocity relative to {frame.name}, on its axes",
        )
    attrs["reference_frame"] = target
    attrs["reference_body"] = frame.name
    attrs["velocity_component"] = comp
    attrs["grid_placement"] = (
        "same physical points as the input"
        if grid == "same"
        else f"grid fixed in {_WHAT[target]} (linear interpolation)"
    )
    return attrs
