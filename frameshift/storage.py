"""How each variable of an output is stored: copied as it was, or written in a stated precision.

The policy, variable by variable (:func:`plan_output`):

* **copied**: a variable frameshift did not touch (same values, same
  attributes) is written exactly as the input stored it: dtype, packing,
  ``_FillValue``/``missing_value`` (or their absence), chunking, filters,
  time units and calendar.
* **relabelled**: same values, new attributes (the northward component of a
  local conversion): its input encoding is kept, which is lossless.
* **computed**: new values, always computed in float64, are stored in the
  precision of the input they were made from (``precision="input"``: float32
  from float32 or from integers of 16 bits or fewer, packed or not; float64
  otherwise) or in float64 (``precision="float64"``); never re-packed;
  compressed with zlib level 1 and shuffle (fast; higher levels cost several
  times the time for a few per cent of size), except a converted variable
  whose input was stored uncompressed, which stays so (as compact and as
  quick to write as its input); ``_FillValue``/``missing_value`` as the
  input variable had them (the same attribute names and numbers, in the new
  type, or none if it had none).

Coordinates never get a ``_FillValue`` (CF 1.11 §2.5.1). A string
``component`` coordinate (the Cartesian axes ``x``, ``y``, ``z``) is stored
as a char coordinate variable, so that any netCDF reader gets the labels
back and ``ds.sel(component="x")`` works on the reopened file.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np
import xarray as xr

from frameshift.errors import check_choice

__all__ = [
    "COMPLEVEL",
    "DISK_CHUNK_BYTES",
    "PRECISIONS",
    "SUMS_KEY",
    "decode_labels",
    "disk_chunks",
    "encode_labels",
    "largest_divisor",
    "output_format",
    "plan_output",
    "stored_precision",
    "with_format_suffix",
]

#: Storage precisions of computed variables: the input's, or always float64.
PRECISIONS = ("input", "float64")
#: Encoding key an operation sets on a variable that is a sum over many points: it is
#: stored in float64 whatever the input's precision. Storage rebuilds every computed
#: variable's encoding, so the key itself is never written.
SUMS_KEY = "frameshift_sum"
#: zlib level of computed variables: level 1 writes several times faster than
#: higher levels for a few per cent more bytes on float data with shuffle.
COMPLEVEL = 1
#: Upper bound of one stored chunk of a variable frameshift computes.
DISK_CHUNK_BYTES = 4 * 2**20
#: Name of the char variable earlier frameshift versions stored the axis names in.
OLD_LABEL = "component_label"
_LABEL_DIM = "component_strlen"
_FILL_KEYS = ("_FillValue", "missing_value")
_STORAGE_KEYS = ("zlib", "complevel", "shuffle", "fletcher32", "contiguous", "chunksizes",
                 "compression", "dtype", "_FillValue", "missing_value", "scale_factor",
                 "add_offset", "_Unsigned", "units", "calendar", "char_dim_name", "endian",
                 "chunks", "compressors", "filters", "preferred_chunks")
_NETCDF_ONLY = ("zlib", "complevel", "shuffle", "fletcher32", "contiguous", "chunksizes",
                "compression", "endian")
_ZARR_ONLY = ("chunks", "compressors", "filters", "preferred_chunks")
# attributes naming the input variables a computed variable was made from
_SOURCE_ATTRS = ("velocity_variables",)
_SOURCE_JSON = ("rotating_frame_variables",)


# --- labels -------------------------------------------------------------------------------
def encode_labels(ds: xr.Dataset) -> xr.Dataset:
    """Store a string ``component`` coordinate as a char coordinate variable.

    Variables with a ``component`` dimension get it first, left of the
    space-time dimensions (CF 1.11 §2.4), as frameshift makes them in memory.
    Any netCDF reader gets the labels back; xarray reopens them as a string
    coordinate, so ``.sel(component="x")`` works.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset({"p": (("t", "component"), [[1.0, 2.0, 3.0]])},
    ...                 coords={"component": ["x", "y", "z"]})
    >>> out = encode_labels(ds)
    >>> out["p"].dims, out["component"].encoding["dtype"]
    (('component', 't'), 'S1')
    """
    if "component" not in ds.coords or ds["component"].dtype.kind not in "USO":
        return ds
    out = ds.copy(deep=False)
    for name in list(out.data_vars):
        if "component" in out[name].dims and out[name].dims[0] != "component":
            out[name] = out[name].transpose("component", ...)
    label = out["component"].variable.copy(deep=False)
    label.encoding = {"dtype": "S1", "char_dim_name": _LABEL_DIM, "_FillValue": None}
    return out.assign_coords(component=label)


def decode_labels(ds: xr.Dataset) -> xr.Dataset:
    """Give files of earlier frameshift versions (labels in ``component_label``) a
    string ``component`` coordinate; other Datasets are returned as they are.

    Examples
    --------
    >>> import xarray as xr
    >>> old = xr.Dataset({"p": (("component", "t"), [[1.0], [2.0], [3.0]])},
    ...                  coords={"component_label": ("component", [b"x", b"y", b"z"])})
    >>> decode_labels(old)["component"].values.tolist()
    ['x', 'y', 'z']
    """
    if OLD_LABEL not in ds.variables or ds[OLD_LABEL].dims != ("component",):
        return ds
    label = ds[OLD_LABEL]
    values = np.char.decode(np.asarray(label.values).astype("S"), "utf-8").astype(str)
    return ds.drop_vars(OLD_LABEL).assign_coords(
        component=("component", values, dict(label.attrs)))


# --- precision -----------------------------------------------------------------------------
def stored_precision(var: xr.Variable) -> np.dtype:
    """The float type that holds a decoded variable's values without loss of what it stored.

    float32 for float32 (or float16) and for integers of 16 bits or fewer
    (packed or not); float64 otherwise.

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> v = xr.Variable("x", np.zeros(2, np.float64))
    >>> v.encoding = {"dtype": np.dtype("int16"), "scale_factor": 0.01}
    >>> stored_precision(v)
    dtype('float32')
    """
    dtype = np.dtype(var.encoding.get("dtype", var.dtype))
    if dtype.kind == "f":
        return np.dtype(np.float32 if dtype.itemsize <= 4 else np.float64)
    if dtype.kind in "iu":
        return np.dtype(np.float32 if dtype.itemsize <= 2 else np.float64)
    return np.dtype(np.float64)


def _sources(var: xr.Variable, source: xr.Dataset, consumed: Sequence[str]) -> list[str]:
    """Input variables a computed variable was made from: named in its attributes,
    else itself (a converted variable keeps its name), else what the operation used up."""
    names: list[str] = []
    for key in _SOURCE_ATTRS:
        names += str(var.attrs.get(key, "")).split()
    for key in _SOURCE_JSON:
        try:
            record = json.loads(var.attrs.get(key, "{}"))
        except (TypeError, ValueError):
            record = {}
        names += [v["name"] for v in record.values() if isinstance(v, dict) and "name" in v]
    found = [n for n in names if n in source.variables]
    return found or list(consumed)


# --- the plan --------------------------------------------------------------------------------
def plan_output(
    out: xr.Dataset,
    source: xr.Dataset,
    raw: xr.Dataset | None = None,
    *,
    precision: str = "input",
    target: str = "netcdf",
) -> tuple[xr.Dataset, dict[str, str]]:
    """The Dataset to write for result ``out`` of an operation on ``source``.

    Returns the Dataset, with each variable's encoding set by the policy in
    the module docstring, and per variable how it is written: ``"copied"``,
    ``"relabelled"`` or ``"computed"``. ``raw`` is ``source`` opened without
    decoding, from which untouched variables are copied as stored.
    ``target`` is ``"netcdf"`` or ``"zarr"`` (which storage keys apply).

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> src = xr.Dataset({"a": ("x", np.ones(2, np.float32))})
    >>> plan, how = plan_output(src.assign(b=src.a * 2.0), src)
    >>> how, plan["b"].encoding["dtype"]
    ({'a': 'copied', 'b': 'computed'}, dtype('float32'))
    """
    check_choice("precision", precision, PRECISIONS)
    check_choice("target", target, ("netcdf", "zarr"))
    out = encode_labels(out)
    coords = {str(n) for n in out.coords}
    consumed = [str(n) for n, v in source.data_vars.items()
                if n not in out.variables or not _same_data(out.variables[n], v.variable)]
    variables: dict[str, xr.Variable] = {}
    how: dict[str, str] = {}
    for key, var in out.variables.items():
        name = str(key)
        old = source.variables.get(name)
        is_coord = name in coords
        if old is not None and _same_data(var, old) and _same_attrs(var.attrs, old.attrs):
            how[name] = "copied"
            if raw is not None and name in raw.variables and _matches(raw.variables[name], var):
                new = _as_stored(raw.variables[name], target)  # as stored
            else:
                new = var.copy(deep=False)
                new.encoding = _storage(var.encoding, target)
            if "_FillValue" not in new.encoding and "_FillValue" not in new.attrs:
                new.encoding["_FillValue"] = None
        elif old is not None and _same_data(var, old):
            how[name] = "relabelled"
            new = var.copy(deep=False)
            new.encoding = _storage(var.encoding, target)
            if "_FillValue" not in new.encoding:
                new.encoding["_FillValue"] = None
        else:
            how[name] = "computed"
            new = var.copy(deep=False)
            if var.dtype.kind in "USO":
                new.encoding = {k: v for k, v in var.encoding.items()
                                if k in ("dtype", "char_dim_name", "_FillValue")}
            else:
                origin = [source.variables[n] for n in
                          ([name] if old is not None else _sources(var, source, consumed))]
                new.encoding, why = _computed_encoding(var, origin, precision, target,
                                                       converted=old is not None)
                if "dtype" in new.encoding and not is_coord:
                    new.attrs = {**new.attrs, "storage_precision": _precision_note(
                        new.encoding["dtype"], why)}
            if is_coord:
                new.encoding["_FillValue"] = None
        if how[name] != "copied" and not is_coord:
            _keep_declared_coordinates(var, new, out)
        variables[name] = new
    data_vars = {n: v for n, v in variables.items() if n not in coords}
    coord_vars = {n: v for n, v in variables.items() if n in coords}
    return xr.Dataset(data_vars, coords=coord_vars, attrs=dict(out.attrs)), how


def _keep_declared_coordinates(var: xr.Variable, new: xr.Variable, out: xr.Dataset) -> None:
    """Write the ``coordinates`` a variable declared (those still in ``out``), not the
    every-coordinate list xarray would make: a velocity on ``time_uv``/``lat_uv`` must
    still say so in the output, or reading it back could not tell its position."""
    text = var.attrs.get("coordinates", var.encoding.get("coordinates"))
    if not isinstance(text, str):
        return
    kept = " ".join(n for n in text.split() if n in out.variables)
    if kept:
        new.encoding["coordinates"] = kept


def _matches(raw: xr.Variable, var: xr.Variable) -> bool:
    """Whether the stored variable holds the decoded one's elements (not a part of them,
    as the first of several files combined along time does)."""
    dims, shape = raw.dims, raw.shape
    if raw.dtype == np.dtype("S1") and raw.ndim and var.dtype.kind in "SUO":
        dims, shape = dims[:-1], shape[:-1]  # the char dimension joins the characters
    return dims == var.dims and shape == var.shape


def _as_stored(raw: xr.Variable, target: str) -> xr.Variable:
    """An undecoded variable, to be written back exactly as it was stored."""
    new = raw.copy(deep=False)
    new.encoding = _storage(raw.encoding, target)
    if raw.dtype == np.dtype("S1") and raw.ndim:
        # a char array: its last dimension joins the characters back (as xarray
        # decodes them) and is named again on writing, with the same length
        width = raw.shape[-1]

        def join(block: np.ndarray) -> np.ndarray:
            return np.ascontiguousarray(block).view(f"S{width}").reshape(block.shape[:-1])

        data = raw.data
        if hasattr(data, "dask"):  # stays lazy: whole strings per block
            joined = data.rechunk({data.ndim - 1: -1}).map_blocks(
                join, drop_axis=data.ndim - 1, dtype=f"S{width}")
        else:
            joined = join(np.asarray(data))
        new = xr.Variable(raw.dims[:-1], joined, dict(raw.attrs))
        new.encoding = {**_storage(raw.encoding, target), "char_dim_name": raw.dims[-1]}
    if "coordinates" not in raw.attrs:
        new.encoding["coordinates"] = None  # xarray would otherwise name scalar coordinates
    return new


def _storage(encoding: Mapping, target: str) -> dict:
    drop = _ZARR_ONLY if target == "netcdf" else _NETCDF_ONLY
    return {k: v for k, v in encoding.items() if k in _STORAGE_KEYS and k not in drop}


def _computed_encoding(var: xr.Variable, origin: list[xr.Variable], precision: str,
                       target: str, *, converted: bool = False) -> tuple[dict, str]:
    """The encoding of a computed variable, and why its dtype (for ``storage_precision``)."""
    if var.dtype.kind != "f":
        return {}, precision
    why = precision
    if precision == "float64" or not origin:
        dtype = np.dtype(np.float64)
    else:
        dtype = max((stored_precision(v) for v in origin), key=lambda d: d.itemsize)
        if var.encoding.get(SUMS_KEY):  # marked by the operation: sums over a grid
            dtype, why = np.dtype(np.float64), "sums"
    if var.dtype.kind == "f" and var.dtype.itemsize < dtype.itemsize:
        dtype = var.dtype  # never widen what was computed narrower
    enc: dict = {"dtype": dtype}
    fills = _fills(origin[0].encoding if origin else {}, dtype)
    enc.update(fills)
    if "_FillValue" not in fills:
        enc["_FillValue"] = None
    if var.ndim:
        block = [c[0] for c in var.chunks] if var.chunks else list(var.shape)
        shape = disk_chunks(block, dtype.itemsize)
        if target == "netcdf":
            enc["chunksizes"] = shape
            if not converted or _was_compressed(origin[0].encoding):
                enc.update(zlib=True, complevel=COMPLEVEL, shuffle=True)
        else:
            enc["chunks"] = tuple(block)
    return enc, why


def _was_compressed(encoding: Mapping) -> bool:
    """Whether a variable was stored compressed (NetCDF zlib or other filters, Zarr codecs)."""
    return bool(encoding.get("zlib") or encoding.get("compression")
                or encoding.get("compressors") or encoding.get("compressor"))


def _precision_note(dtype: np.dtype, precision: str) -> str:
    why = {"float64": "as asked", "sums": "a sum over many points"}.get(
        precision, "the input's precision")
    return f"{np.dtype(dtype).name} ({why}); computed in float64"


def _fills(encoding: Mapping, dtype: np.dtype) -> dict:
    """``_FillValue``/``missing_value`` as the input had them, in the new float type."""
    found = {}
    for key in _FILL_KEYS:
        if key not in encoding or encoding[key] is None:
            continue
        value = np.asarray(encoding[key])
        if value.dtype.kind not in "fiu":
            continue
        cast = value.astype(dtype)
        if not np.all(np.isnan(cast) | (cast.astype(np.float64) == value.astype(np.float64))):
            cast = np.asarray(np.nan, dtype)  # not representable: NaN marks the gaps
        found[key] = cast[()] if cast.ndim == 0 else cast
    return found


def disk_chunks(block: Sequence[int], itemsize: int, limit: int = DISK_CHUNK_BYTES) -> tuple:
    """Stored chunk shape for a variable whose first Dask block is ``block``.

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
        shape[i] = largest_divisor(shape[i], room)
    return tuple(shape)


