"""``frameshift earth``: every step a file needs to reach Earth-relative east/north/up.

:func:`to_earth` chains the instrument conversions in the order the
measurements were made in: magnetic bearings to true, the ship's anemometer
to true wind, profiler currents on the ship's axes to east/north/up,
grid-relative components to east/north, and speed with direction to
components. Each step runs only where the file (or an option) calls for it.
The command line reaches it through :func:`earth_operation` and the batch
runner, with the same file safety as ``frameshift convert``.
"""

from __future__ import annotations

import argparse
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

import xarray as xr

from frameshift.errors import ConventionError, MissingInputError
from frameshift.instruments import criteria
from frameshift.instruments.common import check_dataset, find_standard
from frameshift.instruments.grid import grid_to_earth
from frameshift.instruments.magnetic import magnetic_to_true
from frameshift.instruments.platform import platform_to_earth, true_wind
from frameshift.instruments.polar import from_speed_direction

if TYPE_CHECKING:
    from frameshift.batch import Operation

__all__ = ["EPILOG", "add_arguments", "earth_first", "earth_operation", "operation_from_args",
           "parse_pairs", "then_operation", "to_earth"]

EPILOG = """\
examples:
  frameshift earth station/ --out earth/
      wind_speed + wind_from_direction (and sea_water_speed + ..._direction)
      -> eastward/northward components; x_wind/y_wind on rotated-pole,
      projected or curvilinear grids -> eastward/northward
  frameshift earth mooring.nc --out earth/ --declination model
      components and bearings marked north_reference="magnetic" -> true north,
      declination from IGRF-14 at each record's place and day
  frameshift earth ship.nc --out earth/ --relative-wind direction=RELWD,speed=RELWS
      ship's anemometer -> true wind (Smith, Bourassa and Sharp 1999)
  frameshift earth adcp.nc --out earth/ --platform forward=VF,starboard=VS,up=VU
      profiler currents on the ship's axes -> east/north/up over ground

Every output is ready for 'frameshift convert' and 'frameshift terms'."""


def parse_pairs(text: str, keys: Sequence[str], option: str) -> dict[str, str]:
    """Read ``key=NAME,key=NAME`` (keys from ``keys``) into a mapping.

    Examples
    --------
    >>> parse_pairs("direction=rd,speed=rs", ("direction", "speed"), "--relative-wind")
    {'direction': 'rd', 'speed': 'rs'}
    """
    mapping: dict[str, str] = {}
    for part in filter(None, (p.strip() for p in text.split(","))):
        key, sep, name = part.partition("=")
        if not sep or key.strip() not in keys or not name.strip():
            raise ConventionError(
                f"{option} {text!r}: each item must be KEY=VARIABLE with KEY one of "
                f"{', '.join(keys)}; found {part!r}",
                variable=option.lstrip("-"), expected=",".join(f"{k}=NAME" for k in keys),
                found=text,
            )
        mapping[key.strip()] = name.strip()
    return mapping


def _number_or_name(value: object) -> object:
    if isinstance(value, str):
        try:
            return float(value)
        except ValueError:
            return value
    return value


def to_earth(
    ds: xr.Dataset,
    *,
    speed: str | None = None,
    direction: str | None = None,
    convention: str | None = None,
    declination: object = None,
    magnetic: Sequence[str] | None = None,
    relative_wind: Mapping[str, str] | None = None,
    zero_reference: object = 0.0,
    platform: Mapping[str, str] | None = None,
    bottom_track: Mapping[str, str] | None = None,
    x_dim: str | None = None,
) -> xr.Dataset:
    """Apply every instrument conversion ``ds`` calls for; refuse a file that needs none.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"ws": ((), 2.0, {"standard_name": "wind_speed", "units": "m s-1"}),
    ...                  "wd": ((), 0.0, {"standard_name": "wind_from_direction",
    ...                                   "units": "degree"})})
    >>> float(to_earth(ds)["northward_wind"])
    -2.0
    """
    ds = check_dataset(ds)
    done = []
    if declination is not None:
        components, directions = None, None
        if magnetic:
            directions = [n for n in magnetic if n in ds.variables and ds[n].attrs.get(
                "standard_name") in criteria.DIRECTION_CONVENTIONS]
            rest = [n for n in magnetic if n not in directions]
            components = tuple(rest) if rest else None
        ds = magnetic_to_true(ds, declination=_number_or_name(declination),
                              components=components, directions=directions or None)
        done.append("magnetic")
    if relative_wind is not None:
        ds = true_wind(ds, relative_direction=relative_wind.get("direction"),
                       relative_speed=relative_wind.get("speed"),
                       zero_reference=_number_or_name(zero_reference))
        done.append("true wind")
    if platform is not None:
        ds = platform_to_earth(ds, velocity=platform, bottom_velocity=bottom_track)
        done.append("platform")
    grid_names = [n for xs, ys in criteria.GRID_COMPONENTS.values() for n in (*xs, *ys)]
    if find_standard(ds, grid_names):
        ds = grid_to_earth(ds, x_dim=x_dim)
        done.append("grid")
    if speed is not None or direction is not None:
        ds = from_speed_direction(ds, speed=speed, direction=direction, convention=convention)
        done.append("speed/direction")
    else:
        for fam, table in criteria.POLAR.items():
            has_polar = find_standard(ds, [table["speed"]]) and find_standard(
                ds, [table["from"], table["to"]])
            has_components = find_standard(ds, [criteria.EARTH_COMPONENTS[fam][0]])
            if has_polar and not has_components:
                names = (find_standard(ds, [table["speed"]])[0],
                         find_standard(ds, [table["from"], table["to"]])[0])
                ds = from_speed_direction(ds, speed=names[0], direction=names[1],
                                          convention=convention)
                done.append("speed/direction")
    if not done:
        raise MissingInputError(
            "nothing to bring to Earth-relative east/north: no speed with direction, no "
            "grid-relative components (x_wind, sea_water_x_velocity, ...), and none of "
            "--declination, --relative-wind, --platform given",
            variable="velocity", expected="an instrument record frameshift earth converts",
            found="none",
        )
    return ds


