"""The ``frameshift`` command line: a thin layer over :mod:`frameshift.batch`.

Subcommands: ``convert`` (between the Earth-rotating and the inertial
frame), ``terms`` (apparent-acceleration terms), ``earth`` (instrument
records to Earth-relative east/north/up), ``inspect`` (what
frameshift finds in a file and what it would refuse) and ``demo``.
Run ``frameshift SUBCOMMAND --help`` for options and examples.
"""

from __future__ import annotations

import argparse
import shlex
import sys
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from frameshift.errors import ConventionError, FrameshiftError
from frameshift.paths import printable

if TYPE_CHECKING:
    import xarray as xr

    from frameshift.batch import Operation, RunOptions

__all__ = ["build_parser", "describe", "main", "parse_height", "parse_velocity"]

_EPILOG_CONVERT = """\
examples:
  frameshift convert winds.nc --out inertial/
      Earth-relative winds -> inertial frame, same local east/north/up axes
  frameshift convert archive/ --out archive_inertial/ --basis cartesian --celestial gcrs
      every *.nc under archive/ (recursing) -> inertial position and velocity on
      GCRS x/y/z axes; the output tree mirrors the input tree
  frameshift convert inertial/ --out earth/ --to rotating
      back again
  frameshift convert buoy.nc --out out/ --velocity eastward=wspd_u,northward=wspd_v
      name the components when a file holds more than one set
  frameshift convert 'year_*.nc' --out out/ --combine --workers 4 --memory 8GB
      open the files as one dataset along time, on a local cluster of 4 processes

Re-running skips outputs that are up to date (see the .frameshift.json next to
each output); --overwrite redoes them. Exit status 0 if every file succeeded."""

_EPILOG_TERMS = """\
examples:
  frameshift terms winds.nc --out terms/
      every apparent-acceleration term frameshift knows, in m s-2, and their total
  frameshift terms currents/ --out terms/ --terms coriolis,centrifugal --traditional
      selected terms; Coriolis with the traditional approximation"""

_EPILOG_INSPECT = """\
examples:
  frameshift inspect winds.nc
      velocity variables, units, positions, vertical coordinate, time and frame,
      and which conversions would work (and why not)
  frameshift inspect archive/ --json > report.json"""

_EPILOG_DEMO = """\
examples:
  frameshift demo
      convert the bundled invented demo files (local and Cartesian axes), write
      their apparent-acceleration terms and four figures into
      ./frameshift_demo_output, and print a summary table
  frameshift demo --out demo_run --overwrite
      redo every output (by default up-to-date NetCDF outputs are kept)

The figures need the plot extra (pip install 'frameshift[plot]'); without it the
NetCDF outputs are still written. Exit status 0 unless a step failed."""


def parse_velocity(text: str) -> dict[str, str]:
    """Read ``eastward=U,northward=V[,upward=W]`` into a mapping.

    Examples
    --------
    >>> parse_velocity("eastward=U,northward=V")
    {'eastward': 'U', 'northward': 'V'}
    """
    mapping: dict[str, str] = {}
    for part in filter(None, (p.strip() for p in text.split(","))):
        comp, sep, name = part.partition("=")
        if not sep or not comp.strip() or not name.strip():
            raise ConventionError(
                f"--velocity {text!r}: each item must be COMPONENT=VARIABLE, "
                f"e.g. eastward=U,northward=V; found {part!r}",
                variable="velocity",
                expected="eastward=NAME,northward=NAME[,upward=NAME]",
                found=text,
            )
        mapping[comp.strip()] = name.strip()
    return mapping


def _velocity_argument(text: str) -> dict[str, str]:
    try:
        return parse_velocity(text)
    except ConventionError as exc:  # argparse shows this message (exit status 2)
        raise argparse.ArgumentTypeError(str(exc)) from exc


def parse_height(text: str | None) -> float | str | None:
    """A height in metres, or the name of the variable holding it.

    Examples
    --------
    >>> parse_height("10"), parse_height("zg")
    (10.0, 'zg')
    """
    if text is None:
        return None
    try:
        return float(text)
    except ValueError:
        return text


