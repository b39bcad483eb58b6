"""B13: the global angular-momentum series of a >= 2 GB wind archive, beside reading it once.

The archive (written first, in a temporary directory, by
``python -m tests.benchmarks.angular_momentum make PATH NTIME``) holds
invented winds ``ua``, ``va`` (float32, uncompressed, one HDF5 chunk per time
step) on 10 pressure levels of a 0.5° grid, and the surface pressure ``ps``.
Each command runs in its own process under ``tests.benchmarks.archive_jobs
measure`` (wall time and peak resident memory of its process tree's largest
member). Compared, interleaved over the rounds:

- ``frameshift momentum`` (axial series; reads ``ua`` and ``ps``) against
  reading those two variables once;
- ``frameshift momentum --excitation`` (reads ``ua``, ``va``, ``ps``) against
  reading the whole archive once;

where "reading once" is, side by side, netCDF4 reading every variable slab by
slab into memory (the floor), and xarray + Dask reading the file's own chunks
with the threaded scheduler (each chunk summed, so nothing is kept). Every
command is a fresh process, so each time includes Python's start and imports.

Each comparison runs twice: with the archive in the page cache ("warm": the
reading is a memory copy, so start-up and imports weigh most), and with the
archive's pages evicted before every command ("cold", ``posix_fadvise``
``DONTNEED`` after a sync: the archive is read from the disk, as an archive
larger than memory always is). Then the same ``--excitation`` run on a local
Dask cluster (``--workers 2``) must give identical numbers.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

from tests.benchmarks.harness import Row, not_available, verdict

__all__ = ["make", "read", "run"]

GRID = (10, 361, 720)  # (pressure level, lat, lon) of one time step
PLEV = np.array([100000, 92500, 85000, 70000, 50000, 40000, 30000, 20000, 10000, 5000.0])
TARGET = "<= 1.3"
_CLI = "import sys; from frameshift.cli import main; sys.exit(main(sys.argv[1:]))"


def make(path: str, ntime: int) -> None:
    """Invented winds on pressure levels with a surface pressure (float32, one chunk a step)."""
    import netCDF4

    nlev, nlat, nlon = GRID
    rng = np.random.default_rng(7)
    lat = np.linspace(-90.0, 90.0, nlat)
    lon = np.arange(nlon) * (360.0 / nlon)
    with netCDF4.Dataset(path, "w") as nc:
        nc.Conventions = "CF-1.11"
        nc.title = "frameshift benchmark input (invented winds on pressure levels)"
        for name, size in (("time", None), ("plev", nlev), ("lat", nlat), ("lon", nlon)):
            nc.createDimension(name, size)
        t = nc.createVariable("time", "f8", ("time",))
        t.units, t.standard_name, t.calendar = "hours since 2030-01-01", "time", "standard"
        t[:] = np.arange(ntime) * 6.0
        p = nc.createVariable("plev", "f8", ("plev",))
        p.units, p.standard_name, p.positive, p.axis = "Pa", "air_pressure", "down", "Z"
        p[:] = PLEV
        la = nc.createVariable("lat", "f8", ("lat",))
        la.units, la.standard_name = "degrees_north", "latitude"
        la[:] = lat
        lo = nc.createVariable("lon", "f8", ("lon",))
        lo.units, lo.standard_name = "degrees_east", "longitude"
        lo[:] = lon
        for name, std in (("ua", "eastward_wind"), ("va", "northward_wind")):
            var = nc.createVariable(name, "f4", ("time", "plev", "lat", "lon"),
                                    chunksizes=(1, *GRID))
            var.units, var.standard_name = "m s-1", std
        ps = nc.createVariable("ps", "f4", ("time", "lat", "lon"), chunksizes=(1, nlat, nlon))
        ps.units, ps.standard_name = "Pa", "surface_air_pressure"
        jet = 25.0 * np.cos(np.deg2rad(lat)) ** 2
        base = jet[None, :, None] * np.linspace(0.3, 1.0, nlev)[:, None, None]
        for i in range(ntime):
            noise = rng.standard_normal(GRID, dtype=np.float32)
            nc["ua"][i] = base * (1 + 0.05 * np.sin(i / 10)) + 5.0 * noise
            nc["va"][i] = 3.0 * noise[:, ::-1]
            nc["ps"][i] = 100000.0 - 3000.0 * np.abs(np.sin(np.deg2rad(lon)))[None, :] * (
                np.cos(np.deg2rad(lat))[:, None]) + 100.0 * noise[0]


def read(path: str, how: str, names: list[str]) -> None:
    """Read ``names`` from the file once: ``netcdf4`` slab by slab, or ``dask`` chunk by chunk."""
    if how == "netcdf4":
        import netCDF4

        with netCDF4.Dataset(path) as nc:
            for name in names:
                var = nc[name]
                var.set_auto_maskandscale(False)
                for i in range(var.shape[0]):
                    var[i]
        return
    import dask
    import xarray as xr

    with xr.open_dataset(path, chunks={}) as ds:
        dask.compute(*[ds[n].data.sum(dtype=np.float64) for n in names])


def evict(path: Path) -> None:
    """Drop ``path``'s pages from the page cache (after a sync), so it is next read from disk."""
    os.sync()
    fd = os.open(path, os.O_RDONLY)
    try:
        os.posix_fadvise(fd, 0, 0, os.POSIX_FADV_DONTNEED)
    finally:
        os.close(fd)


