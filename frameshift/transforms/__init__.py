"""Rotating <-> inertial velocity transforms on xarray Datasets.

:func:`to_inertial` and :func:`to_rotating` read the Dataset once
(:func:`frameshift.detect.read_layout`) and convert every velocity set it
holds, on local east/north/up axes (:mod:`frameshift.transforms.local`) or
to inertial x/y/z position and velocity
(:mod:`frameshift.transforms.cartesian`).
"""

from __future__ import annotations

from collections.abc import Mapping

import xarray as xr

from frameshift.detect import INERTIAL, ROTATING, read_layout, require_dataset
from frameshift.detect.latitude_kind import (
    LATITUDE_KINDS,
    planetographic_view,
    restore_latitudes,
)
from frameshift.errors import ConventionError, check_choice
from frameshift.frames import EARTH, Ellipsoid, Frame, Plane, check_frame
from frameshift.frames.celestial import CELESTIAL_AXES, resolve_axes
from frameshift.storage import PRECISIONS
from frameshift.transforms.cartesian import from_cartesian, to_cartesian
from frameshift.transforms.local import convert_local
from frameshift.transforms.planar import GRIDS, planar_to_inertial, planar_to_rotating

__all__ = ["BASES", "rounds_as_computed", "to_inertial", "to_rotating"]

BASES = ("local", "cartesian")

def to_inertial(
    ds: xr.Dataset,
    frame: Frame = EARTH,
    *,
    basis: str = "local",
    velocity: Mapping[str, str] | list[Mapping[str, str]] | None = None,
    height: object = None,
    celestial: str = "cirs",
    dut1: float | xr.DataArray = 0.0,
    latitude: str | None = None,
    longitude: str | None = None,
    vertical: str | None = None,
    time: str | None = None,
    grid: str = "same",
    latitude_kind: str = "planetographic",
    precision: str = "float64",
) -> xr.Dataset:
    """Velocities relative to a rotating body, seen from the inertial frame.

    Parameters
    ----------
    ds : xarray.Dataset
        Earth-relative (body-relative) velocities with CF metadata: components
        found by standard name (``eastward_wind``, ``northward_sea_water_velocity``...)
        or named with ``velocity=``; latitude/longitude by standard name or units;
        vertical position from ``height_above_reference_ellipsoid``, ``altitude``,
        ``height``, ``depth`` (positive down) or ``geopotential_height``.
    frame : Frame, default EARTH
        The rotating frame the velocities are relative to.
    basis : {"local", "cartesian"}
        ``"local"``: same Dataset, velocity variables now relative to the
        inertial frame on the same local east/north/up axes at the same instant
        (only the eastward component changes, by Ω (N + h) cos φ).
        ``"cartesian"``: variables ``position`` (m) and ``velocity`` (m s-1)
        on inertial x, y, z axes (dimension ``component``); needs time.
    velocity : mapping or list of mappings, optional
        ``{"eastward": name, "northward": name, "upward": name}``; upward optional
        (taken as 0, and said so in the attributes). A list of such mappings
        names several sets. Default: every set found by standard name (winds
        and currents in one file are all converted).
    height : float, str or DataArray, optional
        Height above the reference ellipsoid (m) overriding what the Dataset holds.
    latitude, longitude, vertical, time : str, optional
        Name the coordinate to use where the file carries no CF attributes for
        it or leaves a choice open; otherwise each velocity's ``coordinates``
        attribute decides.
    celestial : {"cirs", "gcrs", "pole", "icrf"}
        Inertial axes for ``basis="cartesian"``: for the Earth, rotation angle
        only (CIRS, also "pole") or with precession-nutation (GCRS, IAU
        2006/2000A, needs pyerfa); for another body, its own non-rotating
        axes along its pole ("pole", also "cirs") or, for the named bodies
        (MARS, VENUS...), the ICRF through the IAU 2015 pole and prime
        meridian ("icrf", needs pyerfa). ``inertial_axes`` and
        ``inertial_axes_definition`` in the attributes say which.
    dut1 : float or DataArray over time
        UT1 - UTC in seconds, for ``basis="cartesian"``.
    grid : {"same", "fixed"}
        For a frame with a plane figure (a
        :func:`~frameshift.frames.RotatingTable`): ``"same"`` keeps the
        measured points and adds their positions in the target frame as
        coordinates; ``"fixed"`` moves every field to a grid fixed in the
        target frame by linear interpolation (see
        :mod:`frameshift.transforms.planar`). Velocities are then named
        ``velocity={"x": ..., "y": ...}`` (optionally ``"z"``).
    latitude_kind : {"planetographic", "planetocentric"}
        What the latitudes are on a flattened body: planetographic (geodetic,
        the normal to the surface; the default) or planetocentric (from the
        centre). Planetocentric ones are converted to place the points and
        left as given in the result (``latitude_kind`` in its attributes).
    precision : {"float64", "input"}
        For ``basis="local"`` on a body: the float type of the new eastward
        components. The addition is float64 either way; ``"input"`` rounds
        each result once to the precision its input is stored in (float32 for
        float32 and for packed 16-bit input, see
        :func:`frameshift.storage.stored_precision`), in the same pass, so no
        float64 copy of a float32 field is made. What the command line stores
        by default (``--precision input``); other bases refuse ``"input"``.

    Returns
    -------
    xarray.Dataset

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": ("lat", [0.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...      "v": ("lat", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
    ...     coords={"lat": ("lat", [0.0], {"units": "degrees_north"}),
    ...             "lon": ((), 0.0, {"units": "degrees_east"})})
    >>> round(float(frameshift.to_inertial(ds)["u"][0]), 4)
    465.1011
    """
    if _planar(frame, grid, basis, precision):
        return planar_to_inertial(ds, frame, velocity=velocity, grid=grid)
    view, names = planetographic_view(
        require_dataset(ds), frame, latitude_kind, velocity=velocity, latitude=latitude,
        longitude=longitude, vertical=vertical, time=time, height=height, target=INERTIAL,
    )
    out = _convert(view, frame, INERTIAL, basis, velocity, height, celestial, dut1,
                   latitude, longitude, vertical, time, precision)
    return restore_latitudes(out, ds, names, latitude_kind, frame)


