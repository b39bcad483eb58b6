"""Planetocentric latitudes in, planetographic latitudes to the figure, and back.

Every operation on an ellipsoidal frame places points by planetographic
(geodetic) latitude. Data on a flattened body are often on planetocentric
latitude instead; ``latitude_kind="planetocentric"`` says so explicitly.
:func:`planetographic_view` then hands the operation a shallow copy whose
latitude variables are converted (lazily for Dask), and :func:`restore_latitudes`
puts the caller's own latitudes back on the result and records the choice.
The conversion is that of surface points (tan ψ = (1 - f)² tan φ); a point
at height h above the surface is placed on the normal through the surface
point of that planetocentric latitude (its own centric latitude differs by
about h f sin 2φ / a, under 1e-4 degrees for cloud heights on the giant planets).
"""

from __future__ import annotations

import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels.latitudes import centric_to_graphic, graphic_to_centric
from frameshift.detect.layout import read_layout
from frameshift.errors import check_choice
from frameshift.frames import Ellipsoid, check_frame

__all__ = ["LATITUDE_KINDS", "planetographic_view", "restore_latitudes"]

LATITUDE_KINDS = ("planetographic", "planetocentric")
_NOTE = "latitudes read as planetocentric, converted to planetographic to place points"


def planetographic_view(
    ds: xr.Dataset, frame, latitude_kind: str, **layout_kwargs
) -> tuple[xr.Dataset, tuple[str, ...]]:
    """``(dataset, names)``: ``ds`` with planetographic latitudes, and which were converted.

    For ``"planetographic"`` (or a sphere, where both agree) ``ds`` itself
    comes back and no name.
    """
    check_choice("latitude_kind", latitude_kind, LATITUDE_KINDS)
    if latitude_kind == "planetographic":
        return ds, ()
    check_frame(frame, Ellipsoid)
    if frame.flattening == 0.0:
        return ds, ()
    layout = read_layout(ds, **layout_kwargs)
    names = tuple(sorted({s.position.latitude for s in layout.sets if s.position.latitude}))
    view = ds.copy(deep=False)
    for name in names:
        var = ds.variables[name]
        new = apply_kernel(centric_to_graphic, xr.DataArray(var), kwargs={"f": frame.flattening})
        new = xr.Variable(var.dims, new.transpose(*var.dims).data, attrs=dict(var.attrs))
        if name in ds.coords:
            view = view.assign_coords({name: new})
        else:
            view[name] = new
    return view, names


def restore_latitudes(
    out: xr.Dataset, ds: xr.Dataset, names: tuple[str, ...], latitude_kind: str, frame=None
) -> xr.Dataset:
    """The caller's latitudes back on ``out``; the choice noted on what frameshift wrote.

    ``frame`` (with ``latitude_kind="planetocentric"``) also turns latitudes an
    operation computed (``standard_name`` latitude, not the input's) into
    planetocentric ones.
    """
    if latitude_kind == "planetographic":
        return out
    out = out.copy(deep=False)
    for name in names:
        if name in out.variables:
            if name in out.coords:
                out = out.assign_coords({name: ds.variables[name]})
            else:
                out[name] = ds.variables[name]
    for name, var in out.data_vars.items():
        if (
            frame is not None
            and frame.flattening != 0.0
            and var.attrs.get("standard_name") == "latitude"
            and name not in ds.variables
        ):
            centric = apply_kernel(
                graphic_to_centric, xr.DataArray(var.variable), kwargs={"f": frame.flattening}
            )
            attrs = dict(var.attrs, latitude_kind="planetocentric")
            out[name] = xr.Variable(var.dims, centric.transpose(*var.dims).data, attrs=attrs)
        elif "reference_body" in var.attrs:
            attrs = dict(var.attrs)
            attrs["latitude_kind"] = latitude_kind
            if names:
                old = attrs.get("assumptions")
                attrs["assumptions"] = f"{old}; {_NOTE}" if old else _NOTE
            out.variables[name].attrs = attrs
    return out
