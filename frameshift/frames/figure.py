"""Figures: the shapes that place points in a rotating frame.

- :class:`Ellipsoid` places geodetic points (latitude, longitude in degrees,
  height above the ellipsoid in m) on body-fixed axes: z along the rotation
  axis (towards the north pole), x through the prime meridian. A sphere is
  the ellipsoid with flattening 0.
- :class:`Plane` places x/y/z points of a lab (m) about a vertical rotation
  axis through ``center``: body-fixed axes have their origin at the foot of
  the axis, z up the axis.

Figures are frozen, hashable, picklable values. They hand kernels plain
numbers (:meth:`Ellipsoid.kernel_geometry`), never themselves.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from frameshift._kernels import geodesy
from frameshift.errors import FrameError, check_finite

__all__ = ["Ellipsoid", "Figure", "Plane"]


class Figure:
    """Base of the figures."""

    #: "geodetic" (latitude, longitude, height) or "planar" (x, y, z)
    positions: str


@dataclass(frozen=True)
class Ellipsoid(Figure):
    """A reference ellipsoid of revolution about the rotation axis.

    Parameters
    ----------
    equatorial_radius : float
        Semi-major axis a, m.
    inverse_flattening : float, default 0.0
        1/f; 0 means a sphere (the convention of geodetic parameter registries).

    Examples
    --------
    >>> wgs84 = Ellipsoid(6378137.0, 298.257223563)
    >>> round(wgs84.b, 6)
    6356752.314245
    """

    equatorial_radius: float
    inverse_flattening: float = 0.0
    positions = "geodetic"

    def __post_init__(self) -> None:
        a = check_finite("equatorial_radius", self.equatorial_radius)
        inv = check_finite("inverse_flattening", self.inverse_flattening)
        if a <= 0:
            raise FrameError(
                f"equatorial_radius must be positive; found {a!r}",
                variable="equatorial_radius",
                expected="> 0 m",
                found=repr(a),
            )
        if inv != 0 and inv < 1:
            raise FrameError(
                f"inverse_flattening must be 0 (sphere) or at least 1; found {inv!r}",
                variable="inverse_flattening",
                expected="0 or >= 1",
                found=repr(inv),
            )
        object.__setattr__(self, "equatorial_radius", a)
        object.__setattr__(self, "inverse_flattening", inv)

    @property
    def a(self) -> float:
        """Semi-major axis, m."""
        return self.equatorial_radius

    @property
    def f(self) -> float:
        """Flattening (0 for a sphere)."""
        return 0.0 if self.inverse_flattening == 0 else 1.0 / self.inverse_flattening

    @property
    def b(self) -> float:
        """Semi-minor axis b = a (1 - f), m."""
        return self.equatorial_radius * (1.0 - self.f)

    @property
    def e2(self) -> float:
        """First eccentricity squared, e² = f (2 - f)."""
        return self.f * (2.0 - self.f)

    def kernel_geometry(self) -> dict[str, float]:
        """``{"a": a, "f": f}``: what the geodetic kernels take."""
        return {"a": self.equatorial_radius, "f": self.f}

    def place(self, latitude, longitude, height=0.0) -> np.ndarray:
        """Body-fixed position (m, trailing axis x, y, z) of geodetic points in degrees."""
        return geodesy.geodetic_to_cartesian(
            np.deg2rad(latitude),
            np.deg2rad(longitude),
            np.asarray(height, dtype=np.float64),
            self.equatorial_radius,
            self.f,
        )

    def locate(self, xyz) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Geodetic latitude (deg), longitude (deg, in (-180, 180]) and height (m)."""
        lat, lon, h = geodesy.cartesian_to_geodetic(np.asarray(xyz), self.equatorial_radius, self.f)
        return np.rad2deg(lat), np.rad2deg(lon), h


@dataclass(frozen=True)
class Plane(Figure):
    """A lab's flat x/y/z space, turning about a vertical axis through ``center``.

    Parameters
    ----------
    center : (float, float), default (0.0, 0.0)
        x and y (m) of the rotation axis in the data's coordinates.

    Examples
    --------
    >>> Plane(center=(1.0, 0.0)).place(1.5, 2.0).tolist()
    [0.5, 2.0, 0.0]
    """

    center: tuple[float, float] = (0.0, 0.0)
    positions = "planar"

    def __post_init__(self) -> None:
        try:
            cx, cy = self.center
        except (TypeError, ValueError) as exc:
            raise FrameError(
                f"center must be a pair (x, y) in m; found {self.center!r}",
                variable="center",
                expected="(x, y)",
                found=repr(self.center),
            ) from exc
        object.__setattr__(self, "center", (check_finite("center", cx), check_finite("center", cy)))

    def place(self, x, y, z=0.0) -> np.ndarray:
        """Positions (m, trailing axis) relative to the foot of the rotation axis."""
        x, y, z = np.broadcast_arrays(
            np.asarray(x, np.float64) - self.center[0],
            np.asarray(y, np.float64) - self.center[1],
            np.asarray(z, np.float64),
        )
        return np.stack([x, y, z], axis=-1)

    def locate(self, xyz) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The data's x, y, z (m) of positions relative to the axis foot."""
        xyz = np.asarray(xyz, np.float64)
        return xyz[..., 0] + self.center[0], xyz[..., 1] + self.center[1], xyz[..., 2]
