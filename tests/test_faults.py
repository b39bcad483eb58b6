"""Faults: signals, killed runs, full and read-only disks, links, paths, options, checksums.

What is checked is the rule for every output: it is complete under its
final name together with its manifest, or absent; a fault costs at most the
file being written, and a re-run finishes the job. These are facts of
robust file handling (common practice: write, fsync, rename), not of the
physics, so no outside source is named beside them.
"""

from __future__ import annotations

import contextlib
import errno
import json
import os
import shutil
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from frameshift import batch, cli, io, safefiles
from frameshift.errors import ConventionError, MissingInputError, UnsupportedInputError, WriteError

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
REPO = Path(__file__).resolve().parent.parent


def _options(out: Path, **kw) -> batch.RunOptions:
    return batch.RunOptions(out_dir=out, progress=False, quiet=True, **kw)


def _leftovers(folder: Path) -> list[Path]:
    return [p for p in folder.rglob("*") if p.name.endswith(".part")]


def _dead_pid() -> int:
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def _temp_name(final: str, pid: int, host: str | None = None) -> str:
    return f".{final}.frameshift-{host or safefiles._host()}-{pid}-x1y2.part"


# --- killed runs and signals ---------------------------------------------------------------
_SLOW_RUN = textwrap.dedent("""
    import sys, time, pathlib
    from frameshift import batch
    marker = pathlib.Path(sys.argv[1])
    original = batch._computer

    def computer(client, bar_factory):
        compute = original(client, bar_factory)

        def slow(delayed):
            marker.write_text("writing")  # the temporary file exists now
            time.sleep(60)
            compute(delayed)
        return slow

    batch._computer = computer
    from frameshift.cli import main
    sys.exit(main(sys.argv[2:]))
""")


def _start_slow_run(tmp_path: Path, out: Path) -> tuple[subprocess.Popen, Path]:
    marker = tmp_path / "marker"
    proc = subprocess.Popen(
        [sys.executable, "-c", _SLOW_RUN, str(marker), "convert", str(DEMO / "tiny_example.nc"),
         "--out", str(out), "--quiet"],
        cwd=REPO, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
    )
    deadline = time.monotonic() + 60
    while not marker.exists():
        assert proc.poll() is None, proc.communicate()
        assert time.monotonic() < deadline, "the run never reached its write"
        time.sleep(0.05)
    return proc, marker


def test_sigterm_is_handled_like_ctrl_c(tmp_path):
    out = tmp_path / "out"
    proc, _ = _start_slow_run(tmp_path, out)
    assert _leftovers(out), "the write had not started"
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 128 + signal.SIGTERM, err
    assert "terminated (SIGTERM)" in err and "Traceback" not in err
    assert not (out / "tiny_example.nc").exists()
    assert not io.manifest_path(out / "tiny_example.nc").exists()
    assert _leftovers(out) == []


def test_kill_9_leftovers_are_removed_by_the_next_run(tmp_path):
    out = tmp_path / "out"
    proc, _ = _start_slow_run(tmp_path, out)
    proc.kill()  # SIGKILL: no handler runs, the temporary file stays
    proc.communicate(timeout=60)
    stale = _leftovers(out)
    assert len(stale) == 1 and not (out / "tiny_example.nc").exists()
    summary = batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(), _options(out))
    assert [o.status for o in summary.outcomes] == ["written"]
    assert _leftovers(out) == []
    with xr.open_dataset(out / "tiny_example.nc") as ds:
        assert ds["eastward_wind"].attrs["reference_frame"] == "inertial"


