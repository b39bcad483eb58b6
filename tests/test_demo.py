"""``frameshift demo`` end to end: the files it writes, the figures, and the table it prints.

One demo run (through the command line entry point) and one re-run are shared by
the module. Outside sources: the IOOS compliance checker's CF 1.11 suite for
every NetCDF file the demo writes (``assert_cf_clean``) and the CF standard name
table v93; for the diagnostics, WGS 84 and IERS constants, pyproj's WGS 84
geodesy, Barnes et al. (1983), Rosen & Salstein (1983) and Gonella (1972), each
named beside its check.
"""

from __future__ import annotations

import contextlib
import importlib.util
import io
import itertools
import shutil
import sys
from decimal import Decimal
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
import xarray as xr

from frameshift import batch, demo, demo_diagnostics
from frameshift.cli import main
from tests.helpers import (
    assert_real_png,
    assert_udunits,
    cf_standard_names,
    written_standard_names,
)
from tests.test_io import assert_cf_clean

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
NAMES = [p.name for p in demo.demo_files(DEMO)]  # the Earth files, then examples/
STEPS = [step for step, _ in demo.STEPS]
REFUSED = ("packed_knots.nc", "inertial_cartesian")  # noleap calendar: no Cartesian axes
#: every refusal by design: also the lab table, whose fields stay on its x/y axes
REFUSED_ALL = {REFUSED, ("tank_spinup.nc", "inertial_cartesian")}
CONVERTED = [f"{step}/{name}" for step in STEPS for name in NAMES
             if (name, step) not in REFUSED_ALL]
#: the diagnostics: the angular-momentum series and the rotary spectrum
DIAGNOSED = [f"{d.folder}/{d.file}" for d in demo_diagnostics.DIAGNOSTICS]
NETCDF = CONVERTED + DIAGNOSED
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


def test_what_the_demo_writes_counted_by_hand():
    # 8 files x 3 steps, less 2 refusals by design, plus the 2 diagnostics; 6 figures
    assert (len(CONVERTED), len(DIAGNOSED), len(NETCDF)) == (22, 2, 24)
    assert DIAGNOSED == ["momentum/global_winds.nc", "rotary_spectrum/shelf_mooring.nc"]
    assert len(demo.FIGURES) == 6


@pytest.mark.parametrize("rel", NETCDF)
def test_netcdf_output_passes_the_cf_checker(run, rel):
    assert_cf_clean(run.out / rel)  # IOOS compliance checker, cf:1.11: no errors, no warnings
    with xr.open_dataset(run.out / rel) as ds:
        assert written_standard_names(ds) <= cf_standard_names()  # CF standard name table v93


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
    ndiag = len(DIAGNOSED)
    total = len(STEPS) + ndiag + len(demo.FIGURES)
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
    for line, step in zip(first[len(STEPS):len(STEPS) + ndiag], demo_diagnostics.DIAGNOSTICS,
                          strict=True):
        assert f"{step.what}: {step.file} ... 1 written (" in line, line
    if HAVE_MATPLOTLIB:
        for line, name in zip(first[len(STEPS) + ndiag:], demo.FIGURES, strict=True):
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


# --- the diagnostics: printed numbers, and outside facts -----------------------------------
#: Ω, rad s-1: IERS Conventions 2010, Table 1.1; WGS 84 (NIMA TR8350.2)
OMEGA = 7.292115e-5
#: standard gravity, m s-2 (3rd CGPM, 1901)
STANDARD_GRAVITY = 9.80665
#: WGS 84 equatorial radius, m (NIMA TR8350.2)
WGS84_A = 6378137.0


def _diagnostics_table(text: str) -> list[list[str]]:
    """The rows of the printed diagnostics table: data set, diagnostic, value, units."""
    lines = text.split("\nDiagnostics, read from the files in", 1)[1].splitlines()
    assert lines[1].split() == ["data", "set", "diagnostic", "value", "units"]
    rows = []
    for line in lines[2:]:
        if not line.strip():
            break
        rows.append([c.strip() for c in line.split("  ") if c.strip()])
    return rows


