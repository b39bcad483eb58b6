"""What frameshift looks for in a Dataset, kept as plain tables.

The logic that uses these tables lives in the other modules of
:mod:`frameshift.detect`. New capabilities add their criteria here, as data.
"""

from __future__ import annotations

__all__ = [
    "ANGLE_OF_X",
    "AXIS_STANDARD_NAMES",
    "AXIS_UNITS",
    "COMPONENTS",
    "DIRECTION_CONVENTIONS",
    "EARTH_COMPONENTS",
    "FAMILY_LABELS",
    "GRID_COMPONENTS",
    "GRID_RELATIVE_STANDARD_NAMES",
    "HEADING",
    "LATITUDE_UNITS",
    "LONGITUDE_UNITS",
    "PLANAR_COMPONENTS",
    "PLATFORM_COURSE",
    "PLATFORM_PITCH",
    "PLATFORM_ROLL",
    "PLATFORM_SPEED",
    "POLAR",
    "PRESSURE_STANDARD_NAMES",
    "TIME_STANDARD_NAMES",
    "UNKNOWN_SIGN",
    "VELOCITY_STANDARD_NAMES",
    "VERTICAL_STANDARD_NAMES",
]

#: Components on local east/north/up axes (ellipsoidal frames).
COMPONENTS = ("eastward", "northward", "upward")
#: Components on a lab's x/y/z axes (plane frames); CF has no standard names for them,
#: so they are named by the caller (``velocity={"x": ..., "y": ...}``).
PLANAR_COMPONENTS = ("x", "y", "z")

#: Earth-relative velocity components by family (CF standard name table v93).
VELOCITY_STANDARD_NAMES: dict[str, dict[str, str]] = {
    "wind": {
        "eastward": "eastward_wind",
        "northward": "northward_wind",
        "upward": "upward_air_velocity",
    },
    "sea_water": {
        "eastward": "eastward_sea_water_velocity",
        "northward": "northward_sea_water_velocity",
        "upward": "upward_sea_water_velocity",
    },
}

FAMILY_LABELS = {"wind": "wind", "sea_water": "sea water velocity", "velocity": "velocity"}

#: Components on a model grid's own axes: they must be turned to east/north first.
GRID_RELATIVE_STANDARD_NAMES = frozenset(
    {
        "x_wind",
        "y_wind",
        "grid_eastward_wind",
        "grid_northward_wind",
        "sea_water_x_velocity",
        "sea_water_y_velocity",
    }
)

#: Vertical position, by standard name, in order of preference, with the sign
#: that turns it into height (positive up) and a note on what is assumed.
VERTICAL_STANDARD_NAMES: dict[str, tuple[float, str | None]] = {
    "height_above_reference_ellipsoid": (1.0, None),
    "altitude": (
        1.0,
        "altitude (above the geoid) taken as height above the reference ellipsoid",
    ),
    "height": (1.0, "height above the surface taken as height above the reference ellipsoid"),
    "depth": (-1.0, "depth (positive down) taken as negative height above the reference ellipsoid"),
    "geopotential_height": (
        1.0,
        "geopotential height taken as height above the reference ellipsoid",
    ),
}

PRESSURE_STANDARD_NAMES = frozenset(
    {"air_pressure", "atmosphere_hybrid_sigma_pressure_coordinate", "atmosphere_sigma_coordinate"}
)

LATITUDE_UNITS = frozenset(
    {"degrees_north", "degree_north", "degree_N", "degrees_N", "degreeN", "degreesN"}
)
LONGITUDE_UNITS = frozenset(
    {"degrees_east", "degree_east", "degree_E", "degrees_E", "degreeE", "degreesE"}
)

#: Horizontal position axes: the standard name and the CF units that mark each.
AXIS_STANDARD_NAMES = {"latitude": "latitude", "longitude": "longitude"}
AXIS_UNITS = {"latitude": LATITUDE_UNITS, "longitude": LONGITUDE_UNITS}

#: Time coordinates by standard name (besides decoded datetime/timedelta values).
TIME_STANDARD_NAMES = frozenset({"time"})


# --- instrument records (frameshift.instruments) -----------------------------------
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
