"""Normal (effective) gravity of a rotating reference ellipsoid, and its split.

Effective gravity is gravitation plus the centrifugal acceleration of the
rotating frame, the same centrifugal term :func:`frameshift.apparent_accelerations`
writes. For the reference ellipsoid, "normal gravity" is that effective
gravity for a body whose surface is the ellipsoid and is level (an
equipotential of gravitation plus centrifugal potential): on the ellipsoid
it points along the normal and its magnitude is Somigliana's closed formula
(NIMA TR8350.2 eq. 4-1 for WGS 84).
"""

from __future__ import annotations

import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import accelerations as ak
from frameshift.cf import stamp
from frameshift.detect import (
    find_dataset_axis,
    find_vertical,
    given_height,
    length_values,
    plain,
)
from frameshift.errors import (
    FrameError,
    InputTypeError,
    check_choice,
)
from frameshift.frames import EARTH, Ellipsoid, Frame, check_frame

__all__ = ["GRAVITY_METHODS", "normal_gravity"]

#: ``"exact"``: the closed-form normal field above the ellipsoid;
#: ``"second_order"``: Somigliana plus the TR8350.2 height series.
GRAVITY_METHODS = ("exact", "second_order")

_OUTPUTS = (
    ("normal_gravity", "magnitude of normal gravity (gravitation plus centrifugal acceleration)"),
    ("normal_gravity_northward", "northward component of normal gravity"),
    ("normal_gravity_upward", "upward component of normal gravity"),
    ("gravitation_northward", "northward gravitational acceleration of the normal body"),
    ("gravitation_upward", "upward gravitational acceleration of the normal body"),
    ("centrifugal_northward", "northward centrifugal acceleration"),
    ("centrifugal_upward", "upward centrifugal acceleration"),
)

_MODELS = {
    "exact": (
        "normal gravity field of the level ellipsoid (Somigliana-Pizzetti), closed form "
        "in ellipsoidal coordinates, exact above the ellipsoid"
    ),
    "second_order": (
        "Somigliana's formula (NIMA TR8350.2 eq. 4-1) with the second-order height "
        "series (eq. 4-3); gravity taken along the ellipsoidal normal"
    ),
}


