"""Apparent accelerations of a rotating frame, term by term, as labelled CF variables.

In a frame rotating with a planet, on local east/north/up axes that follow a
moving parcel, the rate of change of the velocity components (u, v, w) is

    d(u, v, w)/dt = inertial acceleration + coriolis + centrifugal + euler + curvature

where the inertial acceleration is what forces produce (pressure gradient,
gravitation, friction) and the four other terms come from the frame and the
axes alone. :func:`apparent_accelerations` writes each term and component as
its own variable, with the formula in the attributes; the kernels and their
formulas are in :mod:`frameshift._kernels.accelerations`.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import accelerations as ak
from frameshift.cf import stamp
from frameshift.detect import (
    INERTIAL,
    ROTATING,
    Layout,
    Position,
    VelocitySet,
    find_dataset_axis,
    find_time,
    floor_of,
    height_values,
    mask_poles,
    plain,
    position_values,
    read_layout,
    require_dataset,
    time_instants,
)
from frameshift.detect.latitude_kind import planetographic_view, restore_latitudes
from frameshift.dynamics.planar import planar_accelerations
from frameshift.errors import (
    ConventionError,
    FrameError,
    MissingInputError,
    UnsupportedInputError,
)
from frameshift.frames import EARTH, Ellipsoid, Frame, Instants, Plane, check_frame

__all__ = ["TERMS", "TERM_FORMULAS", "TOTALS", "apparent_accelerations", "coriolis_parameters"]

#: The apparent-acceleration terms, in output order.
TERMS = ak.TERMS
#: The sums on offer: ``"full"`` (``total_*``, every term asked for: what closes the
#: budget of a free body) and ``"without_centrifugal"`` (``total_without_centrifugal_*``,
#: for users who count the centrifugal term in an effective gravity).
TOTALS = ak.TOTALS

_LABELS = {
    "coriolis": "Coriolis",
    "centrifugal": "centrifugal",
    "euler": "Euler",
    "curvature": "curvature (metric)",
}

#: Formula of each term and component, as written into the ``formula`` attribute.
#: Ω: rotation rate; φ: geodetic latitude; (u, v, w): velocity relative to the
#: rotating frame; M, N: meridian and prime-vertical radii; h: height above the
#: ellipsoid; p = (N + h) cos φ; Ω̇: rate of change of Ω on the rotation axis.
TERM_FORMULAS: dict[str, dict[str, str]] = {
    "coriolis": {
        "eastward": "-2 Omega x V: 2 Omega sin(lat) v - 2 Omega cos(lat) w",
        "northward": "-2 Omega x V: -2 Omega sin(lat) u",
        "upward": "-2 Omega x V: 2 Omega cos(lat) u",
    },
    "centrifugal": {
        "eastward": "-Omega x (Omega x r): 0",
        "northward": "-Omega x (Omega x r): -Omega^2 (N + h) cos(lat) sin(lat)",
        "upward": "-Omega x (Omega x r): Omega^2 (N + h) cos(lat)^2",
    },
    "euler": {
        "eastward": "-(dOmega/dt) x r, east component (-dOmega/dt (N + h) cos(lat) on the axis)",
        "northward": "-(dOmega/dt) x r, north component (0 for dOmega/dt on the axis)",
        "upward": "-(dOmega/dt) x r, up component (0 for dOmega/dt on the axis)",
    },
    "curvature": {
        "eastward": "u v tan(lat)/(N + h) - u w/(N + h)",
        "northward": "-u^2 tan(lat)/(N + h) - v w/(M + h)",
        "upward": "u^2/(N + h) + v^2/(M + h)",
    },
}

_TRADITIONAL_FORMULAS = {
    ("coriolis", "eastward"): "-2 Omega x V, traditional: 2 Omega sin(lat) v",
    ("coriolis", "upward"): "0 (traditional approximation)",
    ("curvature", "eastward"): "u v tan(lat)/(N + h) (traditional)",
    ("curvature", "northward"): "-u^2 tan(lat)/(N + h) (traditional)",
    ("curvature", "upward"): "0 (traditional approximation)",
}

_TRADITIONAL_NOTE = (
    "traditional approximation: the 2 Omega cos(lat) Coriolis terms and the curvature "
    "terms in w or in the upward component are left out"
)


def apparent_accelerations(
    ds: xr.Dataset,
    frame: Frame = EARTH,
    *,
    terms: str | Iterable[str] | None = None,
    traditional: bool = False,
    velocity: Mapping[str, str] | list[Mapping[str, str]] | None = None,
    height: object = None,
    include_parameters: bool = False,
    totals: str | Iterable[str] = "full",
    latitude: str | None = None,
    longitude: str | None = None,
    vertical: str | None = None,
    time: str | None = None,
    latitude_kind: str = "planetographic",
) -> xr.Dataset:
    """The accelerations a rotating frame and turning local axes add, term by term.

    For velocities V = (u, v, w) relative to ``frame`` on local east/north/up
    axes, returns the four apparent accelerations, each positive along the
    axis it names, so that d(u, v, w)/dt following the motion equals the
    inertial (force-driven) acceleration plus their sum:

    ``coriolis``: -2 Ω × V = (2Ω sinφ v - 2Ω cosφ w, -2Ω sinφ u, 2Ω cosφ u);
    deflects motion to the right in the northern hemisphere (Ω > 0), and
    pushes eastward motion up (the Eötvös effect).

    ``centrifugal``: -Ω × (Ω × r) = Ω² p (0, -sinφ, cosφ), p = (N + h) cos φ:
    away from the rotation axis (equatorward and up).

    ``euler``: -(dΩ/dt) × r, from ``frame.rotation_vector_rate``; zero for a
    steady rotation (computed all the same). For a change of rate on the axis
    it is (-Ω̇ p, 0, 0).

    ``curvature``: -ω_b × V, where ω_b = (-v/(M+h), u/(N+h), u tanφ/(N+h)) is
    the rate at which the local axes turn as the point moves over the
    ellipsoid: (u v tanφ/(N+h) - u w/(N+h), -u² tanφ/(N+h) - v w/(M+h),
    u²/(N+h) + v²/(M+h)). Singular at the poles (tan φ), where east and
    north are undefined.

    Exact on the ellipsoid: geodetic latitude φ, meridian radius M,
    prime-vertical radius N, height h above the ellipsoid.

    Parameters
    ----------
    ds : xarray.Dataset
        Gridded, station or trajectory data with velocities relative to the
        rotating frame (found as by :func:`frameshift.to_inertial`) and
        latitude; longitude too, though only an off-axis dΩ/dt uses it.
    frame : Frame, default EARTH
        The rotating frame. Its rotation vector must lie on the body's z axis.
    terms : str or iterable of str, optional
        A subset of ``"coriolis"``, ``"centrifugal"``, ``"euler"``,
        ``"curvature"`` (default all four). Totals sum the terms asked for.
    traditional : bool, default False
        The consistent shallow-fluid ("traditional approximation") set, as in
        Phillips (1966), J. Atmos. Sci. 23, 626-628, and White et al. (2005),
        Q. J. R. Meteorol. Soc. 131, 2081-2107 (both cited from memory): the
        Coriolis terms in 2Ω cos φ (-2Ω cosφ w east, 2Ω cosφ u up) and the
        curvature terms in w (-u w/(N+h), -v w/(M+h)) or upward
        (u²/(N+h) + v²/(M+h)) are dropped; the upward components of these
        two terms are then zero. The radii (N + h, M + h) are kept exact,
        and the centrifugal and Euler terms are unchanged.
    velocity : mapping or list of mappings, optional
        ``{"eastward": name, "northward": name, "upward": name}`` (upward optional,
        else 0); a list names several sets. Default: every set found by standard
        name; with several sets each output name gains the set's family (or its
        eastward variable's name) as a suffix: ``coriolis_eastward_wind``.
    height : float, str or DataArray, optional
        Height above the ellipsoid overriding what the Dataset holds.
    include_parameters : bool, default False
        Also return ``coriolis_parameter`` (2Ω sin φ) and
        ``reciprocal_coriolis_parameter`` (2Ω cos φ) on the latitude's dimensions.
    totals : str or iterable of str, default "full"
        Which sums to return: ``"full"`` (``total_<component>``, the sum of
        every term asked for, which closes the momentum budget of a free
        body), ``"without_centrifugal"`` (``total_without_centrifugal_<component>``,
        for users who fold the centrifugal term into an effective gravity and
        would otherwise count it twice), both, or ``()`` for none.
    latitude, longitude, vertical, time : str, optional
        Name coordinates the file does not mark, or resolve a choice it leaves open.
    latitude_kind : {"planetographic", "planetocentric"}
        What the latitudes are on a flattened body (see :func:`frameshift.to_inertial`).

    Returns
    -------
    xarray.Dataset
        Variables ``<term>_<component>`` for each term asked for and the
        sums asked for (by default ``total_eastward``, ``total_northward``,
        ``total_upward``); float64, m s-2,
        on the velocity's dimensions and coordinates. No standard names: the
        CF table (v93) has none for these terms.

    Raises
    ------
    ConventionError
        For an unknown term or a frame that is not a :class:`Planet`.
    MissingInputError
        Without velocities or a latitude, or without time for an unsteady frame.
    FrameError
        If the velocities are relative to the inertial frame.

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": ("lat", [10.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...      "v": ("lat", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
    ...     coords={"lat": ("lat", [45.0], {"units": "degrees_north"}),
    ...             "lon": ((), 0.0, {"units": "degrees_east"})})
    >>> acc = frameshift.apparent_accelerations(ds, terms="coriolis")
    >>> round(float(acc["coriolis_northward"][0]), 9)  # -f u at 45° N
    -0.001031261
    """
    require_dataset(ds)
    if isinstance(getattr(frame, "figure", None), Plane):  # a lab table: terms on x, y, z
        return planar_accelerations(ds, frame, terms=terms, velocity=velocity)
    check_frame(frame, Ellipsoid)
    if latitude_kind != "planetographic":
        view, names = planetographic_view(
            ds, frame, latitude_kind, velocity=velocity, latitude=latitude,
            longitude=longitude, vertical=vertical, time=time, height=height, target=INERTIAL,
        )
        out = apparent_accelerations(
            view, frame, terms=terms, traditional=traditional, velocity=velocity,
            height=height, include_parameters=include_parameters, latitude=latitude,
            longitude=longitude, vertical=vertical, time=time,
        )
        return restore_latitudes(out, ds, names, latitude_kind, frame)
    chosen = _check_terms(terms)
    sums = _check_totals(totals)
    traditional = bool(traditional)
    layout = _layout(ds, velocity, height, latitude, longitude, vertical, time)
    tags = _set_tags(layout)
    variables: dict[str, xr.Variable] = {}
    coords: dict = {}
    parameters: dict = {}
    for vset, tag in zip(layout.sets, tags, strict=True):
        east = ds[vset.eastward]
        omega, found = _one_set(ds, frame, vset, chosen, traditional, tag, sums)
        variables.update(found)
        coords.update({k: v.variable for k, v in east.coords.items()})
        if include_parameters and vset.position.latitude not in parameters:
            parameters[vset.position.latitude] = _parameters(
                ds, vset.position.latitude, frame, omega
            )
    out = xr.Dataset(variables, coords=coords, attrs=dict(ds.attrs))
    several = len(parameters) > 1
    for lat_name, params in parameters.items():
        out = out.assign({(f"{k}_{lat_name}" if several else k): v for k, v in params.items()})
    converted = [list(s.names()) for s in layout.sets]
    listing = converted[0] if len(converted) == 1 else converted
    op = (
        f"apparent_accelerations(terms={list(chosen)}, traditional={traditional}, "
        f"totals={list(sums)}, frame={frame.name!r}) from {listing}"
    )
    return stamp(out, op)


def _set_tags(layout: Layout) -> list[str]:
    """Suffixes of each set's output names: none for one set, else its family or name."""
    if len(layout.sets) == 1:
        return [""]
    families = [s.family for s in layout.sets]
    return [
        "_" + (s.family if families.count(s.family) == 1 else s.eastward) for s in layout.sets
    ]


