"""Grid-relative components (``x_wind``, ``sea_water_x_velocity``, ...) <-> east/north.

The angle of the grid's x axis, anticlockwise from true east, comes from the
first of these that the Dataset offers:

1. the caller's ``angle=`` (a variable name, a DataArray with units, or degrees);
2. a variable with standard name ``angle_of_rotation_from_east_to_x``;
3. the components' CF ``grid_mapping``: a rotated latitude-longitude grid
   (exact spherical geometry of the rotated pole) or a conformal projection
   (the grid convergence from PROJ, through pyproj);
4. the grid's own two-dimensional latitude and longitude (a curvilinear
   grid), by centred differences of the great-circle bearing along x.

The grid's x and y axes are taken as perpendicular on the Earth, as they are
on conformal projections and rotated-pole grids; a non-conformal projection is
refused (give the angle instead).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import instruments as kern
from frameshift.detect import criteria
from frameshift.errors import MissingInputError, UnsupportedInputError
from frameshift.instruments.common import (
    angle_to_degrees,
    as_input,
    assemble,
    check_dataset,
    factor_between,
    find_standard,
    output_names,
    pick,
    speed_unit,
)
from frameshift.units import parse_units, scale_to, udunits_string

__all__ = ["earth_to_grid", "grid_angle", "grid_to_earth"]

_LABEL = criteria.FAMILY_LABELS  # how each family is named in long names
# below this angular distortion (degrees, PROJ) a projection counts as conformal
_CONFORMAL_TOLERANCE = 1e-4


def grid_angle(
    ds: xr.Dataset,
    variable: str,
    *,
    angle: object = None,
    x_dim: str | None = None,
) -> tuple[xr.DataArray, str]:
    """The angle (rad) of the grid's x axis anticlockwise from east, at ``variable``'s points.

    Returns the angle and a sentence saying where it came from (see the
    module docstring for the order).

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"u": ("x", [1.0], {"standard_name": "x_wind", "units": "m s-1"})})
    >>> grid_angle(ds, "u", angle=90.0)[1]
    'angle of the x axis given by the caller (angle=)'
    """
    var = ds[variable]
    if angle is not None:
        if isinstance(angle, str):
            name = pick(ds, angle, [criteria.ANGLE_OF_X], "angle")
            factor = angle_to_degrees(name, ds[name].attrs.get("units"))
            return _radians(ds[name], factor), f"angle of the x axis from {name!r} (angle=)"
        arr, units = as_input(angle, "angle", "angle")
        factor = angle_to_degrees("angle", units)
        return _radians(arr, factor), "angle of the x axis given by the caller (angle=)"
    hits = [n for n in find_standard(ds, [criteria.ANGLE_OF_X])
            if set(ds[n].dims) <= set(var.dims)]
    if len(hits) == 1:
        name = hits[0]
        factor = angle_to_degrees(name, ds[name].attrs.get("units"))
        how = f"angle of the x axis from {name!r} ({criteria.ANGLE_OF_X})"
        return _radians(ds[name], factor), how
    mapping = var.attrs.get("grid_mapping") or var.encoding.get("grid_mapping")
    if mapping is not None:
        return _from_grid_mapping(ds, var, str(mapping).split(":")[0].strip())
    lat = _geo(ds, var, "latitude")
    lon = _geo(ds, var, "longitude")
    if lat is not None and lon is not None and lat.ndim == 2:
        return _from_latlon(ds, lat, lon, x_dim)
    raise MissingInputError(
        f"cannot tell how the grid of {variable!r} is turned: no angle= given, no variable "
        f"with standard_name {criteria.ANGLE_OF_X}, no grid_mapping, and no two-dimensional "
        "latitude/longitude to measure it from",
        variable=variable, expected=f"{criteria.ANGLE_OF_X}, a grid_mapping or 2-D lat/lon",
        found="none of them",
    )


def _radians(arr: xr.DataArray, to_deg: float) -> xr.DataArray:
    return xr.DataArray(arr.variable, coords=arr.coords) * (to_deg * np.pi / 180.0)


def _geo(ds: xr.Dataset, var: xr.DataArray, axis: str) -> xr.DataArray | None:
    """The true latitude or longitude on ``var``'s dimensions, if the Dataset has one."""
    units = "degrees_north" if axis == "latitude" else "degrees_east"
    for v in {**dict(var.coords), **dict(ds.coords), **dict(ds.data_vars)}.values():
        if (v.attrs.get("standard_name") == axis or v.attrs.get("units") == units) and (
            v.ndim >= 1 and set(v.dims) <= set(var.dims)
        ):
            return v
    return None


