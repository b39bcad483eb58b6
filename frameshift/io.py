"""Reading and writing NetCDF so that nothing is lost.

* :func:`open_input` opens one file (or several along time) lazily, with Dask
  chunks sized from a memory budget (:func:`choose_chunks`).
* :func:`prepare_output` decides, variable by variable, what is written how:
  variables frameshift did not touch are copied as stored (packed integers,
  fill values, time units and calendars intact); variables it computed are
  written as float, compressed, chunked in step with their Dask chunks, and
  never re-packed with an input's packing; coordinates get no ``_FillValue``.
* :func:`write_atomic` writes to a temporary file next to the target and
  renames it into place only after a complete write.
* :func:`write_manifest` / :func:`is_current` keep a small JSON sidecar per
  output, so a re-run skips outputs that are complete and up to date.
"""

from __future__ import annotations

import contextlib
import functools
import math
import os
import threading
import warnings
from collections.abc import Callable, Mapping, Sequence
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import xarray as xr

from frameshift import safefiles
from frameshift.errors import (
    ConventionError,
    MissingInputError,
    UnsupportedInputError,
    WriteError,
)
from frameshift.storage import (
    DISK_CHUNK_BYTES,
    decode_labels,
    disk_chunks,
    encode_labels,
    largest_divisor,
    plan_output,
)

__all__ = [
    "DISK_CHUNK_BYTES",
    "WORKING_COPIES",
    "ZARR_FORMAT",
    "check_stored_attributes",
    "choose_chunks",
    "decode_labels",
    "default_memory",
    "disk_chunks",
    "encode_labels",
    "input_format",
    "is_current",
    "manifest_path",
    "open_input",
    "parse_memory",
    "prepare_output",
    "write_atomic",
    "write_manifest",
    "write_store_atomic",
]

#: How many chunk-sized float64 arrays one Dask task may hold at once (inputs
#: promoted to float64, intermediates, and a 3-vector output); the chunk size
#: is the memory budget divided by this and by the number of tasks in flight.
WORKING_COPIES = 32
#: Dimensions never split across Dask chunks (kernels need them whole).
WHOLE_DIMS = ("component",)
#: Zarr format of the stores frameshift writes (2: read by every Zarr reader, with
#: consolidated metadata in ``.zmetadata``).
ZARR_FORMAT = 2


# --- memory budget and chunks ---------------------------------------------------------
def parse_memory(text: str | int) -> int:
    """Read a memory budget such as ``"2GB"``, ``"512MiB"`` or a number of bytes.

    Examples
    --------
    >>> parse_memory("2GB")
    2000000000
    >>> parse_memory("1.5 GiB")
    1610612736
    """
    from dask.utils import parse_bytes

    try:
        value = int(text) if isinstance(text, int) else int(parse_bytes(str(text)))
    except (ValueError, TypeError) as exc:
        raise ConventionError(
            f"memory budget {text!r} is not a size; expected a number with a unit such as "
            "'2GB' or '512MiB'",
            variable="memory",
            expected="a size such as 2GB",
            found=repr(text),
        ) from exc
    if value <= 0:
        raise ConventionError(
            f"memory budget {text!r} must be positive",
            variable="memory",
            expected="a positive size",
            found=repr(text),
        )
    return value


