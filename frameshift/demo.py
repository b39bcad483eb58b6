"""``frameshift demo``: the whole job on the bundled, invented demo files.

Every demo file goes through the batch runner the command line uses
(:func:`frameshift.batch.process`): Earth-rotating to inertial on local
east/north/up axes, Earth-rotating to inertial on inertial Cartesian axes,
and the apparent-acceleration terms, each written as CF NetCDF under
``<out>/<step>/<file>``. Two diagnostics follow, through the same runner
(:mod:`frameshift.demo_diagnostics`): the angular-momentum and length-of-day
series of ``global_winds.nc`` and the rotary spectrum of
``shelf_mooring.nc``. Six figures are then drawn from the files just
written (read back from disk) into ``<out>/figures/``, and a table gives,
per data set, the size of each term, the largest inertial speed and the
files written, followed by a few numbers of the diagnostics. The Cartesian
conversion of ``packed_knots.nc`` is refused by design: its model calendar
(``noleap``) has no real time. The two examples in ``data_demo/examples/``
take other frames (:data:`EXAMPLE_FRAMES`): a tank on a rotating table spun
up as the file's ``table_rate`` says (its Cartesian step refused by design: a
table's fields stay on its x/y axes) and cloud-tracked winds on a planet
turning as Venus does. The data are
invented; see ``data_demo/README.md``.
"""

from __future__ import annotations

import importlib
import importlib.resources
import os
import sys
import textwrap
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TextIO

import numpy as np
import xarray as xr

from frameshift import batch
from frameshift.demo_diagnostics import (
    DIAGNOSTICS,
    DiagnosticStep,
    SummaryValue,
    draw_angular_momentum,
    draw_rotary_spectrum,
    print_summary,
    summary_values,
)
from frameshift.errors import MissingInputError

__all__ = [
    "EXAMPLE_FRAMES",
    "FIGURES",
    "STEPS",
    "TERMS",
    "DatasetSummary",
    "DemoFigure",
    "DemoReport",
    "DemoRow",
    "demo_files",
    "find_demo_data",
    "format_value",
    "run",
]

#: The conversion steps: output folder and what the step does.
STEPS = (
    ("inertial_local", "rotating -> inertial frame, local east/north/up axes (a table: x/y)"),
    ("inertial_cartesian", "rotating -> inertial frame, Cartesian x/y/z axes (CIRS; POLE)"),
    ("terms", "apparent-acceleration terms"),
)

#: The terms summarised in the table, in the order they are printed.
TERMS = ("coriolis", "centrifugal", "euler", "curvature", "total")

#: Components to use where a demo file holds more than one velocity set (or lab axes).
_VELOCITY = {"packed_knots.nc": {"eastward": "wspd_u", "northward": "wspd_v"},
             "tank_spinup.nc": {"x": "u", "y": "v"}}

#: The frame of each example in data_demo/examples/ (by name, see frames.named); the
#: other demo files are relative to the Earth.
EXAMPLE_FRAMES = {"tank_spinup.nc": "table:table_rate", "cloud_winds.nc": "venus"}

#: Instrument records, brought to Earth-relative east/north first (as ``frameshift earth``).
_EARTH_FIRST = {"ship_met.nc": {"relative_wind": {"direction": "rel_wdir", "speed": "rel_wspd"}}}

#: Steps refused by design, and the (variable, found) of the refusal: the ``noleap``
#: calendar has no real time, which Cartesian axes need. Any other failure is a failure.
_REFUSED_BY_DESIGN = {("packed_knots.nc", "inertial_cartesian"): ("time", "noleap"),
                      # a lab table's fields stay on its x/y axes: no Cartesian basis
                      ("tank_spinup.nc", "inertial_cartesian"): ("basis", "'cartesian'")}

_INSTALL_HINT = "pip install 'frameshift[plot]'"


@dataclass(frozen=True)
class DemoRow:
    """One conversion of one demo file.

    ``status`` is ``written``, ``skipped`` (the output was up to date),
    ``refused`` (by design; ``reason`` says why) or ``failed``.
    """

    file: str
    step: str
    status: str
    output: Path | None
    reason: str = ""
    seconds: float = 0.0


