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
import math
import os
import warnings
from collections.abc import Callable, Mapping, Sequence
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import xarray as xr

from frameshift import safefiles
from frameshift.cf import float_encoding
from frameshift.errors import ConventionError

__all__ = [
    "WORKING_COPIES",
    "choose_chunks",
    "decode_labels",
    "default_memory",
    "disk_chunks",
    "encode_labels",
    "is_current",
    "manifest_path",
    "open_input",
    "parse_memory",
    "prepare_output",
    "write_atomic",
    "write_manifest",
]

#: How many chunk-sized float64 arrays one Dask task may hold at once (inputs
#: promoted to float64, intermediates, and a 3-vector output); the chunk size
#: is the memory budget divided by this and by the number of tasks in flight.
WORKING_COPIES = 32
#: Dimensions never split across Dask chunks (kernels need them whole).
WHOLE_DIMS = ("component",)
#: Upper bound of one NetCDF (HDF5) chunk of a variable frameshift computes.
DISK_CHUNK_BYTES = 4 * 2**20
#: Name of the label variable that carries the ``component`` axis names on disk.
LABEL = "component_label"
_LABEL_DIM = "component_strlen"
_MANIFEST_SUFFIX = ".frameshift.json"
_MANIFEST_FORMAT = 1
_STORAGE_KEYS = ("zlib", "complevel", "shuffle", "fletcher32", "contiguous", "chunksizes",
                 "compression", "dtype", "_FillValue", "missing_value", "scale_factor",
                 "add_offset", "_Unsigned", "units", "calendar", "char_dim_name", "endian")


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
    part = _largest_divisor(stored, size)  # a stored chunk read by a whole number of tasks
    return part if 2 * part >= size else size


