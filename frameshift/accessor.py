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

    def apparent_accelerations(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.apparent_accelerations`."""
        from frameshift.dynamics.accelerations import apparent_accelerations

        return apparent_accelerations(self._ds, *args, **kwargs)

    def coriolis_parameters(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.coriolis_parameters`."""
        from frameshift.dynamics.accelerations import coriolis_parameters

        return coriolis_parameters(self._ds, *args, **kwargs)

    def normal_gravity(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.normal_gravity`."""
        from frameshift.dynamics.gravity import normal_gravity

        return normal_gravity(self._ds, *args, **kwargs)
