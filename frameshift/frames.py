"""Rotating frames as immutable values.

A frame knows three things: its rotation vector (and how it changes in time),
the angle it has turned through at a given time, and how to place a point
given in geodetic coordinates. Frames are frozen dataclasses, so they hash,
compare by value, pickle, and travel safely to Dask workers.

Body-fixed axes: z along the rotation axis (positive towards the north pole,
so a retrograde body has a negative ``rotation_rate``), x through the prime
meridian.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from frameshift._kernels import geodesy, rotation
from frameshift.errors import ConventionError, FrameError, check_choice

__all__ = ["EARTH", "EARTH_SPHERE", "Planet", "check_frame"]

_ANGLE_MODELS = ("earth_rotation_angle", "uniform")


@dataclass(frozen=True)
class Planet:
    """A rigid body rotating at a steady rate about its figure axis.

    Parameters
    ----------
    name : str
        Label written into the attributes of converted variables.
    rotation_rate : float
        Angular velocity about the body's z axis, rad s-1 (negative if retrograde).
    equatorial_radius : float
        Semi-major axis of the reference ellipsoid, m.
    inverse_flattening : float, default 0.0
        1/f of the reference ellipsoid; 0 means a sphere (the convention of
        geodetic parameter registries for spheres).
    gm : float, optional
        Gravitational constant times mass, m3 s-2 (needed for normal gravity).
    angle_model : {"uniform", "earth_rotation_angle"}, default "uniform"
        How the rotation angle follows time: ``"uniform"`` turns at
        ``rotation_rate`` from ``prime_meridian_angle`` at J2000.0;
        ``"earth_rotation_angle"`` is the IAU 2000 Earth Rotation Angle of UT1.
    prime_meridian_angle : float, default 0.0
        Rotation angle at J2000.0 for the ``"uniform"`` model, rad.

    Examples
    --------
    >>> from frameshift import EARTH
    >>> round(EARTH.rotation_rate * EARTH.equatorial_radius, 4)
    465.1011
    >>> xyz = EARTH.place(45.0, 0.0, 0.0)
    >>> round(float(xyz[0]), 3)
    4517590.879
    """

    name: str
    rotation_rate: float
    equatorial_radius: float
    inverse_flattening: float = 0.0
    gm: float | None = None
    angle_model: str = "uniform"
    prime_meridian_angle: float = 0.0
    description: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        check_choice("angle_model", self.angle_model, _ANGLE_MODELS)
        for attr in ("rotation_rate", "equatorial_radius", "inverse_flattening"):
            value = getattr(self, attr)
            if not isinstance(value, (int, float)) or not math.isfinite(value):
                raise FrameError(
                    f"Planet {attr} must be a finite number; found {value!r}",
                    variable=attr,
                    expected="finite number",
                    found=repr(value),
                )
        if self.equatorial_radius <= 0:
            raise FrameError(
                f"Planet equatorial_radius must be positive; found {self.equatorial_radius!r}",
                variable="equatorial_radius",
                expected="> 0 m",
                found=repr(self.equatorial_radius),
            )
        if self.inverse_flattening != 0 and self.inverse_flattening < 1:
            raise FrameError(
                "Planet inverse_flattening must be 0 (sphere) or at least 1; "
                f"found {self.inverse_flattening!r}",
                variable="inverse_flattening",
                expected="0 or >= 1",
                found=repr(self.inverse_flattening),
            )

    # --- figure -----------------------------------------------------------------
    @property
    def flattening(self) -> float:
        """Flattening f (0 for a sphere)."""
        return 0.0 if self.inverse_flattening == 0 else 1.0 / self.inverse_flattening

    @property
    def polar_radius(self) -> float:
        """Semi-minor axis b = a (1 - f), m."""
        return self.equatorial_radius * (1.0 - self.flattening)

    @property
    def eccentricity_squared(self) -> float:
        """First eccentricity squared, e² = f (2 - f)."""
        f = self.flattening
        return f * (2.0 - f)

    # --- rotation ---------------------------------------------------------------
    @property
    def steady(self) -> bool:
        """True when the rotation vector does not change in time."""
        return True

    def rotation_rate_at(self, jd1: np.ndarray, jd2: np.ndarray | None = None) -> np.ndarray:
        """Axial rotation rate (rad s-1) at two-part Julian dates."""
        return np.full(np.shape(jd1), float(self.rotation_rate))

    def rotation_vector(self, jd1: np.ndarray, jd2: np.ndarray | None = None) -> np.ndarray:
        """Rotation vector Ω in body-fixed axes, shape ``(..., 3)``, rad s-1."""
        out = np.zeros((*np.shape(jd1), 3))
        out[..., 2] = self.rotation_rate_at(jd1, jd2)
        return out

    def rotation_vector_rate(self, jd1: np.ndarray, jd2: np.ndarray | None = None) -> np.ndarray:
        """dΩ/dt in body-fixed axes, shape ``(..., 3)``, rad s-2 (zero: steady rotation)."""
        return np.zeros((*np.shape(jd1), 3))

    def rotation_angle(self, jd1: np.ndarray, jd2: np.ndarray) -> np.ndarray:
        """Angle (rad, in [0, 2π)) the body has turned through at a two-part Julian date.

        For ``angle_model="earth_rotation_angle"`` the date is UT1 and the
        angle is the IAU 2000 Earth Rotation Angle; otherwise the angle grows
        uniformly at ``rotation_rate`` from ``prime_meridian_angle`` at J2000.0.
        """
        if self.angle_model == "earth_rotation_angle":
            return rotation.earth_rotation_angle(jd1, jd2)
        days = (np.asarray(jd1, dtype=np.float64) - rotation.J2000) + np.asarray(jd2)
        turn = self.rotation_rate * 86400.0 / (2.0 * np.pi)  # turns per day
        frac = np.fmod(days * turn, 1.0)
        return np.mod(self.prime_meridian_angle + 2.0 * np.pi * frac, 2.0 * np.pi)

    # --- points -----------------------------------------------------------------
    def place(self, latitude, longitude, height=0.0) -> np.ndarray:
        """Body-fixed Cartesian position (m, trailing axis x, y, z) of geodetic points.

        ``latitude`` and ``longitude`` in degrees, ``height`` above the ellipsoid in m.
        """
        return geodesy.geodetic_to_cartesian(
            np.deg2rad(latitude),
            np.deg2rad(longitude),
            np.asarray(height, dtype=np.float64),
            self.equatorial_radius,
            self.flattening,
        )

    def locate(self, xyz) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Geodetic latitude (deg), longitude (deg, in (-180, 180]) and height (m)."""
        lat, lon, h = geodesy.cartesian_to_geodetic(
            np.asarray(xyz), self.equatorial_radius, self.flattening
        )
        return np.rad2deg(lat), np.rad2deg(lon), h

    def frame_velocity(self, latitude, longitude, height=0.0) -> np.ndarray:
        """Velocity Ω × r (m s-1, body-fixed axes) of points fixed to the body."""
        omega = np.array([0.0, 0.0, self.rotation_rate])
        return rotation.frame_velocity(omega, self.place(latitude, longitude, height))