def test_only_our_own_dead_temporary_files_are_removed(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    dead = _dead_pid()
    ours = out / _temp_name("tiny_example.nc", dead)
    ours_manifest = out / _temp_name("tiny_example.nc.frameshift.json", dead)
    keep = [
        out / _temp_name("tiny_example.nc", os.getppid()),  # a process still running
        out / _temp_name("tiny_example.nc", dead, host="0badf00d"),  # made on another host
        out / _temp_name("other.nc", dead),  # not an output of this run
        out / ".tiny_example.nc.mine.part",  # not named as frameshift names them
        out / "notes.part",
    ]
    for path in [ours, ours_manifest, *keep]:
        path.write_text("x")
    removed = safefiles.remove_stale([out / "tiny_example.nc"])
    assert sorted(removed) == sorted([ours, ours_manifest])
    assert all(p.exists() for p in keep) and not ours.exists()


# --- full disk, read-only folder, manifest that does not fit --------------------------------
@contextlib.contextmanager
def _mounted(folder: Path, options: str):
    folder.mkdir(parents=True, exist_ok=True)
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", options, "tmpfs", str(folder)],
                          capture_output=True)
    if done.returncode != 0:
        pytest.skip(f"cannot mount a small file system here ({done.stderr.decode().strip()}); "
                    "the simulated variants below cover the messages")
    try:
        yield folder
    finally:
        subprocess.run(["umount", "-l", str(folder)], check=False)


def _big_input(path: Path) -> Path:
    """A station file of about 3 MB of random (incompressible) values."""
    rng = np.random.default_rng(7)
    n = 200_000
    ds = xr.Dataset(
        {"u": ("time", rng.normal(size=n), {"standard_name": "eastward_wind", "units": "m s-1"}),
         "v": ("time", rng.normal(size=n), {"standard_name": "northward_wind", "units": "m s-1"})},
        coords={"time": ("time", np.datetime64("2030-01-01", "ns")
                         + np.arange(n) * np.timedelta64(1, "s")),
                "lat": ((), 10.0, {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ((), 20.0, {"standard_name": "longitude", "units": "degrees_east"})},
    )
    ds.to_netcdf(path)
    return path


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                    reason="mounting a small file system needs root")
def test_full_disk_gives_one_line_and_nothing_under_a_final_name(tmp_path, capsys):
    src = _big_input(tmp_path / "big.nc")
    with _mounted(tmp_path / "small", "size=1m") as out:
        status = cli.main(["convert", str(src), "--out", str(out), "--quiet"])
        err = capsys.readouterr().err
        assert status == 1
        failed = [line for line in err.splitlines() if line.startswith("FAILED")]
        assert len(failed) == 1 and "is full" in failed[0], err
        assert "HDF error" not in err and "Traceback" not in err
        assert sorted(os.listdir(out)) == []
        # the failed temporary file is closed, so its space is free again
        assert shutil.disk_usage(out).used < 64 * 1024


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                    reason="a read-only mount needs root (see the chmod variant)")
def test_read_only_folder_is_refused_before_any_work(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(io, "open_input", _must_not_open)
    with _mounted(tmp_path / "ro", "ro,size=1m") as out:
        status = cli.main(["convert", str(DEMO / "tiny_example.nc"), "--out", str(out)])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and "read-only" in err[0], err


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0,
                    reason="root writes into folders whatever their permissions")
def test_unwritable_folder_is_refused_before_any_work(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(io, "open_input", _must_not_open)
    out = tmp_path / "locked"
    out.mkdir()
    out.chmod(0o500)
    try:
        status = cli.main(["convert", str(DEMO / "tiny_example.nc"), "--out", str(out)])
    finally:
        out.chmod(0o700)
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and "not writable" in err[0], err


def test_disk_full_while_writing_data_is_said_plainly(tmp_path, monkeypatch):
    # simulated: the write fails with ENOSPC, as a full disk makes it
    def full(self, *args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(xr.Dataset, "to_netcdf", full)
    out = tmp_path / "out"
    summary = batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(), _options(out))
    (outcome,) = summary.outcomes
    assert outcome.status == "failed" and "is full" in outcome.reason
    assert outcome.variable == "out"
    assert list(out.iterdir()) == []


def test_manifest_that_does_not_fit_leaves_no_output(tmp_path, monkeypatch):
    # the case: the run said FAILED but the output stood under its final name
    def full(record, final, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(final))

    monkeypatch.setattr(safefiles, "_write_json", full)
    out = tmp_path / "out"
    summary = batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(), _options(out))
    assert [o.status for o in summary.outcomes] == ["failed"]
    assert "is full" in summary.outcomes[0].reason
    assert list(out.iterdir()) == []