@dataclass(frozen=True)
class DemoFigure:
    """One demo figure: what it shows, the files it is drawn from, and the PNG."""

    title: str
    dataset: str
    sources: tuple[Path, ...]
    path: Path
    status: str  # "written", "skipped" or "failed"
    reason: str = ""
    seconds: float = 0.0


@dataclass(frozen=True)
class DatasetSummary:
    """The numbers of one table row, read from the demo's output files.

    ``terms`` maps each name in :data:`TERMS` to the largest magnitude, over
    all points, of the vector of its eastward, northward and upward parts
    (m s-2), or None without a terms output. ``inertial_speed`` is the
    largest inertial speed of the Cartesian output (m s-1), or None with
    ``speed_note`` saying why. ``files`` are the outputs of this data set
    (NetCDF and PNG) that this run wrote or kept as up to date.
    """

    file: str
    terms: dict[str, float | None]
    inertial_speed: float | None
    speed_note: str
    files: tuple[Path, ...]


@dataclass
class DemoReport:
    """What :func:`run` did: every conversion and diagnostic, every figure, and the tables."""

    out_dir: Path
    rows: list[DemoRow] = field(default_factory=list)
    figures: list[DemoFigure] = field(default_factory=list)
    datasets: list[DatasetSummary] = field(default_factory=list)
    diagnostics: list[SummaryValue] = field(default_factory=list)
    figures_skipped: str = ""
    seconds: float = 0.0

    @property
    def outputs(self) -> list[Path]:
        """Every NetCDF output and PNG this run wrote or kept as up to date."""
        return [p for s in self.datasets for p in s.files]

    @property
    def failed(self) -> list[str]:
        """One line per step that failed (refusals by design are not failures)."""
        lines = [f"{r.file} {r.step}: {r.reason}" for r in self.rows if r.status == "failed"]
        return lines + [f"figure {f.path.name}: {f.reason}"
                        for f in self.figures if f.status == "failed"]

    @property
    def exit_code(self) -> int:
        """0 if nothing failed, else 1."""
        return 1 if self.failed else 0


def find_demo_data() -> Path:
    """The folder holding the demo NetCDF files.

    ``data_demo/`` next to the package in a source checkout (and in an
    editable install), else the copy installed with the package
    (``frameshift/data_demo``, shipped as package data).

    Examples
    --------
    >>> sorted(p.name for p in find_demo_data().glob("*.nc"))[:1]
    ['balloon_track.nc']
    """
    checkout = Path(__file__).resolve().parent.parent / "data_demo"
    if any(checkout.glob("*.nc")):
        return checkout
    try:
        packaged = importlib.resources.files("frameshift") / "data_demo"
        folder = Path(os.fspath(packaged))
    except (ModuleNotFoundError, TypeError):  # pragma: no cover - zipped installs
        folder = None
    if folder is not None and any(folder.glob("*.nc")):
        return folder
    raise MissingInputError(
        f"the demo data are not installed: looked in {checkout} and in the package's "
        "data_demo folder",
        variable="data_demo",
        expected="data_demo/*.nc",
        found="none",
    )


def format_value(value: float | None, kind: str) -> str:
    """A table cell: ``"accel"`` values as ``1.23e-04`` (exact zeros as ``0``), speeds ``.1f``.

    Examples
    --------
    >>> format_value(1.2345e-4, "accel"), format_value(0.0, "accel"), format_value(None, "speed")
    ('1.23e-04', '0', '—')
    """
    if value is None or not np.isfinite(value):
        return "—"
    if kind == "speed":
        return f"{value:.1f}"
    return "0" if value == 0 else f"{value:.2e}"


def _operation(step: str, name: str) -> batch.Operation:
    velocity = _VELOCITY.get(name)
    frame = EXAMPLE_FRAMES.get(name)
    if step == "inertial_local":
        operation = batch.convert_operation("inertial", velocity=velocity, frame=frame)
    elif step == "inertial_cartesian":
        operation = batch.convert_operation("inertial", basis="cartesian", velocity=velocity,
                                            frame=frame)
    else:
        operation = batch.terms_operation(velocity=velocity, frame=frame,
                                          totals=("full", "without_centrifugal"))
    if name in _EARTH_FIRST:
        from frameshift.instruments.command import earth_first

        return earth_first(_EARTH_FIRST[name], operation)
    return operation


