"""Run one frameshift operation over many NetCDF files, safely and in bounded memory.

The runner behind the command line: it expands inputs (files, globs,
directories), mirrors the input tree under the output directory, skips
outputs that are already up to date, streams each file through Dask chunks
sized from a memory budget, and keeps going past a file that fails (unless
told to stop), collecting one line per failure. File safety (atomic
writes, untouched variables copied as stored, manifests) is in
:mod:`frameshift.io`.
"""

from __future__ import annotations

import contextlib
import dataclasses
import datetime as _dt
import logging
import os
import signal
import sys
import time
import warnings
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import xarray as xr

from frameshift import io, safefiles
from frameshift.cf import set_conventions
from frameshift.cf_references import reconcile
from frameshift.errors import (
    ConventionError,
    FrameshiftError,
    FrameshiftWarning,
    MissingInputError,
    UnsupportedInputError,
    check_choice,
)
from frameshift.options import check_dut1, check_height, check_terms, check_velocity_set
from frameshift.paths import Job, find_inputs, plan_jobs, printable
from frameshift.signals import Terminated, sigterm_as_interrupt
from frameshift.storage import output_format, with_format_suffix

__all__ = [
    "OPERATIONS",
    "ROUNDING",
    "Job",
    "Operation",
    "Outcome",
    "RunOptions",
    "Summary",
    "Terminated",
    "compute_context",
    "convert_operation",
    "find_inputs",
    "plan_jobs",
    "printable",
    "process",
    "register_operation",
    "run",
    "terms_operation",
]

# A worker process needs room of its own besides its share of the budget:
# below this, distributed's memory manager would pause it for good.
_WORKER_FLOOR = 512 * 2**20


# --- what to do -----------------------------------------------------------------------
#: The operations the runner knows: command name -> function(ds, **settings) -> Dataset.
#: Capabilities add theirs with :func:`register_operation` (the command line, the
#: runner and the demo then share it, with no chain of ifs).
OPERATIONS: dict[str, Callable[..., xr.Dataset]] = {}
#: Commands whose function takes ``precision=`` (:data:`frameshift.storage.PRECISIONS`),
#: the run's storage precision, and rounds what it computes to it as it computes it.
ROUNDING: set[str] = set()


def register_operation(command: str, function: Callable[..., xr.Dataset], *,
                       rounds: bool = False) -> None:
    """Make ``function(ds, **settings)`` the operation run for ``command``.

    ``rounds=True``: ``function`` also takes ``precision=``, the storage
    precision of the run, and may round its results to it as it computes them,
    so that no float64 copy of a float32 field is made only to be narrowed on writing.

    Examples
    --------
    >>> "convert" in OPERATIONS and "terms" in OPERATIONS  # registered below
    True
    """
    OPERATIONS[command] = function
    if rounds:
        ROUNDING.add(command)
    else:
        ROUNDING.discard(command)


@dataclass(frozen=True)
class Operation:
    """One frameshift operation with its settings, applied file by file.

    Make one with :func:`convert_operation`, :func:`terms_operation`, or for a
    registered command ``Operation(command, settings)``.
    """

    command: str
    settings: Mapping[str, object]

    def apply(self, ds: xr.Dataset, *, precision: str = "float64") -> xr.Dataset:
        """Run the operation on ``ds`` (lazily when ``ds`` is Dask-backed).

        The result's CF references are made whole against ``ds``
        (:func:`frameshift.cf_references.reconcile`), whatever the operation.
        ``precision`` is the storage precision the result will be written in
        (:data:`frameshift.storage.PRECISIONS`); operations registered with
        ``rounds=True`` round to it as they compute, the others ignore it.
        """
        try:
            function = OPERATIONS[self.command]
        except KeyError as exc:
            raise ConventionError(
                f"unknown operation {self.command!r}; known: {sorted(OPERATIONS)}",
                variable="command",
                expected=" | ".join(sorted(OPERATIONS)),
                found=repr(self.command),
            ) from exc
        extra = {"precision": precision} if self.command in ROUNDING else {}
        return reconcile(function(ds, **self.settings, **extra), ds)


