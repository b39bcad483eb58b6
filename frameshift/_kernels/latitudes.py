"""Planetocentric and planetographic latitude on a spheroid, in pure numpy.

On a spheroid of flattening f, a surface point's planetographic latitude φ
(the angle of the surface normal with the equator, the geodetic latitude of
geodesy) and its planetocentric latitude ψ (the angle of the radius from the
centre) obey tan ψ = (1 - f)² tan φ (standard ellipse geometry, e.g. the
IAU WGCCRE reports' definitions of the two systems). Degrees in and out.
"""

from __future__ import annotations

import numpy as np

__all__ = ["centric_to_graphic", "graphic_to_centric"]


def centric_to_graphic(lat_deg, f: float):
    """Planetographic latitude (deg) of the surface point at planetocentric ``lat_deg``.

    Examples
    --------
    >>> round(float(centric_to_graphic(45.0, 1 / 15.414402759810264)), 6)
    48.831606
    """
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    k = (1.0 - f) ** 2
    return np.rad2deg(np.arctan2(np.sin(lat), k * np.cos(lat)))


def graphic_to_centric(lat_deg, f: float):
    """Planetocentric latitude (deg) of the surface point at planetographic ``lat_deg``."""
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    k = (1.0 - f) ** 2
    return np.rad2deg(np.arctan2(k * np.sin(lat), np.cos(lat)))