def to_rotating(
    ds: xr.Dataset,
    frame: Frame = EARTH,
    *,
    basis: str = "local",
    velocity: Mapping[str, str] | list[Mapping[str, str]] | None = None,
    height: object = None,
    celestial: str = "cirs",
    dut1: float | xr.DataArray = 0.0,
    latitude: str | None = None,
    longitude: str | None = None,
    vertical: str | None = None,
    time: str | None = None,
    grid: str = "same",
    latitude_kind: str = "planetographic",
    precision: str = "float64",
) -> xr.Dataset:
    """Inertial velocities back to velocities relative to the rotating body.

    The inverse of :func:`to_inertial`, with the same keywords. With
    ``basis="local"`` the Dataset holds inertial velocities on local axes
    (as :func:`to_inertial` writes them). With ``basis="cartesian"`` it holds
    ``position`` and ``velocity`` on inertial axes with a time coordinate; the
    result then has data variables ``latitude``, ``longitude`` (degrees),
    ``height`` (m above the ellipsoid) and the east/north/up velocity
    components, named and in the units they had before :func:`to_inertial`
    when it recorded them (else ``eastward_velocity``... in m s-1). A name
    already taken in the Dataset gets the suffix ``_from_position``.

    Examples
    --------
    >>> import xarray as xr, frameshift
    >>> ds = xr.Dataset(
    ...     {"u": ("lat", [10.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
    ...      "v": ("lat", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
    ...     coords={"lat": ("lat", [45.0], {"units": "degrees_north"}),
    ...             "lon": ((), 0.0, {"units": "degrees_east"})})
    >>> back = frameshift.to_rotating(frameshift.to_inertial(ds))
    >>> round(float(back["u"][0]), 9)
    10.0
    """
    if _planar(frame, grid, basis, precision):
        return planar_to_rotating(ds, frame, velocity=velocity, grid=grid)
    if basis == "cartesian":  # positions are inertial: only the latitudes computed change
        view, names = ds, ()
        check_choice("latitude_kind", latitude_kind, LATITUDE_KINDS)
    else:
        view, names = planetographic_view(
            require_dataset(ds), frame, latitude_kind, velocity=velocity, latitude=latitude,
            longitude=longitude, vertical=vertical, time=time, height=height, target=ROTATING,
        )
    out = _convert(view, frame, ROTATING, basis, velocity, height, celestial, dut1,
                   latitude, longitude, vertical, time, precision)
    return restore_latitudes(out, ds, names, latitude_kind, frame)