def _convert(ds: xr.Dataset, *, to: str, precision: str = "float64",
             **settings) -> xr.Dataset:
    from frameshift.frames import EARTH
    from frameshift.transforms import rounds_as_computed, to_inertial, to_rotating

    s = _named_frame(ds, dict(settings))
    from frameshift.transforms.cartesian import DUT1_ATTR, is_cartesian, recorded

    if s.get("basis") == "auto":  # what the file says it holds
        s["basis"] = "cartesian" if is_cartesian(ds) else "local"
    if s.get("celestial", "cirs") is None:  # the axes a Cartesian file records
        s["celestial"] = recorded(ds, "inertial_axes", "cirs").lower() if to == "rotating" \
            else None
        if s["celestial"] is None:
            s.pop("celestial")  # the frame's own default axes
    if s.get("dut1", 0.0) is None:  # the UT1 - UTC a Cartesian file was made with
        s["dut1"] = float(recorded(ds, DUT1_ATTR, 0.0)) if to == "rotating" else 0.0
    if s.get("basis") == "local":
        s.pop("celestial", None)
        s.pop("dut1", None)
    if rounds_as_computed(s.get("frame", EARTH), s.get("basis", "local")):
        s["precision"] = precision  # rounded as computed: no float64 copy to narrow
    return (to_inertial if to == "inertial" else to_rotating)(ds, **s)


def _named_frame(ds: xr.Dataset, settings: dict) -> dict:
    """A frame given by name in the settings (plain data), made for this Dataset."""
    if isinstance(settings.get("frame"), str):
        from frameshift.frames.named import frame_from_name

        settings = {**settings, "frame": frame_from_name(settings["frame"], ds)}
    return settings


def _terms(ds: xr.Dataset, *, keep_input: bool = False, **settings) -> xr.Dataset:
    result = _accelerations()(ds, **_named_frame(ds, settings))
    attrs = {**ds.attrs, **result.attrs}
    set_conventions(attrs)
    if keep_input:  # the input's variables as they were, the terms beside them
        clash = sorted(set(result.data_vars) & set(ds.variables))
        if clash:
            raise ConventionError(
                f"the input already has variables named like the terms ({clash}); "
                "they cannot be kept beside them",
                variable=clash[0],
                expected="no input variable named like a term",
                found=", ".join(clash),
            )
        return ds.assign(dict(result.data_vars)).assign_attrs(attrs)
    return result.assign_attrs(attrs)


register_operation("convert", _convert, rounds=True)
register_operation("terms", _terms)


def convert_operation(
    to: str = "inertial",
    *,
    basis: str = "local",
    celestial: str | None = "cirs",
    velocity: Mapping[str, str] | Sequence[Mapping[str, str]] | None = None,
    height: float | str | None = None,
    dut1: float | None = 0.0,
    frame: str | None = None,
    **coordinates: str,
) -> Operation:
    """An operation that calls :func:`frameshift.to_inertial` or :func:`frameshift.to_rotating`.

    ``basis="auto"`` takes the basis from each file (Cartesian positions and
    velocities on a ``component`` axis, or local components); ``celestial=None``
    and ``dut1=None`` take the inertial axes (``inertial_axes``) and the UT1 - UTC
    (``ut1_minus_utc_seconds``) a Cartesian file records when converting back.
    ``frame`` names the frame (:func:`frameshift.frames.named.frame_from_name`:
    ``"mars"``, ``"table:10 rpm"``, ``"table:<rate variable>"``...); default the Earth.

    Examples
    --------
    >>> convert_operation("inertial", basis="cartesian").settings["basis"]
    'cartesian'
    """
    check_choice("to", to, ("inertial", "rotating"))
    check_choice("basis", basis, ("local", "cartesian", "auto"))
    if celestial is not None:
        from frameshift.frames.celestial import CELESTIAL_AXES

        check_choice("celestial", celestial, CELESTIAL_AXES)
    if dut1 is not None:
        check_dut1(dut1)
    check_height(height)
    settings = {"to": to, "basis": basis, "celestial": celestial, "velocity": _mapping(velocity),
                "height": height, "dut1": None if dut1 is None else float(dut1),
                **_coordinate_settings(coordinates)}
    if frame is not None:
        settings["frame"] = str(frame)
    return Operation("convert", settings)