def normal_gravity(
    data: xr.Dataset | xr.DataArray | float,
    frame: Frame = EARTH,
    *,
    height: object = None,
    method: str = "exact",
) -> xr.Dataset:
    """Normal gravity on and above the reference ellipsoid, split into gravitation and centrifugal.

    Parameters
    ----------
    data : xarray.Dataset, xarray.DataArray or float
        Where to evaluate: a Dataset with a latitude (standard name
        ``latitude`` or units ``degrees_north``) and optionally a vertical
        coordinate (found as for the velocity functions: ellipsoidal height,
        altitude, height, depth); a latitude DataArray with that metadata; or a
        number, taken as degrees north.
    frame : Frame, default EARTH
        Needs ``gm``; its ellipsoid and ``rotation_rate`` define the field.
    height : float, str or DataArray, optional
        Height above the ellipsoid (m; a DataArray needs length units; a string
        names a variable of the Dataset). Default: the Dataset's vertical
        coordinate, else 0 m.
    method : {"exact", "second_order"}, default "exact"
        ``"exact"``: gradient of the closed-form normal potential
        U = GM/E arctan(E/u) + ½ ω²a² (q/q0)(sin²β - 1/3) + ½ ω²(u² + E²) cos²β
        in ellipsoidal coordinates (u, β) (Heiskanen & Moritz, Physical Geodesy,
        1967, ch. 2, from memory), projected on local north and up; it includes
        the slight tilt of gravity off the ellipsoidal normal above the
        ellipsoid. ``"second_order"``: γ [1 - (2/a)(1 + f + m - 2f sin²φ) h +
        3h²/a²] (NIMA TR8350.2 eq. 4-3) along the normal; it departs from the
        exact value by about 1e-10 m s-2 per metre of height plus (h/a)³ γ.

    Returns
    -------
    xarray.Dataset
        ``normal_gravity`` (magnitude, positive), ``normal_gravity_northward``,
        ``normal_gravity_upward`` (negative: downward), ``gravitation_northward``,
        ``gravitation_upward`` and ``centrifugal_northward``, ``centrifugal_upward``
        (Ω² p (-sin φ, cos φ), p the distance from the axis): float64, m s-2,
        gravity = gravitation + centrifugal componentwise; east components are
        zero and not written. No standard names (the CF table v93 has none for
        gravity). Negative heights use the same (exterior) field continued
        downward, which inside the body is not the actual gravity.

    Raises
    ------
    FrameError
        If ``frame.gm`` is not set.

    Notes
    -----
    For a sphere (flattening 0) the field is the limit of the same formulas:
    the rotating sphere is then a level surface, which needs a small
    flattening-like term in gravitation, so gravitation is not GM/r² there.

    Examples
    --------
    >>> import frameshift
    >>> g = frameshift.normal_gravity(0.0)
    >>> round(float(g["normal_gravity"]), 10)  # γe of WGS 84, NIMA TR8350.2
    9.7803253359
    """
    check_frame(frame, Ellipsoid)
    check_choice("method", method, GRAVITY_METHODS)
    if frame.gm is None:
        raise FrameError(
            f"normal gravity needs the frame's gm (GM, m3 s-2); frame {frame.name!r} has none",
            variable="gm",
            expected="gm in m3 s-2",
            found="None",
        )
    ds, lat, h, notes = _position(data, height)
    results = apply_kernel(
        ak.normal_gravity_parts,
        lat,
        h,
        output_core_dims=[()] * len(_OUTPUTS),
        kwargs={
            "a": frame.equatorial_radius,
            "f": frame.flattening,
            "gm": float(frame.gm),
            "omega": float(frame.rotation_rate),
            "method": method,
        },
    )
    dims = results[0].dims
    common = {
        "units": "m s-2",
        "reference_body": frame.name,
        "gravity_model": _MODELS[method],
    }
    if notes:
        common["assumptions"] = "; ".join(notes)
    coords = {}
    if ds is not None:
        coords = {k: v for k, v in ds.coords.items() if set(v.dims) <= set(dims)}
    variables = {
        name: xr.Variable(dims, da.data, attrs={"long_name": long_name, **common})
        for (name, long_name), da in zip(_OUTPUTS, results, strict=True)
    }
    attrs = dict(ds.attrs) if ds is not None else {}
    out = xr.Dataset(variables, coords=coords, attrs=attrs)
    return stamp(out, f"normal_gravity(method={method!r}, frame={frame.name!r})")


def _position(data, height) -> tuple[xr.Dataset | None, xr.DataArray, xr.DataArray, list[str]]:
    """Latitude (degrees) and height (m) as DataArrays, with the assumptions made."""
    notes: list[str] = []
    ds = None
    if isinstance(data, xr.Dataset):
        ds = data
    elif isinstance(data, xr.DataArray):
        ds = data.to_dataset(name=data.name if data.name is not None else "latitude")
    if ds is not None:
        lat = plain(ds[find_dataset_axis(ds, "latitude")]).astype("float64")
    else:
        try:
            lat = xr.DataArray(float(data))
        except (TypeError, ValueError) as exc:
            raise InputTypeError(
                "normal_gravity needs a Dataset, a latitude DataArray or a number of degrees "
                f"north; found {type(data).__name__}",
                variable="data",
                expected="Dataset, DataArray or float",
                found=type(data).__name__,
            ) from exc
    if height is None and ds is not None:
        vertical, sign, note = find_vertical(ds, None)
        if vertical is not None:
            if note:
                notes.append(note)
            return ds, lat, length_values(ds[vertical], vertical, sign), notes
        notes.append("no vertical coordinate; height taken as 0 m on the reference ellipsoid")
        return ds, lat, xr.DataArray(0.0), notes
    if height is None:
        return ds, lat, xr.DataArray(0.0), notes
    return ds, lat, given_height(ds, height), notes