def check_frame(frame: object) -> Planet:
    """Return ``frame`` if it is a frameshift frame; raise :class:`ConventionError` if not.

    Examples
    --------
    >>> check_frame(EARTH) is EARTH
    True
    """
    if not isinstance(frame, Planet):
        raise ConventionError(
            f"frame must be a frameshift frame such as EARTH; found {type(frame).__name__}",
            variable="frame",
            expected="Planet",
            found=type(frame).__name__,
        )
    return frame


#: The Earth on the WGS 84 ellipsoid (NIMA TR8350.2: a = 6378137 m,
#: 1/f = 298.257223563, GM = 3.986004418e14 m3 s-2), rotating at the nominal
#: mean angular velocity of IERS Conventions (2010) Table 1.1, with its angle
#: given by the IAU 2000 Earth Rotation Angle.
EARTH = Planet(
    name="Earth (WGS 84)",
    rotation_rate=7.292115e-5,
    equatorial_radius=6378137.0,
    inverse_flattening=298.257223563,
    gm=3.986004418e14,
    angle_model="earth_rotation_angle",
    description="WGS 84 ellipsoid; IERS 2010 nominal rotation rate; IAU 2000 ERA",
)

#: The Earth as a sphere of the IUGG mean radius R1 = (2a + b)/3 = 6371008.7714 m
#: (Moritz, Geodetic Reference System 1980), same rotation as :data:`EARTH`.
EARTH_SPHERE = Planet(
    name="Earth (sphere, R1)",
    rotation_rate=7.292115e-5,
    equatorial_radius=6371008.7714,
    inverse_flattening=0.0,
    gm=3.986004418e14,
    angle_model="earth_rotation_angle",
    description="sphere of the IUGG mean radius R1; IERS 2010 nominal rotation rate",
)
