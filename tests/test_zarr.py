"""Zarr stores in and out, with the guarantees NetCDF files have.

Outside sources: the Zarr v2 storage specification (consolidated metadata in
``.zmetadata``, read here by zarr-python itself), IEEE 754 binary32 for the
float32 round-trip bound, and the IOOS compliance checker's CF 1.11 suite on
the NetCDF files made from the stores.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from frameshift import batch, io, safefiles
from frameshift.cli import main
from tests.helpers import raise_if_dask_computes
from tests.test_io import assert_cf_clean

zarr = pytest.importorskip("zarr")

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
WIND = "eastward=wspd_u,northward=wspd_v"
OMEGA_A = 7.292115e-5 * 6378137.0  # Ω a, WGS 84 (NIMA TR8350.2), m s-1


def _run(*args) -> int:
    return main([*map(str, args), "--quiet"])


@pytest.fixture(scope="module")
def stores(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("zarr")
    steps = [
        ("convert", DEMO / "packed_knots.nc", "--velocity", WIND, "--format", "zarr",
         "--out", root / "local"),
        ("convert", root / "local" / "packed_knots.zarr", "--velocity", WIND, "--to", "rotating",
         "--out", root / "local_back"),
        ("convert", DEMO / "tiny_example.nc", "--basis", "cartesian", "--format", "zarr",
         "--out", root / "cart"),
        ("convert", root / "cart" / "tiny_example.zarr", "--to", "rotating", "--format", "netcdf",
         "--out", root / "cart_back"),
        ("terms", DEMO / "tiny_example.nc", "--format", "zarr", "--out", root / "terms"),
    ]
    for step in steps:
        assert _run(*step) == 0, step
    return root


def test_outputs_are_consolidated_zarr_stores(stores):
    for path in (stores / "local" / "packed_knots.zarr", stores / "cart" / "tiny_example.zarr",
                 stores / "terms" / "tiny_example.zarr"):
        assert (path / ".zmetadata").is_file()  # Zarr v2 consolidated metadata
        group = zarr.open_consolidated(str(path), mode="r")
        assert len(list(group.array_keys())) > 0
        assert io.manifest_path(path).is_file()
    # no temporary store left beside them
    assert not [p for p in stores.rglob(".*.part")]


def test_zarr_round_trip_restores_the_input(stores):
    with xr.open_dataset(DEMO / "packed_knots.nc") as a, \
            xr.open_zarr(stores / "local_back" / "packed_knots.zarr") as b:
        for name in ("wspd_u", "wspd_v"):
            assert b[name].encoding["dtype"] == np.float32 or name == "wspd_v"
            # packed int16 knots in: float32 out; one rounding each way (README bound),
            # Ω a in knots (1 knot = 1852/3600 m s-1, by definition)
            bound = 2.0**-23 * (float(np.nanmax(np.abs(a[name]))) + OMEGA_A * 3600 / 1852)
            assert float(np.nanmax(np.abs(a[name] - b[name]))) <= bound
        assert b["time"].encoding["calendar"] == "noleap"


def test_untouched_variables_are_unchanged_in_the_store(stores):
    with xr.open_dataset(DEMO / "packed_knots.nc", decode_cf=False) as a, \
            xr.open_zarr(stores / "local" / "packed_knots.zarr", decode_cf=False) as b:
        for name in ("cur_u", "cur_v", "sea_water_temperature", "time", "lat", "lon"):
            assert b[name].dtype == a[name].dtype, name
            np.testing.assert_array_equal(b[name].values, a[name].values, err_msg=name)
            assert b[name].attrs == a[name].attrs, name


def test_cartesian_store_is_labelled_and_converts_back(stores):
    with xr.open_zarr(stores / "cart" / "tiny_example.zarr") as cart:
        assert cart["component"].values.tolist() == ["x", "y", "z"]
        assert cart["velocity"].dims[0] == "component"
        assert cart["velocity"].sel(component="z").ndim == cart["velocity"].ndim - 1
    back = stores / "cart_back" / "tiny_example.nc"
    with xr.open_dataset(DEMO / "tiny_example.nc") as a, xr.open_dataset(back) as b:
        for name in ("eastward_wind", "northward_wind"):
            # two float32 roundings (position and velocity), README bound
            bound = 2.0**-22 * (float(np.abs(a[name]).max()) + OMEGA_A)
            assert float(np.abs(a[name] - b[name]).max()) <= bound
    assert_cf_clean(back)  # IOOS compliance checker, cf:1.11


def test_rerun_skips_and_overwrite_redoes(stores, capsys):
    args = ("convert", DEMO / "tiny_example.nc", "--basis", "cartesian", "--format", "zarr",
            "--out", stores / "cart")
    assert main([*map(str, args)]) == 0
    assert "skipped" in capsys.readouterr().out
    before = (stores / "cart" / "tiny_example.zarr" / ".zmetadata").stat().st_mtime_ns
    assert main([*map(str, args), "--overwrite", "--quiet"]) == 0
    assert (stores / "cart" / "tiny_example.zarr" / ".zmetadata").stat().st_mtime_ns > before


@pytest.mark.parametrize("swap", ["exchange", "two renames"])
def test_a_failed_store_write_leaves_nothing(tmp_path, monkeypatch, swap):
    class Boom(RuntimeError):
        pass

    def fail(*args, **kwargs):
        raise Boom("injected failure mid-write")

    ds = xr.Dataset({"a": ("x", np.arange(4.0))}).chunk({"x": 2})
    target = tmp_path / "a.zarr"
    io.write_store_atomic(ds, target)  # an earlier store, kept if the next write fails
    if swap == "two renames":  # a system without an atomic exchange
        monkeypatch.setattr(safefiles, "exchange", lambda a, b: False)
    monkeypatch.setattr(io.os, "replace", fail)  # the manifest's rename (or the store's) fails
    with pytest.raises(Boom):
        io.write_store_atomic(ds * 2, target, manifest={"inputs": [], "settings": {},
                                                        "command": "test"})
    monkeypatch.undo()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.zarr"]
    with xr.open_zarr(target) as back:
        np.testing.assert_array_equal(back["a"].values, np.arange(4.0))


def test_a_replaced_store_is_never_missing(tmp_path, monkeypatch):
    # Where the system can swap two directories in one step (Linux renameat2), the
    # new store replaces the old without a moment in which neither is at the path.
    probe_a, probe_b = tmp_path / "p", tmp_path / "q"
    probe_a.mkdir()
    probe_b.mkdir()
    if not safefiles.exchange(probe_a, probe_b):
        pytest.skip("no atomic directory exchange on this system")
    ds = xr.Dataset({"a": ("x", np.arange(4.0))})
    target = tmp_path / "a.zarr"
    io.write_store_atomic(ds, target)
    moves = []
    real_replace = os.replace

    def spy(src, dst):
        moves.append((Path(src), Path(dst)))
        return real_replace(src, dst)

    monkeypatch.setattr(io.os, "replace", spy)
    io.write_store_atomic(ds * 3, target)
    monkeypatch.undo()
    assert not any(target in pair for pair in moves)  # never moved away, never moved in
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.zarr", "p", "q"]
    with xr.open_zarr(target) as back:
        np.testing.assert_array_equal(back["a"].values, 3 * np.arange(4.0))


def test_zarr_input_stays_lazy(stores):
    ds, raw = io.open_input(stores / "cart" / "tiny_example.zarr", memory=10**6)
    with ds, raw, raise_if_dask_computes():
        result = batch.convert_operation("rotating", basis="auto", celestial=None,
                                         dut1=None).apply(ds)
        plan, how = io.prepare_output(result, ds, raw, target="zarr")
    assert all(plan[n].chunks for n, h in how.items() if h == "computed" and plan[n].ndim)


def test_store_files_are_synced_as_written_and_not_twice(tmp_path, monkeypatch):
    # Durability before the rename (common practice: fsync, then rename into place):
    # every file of the store is synced, the chunks while the rest is still written
    # (on the sync threads), none a second time in the final pass.
    import threading

    synced: list[tuple[Path, str]] = []
    real = safefiles._fsync_file

    def spy(path):
        synced.append((Path(path), threading.current_thread().name))
        return real(path)

    monkeypatch.setattr(safefiles, "_fsync_file", spy)
    ds = xr.Dataset({"a": (("t", "x"), np.arange(40.0).reshape(8, 5))}).chunk({"t": 1})
    target = tmp_path / "a.zarr"
    io.write_store_atomic(ds, target)
    monkeypatch.undo()
    store_files = {p.relative_to(target) for p in target.rglob("*") if p.is_file()}
    # synced under the temporary name, a sibling of the target, before the rename
    inside = [(Path(*p.relative_to(tmp_path).parts[1:]), t) for p, t in synced]
    assert store_files <= {p for p, _ in inside}  # every file synced
    chunks = [(p, t) for p, t in inside if p.parent.name == "a" and not p.name.startswith(".")]
    assert len(chunks) == 8 == len({p for p, _ in chunks})  # each chunk once
    assert all(t.startswith("frameshift-sync") for _, t in chunks)  # while writing
    with xr.open_zarr(target) as back:
        np.testing.assert_array_equal(back["a"].values, ds["a"].values)


def test_sync_ahead_counts_a_file_by_its_last_sync(tmp_path):
    kept, gone = tmp_path / "kept", tmp_path / "gone"
    kept.write_bytes(b"1")
    gone.write_bytes(b"2")
    with safefiles.SyncAhead() as ahead:
        ahead.submit(kept)
        ahead.submit(gone)
        done_first = ahead._pending[-1][1].result()  # synced while it was there
        gone.unlink()
        ahead.submit(gone)  # written again and removed: the final pass decides
        assert ahead.finish() == frozenset({kept})
    assert done_first


def test_a_store_sent_to_a_worker_process_is_a_plain_store(tmp_path):
    import pickle

    from zarr.storage import LocalStore

    with safefiles.SyncAhead() as ahead:
        store = io._syncing_store_class()(tmp_path / "s.zarr", ahead=ahead)
        there = pickle.loads(pickle.dumps(store))
    assert type(there) is LocalStore and Path(there.root) == tmp_path / "s.zarr"


def test_a_store_written_by_worker_processes_is_the_serial_store(tmp_path):
    # --workers 2: the store's files are written in other processes, unseen by the
    # sync threads; the final pass syncs them, and the result is the same store
    op = batch.convert_operation()
    opts = dict(progress=False, quiet=True, output_format="zarr", memory=10**5)
    batch.run([DEMO / "balloon_track.nc"], op, batch.RunOptions(out_dir=tmp_path / "s", **opts))
    summary = batch.run([DEMO / "balloon_track.nc"], op,
                        batch.RunOptions(out_dir=tmp_path / "c", workers=2, **opts))
    assert [o.status for o in summary.outcomes] == ["written"]
    with xr.open_zarr(tmp_path / "s" / "balloon_track.zarr") as a, \
            xr.open_zarr(tmp_path / "c" / "balloon_track.zarr") as b:
        xr.testing.assert_identical(a.drop_attrs(), b.drop_attrs())
        for name in a.variables:
            np.testing.assert_array_equal(a[name].values, b[name].values)


@pytest.mark.parametrize("fmt", ["zarr", "netcdf"])
def test_no_sync_syncs_nothing_and_still_publishes_whole(tmp_path, monkeypatch, capsys, fmt):
    # --no-sync: no fsync at all (for scratch outputs, or file systems where it is
    # slow); the rename into place, the manifest and skipping on re-runs are unchanged
    calls = []
    monkeypatch.setattr(safefiles.os, "fsync", lambda fd: calls.append(fd))
    if hasattr(safefiles.os, "fdatasync"):
        monkeypatch.setattr(safefiles.os, "fdatasync", lambda fd: calls.append(fd))
    args = ["convert", DEMO / "tiny_example.nc", "--format", fmt, "--out", tmp_path / "o"]
    assert _run(*args, "--no-sync") == 0
    assert calls == []
    out = tmp_path / "o" / f"tiny_example.{'zarr' if fmt == 'zarr' else 'nc'}"
    assert io.manifest_path(out).is_file()
    assert sorted(p.name for p in (tmp_path / "o").iterdir()) == sorted(
        [out.name, io.manifest_path(out).name])  # nothing temporary left
    monkeypatch.undo()
    capsys.readouterr()
    assert main([*map(str, args)]) == 0  # synced or not, the same output: skipped
    assert "skipped" in capsys.readouterr().out


def test_no_sync_failure_still_leaves_nothing(tmp_path, monkeypatch):
    class Boom(RuntimeError):
        pass

    def fail(*args, **kwargs):
        raise Boom("injected failure mid-write")

    ds = xr.Dataset({"a": ("x", np.arange(4.0))}).chunk({"x": 2})
    monkeypatch.setattr(io.os, "replace", fail)
    for write, name in ((io.write_store_atomic, "a.zarr"), (io.write_atomic, "a.nc")):
        with pytest.raises(Boom):
            write(ds, tmp_path / name, sync=False,
                  manifest={"inputs": [], "settings": {}, "command": "test"})
    assert list(tmp_path.iterdir()) == []
