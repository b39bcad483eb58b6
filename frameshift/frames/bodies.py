"""Frames as values: a rotation law times a figure.

A :class:`Frame` knows how it turns (its rotation law: rate, rate of change,
angle at given instants) and how to place points (its figure: an ellipsoid
for geodetic points, a plane for a lab's x/y/z). Frames are frozen
dataclasses, so they hash, compare by value, pickle, and travel safely to
Dask workers. :class:`Planet` is the familiar way to make a steadily
rotating ellipsoidal body.

Body-fixed axes: z along the rotation axis (towards the north pole, or up
through a lab table), x through the prime meridian (or the lab's x axis).
A positive rate turns counter-clockwise seen from the +z end, so a
retrograde body has a negative rate.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from frameshift._kernels import rotation as rk
from frameshift.errors import ConventionError, FrameError, check_choice
from frameshift.frames.figure import Ellipsoid, Figure
from frameshift.frames.rotation import EarthRotationAngle, RotationLaw, SteadyRate
from frameshift.frames.timescales import Instants

__all__ = ["EARTH", "EARTH_SPHERE", "Frame", "Planet", "check_frame"]

_ANGLE_MODELS = ("earth_rotation_angle", "uniform")


def _instants(t, jd2) -> Instants:
    """``t`` as :class:`Instants` (``t`` may be Instants, or Julian dates with ``jd2``)."""
    if isinstance(t, Instants):
        return t
    return Instants.from_julian(t, 0.0 if jd2 is None else jd2)


@dataclass(frozen=True)
class Frame:
    """A rotating frame: a rotation law and a figure.

    Parameters
    ----------
    name : str
        Label written into the attributes of converted variables.
    rotation : RotationLaw
        :class:`~frameshift.frames.SteadyRate`,
        :class:`~frameshift.frames.EarthRotationAngle` or
        :class:`~frameshift.frames.RateSeries`.
    figure : Figure
        :class:`~frameshift.frames.Ellipsoid` or :class:`~frameshift.frames.Plane`.
    gm : float, optional
        Gravitational constant times mass, m3 s-2 (for normal gravity).
    inertial_axes : str, optional
        Name of the frame's non-rotating axes, written into the attributes.
    description : str
        Free text (not part of the frame's identity).

    Examples
    --------
    >>> from frameshift.frames import Frame, Plane, SteadyRate
    >>> table = Frame("test table", SteadyRate(1.0), Plane())
    >>> table.rotation_rate, table.steady
    (1.0, True)
    """

    name: str
    rotation: RotationLaw
    figure: Figure
    gm: float | None = None
    inertial_axes: str | None = None
    description: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.rotation, RotationLaw):
            raise FrameError(
                f"rotation must be a rotation law (SteadyRate, EarthRotationAngle, RateSeries); "
                f"found {type(self.rotation).__name__}",
                variable="rotation",
                expected="a rotation law",
                found=type(self.rotation).__name__,
            )
        if not isinstance(self.figure, Figure):
            raise FrameError(
                f"figure must be an Ellipsoid or a Plane; found {type(self.figure).__name__}",
                variable="figure",
                expected="Ellipsoid or Plane",
                found=type(self.figure).__name__,
            )

    # --- rotation ---------------------------------------------------------------
    @property
    def rotation_rate(self) -> float:
        """Nominal rotation rate Ω, rad s-1 (for a rate series: its rate at the epoch)."""
        return float(self.rotation.nominal_rate)

    @property
    def steady(self) -> bool:
        """True when the rotation vector does not change in time."""
        return self.rotation.steady

    @property
    def uses_earth_rotation_angle(self) -> bool:
        """True when the angle is the IAU 2000 Earth Rotation Angle (real dates, UT1)."""
        return isinstance(self.rotation, EarthRotationAngle)

    def rotation_rate_at(self, t, jd2=None) -> np.ndarray:
        """Axial rotation rate (rad s-1) at ``t`` (Instants, or two-part Julian dates)."""
        return np.asarray(self.rotation.rate(_instants(t, jd2)), dtype=np.float64)

    def rotation_vector(self, t, jd2=None) -> np.ndarray:
        """Rotation vector Ω in body-fixed axes, shape ``(..., 3)``, rad s-1."""
        rate = self.rotation_rate_at(t, jd2)
        out = np.zeros((*np.shape(rate), 3))
        out[..., 2] = rate
        return out

    def rotation_vector_rate(self, t, jd2=None) -> np.ndarray:
        """dΩ/dt in body-fixed axes, shape ``(..., 3)``, rad s-2."""
        t = _instants(t, jd2)
        rate = np.asarray(self.rotation.rate_of_change(t), dtype=np.float64)
        out = np.zeros((*np.broadcast_shapes(np.shape(rate), t.shape), 3))
        out[..., 2] = rate
        return out

    def rotation_angle(self, t, jd2=None, *, dut1: object = 0.0) -> np.ndarray:
        """Angle (rad, in [0, 2π)) turned through at ``t``.

        ``t`` is :class:`~frameshift.frames.Instants`, or a two-part UTC (UT1
        for the Earth Rotation Angle) Julian date ``t + jd2``.
        """
        return self.rotation.angle(_instants(t, jd2), dut1)

    # --- figure -----------------------------------------------------------------
    def _ellipsoid(self) -> Ellipsoid:
        if not isinstance(self.figure, Ellipsoid):
            raise FrameError(
                f"frame {self.name!r} has a plane figure (x/y/z positions); it has no ellipsoid",
                variable="frame",
                expected="a frame with an Ellipsoid figure",
                found=type(self.figure).__name__,
            )
        return self.figure

    @property
    def equatorial_radius(self) -> float:
        """Semi-major axis of the figure, m."""
        return self._ellipsoid().equatorial_radius

    @property
    def inverse_flattening(self) -> float:
        """1/f of the figure (0 for a sphere)."""
        return self._ellipsoid().inverse_flattening

    @property
    def flattening(self) -> float:
        """Flattening f (0 for a sphere)."""
        return self._ellipsoid().f

    @property
    def polar_radius(self) -> float:
        """Semi-minor axis b = a (1 - f), m."""
        return self._ellipsoid().b

    @property
    def eccentricity_squared(self) -> float:
        """First eccentricity squared, e² = f (2 - f)."""
        return self._ellipsoid().e2

    def place(self, *coordinates) -> np.ndarray:
        """Body-fixed positions (m, trailing axis x, y, z): see the figure's ``place``."""
        return self.figure.place(*coordinates)

    def locate(self, xyz) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The figure's coordinates of body-fixed positions: see the figure's ``locate``."""
        return self.figure.locate(xyz)

    def frame_velocity(self, *coordinates) -> np.ndarray:
        """Velocity Ω × r (m s-1, body-fixed axes) of points fixed to the body (nominal Ω)."""
        omega = np.array([0.0, 0.0, self.rotation_rate])
        return rk.frame_velocity(omega, self.place(*coordinates))

    def with_rotation(self, rotation: RotationLaw, *, name: str | None = None) -> Frame:
        """The same figure (and gm) turning by another law.

        Examples
        --------
        >>> from frameshift import EARTH
        >>> from frameshift.frames import SteadyRate
        >>> EARTH.with_rotation(SteadyRate(7.292115e-5)).uses_earth_rotation_angle
        False
        """
        return Frame(
            name or self.name,
            rotation,
            self.figure,
            gm=self.gm,
            inertial_axes=self.inertial_axes,
            description=self.description,
        )


class Planet(Frame):
    """A body rotating at a steady rate about the axis of its reference ellipsoid.

    Parameters
    ----------
    name : str
        Label written into the attributes of converted variables.
    rotation_rate : float
        Angular velocity about the body's z axis, rad s-1 (negative if retrograde).
    equatorial_radius : float
        Semi-major axis of the reference ellipsoid, m.
    inverse_flattening : float, default 0.0
        1/f of the reference ellipsoid; 0 means a sphere.
    gm : float, optional
        Gravitational constant times mass, m3 s-2 (needed for normal gravity).
    angle_model : {"uniform", "earth_rotation_angle"}, default "uniform"
        ``"uniform"`` turns at ``rotation_rate`` from ``prime_meridian_angle``
        at J2000.0 (:class:`~frameshift.frames.SteadyRate`);
        ``"earth_rotation_angle"`` is the IAU 2000 Earth Rotation Angle of UT1
        (:class:`~frameshift.frames.EarthRotationAngle`).
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

    def __init__(
        self,
        name: str,
        rotation_rate: float | None = None,
        equatorial_radius: float | None = None,
        inverse_flattening: float = 0.0,
        gm: float | None = None,
        angle_model: str = "uniform",
        prime_meridian_angle: float = 0.0,
        description: str = "",
        *,
        rotation: RotationLaw | None = None,
        figure: Figure | None = None,
        inertial_axes: str | None = None,
    ) -> None:
        if rotation is None:
            check_choice("angle_model", angle_model, _ANGLE_MODELS)
            if angle_model == "earth_rotation_angle":
                rotation = EarthRotationAngle(rotation_rate)
            else:
                rotation = SteadyRate(rotation_rate, angle_at_epoch=prime_meridian_angle)
        if figure is None:
            figure = Ellipsoid(equatorial_radius, inverse_flattening)
        super().__init__(name, rotation, figure, gm, inertial_axes, description)
        if not isinstance(self.figure, Ellipsoid):
            raise FrameError(
                f"a Planet's figure is an Ellipsoid; found {type(self.figure).__name__}",
                variable="figure",
                expected="Ellipsoid",
                found=type(self.figure).__name__,
            )

    @property
    def angle_model(self) -> str:
        """``"earth_rotation_angle"`` or ``"uniform"``."""
        return "earth_rotation_angle" if self.uses_earth_rotation_angle else "uniform"

    @property
    def prime_meridian_angle(self) -> float:
        """Rotation angle at the epoch of a uniform rotation, rad."""
        return float(getattr(self.rotation, "angle_at_epoch", 0.0))


def check_frame(frame: object, figure: type[Figure] | None = None) -> Frame:
    """Return ``frame`` if it is a frameshift frame (with that figure); raise if not.

    Examples
    --------
    >>> check_frame(EARTH) is EARTH
    True
    """
    if not isinstance(frame, Frame):
        raise ConventionError(
            f"frame must be a frameshift frame such as EARTH; found {type(frame).__name__}",
            variable="frame",
            expected="a Frame (Planet, EARTH, ...)",
            found=type(frame).__name__,
        )
    if figure is not None and not isinstance(frame.figure, figure):
        kind = "latitude/longitude (an Ellipsoid)" if figure is Ellipsoid else "x/y (a Plane)"
        raise ConventionError(
            f"frame {frame.name!r} places points by {type(frame.figure).__name__}; this "
            f"operation needs a frame whose positions are {kind}",
            variable="frame",
            expected=f"a frame with a {figure.__name__} figure",
            found=type(frame.figure).__name__,
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

