"""``frameshift momentum``: the angular-momentum series of archives, through the batch runner.

The command line and :mod:`frameshift.batch` know the diagnostic as an
:class:`~frameshift.batch.Operation` named ``"momentum"``; this module makes
that operation, applies it, and adds the subcommand to the parser. The rotary
spectrum is registered as ``"rotary_spectrum"`` too, so that a script (and
``frameshift demo``) can write it file by file with the runner's safe outputs;
it has no subcommand of its own.
"""

from __future__ import annotations

import argparse
from collections.abc import Callable, Mapping

import xarray as xr

from frameshift.batch import Operation, register_operation
from frameshift.errors import ConventionError, check_choice

__all__ = ["EPILOG", "add_parser", "apply_momentum", "momentum_operation", "operation_from_args",
           "spectrum_operation"]

EPILOG = """\
examples:
  frameshift momentum winds_plev/ --out aam/ --surface-pressure ps
      global axial angular momentum series (relative, frame, absolute; kg m2 s-1)
      of every file, mass from pressure thickness cut at the surface pressure
  frameshift momentum winds_plev/ --out aam/ --surface-pressure ps --excitation
      also the excitation functions chi1, chi2, chi3 and the length-of-day change (ms)
  frameshift momentum 'year_*.nc' --out aam/ --combine --over latitude --workers 2
      one output per latitude band for the combined files, on a local cluster
  frameshift momentum currents.nc --out aam/ --density rho
      an ocean on depth levels, mass from density x layer thickness"""


def momentum_operation(
    *,
    over: str = "global",
    surface_pressure: str | float | None = None,
    density: str | float | None = None,
    vertical: str | None = None,
    velocity: Mapping[str, str] | None = None,
    excitation: bool = False,
    constants: str = "barnes1983",
    frame: str | None = None,
) -> Operation:
    """An :class:`~frameshift.batch.Operation` computing integrated angular momentum.

    ``frame`` names the body (:func:`frameshift.frames.named.frame_from_name`;
    default Earth). The excitation of Earth rotation is Earth's alone.

    Examples
    --------
    >>> momentum_operation(surface_pressure="ps").settings["over"]
    'global'
    """
    check_choice("over", over, ("global", "latitude", "column"))
    check_choice("constants", constants, ("barnes1983", "eubanks1993"))
    if excitation and over != "global":
        raise ConventionError(
            "--excitation needs the global integrals (--over global)",
            variable="over", expected="global with --excitation", found=over,
        )
    if excitation and frame is not None and frame.strip().lower() not in _EARTHS:
        raise ConventionError(
            f"--excitation is the excitation of Earth rotation; --frame {frame} is another "
            "body: leave out --excitation (the angular momentum is written for any body)",
            variable="frame", expected=" or ".join(_EARTHS), found=frame,
        )
    settings = {"over": over, "surface_pressure": surface_pressure, "density": density,
                "vertical": vertical, "velocity": dict(velocity) if velocity else None,
                "excitation": bool(excitation), "constants": constants}
    if frame is not None:  # recorded only when given: earlier manifests stay current
        settings["frame"] = frame
    return Operation("momentum", settings)


_EARTHS = ("earth", "earth_sphere")


def apply_momentum(ds: xr.Dataset, settings: Mapping[str, object]) -> xr.Dataset:
    """Run the ``momentum`` operation's settings on ``ds`` (lazily for Dask input)."""
    from frameshift.diagnostics.angular_momentum import excitation, integrate_angular_momentum

    s = dict(settings)
    common = {"surface_pressure": s["surface_pressure"], "density": s["density"],
              "vertical": s["vertical"], "velocity": s["velocity"]}
    if s.get("frame") is not None:
        from frameshift.frames.named import frame_from_name

        common["frame"] = frame_from_name(s["frame"], ds)
    if s["excitation"]:  # one pass over the data for the integrals and the excitation
        return excitation(ds, constants=s["constants"], include_integrals=True, **common)
    return integrate_angular_momentum(ds, over=s["over"], **common)


def _run(ds: xr.Dataset, **settings) -> xr.Dataset:
    return apply_momentum(ds, settings)