def largest_divisor(n: int, at_most: int) -> int:
    """The largest divisor of ``n`` not above ``at_most`` (at least 1).

    Examples
    --------
    >>> largest_divisor(12, 5)
    4
    """
    for d in range(min(n, at_most), 0, -1):
        if n % d == 0:
            return d
    return 1


def output_format(path: str | os.PathLike, asked: str | None = None) -> str:
    """``asked`` if given, else ``"zarr"`` for a ``*.zarr`` output and ``"netcdf"`` otherwise.

    Examples
    --------
    >>> output_format("out/a.zarr"), output_format("out/a.nc"), output_format("a.nc", "zarr")
    ('zarr', 'netcdf', 'zarr')
    """
    if asked is not None:
        return check_choice("format", asked, ("netcdf", "zarr"))
    return "zarr" if Path(path).suffix.lower() == ".zarr" else "netcdf"


def with_format_suffix(path: Path, fmt: str) -> Path:
    """The output path with the suffix of its format (``.zarr`` or ``.nc``).

    Examples
    --------
    >>> with_format_suffix(Path("out/a.nc"), "zarr").name
    'a.zarr'
    """
    suffix = ".zarr" if fmt == "zarr" else ".nc"
    return path if path.suffix.lower() == suffix else path.with_suffix(suffix)


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
