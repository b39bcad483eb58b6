"""What ``frameshift inspect`` reports, and library messages in command-line words.

:func:`describe` says what frameshift finds in a Dataset and whether each
operation would work (run lazily, nothing computed); :func:`inspect_files`
prints it for files; :func:`cli_wording` rewrites the Python spellings of
library messages (``velocity={...}``, ``basis='cartesian'``) as the
command-line options that say the same.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

from frameshift.errors import FrameshiftError
from frameshift.paths import printable

if TYPE_CHECKING:
    import xarray as xr

    from frameshift.batch import Operation

__all__ = ["cli_wording", "describe", "inspect_files"]

# Python spellings in library messages, and the command-line options that say the same
_WORDING = [
    (re.compile(r"velocity=\{'x'[^}]*\}(?: \(optionally 'z'\))?"),
     "--velocity x=NAME,y=NAME[,z=NAME]"),  # a table's axes
    (re.compile(r"velocity=\{[^}]*\}"), "--velocity eastward=NAME,northward=NAME[,upward=NAME]"),
    (re.compile(r"frameshift\.to_rotating(\(\))?"), "'frameshift convert --to rotating'"),
    (re.compile(r"frameshift\.to_inertial(\(\))?"), "'frameshift convert --to inertial'"),
    (re.compile(r"to_rotating\(basis='cartesian'\)"), "convert --to rotating --basis cartesian"),
    (re.compile(r"to_inertial\(basis='cartesian'\)"), "convert --basis cartesian"),
    (re.compile(r"\bbasis='(\w+)'"), r"--basis \1"),
    (re.compile(r"\bcelestial='(\w+)'"), r"--celestial \1"),
    (re.compile(r"\bcelestial=(?=\W)"), "--celestial "),
    (re.compile(r"\b(velocity|height|terms|totals)= and (velocity|height|terms|totals)="),
     r"--\1 and --\2"),
    (re.compile(r"\b(velocity|height|terms|totals|traditional|dut1|latitude|longitude|vertical|"
                r"time|frame)=(?=['\"])"), r"--\1 "),
    (re.compile(r"\b(velocity|height|terms|totals|traditional|dut1)=(?=\W|$)"), r"--\1"),
    (re.compile(r"\bpass --height"), "give --height"),
    # a library message's own hint for the shell is redundant once it speaks in options
    (re.compile(r"\s*\((?:--|frameshift )[^()]*on the command line\)"), ""),
]


def cli_wording(text: str) -> str:
    """A library message in command-line words: options instead of Python arguments.

    Examples
    --------
    >>> cli_wording("pick one with velocity={'eastward': ..., 'northward': ...}")
    'pick one with --velocity eastward=NAME,northward=NAME[,upward=NAME]'
    >>> cli_wording("name them, e.g. velocity={'x': 'u', 'y': 'v'} (optionally 'z')")
    'name them, e.g. --velocity x=NAME,y=NAME[,z=NAME]'
    >>> cli_wording("Convert it back with frameshift.to_rotating first")
    "Convert it back with 'frameshift convert --to rotating' first"
    """
    text = " ".join(str(text).split())
    for pattern, words in _WORDING:
        text = pattern.sub(words, text)
    return text


def describe(
    ds: xr.Dataset,
    velocity: Mapping[str, str] | None = None,
    *,
    height: float | str | None = None,
    celestial: str | None = None,
    dut1: float | None = None,
    frame: str | None = None,
    **coordinates: str,
) -> dict:
    """What frameshift finds in ``ds`` and what each operation would do with it.

    Detection is :func:`frameshift.detect.find_layout`; whether an operation
    would be refused is found by running it lazily (no data are computed),
    with the options that decide it (``velocity``, ``height``, ``celestial``,
    ``dut1``, ``frame`` (a name, as ``--frame`` takes), and ``latitude``,
    ``longitude``, ``vertical``, ``time`` naming coordinates; a Cartesian
    file's own ``inertial_axes`` and UT1 - UTC when not given), and keeping
    its error.

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
            layout = read_layout(ds, velocity, height=height, target=target, **coordinates)
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
    report["operations"] = _operations(ds, velocity, height, celestial, dut1,
                                       {**coordinates, "frame": frame})
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
        "notes": [cli_wording(n) for n in vset.notes],
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


def _operations(ds: xr.Dataset, velocity: Mapping[str, str] | None, height, celestial,
                dut1, coordinates: Mapping[str, str]) -> dict:
    from frameshift import batch

    ops = {}
    for to in ("inertial", "rotating"):
        for basis in ("local", "cartesian"):
            label = f"convert --to {to} --basis {basis}"
            if basis == "local":
                op = batch.convert_operation(to, basis=basis, velocity=velocity, height=height,
                                             **coordinates)
            elif to == "inertial":
                op = batch.convert_operation(to, basis=basis, velocity=velocity, height=height,
                                             celestial=celestial or "cirs", dut1=dut1 or 0.0,
                                             **coordinates)
            else:  # the file's position and velocity, on the axes it records
                op = batch.convert_operation(to, basis=basis, celestial=celestial, dut1=dut1,
                                             frame=coordinates.get("frame"))
            ops[label] = _try(op, ds)
    ops["terms"] = _try(batch.terms_operation(velocity=velocity, height=height, **coordinates),
                        ds)
    return ops


def _try(operation: Operation, ds: xr.Dataset) -> str:
    try:
        operation.apply(ds)
    except FrameshiftError as exc:
        return "refused: " + cli_wording(str(exc))
    except (ValueError, TypeError, KeyError) as exc:
        return f"refused: {type(exc).__name__}: {cli_wording(str(exc))}"
    return "ok"


def _reason(exc: BaseException | None) -> str:
    return cli_wording(str(exc))


def inspect_files(inputs: Sequence[str], *, velocity: Mapping[str, str] | None = None,
                       as_json: bool = False, settings: Mapping | None = None) -> int:
    """Print what :func:`describe` finds in each input (text, or JSON with ``as_json``);
    return 0, or 1 if an input could not be read.

    Examples
    --------
    >>> inspect_files(["data_demo/tiny_example.nc"])  # doctest: +SKIP
    """
    import json

    from frameshift.io import open_input
    from frameshift.paths import find_inputs

    reports, status = [], 0
    for file, _ in find_inputs(inputs):
        entry: dict = {"file": str(file)}
        try:
            ds, raw = open_input(file)
            raw.close()
            with ds:
                entry.update(describe(ds, velocity, **dict(settings or {})))
        except FrameshiftError as exc:
            entry["error"] = cli_wording(str(exc))
            status = 1
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
