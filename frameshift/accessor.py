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

    def from_speed_direction(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.from_speed_direction`."""
        from frameshift.instruments.polar import from_speed_direction

        return from_speed_direction(self._ds, *args, **kwargs)

    def to_speed_direction(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.to_speed_direction`."""
        from frameshift.instruments.polar import to_speed_direction

        return to_speed_direction(self._ds, *args, **kwargs)

    def grid_to_earth(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.grid_to_earth`."""
        from frameshift.instruments.grid import grid_to_earth

        return grid_to_earth(self._ds, *args, **kwargs)

    def earth_to_grid(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.earth_to_grid`."""
        from frameshift.instruments.grid import earth_to_grid

        return earth_to_grid(self._ds, *args, **kwargs)

    def magnetic_to_true(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.magnetic_to_true`."""
        from frameshift.instruments.magnetic import magnetic_to_true

        return magnetic_to_true(self._ds, *args, **kwargs)

    def true_wind(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.true_wind` (the Dataset form)."""
        from frameshift.instruments.platform import true_wind

        return true_wind(self._ds, *args, **kwargs)

    def platform_to_earth(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.platform_to_earth`."""
        from frameshift.instruments.platform import platform_to_earth

        return platform_to_earth(self._ds, *args, **kwargs)

    def axial_angular_momentum(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.axial_angular_momentum`."""
        from frameshift.diagnostics import axial_angular_momentum

        return axial_angular_momentum(self._ds, *args, **kwargs)

    def integrate_angular_momentum(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.integrate_angular_momentum`."""
        from frameshift.diagnostics import integrate_angular_momentum

        return integrate_angular_momentum(self._ds, *args, **kwargs)

    def excitation(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.excitation`."""
        from frameshift.diagnostics import excitation

        return excitation(self._ds, *args, **kwargs)

    def absolute_vorticity(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.absolute_vorticity`."""
        from frameshift.diagnostics import absolute_vorticity

        return absolute_vorticity(self._ds, *args, **kwargs)

    def rotary_spectrum(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.rotary_spectrum`."""
        from frameshift.diagnostics import rotary_spectrum

        return rotary_spectrum(self._ds, *args, **kwargs)

    def inertial_demodulation(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.inertial_demodulation`."""
        from frameshift.diagnostics import inertial_demodulation

        return inertial_demodulation(self._ds, *args, **kwargs)

    def track_forces(self, *args, **kwargs) -> xr.Dataset:
        """See :func:`frameshift.track_forces`."""
        from frameshift.diagnostics import track_forces

        return track_forces(self._ds, *args, **kwargs)