def terms_operation(
    terms: Sequence[str] | None = None,
    *,
    traditional: bool = False,
    velocity: Mapping[str, str] | Sequence[Mapping[str, str]] | None = None,
    height: float | str | None = None,
    include_parameters: bool = False,
    totals: Sequence[str] = ("full",),
    keep_input: bool = False,
    frame: str | None = None,
    **coordinates: str,
) -> Operation:
    """An operation that calls ``frameshift.apparent_accelerations``.

    ``keep_input=True`` writes the input's variables, as they were, beside the
    terms, so that a budget needs one file. ``frame`` names the frame as for
    :func:`convert_operation`.

    Examples
    --------
    >>> terms_operation(["coriolis"]).settings["terms"]
    ['coriolis']
    """
    if terms is not None:
        terms = check_terms([terms] if isinstance(terms, str) else list(terms))
    check_height(height)
    settings = {"terms": list(terms) if terms else None, "traditional": bool(traditional),
                "velocity": _mapping(velocity), "height": height,
                "include_parameters": bool(include_parameters), "totals": list(totals),
                "keep_input": bool(keep_input), **_coordinate_settings(coordinates)}
    if frame is not None:
        settings["frame"] = str(frame)
    return Operation("terms", settings)


def _mapping(velocity) -> dict[str, str] | list[dict[str, str]] | None:
    """``velocity=`` as plain data: one mapping, or a list of them for several sets.

    Each mapping is checked here, before any file is opened.
    """
    if velocity is None:
        return None
    if isinstance(velocity, Mapping):
        return check_velocity_set(velocity)
    if isinstance(velocity, str) or not all(isinstance(v, Mapping) for v in velocity):
        raise ConventionError(
            f"velocity must name components, e.g. eastward=U,northward=V; found {velocity!r}",
            variable="velocity", expected="a mapping of component to variable name",
            found=type(velocity).__name__,
        )
    sets = [check_velocity_set(v) for v in velocity]
    return sets[0] if len(sets) == 1 else sets


_COORDINATE_KEYS = ("latitude", "longitude", "vertical", "time")


def _coordinate_settings(coordinates: Mapping[str, str]) -> dict[str, str]:
    unknown = set(coordinates) - set(_COORDINATE_KEYS)
    if unknown:
        raise ConventionError(
            f"unknown coordinate option(s) {sorted(unknown)}; valid: {list(_COORDINATE_KEYS)}",
            variable=sorted(unknown)[0],
            expected=", ".join(_COORDINATE_KEYS),
            found=", ".join(sorted(unknown)),
        )
    return {k: v for k, v in coordinates.items() if v is not None}


def _accelerations() -> Callable[..., xr.Dataset]:
    try:
        from frameshift.dynamics.accelerations import apparent_accelerations
    except ImportError as exc:
        raise MissingInputError(
            "apparent-acceleration terms are not available in this frameshift installation "
            "(frameshift.accelerations.apparent_accelerations not found)",
            variable="terms",
            expected="frameshift.accelerations.apparent_accelerations",
            found="absent",
        ) from exc
    return apparent_accelerations


# --- how to run -----------------------------------------------------------------------
@dataclass(frozen=True)
class RunOptions:
    """Settings of a batch run (see ``frameshift convert --help``)."""

    out_dir: Path
    overwrite: bool = False
    fail_fast: bool = False
    quiet: bool = False
    memory: int = field(default_factory=io.default_memory)
    workers: int | None = None
    scheduler: str | None = None
    combine: bool = False
    combined_name: str = "combined.nc"
    command: str = "frameshift"
    verify: bool = False  # check outputs against their recorded checksum before skipping
    progress: bool | None = None  # None: only when stderr is a terminal and not quiet
    precision: str = "input"  # storage of computed variables: the input's, or "float64"
    output_format: str | None = None  # "netcdf" or "zarr"; None: by the output's suffix
    sync: bool = True  # outputs synced to disk before they are renamed into place

    def show_progress(self) -> bool:
        if self.quiet:
            return False
        return sys.stderr.isatty() if self.progress is None else self.progress