def _one_set(ds, frame, vset: VelocitySet, chosen, traditional, tag, sums):
    east = ds[vset.eastward]
    dims = tuple(east.dims)
    h = height_values(ds, vset.position, floor=floor_of(frame))
    extra = set(h.dims) - set(dims)
    if extra:
        raise MissingInputError(
            f"the height varies along {sorted(extra)}, which the velocity "
            f"{vset.eastward!r} {dims} does not have",
            variable=vset.eastward,
            expected=f"height on dimensions within {dims}",
            found=str(h.dims),
        )
    omega, rates, lon_needed = _rotation_values(ds, frame, vset.position)
    lat, lon = position_values(ds, vset.position)

    # the velocity first: apply_ufunc orders the work dimensions as its inputs come,
    # so the kernel sees the velocity (and writes its outputs) in memory order
    names = ["u", "v", "lat_deg", "h", "omega", "omega_rate_x", "omega_rate_y", "omega_rate_z"]
    u, v = plain(east), plain(ds[vset.northward])
    if vset.position.kind == "geodetic" and {"coriolis", "curvature"} & set(chosen):
        # east and north are undefined at the poles: what depends on u and v is NaN there
        masked = mask_poles(u, lat, repr(vset.eastward))
        if masked is not u:  # some point at a pole (or a lazy latitude): v too, else no copy
            u, v = masked, v.where(np.abs(lat) != 90.0)
    inputs = [u, v, lat, h, omega]
    inputs += list(rates)
    scales = [vset.component("eastward").to_si, vset.component("northward").to_si, 1.0]
    if vset.upward is not None:
        names.append("w")
        inputs.append(plain(ds[vset.upward]))
        scales[2] = vset.component("upward").to_si
    if lon_needed and "euler" in chosen:
        names.append("lon_deg")
        inputs.append(lon)
    outputs = ak.output_names(chosen, sums)
    results = apply_kernel(
        ak.accelerations_named,
        *inputs,
        output_core_dims=[()] * len(outputs),
        kwargs={
            "names": tuple(names),
            **frame.figure.kernel_geometry(),
            "scale": tuple(scales),
            "terms": chosen,
            "traditional": traditional,
            "totals": sums,
        },
    )
    common = _common_attrs(ds, vset, frame)
    declared = east.attrs.get("coordinates", east.encoding.get("coordinates"))
    variables = {}
    for name, data in zip(outputs, results, strict=True):
        term, comp = name.rsplit("_", 1)
        attrs = _term_attrs(term, comp, chosen, traditional, frame, common)
        data = data.variable  # in the velocity's dimension order, with one transpose
        variables[name + tag] = xr.Variable(dims, data.transpose(*dims).data, attrs=attrs)
        if isinstance(declared, str):  # the terms sit where the velocity sits: say so too
            variables[name + tag].encoding["coordinates"] = declared
    return omega, variables


