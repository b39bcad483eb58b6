"""Units at the boundary: one registry, checked once, converted once.

frameshift uses cf-xarray's UDUNITS-aware pint registry and nothing else.
Kernels never see units: the xarray layer checks each variable's ``units``
attribute here, works out one scale factor to SI, and hands bare floats on.
"""

from __future__ import annotations

import re

import pint
from cf_xarray.units import units as ureg

from frameshift.errors import UnitsError

__all__ = ["parse_units", "read_unit", "scale_to", "udunits_string", "ureg"]

_DIMENSIONS = {
    "speed": "[length] / [time]",
    "acceleration": "[length] / [time] ** 2",
    "length": "[length]",
    "pressure": "[mass] / [length] / [time] ** 2",
}

# Spellings cf-xarray's formatter writes that UDUNITS-2 reads otherwise or not at all,
# and the UDUNITS-2 names to write instead (udunits2-common.xml).
_NOT_UDUNITS = {"kn": "knot", "deg": "degree", "nmi": "nautical_mile"}
_TOKEN = re.compile(r"[A-Za-z_]+")
_SCALED = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s+\S")
_PREFIXES = ("", "k", "h", "da", "d", "c", "m", "u", "µ", "n", "M", "G")
# Symbols cf-xarray writes that mean the same in UDUNITS-2 (udunits2-accepted.xml,
# udunits2-common.xml; each checked against cf-units in tests/test_units_written.py).
# Anything else (mph: milliphot in UDUNITS; kph: kilophot; fps) is spelled out from
# its pint definition, or, failing that, written as a scaled SI unit.
_UDUNITS_SAFE = frozenset(
    {p + b for p in _PREFIXES for b in ("m", "s", "g", "Pa", "N", "J", "W", "K", "rad")}
    | {"min", "h", "d", "ft", "in", "yd", "mi", "knot", "nautical_mile", "degree",
       "degree_north", "degree_east", "week", "fortnight", "percent"}
)


def parse_units(variable: str, units: object, kind: str) -> pint.Unit:
    """Parse a ``units`` attribute and check its physical dimension.

    Parameters
    ----------
    variable : str
        Variable name, used in the error message.
    units : object
        The ``units`` attribute as found (``None`` if absent).
    kind : {"speed", "acceleration", "length", "pressure"}
        The dimension expected.

    Returns
    -------
    pint.Unit

    Raises
    ------
    UnitsError
        If the attribute is missing, unparseable, or of another dimension.

    Examples
    --------
    >>> parse_units("U", "knot", "speed")
    <Unit('knot')>
    """
    expected = _DIMENSIONS[kind]
    if units is None or (isinstance(units, str) and not units.strip()):
        raise UnitsError(
            f"variable {variable!r} has no 'units' attribute; expected units of {kind} "
            f"({expected}), e.g. {_example(kind)!r}",
            variable=variable,
            expected=expected,
            found="no units",
        )
    try:
        unit = read_unit(str(units))
    except (pint.errors.PintError, ValueError, TypeError, AttributeError) as exc:
        raise UnitsError(
            f"variable {variable!r} has units {units!r}, which are not a recognised unit; "
            f"expected units of {kind} ({expected}), e.g. {_example(kind)!r}",
            variable=variable,
            expected=expected,
            found=str(units),
        ) from exc
    if unit.dimensionality != ureg.Unit(_example(kind)).dimensionality:
        raise UnitsError(
            f"variable {variable!r} has units {units!r} of dimension "
            f"{unit.dimensionality}; expected units of {kind} ({expected})",
            variable=variable,
            expected=expected,
            found=f"{units} ({unit.dimensionality})",
        )
    return unit


def read_unit(text: str) -> pint.Unit:
    """A unit from its text, including a scaled unit such as ``0.5 m s-1`` (UDUNITS-2
    allows a leading factor; frameshift writes one for units UDUNITS-2 cannot name).

    Examples
    --------
    >>> round(scale_to(read_unit("0.5 m s-1"), "m s-1"), 12)
    0.5
    """
    try:
        return ureg.Unit(text)
    except ValueError:
        if not _SCALED.match(text):
            raise
    quantity = ureg.Quantity(text)
    name = "scaled_" + re.sub(r"\W", "_", f"{float(quantity.magnitude)!r}_{quantity.units}")
    if name not in ureg:
        ureg.define(f"{name} = {float(quantity.magnitude)!r} * {quantity.units}")
    return ureg.Unit(name)


def scale_to(unit: pint.Unit, target: str) -> float:
    """Return the factor that converts a value in ``unit`` to ``target``.

    Examples
    --------
    >>> round(scale_to(ureg.Unit("knot"), "m s-1"), 6)
    0.514444
    """
    return float(ureg.Quantity(1.0, unit).to(target).magnitude)


def udunits_string(unit: pint.Unit | str) -> str:
    """Write a unit as a UDUNITS-2 string meaning the same quantity (factor 1).

    pint's symbols that UDUNITS-2 reads otherwise are rewritten (``kn`` ->
    ``knot``, ``mph`` -> ``mi h-1``, ``kph`` -> ``km h-1``); a unit UDUNITS-2
    has no name for is written as a scaled SI unit (``furlong/fortnight`` ->
    ``0.00016630952380952381 m s-1``), which UDUNITS-2 reads exactly.

    Examples
    --------
    >>> udunits_string("m/s")
    'm s-1'
    >>> udunits_string("knot")
    'knot'
    >>> udunits_string("mph")
    'mi h-1'
    """
    unit = ureg.Unit(unit)
    spelled = ureg.Unit("")
    for name, power in unit._units.items():
        if not _is_safe(f"{ureg.Unit(name):cf}"):
            parts = _definition(name)
            if parts is None:
                return _scaled_si(unit)
            spelled *= parts**power
        else:
            spelled *= ureg.Unit(name) ** power
    text = f"{spelled:cf}"
    return _TOKEN.sub(lambda m: _NOT_UDUNITS.get(m.group(0), m.group(0)), text)


def _is_safe(text: str) -> bool:
    return all(t in _UDUNITS_SAFE or t in _NOT_UDUNITS for t in _TOKEN.findall(text))


def _definition(name: str) -> pint.Unit | None:
    """A unit pint defines as an exact product of UDUNITS-safe units (mph = mile/hour)."""
    definition = ureg._units.get(name)
    scale = getattr(getattr(definition, "converter", None), "scale", None)
    if definition is None or scale != 1.0 or getattr(definition.converter, "offset", 0):
        return None
    parts = ureg.Unit("")
    for part, power in definition.reference.items():
        part_unit = ureg.Unit(part)
        if not _is_safe(f"{part_unit:cf}"):
            return None
        parts *= part_unit**power
    return parts


def _scaled_si(unit: pint.Unit) -> str:
    q = ureg.Quantity(1.0, unit).to_base_units()
    base = f"{q.units:cf}"
    factor = float(q.magnitude)
    return base if factor == 1.0 else f"{factor!r} {base}"


def _example(kind: str) -> str:
    return {"speed": "m s-1", "acceleration": "m s-2", "length": "m", "pressure": "Pa"}[kind]