#: The terms the demo's figures draw: those that carry dynamics. The centrifugal term
#: (a steady, latitude-only pull counted in effective gravity) would fill the total.
DYNAMIC_TERMS = ("coriolis", "curvature", "total_without_centrifugal")


def demo_files(data: Path) -> list[Path]:
    """The demo's files: the Earth data sets, then the frame examples (``examples/``).

    Examples
    --------
    >>> [p.name for p in demo_files(find_demo_data())][-2:]
    ['cloud_winds.nc', 'tank_spinup.nc']
    """
    return sorted(data.glob("*.nc")) + sorted((data / "examples").glob("*.nc"))


def run(
    out_dir: str | os.PathLike = "frameshift_demo_output",
    *,
    overwrite: bool = False,
    quiet: bool = False,
    stream: TextIO | None = None,
) -> DemoReport:
    """Run the demo into ``out_dir``: convert, write terms, draw figures, print the table.

    Outputs go to ``out_dir/<step>/<file>`` for the steps ``inertial_local``,
    ``inertial_cartesian`` and ``terms``, then ``out_dir/momentum/global_winds.nc``
    and ``out_dir/rotary_spectrum/shelf_mooring.nc`` (see
    :mod:`frameshift.demo_diagnostics`; up-to-date outputs are kept unless
    ``overwrite``), and ``out_dir/figures/*.png`` (always redrawn; skipped,
    with a note, when matplotlib is not installed). Each step prints one line
    to ``stream`` (default stdout) as it starts and finishes, then the table;
    ``quiet`` prints nothing but failures (to stderr).

    Returns
    -------
    DemoReport
        Every conversion and diagnostic (``rows``), every figure, and the numbers
        of the tables (``datasets``, ``diagnostics``), read from the files on disk.

    Examples
    --------
    >>> import tempfile
    >>> report = run(tempfile.mkdtemp(), quiet=True)
    >>> report.rows[0].step, report.rows[0].status
    ('inertial_local', 'written')
    >>> report.exit_code
    0
    """
    start = time.perf_counter()
    out_dir = Path(out_dir)
    say = _Printer(None if quiet else (stream or sys.stdout))
    data = find_demo_data()
    files = demo_files(data)
    report = DemoReport(out_dir)
    say.line(f"frameshift demo: {len(files)} invented demo files (fictional Tollaven Shelf "
             f"Experiment, see data_demo/README.md) -> {out_dir}")
    diagnostics = [d for d in DIAGNOSTICS if (data / d.file) in files]
    total = len(STEPS) + len(diagnostics) + len(_FIGURE_SPECS)
    options = batch.RunOptions(out_dir=out_dir, overwrite=overwrite, quiet=True, progress=False,
                               command=f"frameshift demo --out {out_dir}")
    with batch.compute_context(options) as (client, parallel):
        for k, (step, what) in enumerate(STEPS, 1):
            say.start(f"[{k}/{total}] {what}: {len(files)} files ...")
            t0 = time.perf_counter()
            rows = [_convert(file, step, out_dir, options, client, parallel) for file in files]
            report.rows.extend(rows)
            say.finish(f" {_counts(rows)} ({time.perf_counter() - t0:.1f} s)")
            for row in rows:
                if row.status == "failed":
                    print(f"frameshift demo: FAILED {row.file} {step}: {row.reason}",
                          file=sys.stderr)
        for k, step in enumerate(diagnostics, len(STEPS) + 1):
            say.start(f"[{k}/{total}] {step.what}: {step.file} ...")
            row = _diagnose(step, data, out_dir, options, client, parallel)
            report.rows.append(row)
            say.finish(f" {_counts([row])} ({row.seconds:.1f} s)")
            if row.status == "failed":
                print(f"frameshift demo: FAILED {row.file} {step.folder}: {row.reason}",
                      file=sys.stderr)
    done = len(STEPS) + len(diagnostics)
    report.figures, report.figures_skipped = _figures(data, out_dir, say, done, total)
    report.datasets = [_summarise(file.name, report) for file in files]
    report.diagnostics = summary_values(
        {r.step: r.output for r in report.rows if r.output is not None
         and r.status in ("written", "skipped") and r.step in _DIAGNOSTIC_FOLDERS})
    report.seconds = time.perf_counter() - start
    if not quiet:
        _print_table(report, stream or sys.stdout)
    return report


