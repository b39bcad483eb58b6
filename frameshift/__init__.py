"""frameshift: winds and currents between rotating and inertial frames.

Move observed velocities between the frame they were measured in and the
frame the physics needs, and attribute the apparent accelerations a rotating
frame adds, on xarray data with units and CF metadata kept.
"""

from frameshift import accessor  # noqa: F401  (registers ds.frameshift)
from frameshift._version import __version__
from frameshift.diagnostics import (
    absolute_vorticity,
    axial_angular_momentum,
    excitation,
    inertial_demodulation,
    integrate_angular_momentum,
    rotary_spectrum,
    track_forces,
)
from frameshift.dynamics.accelerations import apparent_accelerations, coriolis_parameters
from frameshift.dynamics.gravity import normal_gravity
from frameshift.dynamics.planar import free_surface
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
    JUPITER,
    MARS,
    SATURN,
    TITAN,
    VENUS,
    EarthRotationAngle,
    Ellipsoid,
    Frame,
    Plane,
    Planet,
    RateSeries,
    RotatingTable,
    SteadyRate,
)
from frameshift.instruments import (
    earth_to_grid,
    from_speed_direction,
    grid_to_earth,
    magnetic_declination,
    magnetic_to_true,
    platform_to_earth,
    to_speed_direction,
    true_wind,
)
from frameshift.transforms import to_inertial, to_rotating

__all__ = [
    "EARTH",
    "EARTH_SPHERE",
    "JUPITER",
    "MARS",
    "SATURN",
    "TITAN",
    "VENUS",
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
    "RotatingTable",
    "SteadyRate",
    "UnitsError",
    "UnsupportedInputError",
    "__version__",
    "absolute_vorticity",
    "apparent_accelerations",
    "axial_angular_momentum",
    "coriolis_parameters",
    "earth_to_grid",
    "excitation",
    "free_surface",
    "from_speed_direction",
    "grid_to_earth",
    "inertial_demodulation",
    "integrate_angular_momentum",
    "magnetic_declination",
    "magnetic_to_true",
    "normal_gravity",
    "platform_to_earth",
    "rotary_spectrum",
    "to_inertial",
    "to_rotating",
    "to_speed_direction",
    "track_forces",
    "true_wind",
]
