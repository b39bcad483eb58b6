"""The batch runner: inputs and the output tree, failures, re-runs, clusters, combining."""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from frameshift import batch, io
from frameshift.errors import ConventionError, MissingInputError
from tests.test_io import _fail_after

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
WIND = {"eastward": "wspd_u", "northward": "wspd_v"}


@pytest.fixture
def tree(tmp_path) -> Path:
    """Inputs in a small tree: two demo files at the top, one in a subfolder."""
    root = tmp_path / "in"
    (root / "sub").mkdir(parents=True)
    shutil.copy(DEMO / "tiny_example.nc", root / "tiny_example.nc")
    shutil.copy(DEMO / "shelf_mooring.nc", root / "shelf_mooring.nc")
    shutil.copy(DEMO / "balloon_track.nc", root / "sub" / "balloon_track.nc")
    (root / "notes.txt").write_text("not NetCDF")
    return root


def _options(out: Path, **kw) -> batch.RunOptions:
    return batch.RunOptions(out_dir=out, progress=False, quiet=True, **kw)


def test_directories_recurse_and_outputs_mirror_the_tree(tree, tmp_path):
    jobs = batch.plan_jobs([tree], tmp_path / "out")
    rel = sorted(str(j.output.relative_to(tmp_path / "out")) for j in jobs)
    assert rel == ["shelf_mooring.nc", "sub/balloon_track.nc", "tiny_example.nc"]
    globbed = batch.plan_jobs([str(tree / "**" / "*.nc")], tmp_path / "out")
    assert sorted(j.output.name for j in globbed) == sorted(Path(r).name for r in rel)


def test_inputs_that_match_nothing_are_refused(tmp_path):
    with pytest.raises(MissingInputError) as info:
        batch.find_inputs([tmp_path / "absent.nc"])
    assert info.value.variable.endswith("absent.nc")
    with pytest.raises(MissingInputError):
        batch.find_inputs([str(tmp_path / "*.nc")])


def test_outputs_never_replace_inputs(tree):
    with pytest.raises(ConventionError) as info:
        batch.plan_jobs([tree / "tiny_example.nc"], tree)
    assert info.value.variable == "out"
    with pytest.raises(ConventionError):  # an output folder inside the input folder
        batch.plan_jobs([tree], tree / "converted")


def test_one_failure_does_not_stop_the_others(tmp_path):
    # a file whose velocities carry no standard names fails; the next one is still done
    broken = tmp_path / "in" / "anonymous.nc"
    broken.parent.mkdir()
    with xr.open_dataset(DEMO / "packed_knots.nc") as ds:
        anonymous = ds.copy()
        for name in ("wspd_u", "wspd_v", "cur_u", "cur_v"):
            anonymous[name].attrs.pop("standard_name")
        anonymous.to_netcdf(broken)
    files = [broken, DEMO / "tiny_example.nc"]
    summary = batch.run(files, batch.convert_operation(), _options(tmp_path / "o"))
    status = {o.job.inputs[0].name: o for o in summary.outcomes}
    assert status["tiny_example.nc"].status == "written"
    failed = status["anonymous.nc"]
    assert failed.status == "failed" and failed.variable == "velocity"
    assert "no eastward/northward velocity pair" in failed.reason
    assert "anonymous.nc" in failed.line() and "velocity" in failed.line()
    assert summary.exit_code == 1
    assert not (tmp_path / "o" / "anonymous.nc").exists()
    stopped = batch.run(files, batch.convert_operation(), _options(tmp_path / "p", fail_fast=True))
    assert [o.status for o in stopped.outcomes] == ["failed"]


def test_interrupted_write_then_rerun_then_skip(tree, tmp_path, monkeypatch):
    out = tmp_path / "out"
    op = batch.convert_operation(basis="cartesian")
    final = out / "shelf_mooring.nc"
    with monkeypatch.context() as m:
        _fail_after(m, 1, RuntimeError)
        summary = batch.run([tree / "shelf_mooring.nc"], op, _options(out))
    assert [o.status for o in summary.outcomes] == ["failed"]
    assert "injected failure" in summary.outcomes[0].reason
    assert not final.exists() and list(out.iterdir()) == []  # no partial file, no temp file
    again = batch.run([tree / "shelf_mooring.nc"], op, _options(out))
    assert [o.status for o in again.outcomes] == ["written"]
    stamp = final.stat().st_mtime_ns
    third = batch.run([tree / "shelf_mooring.nc"], op, _options(out))
    assert [o.status for o in third.outcomes] == ["skipped"]
    assert final.stat().st_mtime_ns == stamp
    forced = batch.run([tree / "shelf_mooring.nc"], op, _options(out, overwrite=True))
    assert [o.status for o in forced.outcomes] == ["written"]


def test_ctrl_c_stops_the_run_and_leaves_no_partial_file(tree, tmp_path, monkeypatch):
    _fail_after(monkeypatch, 1, KeyboardInterrupt)
    summary = batch.run([tree], batch.convert_operation(), _options(tmp_path / "out"))
    assert [o.status for o in summary.outcomes] == ["interrupted"]
    assert summary.exit_code == 130
    assert not any(p.suffix == ".nc" or p.suffix == ".part"
                   for p in (tmp_path / "out").rglob("*"))


