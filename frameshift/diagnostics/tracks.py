"""The real force per unit mass along tracks of drifters, balloons, floats and ships."""

from __future__ import annotations

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import accelerations as acceleration_kernels
from frameshift._kernels import tracks as kernel
from frameshift.diagnostics import common
from frameshift.errors import MissingInputError, UnsupportedInputError
from frameshift.frames import EARTH, Ellipsoid, check_frame
from frameshift.units import parse_units, scale_to

__all__ = ["track_forces"]

_COMPONENTS = ("eastward", "northward", "upward")
_HEIGHTS = ("height_above_reference_ellipsoid", "altitude", "height", "depth")
_LONG = {
    "velocity": ("velocity relative to the rotating body, from the positions", "m s-1"),
    "acceleration": ("acceleration relative to the rotating body, from the positions", "m s-2"),
    "coriolis": ("Coriolis acceleration -2 Ω × V", "m s-2"),
    "centrifugal": ("centrifugal acceleration -Ω × (Ω × r)", "m s-2"),
    "force": ("real force per unit mass: acceleration minus the apparent terms", "m s-2"),
}


def track_forces(
    ds: xr.Dataset,
    frame=EARTH,
    *,
    latitude: str | None = None,
    longitude: str | None = None,
    height: str | float | None = None,
    time: str | None = None,
) -> xr.Dataset:
    """Velocity, acceleration and real force per unit mass along tracks of positions.

    Positions are placed on the frame's ellipsoid and differenced in time in
    body-fixed axes (three-point formulas on the actual times: exact for
    quadratic motion, second-order accurate for evenly spaced fixes; see
    :mod:`frameshift._kernels.tracks`), then given on local east/north/up
    axes. The real force per unit mass is the observed acceleration minus the
    apparent terms of steady rotation (Coriolis -2 Ω × V and centrifugal
    -Ω × (Ω × r)); it includes gravitation and whatever holds the platform
    up. When the frame has a ``gm``, ``force_beyond_gravitation_*`` also
    removes the attraction of the normal (level-ellipsoid) body, leaving drag,
    buoyancy, pressure and thrust.

    Parameters
    ----------
    ds : xarray.Dataset
        Latitude and longitude (and optionally height) along a decoded time
        coordinate; found by ``standard_name`` or named with the keywords.
        Other dimensions (several tracks sharing the times) are kept.
    frame : Planet, default EARTH
    latitude, longitude, time : str, optional
    height : str or float, optional
        Variable name (length units; ``altitude`` is taken as height above the
        ellipsoid, ``depth`` as negative height) or metres; default found by
        ``standard_name``, else 0 m.

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> t = np.datetime64("2031-02-01", "ns") + np.arange(6) * np.timedelta64(1, "h")
    >>> ds = xr.Dataset(coords={"time": t,
    ...     "lat": ("time", np.full(6, 10.0), {"standard_name": "latitude",
    ...                                        "units": "degrees_north"}),
    ...     "lon": ("time", np.full(6, 20.0), {"standard_name": "longitude",
    ...                                        "units": "degrees_east"})})
    >>> out = frameshift.track_forces(ds)  # at rest: the force balances the centrifugal term
    >>> bool(abs(float(out.force_northward[0]) + float(out.centrifugal_northward[0])) < 1e-9)
    True
    """
    frame = check_frame(frame, Ellipsoid)
    if not getattr(frame, "steady", True):
        raise UnsupportedInputError(
            f"frame {frame.name!r} changes its rotation rate; track forces are worked out for "
            "steady rotation (no Euler term) only",
            variable="frame", expected="a steadily rotating frame", found="changing rate",
        )
    common.require_dataset(ds)
    lat_name = latitude or _find(ds, "latitude", ("degrees_north", "degree_north", "degrees_N"))
    lon_name = longitude or _find(ds, "longitude", ("degrees_east", "degree_east", "degrees_E"))
    dims = tuple(map(str, ds.variables[lat_name].dims))
    time_name = time or _find_time(ds, dims)
    time_dim, seconds = common.seconds_along(ds, time_name, dims)
    if seconds.size < 4:
        raise UnsupportedInputError(
            f"a track needs at least 4 positions to difference; {time_name!r} has {seconds.size}",
            variable=time_name, expected=">= 4 times", found=str(seconds.size),
        )
    lat = common.as_plain(ds.variables[lat_name]).astype(np.float64)
    lon = common.as_plain(ds.variables[lon_name]).astype(np.float64)
    h, h_note = _height(ds, height, dims)
    args = []
    for arr in (lat, lon, h):
        if time_dim not in arr.dims:
            arr = arr.expand_dims({time_dim: seconds.size})
        if arr.chunks is not None:
            arr = arr.chunk({time_dim: -1})
        args.append(arr)
    omega = float(frame.rotation_rate)
    a, f = float(frame.equatorial_radius), float(frame.flattening)
    terms = apply_kernel(
        kernel.track_terms, *args, input_core_dims=([time_dim],) * 3,
        output_core_dims=(["quantity", "component", time_dim],),
        output_sizes={"quantity": len(kernel.OUTPUTS), "component": 3},
        kwargs={"seconds": seconds, "omega": omega, "a": a, "f": f},
    )
    order = [d for d in (*lat.dims, *(d for d in args[0].dims if d not in lat.dims))]
    base = {**common.frame_attrs(frame), "track_variables": f"{lat_name} {lon_name}",
            "assumptions": h_note + "; steady rotation; second-order differences in time"}
    out = {}
    for q, quantity in enumerate(kernel.OUTPUTS):
        long_name, units = _LONG[quantity]
        for c, comp in enumerate(_COMPONENTS):
            var = terms.isel(quantity=q, component=c).transpose(*order)
            out[f"{quantity}_{comp}"] = var.assign_attrs(
                long_name=f"{comp} {long_name}", units=units, **base)
    if frame.gm is not None:
        north, up = apply_kernel(
            _gravitation, args[0], args[2], output_core_dims=((), ()),
            kwargs={"a": a, "f": f, "gm": float(frame.gm), "omega": omega},
        )
        beyond = {"eastward": out["force_eastward"], "northward": out["force_northward"] - north,
                  "upward": out["force_upward"] - up}
        for comp, var in beyond.items():
            out[f"force_beyond_gravitation_{comp}"] = var.transpose(*order).assign_attrs(
                long_name=f"{comp} real force per unit mass less the attraction of the normal "
                "body (drag, buoyancy, pressure, thrust)", units="m s-2", **base)
    result = xr.Dataset(out).assign_coords(
        {n: c.variable for n, c in ds.coords.items() if set(c.dims) <= set(order)})
    return common.finish(result, ds, f"forces along tracks ({frame.name})")


