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
import datetime as _dt
import json
import math
import os
import tempfile
import warnings
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path

import numpy as np
import xarray as xr

from frameshift.errors import ConventionError, MissingInputError, UnsupportedInputError
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
_MANIFEST_SUFFIX = ".frameshift.json"
_MANIFEST_FORMAT = 1


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
) -> Path:
    """Write ``ds`` to ``path`` so that ``path`` only ever holds a complete file.

    The data go to a hidden temporary file in the same directory, written
    with ``to_netcdf(compute=False)`` and computed by ``compute`` (default:
    the current Dask scheduler; xarray takes the NetCDF lock that fits it);
    the file is then flushed and renamed over ``path``. On any failure,
    ``KeyboardInterrupt`` included, the temporary file is removed and the
    error re-raised; an existing file at ``path`` is left as it was.

    Examples
    --------
    >>> import xarray as xr
    >>> write_atomic(xr.Dataset({"a": ("x", [1.0])}), "out/a.nc")  # doctest: +SKIP
    PosixPath('out/a.nc')
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    os.close(fd)
    tmp = Path(tmp_name)
    try:
        delayed = ds.to_netcdf(tmp, mode="w", engine="netcdf4", compute=False)
        if compute is None:
            delayed.compute()
        else:
            compute(delayed)
        _flush(tmp)
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    _flush_dir(path.parent)
    return path


def write_store_atomic(
    ds: xr.Dataset,
    path: str | os.PathLike,
    *,
    compute: Callable[[object], object] | None = None,
) -> Path:
    """Write ``ds`` as a Zarr store at ``path`` so that ``path`` only ever holds a whole store.

    The store is written (``to_zarr(compute=False)``, consolidated metadata)
    into a hidden temporary directory beside ``path``, computed by
    ``compute``, its files flushed, and renamed into place; a store already at
    ``path`` is moved aside first and removed after the rename. On any
    failure the temporary store is removed and the error re-raised.

    Examples
    --------
    >>> import xarray as xr
    >>> write_store_atomic(xr.Dataset({"a": ("x", [1.0])}), "out/a.zarr")  # doctest: +SKIP
    PosixPath('out/a.zarr')
    """
    import shutil

    _require_zarr()
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent))
    old = None
    try:
        delayed = ds.to_zarr(tmp, mode="w", compute=False, consolidated=True,
                             zarr_format=ZARR_FORMAT)
        if compute is None:
            delayed.compute()
        else:
            compute(delayed)
        for root, _, names in os.walk(tmp):
            for name in names:
                _flush(Path(root) / name)
        os.chmod(tmp, 0o777 & ~_umask())
        if path.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{path.name}.", suffix=".old",
                                        dir=path.parent))
            os.replace(path, old / path.name)
        os.replace(tmp, path)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        if old is not None and not path.exists() and (old / path.name).exists():
            os.replace(old / path.name, path)  # put the earlier store back
        raise
    finally:
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
    _flush_dir(path.parent)
    return path


def _flush(path: Path) -> None:
    with open(path, "rb") as fh:
        os.fsync(fh.fileno())


def _flush_dir(path: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(path, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


# --- manifest ---------------------------------------------------------------------------
def manifest_path(output: str | os.PathLike) -> Path:
    """The JSON sidecar recording how ``output`` was made.

    Examples
    --------
    >>> manifest_path("out/a.nc").name
    'a.nc.frameshift.json'
    """
    output = Path(output)
    return output.with_name(output.name + _MANIFEST_SUFFIX)


def _stat(path: Path) -> dict:
    if path.is_dir():  # a Zarr store: every file in it counts
        return _tree_stat(path)
    st = path.stat()
    return {"path": str(path.resolve()), "size": st.st_size, "mtime_ns": st.st_mtime_ns}


def _tree_stat(path: Path) -> dict:
    size, mtime = 0, path.stat().st_mtime_ns
    for root, _, names in os.walk(path):
        for name in names:
            st = os.stat(os.path.join(root, name))
            size += st.st_size
            mtime = max(mtime, st.st_mtime_ns)
    return {"path": str(path.resolve()), "size": size, "mtime_ns": mtime}


def _normal(settings: Mapping) -> object:
    return json.loads(json.dumps(settings, sort_keys=True, default=str))


def write_manifest(
    output: str | os.PathLike,
    inputs: Sequence[str | os.PathLike],
    settings: Mapping,
    *,
    command: str = "",
) -> Path:
    """Record inputs (size, mtime), settings and the output's own size and mtime.

    Written atomically (temporary file, then rename) after the output is in place.

    Examples
    --------
    >>> write_manifest("out/a.nc", ["a.nc"], {"to": "inertial"})  # doctest: +SKIP
    """
    from frameshift._version import __version__

    output = Path(output)
    record = {
        "frameshift_manifest": _MANIFEST_FORMAT,
        "frameshift_version": __version__,
        "created": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "command": command,
        "settings": _normal(settings),
        "inputs": [_stat(Path(p)) for p in inputs],
        "output": _stat(output),
    }
    target = manifest_path(output)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=output.parent)
    try:
        with os.fdopen(fd, "w") as fh:
            json.dump(record, fh, indent=1, sort_keys=True)
            fh.write("\n")
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    return target


def is_current(
    output: str | os.PathLike, inputs: Sequence[str | os.PathLike], settings: Mapping
) -> tuple[bool, str]:
    """Whether ``output`` is complete and newer than ``inputs``, made with ``settings``.

    Returns ``(current, reason)``; the reason says what differs when it is not.

    Examples
    --------
    >>> is_current("nowhere/a.nc", ["a.nc"], {})
    (False, 'no output yet')
    """
    from frameshift._version import __version__

    output = Path(output)
    if not output.exists():
        return False, "no output yet"
    try:
        record = json.loads(manifest_path(output).read_text())
    except (OSError, ValueError):
        return False, "no readable manifest"
    if record.get("frameshift_version") != __version__:
        return False, f"made by frameshift {record.get('frameshift_version')}"
    if record.get("settings") != _normal(settings):
        return False, "made with other settings"
    try:
        now = [_stat(Path(p)) for p in inputs]
        made = _stat(output)
    except OSError as exc:
        return False, str(exc)
    if record.get("inputs") != now:
        return False, "inputs changed since"
    if record.get("output") != made:
        return False, "output changed since it was written"
    if any(made["mtime_ns"] < i["mtime_ns"] for i in now):
        return False, "output older than an input"
    return True, "up to date"