def _grid_coordinate(ds: xr.Dataset, var: xr.DataArray, standard_names, axis: str):
    for dim in var.dims:
        if dim in ds.coords:
            c = ds.coords[dim]
            if c.attrs.get("standard_name") in standard_names or c.attrs.get("axis") == axis:
                return c
    raise MissingInputError(
        f"{var.name!r} has a grid_mapping but none of its dimensions {var.dims} has a coordinate "
        f"with standard_name {' or '.join(standard_names)} (or axis={axis!r})",
        variable=str(var.name), expected=" | ".join(standard_names), found=str(var.dims),
    )


def _from_grid_mapping(ds: xr.Dataset, var: xr.DataArray, mapping: str):
    try:
        from pyproj.exceptions import CRSError, ProjError
    except ImportError as exc:
        raise MissingInputError(
            f"{var.name!r} has grid_mapping={mapping!r}: reading it needs pyproj "
            "(pip install 'frameshift[grids]'), or give the angle with angle=",
            variable=str(var.name), expected="pyproj installed", found="not installed",
        ) from exc

    if mapping not in ds.variables:
        raise MissingInputError(
            f"{var.name!r} has grid_mapping={mapping!r}, which names no variable of the Dataset",
            variable=str(var.name), expected="a grid mapping variable", found=mapping,
        )
    attrs = dict(ds[mapping].attrs)
    kind = attrs.get("grid_mapping_name")
    try:
        return _angle_from_crs(ds, var, mapping, attrs)
    except (CRSError, ProjError, KeyError, TypeError, ValueError) as exc:
        if isinstance(exc, UnsupportedInputError | MissingInputError):
            raise
        raise UnsupportedInputError(
            f"grid mapping {mapping!r} ({kind}) could not be used: {exc}",
            variable=mapping, expected="a CF grid mapping pyproj understands", found=str(kind),
        ) from exc


def _angle_from_crs(ds: xr.Dataset, var: xr.DataArray, mapping: str, attrs: dict):
    from pyproj import CRS, Proj, Transformer
    from pyproj.exceptions import CRSError

    kind = attrs.get("grid_mapping_name")
    try:
        crs = CRS.from_cf(attrs)
    except CRSError as exc:
        raise UnsupportedInputError(
            f"grid mapping {mapping!r} ({kind}) could not be read: {exc}",
            variable=mapping, expected="a CF grid mapping pyproj understands", found=str(kind),
        ) from exc
    if kind == "rotated_latitude_longitude":
        rlon = _grid_coordinate(ds, var, ("grid_longitude",), "X")
        rlat = _grid_coordinate(ds, var, ("grid_latitude",), "Y")
        glon, glat = xr.broadcast(rlon.reset_coords(drop=True), rlat.reset_coords(drop=True))
        base = CRS.from_json_dict(crs.to_json_dict()["base_crs"])
        lon, lat = Transformer.from_crs(crs, base, always_xy=True).transform(
            glon.values, glat.values)
        angle = kern.rotated_pole_angle(lat, lon, float(attrs["grid_north_pole_latitude"]),
                                        float(attrs["grid_north_pole_longitude"]))
        how = (f"angle of the x axis from the rotated pole of grid mapping {mapping!r} "
               "(spherical geometry)")
        return _in_order(xr.DataArray(angle, dims=glon.dims, coords=glon.coords), var), how
    if not crs.is_projected:
        raise UnsupportedInputError(
            f"grid mapping {mapping!r} ({kind}) is neither a rotated pole nor a projection",
            variable=mapping, expected="rotated_latitude_longitude or a projection",
            found=str(kind),
        )
    gx = _grid_coordinate(ds, var, ("projection_x_coordinate",), "X")
    gy = _grid_coordinate(ds, var, ("projection_y_coordinate",), "Y")
    to_crs = crs.axis_info[0].unit_conversion_factor
    fx = scale_to(parse_units(str(gx.name), gx.attrs.get("units", "m"), "length"), "m") / to_crs
    fy = scale_to(parse_units(str(gy.name), gy.attrs.get("units", "m"), "length"), "m") / to_crs
    xx, yy = xr.broadcast(gx.reset_coords(drop=True), gy.reset_coords(drop=True))
    lon, lat = Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True).transform(
        xx.values * fx, yy.values * fy)
    factors = Proj(crs).get_factors(lon, lat)
    distortion = np.nanmax(np.abs(factors.angular_distortion))
    if distortion > _CONFORMAL_TOLERANCE:
        raise UnsupportedInputError(
            f"grid mapping {mapping!r} ({kind}) is not conformal (angular distortion up to "
            f"{distortion:.3g} degrees): its x and y axes are not perpendicular on the Earth, "
            f"so one angle cannot turn the components. Give each point's angle with angle= "
            f"or a variable with standard_name {criteria.ANGLE_OF_X} only if the axes are "
            "perpendicular",
            variable=mapping, expected="a conformal projection", found=str(kind),
        )
    angle = -np.deg2rad(factors.meridian_convergence)
    how = f"angle of the x axis from the grid convergence of grid mapping {mapping!r} ({kind})"
    return _in_order(xr.DataArray(angle, dims=xx.dims, coords=xx.coords), var), how


