"""Apparent accelerations on a rotating table's axes, and its free surface.

For velocities relative to a table turning at Ω(t) about a vertical axis
through its centre c, with positions r on the table (m):

``coriolis``     -2 Ω × V             = (2Ω v, -2Ω u, 0)
``centrifugal``  -Ω × (Ω × (r - c))   = Ω² (x - cx, y - cy, 0)
``euler``        -(dΩ/dt) × (r - c)   = Ω̇ (y - cy, -(x - cx), 0)

and their total, so that d(u, v, w)/dt following the motion on the table is
the force-driven acceleration plus the total. The free surface of fluid
turning with the table stands Ω² r² / (2 g) above its lowest point.

The numerical work is in :mod:`frameshift._kernels.planar`.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import planar as pk
from frameshift.cf import stamp
from frameshift.detect.planar import (
    PlanarLayout,
    read_planar_grid,
    read_planar_layout,
    rotation_series,
)
from frameshift.errors import ConventionError, FrameError, MissingInputError, UnitsError
from frameshift.units import parse_units, scale_to, ureg

__all__ = ["PLANAR_FORMULAS", "STANDARD_GRAVITY", "free_surface", "planar_accelerations"]

#: Standard acceleration of gravity, m s-2 (3rd CGPM, 1901)
STANDARD_GRAVITY = 9.80665

PLANAR_FORMULAS = {
    "coriolis": {"x": "2 Omega v", "y": "-2 Omega u", "z": "0"},
    "centrifugal": {"x": "Omega**2 (x - x_c)", "y": "Omega**2 (y - y_c)", "z": "0"},
    "euler": {"x": "dOmega/dt (y - y_c)", "y": "-dOmega/dt (x - x_c)", "z": "0"},
}
_LABELS = {"coriolis": "Coriolis", "centrifugal": "centrifugal", "euler": "Euler"}


def planar_accelerations(
    ds: xr.Dataset,
    frame,
    *,
    terms: str | Iterable[str] | None = None,
    velocity: Mapping[str, str] | None = None,
) -> xr.Dataset:
    """Coriolis, centrifugal and Euler accelerations on a rotating table's x, y, z axes.

    Parameters
    ----------
    ds : xarray.Dataset
        Velocities relative to the table on its axes, on x/y coordinates in
        length units; a time coordinate when the table's rate changes.
    frame : Frame
        A frame with a plane figure (:class:`~frameshift.frames.RotatingTable`).
    terms : str or iterable of str, optional
        Some of ``"coriolis"``, ``"centrifugal"``, ``"euler"`` (default: all).
    velocity : mapping, optional
        ``{"x": name, "y": name}`` (optionally ``"z"``, which no term uses).

    Returns
    -------
    xarray.Dataset
        ``<term>_x``, ``<term>_y``, ``<term>_z`` for each term and
        ``total_x``, ``total_y``, ``total_z``, float64, m s-2, on the
        velocity's dimensions (the z parts are zero: every term lies in the
        table's plane). No standard names (the CF table has none for these).

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": (("y", "x"), [[0.1]], {"units": "m s-1"}),
    ...      "v": (("y", "x"), [[0.0]], {"units": "m s-1"})},
    ...     coords={"y": ("y", [0.0], {"units": "m"}), "x": ("x", [0.2], {"units": "m"})})
    >>> acc = planar_accelerations(ds, frameshift.RotatingTable("1 rad s-1"),
    ...                            velocity={"x": "u", "y": "v"})
    >>> float(acc["coriolis_y"][0, 0]), float(acc["centrifugal_x"][0, 0])  # -2Ω u, Ω² x
    (-0.2, 0.2)
    """
    chosen = _check_terms(terms)
    layout = read_planar_layout(ds, velocity, target=None)
    first = ds[layout.x_velocity]
    if first.attrs.get("reference_frame") == "inertial":
        raise FrameError(
            f"apparent accelerations need velocities relative to the table; "
            f"{layout.x_velocity!r} is relative to the lab (inertial frame). Convert it "
            "with frameshift.to_rotating first",
            variable=layout.x_velocity,
            expected="a velocity relative to the rotating frame",
            found="reference_frame='inertial'",
        )
    rate, change = _rates(ds, frame, layout)
    xs = scale_to(layout.length_units, "m")
    su, sv = layout.speed_scale(layout.x_velocity), layout.speed_scale(layout.y_velocity)
    cx, cy = frame.figure.center
    names = [f"{t}_{c}" for t in (*chosen, "total") for c in pk.PLANAR_COMPONENTS]
    results = apply_kernel(
        pk.planar_accelerations,
        xr.DataArray(ds.variables[layout.x]) * xs,
        xr.DataArray(ds.variables[layout.y]) * xs,
        xr.DataArray(ds.variables[layout.x_velocity]) * su,
        xr.DataArray(ds.variables[layout.y_velocity]) * sv,
        rate,
        change,
        output_core_dims=[()] * len(names),
        kwargs={"cx": cx, "cy": cy, "terms": chosen},
    )
    dims = first.dims
    common = {
        "units": "m s-2",
        "reference_frame": "rotating",
        "reference_body": frame.name,
        "velocity_variables": " ".join(layout.names()),
    }
    variables = {}
    for name, data in zip(names, results, strict=True):
        term, comp = name.split("_")
        attrs = dict(common)
        if term == "total":
            attrs["long_name"] = f"{comp} sum of apparent accelerations ({', '.join(chosen)})"
            attrs["terms_included"] = " ".join(chosen)
        else:
            attrs["long_name"] = f"{comp} component of the {_LABELS[term]} acceleration"
            attrs["formula"] = PLANAR_FORMULAS[term][comp]
        attrs["acceleration_term"] = term
        attrs["acceleration_component"] = comp
        extra = [d for d in data.dims if d not in dims]
        order = (*dims, *extra)
        variables[name] = xr.Variable(order, data.transpose(*order).data, attrs=attrs)
    out = xr.Dataset(variables, coords=dict(first.coords), attrs=dict(ds.attrs))
    op = (
        f"apparent_accelerations(terms={list(chosen)}, frame={frame.name!r}) "
        f"from {list(layout.names())}"
    )
    return stamp(out, op)


def free_surface(
    ds: xr.Dataset,
    frame,
    *,
    height: str | None = None,
    gravity: float | str = STANDARD_GRAVITY,
) -> xr.Dataset:
    """The free surface of solid-body rotation on the table, and a measurement's departure.

    Parameters
    ----------
    ds : xarray.Dataset
        A Dataset with x/y coordinates in length units (and time when the
        table's rate changes).
    frame : Frame
        A frame with a plane figure (:class:`~frameshift.frames.RotatingTable`).
    height : str, optional
        Name of a measured surface height (length units) on the x/y grid.
    gravity : float or str, default 9.80665
        g in m s-2, or a quantity with units such as ``"981 cm s-2"``.

    Returns
    -------
    xarray.Dataset
        ``solid_body_surface``: Ω² r² / (2 g) above the surface's lowest point
        (in the height's units, else m), with r the distance from the axis.
        With ``height=``: ``surface_departure``, the measured height minus
        the solid-body surface holding the same volume over the measured area
        (the departure averages to zero over the finite points, at each time).

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> tank = xr.Dataset(coords={"x": ("x", [0.0, 0.3], {"units": "m"}),
    ...                           "y": ("y", [0.0], {"units": "m"})})
    >>> s = free_surface(tank, frameshift.RotatingTable("10 rpm"))["solid_body_surface"]
    >>> round(float(s.sel(x=0.3, y=0.0)) * 1000, 2)  # mm above the centre
    5.03
    """
    g = _gravity(gravity)
    x_name, y_name, time_name, length_units = read_planar_grid(ds, height)
    xs = scale_to(length_units, "m")
    if height is not None:
        out_units = str(ds[height].attrs.get("units"))
        out_scale = scale_to(parse_units(height, ds[height].attrs.get("units"), "length"), "m")
    else:
        out_units, out_scale = "m", 1.0
    rate = _rate_only(ds, frame, time_name)
    cx, cy = frame.figure.center
    dy, dx = xr.broadcast(
        xr.DataArray(ds.variables[y_name]) * xs - cy, xr.DataArray(ds.variables[x_name]) * xs - cx
    )
    surface = apply_kernel(pk.solid_body_surface, dx, dy, rate, kwargs={"gravity": g})
    surface = surface.transpose(*rate.dims, *dx.dims) / out_scale
    surface.attrs = {
        "units": out_units,
        "long_name": "free surface of solid-body rotation above its lowest point",
        "formula": "Omega**2 r**2 / (2 g)",
        "gravity": f"{g} m s-2",
        "reference_body": frame.name,
    }
    variables = {"solid_body_surface": surface}
    if height is not None:
        core = list(dx.dims)
        h = xr.DataArray(ds.variables[height]) * out_scale
        if h.chunks is not None:
            h = h.chunk({d: -1 for d in core})
        dep = apply_kernel(
            _departure,
            h,
            dx,
            dy,
            rate,
            input_core_dims=[core, core, core, ()],
            output_core_dims=[core],
            kwargs={"gravity": g},
        )
        dep = dep.transpose(*ds[height].dims) / out_scale
        dep.attrs = {
            "units": out_units,
            "long_name": "surface height minus the solid-body surface of the same volume",
            "reference_body": frame.name,
        }
        variables["surface_departure"] = dep
    out = xr.Dataset(variables, coords=dict(ds.coords), attrs=dict(ds.attrs))
    return stamp(out, f"free_surface(frame={frame.name!r}, height={height!r}, gravity={g})")


def _departure(h, dx, dy, rate, *, gravity):
    return pk.surface_departure(h, dx, dy, np.asarray(rate)[..., None, None], gravity)


def _check_terms(terms) -> tuple[str, ...]:
    if terms is None:
        return pk.PLANAR_TERMS
    asked = (terms,) if isinstance(terms, str) else tuple(terms)
    unknown = [t for t in asked if t not in pk.PLANAR_TERMS]
    if unknown or not asked:
        found = ", ".join(map(repr, unknown)) if unknown else "no terms"
        hint = " (a plane has no curvature term)" if "curvature" in unknown else ""
        raise ConventionError(
            f"terms= has unknown or no terms for a planar frame ({found}){hint}; valid terms "
            f"are {', '.join(map(repr, pk.PLANAR_TERMS))}",
            variable="terms",
            expected=" | ".join(pk.PLANAR_TERMS),
            found=found,
        )
    return tuple(t for t in pk.PLANAR_TERMS if t in asked)


def _rates(ds: xr.Dataset, frame, layout: PlanarLayout):
    if layout.time is None:
        if not frame.steady:
            raise MissingInputError(
                f"frame {frame.name!r} changes its rate in time; the Dataset needs a time "
                "coordinate (elapsed time or dates)",
                variable="time",
                expected="a time coordinate",
                found="none",
            )
        return xr.DataArray(float(frame.rotation_rate)), xr.DataArray(0.0)
    _, rate, change = rotation_series(ds, frame, layout.time)
    return rate, change


def _rate_only(ds: xr.Dataset, frame, time_name: str | None) -> xr.DataArray:
    if time_name is None:
        if not frame.steady:
            raise MissingInputError(
                f"frame {frame.name!r} changes its rate in time; the Dataset needs a time "
                "coordinate (elapsed time or dates)",
                variable="time",
                expected="a time coordinate",
                found="none",
            )
        return xr.DataArray(float(frame.rotation_rate))
    return rotation_series(ds, frame, time_name)[1]


def _gravity(gravity) -> float:
    if isinstance(gravity, (int, float)) and not isinstance(gravity, bool):
        value = float(gravity)
    else:
        try:
            q = ureg.Quantity(gravity)
            value = float(q.to("m s-2").magnitude)
        except Exception as exc:
            raise UnitsError(
                f"gravity= must be a number in m s-2 or a quantity such as '981 cm s-2'; "
                f"found {gravity!r}",
                variable="gravity",
                expected="an acceleration",
                found=repr(gravity),
            ) from exc
    if not np.isfinite(value) or value <= 0:
        raise UnitsError(
            f"gravity= must be positive and finite; found {gravity!r}",
            variable="gravity",
            expected="> 0 m s-2",
            found=repr(gravity),
        )
    return value