def _convert(file: Path, step: str, out_dir: Path, options: batch.RunOptions,
             client: object | None, parallel: int) -> DemoRow:
    job = batch.Job((file,), out_dir / step / file.name)
    outcome = batch.process(job, _operation(step, file.name), options, client=client,
                            parallel=parallel)
    if outcome.status != "failed":
        return DemoRow(file.name, step, outcome.status, job.output, seconds=outcome.seconds)
    expected = _REFUSED_BY_DESIGN.get((file.name, step))
    status = "refused" if expected == (outcome.variable, outcome.found) else "failed"
    from frameshift.report import cli_wording

    return DemoRow(file.name, step, status, None, cli_wording(outcome.reason), outcome.seconds)


def _diagnose(step: DiagnosticStep, data: Path, out_dir: Path, options: batch.RunOptions,
              client: object | None, parallel: int) -> DemoRow:
    job = batch.Job((data / step.file,), out_dir / step.folder / step.file)
    outcome = batch.process(job, step.operation, options, client=client, parallel=parallel)
    if outcome.status != "failed":
        return DemoRow(step.file, step.folder, outcome.status, job.output,
                       seconds=outcome.seconds)
    from frameshift.report import cli_wording

    return DemoRow(step.file, step.folder, "failed", None, cli_wording(outcome.reason),
                   outcome.seconds)


#: The output folders of the diagnostics, in the order they run.
_DIAGNOSTIC_FOLDERS = tuple(d.folder for d in DIAGNOSTICS)


def _counts(rows: list[DemoRow]) -> str:
    order = ("written", "skipped", "refused", "failed")
    words = {"skipped": "up to date"}
    return ", ".join(f"{sum(r.status == s for r in rows)} {words.get(s, s)}"
                     for s in order if any(r.status == s for r in rows))


class _Printer:
    """Step lines: the start of a line is flushed, the end follows when the step is done."""

    def __init__(self, stream: TextIO | None) -> None:
        self.stream = stream

    def start(self, text: str) -> None:
        if self.stream is not None:
            print(text, end="", file=self.stream, flush=True)

    def finish(self, text: str) -> None:
        if self.stream is not None:
            print(text, file=self.stream, flush=True)

    def line(self, text: str) -> None:
        self.finish(text)


# --- figures, drawn from the files the demo wrote ----------------------------------------
def _term_maps(out: Path, data: Path, path: Path) -> None:
    from frameshift.plotting import plot_term_maps

    with xr.open_dataset(out / "terms" / "global_winds.nc") as terms:
        plot_term_maps(terms, "250 hPa", terms=DYNAMIC_TERMS, path=path)


def _mooring_series(out: Path, data: Path, path: Path) -> None:
    from frameshift.plotting import plot_terms_timeseries

    with xr.open_dataset(out / "terms" / "shelf_mooring.nc") as terms:
        plot_terms_timeseries(terms, "10 m", terms=DYNAMIC_TERMS, path=path)


def _zonal_mean(out: Path, data: Path, path: Path) -> None:
    from frameshift.plotting import plot_zonal_mean_velocity

    with xr.open_dataset(data / "global_winds.nc") as earth, \
            xr.open_dataset(out / "inertial_local" / "global_winds.nc") as inertial:
        plot_zonal_mean_velocity(earth, inertial, path=path)


def _track_terms(out: Path, data: Path, path: Path) -> None:
    from frameshift.plotting import plot_track_terms

    # the terms output keeps the track's latitude, longitude and time as coordinates
    with xr.open_dataset(out / "terms" / "balloon_track.nc") as terms:
        plot_track_terms(terms, terms, terms=DYNAMIC_TERMS, path=path)


