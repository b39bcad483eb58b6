"""Finding things in a Dataset, and saying why not.

Detection is by CF metadata (standard names, units, ``positive``, ``axis``,
and each variable's ``coordinates``), never by variable name alone.
:func:`read_layout` reads a Dataset once into a :class:`Layout` of velocity
sets, each with its units parsed and its position found; operations take
values from it through the helpers of :mod:`frameshift.detect.position`.
"""

from frameshift.detect.layout import Layout, VelocitySet, find_layout, read_layout, require_dataset
from frameshift.detect.position import (
    Position,
    declared_coordinates,
    find_axis,
    find_dataset_axis,
    find_time,
    find_vertical,
    given_height,
    height_values,
    length_values,
    plain,
    position_values,
    time_instants,
)
from frameshift.detect.velocity import (
    INERTIAL,
    ROTATING,
    Component,
    earth_standard_name,
    find_component_sets,
    frame_of,
)

__all__ = [
    "INERTIAL",
    "ROTATING",
    "Component",
    "Layout",
    "Position",
    "VelocitySet",
    "declared_coordinates",
    "earth_standard_name",
    "find_axis",
    "find_component_sets",
    "find_dataset_axis",
    "find_layout",
    "find_time",
    "find_vertical",
    "frame_of",
    "given_height",
    "height_values",
    "length_values",
    "plain",
    "position_values",
    "read_layout",
    "require_dataset",
    "time_instants",
]