@dataclass
class Outcome:
    """What happened to one job: ``written``, ``skipped``, ``failed`` or ``interrupted``."""

    job: Job
    status: str
    reason: str = ""
    variable: str | None = None
    expected: str | None = None
    found: str | None = None
    seconds: float = 0.0
    signum: int | None = None  # the signal that interrupted the run, if any
    sets: int = 0
    warnings: tuple[str, ...] = ()  # what the job warned of, one line each

    def warning_lines(self) -> list[str]:
        """One line per warning, naming the input (control characters escaped)."""
        return [printable(f"warning: {self.job.source}: {w}") for w in self.warnings]

    def line(self) -> str:
        """One line for the summary (control characters in names escaped)."""
        source = self.job.source
        if self.status == "written":
            what = f"{self.sets} velocity set{'s' * (self.sets != 1)}, " if self.sets else ""
            text = f"wrote {self.job.output} from {source} ({what}{self.seconds:.1f} s)"
        elif self.status == "skipped":
            text = f"skipped {self.job.output}: {self.reason}"
        else:
            where = f" (variable {self.variable!r})" if self.variable else ""
            text = f"{self.status.upper()} {source}{where}: {self.reason}"
        return printable(text)


@dataclass
class Summary:
    """The outcomes of a run, in order."""

    outcomes: list[Outcome] = field(default_factory=list)

    def count(self, status: str) -> int:
        return sum(o.status == status for o in self.outcomes)

    @property
    def exit_code(self) -> int:
        """0 if nothing failed, 130 if interrupted (128 + the signal number), else 1."""
        if self.count("interrupted"):
            signums = [o.signum for o in self.outcomes if o.signum]
            return 128 + signums[0] if signums else 130
        return 1 if self.count("failed") else 0

    def totals(self) -> str:
        parts = [f"{self.count(s)} {s}" for s in ("written", "skipped", "failed", "interrupted")
                 if self.count(s) or s in ("written", "failed")]
        return ", ".join(parts)


