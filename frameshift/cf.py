"""CF metadata for what frameshift writes: attributes, history, Conventions."""

from __future__ import annotations

import datetime as _dt
import re

import xarray as xr

__all__ = ["CF_VERSION", "append_history", "set_conventions", "stamp"]

#: The CF version whose rules frameshift's output follows.
CF_VERSION = "CF-1.11"
_CF_TOKEN = re.compile(r"CF-\d+(\.\d+)*")

# Encoding keys that pack values into integers: a variable whose values
# frameshift changed must not be re-packed with the input's packing.
PACKING_KEYS = ("scale_factor", "add_offset", "dtype", "_FillValue", "missing_value", "_Unsigned")


def _version() -> str:
    from frameshift import __version__

    return __version__


def append_history(attrs: dict, operation: str) -> None:
    """Append one timestamped line naming ``operation`` to ``attrs['history']`` in place."""
    now = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    line = f"{now} frameshift {_version()}: {operation}"
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
