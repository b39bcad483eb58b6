"""From what instruments record to Earth-relative east/north/up velocity.

Speed and direction (:func:`from_speed_direction`, :func:`to_speed_direction`),
grid-relative components (:func:`grid_to_earth`, :func:`earth_to_grid`),
magnetic bearings and components (:func:`magnetic_to_true`), and moving
platforms (:func:`true_wind`, :func:`platform_to_earth`). Each returns a
Dataset whose velocities carry Earth-relative CF standard names, ready for
:func:`frameshift.to_inertial` and :func:`frameshift.apparent_accelerations`.
"""

from frameshift.instruments.grid import earth_to_grid, grid_to_earth
from frameshift.instruments.magnetic import magnetic_declination, magnetic_to_true
from frameshift.instruments.platform import platform_to_earth, true_wind
from frameshift.instruments.polar import from_speed_direction, to_speed_direction

__all__ = [
    "earth_to_grid",
    "from_speed_direction",
    "grid_to_earth",
    "magnetic_declination",
    "magnetic_to_true",
    "platform_to_earth",
    "to_speed_direction",
    "true_wind",
]