def test_changed_settings_or_inputs_redo_the_output(tree, tmp_path):
    out = tmp_path / "out"
    src = tree / "tiny_example.nc"
    batch.run([src], batch.convert_operation(), _options(out))
    redo = batch.run([src], batch.convert_operation(basis="cartesian"), _options(out))
    assert [o.status for o in redo.outcomes] == ["written"]
    src.touch()
    again = batch.run([src], batch.convert_operation(basis="cartesian"), _options(out))
    assert [o.status for o in again.outcomes] == ["written"]


def _values(path: Path) -> dict[str, np.ndarray]:
    with xr.open_dataset(path) as ds:
        return {str(n): v.values for n, v in ds.variables.items()}


def _assert_same_files(a: Path, b: Path) -> None:
    va, vb = _values(a), _values(b)
    assert va.keys() == vb.keys()
    for name in va:
        np.testing.assert_array_equal(va[name], vb[name], err_msg=name)


def test_small_memory_budget_streams_in_many_chunks_with_the_same_result(tmp_path):
    op = batch.convert_operation(basis="cartesian")
    batch.run([DEMO / "global_winds.nc"], op, _options(tmp_path / "big"))
    small = _options(tmp_path / "small", memory=2 * 10**6)
    batch.run([DEMO / "global_winds.nc"], op, small)
    _assert_same_files(tmp_path / "big" / "global_winds.nc", tmp_path / "small" / "global_winds.nc")
    ds, raw = io.open_input(DEMO / "global_winds.nc", memory=2 * 10**6, parallel=2)
    with ds, raw:
        assert len(ds["ua"].data.chunks[0]) > 1  # really streamed, not one chunk
    import netCDF4

    with netCDF4.Dataset(tmp_path / "small" / "global_winds.nc") as nc:
        stored = nc["velocity"].chunking()
        assert stored != "contiguous" and np.prod(stored) * 8 <= io.DISK_CHUNK_BYTES


def test_local_cluster_gives_the_serial_result(tmp_path):
    # --workers 2: two single-threaded worker processes (about 1 s to start)
    op = batch.convert_operation(basis="cartesian")
    batch.run([DEMO / "shelf_mooring.nc"], op, _options(tmp_path / "serial"))
    summary = batch.run([DEMO / "shelf_mooring.nc"], op,
                        _options(tmp_path / "cluster", workers=2, memory=10**6))
    assert [o.status for o in summary.outcomes] == ["written"]
    _assert_same_files(tmp_path / "serial" / "shelf_mooring.nc",
                       tmp_path / "cluster" / "shelf_mooring.nc")


def test_running_scheduler_gives_the_serial_result(tmp_path):
    # --scheduler ADDRESS, here an in-process cluster (processes=False) to stay quick
    from distributed import LocalCluster

    op = batch.convert_operation()
    batch.run([DEMO / "balloon_track.nc"], op, _options(tmp_path / "serial"))
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                      dashboard_address=None) as cluster:
        summary = batch.run([DEMO / "balloon_track.nc"], op,
                            _options(tmp_path / "cluster", scheduler=cluster.scheduler_address,
                                     memory=10**5))
    assert [o.status for o in summary.outcomes] == ["written"]
    _assert_same_files(tmp_path / "serial" / "balloon_track.nc",
                       tmp_path / "cluster" / "balloon_track.nc")


def test_workers_and_scheduler_together_are_refused(tmp_path):
    with pytest.raises(ConventionError) as info:
        batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(),
                  _options(tmp_path, workers=2, scheduler="tcp://127.0.0.1:1"))
    assert info.value.variable == "workers"


def test_combine_along_time_equals_the_whole_file(tmp_path):
    whole = DEMO / "shelf_mooring.nc"
    parts = tmp_path / "parts"
    parts.mkdir()
    with xr.open_dataset(whole) as ds:
        ds.isel(time=slice(0, 200)).to_netcdf(parts / "a.nc")
        ds.isel(time=slice(200, None)).to_netcdf(parts / "b.nc")
    op = batch.convert_operation()
    batch.run([whole], op, _options(tmp_path / "one"))
    summary = batch.run([parts], op, _options(tmp_path / "two", combine=True,
                                                 combined_name="joined.nc"))
    assert [o.status for o in summary.outcomes] == ["written"]
    assert len(summary.outcomes[0].job.inputs) == 2
    a, b = _values(tmp_path / "one" / "shelf_mooring.nc"), _values(tmp_path / "two" / "joined.nc")
    for name in ("u", "v", "w", "time", "depth"):
        np.testing.assert_array_equal(a[name], b[name], err_msg=name)


