"""B4: the command line converting a large NetCDF file, beside a plain xarray copy.

Each command runs in its own process under a small wrapper that reports the
command's wall time and peak resident memory (``ru_maxrss`` of its only
child). The input (written first, in a temporary directory) has winds
``ua``, ``va`` as uncompressed float32 in one HDF5 chunk per time step.
Baselines: xarray opening the file lazily in its own chunks and writing it
again (a) with the input's encoding and (b) with the encoding of the
variables of frameshift's output (``ua`` in the input's float32 by the
precision policy, its HDF5 chunks and level-1 compression), so that (b)
writes the same bytes frameshift writes, then synced to disk (``fsync``) as
the command line does before renaming its output into place; and for Zarr
output, (c) xarray writing a consolidated Zarr store (format 2) of the file
beside ``frameshift convert --format zarr``, and (d) the same store then synced
(every file and folder), as frameshift syncs a store before renaming it into
place (frameshift syncs each file as it is written, while the rest is computed);
and ``frameshift convert --format zarr --no-sync`` (renamed into place, not synced)
beside (c), like for like. Every command starts after ``os.sync()``, so none
waits for the write-back of the one before.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

from tests.benchmarks.archive_jobs import GRID
from tests.benchmarks.harness import Row, not_available, verdict

__all__ = ["run"]

TARGET_TIME = "<= 1.3"
TARGET_ZARR = "<= 1.2"
TARGET_MEMORY = "<= 1 GB"
_CLI = "import sys; from frameshift.cli import main; sys.exit(main(sys.argv[1:]))"


def _cli_available() -> bool:
    try:
        from frameshift import cli
    except ImportError:
        return False
    return "convert" in cli.build_parser().format_help()


def _zarr_available() -> bool:
    try:
        import zarr  # noqa: F401
    except ImportError:
        return False
    return True


def _measure(cmd: list[str]) -> dict:
    os.sync()  # each command starts with no dirty pages of the one before waiting to be written
    wrapper = [sys.executable, "-m", "tests.benchmarks.archive_jobs", "measure", "--", *cmd]
    done = subprocess.run(wrapper, capture_output=True, text=True, check=True)
    result = json.loads(done.stdout.strip().splitlines()[-1])
    if result["returncode"] != 0:
        raise RuntimeError(f"{cmd[:4]}... failed: {result['stderr_tail']}")
    return result


def _file_bytes(ntime: int) -> int:
    nlev, nlat, nlon = GRID
    return 2 * 4 * ntime * nlev * nlat * nlon


def run(quick: bool) -> list[Row]:
    if not _cli_available():
        return [not_available("B4", "archive conversion", "no `frameshift convert`", TARGET_TIME)]
    ntime = 8 if quick else 104  # 0.17 GB or 2.16 GB
    repeats = 1 if quick else 5  # disk write-back varies from run to run: 5 rounds
    free = shutil.disk_usage(tempfile.gettempdir()).free
    if free < 4 * _file_bytes(ntime):
        return [not_available("B4", "archive conversion", f"only {free / 1e9:.1f} GB free")]
    tmp = Path(tempfile.mkdtemp(prefix="frameshift-b4-"))
    try:
        return _run(tmp, ntime, repeats, quick)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def _run(tmp: Path, ntime: int, repeats: int, quick: bool) -> list[Row]:
    py = sys.executable
    src = tmp / "winds.nc"
    subprocess.run([py, "-m", "tests.benchmarks.archive_jobs", "make", str(src), str(ntime)],
                   check=True)  # fmt: skip
    size = src.stat().st_size
    out_dir = tmp / "out"
    converted = out_dir / src.name
    reference = tmp / "reference.nc"  # one converted file, whose encoding baseline (b) copies
    commands = {
        "frameshift convert": [py, "-c", _CLI, "convert", str(src), "--out", str(out_dir),
                               "--quiet", "--overwrite"],
        "xarray copy, input encoding": [py, "-m", "tests.benchmarks.archive_jobs", "copy",
                                        str(src), str(tmp / "copy.nc")],
        "xarray copy, frameshift's encoding + fsync": [py, "-m", "tests.benchmarks.archive_jobs",
                                                       "copy", str(src), str(tmp / "copy.nc"),
                                                       str(reference), "--fsync"],
        "frameshift convert --format zarr": [py, "-c", _CLI, "convert", str(src), "--out",
                                             str(out_dir), "--format", "zarr", "--quiet",
                                             "--overwrite"],
        "frameshift convert --format zarr --no-sync": [py, "-c", _CLI, "convert", str(src),
                                                       "--out", str(out_dir), "--format", "zarr",
                                                       "--quiet", "--overwrite", "--no-sync"],
        "xarray Zarr copy": [py, "-m", "tests.benchmarks.archive_jobs", "zarr-copy", str(src),
                             str(tmp / "copy.zarr")],
        "xarray Zarr copy + fsync": [py, "-m", "tests.benchmarks.archive_jobs", "zarr-copy",
                                     str(src), str(tmp / "copy.zarr"), "--fsync"],
    }  # fmt: skip
    zarr_ok = _zarr_available()
    if not zarr_ok:
        commands.pop("frameshift convert --format zarr")
        commands.pop("frameshift convert --format zarr --no-sync")
        commands.pop("xarray Zarr copy")
        commands.pop("xarray Zarr copy + fsync")
    _measure(commands["frameshift convert"])  # warm the page cache and the imports
    shutil.copy(converted, reference)
    shutil.rmtree(out_dir, ignore_errors=True)  # every timed run writes a new output
    results: dict[str, list[dict]] = {k: [] for k in commands}
    for _ in range(repeats):  # interleaved, so drifts in the machine hit all alike
        for name, cmd in commands.items():
            results[name].append(_measure(cmd))
            (tmp / "copy.nc").unlink(missing_ok=True)
            shutil.rmtree(tmp / "copy.zarr", ignore_errors=True)
            shutil.rmtree(out_dir, ignore_errors=True)
    extra_sizes = {}
    if not quick:  # peak memory must not grow with the file: a quarter-size file too
        small = tmp / "small" / "winds.nc"
        small.parent.mkdir()
        subprocess.run([py, "-m", "tests.benchmarks.archive_jobs", "make", str(small),
                        str(ntime // 4)], check=True)  # fmt: skip
        r = _measure([py, "-c", _CLI, "convert", str(small), "--out", str(tmp / "small_out"),
                      "--quiet", "--overwrite"])  # fmt: skip
        extra_sizes[f"{small.stat().st_size / 1e9:.2f} GB file"] = r["peak_rss_bytes"]

    def median(name: str, key: str) -> float:
        values = sorted(r[key] for r in results[name])
        return values[len(values) // 2] if len(values) % 2 else sum(values) / len(values)

    wall = {k: median(k, "wall_s") for k in commands}
    runs = {k: ", ".join(f"{r['wall_s']:.1f}" for r in results[k]) for k in commands}
    peak = {k: max(r["peak_rss_bytes"] for r in results[k]) for k in commands}
    fs = "frameshift convert"
    sizes = (f"{size / 1e9:.2f} GB NetCDF, ua/va float32 {(ntime, *GRID)} (time, z, lat, lon), "
             "uncompressed; default --memory")  # fmt: skip
    reps = f"{repeats} each (+1 warm-up)"
    mem = {k: f"{v / 1e6:.0f} MB" for k, v in peak.items()}
    mem.update({f"frameshift, {k}": f"{v / 1e6:.0f} MB" for k, v in extra_sizes.items()})
    rows = []
    pairs = [(fs, "xarray copy, input encoding"),
             (fs, "xarray copy, frameshift's encoding + fsync")]
    if zarr_ok:
        pairs += [("frameshift convert --format zarr", "xarray Zarr copy"),
                  ("frameshift convert --format zarr", "xarray Zarr copy + fsync"),
                  ("frameshift convert --format zarr --no-sync", "xarray Zarr copy")]
    for fs, base in pairs:
        ratio = wall[fs] / wall[base]
        target = TARGET_ZARR if "Zarr" in base else TARGET_TIME
        best = min(r["wall_s"] for r in results[fs]) / min(r["wall_s"] for r in results[base])
        label = "CLI convert --no-sync" if fs.endswith("--no-sync") else "CLI convert"
        rows.append(Row("B4", f"{label} vs {base}", sizes, reps, ratio,
                        "wall time frameshift / copy", target,
                        verdict(ratio, at_most=float(target.split()[-1])),
                        {fs: wall[fs], base: wall[base]},
                        extra={"best / best": f"{best:.2f}",
                               "runs (s)": f"{runs[fs]} vs {runs[base]}"}))  # fmt: skip
    fs = "frameshift convert"
    gb = peak[fs] / 1e9
    rows.append(Row("B4", "CLI convert peak resident memory", sizes, reps, gb, "GB",
                    TARGET_MEMORY, verdict(gb, at_most=1.0), extra=mem,
                    note="peak RSS of each command's process (ru_maxrss)"))  # fmt: skip
    return rows
