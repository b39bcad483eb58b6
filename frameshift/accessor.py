"""``ds.frameshift``: a thin accessor that delegates to the top-level functions."""

from __future__ import annotations

import xarray as xr

__all__ = ["FrameshiftAccessor"]


@xr.register_dataset_accessor("frameshift")
class FrameshiftAccessor:
    """Methods on ``Dataset.frameshift``; each calls the function of the same name.

    Examples
    --------
    >>> import frameshift, xarray as xr
    >>> ds = xr.Dataset()
    >>> callable(ds.frameshift.to_inertial)
    True
    """

    def __init__(self, ds: xr.Dataset) -> None:
        self._ds = ds

    def to_inertial(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.to_inertial`."""
        from frameshift.transforms import to_inertial

        return to_inertial(self._ds, *args, **kwargs)

    def to_rotating(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.to_rotating`."""
        from frameshift.transforms import to_rotating

        return to_rotating(self._ds, *args, **kwargs)
