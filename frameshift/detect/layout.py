"""Read a Dataset once into a validated layout: every velocity set and where it sits.

:func:`read_layout` is the one door through which operations see a Dataset:
it finds the velocity component sets (units parsed once), and for each set
the position its ``coordinates`` name (latitude/longitude, vertical
with its sign, time). Operations never re-find or re-parse; they take names,
factors and notes from the :class:`Layout`, and values through
:mod:`frameshift.detect.position`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import xarray as xr

from frameshift.detect import criteria
from frameshift.detect.position import (
    Position,
    find_axis,
    find_time,
    find_vertical,
    given_height,
)
from frameshift.detect.velocity import INERTIAL, Component, find_component_sets
from frameshift.errors import InputTypeError, UnsupportedInputError
from frameshift.units import parse_units, scale_to

__all__ = ["Layout", "VelocitySet", "find_layout", "read_layout", "require_dataset"]


@dataclass(frozen=True)
class VelocitySet:
    """One set of velocity components and the position that places it."""

    family: str
    basis: str
    components: tuple[Component, ...]
    position: Position

    def component(self, axis: str) -> Component | None:
        """The component on ``axis`` (``"eastward"``, ``"x"``...), or None."""
        return next((c for c in self.components if c.axis == axis), None)

    def _name(self, axis: str) -> str | None:
        comp = self.component(axis)
        return None if comp is None else comp.name

    @property
    def eastward(self) -> str | None:
        return self._name("eastward")

    @property
    def northward(self) -> str | None:
        return self._name("northward")

    @property
    def upward(self) -> str | None:
        return self._name("upward")

    def names(self) -> tuple[str, ...]:
        """Variable names of the components, in axis order."""
        return tuple(c.name for c in self.components)

    def items(self) -> tuple[tuple[str, str], ...]:
        """``((axis, name), ...)`` of the components given."""
        return tuple((c.axis, c.name) for c in self.components)

    @property
    def notes(self) -> tuple[str, ...]:
        """What was assumed to place and complete this set."""
        third = "upward" if self.basis == "local" else "z"
        missing = () if self.component(third) else (f"no {third} velocity given; taken as 0",)
        return missing + self.position.notes

    @property
    def label(self) -> str:
        """A short name for the set: its family, or its first component's name."""
        return self.family


@dataclass(frozen=True)
class Layout:
    """Everything frameshift found in a Dataset to place and move its velocities.

    ``sets`` holds every velocity set to convert. The attributes ``velocity``,
    ``latitude``, ``longitude``, ``vertical``, ``vertical_sign``, ``time`` and
    ``notes`` describe the first set (the only one, for most files).
    """

    sets: tuple[VelocitySet, ...]

    @property
    def velocity(self) -> VelocitySet:
        return self.sets[0]

    @property
    def latitude(self) -> str | None:
        return self.sets[0].position.latitude

    @property
    def longitude(self) -> str | None:
        return self.sets[0].position.longitude

    @property
    def vertical(self) -> str | None:
        return self.sets[0].position.vertical

    @property
    def vertical_sign(self) -> float:
        return self.sets[0].position.vertical_sign

    @property
    def time(self) -> str | None:
        return self.sets[0].position.time

    @property
    def notes(self) -> tuple[str, ...]:
        return self.sets[0].notes


def require_dataset(ds: object) -> xr.Dataset:
    """``ds`` if it is a Dataset; an :class:`InputTypeError` saying how to make one if not."""
    if not isinstance(ds, xr.Dataset):
        raise InputTypeError(
            f"expected an xarray.Dataset; found {type(ds).__name__}. "
            "Wrap a DataArray with .to_dataset() so its coordinates come along",
            variable="ds",
            expected="xarray.Dataset",
            found=type(ds).__name__,
        )
    return ds


