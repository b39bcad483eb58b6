"""``frameshift demo``: run the library on the bundled, invented demo files.

Every demo file is converted to the inertial frame on local axes and on
inertial Cartesian axes, and its apparent-acceleration terms are written,
each through the same safe writer the command line uses. A short table
says what was computed (or why a step was refused: the model calendar of
``packed_knots.nc`` has no real time, so its Cartesian conversion is
refused by design). The data are invented; see ``data_demo/README.md``.
"""

from __future__ import annotations

import importlib.resources
import os
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import TextIO

import numpy as np
import xarray as xr

from frameshift import batch
from frameshift.errors import MissingInputError
from frameshift.units import parse_units, scale_to

__all__ = ["DemoRow", "find_demo_data", "run"]

#: Components to use where a demo file holds more than one velocity set.
_VELOCITY = {"packed_knots.nc": {"eastward": "wspd_u", "northward": "wspd_v"}}


@dataclass(frozen=True)
class DemoRow:
    """One line of the demo table."""

    file: str
    step: str
    status: str
    result: str


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


def _steps(name: str) -> list[tuple[str, batch.Operation]]:
    velocity = _VELOCITY.get(name)
    return [
        ("inertial_local", batch.convert_operation("inertial", velocity=velocity)),
        ("inertial_cartesian",
         batch.convert_operation("inertial", basis="cartesian", velocity=velocity)),
        ("terms", batch.terms_operation(velocity=velocity)),
    ]


def run(
    out_dir: str | os.PathLike = "frameshift_demo_output",
    *,
    overwrite: bool = False,
    quiet: bool = False,
    stream: TextIO | None = None,
) -> list[DemoRow]:
    """Convert every demo file into ``out_dir``; print and return the table.

    Outputs go to ``out_dir/<step>/<file>`` for the steps ``inertial_local``,
    ``inertial_cartesian`` and ``terms``; up-to-date outputs are kept unless
    ``overwrite``.

    Examples
    --------
    >>> import tempfile
    >>> rows = run(tempfile.mkdtemp(), quiet=True)
    >>> rows[0].step, rows[0].status
    ('inertial_local', 'written')
    """
    out_dir = Path(out_dir)
    data = find_demo_data()
    options = batch.RunOptions(out_dir=out_dir, overwrite=overwrite, quiet=True,
                               progress=False, command=f"frameshift demo --out {out_dir}")
    rows = []
    for file in sorted(data.glob("*.nc")):
        for step, operation in _steps(file.name):
            job = batch.Job((file,), out_dir / step / file.name)
            outcome = batch.process(job, operation, options)
            if outcome.status == "failed":
                rows.append(DemoRow(file.name, step, "refused", outcome.reason))
            else:
                rows.append(DemoRow(file.name, step, outcome.status,
                                    _result(step, file, job.output, operation)))
    if not quiet:
        _print_table(rows, stream or sys.stdout)
    return rows


def _result(step: str, source: Path, output: Path, operation: batch.Operation) -> str:
    with xr.open_dataset(output) as out:
        if step == "inertial_local":
            with xr.open_dataset(source) as ds:
                name = _eastward(ds, operation)
                unit = parse_units(name, ds[name].attrs.get("units"), "speed")
                shift = (out[name] - ds[name]).values * scale_to(unit, "m s-1")
            return (f"{name}: eastward shift {np.nanmin(shift):.1f} to "
                    f"{np.nanmax(shift):.1f} m s-1")
        if step == "inertial_cartesian":
            speed = np.sqrt((out["velocity"] ** 2).sum("component")).values
            return f"inertial speed {np.nanmin(speed):.1f} to {np.nanmax(speed):.1f} m s-1"
        total = sum(out[f"total_{c}"] ** 2 for c in ("eastward", "northward", "upward"))
        biggest = float(np.sqrt(total).max())
        coriolis = float(np.abs(out["coriolis_northward"]).max())
        return (f"|total| up to {biggest:.3g} m s-2; "
                f"|Coriolis northward| up to {coriolis:.3g} m s-2")


def _eastward(ds: xr.Dataset, operation: batch.Operation) -> str:
    from frameshift.detect import find_velocity

    return find_velocity(ds, operation.settings["velocity"]).eastward


def _print_table(rows: list[DemoRow], stream: TextIO) -> None:
    widths = [max(len(getattr(r, f)) for r in rows) for f in ("file", "step", "status")]
    head = ("file", "step", "status", "result")
    print("  ".join(h.ljust(w) for h, w in zip(head, [*widths, 0], strict=True)).rstrip(),
          file=stream)
    for r in rows:
        cells = [r.file.ljust(widths[0]), r.step.ljust(widths[1]), r.status.ljust(widths[2])]
        print("  ".join([*cells, r.result]), file=stream)