@pytest.mark.parametrize("which", ["stdout", "rerun"])
def test_printed_diagnostics_are_the_ones_in_the_files(run, which):
    rows = _diagnostics_table(getattr(run, which))
    assert rows == [[v.file, v.quantity, v.text, v.units] for v in run.report.diagnostics]
    printed = {quantity: value for _, quantity, value, _ in rows}
    with xr.open_dataset(run.out / "momentum" / "global_winds.nc") as ds:
        rel = ds["angular_momentum_relative"].values.astype(np.float64)
        frame = ds["angular_momentum_frame"].values.astype(np.float64)
        lod = ds["length_of_day_change"].values.astype(np.float64)
    assert _agrees(printed["angular momentum, relative part, time mean"], rel.mean())
    assert _agrees(printed["angular momentum, frame part, time mean"], frame.mean())
    assert _agrees(printed["relative part, range over the 16 times"], rel.max() - rel.min())
    assert _agrees(printed["length-of-day change, range over the 16 times"],
                   lod.max() - lod.min())
    with xr.open_dataset(run.out / "rotary_spectrum" / "shelf_mooring.nc") as ds:
        at = ds.sel(depth=10.0)
        peak = float(ds.frequency[int(at.clockwise.argmax("frequency"))])
        assert _agrees(printed["period of the clockwise peak, 10 m"], 1 / peak / 3600)
        assert _agrees(printed["inertial period 2π/|f| at 47.3° N"],
                       float(ds.inertial_period) / 3600)
        assert _agrees(printed["share of the variance at 0.9-1.1 |f|, clockwise, 10 m"],
                       float(at.inertial_band_fraction))