# --- inputs and outputs -----------------------------------------------------------------
# --- compute ----------------------------------------------------------------------------
@contextlib.contextmanager
def compute_context(options: RunOptions) -> Iterator[tuple[object | None, int]]:
    """Yield ``(client, parallel)``: a distributed client (or None) and tasks in flight.

    ``--scheduler`` connects to a running scheduler; ``--workers N`` starts a
    local cluster of N single-threaded worker processes, each limited to an
    equal share of the memory budget (at least 512 MiB); otherwise Dask's threaded scheduler runs.
    The client is the default scheduler inside the block, so xarray opens
    and writes files with the distributed lock.
    """
    if options.workers is not None and options.scheduler is not None:
        raise ConventionError(
            "give either --workers (start a local cluster) or --scheduler (use a running one), "
            "not both",
            variable="workers",
            expected="one of --workers, --scheduler",
            found="both",
        )
    if options.workers is None and options.scheduler is None:
        from dask.system import CPU_COUNT

        yield None, int(CPU_COUNT)
        return
    from distributed import Client, LocalCluster

    with contextlib.ExitStack() as stack:
        if options.scheduler is not None:
            try:
                client = stack.enter_context(Client(options.scheduler, timeout="20s"))
            except (OSError, TimeoutError, ValueError) as exc:
                raise ConventionError(
                    f"cannot reach the Dask scheduler {options.scheduler!r}: {_one_line(exc)}",
                    variable="scheduler",
                    expected="the address of a running scheduler, e.g. tcp://host:8786",
                    found=options.scheduler,
                ) from exc
        else:
            if options.workers < 1:
                raise ConventionError(
                    f"--workers must be at least 1; found {options.workers}",
                    variable="workers",
                    expected=">= 1",
                    found=str(options.workers),
                )
            cluster = stack.enter_context(LocalCluster(
                n_workers=options.workers, threads_per_worker=1, processes=True,
                memory_limit=max(options.memory // options.workers, _WORKER_FLOOR),
                dashboard_address=None, silence_logs=logging.ERROR,
            ))
            client = stack.enter_context(Client(cluster))
        yield client, max(1, sum(client.nthreads().values()))


def _computer(client: object | None, bar_factory: Callable) -> Callable[[object], None]:
    def compute(delayed) -> None:
        if client is not None:
            client.compute(delayed, sync=True)
            return
        from dask.callbacks import Callback

        graph = delayed.__dask_graph__()
        stores = {k for k in graph if "store-map" in _key_name(k)}
        with bar_factory(len(stores) or len(graph)) as bar:
            def posttask(key, result, dsk, state, worker_id):
                if not stores or key in stores:
                    bar.update(1)

            with Callback(posttask=posttask):
                delayed.compute()

    return compute


def count_sets(result: xr.Dataset, target: str | None = None) -> int:
    """How many velocity sets an operation converted (to ``target``) or decomposed.

    Counted from what the result says of itself: one Cartesian velocity, one
    eastward (or x) component in the target frame, or one ``velocity_variables``
    group of terms per set.

    Examples
    --------
    >>> count_sets(xr.Dataset())
    0
    """
    sets = set()
    for name, var in result.variables.items():
        attrs = var.attrs
        if "rotating_frame_variables" in attrs:  # one Cartesian velocity per set
            sets.add(("cartesian", name))
        elif (attrs.get("velocity_component") in ("eastward", "x")
              and attrs.get("reference_frame") == target):
            sets.add(("local", name))
        elif "velocity_variables" in attrs:  # a term variable names the set it came from
            sets.add(("terms", attrs["velocity_variables"]))
    return len(sets)


def _key_name(key: object) -> str:
    return str(key[0] if isinstance(key, tuple) else key)


# --- the run ----------------------------------------------------------------------------
def process(
    job: Job,
    operation: Operation,
    options: RunOptions,
    *,
    client: object | None = None,
    parallel: int = 1,
    bar_factory: Callable | None = None,
) -> Outcome:
    """Make one output; any error becomes a ``failed`` :class:`Outcome` (never a partial file).

    Warnings raised on the way (NaN at the poles, a library's note on the
    file) are kept on the outcome as one sentence each (``Outcome.warnings``),
    for the runner to print beside the file they concern.
    ``KeyboardInterrupt`` is not caught: it propagates once the temporary file is gone.
    """
    with warnings.catch_warnings(record=True) as caught:  # the filters in force still apply
        outcome = _process(job, operation, options, client=client, parallel=parallel,
                           bar_factory=bar_factory)
    said = dict.fromkeys(_warning_text(w) for w in caught
                         if not issubclass(w.category, _DEVELOPER_WARNINGS))
    if said:
        outcome = dataclasses.replace(outcome, warnings=tuple(said))
    return outcome


#: Warnings for the authors of code, not for someone running a command.
_DEVELOPER_WARNINGS = (DeprecationWarning, PendingDeprecationWarning)


def _warning_text(w: warnings.WarningMessage) -> str:
    text = " ".join(str(w.message).split())
    if issubclass(w.category, FrameshiftWarning):
        return text
    return f"{text} ({w.category.__name__})"


def _process(
    job: Job,
    operation: Operation,
    options: RunOptions,
    *,
    client: object | None,
    parallel: int,
    bar_factory: Callable | None,
) -> Outcome:
    fmt = output_format(job.output, options.output_format)
    settings = {"command": operation.command, **operation.settings,
                "precision": options.precision, "format": fmt}
    start = time.perf_counter()
    if not options.overwrite:
        current, why = io.is_current(job.output, job.inputs, settings, verify=options.verify)
        if current:
            return Outcome(job, "skipped", why)
    try:
        ds, raw = _open(job, options, parallel)
        try:
            result = operation.apply(ds, precision=options.precision)
            sets = count_sets(result, operation.settings.get("to"))
            result = _provenance(result, ds.attrs.get("history"), options.command)
            to_write, _ = io.prepare_output(result, ds, raw, precision=options.precision,
                                            target=fmt)
            io.manifest_path(job.output).unlink(missing_ok=True)
            manifest = {"inputs": job.inputs, "settings": settings,
                        "command": options.command, "checksum": options.verify}
            write = io.write_store_atomic if fmt == "zarr" else io.write_atomic
            write(to_write, job.output, manifest=manifest, sync=options.sync,
                  compute=_computer(client, bar_factory or _no_bar))
        finally:
            ds.close()
            if raw is not None:
                raw.close()
    except FrameshiftError as exc:
        reason = _one_line(exc)
        return Outcome(job, "failed", reason, exc.variable, exc.expected, exc.found,
                       time.perf_counter() - start)
    except OSError as exc:  # the file system, said plainly
        where = f" {exc.filename!r}" if exc.filename else ""
        return Outcome(job, "failed", f"cannot read or write{where}: {exc.strerror or exc}",
                       seconds=time.perf_counter() - start)
    except Exception as exc:  # one file's failure must not stop the others
        return Outcome(job, "failed", f"{type(exc).__name__}: {_one_line(exc)}",
                       seconds=time.perf_counter() - start)
    return Outcome(job, "written", seconds=time.perf_counter() - start, sets=sets)


def _open(job: Job, options: RunOptions, parallel: int) -> tuple[xr.Dataset, xr.Dataset | None]:
    """The job's input, or one plain sentence when it is not a readable NetCDF file."""
    try:
        return io.open_input(list(job.inputs), memory=options.memory, parallel=parallel,
                             combine=options.combine)
    except FrameshiftError:
        raise
    except (OSError, ValueError, TypeError, RuntimeError, KeyError, IndexError) as exc:
        text = _one_line(exc)
        if "did not find a match" in text or "Unknown file format" in text:
            text = "not a NetCDF file"
        elif len(text) > 200:
            text = text[:197] + "..."
        raise UnsupportedInputError(
            f"cannot read the input as NetCDF: {text}",
            expected="a readable NetCDF file", found=text,
        ) from exc


def _one_line(exc: BaseException) -> str:
    return " ".join(str(exc).split()) or type(exc).__name__


def _provenance(result: xr.Dataset, old_history: str | None, command: str) -> xr.Dataset:
    """History gains exactly one line: date, frameshift version, command, what was done."""
    from frameshift._version import __version__

    new = str(result.attrs.get("history", ""))
    if old_history and new.startswith(str(old_history)):
        new = new[len(str(old_history)):]
    done = [line.split(": ", 1)[-1] for line in new.strip().splitlines() if line.strip()]
    now = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    line = f"{now} frameshift {__version__}: {command}"
    if done:
        line += f" [{'; '.join(done)}]"
    attrs = dict(result.attrs)
    attrs["history"] = f"{old_history}\n{line}" if old_history else line
    set_conventions(attrs)
    return result.assign_attrs(attrs)


@contextlib.contextmanager
def _no_bar(total: int):
    class _Quiet:
        def update(self, n: int) -> None:
            pass

    yield _Quiet()


def run(
    paths: Sequence[str | os.PathLike], operation: Operation, options: RunOptions
) -> Summary:
    """Apply ``operation`` to every input; return a :class:`Summary` (never raises per file).

    Errors in the arguments themselves (no inputs, an output that would
    replace an input, bad cluster options) raise before any file is touched.

    Examples
    --------
    >>> op = convert_operation("inertial")
    >>> run(["data_demo"], op, RunOptions(out_dir=Path("out")))  # doctest: +SKIP
    """
    if options.workers is not None and (options.scheduler is not None or options.workers < 1):
        with compute_context(options):  # raises its ConventionError before anything is made
            pass
    jobs = plan_jobs(paths, options.out_dir, combine=options.combine,
                     combined_name=options.combined_name)
    if options.output_format is not None:
        jobs = [Job(j.inputs, with_format_suffix(j.output, options.output_format))
                for j in jobs]
    safefiles.check_writable(options.out_dir)
    removed = safefiles.remove_stale(job.output for job in jobs)
    summary = Summary()
    if removed and not options.quiet:
        print(f"removed {len(removed)} temporary file(s) left by an earlier, killed run",
              file=sys.stderr)
    show = options.show_progress()
    from tqdm.auto import tqdm

    def bar_factory(total: int):
        return tqdm(total=total, unit="chunk", leave=False, disable=not show,
                    desc="  chunks", file=sys.stderr)

    with sigterm_as_interrupt(), compute_context(options) as (client, parallel), tqdm(
        total=len(jobs), unit="file", disable=not show, file=sys.stderr, desc=operation.command
    ) as files_bar:
        for job in jobs:
            try:
                outcome = process(job, operation, options, client=client, parallel=parallel,
                                  bar_factory=bar_factory)
            except Terminated:
                summary.outcomes.append(Outcome(job, "interrupted", "terminated (SIGTERM)",
                                                signum=int(signal.SIGTERM)))
                break
            except KeyboardInterrupt:
                summary.outcomes.append(Outcome(job, "interrupted", "interrupted by the user"))
                break
            summary.outcomes.append(outcome)
            files_bar.update(1)
            for line in outcome.warning_lines():  # shown even with --quiet, as failures are
                files_bar.write(line, file=sys.stderr)
            if not options.quiet and outcome.status != "failed":
                files_bar.write(outcome.line(), file=sys.stdout)
            if outcome.status == "failed" and options.fail_fast:
                break
    return summary
