"""``frameshift demo`` end to end: the files it writes, the figures, and the table it prints.

One demo run (through the command line entry point) and one re-run are shared by
the module. Outside sources: the IOOS compliance checker's CF 1.11 suite for
every NetCDF file the demo writes (``assert_cf_clean``).
"""

from __future__ import annotations

import contextlib
import importlib.util
import io
import shutil
import sys
from decimal import Decimal
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
import xarray as xr

from frameshift import batch, demo
from frameshift.cli import main
from tests.helpers import assert_real_png
from tests.test_io import assert_cf_clean

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
NAMES = [p.name for p in demo.demo_files(DEMO)]  # the Earth files, then examples/
STEPS = [step for step, _ in demo.STEPS]
REFUSED = ("packed_knots.nc", "inertial_cartesian")  # noleap calendar: no Cartesian axes
#: every refusal by design: also the lab table, whose fields stay on its x/y axes
REFUSED_ALL = {REFUSED, ("tank_spinup.nc", "inertial_cartesian")}
NETCDF = [f"{step}/{name}" for step in STEPS for name in NAMES if (name, step) not in REFUSED_ALL]
COMPONENTS = ("eastward", "northward", "upward", "x", "y", "z")
HAVE_MATPLOTLIB = importlib.util.find_spec("matplotlib") is not None
#: the outputs removed before the re-run, which must remake them
REMOVED = ("terms/tiny_example.nc", f"figures/{demo.FIGURES[0]}")