def _measure(cmd: list[str], cold: Path | None = None) -> dict:
    os.sync()
    if cold is not None:
        evict(cold)
    wrapper = [sys.executable, "-m", "tests.benchmarks.archive_jobs", "measure", "--", *cmd]
    done = subprocess.run(wrapper, capture_output=True, text=True, check=True)
    result = json.loads(done.stdout.strip().splitlines()[-1])
    if result["returncode"] != 0:
        raise RuntimeError(f"{cmd[:5]}... failed: {result['stderr_tail']}")
    return result


def _cli_available() -> bool:
    try:
        from frameshift import cli
    except ImportError:
        return False
    return "momentum" in cli.build_parser().format_help()


def run(quick: bool) -> list[Row]:
    if not _cli_available():
        return [not_available("B13", "angular-momentum archive", "no `frameshift momentum`",
                              TARGET)]
    ntime = 8 if quick else 100  # 0.18 GB or 2.2 GB
    repeats = 1 if quick else 5
    nbytes = ntime * (2 * np.prod(GRID) + np.prod(GRID[1:])) * 4
    if shutil.disk_usage(tempfile.gettempdir()).free < 2 * nbytes:
        return [not_available("B13", "angular-momentum archive", "not enough free disk")]
    tmp = Path(tempfile.mkdtemp(prefix="frameshift-b13-"))
    try:
        return _run(tmp, ntime, repeats)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def _run(tmp: Path, ntime: int, repeats: int) -> list[Row]:
    py = sys.executable
    src = tmp / "archive.nc"
    subprocess.run([py, "-m", "tests.benchmarks.angular_momentum", "make", str(src), str(ntime)],
                   check=True)  # fmt: skip
    size = src.stat().st_size
    me = [py, "-m", "tests.benchmarks.angular_momentum", "read", str(src)]
    momentum = [py, "-c", _CLI, "momentum", str(src), "--surface-pressure", "ps", "--quiet",
                "--overwrite"]  # fmt: skip
    commands = {
        "momentum": [*momentum, "--out", str(tmp / "axial")],
        "read ua, ps (netCDF4)": [*me, "netcdf4", "ua", "ps"],
        "read ua, ps (xarray + Dask)": [*me, "dask", "ua", "ps"],
        "momentum --excitation": [*momentum, "--excitation", "--out", str(tmp / "chi")],
        "read all (netCDF4)": [*me, "netcdf4", "ua", "va", "ps"],
        "read all (xarray + Dask)": [*me, "dask", "ua", "va", "ps"],
    }
    for cmd in commands.values():  # warm the page cache and the imports
        _measure(cmd)
    results: dict[str, list[dict]] = {k: [] for k in commands}
    cold: dict[str, list[dict]] = {k: [] for k in commands}
    for _ in range(repeats):
        for name, cmd in commands.items():
            results[name].append(_measure(cmd))
            cold[name].append(_measure(cmd, cold=src))
    wall = {k: sorted(r["wall_s"] for r in v)[len(v) // 2] for k, v in results.items()}
    wall_cold = {k: sorted(r["wall_s"] for r in v)[len(v) // 2] for k, v in cold.items()}
    peak = {k: max(r["peak_rss_bytes"] for r in (*v, *cold[k])) for k, v in results.items()}
    cluster = _measure([*momentum, "--excitation", "--workers", "2", "--out",
                        str(tmp / "cluster")])  # fmt: skip
    inside = _in_process(src, repeats)
    identical, worst = _compare(tmp / "chi" / src.name, tmp / "cluster" / src.name)
    sizes = (f"{size / 1e9:.2f} GB NetCDF: ua, va float32 {(ntime, *GRID)} (time, plev, lat, "
             "lon) and ps, uncompressed; default --memory")
    reps = f"{repeats} each, interleaved (+1 warm-up)"
    rows = []
    for cache, times, runs in (("cold", wall_cold, cold), ("warm", wall, results)):
        for ours, bases in (("momentum", ("read ua, ps (xarray + Dask)",
                                          "read ua, ps (netCDF4)")),
                            ("momentum --excitation", ("read all (xarray + Dask)",
                                                       "read all (netCDF4)"))):
            for base in bases:  # the same stack's own reading, and the plain netCDF4 floor
                ratio = times[ours] / times[base]
                rows.append(Row(
                    "B13", f"CLI {ours} vs {base}, {cache} cache", sizes, reps, ratio,
                    "wall time frameshift / one read", TARGET, verdict(ratio, at_most=1.3),
                    {ours: times[ours], base: times[base]},
                    extra={"runs (s)": ", ".join(f"{r['wall_s']:.2f}" for r in runs[ours]),
                           "reading runs (s)": ", ".join(f"{r['wall_s']:.2f}"
                                                         for r in runs[base])}))
    gb = max(peak["momentum"], peak["momentum --excitation"]) / 1e9
    rows.append(Row("B13", "CLI momentum peak resident memory", sizes, reps, gb, "GB", "<= 1 GB",
                    verdict(gb, at_most=1.0),
                    extra={k: f"{v / 1e6:.0f} MB" for k, v in peak.items()}))  # fmt: skip
    rows.append(Row("B13", "local cluster (--workers 2) gives identical numbers", sizes, "1",
                    worst, "max |difference| / max |value|", "0 (identical)",
                    "PASS" if identical else "MISS",
                    {"--workers 2": cluster["wall_s"],
                     "threaded": wall["momentum --excitation"]},
                    extra={"cluster peak": f"{cluster['peak_rss_bytes'] / 1e6:.0f} MB"}))
    rows.append(Row("B13", "in one process: integrate_angular_momentum vs reading ua, ps",
                    sizes, reps, inside["ratio"], "compute / Dask read, same open Dataset",
                    TARGET, verdict(inside["ratio"], at_most=1.3),
                    {"integrate_angular_momentum(...).compute()": inside["ours"],
                     "dask.compute(ua.sum(), ps.sum())": inside["read"]},
                    note="no start-up, import, open or write costs: the diagnostic itself"))
    return rows


def _in_process(src: Path, repeats: int) -> dict:
    """The diagnostic beside a Dask read of the same variables, on one Dataset opened once."""
    import dask

    import frameshift
    from frameshift import io
    from tests.benchmarks.harness import median_time

    ds, raw = io.open_input(src, parallel=2)
    try:
        ours, _ = median_time(lambda: frameshift.integrate_angular_momentum(
            ds, surface_pressure="ps").compute(), repeats)
        read, _ = median_time(lambda: dask.compute(ds.ua.sum(), ds.ps.sum()), repeats)
    finally:
        ds.close()
        raw.close()
    return {"ours": ours, "read": read, "ratio": ours / read}


def _compare(a: Path, b: Path) -> tuple[bool, float]:
    import xarray as xr

    with xr.open_dataset(a) as x, xr.open_dataset(b) as y:
        same = all(np.array_equal(x[n].values, y[n].values) for n in x.data_vars)
        worst = max(float(np.max(np.abs(x[n].values - y[n].values))
                          / max(float(np.max(np.abs(x[n].values))), 1e-300))
                    for n in x.data_vars)
    return same, worst


def main(argv: list[str]) -> int:
    if argv[0] == "make":
        make(argv[1], int(argv[2]))
    elif argv[0] == "read":
        read(argv[1], argv[2], argv[3:])
    else:
        raise SystemExit(f"unknown job {argv[0]!r}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