def _in_order(angle: xr.DataArray, var: xr.DataArray) -> xr.DataArray:
    return angle.transpose(*[d for d in var.dims if d in angle.dims])


def _from_latlon(ds: xr.Dataset, lat: xr.DataArray, lon: xr.DataArray, x_dim: str | None):
    if x_dim is None:
        axis_x = [d for d in lat.dims if d in ds.coords and ds.coords[d].attrs.get("axis") == "X"]
        x_dim = axis_x[0] if axis_x else lat.dims[-1]
        how_x = (f"x along dimension {x_dim!r}" + (" (axis=X)" if axis_x else
                 " (the last dimension of the latitude, as CF orders T, Z, Y, X)"))
    else:
        if x_dim not in lat.dims:
            raise UnsupportedInputError(
                f"x_dim={x_dim!r} is not a dimension of the latitude {lat.name!r} {lat.dims}",
                variable="x_dim", expected=" | ".join(map(str, lat.dims)), found=x_dim,
            )
        how_x = f"x along dimension {x_dim!r} (x_dim=)"
    y_dim = next(d for d in lat.dims if d != x_dim)
    lat2 = xr.DataArray(lat.variable).transpose(y_dim, x_dim)
    lon2 = xr.DataArray(lon.variable).transpose(y_dim, x_dim)
    if lat2.chunks is not None:
        lat2 = lat2.chunk({x_dim: -1})
        lon2 = lon2.chunk({x_dim: -1})
    angle = apply_kernel(_bearing_of_x, lat2, lon2, input_core_dims=((x_dim,), (x_dim,)),
                         output_core_dims=((x_dim,),))
    how = (f"angle of the x axis from the grid's latitude {lat.name!r} and longitude "
           f"{lon.name!r} by centred differences of great-circle bearings; {how_x}")
    return angle.transpose(*lat.dims), how


def _bearing_of_x(lat_deg, lon_deg):
    """Anticlockwise angle from east of the grid line along the last axis (rad)."""
    phi = np.deg2rad(lat_deg)
    lam = np.deg2rad(lon_deg)

    def bearing(p1, l1, p2, l2):  # initial great-circle bearing, clockwise from north
        dl = l2 - l1
        return np.arctan2(np.sin(dl) * np.cos(p2),
                          np.cos(p1) * np.sin(p2) - np.sin(p1) * np.cos(p2) * np.cos(dl))

    n = phi.shape[-1]
    if n < 2:
        raise UnsupportedInputError(
            "a curvilinear grid needs at least two points along x to measure its angle",
            variable="x_dim", expected=">= 2 points", found=str(n),
        )
    fwd = bearing(phi[..., :-1], lam[..., :-1], phi[..., 1:], lam[..., 1:])  # i -> i+1 at i
    back = bearing(phi[..., 1:], lam[..., 1:], phi[..., :-1], lam[..., :-1]) + np.pi  # at i+1
    s = np.zeros(phi.shape)
    c = np.zeros(phi.shape)
    s[..., :-1] += np.sin(fwd)
    c[..., :-1] += np.cos(fwd)
    s[..., 1:] += np.sin(back)
    c[..., 1:] += np.cos(back)
    return np.pi / 2 - np.arctan2(s, c)


def _family_of_grid(sn: str | None) -> tuple[str, int] | None:
    for fam, (xs, ys) in criteria.GRID_COMPONENTS.items():
        if sn in xs:
            return fam, 0
        if sn in ys:
            return fam, 1
    return None