def _gravitation(lat_deg, h, *, a, f, gm, omega):
    north, up, _, _ = acceleration_kernels.normal_gravity(
        np.deg2rad(lat_deg), np.asarray(h, dtype=np.float64), a=a, f=f, gm=gm, omega=omega)
    return north, up


def _find(ds: xr.Dataset, axis: str, units: tuple[str, ...]) -> str:
    hits = [str(n) for n, v in ds.variables.items() if v.attrs.get("standard_name") == axis]
    if not hits:
        hits = [str(n) for n, v in ds.variables.items() if v.attrs.get("units") in units]
    if len(hits) != 1:
        raise (MissingInputError if not hits else UnsupportedInputError)(
            f"{'no' if not hits else 'more than one'} {axis} found "
            f"({hits or 'looked for standard_name ' + repr(axis)}); name it with {axis}=",
            variable=axis, expected=f"one variable with standard_name {axis!r}",
            found=", ".join(hits) or "none",
        )
    return hits[0]


def _find_time(ds: xr.Dataset, dims: tuple[str, ...]) -> str:
    hits = [str(n) for n, v in ds.coords.items()
            if v.ndim == 1 and v.dims[0] in dims and (
                np.issubdtype(v.dtype, np.datetime64)
                or (v.dtype == object and v.size and hasattr(v.values[0], "calendar")))]
    if len(hits) != 1:
        raise (MissingInputError if not hits else UnsupportedInputError)(
            f"{'no' if not hits else 'more than one'} decoded time coordinate along the track "
            f"dimensions {dims} ({hits or 'none'}); name it with time=",
            variable="time", expected="one decoded time coordinate",
            found=", ".join(hits) or "none",
        )
    return hits[0]


def _height(ds: xr.Dataset, height, dims) -> tuple[xr.DataArray, str]:
    if height is not None and not isinstance(height, str):
        try:
            return xr.DataArray(float(height)), f"height {float(height):g} m given by the caller"
        except (TypeError, ValueError) as exc:
            raise UnsupportedInputError(
                f"height= must be a variable name or metres; found {type(height).__name__}",
                variable="height", expected="str or number", found=type(height).__name__,
            ) from exc
    if height is None:
        for sname in _HEIGHTS:
            hits = [str(n) for n, v in ds.variables.items()
                    if v.attrs.get("standard_name") == sname and set(v.dims) <= set(dims)]
            if hits:
                height = hits[0]
                break
        else:
            return xr.DataArray(0.0), "no height found: taken as 0 m on the ellipsoid"
    if height not in ds.variables:
        raise MissingInputError(
            f"height={height!r} names no variable of the Dataset",
            variable=height, expected="a variable of the Dataset", found="absent",
        )
    var = ds.variables[height]
    sign = -1.0 if (var.attrs.get("standard_name") == "depth"
                    or str(var.attrs.get("positive", "")).lower() == "down") else 1.0
    factor = sign * scale_to(parse_units(height, var.attrs.get("units"), "length"), "m")
    note = f"height from {height!r}" + (" (altitude taken as height above the ellipsoid)"
                                        if var.attrs.get("standard_name") == "altitude" else "")
    return common.as_plain(var) * factor, note