def then_operation(
    ds: xr.Dataset, *, earth: Mapping[str, object], then: str, settings: Mapping[str, object]
) -> xr.Dataset:
    """:func:`to_earth` with ``earth``, then the registered operation ``then`` with ``settings``.

    What the demo runs on an instrument record before each of its steps.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"ws": ((), 2.0, {"standard_name": "wind_speed", "units": "m s-1"}),
    ...                  "wd": ((), 0.0, {"standard_name": "wind_from_direction",
    ...                                   "units": "degree"})},
    ...                 coords={"lat": ((), 45.0, {"standard_name": "latitude"}),
    ...                         "lon": ((), 5.0, {"standard_name": "longitude"})})
    >>> out = then_operation(ds, earth={}, then="terms", settings={})
    >>> "coriolis_eastward" in out
    True
    """
    from frameshift.batch import OPERATIONS

    return OPERATIONS[then](to_earth(ds, **earth), **settings)


def earth_first(earth: Mapping[str, object], operation: Operation) -> Operation:
    """The batch operation that brings a file to Earth-relative east/north, then runs ``operation``.

    Examples
    --------
    >>> from frameshift import batch
    >>> op = earth_first({"declination": 3.0}, batch.terms_operation())
    >>> op.command, op.settings["then"]
    ('earth_then', 'terms')
    """
    from frameshift.batch import Operation

    return Operation("earth_then", {"earth": dict(earth), "then": operation.command,
                                    "settings": dict(operation.settings)})


def _register() -> None:
    from frameshift.batch import register_operation

    register_operation("earth", to_earth)
    register_operation("earth_then", then_operation)


_register()


def earth_operation(**settings: object) -> Operation:
    """A batch :class:`~frameshift.batch.Operation` that calls :func:`to_earth`.

    Examples
    --------
    >>> earth_operation(declination="model").command
    'earth'
    """
    from frameshift.batch import Operation

    clean = {k: (dict(v) if isinstance(v, Mapping) else list(v) if isinstance(v, tuple) else v)
             for k, v in settings.items() if v is not None}
    return Operation("earth", clean)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """The options of ``frameshift earth`` (inputs, --out and the run options come from cli).

    Examples
    --------
    >>> parser = argparse.ArgumentParser()
    >>> add_arguments(parser)
    >>> parser.parse_args(["--declination", "model"]).declination
    'model'
    """
    parser.add_argument("--speed", default=None, metavar="VARIABLE",
                        help="speed variable (default: found by standard name)")
    parser.add_argument("--direction", default=None, metavar="VARIABLE",
                        help="direction variable (default: found by standard name)")
    parser.add_argument("--convention", choices=("from", "to"), default=None,
                        help="the direction is where the flow comes from or goes to (needed "
                        "only when its standard name does not say)")
    parser.add_argument("--declination", default=None, metavar="DEGREES|VARIABLE|model",
                        help="turn magnetic bearings and components to true north by this "
                        "declination (east positive): degrees, a variable, or 'model' (IGRF-14)")
    parser.add_argument("--magnetic", default=None, metavar="NAME[,NAME...]",
                        help="the variables referred to magnetic north (default: those with "
                        "north_reference='magnetic')")
    parser.add_argument("--relative-wind", default=None, metavar="direction=NAME,speed=NAME",
                        help="the ship anemometer's relative wind: compute the true wind")
    parser.add_argument("--zero-reference", default="0", metavar="DEGREES|VARIABLE",
                        help="the anemometer's zero line, clockwise from the bow (default 0)")
    parser.add_argument("--platform", default=None,
                        metavar="forward=NAME,starboard=NAME[,up=NAME]",
                        help="velocities on the ship's axes: turn by heading/pitch/roll and add "
                        "the ship's velocity over ground")
    parser.add_argument("--bottom-track", default=None,
                        metavar="forward=NAME,starboard=NAME[,up=NAME]",
                        help="with --platform: the bottom's velocity relative to the ship, used "
                        "instead of the navigation")
    parser.add_argument("--x-dim", default=None, metavar="DIM",
                        help="the grid's x dimension on a curvilinear grid (default: axis=X, "
                        "else the last dimension)")


def operation_from_args(args: argparse.Namespace) -> Operation:
    """The batch operation for parsed ``frameshift earth`` arguments.

    Examples
    --------
    >>> parser = argparse.ArgumentParser()
    >>> add_arguments(parser)
    >>> args = parser.parse_args(["--relative-wind", "direction=rd,speed=rs"])
    >>> operation_from_args(args).settings["relative_wind"]
    {'direction': 'rd', 'speed': 'rs'}
    """
    axes = ("forward", "starboard", "up")
    return earth_operation(
        speed=args.speed, direction=args.direction, convention=args.convention,
        declination=args.declination,
        magnetic=[n.strip() for n in args.magnetic.split(",") if n.strip()]
        if args.magnetic else None,
        relative_wind=parse_pairs(args.relative_wind, ("direction", "speed"), "--relative-wind")
        if args.relative_wind else None,
        zero_reference=_number_or_name(args.zero_reference),
        platform=parse_pairs(args.platform, axes, "--platform") if args.platform else None,
        bottom_track=parse_pairs(args.bottom_track, axes, "--bottom-track")
        if args.bottom_track else None,
        x_dim=args.x_dim,
    )
