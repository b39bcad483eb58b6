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
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from frameshift.errors import ConventionError, FrameshiftError
from frameshift.paths import printable
from frameshift.report import cli_wording, describe

if TYPE_CHECKING:

    from frameshift.batch import RunOptions

__all__ = ["build_parser", "check_usage", "cli_wording", "describe", "failure_line", "main",
           "parse_height", "parse_terms", "parse_velocity"]

#: The term names ``--terms`` takes (as frameshift.accelerations.TERMS).
TERM_NAMES = ("coriolis", "centrifugal", "euler", "curvature")
#: Storage precisions ``--precision`` takes (as frameshift.storage.PRECISIONS).
PRECISIONS = ("input", "float64")
_TOTAL_CHOICES = ("full", "without-centrifugal", "both", "none")
_TOTALS = {"full": ("full",), "without-centrifugal": ("without_centrifugal",),
           "both": ("full", "without_centrifugal"), "none": ()}
#: Command-line options that a refusal's ``variable`` can name.
_OPTIONS = {"terms": "--terms", "totals": "--totals", "celestial": "--celestial",
            "dut1": "--dut1", "height": "--height", "velocity": "--velocity",
            "memory": "--memory", "workers": "--workers", "scheduler": "--scheduler",
            "out": "--out", "precision": "--precision", "format": "--format",
            "basis": "--basis", "to": "--to", "inputs": "INPUT"}

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
      their apparent-acceleration terms, an angular-momentum series of the global
      winds, a rotary spectrum of the mooring and six figures into
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


#: What ``--frame`` takes, for its help text.
FRAME_HELP = ("the rotating frame: earth (WGS 84 ellipsoid; the default), earth_sphere, mars, "
              "venus, jupiter, saturn, titan, or a rotating table: table:RATE turning "
              "counter-clockwise seen from above (table:10rpm, table:0.5rad/s... any rate "
              "unit; or table:VARIABLE, a variable of the file holding the rate over time), "
              "table-clockwise:RATE turning clockwise")


def parse_frame(text: str) -> str:
    """Check a ``--frame`` value before any file is opened; the name is kept as given.

    A table whose rate is a variable's name is checked against each file later.

    Examples
    --------
    >>> parse_frame("mars"), parse_frame("table:10 rpm"), parse_frame("table:rate")
    ('mars', 'table:10 rpm', 'table:rate')
    """
    from frameshift.frames.named import frame_from_name

    spec = text.strip()
    key, _, rate = spec.partition(":")
    if key.strip().lower() in ("table", "table-clockwise") and rate.strip().isidentifier():
        return spec  # a variable of the file: read there
    try:
        frame_from_name(spec)
    except FrameshiftError as exc:  # argparse shows this message (exit status 2)
        raise argparse.ArgumentTypeError(str(exc).replace("frame=", "--frame ")) from exc
    return spec


def frame_option(parser: argparse.ArgumentParser) -> None:
    """Add ``--frame`` (a frame name, checked before any file is opened)."""
    parser.add_argument("--frame", type=parse_frame, default=None, metavar="NAME",
                        help=FRAME_HELP)


