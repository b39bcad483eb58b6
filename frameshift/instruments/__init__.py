"""From what instruments record to Earth-relative east/north/up velocity."""

from frameshift.instruments.polar import from_speed_direction, to_speed_direction

__all__ = ["from_speed_direction", "to_speed_direction"]