def test_second_rename_failing_undoes_the_first(tmp_path, monkeypatch):
    real = os.replace
    calls = []

    def replace(a, b):
        calls.append(b)
        if str(b).endswith(safefiles.MANIFEST_SUFFIX):
            raise OSError(errno.EIO, os.strerror(errno.EIO), str(b))
        return real(a, b)

    monkeypatch.setattr(safefiles.os, "replace", replace)
    out = tmp_path / "out"
    summary = batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(), _options(out))
    assert [o.status for o in summary.outcomes] == ["failed"] and len(calls) == 2
    assert list(out.iterdir()) == []


def test_output_and_manifest_describe_the_same_bytes(tmp_path):
    out = tmp_path / "out"
    batch.run([DEMO / "tiny_example.nc"], batch.convert_operation(),
              _options(out, verify=True))
    final = out / "tiny_example.nc"
    record = json.loads(io.manifest_path(final).read_text())
    assert record["output"]["size"] == final.stat().st_size
    assert record["output"]["mtime_ns"] == final.stat().st_mtime_ns
    assert record["output"]["checksum"] == safefiles.file_checksum(final)
    assert record["output"]["path"] == str(final.resolve())


# --- links and paths ---------------------------------------------------------------------------
def test_symlinked_file_and_folder_are_followed_and_keep_their_place(tmp_path):
    outside = tmp_path / "elsewhere"
    (outside / "more").mkdir(parents=True)
    shutil.copy(DEMO / "tiny_example.nc", outside / "far.nc")
    shutil.copy(DEMO / "balloon_track.nc", outside / "more" / "balloon.nc")
    root = tmp_path / "in"
    root.mkdir()
    shutil.copy(DEMO / "shelf_mooring.nc", root / "shelf.nc")
    (root / "link.nc").symlink_to(outside / "far.nc")
    (root / "linked_folder").symlink_to(outside / "more")
    summary = batch.run([root], batch.convert_operation(), _options(tmp_path / "out"))
    assert sorted(o.status for o in summary.outcomes) == ["written"] * 3
    written = sorted(p.relative_to(tmp_path / "out").as_posix()
                     for p in (tmp_path / "out").rglob("*.nc"))
    assert written == ["link.nc", "linked_folder/balloon.nc", "shelf.nc"]