def parse_terms(text: str) -> list[str]:
    """Read ``coriolis,curvature`` into a list of term names, refusing unknown ones.

    Examples
    --------
    >>> parse_terms("coriolis, curvature")
    ['coriolis', 'curvature']
    """
    names = [t.strip() for t in text.split(",") if t.strip()]
    unknown = [t for t in names if t not in TERM_NAMES]
    if unknown or not names:
        raise argparse.ArgumentTypeError(
            f"unknown term(s) {', '.join(unknown) or '(none given)'}; choose from "
            f"{', '.join(TERM_NAMES)}")
    return names


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
                        help="NetCDF files, Zarr stores (*.zarr), glob patterns or directories "
                        "(searched for *.nc and *.zarr)")
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
    parser.add_argument("--combined-name", default=None, metavar="NAME",
                        help="file name of the --combine output (default combined.nc; "
                        "combined.zarr with --format zarr)")
    parser.add_argument("--checksum", action="store_true",
                        help="record a SHA-256 of each output in its manifest, and on re-runs "
                        "redo any output whose bytes no longer match it (default: trust size "
                        "and modification time)")
    parser.add_argument("--precision", choices=PRECISIONS, default="input",
                        help="how computed variables are stored: 'input' (the input's "
                        "precision: float32 from float32 or packed 16-bit integers, else "
                        "float64) or 'float64'; computing is always float64 (default input)")
    parser.add_argument("--no-sync", action="store_false", dest="sync",
                        help="do not sync outputs to disk before renaming them into place: "
                        "quicker where syncing is slow (network and parallel file systems); "
                        "a failed or interrupted run still leaves nothing, but a power cut "
                        "or system crash soon after may leave an empty or partial output "
                        "under its final name (default: sync)")
    parser.add_argument("--format", choices=("netcdf", "zarr"), default=None, dest="format",
                        help="output format: 'netcdf' (*.nc files) or 'zarr' (*.zarr "
                        "directory stores, needs the zarr extra); default: the input's")


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
    conv.set_defaults(subparser=conv)
    conv.add_argument("--to", choices=("inertial", "rotating"), default="inertial",
                      help="frame to convert to (default inertial)")
    conv.add_argument("--basis", choices=("local", "cartesian"), default=None,
                      help="local: east/north/up components on the same local axes; "
                      "cartesian: inertial x/y/z position and velocity (variables 'position' "
                      "and 'velocity' on a 'component' axis). Default: local for --to "
                      "inertial; for --to rotating, what each file holds")
    conv.add_argument("--celestial", choices=("cirs", "gcrs"), default=None,
                      help="inertial axes of the Cartesian basis: cirs (Earth rotation angle "
                      "only) or gcrs (also precession-nutation; needs pyerfa). Default cirs; "
                      "for --to rotating, the axes the file records")
    conv.add_argument("--dut1", type=float, default=None, metavar="SECONDS",
                      help="UT1 - UTC in seconds, within [-1, 1], for the Cartesian basis "
                      "(default 0)")
    frame_option(conv)
    _velocity_options(conv)

    terms = sub.add_parser("terms", help="write apparent-acceleration terms (m s-2)",
                           description="Write the apparent accelerations a rotating frame "
                           "adds (one variable per term and component, and their total).",
                           epilog=_EPILOG_TERMS, formatter_class=fmt)
    _common(terms)
    terms.set_defaults(subparser=terms)
    terms.add_argument("--terms", default=None, type=parse_terms, metavar="NAME[,NAME...]",
                       help="comma-separated terms to write, of: " + ", ".join(TERM_NAMES)
                       + " (default: all four)")
    terms.add_argument("--traditional", action="store_true",
                       help="the traditional (shallow-fluid) approximation: drop the 2 Omega "
                       "cos(lat) Coriolis terms (-2 Omega cos(lat) w eastward, 2 Omega "
                       "cos(lat) u upward) and the curvature terms in w or upward (-u w/(N+h), "
                       "-v w/(M+h), u^2/(N+h) + v^2/(M+h)); the upward Coriolis and curvature "
                       "components become 0. Changes coriolis and curvature only")
    terms.add_argument("--totals", choices=_TOTAL_CHOICES, default="full",
                       help="sums to write: full (total_*: every term written, what closes "
                       "the budget of a free body), without-centrifugal "
                       "(total_without_centrifugal_*: for use beside an effective gravity "
                       "that already holds the centrifugal term), both, or none "
                       "(default full)")
    terms.add_argument("--keep-input", action="store_true",
                       help="write the input's variables, unchanged, beside the terms (one "
                       "file for a momentum budget)")
    terms.add_argument("--include-parameters", action="store_true",
                       help="also write coriolis_parameter (2 Omega sin(lat)) and "
                       "reciprocal_coriolis_parameter (2 Omega cos(lat))")
    frame_option(terms)
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
    insp.set_defaults(subparser=insp)
    _velocity_options(insp)
    insp.add_argument("--celestial", choices=("cirs", "gcrs"), default=None,
                      help="inertial axes to check the Cartesian conversions with (default: "
                      "cirs, or the axes a Cartesian file records)")
    insp.add_argument("--dut1", type=float, default=None, metavar="SECONDS",
                      help="UT1 - UTC in seconds to check the Cartesian conversions with")
    frame_option(insp)
    insp.add_argument("--json", action="store_true", help="print the report as JSON")

    demo = sub.add_parser("demo", help="run frameshift on the bundled invented demo data",
                          description="Run frameshift on the bundled demo files (invented "
                          "data): convert them to the inertial frame, write their "
                          "apparent-acceleration terms, an angular-momentum series and a "
                          "rotary spectrum, draw figures, and print a summary.",
                          epilog=_EPILOG_DEMO, formatter_class=fmt)
    demo.add_argument("--out", default="frameshift_demo_output", metavar="DIR",
                      help="output directory (default frameshift_demo_output)")
    demo.add_argument("--overwrite", action="store_true", help="redo existing outputs")
    demo.add_argument("--quiet", action="store_true", help="print nothing but failures")
    return parser


def _options(args: argparse.Namespace, command: str) -> RunOptions:
    from frameshift.batch import RunOptions
    from frameshift.io import default_memory, parse_memory

    combined = args.combined_name
    if combined is None:
        combined = "combined.zarr" if args.format == "zarr" else "combined.nc"
    return RunOptions(
        out_dir=Path(args.out),
        overwrite=args.overwrite,
        fail_fast=args.fail_fast,
        quiet=args.quiet,
        memory=default_memory() if args.memory is None else parse_memory(args.memory),
        workers=args.workers,
        scheduler=args.scheduler,
        combine=args.combine,
        combined_name=combined,
        command=command,
        verify=args.checksum,
        precision=args.precision,
        output_format=args.format,
        sync=args.sync,
    )