def default_memory() -> int:
    """The default budget: 2 GB, or half the machine's memory if that is less.

    Examples
    --------
    >>> 0 < default_memory() <= 2 * 10**9
    True
    """
    budget = 2 * 10**9
    try:
        import psutil
    except ImportError:  # pragma: no cover - psutil comes with distributed
        return budget
    return int(min(budget, psutil.virtual_memory().total // 2))


def choose_chunks(
    ds: xr.Dataset,
    memory: int,
    *,
    parallel: int = 1,
    whole: Sequence[str] = WHOLE_DIMS,
) -> dict[str, int]:
    """Dask chunk sizes per dimension that keep a run within ``memory`` bytes.

    Each chunk of every variable, counted as float64, times
    :data:`WORKING_COPIES`, times ``parallel`` tasks in flight, stays within
    ``memory`` (unless the dimensions in ``whole`` alone exceed it). The
    outermost dimensions are split first, so chunks are contiguous slabs,
    and a size is rounded down to a multiple of the file's own chunking
    where that fits, so Dask chunks never cut a stored chunk.

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> ds = xr.Dataset({"u": (("time", "lat"), np.zeros((1000, 100)))})
    >>> choose_chunks(ds, 8 * 100 * 32 * 10)
    {'time': 10, 'lat': 100}
    """
    target = max(1, int(memory) // (max(1, parallel) * WORKING_COPIES * 8))
    sizes = {str(d): int(n) for d, n in ds.sizes.items()}
    chunks = dict(sizes)
    stored = _stored_chunks(ds)
    for var in sorted(ds.variables.values(), key=lambda v: -v.size):
        dims = [str(d) for d in var.dims]
        shape = [chunks[d] for d in dims]
        if math.prod(shape) <= target:
            continue
        outer = 1
        for i, dim in enumerate(dims):
            rest = math.prod(shape[i + 1:])
            if dim in whole:
                outer *= shape[i]
                continue
            room = target // (outer * rest)
            if room >= 1:
                shape[i] = _align(min(shape[i], room), stored.get(dim))
                break
            shape[i] = 1
        for dim, size in zip(dims, shape, strict=True):
            chunks[dim] = min(chunks[dim], size)
    return chunks


def _stored_chunks(ds: xr.Dataset) -> dict[str, int]:
    found: dict[str, int] = {}
    for var in ds.variables.values():
        sizes = var.encoding.get("chunksizes")
        if not sizes or len(sizes) != var.ndim:
            continue
        for dim, size in zip(var.dims, sizes, strict=True):
            found.setdefault(str(dim), int(size))
    return found


def _align(size: int, stored: int | None) -> int:
    if not stored:
        return size
    if stored <= size:
        return (size // stored) * stored
    part = largest_divisor(stored, size)  # a stored chunk read by a whole number of tasks
    return part if 2 * part >= size else size


# --- opening ---------------------------------------------------------------------------
def open_input(
    paths: str | os.PathLike | Sequence[str | os.PathLike],
    *,
    memory: int | None = None,
    parallel: int = 1,
    combine: bool = False,
) -> tuple[xr.Dataset, xr.Dataset | None]:
    """Open NetCDF files or Zarr stores lazily, with budget-sized Dask chunks.

    Returns ``(decoded, raw)``: the CF-decoded Dataset to compute on, and for
    a single input the same input undecoded (``decode_cf=False``), from which
    untouched variables are copied byte for byte; when several files are
    combined along time, ``raw`` is the first file undecoded, from which only
    the variables all files share (same shape as combined) are copied.
    A Zarr store is a directory named ``*.zarr`` (see :func:`input_format`).
    Attributes that would make decoding fail half-way (a ``scale_factor``
    stored as text) are refused first, naming the variable. Close both when done.

    Examples
    --------
    >>> ds, raw = open_input("data_demo/tiny_example.nc")  # doctest: +SKIP
    """
    memory = default_memory() if memory is None else memory
    files = [paths] if isinstance(paths, str | os.PathLike) else list(paths)
    engine = _engine(files[0])
    for file in files:
        with xr.open_dataset(file, chunks=None, engine=engine, decode_cf=False) as undecoded:
            check_stored_attributes(undecoded, file)
    with xr.open_dataset(files[0], chunks=None, engine=engine) as probe:
        chunks = choose_chunks(probe, memory, parallel=parallel)
    with warnings.catch_warnings():
        # a budget smaller than one stored chunk must split it; xarray warns about that
        warnings.filterwarnings("ignore", "The specified chunks separate", UserWarning)
        return _open(files, chunks, combine, engine)


def input_format(path: str | os.PathLike) -> str:
    """``"zarr"`` for a Zarr store (a directory named ``*.zarr``, or one holding Zarr
    metadata), else ``"netcdf"``.

    Examples
    --------
    >>> input_format("winds.nc"), input_format("winds.zarr")
    ('netcdf', 'zarr')
    """
    path = Path(path)
    if path.suffix.lower() == ".zarr":
        return "zarr"
    if path.is_dir() and any((path / m).exists() for m in (".zgroup", "zarr.json", ".zmetadata")):
        return "zarr"
    return "netcdf"


def _engine(path: str | os.PathLike) -> str:
    if input_format(path) == "zarr":
        _require_zarr()
        return "zarr"
    return "netcdf4"


def _require_zarr() -> None:
    try:
        import zarr  # noqa: F401
    except ImportError as exc:
        raise MissingInputError(
            "reading or writing Zarr stores needs the zarr package: "
            "pip install 'frameshift[zarr]'",
            variable="format",
            expected="zarr installed",
            found="zarr not installed",
        ) from exc


#: Attributes CF requires to be numbers: as text they would fail half-way through a write.
NUMERIC_ATTRIBUTES = ("scale_factor", "add_offset", "_FillValue", "missing_value",
                      "valid_min", "valid_max", "valid_range")


def check_stored_attributes(raw: xr.Dataset, where: object = "") -> None:
    """Refuse numeric variables whose packing or fill attributes are stored as text.

    Examples
    --------
    >>> import xarray as xr
    >>> raw = xr.Dataset({"u": ("x", [1], {"scale_factor": "0.01"})})
    >>> check_stored_attributes(raw)
    Traceback (most recent call last):
    ...
    frameshift.errors.UnsupportedInputError: variable 'u' has scale_factor stored as text ...
    """
    place = f" in {os.fspath(where)}" if where else ""
    for name, var in raw.variables.items():
        if var.dtype.kind not in "iuf":
            continue
        for key in NUMERIC_ATTRIBUTES:
            value = var.attrs.get(key)
            if isinstance(value, str | bytes | np.str_ | np.bytes_) or (
                    isinstance(value, np.ndarray) and value.dtype.kind in "SUO"):
                raise UnsupportedInputError(
                    f"variable {name!r} has {key} stored as text ({value!r}){place}; CF "
                    f"needs a number here. Rewrite the attribute as a number (e.g. "
                    f"ncatted -a {key},{name},o,f,<value>) and run again",
                    variable=str(name),
                    expected=f"a numeric {key}",
                    found=f"text {value!r}",
                )


def _open(files: list, chunks: dict, combine: bool,
          engine: str) -> tuple[xr.Dataset, xr.Dataset | None]:
    if combine or len(files) > 1:
        ds = xr.open_mfdataset(
            files, combine="by_coords", data_vars="minimal", coords="minimal",
            compat="override", chunks=chunks, engine=engine,
        )
        try:  # the first file as stored: variables the files share are copied from it
            raw = xr.open_dataset(files[0], chunks=chunks, engine=engine, decode_cf=False)
        except BaseException:
            ds.close()
            raise
        return decode_labels(ds), raw
    ds = xr.open_dataset(files[0], chunks=chunks, engine=engine)
    try:
        raw = xr.open_dataset(files[0], chunks=chunks, engine=engine, decode_cf=False)
    except BaseException:
        ds.close()
        raise
    return decode_labels(ds), raw


# --- what is written how ---------------------------------------------------------------
def prepare_output(
    out: xr.Dataset,
    source: xr.Dataset,
    raw: xr.Dataset | None = None,
    *,
    precision: str = "input",
    target: str = "netcdf",
) -> tuple[xr.Dataset, dict[str, str]]:
    """The Dataset to write for result ``out`` of an operation on ``source``.

    Returns the Dataset (with encodings set) and, per variable, how it is
    written: ``"copied"`` (untouched: from ``raw`` as stored if given, else
    with its input encoding), ``"relabelled"`` (same values, new metadata:
    input encoding kept, which is lossless) or ``"computed"`` (new values:
    float in the input's precision, or float64 with ``precision="float64"``;
    compressed, chunked in step with Dask, never packed). The policy is
    :func:`frameshift.storage.plan_output`.

    Examples
    --------
    >>> import xarray as xr
    >>> src = xr.Dataset({"a": ("x", [1.0])})
    >>> prepare_output(src.assign(b=src.a * 2), src)[1]
    {'a': 'copied', 'b': 'computed'}
    """
    return plan_output(out, source, raw, precision=precision, target=target)


# --- writing ----------------------------------------------------------------------------
def write_atomic(
    ds: xr.Dataset,
    path: str | os.PathLike,
    *,
    compute: Callable[[object], object] | None = None,
    manifest: Mapping | None = None,
    sync: bool = True,
) -> Path:
    """Write ``ds`` to ``path`` so that ``path`` only ever holds a complete file.

    The data go to a hidden temporary file in the same directory, written
    with ``to_netcdf(compute=False)`` and computed by ``compute`` (default:
    the current Dask scheduler; xarray takes the NetCDF lock that fits it);
    the file is then flushed and renamed over ``path``. With ``manifest``
    (the arguments of :func:`frameshift.safefiles.manifest_record`: ``inputs``,
    ``settings``, ``command``, ``checksum``) the manifest is written first
    under a temporary name and both reach their final names together. On
    any failure, ``KeyboardInterrupt`` included, the temporary files are
    removed and the error re-raised (a full disk or unwritable folder as
    :class:`~frameshift.errors.WriteError`); an existing file at ``path`` is
    left as it was. ``sync=False`` skips syncing to disk before the rename (see
    :func:`frameshift.safefiles.publish`).

    Examples
    --------
    >>> import xarray as xr
    >>> write_atomic(xr.Dataset({"a": ("x", [1.0])}), "out/a.nc")  # doctest: +SKIP
    PosixPath('out/a.nc')
    """

    def write(tmp: Path) -> None:
        # if a chunk fails, the chunks still being written finish before the file is closed
        with _own_pool() as pool:
            try:
                delayed = ds.to_netcdf(tmp, mode="w", engine="netcdf4", compute=False)
                if compute is None:
                    delayed.compute()
                else:
                    compute(delayed)
            except BaseException:
                pool.shutdown(wait=True, cancel_futures=True)
                _close_open_file(tmp)
                raise

    return safefiles.publish(write, path, manifest=manifest, sync=sync)


def write_store_atomic(
    ds: xr.Dataset,
    path: str | os.PathLike,
    *,
    compute: Callable[[object], object] | None = None,
    manifest: Mapping | None = None,
    sync: bool = True,
) -> Path:
    """Write ``ds`` as a Zarr store at ``path``, whole or not at all (with its manifest).

    The store (consolidated metadata, Zarr format :data:`ZARR_FORMAT`) is
    written into a temporary directory beside ``path`` and published with its
    manifest by :func:`frameshift.safefiles.publish`, as NetCDF files are.
    Each file of the store is synced to disk as soon as it is written, while
    the rest is still computed (:class:`frameshift.safefiles.SyncAhead`), so
    the disk works during the computation instead of after it; files written
    by other processes (a distributed cluster's workers) are synced at the end.
    ``sync=False`` syncs nothing (see :func:`frameshift.safefiles.publish`).

    Examples
    --------
    >>> import xarray as xr
    >>> write_store_atomic(xr.Dataset({"a": ("x", [1.0])}), "out/a.zarr")  # doctest: +SKIP
    PosixPath('out/a.zarr')
    """
    _require_zarr()

    def write(tmp: Path) -> frozenset[Path]:
        tmp.unlink(missing_ok=True)  # the temporary name was held by an empty file
        with safefiles.SyncAhead() as ahead, _own_pool() as pool:
            store = _syncing_store_class()(tmp, ahead=ahead if sync else None)
            try:
                delayed = ds.to_zarr(store, mode="w", compute=False, consolidated=True,
                                     zarr_format=ZARR_FORMAT)
                if compute is None:
                    delayed.compute()
                else:
                    compute(delayed)
            except BaseException:
                # no new file is begun, and those being written are finished, before the
                # store is removed: a late one would make its folders again afterwards
                store.stop()
                pool.shutdown(wait=True, cancel_futures=True)
                store.wait_idle()
                raise
            return ahead.finish()

    return safefiles.publish(write, path, manifest=manifest, sync=sync)


@contextlib.contextmanager
def _own_pool():
    """A thread pool of our own for Dask's threaded scheduler (others ignore it), so
    that a failed write can wait for the chunks still being written."""
    import dask
    from dask.system import CPU_COUNT

    pool = ThreadPoolExecutor(max(1, int(CPU_COUNT)), thread_name_prefix="frameshift-write")
    try:
        with dask.config.set(pool=pool):
            yield pool
    finally:
        pool.shutdown(wait=False)


@functools.cache
def _syncing_store_class() -> type:
    """zarr's ``LocalStore`` handing each file it has written to a :class:`SyncAhead`."""
    from zarr.storage import LocalStore

    class SyncingStore(LocalStore):
        def __init__(self, root: str | os.PathLike, *, read_only: bool = False,
                     ahead: safefiles.SyncAhead | None = None) -> None:
            super().__init__(Path(root), read_only=read_only)
            self._ahead = ahead
            self._stopped = False
            self._busy = 0
            self._idle = threading.Condition()

        async def set(self, key: str, value: object) -> None:
            with self._idle:
                if self._stopped:
                    raise WriteError(f"the write of {os.fspath(self.root)!r} was stopped",
                                     variable=key, expected="a write in progress",
                                     found="stopped after a failure")
                self._busy += 1
            try:
                await super().set(key, value)  # returns once the file is whole
            finally:
                with self._idle:
                    self._busy -= 1
                    self._idle.notify_all()
            if self._ahead is not None:
                self._ahead.submit(self.root / key)

        def stop(self) -> None:
            """Refuse every file not yet begun (after a failure elsewhere)."""
            with self._idle:
                self._stopped = True

        def wait_idle(self, timeout: float = 60.0) -> None:
            """Wait for the files being written (zarr writes some on its own threads)."""
            with self._idle:
                self._idle.wait_for(lambda: self._busy == 0, timeout)

        def __reduce__(self) -> tuple:
            # sent to another process (a cluster's worker): a plain store there,
            # whose files publish() syncs at the end
            return (LocalStore, (self.root,))

    return SyncingStore


def _close_open_file(path: Path) -> None:
    """Close the handle xarray keeps on a file whose write failed.

    A write stopped midway never reaches xarray's final close, and its file
    stays open in xarray's file cache: once deleted, a temporary file would
    keep its disk space (a full disk stays full) until the process ends.
    """
    try:
        from xarray.backends import file_manager
        from xarray.backends.locks import NETCDFC_LOCK
    except ImportError:  # pragma: no cover - another xarray layout: leave it to the GC
        return
    # Dask threads still writing other chunks of the failed file hold this lock for each
    # write: closing under it never pulls the file from under a write in progress
    if not NETCDFC_LOCK.acquire(timeout=60):  # pragma: no cover - a write hung
        return
    try:
        cache = file_manager.FILE_CACHE
        for key in list(cache.keys()):
            if len(key) > 1 and str(path) in tuple(map(str, key[1])):
                handle = cache.pop(key, None)
                if handle is not None:
                    with contextlib.suppress(Exception):
                        handle.close()
    finally:
        NETCDFC_LOCK.release()


# --- manifest (in frameshift.safefiles) --------------------------------------------------
manifest_path = safefiles.manifest_path
write_manifest = safefiles.write_manifest
is_current = safefiles.is_current