def test_symlink_loop_is_refused_with_one_line(tmp_path, capsys):
    root = tmp_path / "in"
    (root / "a").mkdir(parents=True)
    shutil.copy(DEMO / "tiny_example.nc", root / "a" / "t.nc")
    (root / "a" / "back").symlink_to(root)
    with pytest.raises(UnsupportedInputError, match="loop"):
        batch.find_inputs([root])
    status = cli.main(["convert", str(root), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and "a loop" in err[0], err
    assert not (tmp_path / "out").exists()


def test_broken_symlink_is_refused_not_skipped(tmp_path):
    root = tmp_path / "in"
    root.mkdir()
    shutil.copy(DEMO / "tiny_example.nc", root / "t.nc")
    (root / "gone.nc").symlink_to(tmp_path / "missing.nc")
    with pytest.raises(MissingInputError, match="broken symbolic link"):
        batch.find_inputs([root])


@pytest.mark.parametrize("name", ["../x.nc", "/tmp/x.nc", "sub/x.nc", "..", "", "a\x1bb.nc"])
def test_combined_name_cannot_leave_out(tmp_path, name, capsys):
    out = tmp_path / "deep" / "out"
    status = cli.main(["convert", str(DEMO / "tiny_example.nc"), str(DEMO / "balloon_track.nc"),
                       "--out", str(out), "--combine", "--combined-name", name])
    err = capsys.readouterr().err
    assert status == 2 and "plain file name" in err
    assert "\x1b" not in err
    assert not (tmp_path / "deep").exists()
    with pytest.raises(ConventionError):
        batch.plan_jobs([DEMO / "tiny_example.nc"], out, combine=True, combined_name=name)


# --- option values: checked before any file is opened ---------------------------------------
def _must_not_open(*args, **kwargs):
    raise AssertionError("a file was opened before the options were checked")


BAD_OPTIONS = [
    (["convert", "--velocity", "sideways=U,northward=V"], "unknown component"),
    (["convert", "--velocity", "eastward=U"], "no northward"),
    (["convert", "--velocity", "eastward"], "COMPONENT=VARIABLE"),
    (["terms", "--terms", "bogus"], "unknown term(s) bogus"),
    (["terms", "--terms", "coriolis,bogus"], "unknown term(s) bogus"),
    (["terms", "--terms", ","], "unknown term(s) (none given)"),
    (["convert", "--height", "nan"], "not a finite height"),
    (["convert", "--height", "inf"], "not a finite height"),
    (["convert", "--height=-1e7"], "above the Earth's centre"),
    (["terms", "--height=-inf"], "not a finite height"),
    (["convert", "--basis", "cartesian", "--dut1", "nan"], "dut1"),
    (["convert", "--basis", "cartesian", "--dut1", "2.5"], "dut1"),
    (["convert", "--memory", "lots"], "not a size"),
    (["convert", "--workers", "0"], "at least 1"),
    (["convert", "--workers", "1", "--scheduler", "tcp://127.0.0.1:1"], "give one of them"),
    (["convert", "--basis", "polar"], "invalid choice"),
    (["convert", "--to", "sideways"], "invalid choice"),
]


@pytest.mark.parametrize(("extra", "message"), BAD_OPTIONS)
def test_bad_option_values_exit_2_before_any_file_is_opened(tmp_path, monkeypatch, capsys,
                                                            extra, message):
    monkeypatch.setattr(io, "open_input", _must_not_open)
    monkeypatch.setattr(xr, "open_dataset", _must_not_open)
    out = tmp_path / "out"
    command, *rest = extra
    argv = [command, str(DEMO / "tiny_example.nc"), str(DEMO / "balloon_track.nc"),
            "--out", str(out), *rest]
    try:
        status = cli.main(argv)
    except SystemExit as stop:  # argparse: its usage, then the message, exit status 2
        status = stop.code
    assert status == 2
    err = capsys.readouterr().err
    assert message in err, err
    errors = [line for line in err.strip().splitlines() if "error" in line]
    assert len(errors) == 1, err  # one error line, not one per file
    assert not out.exists()


# --- content check on re-runs ------------------------------------------------------------------
def test_checksum_catches_an_output_corrupted_in_place(tmp_path):
    out = tmp_path / "out"
    src = DEMO / "tiny_example.nc"
    op = batch.convert_operation()
    batch.run([src], op, _options(out, verify=True))
    final = out / "tiny_example.nc"
    good = final.read_bytes()
    st = final.stat()
    corrupted = bytearray(good)
    corrupted[len(good) // 2] ^= 0xFF  # same size, same mtime, other bytes
    final.write_bytes(bytes(corrupted))
    os.utime(final, ns=(st.st_atime_ns, st.st_mtime_ns))
    trusting = batch.run([src], op, _options(out))
    assert [o.status for o in trusting.outcomes] == ["skipped"]  # size and mtime only
    checking = batch.run([src], op, _options(out, verify=True))
    assert [o.status for o in checking.outcomes] == ["written"]
    settings = {"command": "convert", **op.settings, "precision": "input", "format": "netcdf"}
    assert "checksum" in io.is_current(final, [src], settings, verify=True)[1]
    with xr.open_dataset(final) as a, xr.open_dataset(out / "tiny_example.nc") as b:
        xr.testing.assert_identical(a, b)
    again = batch.run([src], op, _options(out, verify=True))
    assert [o.status for o in again.outcomes] == ["skipped"]
    assert again.outcomes[0].reason == "up to date (checksum verified)"


def test_checksum_asked_for_an_output_without_one_redoes_it(tmp_path):
    out = tmp_path / "out"
    src = DEMO / "tiny_example.nc"
    batch.run([src], batch.convert_operation(), _options(out))
    redo = batch.run([src], batch.convert_operation(), _options(out, verify=True))
    assert [o.status for o in redo.outcomes] == ["written"]
    assert "no checksum recorded" in batch.Outcome(redo.outcomes[0].job, "skipped",
                                                     "no checksum recorded").line()


# --- names with control characters -------------------------------------------------------------
def test_names_with_control_characters_are_printed_escaped(tmp_path, capsys):
    root = tmp_path / "in"
    root.mkdir()
    evil = root / "bad\x1b[2Jname\r.nc"
    xr.Dataset({"x": ("t", [1.0])}).to_netcdf(evil)  # no velocity: it fails
    status = cli.main(["convert", str(root), "--out", str(tmp_path / "out")])
    captured = capsys.readouterr()
    text = captured.out + captured.err
    assert status == 1
    assert "\x1b" not in text and "\r" not in text
    assert "bad\\x1b[2Jname\\r.nc" in text
    assert batch.printable("tab\there\u200b") == "tab\\there\\u200b"
    # inspect too (NetCDF itself refuses control characters in variable names)
    assert cli.main(["inspect", str(root)]) == 0
    shown = capsys.readouterr().out
    assert "\x1b" not in shown and "bad\\x1b[2Jname\\r.nc" in shown


# --- a Dask worker killed mid-run ----------------------------------------------------------------
def test_worker_killed_mid_run_then_rerun_ends_complete(tmp_path, monkeypatch):
    op = batch.convert_operation(basis="cartesian")
    src = DEMO / "shelf_mooring.nc"
    batch.run([src], op, _options(tmp_path / "serial"))
    original = batch._computer
    killed = []

    def computer(client, bar_factory):
        compute = original(client, bar_factory)

        def kill_then_compute(delayed):
            if client is not None and not killed:
                pids = client.run(os.getpid)
                victim = sorted(pids.values())[0]
                os.kill(victim, signal.SIGKILL)
                killed.append(victim)
            compute(delayed)
        return kill_then_compute

    monkeypatch.setattr(batch, "_computer", computer)
    out = tmp_path / "cluster"
    first = batch.run([src], op, _options(out, workers=2, memory=10**6))
    assert killed, "no worker was killed"
    (outcome,) = first.outcomes
    final = out / "shelf_mooring.nc"
    # either the cluster recovered (written) or the file failed whole (nothing left)
    assert outcome.status in ("written", "failed")
    if outcome.status == "failed":
        assert not final.exists() and _leftovers(out) == []
    monkeypatch.setattr(batch, "_computer", original)
    second = batch.run([src], op, _options(out, workers=2, memory=10**6))
    assert [o.status for o in second.outcomes] in (["written"], ["skipped"])
    assert _leftovers(out) == []
    with xr.open_dataset(tmp_path / "serial" / "shelf_mooring.nc") as a, \
            xr.open_dataset(final) as b:
        for name in a.variables:
            np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


def test_write_error_is_a_frameshift_error_and_an_os_error():
    exc = WriteError("disk full", variable="out", expected="room", found="0 bytes free")
    assert isinstance(exc, OSError) and isinstance(exc, batch.FrameshiftError)
    import pickle

    again = pickle.loads(pickle.dumps(exc))
    assert (again.variable, again.found) == ("out", "0 bytes free")


_FAILING_WRITES = textwrap.dedent("""
    import time
    import dask.array as da, numpy as np, xarray as xr
    from frameshift import io

    def bad(block):
        if block[0, 0] > 0.5 and block[0, 1] > 0.5:
            raise ValueError("a block fails")
        time.sleep(0.001)
        return block

    for i in range(8):
        data = da.random.random((400, 400), chunks=(20, 400)).map_blocks(bad, dtype=float)
        ds = xr.Dataset({"a": (("x", "y"), data)})
        try:
            io.write_atomic(ds, f"{OUT}/a{i}.nc")
        except ValueError:
            pass
""")


def test_a_failing_block_among_threads_writing_closes_safely(tmp_path):
    # the failed temporary file is closed while other Dask threads may still be writing
    # chunks of it: closing under the NetCDF lock must never crash the process
    script = _FAILING_WRITES.replace("{OUT}", str(tmp_path))
    done = subprocess.run([sys.executable, "-c", script], cwd=REPO, capture_output=True,
                          text=True, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    assert _leftovers(tmp_path) == []
