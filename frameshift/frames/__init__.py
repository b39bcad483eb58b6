"""Frames: what turns, and how.

A frame is a value made of a rotation law (:class:`SteadyRate`,
:class:`EarthRotationAngle`, :class:`RateSeries`) and a figure
(:class:`Ellipsoid` for geodetic points, :class:`Plane` for a lab's x/y/z).
:class:`Planet`, :data:`EARTH` and :data:`EARTH_SPHERE` are the usual
steadily rotating bodies.

Examples
--------
>>> from frameshift.frames import Frame, Plane, SteadyRate
>>> table = Frame("tank on a table at 10 rpm", SteadyRate(10 * 2 * 3.141592653589793 / 60), Plane())
>>> round(table.rotation_rate, 6)
1.047198
"""

from frameshift.frames.bodies import EARTH, EARTH_SPHERE, Frame, Planet, check_frame
from frameshift.frames.figure import Ellipsoid, Figure, Plane
from frameshift.frames.planets import JUPITER, MARS, SATURN, TITAN, VENUS
from frameshift.frames.rotation import EarthRotationAngle, RateSeries, RotationLaw, SteadyRate
from frameshift.frames.table import RotatingTable
from frameshift.frames.timescales import Instants, instants_of

__all__ = [
    "EARTH",
    "EARTH_SPHERE",
    "JUPITER",
    "MARS",
    "SATURN",
    "TITAN",
    "VENUS",
    "EarthRotationAngle",
    "Ellipsoid",
    "Figure",
    "Frame",
    "Instants",
    "Plane",
    "Planet",
    "RateSeries",
    "RotatingTable",
    "RotationLaw",
    "SteadyRate",
    "check_frame",
    "instants_of",
]
