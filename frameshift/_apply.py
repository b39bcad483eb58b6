"""The one recipe that runs a numpy kernel on labelled data.

Inputs are plain DataArrays (no attributes needed); they are aligned by
dimension name and handed to the kernel broadcast-compatible, not broadcast:
a factor on latitude alone reaches the kernel with length-1 axes elsewhere,
so per-latitude work stays per latitude. Dask-backed inputs stay lazy: the
kernel runs blockwise with ``dask="parallelized"``.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import numpy as np
import xarray as xr

__all__ = ["apply_kernel"]


def apply_kernel(
    kernel: Callable[..., object],
    *args: xr.DataArray,
    input_core_dims: Sequence[Sequence[str]] | None = None,
    output_core_dims: Sequence[Sequence[str]] = ((),),
    output_sizes: dict[str, int] | None = None,
    kwargs: dict | None = None,
    dims_order: Sequence[str] | None = None,
    dtype: np.dtype | type = np.float64,
) -> xr.DataArray | tuple[xr.DataArray, ...]:
    """Apply ``kernel`` to DataArrays; return one DataArray per kernel output.

    ``kernel`` must return arrays with the full broadcast shape of its inputs
    (plus the output core dimensions), of type ``dtype``. ``dims_order`` puts
    the loop dimensions of every output in that order (core dimensions stay last).
    """
    if input_core_dims is None:
        input_core_dims = [()] * len(args)
    n_out = len(output_core_dims)
    result = xr.apply_ufunc(
        kernel,
        *args,
        input_core_dims=[list(d) for d in input_core_dims],
        output_core_dims=[list(d) for d in output_core_dims],
        kwargs=kwargs or {},
        dask="parallelized",
        output_dtypes=[np.dtype(dtype)] * n_out,
        dask_gufunc_kwargs={"output_sizes": output_sizes or {}},
        keep_attrs=False,
    )
    outputs = result if isinstance(result, tuple) else (result,)
    if dims_order is not None:
        outputs = tuple(o.transpose(*[d for d in dims_order if d in o.dims], ...) for o in outputs)
    return outputs if n_out > 1 else outputs[0]


def full_shape(*arrays: np.ndarray, core: int = 0) -> tuple[int, ...]:
    """Broadcast shape of the loop dimensions of ``arrays`` (dropping ``core`` trailing axes)."""
    shapes = [np.shape(a)[: np.ndim(a) - core] if core else np.shape(a) for a in arrays]
    return np.broadcast_shapes(*shapes)
