"""CF metadata for what frameshift writes: attributes, history, Conventions.

Every attribute builder lives here, so that what a converted variable says
about itself (frame, body, component, assumptions) is written one way.
"""

from __future__ import annotations

import datetime as _dt
import re
from collections.abc import Mapping, Sequence

import xarray as xr

from frameshift._version import __version__
from frameshift.detect.criteria import FAMILY_LABELS

__all__ = [
    "CF_VERSION",
    "FAMILY_LABELS",
    "INERTIAL",
    "ROTATING",
    "append_history",
    "float_encoding",
    "restored_velocity_attrs",
    "set_conventions",
    "stamp",
    "velocity_attrs",
]

INERTIAL = "inertial"
ROTATING = "rotating"
_AXES_TEXT = {
    "local": "local east/north/up axes",
    "planar": "the lab's x/y/z axes",
}

#: The CF version whose rules frameshift's output follows.
CF_VERSION = "CF-1.11"
_CF_TOKEN = re.compile(r"CF-\d+(\.\d+)*")

# Encoding keys that pack values into integers: a variable whose values
# frameshift changed must not be re-packed with the input's packing.
PACKING_KEYS = ("scale_factor", "add_offset", "dtype", "_FillValue", "missing_value", "_Unsigned")


def append_history(attrs: dict, operation: str) -> None:
    """Append one timestamped line naming ``operation`` to ``attrs['history']`` in place."""
    now = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    line = f"{now} frameshift {__version__}: {operation}"
    old = attrs.get("history")
    attrs["history"] = f"{old}\n{line}" if old else line


def set_conventions(attrs: dict) -> None:
    """Name the CF version followed in ``attrs['Conventions']``, keeping other conventions."""
    old = str(attrs.get("Conventions", "")).strip()
    if _CF_TOKEN.search(old):
        attrs["Conventions"] = _CF_TOKEN.sub(CF_VERSION, old, count=1)
    else:
        attrs["Conventions"] = f"{CF_VERSION} {old}".strip() if old else CF_VERSION


def stamp(ds: xr.Dataset, operation: str) -> xr.Dataset:
    """Return ``ds`` with fresh global attributes: history line and Conventions."""
    attrs = dict(ds.attrs)
    append_history(attrs, operation)
    set_conventions(attrs)
    out = ds.copy(deep=False)
    out.attrs = attrs
    return out


def float_encoding(encoding: dict) -> dict:
    """An encoding without the keys that would pack new values into integers."""
    return {k: v for k, v in encoding.items() if k not in PACKING_KEYS}


def velocity_attrs(
    old: Mapping,
    component: str,
    *,
    family: str,
    frame_name: str,
    target: str,
    units: str,
    notes: Sequence[str] = (),
    basis: str = "local",
) -> dict:
    """Attributes of a velocity component converted to ``target`` on unchanged axes.

    Into the inertial frame, the body-relative ``standard_name`` and
    ``long_name`` are stashed (``standard_name_in_rotating_frame``,
    ``long_name_in_rotating_frame``) so that the way back restores them: CF
    names such as ``eastward_wind`` mean relative to the Earth.

    Examples
    --------
    >>> a = velocity_attrs({"standard_name": "eastward_wind", "units": "m s-1"}, "eastward",
    ...                    family="wind", frame_name="Earth", target="inertial", units="m s-1")
    >>> "standard_name" in a, a["standard_name_in_rotating_frame"]
    (False, 'eastward_wind')
    """
    attrs = dict(old)
    label = FAMILY_LABELS.get(family, "velocity")
    if target == INERTIAL:
        std = attrs.pop("standard_name", None)
        if std:
            attrs["standard_name_in_rotating_frame"] = std
        if "long_name" in old:
            attrs["long_name_in_rotating_frame"] = old["long_name"]
        attrs["long_name"] = (
            f"{component} {label} relative to the inertial (non-rotating) frame, "
            f"on {_AXES_TEXT.get(basis, basis)}"
        )
    else:
        std = attrs.pop("standard_name_in_rotating_frame", None)
        if std:
            attrs["standard_name"] = std
        attrs["long_name"] = attrs.pop(
            "long_name_in_rotating_frame", f"{component} {label} relative to {frame_name}"
        )
    attrs["units"] = units
    attrs["reference_frame"] = target
    attrs["reference_body"] = frame_name
    attrs["velocity_component"] = component
    if notes and target == INERTIAL:
        attrs["assumptions"] = "; ".join(notes)
    elif target == ROTATING:
        attrs.pop("assumptions", None)
    return attrs


def restored_velocity_attrs(record: Mapping, component: str, frame_name: str) -> dict:
    """Attributes of a body-relative component rebuilt from what the way in recorded."""
    attrs = {k: record[k] for k in ("standard_name", "long_name") if k in record}
    attrs.setdefault("long_name", f"{component} velocity relative to {frame_name}")
    attrs.update(
        units=record.get("units", "m s-1"),
        reference_frame=ROTATING,
        reference_body=frame_name,
        velocity_component=component,
    )
    return attrs
