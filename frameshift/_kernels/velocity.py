"""Velocity kernels used by the transforms: geodetic points and local
east/north/up velocities in, inertial Cartesian out, and back.

Angles in degrees here (these kernels sit right behind the xarray layer,
which holds degrees); everything else SI. ``scale_*`` factors convert the
caller's velocity units to m s-1 inside the one pass over the data.
"""

from __future__ import annotations

import numpy as np

from frameshift._kernels import geodesy, rotation

__all__ = ["eastward_frame_speed", "geodetic_to_inertial", "inertial_to_geodetic"]


def eastward_frame_speed(lat_deg, h, omega, a, f):
    """Eastward speed of the rotating frame at a point: Ω (N + h) cos φ, m s-1.

    Ω × r has no north or up component on local axes, because Ω lies in the
    meridian plane and r does too; its east component is Ω times the distance
    from the axis.
    """
    return omega * geodesy.axis_distance(np.deg2rad(lat_deg), h, a, f)


def geodetic_to_inertial(lat_deg, lon_deg, h, u, v, w, matrix, omega, *, a, f, scale):
    """Points and local velocities (rotating frame) to inertial position and velocity.

    Returns ``(position, velocity)``, each of shape ``(*loop, 3)`` where
    ``loop`` is the broadcast shape of all inputs' leading axes.
    """
    loop = np.broadcast_shapes(
        np.shape(lat_deg),
        np.shape(lon_deg),
        np.shape(h),
        np.shape(u),
        np.shape(v),
        np.shape(w),
        np.shape(matrix)[:-2],
        np.shape(omega)[:-1],
    )
    lat = np.deg2rad(lat_deg)
    lon = np.deg2rad(lon_deg)
    r_body = geodesy.geodetic_to_cartesian(lat, lon, h, a, f)
    enu = np.stack(np.broadcast_arrays(u * scale[0], v * scale[1], w * scale[2]), axis=-1)
    v_body = geodesy.enu_to_cartesian(lat, lon, enu)
    r_i, v_i = rotation.to_inertial_cartesian(r_body, v_body, omega, matrix)
    return np.broadcast_to(r_i, (*loop, 3)), np.broadcast_to(v_i, (*loop, 3))


def inertial_to_geodetic(position, velocity, matrix, omega, *, a, f, scale):
    """Inverse of :func:`geodetic_to_inertial`.

    Returns ``(lat_deg, lon_deg, h, u, v, w)``, velocities divided by ``scale``
    (so in the caller's units).
    """
    loop = np.broadcast_shapes(
        np.shape(position)[:-1],
        np.shape(velocity)[:-1],
        np.shape(matrix)[:-2],
        np.shape(omega)[:-1],
    )
    r_body, v_body = rotation.to_rotating_cartesian(position, velocity, omega, matrix)
    lat, lon, h = geodesy.cartesian_to_geodetic(r_body, a, f)
    enu = geodesy.cartesian_to_enu(lat, lon, v_body)
    out = (
        np.rad2deg(lat),
        np.rad2deg(lon),
        h,
        enu[..., 0] / scale[0],
        enu[..., 1] / scale[1],
        enu[..., 2] / scale[2],
    )
    return tuple(np.broadcast_to(x, loop) for x in out)
