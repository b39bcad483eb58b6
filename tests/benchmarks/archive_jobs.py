"""Subprocess side of B4: make the big file, copy it with plain xarray, measure a command.

``python -m tests.benchmarks.archive_jobs make PATH NTIME`` writes the input;
``... copy IN OUT [ENCODING_FROM] [--fsync]`` is the plain xarray
open-and-write copy (with the input's encoding, or with the encoding of the
variables of the file ``ENCODING_FROM``; ``--fsync``: synced to disk);
``... measure -- CMD...`` runs CMD as its only child and prints JSON with its
wall time and peak resident memory (``ru_maxrss``).
"""

from __future__ import annotations

import json
import os
import resource
import subprocess
import sys
import time

import numpy as np

#: (level, lat, lon) of one time step: 10 levels on a 0.5° grid
GRID = (10, 361, 720)
STORAGE_KEYS = ("dtype", "zlib", "complevel", "shuffle", "chunksizes", "contiguous", "_FillValue")


def make(path: str, ntime: int) -> None:
    """Winds ``ua``, ``va`` (float32, uncompressed, one HDF5 chunk per time step)."""
    import netCDF4

    nlev, nlat, nlon = GRID
    rng = np.random.default_rng(0)
    lat = np.linspace(-90.0, 90.0, nlat)
    lon = np.arange(nlon) * (360.0 / nlon)
    with netCDF4.Dataset(path, "w") as nc:
        nc.Conventions = "CF-1.11"
        nc.title = "frameshift benchmark input (invented winds)"
        for name, size in (("time", None), ("z", nlev), ("lat", nlat), ("lon", nlon)):
            nc.createDimension(name, size)
        t = nc.createVariable("time", "f8", ("time",))
        t.units, t.standard_name, t.calendar = "hours since 2020-01-01", "time", "standard"
        t[:] = np.arange(ntime) * 6.0
        z = nc.createVariable("z", "f8", ("z",))
        z.units, z.positive = "m", "up"
        z.standard_name = "height_above_reference_ellipsoid"
        z[:] = np.linspace(100.0, 20000.0, nlev)
        la = nc.createVariable("lat", "f8", ("lat",))
        la.units, la.standard_name = "degrees_north", "latitude"
        la[:] = lat
        lo = nc.createVariable("lon", "f8", ("lon",))
        lo.units, lo.standard_name = "degrees_east", "longitude"
        lo[:] = lon
        dims = ("time", "z", "lat", "lon")
        shape = (nlev, nlat, nlon)
        for name, std in (("ua", "eastward_wind"), ("va", "northward_wind")):
            var = nc.createVariable(name, "f4", dims, chunksizes=(1, *shape))
            var.units, var.standard_name = "m s-1", std
        base = 10.0 * np.cos(np.deg2rad(lat))[None, :, None] * np.ones(shape, np.float32)
        for i in range(ntime):
            noise = rng.standard_normal(shape, dtype=np.float32)
            nc["ua"][i] = base + 5.0 * noise
            nc["va"][i] = 3.0 * noise[:, ::-1]


def copy(src: str, dst: str, encoding_from: str | None = None, durable: bool = False) -> None:
    """Plain xarray: open lazily in the file's own chunks, write with an encoding.

    ``durable``: then ``fsync`` the file, as frameshift does before renaming
    its output into place.
    """
    import xarray as xr

    ds = xr.open_dataset(src, chunks={})
    model = xr.open_dataset(encoding_from) if encoding_from else ds
    encoding = {}
    for name in ds.variables:
        from_model = name in ds.data_vars and name in model.data_vars
        enc = model[name].encoding if from_model else ds[name].encoding
        encoding[name] = {k: v for k, v in enc.items() if k in STORAGE_KEYS}
        if "dtype" in encoding[name] and name in ("ua", "va"):
            ds[name] = ds[name].astype(encoding[name]["dtype"])
    ds.to_netcdf(dst, encoding=encoding, engine="netcdf4")
    if durable:
        with open(dst, "rb") as fh:
            os.fsync(fh.fileno())


def zarr_copy(src: str, dst: str, durable: bool = False) -> None:
    """Plain xarray: open lazily in the file's own chunks, write a consolidated Zarr store
    (Zarr format 2, as frameshift writes) with xarray's default encoding for Zarr.

    ``durable``: then ``fsync`` every file and folder of the store, as frameshift
    does before renaming a store into place.
    """
    import xarray as xr

    ds = xr.open_dataset(src, chunks={})
    for var in ds.variables.values():
        var.encoding = {k: v for k, v in var.encoding.items()
                        if k in ("dtype", "_FillValue", "units", "calendar")}
    ds.to_zarr(dst, mode="w", consolidated=True, zarr_format=2)
    if durable:
        for root, _, names in os.walk(dst):
            for name in names:
                with open(os.path.join(root, name), "rb") as fh:
                    os.fsync(fh.fileno())
            fd = os.open(root, os.O_RDONLY)
            try:
                os.fsync(fd)
            finally:
                os.close(fd)


def measure(cmd: list[str]) -> dict:
    t0 = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    peak_kib = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss  # the one child
    return {
        "returncode": proc.returncode,
        "wall_s": wall,
        "peak_rss_bytes": peak_kib * 1024,
        "stderr_tail": proc.stderr[-2000:],
    }


def main(argv: list[str]) -> int:
    what = argv[0]
    if what == "make":
        make(argv[1], int(argv[2]))
    elif what == "copy":
        durable = "--fsync" in argv
        rest = [a for a in argv[1:] if a != "--fsync"]
        copy(rest[0], rest[1], rest[2] if len(rest) > 2 else None, durable)
    elif what == "zarr-copy":
        zarr_copy(argv[1], argv[2], durable="--fsync" in argv)
    elif what == "measure":
        print(json.dumps(measure(argv[argv.index("--") + 1 :])))
    else:
        raise SystemExit(f"unknown job {what!r}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