def _common(parser: argparse.ArgumentParser, *, writes: bool = True) -> None:
    from frameshift.io import default_memory

    parser.add_argument("inputs", nargs="+", metavar="INPUT",
                        help="NetCDF files, glob patterns or directories (searched for *.nc)")
    if not writes:
        return
    parser.add_argument("--out", required=True, metavar="DIR",
                        help="output directory; outputs mirror the input tree")
    parser.add_argument("--overwrite", action="store_true",
                        help="redo outputs even when they are up to date")
    parser.add_argument("--fail-fast", action="store_true",
                        help="stop at the first file that fails (default: go on, report all)")
    parser.add_argument("--quiet", action="store_true",
                        help="no progress bars or per-file lines; failures are still reported")
    parser.add_argument("--memory", default=None, metavar="SIZE",
                        help="memory budget for the run, e.g. 2GB or 512MiB; Dask chunks are "
                        f"sized from it (default {default_memory() / 1e9:.1f}GB: 2 GB or half "
                        "the machine's memory, whichever is less)")
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help="start a local Dask cluster of N single-threaded worker processes")
    parser.add_argument("--scheduler", default=None, metavar="ADDRESS",
                        help="use a running Dask distributed scheduler, e.g. tcp://host:8786")
    parser.add_argument("--combine", action="store_true",
                        help="open all inputs together as one dataset along time and write "
                        "one output (--combined-name)")
    parser.add_argument("--combined-name", default="combined.nc", metavar="NAME",
                        help="file name of the --combine output (default combined.nc)")
    parser.add_argument("--checksum", action="store_true",
                        help="record a SHA-256 of each output in its manifest, and on re-runs "
                        "redo any output whose bytes no longer match it (default: trust size "
                        "and modification time)")


def _velocity_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--velocity", type=_velocity_argument, action="append", default=None,
                        metavar="eastward=U,northward=V[,upward=W]",
                        help="name the velocity components instead of finding them by "
                        "standard_name; repeat the option for several sets (default: every "
                        "set found by standard_name)")
    parser.add_argument("--height", default=None, metavar="METRES|VARIABLE",
                        help="height above the reference ellipsoid: a number in m or the "
                        "name of a variable (default: found from the vertical coordinate)")
    _coordinate_options(parser)