def _check_same_points(ds: xr.Dataset, a: str, b: str) -> None:
    if ds[a].dims == ds[b].dims and all(ds[a].sizes[d] == ds[b].sizes[d] for d in ds[a].dims):
        return
    only_a = [d for d in ds[a].dims if d not in ds[b].dims]
    only_b = [d for d in ds[b].dims if d not in ds[a].dims]
    hint = ""
    if only_a and only_b:
        hint = (f" For example, average each staggered component over its two neighbours, "
                f"ds[{a!r}].rolling({only_a[0]}=2).mean().isel({only_a[0]}=slice(1, None)), "
                f"likewise {b!r} along {only_b[0]!r}, rename both to the cell-centre "
                "dimensions, and pass the result")
    raise UnsupportedInputError(
        f"{a!r} {ds[a].dims} and {b!r} {ds[b].dims} are not on the same points (a staggered "
        "grid, with components on u- and v-points?). Bring them to common points first, "
        "e.g. the cell centres by averaging neighbours." + hint,
        variable=a, expected="components on the same dimensions",
        found=f"{ds[a].dims} and {ds[b].dims}",
    )


def _keep_grid_attrs(var: xr.DataArray) -> dict:
    return {k: var.attrs[k] for k in ("grid_mapping", "coordinates", "cell_methods")
            if k in var.attrs}


def _rotate(ds, first, second, angle, *, sign, names_out, family, how, operation, keep_inputs,
            grid_to_earth_: bool):
    unit = speed_unit(first, ds[first].attrs.get("units"))
    factor = factor_between(speed_unit(second, ds[second].attrs.get("units")), unit)
    second_var = ds[second].variable if factor == 1.0 else ds[second].variable * factor
    a, b = apply_kernel(
        _turn, xr.DataArray(ds[first].variable), xr.DataArray(second_var),
        xr.DataArray(angle.variable), output_core_dims=((), ()), kwargs={"sign": sign},
    )
    coords = {c: v for c, v in ds[first].coords.items()}
    coords.update({c: v for c, v in angle.coords.items() if c not in coords})
    outputs = {}
    if grid_to_earth_:
        labels = (("eastward", criteria.EARTH_COMPONENTS[family][0]),
                  ("northward", criteria.EARTH_COMPONENTS[family][1]))
    else:
        labels = (("x", criteria.GRID_COMPONENTS[family][0][0]),
                  ("y", criteria.GRID_COMPONENTS[family][1][0]))
    for (comp, sn), arr, src in zip(labels, (a, b), (first, second), strict=True):
        attrs = {"standard_name": sn,
                 "long_name": f"{comp} {_LABEL[family]}" if grid_to_earth_
                 else f"{_LABEL[family]} along the grid's {comp} axis",
                 "units": udunits_string(unit), "velocity_component": comp,
                 "comment": f"turned from {first!r} and {second!r}; {how}",
                 "assumptions": "the grid's x and y axes are perpendicular on the Earth",
                 **_keep_grid_attrs(ds[src])}
        outputs[names_out[comp]] = arr.assign_coords(
            {c: v for c, v in coords.items() if set(v.dims) <= set(arr.dims)}
        ).assign_attrs(attrs)
    return assemble(ds, outputs, inputs=[first, second], keep_inputs=keep_inputs,
                    operation=operation)


def _turn(first, second, angle, *, sign):
    return kern.rotate_components(first, second, sign * angle)


def _pairs(ds, first, second, table_index, roles):
    """(family, first name, second name) of the component pair to turn."""
    if first is not None or second is not None:
        names0 = [n for fam in criteria.GRID_COMPONENTS for n in _sn(fam, table_index, 0)]
        names1 = [n for fam in criteria.GRID_COMPONENTS for n in _sn(fam, table_index, 1)]
        a = pick(ds, first, names0, roles[0])
        b = pick(ds, second, names1, roles[1])
        fams = {_fam_of(ds[n].attrs.get("standard_name"), table_index) for n in (a, b)} - {None}
        if len(fams) != 1:
            raise MissingInputError(
                f"cannot tell whether {a!r} and {b!r} are wind or sea water velocity from their "
                "standard names",
                variable=a, expected="standard names of one family", found=str(sorted(fams)),
            )
        return [(fams.pop(), a, b)]
    found = []
    for fam in criteria.GRID_COMPONENTS:
        a = find_standard(ds, _sn(fam, table_index, 0))
        b = find_standard(ds, _sn(fam, table_index, 1))
        if a or b:
            found.append((fam, pick(ds, None, _sn(fam, table_index, 0), roles[0]),
                          pick(ds, None, _sn(fam, table_index, 1), roles[1])))
    if not found:
        looked = ", ".join(n for fam in criteria.GRID_COMPONENTS for i in (0, 1)
                           for n in _sn(fam, table_index, i))
        raise MissingInputError(
            f"no component pair found: looked for standard names {looked}; name them with "
            f"{roles[0]}= and {roles[1]}=",
            variable=roles[0], expected=looked, found="none",
        )
    return found