def read_layout(
    ds: xr.Dataset,
    velocity: Mapping[str, str] | list[Mapping[str, str]] | None = None,
    *,
    latitude: str | None = None,
    longitude: str | None = None,
    vertical: str | None = None,
    time: str | None = None,
    height: object = None,
    target: str = INERTIAL,
) -> Layout:
    """Read ``ds`` into a :class:`Layout` of every velocity set not yet in ``target``.

    Parameters
    ----------
    ds : xarray.Dataset
    velocity : mapping or list of mappings, optional
        Name the components of one set or of several (see
        :func:`frameshift.detect.velocity.find_component_sets`).
    latitude, longitude, vertical, time : str, optional
        Name the coordinate to use where a file carries no CF attributes for
        it or leaves a choice open (the velocity's ``coordinates`` attribute
        decides otherwise).
    height : float, str or DataArray, optional
        Height above the figure (m) given instead of the Dataset's vertical.
    target : {"inertial", "rotating"}

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset(
    ...     {"u": ("obs", [1.0], {"standard_name": "eastward_wind", "units": "m s-1",
    ...                           "coordinates": "lat lon"}),
    ...      "v": ("obs", [0.0], {"standard_name": "northward_wind", "units": "m s-1",
    ...                           "coordinates": "lat lon"}),
    ...      "lat": ("obs", [10.0], {"units": "degrees_north"}),
    ...      "lon": ("obs", [20.0], {"units": "degrees_east"})})
    >>> s = read_layout(ds).sets[0]
    >>> s.family, s.position.latitude, s.names()
    ('wind', 'lat', ('u', 'v'))
    """
    require_dataset(ds)
    found = find_component_sets(ds, velocity, target=target)
    sets = []
    for family, basis, components in found:
        first = components[0].name
        position = _geodetic_position(ds, first, latitude, longitude, vertical, time, height)
        for comp in components[1:]:
            _check_shares_position(ds, comp.name, first, position)
        sets.append(VelocitySet(family, basis, components, position))
    return Layout(tuple(sets))


def _vertical_part(ds, first, vertical, height) -> dict:
    if height is not None:
        if isinstance(height, str):
            given_height(ds, height)  # checks the variable and its units now
            note = f"height above the reference surface taken from {height!r} (height=)"
        else:
            given_height(ds, height)
            note = "height above the reference surface given by the caller (height=)"
        return {"height": height, "notes": (note,)}
    name, sign, note = find_vertical(ds, first, vertical)
    if name is None:
        return {"notes": ("no vertical coordinate; height taken as 0 m on the reference surface",)}
    to_si = scale_to(parse_units(name, ds.variables[name].attrs.get("units"), "length"), "m")
    return {
        "vertical": name,
        "vertical_sign": sign,
        "vertical_to_si": to_si,
        "notes": (note,) if note else (),
    }


def _geodetic_position(ds, first, latitude, longitude, vertical, time, height) -> Position:
    lat = find_axis(ds, first, "latitude", latitude)
    lon = find_axis(ds, first, "longitude", longitude)
    vert = _vertical_part(ds, first, vertical, height)
    return Position(
        "geodetic", latitude=lat, longitude=lon, time=find_time(ds, first, time), **vert
    )


def _check_shares_position(ds: xr.Dataset, name: str, first: str, position: Position) -> None:
    """Components of one set must not declare different positions."""
    var = ds.variables[name]
    for axis in ("latitude", "longitude"):
        chosen = getattr(position, axis)
        if chosen is None:
            continue
        text = var.attrs.get("coordinates", var.encoding.get("coordinates"))
        if not isinstance(text, str):
            continue
        own = [
            n
            for n in text.split()
            if n in ds.variables
            and (
                ds.variables[n].attrs.get("standard_name") == axis
                or ds.variables[n].attrs.get("units") in criteria.AXIS_UNITS[axis]
            )
        ]
        if own and chosen not in own:
            raise UnsupportedInputError(
                f"{name!r} sits at {axis} {own} but {first!r} of the same set at {chosen!r}; "
                "components on different points (a staggered grid) must be brought to common "
                "points first",
                variable=name,
                expected=f"{axis} {chosen!r}",
                found=", ".join(own),
            )


def find_layout(
    ds: xr.Dataset,
    velocity: Mapping[str, str] | None = None,
    *,
    height: object = None,
    target: str = INERTIAL,
) -> Layout:
    """A :class:`Layout` holding exactly one velocity set (refusing several).

    For operations that handle one set at a time; :func:`read_layout` gives all.
    """
    layout = read_layout(ds, velocity, height=height, target=target)
    if len(layout.sets) > 1:
        listing = "; ".join(f"{s.family}: {', '.join(s.names())}" for s in layout.sets)
        raise UnsupportedInputError(
            f"the Dataset holds more than one set of velocities ({listing}); pick one with "
            "velocity={'eastward': ..., 'northward': ..., 'upward': ...} (--velocity on the "
            "command line)",
            variable="velocity",
            expected="one set of velocity components",
            found=listing,
        )
    return layout