def coriolis_parameters(ds: xr.Dataset | xr.DataArray, frame: Frame = EARTH) -> xr.Dataset:
    """The Coriolis parameter f = 2Ω sin φ and the reciprocal parameter 2Ω cos φ.

    Parameters
    ----------
    ds : xarray.Dataset or xarray.DataArray
        Holds a latitude (standard name ``latitude`` or units ``degrees_north``);
        a DataArray is taken as the latitude itself if it carries that metadata.
    frame : Frame, default EARTH

    Returns
    -------
    xarray.Dataset
        ``coriolis_parameter`` (CF standard name ``coriolis_parameter``, s-1) and
        ``reciprocal_coriolis_parameter`` (no standard name, s-1) on the
        latitude's dimensions.

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> lat = xr.DataArray([45.0], dims="lat", attrs={"units": "degrees_north"}, name="lat")
    >>> f = frameshift.coriolis_parameters(lat)["coriolis_parameter"]
    >>> round(float(f[0]), 10)  # 2 Ω sin 45°, Ω of WGS 84
    0.0001031261
    """
    check_frame(frame, Ellipsoid)
    if isinstance(ds, xr.DataArray):
        ds = ds.to_dataset(name=ds.name if ds.name is not None else "latitude")
    require_dataset(ds)
    lat_name = find_dataset_axis(ds, "latitude")
    time_name = find_time(ds, lat_name) if not frame.steady else None
    omega, _, _ = _rotation_values(ds, frame, Position("geodetic", time=time_name))
    out = xr.Dataset(_parameters(ds, lat_name, frame, omega), attrs=dict(ds.attrs))
    return stamp(out, f"coriolis_parameters(frame={frame.name!r}) from {lat_name!r}")


