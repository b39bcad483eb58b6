"""Frames by name, for settings that must stay plain data (the batch runner, manifests).

``"earth"``, ``"earth_sphere"``, ``"mars"``, ``"venus"``, ``"jupiter"``,
``"saturn"``, ``"titan"``; and ``"table:<rate>"``, a rotating table turning
counter-clockwise at ``<rate>``: a quantity (``"table:10 rpm"``) or the name of
a variable of the Dataset holding the rate over time with its units
(``"table:table_rate"``, a spin-up or spin-down). ``"table-clockwise:<rate>"``
is a table turning clockwise.
"""

from __future__ import annotations

import xarray as xr

from frameshift.errors import ConventionError, MissingInputError
from frameshift.frames.bodies import EARTH, EARTH_SPHERE, Frame
from frameshift.frames.planets import NAMED_BODIES
from frameshift.frames.table import RotatingTable

__all__ = ["FRAME_NAMES", "frame_from_name"]

FRAME_NAMES = {"earth": EARTH, "earth_sphere": EARTH_SPHERE, **NAMED_BODIES}
_TABLES = {"table": "counter-clockwise", "table-clockwise": "clockwise"}


def frame_from_name(spec: str, ds: xr.Dataset | None = None) -> Frame:
    """The frame a name stands for (a table's rate variable read from ``ds``).

    Examples
    --------
    >>> frame_from_name("venus").rotation_rate < 0
    True
    >>> round(frame_from_name("table:10 rpm").rotation_rate, 6)
    1.047198
    """
    if not isinstance(spec, str):
        raise ConventionError(
            f"frame must be a name; found {type(spec).__name__}",
            variable="frame",
            expected="a frame name",
            found=type(spec).__name__,
        )
    key, _, rate = spec.partition(":")
    key = key.strip().lower()
    if key in FRAME_NAMES and not rate:
        return FRAME_NAMES[key]
    if key in _TABLES and rate.strip():
        rate = rate.strip()
        if ds is not None and rate in ds.variables:
            series = ds[rate].reset_coords(drop=True).compute()  # a short series, read once
            return RotatingTable(
                series,
                sense=_TABLES[key],
                name=f"rotating table ({rate})",
            )
        if ds is not None and rate.isidentifier():
            raise MissingInputError(
                f"frame {spec!r}: no variable {rate!r} holds the table's rate",
                variable=rate,
                expected="a rate variable over time with units (rpm, rad s-1...)",
                found="absent",
            )
        return RotatingTable(rate, sense=_TABLES[key], name=f"rotating table at {rate}")
    choices = [*FRAME_NAMES, "table:<rate>", "table-clockwise:<rate>"]
    raise ConventionError(
        f"frame={spec!r} is not a frame name; expected one of {', '.join(choices)}",
        variable="frame",
        expected=" | ".join(choices),
        found=repr(spec),
    )