#: (file name, data set, title, sources relative to out (or "data:" for the input), drawer)
_FIGURE_SPECS: tuple[tuple[str, str, str, tuple[str, ...], Callable[[Path, Path, Path], None]],
                     ...] = (
    ("global_winds_term_maps_250hPa.png", "global_winds.nc", "term maps at 250 hPa",
     ("terms/global_winds.nc",), _term_maps),
    ("shelf_mooring_terms_timeseries.png", "shelf_mooring.nc",
     "terms against time at the mooring, 10 m", ("terms/shelf_mooring.nc",), _mooring_series),
    ("global_winds_zonal_mean_velocity.png", "global_winds.nc",
     "zonal-mean eastward velocity in both frames",
     ("data:global_winds.nc", "inertial_local/global_winds.nc"), _zonal_mean),
    ("balloon_track_terms.png", "balloon_track.nc", "terms along the balloon track",
     ("terms/balloon_track.nc",), _track_terms),
    ("global_winds_angular_momentum.png", "global_winds.nc",
     "angular momentum and length-of-day series", ("momentum/global_winds.nc",),
     draw_angular_momentum),
    ("shelf_mooring_rotary_spectrum.png", "shelf_mooring.nc",
     "rotary spectrum at the mooring, f marked", ("rotary_spectrum/shelf_mooring.nc",),
     draw_rotary_spectrum),
)

#: The figure files the demo writes under ``<out>/figures/``.
FIGURES = tuple(spec[0] for spec in _FIGURE_SPECS)


def _matplotlib_missing() -> str:
    try:
        importlib.import_module("matplotlib")
    except ImportError:
        return f"matplotlib is not installed ({_INSTALL_HINT})"
    return ""


def _draw(draw: Callable[[Path, Path, Path], None], out: Path, data: Path,
          sources: tuple[Path, ...], path: Path) -> str:
    """Draw one figure into ``path`` (whole or not at all); return why it failed, or ""."""
    absent = [p for p in sources if not p.is_file()]
    if absent:
        return f"its input {absent[0]} was not written"
    path.parent.mkdir(parents=True, exist_ok=True)
    partial = path.with_name(path.name + ".part")
    try:
        draw(out, data, partial)
        os.replace(partial, path)
    except Exception as exc:  # one figure's failure must not stop the others
        partial.unlink(missing_ok=True)
        return f"{type(exc).__name__}: {' '.join(str(exc).split())}"
    return ""


def _figures(data: Path, out: Path, say: _Printer, done: int, total: int
             ) -> tuple[list[DemoFigure], str]:
    folder = out / "figures"
    missing = _matplotlib_missing()
    figures: list[DemoFigure] = []
    for k, (name, dataset, title, sources, draw) in enumerate(_FIGURE_SPECS, done + 1):
        paths = tuple(data / s[5:] if s.startswith("data:") else out / s for s in sources)
        path = folder / name
        if missing:
            figures.append(DemoFigure(title, dataset, paths, path, "skipped", missing))
            continue
        say.start(f"[{k}/{total}] figure: {title} ...")
        t0 = time.perf_counter()
        reason = _draw(draw, out, data, paths, path)
        seconds = time.perf_counter() - t0
        if reason:
            figures.append(DemoFigure(title, dataset, paths, path, "failed", reason, seconds))
            say.finish(" failed")
            print(f"frameshift demo: FAILED figure {name}: {reason}", file=sys.stderr)
            continue
        figures.append(DemoFigure(title, dataset, paths, path, "written", seconds=seconds))
        say.finish(f" {path.relative_to(out)} ({seconds:.1f} s)")
    if missing:
        say.line(f"[{done + 1}-{total}/{total}] figures skipped: {missing}")
    return figures, missing