def check_usage(parser: argparse.ArgumentParser, args: argparse.Namespace) -> None:
    """Refuse options that would do nothing in the mode chosen (a usage error, exit 2).

    Examples
    --------
    >>> parser = build_parser()
    >>> check_usage(parser, parser.parse_args(["convert", "a.nc", "--out", "o"]))
    """
    useless: list[str] = []
    if args.command in ("convert", "terms"):
        if args.combined_name is not None and not args.combine:
            useless.append("--combined-name names the output of --combine, which is not given")
        if args.workers is not None and args.scheduler is not None:
            useless.append("--workers starts a local cluster and --scheduler uses a running "
                           "one: give one of them")
    if getattr(args, "dut1", None) is not None and not abs(args.dut1) <= 1.0:
        useless.append(f"--dut1 {args.dut1:g}: UT1 - UTC is kept within 0.9 s; give seconds "
                       "in [-1, 1]")
    if args.command == "convert":
        local = args.basis == "local" or (args.basis is None and args.to == "inertial")
        for option, value in (("--celestial", args.celestial), ("--dut1", args.dut1)):
            if value is not None and local:
                useless.append(f"{option} sets the Cartesian basis, and the basis is local "
                               "(add --basis cartesian, or leave it out)")
        if args.to == "rotating" and args.basis == "cartesian":
            for option, value in (("--velocity", args.velocity), ("--height", args.height)):
                if value is not None:
                    useless.append(f"{option} does not apply to --to rotating --basis "
                                   "cartesian: the file's position and velocity say it all")
    if args.command == "terms":
        chosen = set(args.terms or TERM_NAMES)
        if args.traditional and not chosen & {"coriolis", "curvature"}:
            useless.append("--traditional changes only the coriolis and curvature terms, "
                           f"and --terms asks for {','.join(args.terms)}")
    if useless:
        getattr(args, "subparser", parser).error("; ".join(useless))


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
        basis = args.basis or ("local" if args.to == "inertial" else "auto")
        operation = batch.convert_operation(
            args.to, basis=basis, celestial=args.celestial, velocity=args.velocity,
            height=parse_height(args.height), dut1=args.dut1, frame=args.frame,
            **_coordinates(args),
        )
    elif args.command == "momentum":
        from frameshift.diagnostics.command import operation_from_args

        operation = operation_from_args(args)
    else:
        operation = batch.terms_operation(
            args.terms, traditional=args.traditional, velocity=args.velocity,
            height=parse_height(args.height), include_parameters=args.include_parameters,
            totals=_TOTALS[args.totals], keep_input=args.keep_input, frame=args.frame,
            **_coordinates(args),
        )
    summary = batch.run(args.inputs, operation, _options(args, command))
    failed = [o for o in summary.outcomes if o.status in ("failed", "interrupted")]
    if not args.quiet or failed:
        print(f"frameshift {args.command}: {summary.totals()}", file=sys.stderr)
    for outcome in failed:
        print(failure_line(outcome), file=sys.stderr)
    return summary.exit_code


def failure_line(outcome: object) -> str:
    """A failed outcome in command-line words: the option it concerns, or the variable.

    Examples
    --------
    >>> from pathlib import Path
    >>> from frameshift.batch import Job, Outcome
    >>> o = Outcome(Job((Path("a.nc"),), Path("o/a.nc")), "failed", "terms= has no terms",
    ...             variable="terms")
    >>> failure_line(o)
    'FAILED a.nc (option --terms): --terms has no terms'
    """
    source = outcome.job.source
    name = outcome.variable
    where = ""
    if name in _OPTIONS:
        where = f" (option {_OPTIONS[name]})"
    elif name:
        where = f" (variable {name!r})"
    return printable(f"{outcome.status.upper()} {source}{where}: {cli_wording(outcome.reason)}")


def _coordinates(args: argparse.Namespace) -> dict[str, str]:
    """The --latitude/--longitude/--vertical/--time options that were given."""
    keys = ("latitude", "longitude", "vertical", "time")
    return {k: getattr(args, k) for k in keys if getattr(args, k, None) is not None}


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status.

    Exit status: 0 when every file succeeded, 1 when a file failed, 2 for a
    usage error (an unknown or useless option, a bad value), 130 when interrupted.

    Examples
    --------
    >>> main(["--version"])  # doctest: +SKIP
    frameshift 0.1.0
    """
    args_list = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(args_list)
    check_usage(parser, args)
    command = shlex.join(["frameshift", *args_list])
    try:
        if args.command in ("convert", "terms", "momentum", "earth"):
            return _run_batch(args, command)
        if args.command == "inspect":
            from frameshift.report import inspect_files

            return inspect_files(args.inputs, velocity=args.velocity, as_json=args.json,
                            settings={"height": parse_height(args.height),
                                      "celestial": args.celestial, "dut1": args.dut1,
                                      "frame": args.frame, **_coordinates(args)})
        from frameshift import demo

        return demo.run(Path(args.out), overwrite=args.overwrite, quiet=args.quiet).exit_code
    except FrameshiftError as exc:
        option = _OPTIONS.get(getattr(exc, "variable", None) or "")
        where = f" ({option})" if option and option != "INPUT" else ""
        print(f"frameshift {args.command}: error{where}: {printable(cli_wording(str(exc)))}",
              file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"frameshift {args.command}: interrupted", file=sys.stderr)
        return 130
