"""What frameshift looks for in a Dataset, kept as plain tables.

The logic that uses these tables lives in the other modules of
:mod:`frameshift.detect`. New capabilities add their criteria here, as data.
"""

from __future__ import annotations

__all__ = [
    "AXIS_STANDARD_NAMES",
    "AXIS_UNITS",
    "COMPONENTS",
    "FAMILY_LABELS",
    "GRID_RELATIVE_STANDARD_NAMES",
    "LATITUDE_UNITS",
    "LONGITUDE_UNITS",
    "PLANAR_COMPONENTS",
    "PRESSURE_STANDARD_NAMES",
    "TIME_STANDARD_NAMES",
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