# --- the table, read from the files on disk ----------------------------------------------
def _summarise(name: str, report: DemoReport) -> DatasetSummary:
    """The table row of one data set, from the outputs this run wrote or kept."""
    rows = {r.step: r for r in report.rows if r.file == name}
    current = {step: r.output for step, r in rows.items()
               if r.status in ("written", "skipped") and r.output is not None}
    terms_path = current.get("terms")
    sizes: dict[str, float | None] = dict.fromkeys(TERMS)
    if terms_path is not None:
        with xr.open_dataset(terms_path) as ds:
            for term in TERMS:
                parts = [ds[f"{term}_{c}"] for c in ("eastward", "northward", "upward",
                                                     "x", "y", "z") if f"{term}_{c}" in ds]
                if parts:
                    square = sum(np.square(p.values.astype(np.float64)) for p in parts)
                    sizes[term] = float(np.sqrt(np.nanmax(square)))
    cart = current.get("inertial_cartesian")
    speed, note = None, ""
    if cart is not None:
        with xr.open_dataset(cart) as ds:
            velocity = ds["velocity"].values.astype(np.float64)
            axis = ds["velocity"].dims.index("component")
            speed = float(np.sqrt(np.nanmax(np.square(velocity).sum(axis=axis))))
    else:
        row = rows.get("inertial_cartesian")
        note = row.reason if row is not None and row.reason else "no Cartesian output"
        if row is not None and row.status == "refused":
            note += " (refused by design)"
    files = [path for step in (*(s for s, _ in STEPS), *_DIAGNOSTIC_FOLDERS)
             if (path := current.get(step)) is not None]
    files += [f.path for f in report.figures if f.dataset == name and f.status == "written"]
    return DatasetSummary(name, sizes, speed, note, tuple(files))


def _print_table(report: DemoReport, stream: TextIO) -> None:
    head = ["data set", *(f"|{t}|" for t in TERMS), "inertial speed", "files"]
    units = ["", *["m s-2"] * len(TERMS), "m s-1 (max)", ""]
    body, notes = [], []
    for s in report.datasets:
        speed = format_value(s.inertial_speed, "speed")
        if s.inertial_speed is None:
            notes.append(f"{s.file}: no inertial speed: {s.speed_note}")
        body.append([s.file, *(format_value(s.terms[t], "accel") for t in TERMS), speed,
                     str(len(s.files))])
    widths = [max(len(r[i]) for r in [head, units, *body]) for i in range(len(head))]

    def line(cells: list[str]) -> str:
        return "  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True)).rstrip()

    print("\nSummary: per data set, the largest magnitude over all points of each "
          "apparent-acceleration term\n(its eastward, northward and upward parts as one "
          "vector), the largest inertial speed (Cartesian\noutput) and the number of its "
          "output files (NetCDF and PNG).", file=stream)
    for cells in (head, units, *body):
        print(line(cells), file=stream)
    for note in notes:
        print(textwrap.fill(note, width=92, initial_indent="  ", subsequent_indent="    "),
              file=stream)
    print_summary(report.diagnostics, stream)
    _print_files(report, stream)


def _print_files(report: DemoReport, stream: TextIO) -> None:
    out = report.out_dir
    written = {r.output for r in report.rows if r.status == "written"}
    written |= {f.path for f in report.figures if f.status == "written"}
    paths = report.outputs
    nc = sum(p.suffix == ".nc" for p in paths)
    png = len(paths) - nc
    fresh = sum(p in written for p in paths)
    kept = f", {len(paths) - fresh} kept (up to date)" if fresh < len(paths) else ""
    print(f"\n{nc} NetCDF files (each with a .frameshift.json manifest) and {png} figures "
          f"in {out}\n({fresh} written now{kept}; {report.seconds:.1f} s in all):", file=stream)
    folders = [step for step, _ in STEPS] + list(_DIAGNOSTIC_FOLDERS) + ["figures"]
    width = max(map(len, folders)) + 2
    for folder in folders:
        names = sorted(p.name for p in paths if p.parent == out / folder)
        if folder == "figures":  # one per line: the names are long
            for i, name in enumerate(names):
                print(f"  {folder + '/' if i == 0 else '':{width}s}{name}", file=stream)
        elif names:
            print(f"  {folder + '/':{width}s}{' '.join(names)}", file=stream)
    if report.figures_skipped:
        print(f"Figures skipped: {report.figures_skipped}", file=stream)