# --- helpers ----------------------------------------------------------------------------
def _check_terms(terms: str | Iterable[str] | None) -> tuple[str, ...]:
    if terms is None:
        return TERMS
    asked = (terms,) if isinstance(terms, str) else tuple(terms)
    unknown = [t for t in asked if t not in TERMS]
    if unknown or not asked:
        found = ", ".join(map(repr, unknown)) if unknown else "no terms"
        raise ConventionError(
            f"terms= has unknown or no terms ({found}); valid terms are "
            f"{', '.join(map(repr, TERMS))}",
            variable="terms",
            expected=" | ".join(TERMS),
            found=found,
        )
    return tuple(t for t in TERMS if t in asked)


def _check_totals(totals: str | Iterable[str] | None) -> tuple[str, ...]:
    asked = () if totals is None else (totals,) if isinstance(totals, str) else tuple(totals)
    unknown = [t for t in asked if t not in TOTALS]
    if unknown:
        raise ConventionError(
            f"totals= has unknown sums ({', '.join(map(repr, unknown))}); valid sums are "
            f"{', '.join(map(repr, TOTALS))}",
            variable="totals",
            expected=" | ".join(TOTALS),
            found=", ".join(map(repr, unknown)),
        )
    return tuple(t for t in TOTALS if t in asked)


