"""frameshift: winds and currents between rotating and inertial frames.

Move observed velocities between the frame they were measured in and the
frame the physics needs, and attribute the apparent accelerations a rotating
frame adds, on xarray data with units and CF metadata kept.
"""

from frameshift import accessor  # noqa: F401  (registers ds.frameshift)
from frameshift._version import __version__
from frameshift.dynamics.accelerations import apparent_accelerations, coriolis_parameters
from frameshift.dynamics.gravity import normal_gravity
from frameshift.errors import (
    ConventionError,
    FrameError,
    FrameshiftError,
    FrameshiftWarning,
    InputTypeError,
    MissingInputError,
    UnitsError,
    UnsupportedInputError,
)
from frameshift.frames import (
    EARTH,
    EARTH_SPHERE,
    EarthRotationAngle,
    Ellipsoid,
    Frame,
    Plane,
    Planet,
    RateSeries,
    SteadyRate,
)
from frameshift.transforms import to_inertial, to_rotating

__all__ = [
    "EARTH",
    "EARTH_SPHERE",
    "ConventionError",
    "EarthRotationAngle",
    "Ellipsoid",
    "Frame",
    "FrameError",
    "FrameshiftError",
    "FrameshiftWarning",
    "InputTypeError",
    "MissingInputError",
    "Plane",
    "Planet",
    "RateSeries",
    "SteadyRate",
    "UnitsError",
    "UnsupportedInputError",
    "__version__",
    "apparent_accelerations",
    "coriolis_parameters",
    "normal_gravity",
    "to_inertial",
    "to_rotating",
]