def _wgs84_cells(lat: np.ndarray, lon: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Areas (m2) of the grid's cells on WGS 84, per latitude, and each row's distance
    from the axis (m), both from pyproj, independently of frameshift."""
    import pyproj

    step, rows = np.diff(lon), np.diff(lat)
    assert np.allclose(step, step[0]) and np.allclose(rows, rows[0])  # a regular grid
    # cell edges half-way between the points, the outer ones clipped at the poles
    edges = np.clip(np.concatenate([[lat[0] - rows[0] / 2], (lat[1:] + lat[:-1]) / 2,
                                    [lat[-1] + rows[0] / 2]]), -90.0, 90.0)
    geod = pyproj.Geod(ellps="WGS84")
    along = np.linspace(-step[0] / 2, step[0] / 2, 41)  # parallels drawn as many short geodesics
    areas = []
    for low, high in itertools.pairwise(edges):
        lons = np.concatenate([along, along[::-1]])
        lats = np.concatenate([np.full(along.size, low), np.full(along.size, high)])
        areas.append(abs(geod.polygon_area_perimeter(lons, lats)[0]))
    to_ecef = pyproj.Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
    x, y, _ = to_ecef.transform(np.zeros_like(lat), lat, np.zeros_like(lat))
    return np.array(areas), np.hypot(x, y)


def test_angular_momentum_series_against_outside_facts(run):
    with xr.open_dataset(DEMO / "global_winds.nc") as src:
        ps = src["ps"].values.astype(np.float64)
        lat, lon, times = src["lat"].values, src["lon"].values, src["time"].values
    with xr.open_dataset(run.out / "momentum" / "global_winds.nc") as ds:
        np.testing.assert_array_equal(ds["time"].values, times)  # a series: one per time
        for name in ("angular_momentum_relative", "angular_momentum_frame",
                     "angular_momentum_absolute"):
            assert ds[name].attrs["units"] == "kg m2 s-1"
            assert_udunits(ds[name].attrs["units"])  # UDUNITS-2 (cf_units)
        assert ds["mass"].attrs["units"] == "kg"
        assert ds["length_of_day_change"].attrs["units"] == "ms"
        out = {n: ds[n].values.astype(np.float64) for n in ds.data_vars}
    area, axis = _wgs84_cells(lat, lon)
    dm = ps / STANDARD_GRAVITY * area[None, :, None]
    # a column's mass is ps / g (hydrostatic balance; common practice): the pressure
    # layers reach from the top (p = 0) down to the surface pressure
    np.testing.assert_allclose(out["mass"], dm.sum(axis=(1, 2)), rtol=1e-5)
    # the frame part is Ω ∫ r² cos²φ dm (AMS Glossary, "absolute angular momentum"), r cos φ
    # the distance from the axis (WGS 84, pyproj); midpoint sums on 5° cells are good to
    # about Δφ²/24 (3e-4), stored in float64 (a sum over the grid)
    frame = OMEGA * (dm * axis[None, :, None] ** 2).sum(axis=(1, 2))
    np.testing.assert_allclose(out["angular_momentum_frame"], frame, rtol=1e-3)
    # a thin spherical shell of mass M turning at Ω: (2/3) M a² Ω (moment of inertia of a
    # shell, any mechanics handbook); the flattening (1/298) and the uneven surface
    # pressure move it by a few 1e-4 here
    shell = 2.0 / 3.0 * out["mass"] * WGS84_A**2 * OMEGA
    np.testing.assert_allclose(out["angular_momentum_frame"], shell, rtol=5e-3)
    # absolute = relative + frame (AMS Glossary: m = (u + Ω r cos φ) r cos φ)
    np.testing.assert_allclose(out["angular_momentum_absolute"],
                               out["angular_momentum_relative"] + out["angular_momentum_frame"],
                               rtol=1e-6)
    # ΔLOD = 86400 s × Δχ3, χ3 = (0.70 I33 + 1.00 h / Ω) / C_m with C_m = 7.04e37 kg m2
    # (Barnes, Hide, White & Wilson 1983, Proc. R. Soc. Lond. A 387); I33 = frame part / Ω
    c_m = 7.04e37
    rel, frame_part = out["angular_momentum_relative"], out["angular_momentum_frame"]
    lod = out["length_of_day_change"]
    expected = 86400e3 / c_m * (0.70 * (frame_part - frame_part[0]) / OMEGA
                                + 1.00 * (rel - rel[0]) / OMEGA)
    # stored in float64 (sums); the bound, set when they were float32 (8e-6 ms), still holds
    np.testing.assert_allclose(lod - lod[0], expected, rtol=0, atol=5e-5)
    # the wind term alone: about 1.68e-29 s of length of day per kg m2 s-1 the air gains
    # (Rosen & Salstein 1983, J. Geophys. Res. 88, as the project's reference values quote
    # them for the solid Earth's loss): more westerly momentum, a longer day
    wind = out["chi3_motion"] * 86400e3
    np.testing.assert_allclose(wind - wind[0], (rel - rel[0]) * 1.68e-29 * 1e3, rtol=1e-2,
                               atol=2e-6)
    assert (rel[-1] - rel[0]) * (lod[-1] - lod[0]) > 0


def test_rotary_spectrum_of_the_mooring_against_outside_facts(run):
    with xr.open_dataset(DEMO / "shelf_mooring.nc") as src:
        phi = float(src["lat"])
        dt = float(np.diff(src["time"].values).mean() / np.timedelta64(1, "s"))
        variance = (src["u"].astype(np.float64).var("time")
                    + src["v"].astype(np.float64).var("time")).values
    with xr.open_dataset(run.out / "rotary_spectrum" / "shelf_mooring.nc") as ds:
        cw = ds["clockwise"].transpose("depth", "frequency").values.astype(np.float64)
        ccw = ds["counterclockwise"].transpose("depth", "frequency").values.astype(np.float64)
        freq = ds["frequency"].values.astype(np.float64)
        f_file = float(ds["inertial_frequency"])
        period = float(ds["inertial_period"])
        assert ds["clockwise"].attrs["units"] == "m2 s-1"  # variance per s-1 of frequency
    # f = 2 Ω sin φ (AMS Glossary, "Coriolis parameter"), in cycles per second; Ω of WGS 84
    f_cycles = 2.0 * OMEGA * np.sin(np.deg2rad(phi)) / (2.0 * np.pi)
    np.testing.assert_allclose(f_file, f_cycles, rtol=1e-6)  # float32 storage
    # inertial period 2π/|f| (AMS Glossary, "inertial period"): 16.28 h at 47.3° N
    np.testing.assert_allclose(period, 1.0 / f_cycles, rtol=1e-6)
    assert round(period / 3600.0, 2) == 16.28
    # the frequencies run from 0 to the Nyquist frequency 1/(2 Δt), evenly (Welch 1967)
    step = np.diff(freq)
    np.testing.assert_allclose(step, step[0], rtol=1e-5)
    np.testing.assert_allclose(freq[[0, -1]], [0.0, 0.5 / dt], rtol=1e-6, atol=1e-12)
    near = int(np.argmin(np.abs(freq - f_cycles)))
    for k in range(cw.shape[0]):
        # near-inertial motion turns clockwise in the northern hemisphere (Gonella 1972,
        # Deep-Sea Res. 19; common practice): the clockwise part peaks at f, within the
        # spectral resolution (one frequency step), and dwarfs the counter-clockwise part there
        assert abs(freq[int(np.argmax(cw[k]))] - f_cycles) <= step[0], k
        assert cw[k, near] > 10.0 * ccw[k, near], k
    # Parseval: both parts together integrate to the variance of u plus that of v; Welch's
    # method removes each segment's mean and the storm's record is not stationary, which
    # costs up to about 10 % here
    np.testing.assert_allclose((cw + ccw).sum(axis=1) * step[0], variance, rtol=0.15)
