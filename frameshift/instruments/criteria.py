"""What the instrument conversions look for, kept as plain tables (CF standard name table v93).

The logic that uses them lives beside this module; the tables will join
:mod:`frameshift.criteria` (the detection tables) in time.
"""

from __future__ import annotations

__all__ = [
    "ANGLE_OF_X",
    "DIRECTION_CONVENTIONS",
    "EARTH_COMPONENTS",
    "GRID_COMPONENTS",
    "HEADING",
    "PLATFORM_COURSE",
    "PLATFORM_PITCH",
    "PLATFORM_ROLL",
    "PLATFORM_SPEED",
    "POLAR",
    "UNKNOWN_SIGN",
]

#: speed and direction names by family; the direction's name says its convention
POLAR: dict[str, dict[str, str]] = {
    "wind": {
        "speed": "wind_speed",
        "from": "wind_from_direction",
        "to": "wind_to_direction",
    },
    "sea_water": {
        "speed": "sea_water_speed",
        "from": "sea_water_velocity_from_direction",
        "to": "sea_water_velocity_to_direction",
    },
}

#: direction standard name -> (family, convention)
DIRECTION_CONVENTIONS: dict[str, tuple[str, str]] = {
    name: (family, conv)
    for family, table in POLAR.items()
    for conv, name in table.items()
    if conv != "speed"
}

#: Earth-relative component names by family (east, north, up)
EARTH_COMPONENTS: dict[str, tuple[str, str, str]] = {
    "wind": ("eastward_wind", "northward_wind", "upward_air_velocity"),
    "sea_water": (
        "eastward_sea_water_velocity",
        "northward_sea_water_velocity",
        "upward_sea_water_velocity",
    ),
}

#: grid-relative component names by family (x, y); the grid_* names are v93 aliases
GRID_COMPONENTS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "wind": (("x_wind", "grid_eastward_wind"), ("y_wind", "grid_northward_wind")),
    "sea_water": (("sea_water_x_velocity",), ("sea_water_y_velocity",)),
}

#: the grid's own rotation, anticlockwise from east to the x axis
ANGLE_OF_X = "angle_of_rotation_from_east_to_x"

#: heading: clockwise from north of the platform's fore-aft axis
HEADING = "platform_orientation"
PLATFORM_COURSE = "platform_course"
PLATFORM_SPEED = "platform_speed_wrt_ground"

#: pitch and roll names whose sign is stated, with the sign that makes
#: bow up (pitch) and starboard down (roll) positive
PLATFORM_PITCH: dict[str, float] = {"platform_pitch_fore_up": 1.0, "platform_pitch_fore_down": -1.0}
PLATFORM_ROLL: dict[str, float] = {
    "platform_roll_starboard_down": 1.0,
    "platform_roll_starboard_up": -1.0,
}

#: names whose sign convention (or reference) CF leaves open: refused, with why
UNKNOWN_SIGN: dict[str, str] = {
    "platform_yaw": "yaw is relative to the platform's 'at rest' orientation, not to north",
    "platform_pitch": "CF leaves the sign of platform_pitch unknown",
    "platform_roll": "CF leaves the sign of platform_roll unknown",
}
