"""Absolute vorticity of winds and currents on latitude-longitude grids."""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import vorticity as kernel
from frameshift.diagnostics import common
from frameshift.errors import UnsupportedInputError
from frameshift.frames import EARTH, Ellipsoid, check_frame

__all__ = ["absolute_vorticity"]

#: CF standard names (table v93) of the vorticities, by velocity family.
STANDARD_NAMES = {
    "wind": {"relative_vorticity": "atmosphere_upward_relative_vorticity",
             "absolute_vorticity": "atmosphere_upward_absolute_vorticity"},
    "sea_water": {"relative_vorticity": "ocean_relative_vorticity"},
}


def absolute_vorticity(
    ds: xr.Dataset, frame=EARTH, *, velocity: Mapping[str, str] | None = None
) -> xr.Dataset:
    """Relative, planetary and absolute vorticity (s-1) of east/north velocity on a grid.

    ``relative_vorticity`` is the upward component of the curl of the
    Earth-relative horizontal velocity on the frame's ellipsoid, by second-order
    differences with the metric term (see :mod:`frameshift._kernels.vorticity`);
    a pole row gets the mean vorticity of the polar cap inside the nearest ring
    (on a grid that goes round the globe; else NaN). ``planetary_vorticity`` is
    2 Ω sin φ (``coriolis_parameter``); ``absolute_vorticity`` their sum.

    Parameters
    ----------
    ds : xarray.Dataset
        Velocity on 1-D latitude and longitude coordinates (other dimensions,
        such as time and levels, are kept).
    frame : Planet, default EARTH
    velocity : mapping, optional

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> lat = np.arange(-80.0, 81.0, 1.0); lon = np.arange(0.0, 360.0, 2.0)
    >>> u = 5.0 * np.ones((lat.size, lon.size))
    >>> def cf(name, units):
    ...     return {"standard_name": name, "units": units}
    >>> ds = xr.Dataset({"u": (("lat", "lon"), u, cf("eastward_wind", "m s-1")),
    ...                  "v": (("lat", "lon"), 0 * u, cf("northward_wind", "m s-1"))},
    ...                 coords={"lat": ("lat", lat, cf("latitude", "degrees_north")),
    ...                         "lon": ("lon", lon, cf("longitude", "degrees_east"))})
    >>> out = frameshift.absolute_vorticity(ds)
    >>> float(out.relative_vorticity.sel(lat=0.0)[0]) == 0.0  # uniform eastward flow: tan φ term
    True
    """
    frame = check_frame(frame, Ellipsoid)
    vel = common.velocity_in_si(ds, velocity, frame)
    dims = tuple(map(str, vel.u.dims))
    lat_dim, lon_dim = common.grid_axes(ds, vel)
    lat = np.asarray(ds.variables[vel.latitude].values, dtype=np.float64)
    lon = np.asarray(ds.variables[vel.longitude].values, dtype=np.float64)
    if lat.size < 3 or lon.size < 3:
        raise UnsupportedInputError(
            f"vorticity needs at least 3 latitudes and 3 longitudes for second-order "
            f"differences; found {lat.size} x {lon.size}",
            variable=vel.eastward, expected="3+ points along each axis",
            found=f"{lat.size} x {lon.size}",
        )
    steps = np.diff(lon)
    periodic = bool(np.allclose(steps, steps[0], rtol=1e-9, atol=1e-9)
                    and abs(abs(steps[0]) * lon.size - 360.0) < 1e-6)
    core = [lat_dim, lon_dim]
    u, v = vel.u, vel.v
    if u.chunks is not None:
        u = u.chunk({d: -1 for d in core})
    if v.chunks is not None:
        v = v.chunk({d: -1 for d in core})
    zeta = apply_kernel(
        kernel.relative_vorticity, u, v, input_core_dims=(core, core), output_core_dims=(core,),
        kwargs={"lat_deg": lat, "lon_deg": lon, "a": float(frame.equatorial_radius),
                "f": float(frame.flattening), "periodic": periodic},
    ).transpose(*vel.u.dims)
    planetary = xr.DataArray(kernel.planetary_vorticity(lat, float(frame.rotation_rate)),
                             dims=(lat_dim,))
    absolute = zeta + planetary
    names = STANDARD_NAMES.get(vel.family, {})
    base = {**common.frame_attrs(frame), "velocity_variables": f"{vel.eastward} {vel.northward}",
            "assumptions": "on the ellipsoid surface; second-order differences"
            + ("; longitude wraps round" if periodic else "; open longitude edges")}

    def attrs(name: str, long_name: str) -> dict:
        out = {"long_name": long_name, "units": "s-1", **base}
        if name in names:
            out["standard_name"] = names[name]
        return out

    out = xr.Dataset({
        "relative_vorticity": zeta.assign_attrs(
            attrs("relative_vorticity",
                  "upward relative vorticity of the Earth-relative velocity")),
        "planetary_vorticity": planetary.assign_attrs(
            long_name="planetary vorticity 2 Ω sin φ", units="s-1",
            standard_name="coriolis_parameter", **common.frame_attrs(frame)),
        "absolute_vorticity": absolute.transpose(*vel.u.dims).assign_attrs(
            attrs("absolute_vorticity", "upward absolute vorticity (relative + planetary)")),
    })
    out = out.assign_coords({n: c.variable for n, c in ds.coords.items()
                             if set(c.dims) <= set(dims)})
    return common.finish(out, ds, f"absolute vorticity ({frame.name})")