register_operation("momentum", _run)


def spectrum_operation(
    *,
    segment: int | str | None = None,
    band: tuple[float, float] = (0.9, 1.1),
    gaps: str = "refuse",
    velocity: Mapping[str, str] | None = None,
) -> Operation:
    """An :class:`~frameshift.batch.Operation` writing :func:`~frameshift.rotary_spectrum`.

    The settings are those of :func:`frameshift.rotary_spectrum` (``segment``
    as a number of samples or a duration text such as ``"4D"``), kept in the
    forms a manifest stores, so an up-to-date output is recognised.

    Examples
    --------
    >>> op = spectrum_operation(segment="4D")
    >>> op.command, op.settings["segment"], op.settings["band"]
    ('rotary_spectrum', '4D', [0.9, 1.1])
    """
    check_choice("gaps", gaps, ("refuse", "split"))
    if segment is not None and not isinstance(segment, int | str):
        raise ConventionError(
            f"segment= must be a number of samples or a duration text such as '4D'; "
            f"found {segment!r}",
            variable="segment", expected="int or duration text", found=repr(segment),
        )
    from frameshift.diagnostics.rotary import check_band

    low, high = check_band(band)
    settings = {"segment": segment, "band": [low, high], "gaps": gaps,
                "velocity": dict(velocity) if velocity else None}
    return Operation("rotary_spectrum", settings)


def _spectrum(ds: xr.Dataset, *, band: list[float], **settings) -> xr.Dataset:
    from frameshift.diagnostics.rotary import rotary_spectrum

    return rotary_spectrum(ds, band=(band[0], band[1]), **settings)


register_operation("rotary_spectrum", _spectrum)


def _number_or_name(text: str | None) -> float | str | None:
    if text is None:
        return None
    try:
        return float(text)
    except ValueError:
        return text


def add_parser(sub: argparse._SubParsersAction, common: Callable) -> None:
    """Add the ``momentum`` subcommand; ``common`` adds the options every writing command has."""
    from frameshift.cli import frame_option, parse_velocity

    parser = sub.add_parser(
        "momentum", help="write integrated axial angular momentum (kg m2 s-1)",
        description="Integrate the axial angular momentum of Earth-relative winds or currents "
        "on latitude-longitude grids over the whole grid (a series over time), latitude bands "
        "or columns, and optionally the excitation of Earth rotation and the length-of-day "
        "change.", epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    common(parser)
    parser.add_argument("--over", choices=("global", "latitude", "column"), default="global",
                        help="sum over the whole grid, per latitude band, or per column "
                        "(default global)")
    parser.add_argument("--surface-pressure", default=None, metavar="VARIABLE|PA",
                        help="surface pressure: the name of a variable or a number in Pa "
                        "(pressure levels below it weigh nothing; a single level is the column)")
    parser.add_argument("--density", default=None, metavar="VARIABLE|KG_M3",
                        help="density for height or depth levels: a variable or kg m-3")
    parser.add_argument("--vertical", default=None, metavar="VARIABLE",
                        help="the vertical coordinate (default: found by its CF attributes)")
    parser.add_argument("--excitation", action="store_true",
                        help="also write chi1, chi2, chi3 and length_of_day_change (ms)")
    parser.add_argument("--constants", choices=("barnes1983", "eubanks1993"),
                        default="barnes1983",
                        help="transfer factors and moments of inertia of the excitation "
                        "functions (default barnes1983)")
    frame_option(parser)
    parser.add_argument("--velocity", type=parse_velocity, default=None,
                        metavar="eastward=U,northward=V",
                        help="name the velocity components instead of finding them by "
                        "standard_name")


def operation_from_args(args: argparse.Namespace) -> Operation:
    """The operation the parsed ``momentum`` arguments ask for."""
    return momentum_operation(
        over=args.over, surface_pressure=_number_or_name(args.surface_pressure),
        density=_number_or_name(args.density), vertical=args.vertical, velocity=args.velocity,
        excitation=args.excitation, constants=args.constants, frame=args.frame,
    )