def _sn(fam: str, table_index: int, i: int) -> tuple[str, ...]:
    if table_index == 0:
        return criteria.GRID_COMPONENTS[fam][i]
    return (criteria.EARTH_COMPONENTS[fam][i],)


def _fam_of(sn: str | None, table_index: int) -> str | None:
    for fam in criteria.GRID_COMPONENTS:
        if sn in _sn(fam, table_index, 0) or sn in _sn(fam, table_index, 1):
            return fam
    return None


def grid_to_earth(
    ds: xr.Dataset,
    *,
    x: str | None = None,
    y: str | None = None,
    angle: object = None,
    x_dim: str | None = None,
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """Turn grid-relative components to eastward and northward components.

    Parameters
    ----------
    ds : xarray.Dataset
    x, y : str, optional
        The components along the grid's x and y axes; by default found by
        standard name (``x_wind``/``y_wind``, ``sea_water_x_velocity``/``sea_water_y_velocity``).
    angle : str, DataArray, Quantity or number, optional
        Angle of the x axis anticlockwise from east (a number is in degrees);
        by default found as described in :mod:`frameshift.instruments.grid`.
    x_dim : str, optional
        The dimension along the grid's x axis, for a curvilinear grid whose
        coordinates do not say it (``axis="X"``); default the last dimension.
    names : mapping, optional
        ``{"eastward": ..., "northward": ...}`` output names (default the CF
        standard names).
    keep_inputs : bool
        Keep the grid-relative components (default: replaced).

    Returns
    -------
    xarray.Dataset
        ``ds`` with ``eastward_wind``/``northward_wind`` (or the sea-water
        names) in the x component's units; ``grid_mapping`` and ``coordinates``
        attributes are kept; ``comment`` says where the angle came from.
        Components on different points (a staggered grid) are refused with
        a message saying how to bring them together.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"u": ((), 1.0, {"standard_name": "x_wind", "units": "m s-1"}),
    ...                  "v": ((), 0.0, {"standard_name": "y_wind", "units": "m s-1"})})
    >>> round(float(grid_to_earth(ds, angle=90.0)["northward_wind"]), 12)
    1.0
    """
    ds = check_dataset(ds)
    outputs = ds
    for fam, a, b in _pairs(ds, x, y, 0, ("x", "y")):
        _check_same_points(ds, a, b)
        ang, how = grid_angle(ds, a, angle=angle, x_dim=x_dim)
        east_sn, north_sn = criteria.EARTH_COMPONENTS[fam][:2]
        out = output_names({"eastward": east_sn, "northward": north_sn}, names)
        outputs = _rotate(outputs, a, b, ang, sign=1.0, names_out=out, family=fam, how=how,
                          operation=f"grid_to_earth ({a} + {b} -> eastward/northward; {how})",
                          keep_inputs=keep_inputs, grid_to_earth_=True)
    return outputs


def earth_to_grid(
    ds: xr.Dataset,
    *,
    eastward: str | None = None,
    northward: str | None = None,
    angle: object = None,
    x_dim: str | None = None,
    names: Mapping[str, str] | None = None,
    keep_inputs: bool = False,
) -> xr.Dataset:
    """Turn eastward and northward components to the grid's x and y axes.

    The inverse of :func:`grid_to_earth`, with the same ways of finding the
    angle; outputs are named ``x_wind``/``y_wind`` or
    ``sea_water_x_velocity``/``sea_water_y_velocity`` unless ``names=``
    (keys ``"x"`` and ``"y"``) says otherwise.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"u": ((), 0.0, {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...                  "v": ((), 1.0, {"standard_name": "northward_wind", "units": "m s-1"})})
    >>> round(float(earth_to_grid(ds, angle=90.0)["x_wind"]), 12)
    1.0
    """
    ds = check_dataset(ds)
    outputs = ds
    for fam, a, b in _pairs(ds, eastward, northward, 1, ("eastward", "northward")):
        _check_same_points(ds, a, b)
        ang, how = grid_angle(ds, a, angle=angle, x_dim=x_dim)
        xs, ys = criteria.GRID_COMPONENTS[fam]
        out = output_names({"x": xs[0], "y": ys[0]}, names)
        outputs = _rotate(outputs, a, b, ang, sign=-1.0, names_out=out, family=fam, how=how,
                          operation=f"earth_to_grid ({a} + {b} -> grid x/y; {how})",
                          keep_inputs=keep_inputs, grid_to_earth_=False)
    return outputs