def test_terms_operation_writes_the_library_result(tmp_path):
    from frameshift import apparent_accelerations

    summary = batch.run([DEMO / "tiny_example.nc"],
                        batch.terms_operation(["coriolis"], traditional=True),
                        _options(tmp_path / "t"))
    assert [o.status for o in summary.outcomes] == ["written"]
    with xr.open_dataset(DEMO / "tiny_example.nc") as ds:
        expected = apparent_accelerations(ds, terms=["coriolis"], traditional=True)
    with xr.open_dataset(tmp_path / "t" / "tiny_example.nc") as got:
        for name in expected.data_vars:
            # the float64 result rounded once to the input's float32 (precision policy)
            assert got[name].encoding["dtype"] == np.float32
            np.testing.assert_array_equal(got[name].values,
                                          expected[name].values.astype(np.float32))
            assert got[name].attrs["units"] == "m s-2"


@pytest.mark.parametrize("basis", ["local", "cartesian"])
def test_nothing_is_computed_before_the_write(basis):
    # Dask-backed input stays lazy: the operation and the output plan compute nothing
    from tests.helpers import raise_if_dask_computes

    ds, raw = io.open_input(DEMO / "shelf_mooring.nc", memory=10**6)
    with ds, raw, raise_if_dask_computes():
        result = batch.convert_operation(basis=basis).apply(ds)
        to_write, how = io.prepare_output(result, ds, raw)
    assert all(to_write[n].chunks for n, h in how.items() if h == "computed" and to_write[n].ndim
               and n != "component")


def test_unreadable_file_fails_alone(tmp_path):
    bad = tmp_path / "in" / "broken.nc"
    bad.parent.mkdir()
    bad.write_text("this is not NetCDF")
    shutil.copy(DEMO / "tiny_example.nc", tmp_path / "in" / "tiny_example.nc")
    summary = batch.run([tmp_path / "in"], batch.convert_operation(), _options(tmp_path / "o"))
    status = {o.job.inputs[0].name: o.status for o in summary.outcomes}
    assert status == {"broken.nc": "failed", "tiny_example.nc": "written"}
    assert not (tmp_path / "o" / "broken.nc").exists()


def test_360_day_calendar_time_is_copied_as_stored(tmp_path):
    import netCDF4

    from tests.helpers import station_dataset
    from tests.test_io import assert_same_stored

    ds = station_dataset().drop_vars("time")
    ds = ds.assign_coords(time=("time", np.array([0.0, 0.25, 359.75, 360.0]),
                                {"standard_name": "time", "units": "days since 2030-01-01",
                                 "calendar": "360_day"}))
    src = tmp_path / "model.nc"
    ds.to_netcdf(src)
    summary = batch.run([src], batch.convert_operation(), _options(tmp_path / "o"))
    assert [o.status for o in summary.outcomes] == ["written"]
    with netCDF4.Dataset(src) as a, netCDF4.Dataset(tmp_path / "o" / "model.nc") as b:
        a.set_auto_maskandscale(False)
        b.set_auto_maskandscale(False)
        for name in ("time", "depth", "lat", "lon"):
            assert_same_stored(a[name], b[name])
        np.testing.assert_array_equal(a["v"][:], b["v"][:])  # northward: values unchanged
        assert b["time"].calendar == "360_day"


def test_convert_rounds_to_the_runs_precision_and_others_ignore_it():
    # Plumbing, no outside value (the values are checked against IEEE 754 rounding in
    # tests/test_transforms.py): the run's storage precision reaches the operations
    # registered as rounding
    # (convert, local basis): float32 in gives float32 computed, in the one pass;
    # terms are computed in float64 whatever it is, and narrowed on writing
    from tests.helpers import grid_dataset

    ds = grid_dataset()
    ds["ua"] = ds["ua"].astype(np.float32)
    converted = batch.convert_operation().apply(ds, precision="input")
    assert converted["ua"].dtype == np.float32
    assert batch.convert_operation().apply(ds, precision="float64")["ua"].dtype == np.float64
    cartesian = batch.convert_operation(basis="cartesian").apply(ds, precision="input")
    assert cartesian["velocity"].dtype == np.float64  # not a rounding case: left to storage
    assert "convert" in batch.ROUNDING and "terms" not in batch.ROUNDING
    terms = batch.terms_operation().apply(ds, precision="input")
    assert terms["coriolis_eastward"].dtype == np.float64


@pytest.mark.filterwarnings("default::frameshift.errors.FrameshiftWarning")  # Python's default
def test_warnings_of_a_job_follow_the_filters_in_force(tmp_path):
    # a job's warnings are kept on its outcome, one each, unless the caller's own
    # warning filters silence them (Python's warnings module: filters decide, PEP 230)
    import warnings

    from frameshift import FrameshiftWarning
    from tests.helpers import grid_dataset

    ds = grid_dataset(nlat=3)
    ds = ds.assign_coords(lat=("lat", np.array([-90.0, 0.0, 90.0]), ds["lat"].attrs))
    ds.to_netcdf(tmp_path / "poles.nc")
    op = batch.convert_operation()
    shown = batch.run([tmp_path / "poles.nc"], op, _options(tmp_path / "a")).outcomes[0]
    assert len(shown.warnings) == 1 and "pole" in shown.warnings[0]
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", category=FrameshiftWarning)
        quiet = batch.run([tmp_path / "poles.nc"], op, _options(tmp_path / "b")).outcomes[0]
    assert quiet.status == "written" and quiet.warnings == ()