def _coordinate_options(parser: argparse.ArgumentParser) -> None:
    for axis, what in (("latitude", "latitude"), ("longitude", "longitude"),
                       ("vertical", "height or depth"), ("time", "time")):
        parser.add_argument(f"--{axis}", default=None, metavar="VARIABLE",
                            help=f"the {what} variable to use where the file does not mark "
                            "it (CF attributes) or leaves a choice open (default: the one "
                            "the velocity's coordinates attribute names)")


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``frameshift`` command.

    Examples
    --------
    >>> build_parser().parse_args(["convert", "a.nc", "--out", "o"]).to
    'inertial'
    """
    from frameshift._version import __version__

    parser = argparse.ArgumentParser(
        prog="frameshift",
        description="Move winds and currents between the Earth-rotating and an inertial "
        "frame, and write the apparent accelerations of the rotating frame, on CF NetCDF files.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="run 'frameshift COMMAND --help' for the options and examples of each command",
    )
    parser.add_argument("--version", action="version", version=f"frameshift {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    fmt = argparse.RawDescriptionHelpFormatter

    conv = sub.add_parser("convert", help="convert velocities between frames",
                          description="Convert the velocities of each input between the "
                          "Earth-rotating frame and the inertial frame.",
                          epilog=_EPILOG_CONVERT, formatter_class=fmt)
    _common(conv)
    conv.add_argument("--to", choices=("inertial", "rotating"), default="inertial",
                      help="frame to convert to (default inertial)")
    conv.add_argument("--basis", choices=("local", "cartesian"), default="local",
                      help="local east/north/up axes, or inertial x/y/z position and velocity "
                      "(default local)")
    conv.add_argument("--celestial", choices=("cirs", "gcrs"), default="cirs",
                      help="inertial axes for --basis cartesian (default cirs)")
    conv.add_argument("--dut1", type=float, default=0.0, metavar="SECONDS",
                      help="UT1 - UTC in seconds for --basis cartesian (default 0)")
    _velocity_options(conv)

    terms = sub.add_parser("terms", help="write apparent-acceleration terms (m s-2)",
                           description="Write the apparent accelerations a rotating frame "
                           "adds (one variable per term and component, and their total).",
                           epilog=_EPILOG_TERMS, formatter_class=fmt)
    _common(terms)
    terms.add_argument("--terms", default=None, metavar="NAME[,NAME...]",
                       help="comma-separated terms to write (default: all)")
    terms.add_argument("--traditional", action="store_true",
                       help="use the traditional approximation (horizontal Coriolis only)")
    terms.add_argument("--include-parameters", action="store_true",
                       help="also write the parameters the terms are made of")
    _velocity_options(terms)

    from frameshift.instruments import command as earth_command

    earth = sub.add_parser("earth", help="bring instrument records to Earth-relative east/north",
                           description="Bring what instruments record (speed and direction, "
                           "grid-relative components, magnetic bearings, a ship's relative wind, "
                           "profiler currents on the ship's axes) to Earth-relative "
                           "east/north/up components with CF standard names.",
                           epilog=earth_command.EPILOG, formatter_class=fmt)
    _common(earth)
    earth_command.add_arguments(earth)

    from frameshift.diagnostics import command as diagnostics_command

    diagnostics_command.add_parser(sub, _common)

    insp = sub.add_parser("inspect", help="show what frameshift finds in files",
                          description="Report the velocity variables, units, positions, "
                          "vertical coordinate, time and frame frameshift detects, and which "
                          "operations it would refuse and why. Reads only metadata.",
                          epilog=_EPILOG_INSPECT, formatter_class=fmt)
    _common(insp, writes=False)
    insp.add_argument("--velocity", type=_velocity_argument, action="append", default=None,
                      metavar="eastward=U,northward=V[,upward=W]",
                      help="name the velocity components instead of finding them")
    insp.add_argument("--json", action="store_true", help="print the report as JSON")

    demo = sub.add_parser("demo", help="run frameshift on the bundled invented demo data",
                          description="Run frameshift on the bundled demo files (invented "
                          "data): convert them to the inertial frame, write their "
                          "apparent-acceleration terms and figures, and print a summary.",
                          epilog=_EPILOG_DEMO, formatter_class=fmt)
    demo.add_argument("--out", default="frameshift_demo_output", metavar="DIR",
                      help="output directory (default frameshift_demo_output)")
    demo.add_argument("--overwrite", action="store_true", help="redo existing outputs")
    demo.add_argument("--quiet", action="store_true", help="print nothing but failures")
    return parser


def _options(args: argparse.Namespace, command: str) -> RunOptions:
    from frameshift.batch import RunOptions
    from frameshift.io import default_memory, parse_memory

    return RunOptions(
        out_dir=Path(args.out),
        overwrite=args.overwrite,
        fail_fast=args.fail_fast,
        quiet=args.quiet,
        memory=default_memory() if args.memory is None else parse_memory(args.memory),
        workers=args.workers,
        scheduler=args.scheduler,
        combine=args.combine,
        combined_name=args.combined_name,
        command=command,
        verify=args.checksum,
    )


def _run_batch(args: argparse.Namespace, command: str) -> int:
    from frameshift import batch

    if args.workers is not None and args.workers < 1:
        raise ConventionError(
            f"--workers must be at least 1; found {args.workers}",
            variable="workers", expected=">= 1", found=str(args.workers),
        )
    if args.command == "earth":
        from frameshift.instruments.command import operation_from_args

        operation = operation_from_args(args)
    elif args.command == "convert":
        operation = batch.convert_operation(
            args.to, basis=args.basis, celestial=args.celestial, velocity=args.velocity,
            height=parse_height(args.height), dut1=args.dut1, **_coordinates(args),
        )
    elif args.command == "momentum":
        from frameshift.diagnostics.command import operation_from_args

        operation = operation_from_args(args)
    else:
        names = [t.strip() for t in args.terms.split(",") if t.strip()] if args.terms else None
        operation = batch.terms_operation(
            names, traditional=args.traditional, velocity=args.velocity,
            height=parse_height(args.height), include_parameters=args.include_parameters,
            **_coordinates(args),
        )
    summary = batch.run(args.inputs, operation, _options(args, command))
    failed = [o for o in summary.outcomes if o.status in ("failed", "interrupted")]
    if not args.quiet or failed:
        print(f"frameshift {args.command}: {summary.totals()}", file=sys.stderr)
    for outcome in failed:
        print(outcome.line(), file=sys.stderr)
    return summary.exit_code


def _coordinates(args: argparse.Namespace) -> dict[str, str]:
    """The --latitude/--longitude/--vertical/--time options that were given."""
    keys = ("latitude", "longitude", "vertical", "time")
    return {k: getattr(args, k) for k in keys if getattr(args, k, None) is not None}


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status.

    Examples
    --------
    >>> main(["--version"])  # doctest: +SKIP
    frameshift 0.1.0
    """
    args_list = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(args_list)
    command = shlex.join(["frameshift", *args_list])
    try:
        if args.command in ("convert", "terms", "momentum", "earth"):
            return _run_batch(args, command)
        if args.command == "inspect":
            return _inspect(args.inputs, velocity=args.velocity, as_json=args.json)
        from frameshift import demo

        return demo.run(Path(args.out), overwrite=args.overwrite, quiet=args.quiet).exit_code
    except FrameshiftError as exc:
        message = printable(" ".join(str(exc).split()))
        print(f"frameshift {args.command}: error: {message}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"frameshift {args.command}: interrupted", file=sys.stderr)
        return 130


# --- inspect ----------------------------------------------------------------------------
def describe(ds: xr.Dataset, velocity: Mapping[str, str] | None = None) -> dict:
    """What frameshift finds in ``ds`` and what each operation would do with it.

    Detection is :func:`frameshift.detect.find_layout`; whether an operation
    would be refused is found by running it lazily (no data are computed) and
    keeping its error.

    Examples
    --------
    >>> import xarray as xr
    >>> describe(xr.open_dataset("data_demo/tiny_example.nc"))["velocity"]  # doctest: +SKIP
    {'family': 'wind', 'eastward': {...}, ...}
    """
    from frameshift.detect import INERTIAL, ROTATING, read_layout

    report: dict = {"dimensions": {str(k): int(v) for k, v in ds.sizes.items()}}
    layout, error = None, None
    for target in (INERTIAL, ROTATING):
        try:
            layout = read_layout(ds, velocity, target=target)
            break
        except FrameshiftError as exc:
            error = error or exc
    cartesian = _cartesian_report(ds)
    if cartesian is not None:
        report["cartesian"] = cartesian
    if layout is None:
        report["velocity"] = {"refused": _reason(error)}
    else:
        report["sets"] = [_set_report(ds, vset) for vset in layout.sets]
        report.update(report["sets"][0])  # the first set, as single-set reports had it
    report["time"] = _time_report(ds, layout)
    report["operations"] = _operations(ds, velocity)
    problem = _position_problem(ds, layout)
    if problem:  # the operations would fail on these values when they compute
        report["operations"] = {k: f"refused: {problem}" if v == "ok" else v
                                for k, v in report["operations"].items()}
    return report


def _position_problem(ds: xr.Dataset, layout: object) -> str | None:
    """The refusal the position values would give, computed (coordinates are small)."""
    if layout is None:
        return None
    import dask

    from frameshift import EARTH
    from frameshift.detect import floor_of, height_values, position_values

    try:
        for vset in layout.sets:
            values = list(position_values(ds, vset.position))
            vertical = vset.position.vertical
            if vertical is None or vertical in ds.coords:  # a data variable may be large
                values.append(height_values(ds, vset.position, floor=floor_of(EARTH)))
            dask.compute(*values)
    except FrameshiftError as exc:
        return " ".join(str(exc).split())
    return None


def _set_report(ds: xr.Dataset, vset) -> dict:
    """One velocity set: components, position, vertical and assumptions."""
    comps = {}
    for comp, name in vset.items():
        attrs = ds[name].attrs
        comps[comp] = {
            "variable": name,
            "units": attrs.get("units"),
            "standard_name": attrs.get("standard_name")
            or attrs.get("standard_name_in_rotating_frame"),
            "frame": attrs.get("reference_frame", "rotating (implied by standard_name)"),
            "dims": list(map(str, ds[name].dims)),
        }
    pos = vset.position
    vertical = pos.vertical
    return {
        "velocity": {"family": vset.family, **comps},
        "position": {
            axis: {"variable": name, "dims": list(map(str, ds[name].dims))}
            for axis, name in (("latitude", pos.latitude), ("longitude", pos.longitude))
            if name is not None
        },
        "vertical": (
            {"variable": vertical, "units": ds[vertical].attrs.get("units"),
             "standard_name": ds[vertical].attrs.get("standard_name"),
             "sign": pos.vertical_sign}
            if vertical else None
        ),
        "time_variable": pos.time,
        "notes": list(vset.notes),
    }


def _cartesian_report(ds: xr.Dataset) -> dict | None:
    """Inertial position/velocity on x, y, z axes, as ``--basis cartesian`` writes them."""
    names = [n for n in ("position", "velocity")
             if n in ds.data_vars and "component" in ds[n].dims]
    if not names:
        return None
    return {n: {"units": ds[n].attrs.get("units"),
                "frame": ds[n].attrs.get("reference_frame"),
                "axes": ds[n].attrs.get("inertial_axes")} for n in names}


def _time_report(ds: xr.Dataset, layout: object) -> dict | None:
    from frameshift.detect import find_time

    name = layout.time if layout is not None else find_time(ds)
    if name is None:
        return None
    enc = ds[name].encoding
    values = ds[name].values
    return {"variable": name, "units": enc.get("units"),
            "calendar": enc.get("calendar", "standard"), "size": int(values.size),
            "first": str(values.min()) if values.size else None,
            "last": str(values.max()) if values.size else None}


def _operations(ds: xr.Dataset, velocity: Mapping[str, str] | None) -> dict:
    from frameshift import batch

    ops = {}
    for to in ("inertial", "rotating"):
        for basis in ("local", "cartesian"):
            label = f"convert --to {to} --basis {basis}"
            vel = velocity if not (to == "rotating" and basis == "cartesian") else None
            ops[label] = _try(batch.convert_operation(to, basis=basis, velocity=vel), ds)
    ops["terms"] = _try(batch.terms_operation(velocity=velocity), ds)
    return ops


def _try(operation: Operation, ds: xr.Dataset) -> str:
    try:
        operation.apply(ds)
    except FrameshiftError as exc:
        return "refused: " + " ".join(str(exc).split())
    except (ValueError, TypeError, KeyError) as exc:
        return f"refused: {type(exc).__name__}: {' '.join(str(exc).split())}"
    return "ok"


def _reason(exc: BaseException | None) -> str:
    text = " ".join(str(exc).split())
    if getattr(exc, "variable", None):
        text += f" [variable={exc.variable}; expected {exc.expected}; found {exc.found}]"
    return text


def _inspect(inputs: Sequence[str], *, velocity: Mapping[str, str] | None = None,
             as_json: bool = False) -> int:
    import json

    from frameshift.batch import find_inputs
    from frameshift.io import open_input

    reports, status = [], 0
    for file, _ in find_inputs(inputs):
        entry: dict = {"file": str(file)}
        try:
            ds, raw = open_input(file)
            raw.close()
            with ds:
                entry.update(describe(ds, velocity))
        except (OSError, ValueError, TypeError) as exc:
            entry["error"] = f"{type(exc).__name__}: {' '.join(str(exc).split())}"
            status = 1
        reports.append(entry)
    if as_json:
        print(json.dumps(reports, indent=1, default=str))
    else:
        for entry in reports:
            print("\n".join(map(printable, _text(entry).split("\n"))))
    return status


def _set_text(entry: dict) -> list[str]:
    vel = entry["velocity"]
    lines = [f"  velocity ({vel['family']}):"]
    for comp in ("eastward", "northward", "upward"):
        if comp in vel:
            c = vel[comp]
            lines.append(f"    {comp:9s} {c['variable']} [{c['units']}] "
                         f"{c['standard_name'] or '-'}; frame: {c['frame']}")
    pos = entry["position"]
    lines.append("  position: " + ", ".join(
        f"{k} {v['variable']}{tuple(v['dims']) or ' (scalar)'}" for k, v in pos.items()))
    vert = entry["vertical"]
    lines.append("  vertical: " + (
        f"{vert['variable']} [{vert['units']}] {vert['standard_name'] or ''}".rstrip()
        if vert else "none"))
    for note in entry["notes"]:
        lines.append(f"  assumes: {note}")
    return lines


def _text(entry: dict) -> str:
    lines = [entry["file"]]
    if "error" in entry:
        return "\n".join([*lines, f"  cannot read: {entry['error']}"])
    dims = ", ".join(f"{k}={v}" for k, v in entry["dimensions"].items())
    lines.append(f"  dimensions: {dims}")
    vel = entry["velocity"]
    for name, c in entry.get("cartesian", {}).items():
        lines.append(f"  {name} [{c['units']}] relative to the {c['frame']} frame "
                     f"on {c['axes']} x/y/z axes")
    if "refused" in vel:
        if "cartesian" not in entry:  # a Cartesian file has no east/north velocity, rightly
            lines.append(f"  velocity: none usable: {vel['refused']}")
    else:
        sets = entry.get("sets", [entry])
        if len(sets) > 1:
            lines.append(f"  {len(sets)} velocity sets (each converted by convert and terms):")
        for one in sets:
            lines.extend(_set_text(one))
    t = entry["time"]
    lines.append("  time: " + (
        f"{t['variable']} ({t['size']} values, {t['first']} to {t['last']}, "
        f"calendar {t['calendar']})" if t else "none"))
    lines.append("  operations:")
    for label, verdict in entry["operations"].items():
        lines.append(f"    {label}: {verdict}")
    return "\n".join(lines)
