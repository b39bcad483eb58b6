"""Magnetic north -> true north, for components and bearings.

The declination D (the angle from true north to magnetic north, positive
east) is given as a number, a per-record variable, or computed from the
International Geomagnetic Reference Field (IGRF) through the optional
``ppigrf`` package (IAGA's pure-Python IGRF; install ``frameshift[magnetic]``).
A bearing gains D; components turn clockwise by D.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Sequence
from importlib import metadata

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import instruments as kern
from frameshift.errors import MissingInputError, UnsupportedInputError
from frameshift.instruments import criteria
from frameshift.instruments.common import (
    angle_to_degrees,
    as_input,
    assemble,
    check_dataset,
    factor_between,
    pick,
    speed_unit,
)

__all__ = ["MODEL", "magnetic_declination", "magnetic_to_true"]

#: the main-field model used for declination="model"
MODEL = "IGRF-14"
# IGRF-14 is defined from 1900.0 and its secular variation reaches 2030.0
# (IAGA, IGRF-14, 2024: https://doi.org/10.5281/zenodo.14012302)
_VALID = (np.datetime64("1900-01-01", "D"), np.datetime64("2030-01-01", "D"))
_EAST = {sn: fam for fam, names in criteria.EARTH_COMPONENTS.items() for sn in names[:1]}
_NORTH = {sn: fam for fam, names in criteria.EARTH_COMPONENTS.items() for sn in names[1:2]}


def _igrf():
    try:
        import ppigrf
    except ImportError as exc:
        raise MissingInputError(
            "declination='model' needs the geomagnetic main-field package ppigrf "
            "(pip install 'frameshift[magnetic]'); or give the declination in degrees",
            variable="declination", expected="ppigrf installed", found="not installed",
        ) from exc
    return ppigrf


def model_version() -> str:
    """``"IGRF-14 (ppigrf X.Y.Z)"``: the model and the package that evaluates it."""
    try:
        version = metadata.version("ppigrf")
    except metadata.PackageNotFoundError:
        version = "not installed"
    return f"{MODEL} (ppigrf {version})"


def _days(time: xr.DataArray) -> xr.DataArray:
    """Whole UTC days since 1970-01-01 of decoded times (datetime64 or real-calendar cftime).

    Dates outside the model's validity are refused; a Dask-backed datetime64
    time stays lazy and is checked when computed.
    """
    if time.chunks is not None and np.issubdtype(time.dtype, np.datetime64):
        out = apply_kernel(_checked_days, xr.DataArray(time.variable),
                           kwargs={"name": str(time.name)})
        return out.assign_attrs(first="(lazy)", last="(lazy)")
    values = time.values
    if np.issubdtype(values.dtype, np.datetime64):
        days = values.astype("datetime64[D]")
    elif values.dtype == object and values.size and hasattr(values.flat[0], "calendar"):
        cal = values.flat[0].calendar
        if cal not in ("standard", "gregorian", "proleptic_gregorian", "julian"):
            raise UnsupportedInputError(
                f"time {time.name!r} is on the model calendar {cal!r}: it has no real dates "
                "to evaluate the geomagnetic field at; give the declination instead",
                variable=str(time.name), expected="a real calendar", found=cal,
            )
        days = np.array([np.datetime64(v.strftime("%Y-%m-%d"), "D") for v in values.flat])
        days = days.reshape(values.shape)
    else:
        raise UnsupportedInputError(
            f"time {time.name!r} is not decoded dates (dtype {values.dtype}); open the file "
            "with decode_times=True",
            variable=str(time.name), expected="datetime64 or cftime", found=str(values.dtype),
        )
    first, last = _check_validity(days, str(time.name))
    out = xr.DataArray(np.where(np.isnat(days), np.nan, days.astype(np.int64).astype(np.float64)),
                       dims=time.dims)
    return out.assign_attrs(first=str(first), last=str(last))


def _check_validity(days: np.ndarray, name: str):
    ok = ~np.isnat(days)
    if not ok.any():
        return None, None
    first, last = days[ok].min(), days[ok].max()
    if first < _VALID[0] or last >= _VALID[1]:
        raise UnsupportedInputError(
            f"time {name!r} runs from {first} to {last}, outside the validity of {MODEL} "
            f"({_VALID[0]} to {_VALID[1]}); give the declination instead",
            variable=name, expected=f"dates from {_VALID[0]} to before {_VALID[1]}",
            found=f"{first} to {last}",
        )
    return first, last


def _checked_days(values, *, name):
    days = values.astype("datetime64[D]")
    _check_validity(days, name)
    out = days.astype(np.int64).astype(np.float64)
    return np.where(np.isnat(days), np.nan, out)


def _declination_kernel(lat, lon, h, day):
    """Declination (degrees east of true north) from IGRF at whole UTC days since 1970."""
    ppigrf = _igrf()
    lat, lon, h, day = np.broadcast_arrays(lat, lon, h, day)
    out = np.full(lat.shape, np.nan)
    ok = np.isfinite(lat) & np.isfinite(lon) & np.isfinite(h) & np.isfinite(day)
    if not ok.any():
        return out
    places = np.unique(np.stack([lat[ok], lon[ok], h[ok]]), axis=1)
    if places.shape[1] == 1:  # one place (a mooring, a station): one call for all its days
        days, where = np.unique(day[ok], return_inverse=True)
        whens = [_dt.datetime(1970, 1, 1) + _dt.timedelta(days=float(d)) for d in days]
        be, bn, _ = ppigrf.igrf(places[1, 0], places[0, 0], places[2, 0] / 1000.0, whens)
        out[ok] = np.rad2deg(np.arctan2(np.ravel(be), np.ravel(bn)))[where]
        return out
    for d in np.unique(day[ok]):
        sel = ok & (day == d)
        when = _dt.datetime(1970, 1, 1) + _dt.timedelta(days=float(d))
        be, bn, _ = ppigrf.igrf(lon[sel], lat[sel], h[sel] / 1000.0, when)
        out[sel] = np.rad2deg(np.arctan2(np.ravel(be), np.ravel(bn)))
    return out


def magnetic_declination(
    ds: xr.Dataset, *, latitude: str | None = None, longitude: str | None = None,
    time: str | None = None, height: float = 0.0,
) -> xr.DataArray:
    """Magnetic declination (degree, east of true north) from IGRF-14 at ``ds``'s places and dates.

    Evaluated once per UTC day of each record (the field drifts by well under
    0.01 degree a day), at ``height`` metres above the WGS 84 ellipsoid.
    Dates outside 1900-2030 (the model's validity) are refused. Needs ppigrf.

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> ds = xr.Dataset(coords={"time": ("time", [np.datetime64("2026-01-15", "ns")]),
    ...     "lat": ((), 24.5, {"standard_name": "latitude"}),
    ...     "lon": ((), 45.0, {"standard_name": "longitude"})})
    >>> round(float(magnetic_declination(ds)[0]), 1)
    3.3
    """
    ds = check_dataset(ds)
    lat = ds[pick(ds, latitude, ["latitude"], "latitude")]
    lon = ds[pick(ds, longitude, ["longitude"], "longitude")]
    time_name = time or next(
        (str(n) for n, v in ds.coords.items() if np.issubdtype(v.dtype, np.datetime64)
         or (v.dtype == object and v.size and hasattr(v.values.flat[0], "calendar"))), None)
    if time_name is None:
        raise MissingInputError(
            "declination='model' needs the dates of the records: no time coordinate found; "
            "name it with time=",
            variable="time", expected="a decoded time coordinate", found="none",
        )
    days = _days(ds[time_name])
    for var, name in ((lat, "latitude"), (lon, "longitude")):
        if var.attrs.get("units") not in (None, "degrees_north", "degree_north", "degrees_east",
                                          "degree_east", "degree", "degrees"):
            raise UnsupportedInputError(
                f"{name} {var.name!r} has units {var.attrs.get('units')!r}; expected degrees",
                variable=str(var.name), expected="degrees", found=str(var.attrs.get("units")),
            )
    decl = apply_kernel(_declination_kernel, xr.DataArray(lat.variable),
                        xr.DataArray(lon.variable), xr.DataArray(float(height)),
                        xr.DataArray(days.variable))
    coords = {c: v for src in (lat, lon, ds[time_name]) for c, v in src.coords.items()
              if set(v.dims) <= set(decl.dims)}
    return decl.assign_coords(coords).assign_attrs({
        "long_name": "magnetic declination (angle from true north to magnetic north, "
                     "positive east)",
        "units": "degree",
        "source": model_version(),
        "comment": f"{MODEL} main field evaluated at 00 UTC of each record's day"
                   + ("" if days.attrs["first"] == "(lazy)" else
                      f" from {days.attrs['first']} to {days.attrs['last']}")
                   + f", {float(height):g} m above the WGS 84 ellipsoid",
    })


def _selected(ds, components, directions):
    """Pairs of (east, north) components and bearings to turn."""
    if components is None and directions is None:
        marked = [str(n) for n, v in ds.data_vars.items()
                  if str(v.attrs.get("north_reference", "")).lower().startswith("magnetic")]
        if not marked:
            raise MissingInputError(
                "which variables are relative to magnetic north? None has "
                "north_reference='magnetic'; name them with components=(east, north) and/or "
                "directions=[...]",
                variable="components", expected="components= or directions=", found="none",
            )
        east = [n for n in marked if ds[n].attrs.get("standard_name") in _EAST]
        north = [n for n in marked if ds[n].attrs.get("standard_name") in _NORTH]
        bearings = [n for n in marked
                    if ds[n].attrs.get("standard_name") in criteria.DIRECTION_CONVENTIONS]
        rest = sorted(set(marked) - set(east) - set(north) - set(bearings))
        if rest or len(east) != len(north) or len(east) > 1:
            raise UnsupportedInputError(
                f"cannot tell what the magnetic variables {marked} are from their standard "
                "names; name them with components=(east, north) and directions=[...]",
                variable=(rest or marked)[0], expected="one component pair and/or bearings",
                found=", ".join(marked),
            )
        pairs = [(east[0], north[0])] if east else []
        return pairs, bearings
    pairs = []
    if components is not None:
        if isinstance(components, str) or len(components) != 2:
            raise UnsupportedInputError(
                f"components= must be (eastward, northward) names; found {components!r}",
                variable="components", expected="(east, north)", found=repr(components),
            )
        pairs = [tuple(pick(ds, c, [], "components") for c in components)]
    bearings = [pick(ds, d, [], "directions") for d in
                ([directions] if isinstance(directions, str) else (directions or []))]
    return pairs, bearings


def magnetic_to_true(
    ds: xr.Dataset,
    *,
    declination: object,
    components: Sequence[str] | None = None,
    directions: Sequence[str] | str | None = None,
    height: float = 0.0,
) -> xr.Dataset:
    """Turn velocities and bearings referred to magnetic north to true north.

    Parameters
    ----------
    ds : xarray.Dataset
    declination : number, str, DataArray, Quantity or "model"
        Angle from true north to magnetic north, positive east: degrees as a
        number, the name of a per-record variable, a DataArray with units, or
        ``"model"`` for IGRF-14 at the records' places and dates (needs ppigrf).
    components : (str, str), optional
        Eastward and northward components on magnetic axes.
    directions : str or list of str, optional
        Bearings clockwise from magnetic north.
        With neither given, the variables with ``north_reference="magnetic"``
        are turned (components told apart by their standard names).
    height : float
        Metres above the ellipsoid for the model (default 0).

    Returns
    -------
    xarray.Dataset
        The same variables, now referred to true north (``north_reference="true"``,
        ``magnetic_declination_source`` naming the declination used), and a
        ``magnetic_declination`` variable with the declination applied.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"u": ((), 0.0, {"units": "m s-1"}), "v": ((), 1.0, {"units": "m s-1"})})
    >>> out = magnetic_to_true(ds, declination=10.0, components=("u", "v"))
    >>> round(float(out["u"]), 4), round(float(out["v"]), 4)   # toward 10 degrees true
    (0.1736, 0.9848)
    """
    ds = check_dataset(ds)
    pairs, bearings = _selected(ds, components, directions)
    if isinstance(declination, str) and declination == "model":
        decl = magnetic_declination(ds, height=height)
        source = decl.attrs["source"] + "; " + decl.attrs["comment"]
    elif isinstance(declination, str):
        name = pick(ds, declination, [], "declination")
        factor = angle_to_degrees(name, ds[name].attrs.get("units"))
        decl = ds[name] * factor if factor != 1.0 else ds[name]
        source = f"variable {name!r}"
    else:
        arr, units = as_input(declination, "declination", "angle")
        factor = angle_to_degrees("declination", units)
        decl = arr * factor if factor != 1.0 else arr
        source = ("given by the caller" if arr.ndim
                  else f"{float(decl):g} degree, given by the caller")
    decl = decl.assign_attrs({"long_name": "magnetic declination (angle from true north to "
                              "magnetic north, positive east)", "units": "degree",
                              "comment": f"declination used: {source}"})
    outputs = {}
    for east, north in pairs:
        unit = speed_unit(east, ds[east].attrs.get("units"))
        factor = factor_between(speed_unit(north, ds[north].attrs.get("units")), unit)
        nvar = ds[north] if factor == 1.0 else ds[north] * factor
        e, n = apply_kernel(_turn_clockwise, xr.DataArray(ds[east].variable),
                            xr.DataArray(nvar.variable), xr.DataArray(decl.variable),
                            output_core_dims=((), ()))
        for name, arr in ((east, e), (north, n)):
            outputs[name] = _relabel(ds, name, arr, source, units=ds[east].attrs["units"])
    for name in bearings:
        factor = angle_to_degrees(name, ds[name].attrs.get("units"))
        val = ds[name].variable if factor == 1.0 else ds[name].variable * factor
        b = apply_kernel(kern.rotate_bearing, xr.DataArray(val), xr.DataArray(decl.variable))
        outputs[name] = _relabel(ds, name, b, source, units="degree")
    if not outputs:
        raise MissingInputError(
            "nothing to turn: no components and no directions selected",
            variable="components", expected="components= or directions=", found="none",
        )
    turned = ", ".join(outputs)
    result = assemble(ds, outputs, inputs=list(outputs), keep_inputs=False,
                      operation=f"magnetic_to_true ({turned}; declination {source})")
    if "magnetic_declination" not in result.variables:
        result["magnetic_declination"] = decl.variable.to_base_variable()
        result["magnetic_declination"].attrs = dict(decl.attrs)
    return result


def _turn_clockwise(east, north, decl_deg):
    return kern.rotate_components(east, north, -np.deg2rad(decl_deg))


def _relabel(ds: xr.Dataset, name: str, arr: xr.DataArray, source: str, *, units: str):
    attrs = {k: v for k, v in ds[name].attrs.items() if k not in ("units", "north_reference")}
    attrs.update({"units": units, "north_reference": "true",
                  "magnetic_declination_source": source})
    coords = {c: v for c, v in ds[name].coords.items() if set(v.dims) <= set(arr.dims)}
    return arr.assign_coords(coords).assign_attrs(attrs)