def _demo(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


@pytest.fixture(scope="module")
def run(tmp_path_factory) -> SimpleNamespace:
    """The demo through the CLI, then (two outputs removed) again through ``demo.run``."""
    out = tmp_path_factory.mktemp("demo") / "out"
    code, stdout, stderr = _demo(["demo", "--out", str(out)])
    for rel in REMOVED:
        (out / rel).unlink(missing_ok=True)
    again = io.StringIO()
    report = demo.run(out, stream=again)
    return SimpleNamespace(out=out, code=code, stdout=stdout, stderr=stderr, report=report,
                           rerun=again.getvalue())


def _expected_files(out: Path, figures: bool = HAVE_MATPLOTLIB) -> set[Path]:
    files = {out / rel for rel in NETCDF}
    if figures:
        files |= {out / "figures" / name for name in demo.FIGURES}
    return files


def _on_disk(out: Path) -> set[Path]:
    return {p for p in out.rglob("*") if p.is_file() and p.suffix in (".nc", ".png")}


def test_cli_exits_0_and_writes_every_listed_file(run):
    assert run.code == 0, run.stderr
    assert run.stderr == ""
    assert _on_disk(run.out) == _expected_files(run.out)
    for rel in NETCDF:
        assert (run.out / f"{rel}.frameshift.json").is_file(), rel
    assert not list(run.out.rglob("*.part"))  # no half-written figure left behind
    assert set(run.report.outputs) == _expected_files(run.out)
    # the file listing printed at the end names every output
    for text in (run.stdout, run.rerun):
        listing = text.split("NetCDF files (each with", 1)[1]
        for path in _expected_files(run.out):
            assert path.name in listing
        assert f"{len(NETCDF)} NetCDF files" in text


@pytest.mark.parametrize("rel", NETCDF)
def test_netcdf_output_passes_the_cf_checker(run, rel):
    assert_cf_clean(run.out / rel)  # IOOS compliance checker, cf:1.11: no errors, no warnings


@pytest.mark.skipif(not HAVE_MATPLOTLIB, reason="the plot extra is not installed")
@pytest.mark.parametrize("name", demo.FIGURES)
def test_figure_is_a_real_png(run, name):
    assert_real_png(run.out / "figures" / name)


def _table(text: str) -> dict[str, list[str]]:
    """The rows of the printed summary table: data set -> its cells."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("data set "))
    head = lines[start].split("  ")
    assert [c.strip() for c in head if c.strip()] == [
        "data set", *(f"|{t}|" for t in demo.TERMS), "inertial speed", "files"]
    rows = {}
    for line in lines[start + 2:]:
        if not line or line.startswith(" "):
            break
        cells = line.split()
        rows[cells[0]] = cells[1:]
    return rows


def _agrees(printed: str, value: float | None) -> bool:
    """``printed`` is ``value`` to the precision it is printed with."""
    if value is None:
        return printed == "—"
    if printed == "0":
        return value == 0.0
    last_digit = 10.0 ** Decimal(printed).as_tuple().exponent
    return abs(float(printed) - value) <= 0.5 * last_digit * (1 + 1e-9)


def _largest_term(ds: xr.Dataset, term: str) -> float | None:
    parts = [ds[f"{term}_{c}"].astype(np.float64) for c in COMPONENTS if f"{term}_{c}" in ds]
    if not parts:  # a plane has no curvature term
        return None
    return float(np.sqrt(sum(p**2 for p in parts).max()))


def _largest_speed(path: Path) -> float | None:
    if not path.exists():
        return None
    with xr.open_dataset(path) as ds:
        return float(np.sqrt((ds["velocity"].astype(np.float64) ** 2).sum("component")).max())


@pytest.mark.parametrize("which", ["stdout", "rerun"])
def test_printed_numbers_are_the_ones_in_the_files(run, which):
    table = _table(getattr(run, which))
    assert sorted(table) == sorted(NAMES)
    for name, cells in table.items():
        assert len(cells) == len(demo.TERMS) + 2, cells
        with xr.open_dataset(run.out / "terms" / name) as terms:
            for term, cell in zip(demo.TERMS, cells, strict=False):
                assert _agrees(cell, _largest_term(terms, term)), (name, term, cell)
        speed = _largest_speed(run.out / "inertial_cartesian" / name)
        assert _agrees(cells[-2], speed), (name, cells[-2], speed)
        assert (speed is None) == ((name, "inertial_cartesian") in REFUSED_ALL)
        stem = name.removesuffix(".nc")
        mine = [p for p in _on_disk(run.out) if p.name == name or p.name.startswith(stem + "_")]
        assert int(cells[-1]) == len(mine), (name, cells[-1], mine)


def test_report_holds_the_same_numbers_as_the_files(run):
    assert [s.file for s in run.report.datasets] == NAMES
    for s in run.report.datasets:
        with xr.open_dataset(run.out / "terms" / s.file) as terms:
            for term in demo.TERMS:
                expected = _largest_term(terms, term)
                if expected is None:
                    assert s.terms[term] is None, (s.file, term)
                    continue
                np.testing.assert_allclose(s.terms[term], expected,
                                           rtol=1e-12, atol=0, err_msg=f"{s.file} {term}")
        speed = _largest_speed(run.out / "inertial_cartesian" / s.file)
        if speed is None:
            assert s.inertial_speed is None and "refused by design" in s.speed_note
        else:
            np.testing.assert_allclose(s.inertial_speed, speed, rtol=1e-12)
    # the total is the sum of the terms, so its largest size is at most the sum of theirs
    for s in run.report.datasets:
        parts = sum(s.terms[t] for t in demo.TERMS if t != "total" and s.terms[t] is not None)
        assert 0 < s.terms["total"] <= parts * (1 + 1e-12), s


def test_the_refused_cartesian_conversion_is_explained(run):
    for text in (run.stdout, run.rerun):
        assert _table(text)["packed_knots.nc"][-2] == "—"
        notes = text.split("packed_knots.nc: no inertial speed:", 1)[1].split("\n\n")[0]
        assert "noleap" in notes and "refused by design" in notes
    row = next(r for r in run.report.rows if (r.file, r.step) == REFUSED)
    assert row.status == "refused" and row.output is None and "noleap" in row.reason


def test_each_step_prints_one_line(run):
    total = len(STEPS) + len(demo.FIGURES)
    for text in (run.stdout, run.rerun):
        steps = [line for line in text.splitlines() if line.startswith("[")]
        if HAVE_MATPLOTLIB:
            assert [s.split("]")[0] for s in steps] == [f"[{k}/{total}" for k in
                                                          range(1, total + 1)]
        for line in steps[:len(STEPS)]:
            assert " ... " in line and line.endswith(" s)"), line
    first = [line for line in run.stdout.splitlines() if line.startswith("[")]
    assert f"{len(NAMES)} files ... {len(NAMES)} written (" in first[0], first[0]
    refused = len(REFUSED_ALL)
    assert f"{len(NAMES) - refused} written, {refused} refused (" in first[1]
    if HAVE_MATPLOTLIB:
        for line, name in zip(first[len(STEPS):], demo.FIGURES, strict=True):
            assert f"figures/{name} (" in line


def test_rerun_keeps_up_to_date_outputs_and_remakes_the_rest(run):
    status = {(r.file, r.step): r.status for r in run.report.rows}
    removed = ("tiny_example.nc", "terms")
    for refused in REFUSED_ALL:
        assert status.pop(refused) == "refused"
    assert status.pop(removed) == "written"
    assert set(status.values()) == {"skipped"}
    assert (run.out / REMOVED[0]).is_file()
    if HAVE_MATPLOTLIB:
        assert [f.status for f in run.report.figures] == ["written"] * len(demo.FIGURES)
        assert (run.out / REMOVED[1]).is_file()
    assert f"1 written, {len(NAMES) - 1} up to date" in run.rerun
    assert _table(run.rerun) == _table(run.stdout)
    assert run.report.exit_code == 0


def _without_matplotlib(monkeypatch) -> None:
    """Make every import of matplotlib (and its submodules) fail, as if not installed."""
    for name in [m for m in sys.modules if m == "matplotlib" or m.startswith("matplotlib.")]:
        monkeypatch.setitem(sys.modules, name, None)
    monkeypatch.setitem(sys.modules, "matplotlib", None)


def test_without_matplotlib_writes_netcdf_and_says_figures_were_skipped(
        tmp_path, monkeypatch, capsys):
    _without_matplotlib(monkeypatch)
    out = tmp_path / "out"
    stale = out / "figures" / demo.FIGURES[0]  # from an earlier run: not this run's output
    stale.parent.mkdir(parents=True)
    stale.write_bytes(b"old")
    assert main(["demo", "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert _on_disk(out) == _expected_files(out, figures=False) | {stale}
    assert stale.read_bytes() == b"old"  # left alone
    assert "figures skipped: matplotlib is not installed" in text
    assert "pip install 'frameshift[plot]'" in text
    assert f"{len(NETCDF)} NetCDF files" in text and "and 0 figures" in text
    assert sorted(_table(text)) == sorted(NAMES)


def test_a_failing_step_is_reported_and_the_others_go_on(tmp_path, monkeypatch, capsys):
    data = tmp_path / "data"
    data.mkdir()
    shutil.copy(DEMO / "tiny_example.nc", data)
    monkeypatch.setattr(demo, "find_demo_data", lambda: data)
    real = demo._operation

    def broken_terms(step: str, name: str) -> batch.Operation:
        if step == "terms":
            return batch.terms_operation(velocity={"eastward": "nope", "northward": "nope"})
        return real(step, name)

    monkeypatch.setattr(demo, "_operation", broken_terms)
    out = tmp_path / "out"
    assert main(["demo", "--out", str(out), "--quiet"]) == 1
    captured = capsys.readouterr()
    assert captured.out == ""  # --quiet: nothing but the failures, on stderr
    failed = [line for line in captured.err.splitlines() if "FAILED" in line]
    assert failed[0].startswith("frameshift demo: FAILED tiny_example.nc terms:")
    assert "nope" in failed[0]
    if HAVE_MATPLOTLIB:  # the figures' inputs (the other demo files) were not written
        assert len(failed) == 1 + len(demo.FIGURES)
    assert (out / "inertial_local" / "tiny_example.nc").is_file()
    assert (out / "inertial_cartesian" / "tiny_example.nc").is_file()
    assert not (out / "terms" / "tiny_example.nc").exists()

    report = demo.run(out, stream=io.StringIO())
    assert report.exit_code == 1
    assert [r.status for r in report.rows] == ["skipped", "skipped", "failed"]
    (summary,) = report.datasets
    assert summary.terms == dict.fromkeys(demo.TERMS)
    assert summary.inertial_speed == pytest.approx(
        _largest_speed(out / "inertial_cartesian" / "tiny_example.nc"), rel=1e-12)