def disk_chunks(block: Sequence[int], itemsize: int, limit: int = DISK_CHUNK_BYTES) -> tuple:
    """NetCDF chunk shape for a variable whose first Dask block is ``block``.

    Each stored chunk lies inside one Dask block (its size divides the block
    along every dimension), so each task writes whole stored chunks; stored
    chunks stay under ``limit`` bytes by splitting outer dimensions first.

    Examples
    --------
    >>> disk_chunks((100, 50, 72), 8, limit=8 * 50 * 72 * 10)
    (10, 50, 72)
    """
    shape = [max(1, int(n)) for n in block]
    for i in range(len(shape)):
        inner = math.prod(shape[i + 1:]) * itemsize
        if math.prod(shape) * itemsize <= limit:
            break
        room = max(1, limit // max(1, inner))
        shape[i] = _largest_divisor(shape[i], room)
    return tuple(shape)


def _largest_divisor(n: int, at_most: int) -> int:
    for d in range(min(n, at_most), 0, -1):
        if n % d == 0:
            return d
    return 1


# --- opening ---------------------------------------------------------------------------
def open_input(
    paths: str | os.PathLike | Sequence[str | os.PathLike],
    *,
    memory: int | None = None,
    parallel: int = 1,
    combine: bool = False,
) -> tuple[xr.Dataset, xr.Dataset | None]:
    """Open input lazily with budget-sized Dask chunks.

    Returns ``(decoded, raw)``: the CF-decoded Dataset to compute on, and for
    a single file the same file undecoded (``decode_cf=False``), from which
    untouched variables are copied byte for byte; ``raw`` is None when
    several files are combined along time (their stored encodings may differ).
    Close both when done.

    Examples
    --------
    >>> ds, raw = open_input("data_demo/tiny_example.nc")  # doctest: +SKIP
    """
    memory = default_memory() if memory is None else memory
    files = [paths] if isinstance(paths, str | os.PathLike) else list(paths)
    with xr.open_dataset(files[0], chunks=None) as probe:
        chunks = choose_chunks(probe, memory, parallel=parallel)
    with warnings.catch_warnings():
        # a budget smaller than one stored chunk must split it; xarray warns about that
        warnings.filterwarnings("ignore", "The specified chunks separate", UserWarning)
        return _open(files, chunks, combine)


def _open(files: list, chunks: dict, combine: bool) -> tuple[xr.Dataset, xr.Dataset | None]:
    if combine or len(files) > 1:
        ds = xr.open_mfdataset(
            files, combine="by_coords", data_vars="minimal", coords="minimal",
            compat="override", chunks=chunks, engine="netcdf4",
        )
        return decode_labels(ds), None
    ds = xr.open_dataset(files[0], chunks=chunks, engine="netcdf4")
    try:
        raw = xr.open_dataset(files[0], chunks=chunks, engine="netcdf4", decode_cf=False)
    except BaseException:
        ds.close()
        raise
    return decode_labels(ds), raw


def encode_labels(ds: xr.Dataset) -> xr.Dataset:
    """Put a string ``component`` coordinate on disk as CF labels.

    CF coordinate variables must be numeric, so the axis names go to a char
    label variable (CF §6.1) ``component_label(component)``, and
    variables with a ``component`` dimension get it first, left of the
    space-time dimensions (CF §2.4). :func:`decode_labels` undoes this.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"p": (("t", "component"), [[1.0, 2.0, 3.0]])},
    ...                 coords={"component": ["x", "y", "z"]})
    >>> encode_labels(ds)["p"].dims
    ('component', 't')
    """
    if "component" not in ds.coords or ds["component"].dtype.kind not in "USO":
        return ds
    labels = ds["component"]
    attrs = {"long_name": labels.attrs.get("long_name", "Cartesian axis")}
    out = ds.drop_vars("component")
    out = out.assign_coords({LABEL: ("component", labels.values.astype("S"), attrs)})
    out[LABEL].encoding = {"dtype": "S1", "char_dim_name": _LABEL_DIM}
    for name in list(out.data_vars):
        if "component" in out[name].dims:
            out[name] = out[name].transpose("component", ...)
    return out


def decode_labels(ds: xr.Dataset) -> xr.Dataset:
    """Undo :func:`encode_labels`: a string ``component`` coordinate, kept last.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"p": (("t", "component"), [[1.0, 2.0, 3.0]])},
    ...                 coords={"component": ["x", "y", "z"]})
    >>> decode_labels(encode_labels(ds))["component"].values.tolist()
    ['x', 'y', 'z']
    """
    if LABEL not in ds.variables or ds[LABEL].dims != ("component",):
        return ds
    label = ds[LABEL]
    values = np.char.decode(np.asarray(label.values).astype("S"), "utf-8").astype(str)
    out = ds.drop_vars(LABEL).assign_coords(component=("component", values, dict(label.attrs)))
    for name in list(out.data_vars):
        if "component" in out[name].dims:
            out[name] = out[name].transpose(..., "component")
    return out


# --- what is written how ---------------------------------------------------------------
def prepare_output(
    out: xr.Dataset, source: xr.Dataset, raw: xr.Dataset | None = None
) -> tuple[xr.Dataset, dict[str, str]]:
    """The Dataset to write for result ``out`` of an operation on ``source``.

    Returns the Dataset (with encodings set) and, per variable, how it is
    written: ``"copied"`` (untouched: from ``raw`` as stored if given, else
    with its input encoding), ``"relabelled"`` (same values, new metadata:
    input encoding kept, which is lossless) or ``"computed"`` (new values:
    float, zlib, chunked in step with Dask, no packing).

    Examples
    --------
    >>> import xarray as xr
    >>> src = xr.Dataset({"a": ("x", [1.0])})
    >>> prepare_output(src.assign(b=src.a * 2), src)[1]
    {'a': 'copied', 'b': 'computed'}
    """
    out = encode_labels(out)
    variables: dict[str, xr.Variable] = {}
    how: dict[str, str] = {}
    coords = {str(n) for n in out.coords}
    for key, var in out.variables.items():
        name = str(key)
        old = source.variables.get(name)
        is_coord = name in coords
        if old is not None and _same_data(var, old) and _same_attrs(var.attrs, old.attrs):
            how[name] = "copied"
            if raw is not None and name in raw.variables and raw.variables[name].dtype.kind != "S":
                # as stored; char arrays come decoded (xarray re-encodes them exactly)
                new = raw.variables[name].copy(deep=False)
                new.encoding = _storage(raw.variables[name].encoding)
            else:
                new = var.copy(deep=False)
                new.encoding = _storage(var.encoding)
            if "_FillValue" not in new.encoding and "_FillValue" not in new.attrs:
                new.encoding["_FillValue"] = None
        elif old is not None and _same_data(var, old):
            how[name] = "relabelled"
            new = var.copy(deep=False)
            new.encoding = _storage(var.encoding)
            if is_coord and "_FillValue" not in new.encoding:
                new.encoding["_FillValue"] = None
        else:
            how[name] = "computed"
            new = var.copy(deep=False)
            new.encoding = _computed_encoding(var, is_coord)
        variables[name] = new
    data_vars = {n: v for n, v in variables.items() if n not in coords}
    coord_vars = {n: v for n, v in variables.items() if n in coords}
    result = xr.Dataset(data_vars, coords=coord_vars, attrs=dict(out.attrs))
    return result, how


def _storage(encoding: Mapping) -> dict:
    return {k: v for k, v in encoding.items() if k in _STORAGE_KEYS}


def _computed_encoding(var: xr.Variable, is_coord: bool) -> dict:
    if var.dtype.kind in "USO":
        enc = {k: v for k, v in var.encoding.items() if k in ("dtype", "char_dim_name")}
    else:
        enc = {k: v for k, v in float_encoding(var.encoding).items()
               if k in ("complevel", "shuffle")}
        enc.setdefault("complevel", 4)
        enc.update(zlib=True, shuffle=True)
        if var.ndim:
            block = [c[0] for c in var.chunks] if var.chunks else list(var.shape)
            enc["chunksizes"] = disk_chunks(block, var.dtype.itemsize)
        else:
            enc = {}
    if is_coord:
        enc["_FillValue"] = None
    return enc


def _same_data(new: xr.Variable, old: xr.Variable) -> bool:
    if new.dims != old.dims or new.dtype != old.dtype or new.shape != old.shape:
        return False
    a, b = new._data, old._data
    if a is b:
        return True
    if hasattr(new.data, "dask") or hasattr(old.data, "dask"):
        return getattr(new.data, "name", 1) == getattr(old.data, "name", 2)
    if new.size <= 10**6:  # in memory (index coordinates): compare values
        try:
            return bool(new.equals(old))
        except Exception:  # an incomparable variable counts as changed
            return False
    return False


def _same_attrs(a: Mapping, b: Mapping) -> bool:
    if set(a) != set(b):
        return False
    return all(np.array_equal(np.asarray(a[k]), np.asarray(b[k])) for k in a)


# --- writing ----------------------------------------------------------------------------
def write_atomic(
    ds: xr.Dataset,
    path: str | os.PathLike,
    *,
    compute: Callable[[object], object] | None = None,
    manifest: Mapping | None = None,
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
    left as it was.

    Examples
    --------
    >>> import xarray as xr
    >>> write_atomic(xr.Dataset({"a": ("x", [1.0])}), "out/a.nc")  # doctest: +SKIP
    PosixPath('out/a.nc')
    """

    def write(tmp: Path) -> None:
        # a pool of our own for Dask's threaded scheduler (other schedulers ignore it): if
        # a chunk fails, the chunks still being written finish before the file is closed
        import dask
        from dask.system import CPU_COUNT

        pool = ThreadPoolExecutor(max(1, int(CPU_COUNT)), thread_name_prefix="frameshift-write")
        try:
            with dask.config.set(pool=pool):
                delayed = ds.to_netcdf(tmp, mode="w", engine="netcdf4", compute=False)
                if compute is None:
                    delayed.compute()
                else:
                    compute(delayed)
        except BaseException:
            pool.shutdown(wait=True, cancel_futures=True)
            _close_open_file(tmp)
            raise
        finally:
            pool.shutdown(wait=False)

    return safefiles.publish(write, path, manifest=manifest)


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