def _layout(ds: xr.Dataset, velocity, height, latitude, longitude, vertical, time) -> Layout:
    try:
        return read_layout(ds, velocity, latitude=latitude, longitude=longitude,
                           vertical=vertical, time=time, height=height, target=INERTIAL)
    except FrameError as exc:
        raise FrameError(
            f"apparent accelerations need velocities relative to the rotating frame; "
            f"{exc.variable!r} is relative to the inertial frame. Convert it back with "
            "frameshift.to_rotating first",
            variable=exc.variable,
            expected="a velocity relative to the rotating frame",
            found="reference_frame='inertial'",
        ) from exc


def _rotation_values(ds: xr.Dataset, frame: Frame, position: Position):
    """Axial rate Ω and dΩ/dt (three body-axis components) as DataArrays.

    A steady frame is evaluated once (at J2000.0): its values hold at every
    time. An unsteady one needs the Dataset's time, taken as UT1 = UTC.
    """
    if frame.steady:
        t, dims, shape = Instants.from_julian(np.array([2451545.0])), (), ()
    else:
        if position.time is None:
            raise MissingInputError(
                f"frame {frame.name!r} changes its rotation in time; the Dataset needs a "
                "decoded time coordinate (datetime64 or cftime)",
                variable="time",
                expected="a time coordinate",
                found="none",
            )
        time_var, t = time_instants(ds, position)
        dims, shape = time_var.dims, time_var.shape
    vector = np.asarray(frame.rotation_vector(t), dtype=np.float64)
    rate = np.asarray(frame.rotation_vector_rate(t), dtype=np.float64)
    if np.any(vector[..., :2] != 0.0):
        raise UnsupportedInputError(
            f"frame {frame.name!r} has a rotation vector off its z axis (polar motion); "
            "apparent accelerations take the rotation about the figure axis only",
            variable="frame",
            expected="a rotation vector on the body z axis",
            found="non-zero x or y components",
        )

    def as_array(values: np.ndarray) -> xr.DataArray:
        return xr.DataArray(values.reshape(shape) if dims else values[0], dims=dims)

    omega = as_array(vector[..., 2])
    rates = tuple(as_array(rate[..., i]) for i in range(3))
    off_axis = bool(np.any(rate[..., :2] != 0.0))
    return omega, rates, off_axis