def rounds_as_computed(frame: Frame, basis: str) -> bool:
    """Whether a conversion takes ``precision="input"``: local axes on a body.

    Examples
    --------
    >>> rounds_as_computed(EARTH, "local"), rounds_as_computed(EARTH, "cartesian")
    (True, False)
    """
    return basis == "local" and not isinstance(getattr(frame, "figure", None), Plane)


def _planar(frame, grid, basis, precision) -> bool:
    """True for a frame with a plane figure (a lab table); ``grid=`` is only for those,
    ``precision="input"`` only for local axes on a body."""
    check_choice("grid", grid, GRIDS)
    check_choice("precision", precision, PRECISIONS)
    plane = isinstance(getattr(frame, "figure", None), Plane)
    if precision != "float64" and not rounds_as_computed(frame, basis):
        where = f"frame {frame.name!r} (a plane)" if plane else f"basis={basis!r}"
        raise ConventionError(
            f"precision={precision!r} rounds the eastward components of basis='local' "
            f"on a body as they are computed; {where} computes float64 only",
            variable="precision",
            expected="'float64' here",
            found=repr(precision),
        )
    if plane:
        if basis != "local":
            raise ConventionError(
                f"frame {frame.name!r} is a plane (a lab table): its fields stay on the "
                "table's or the lab's x/y axes, placed by grid='same' or 'fixed'; "
                f"basis={basis!r} does not apply",
                variable="basis",
                expected="'local' (the default) for a plane frame",
                found=repr(basis),
            )
        return True
    if grid != "same":
        raise ConventionError(
            "grid= places lab fields for a frame with a plane figure (a rotating table); "
            f"frame {getattr(frame, 'name', frame)!r} is not one",
            variable="grid",
            expected="'same' for this frame",
            found=repr(grid),
        )
    return False


def _convert(ds, frame, target, basis, velocity, height, celestial, dut1,
             latitude, longitude, vertical, time, precision) -> xr.Dataset:
    require_dataset(ds)
    check_choice("basis", basis, BASES)
    check_choice("celestial", celestial, CELESTIAL_AXES)
    check_frame(frame, Ellipsoid)
    celestial = resolve_axes(frame, celestial)
    if target == ROTATING and basis == "cartesian":
        given = {"velocity": velocity, "height": height, "latitude": latitude,
                 "longitude": longitude, "vertical": vertical}
        named = [k for k, v in given.items() if v is not None]
        if named:
            raise ConventionError(
                "to_rotating(basis='cartesian') reads the inertial position and velocity; "
                f"{named[0]}= does not apply",
                variable=named[0],
                expected="None",
                found="a value",
            )
        return from_cartesian(ds, frame, celestial, dut1)
    layout = read_layout(ds, velocity, latitude=latitude, longitude=longitude,
                         vertical=vertical, time=time, height=height, target=target)
    if basis == "local":
        return convert_local(ds, frame, target, layout, precision)
    return to_cartesian(ds, frame, layout, celestial, dut1)