def _common_attrs(ds: xr.Dataset, vset: VelocitySet, frame: Frame) -> dict:
    attrs = {
        "units": "m s-2",
        "reference_frame": ROTATING,
        "reference_body": frame.name,
        "velocity_variables": " ".join(vset.names()),
    }
    methods = {ds[n].attrs["cell_methods"] for n in vset.names() if "cell_methods" in ds[n].attrs}
    if len(methods) == 1:
        attrs["cell_methods"] = methods.pop()
    elif methods:
        attrs["comment"] = (
            "the velocity components have different cell_methods "
            f"({'; '.join(sorted(methods))}); none is carried over"
        )
    if vset.notes:
        attrs["assumptions"] = "; ".join(vset.notes)
    return attrs


def _term_attrs(term, comp, chosen, traditional, frame, common) -> dict:
    attrs = dict(common)
    if term.startswith("total"):
        included = [t for t in chosen if term == "total" or t != "centrifugal"]
        if term == "total":
            attrs["long_name"] = (f"{comp} sum of all apparent accelerations asked for "
                                  f"({', '.join(included)})")
        else:
            attrs["long_name"] = (f"{comp} sum of apparent accelerations without the "
                                  f"centrifugal term ({', '.join(included) or 'none'}), for "
                                  "use beside an effective gravity that includes it")
        attrs["acceleration_term"] = term
        attrs["terms_included"] = " ".join(included)
        affected = traditional and ({"coriolis", "curvature"} & set(included))
    else:
        attrs["long_name"] = f"{comp} {_LABELS[term]} acceleration"
        attrs["acceleration_term"] = term
        formula = TERM_FORMULAS[term][comp]
        affected = traditional and term in ("coriolis", "curvature")
        if affected:
            formula = _TRADITIONAL_FORMULAS.get((term, comp), formula)
        attrs["formula"] = formula
        if term == "curvature" and "cell_methods" in attrs:
            note = (
                "computed from the velocities as given; for averaged velocities this is "
                "the term of the averaged flow, not the average of the term"
            )
            attrs["comment"] = f"{attrs['comment']}; {note}" if "comment" in attrs else note
    attrs["acceleration_component"] = comp
    made_of = attrs["terms_included"].split() if term.startswith("total") else [term]
    if {"coriolis", "curvature"} & set(made_of):
        # the setting that changes these values, whichever way it went
        attrs["traditional_approximation"] = "applied" if traditional else "not applied"
    if affected:
        attrs["approximation"] = _TRADITIONAL_NOTE
    return attrs


def _parameters(ds: xr.Dataset, lat_name: str, frame: Frame, omega: xr.DataArray) -> dict:
    lat = ds[lat_name]
    f, reciprocal = apply_kernel(
        ak.coriolis_parameters,
        plain(lat).astype(np.float64),
        omega,
        output_core_dims=[(), ()],
        dims_order=tuple(lat.dims),
    )
    coords = lat.coords
    base = {"units": "s-1", "reference_body": frame.name}
    return {
        "coriolis_parameter": xr.DataArray(
            f.data,
            dims=f.dims,
            coords={k: v for k, v in coords.items() if set(v.dims) <= set(f.dims)},
            attrs={
                "standard_name": "coriolis_parameter",
                "long_name": "Coriolis parameter, 2 Omega sin(latitude)",
                **base,
            },
        ),
        "reciprocal_coriolis_parameter": xr.DataArray(
            reciprocal.data,
            dims=reciprocal.dims,
            coords={k: v for k, v in coords.items() if set(v.dims) <= set(reciprocal.dims)},
            attrs={"long_name": "reciprocal Coriolis parameter, 2 Omega cos(latitude)", **base},
        ),
    }
