"""Units at the boundary: one registry, checked once, converted once.

frameshift uses cf-xarray's UDUNITS-aware pint registry and nothing else.
Kernels never see units: the xarray layer checks each variable's ``units``
attribute here, works out one scale factor to SI, and hands bare floats on.
"""

from __future__ import annotations

import functools
import math
import re

import pint
from cf_xarray.units import units as ureg

from frameshift.errors import UnitsError

__all__ = ["KINDS", "parse_quantity", "parse_units", "scale_to", "udunits_string", "ureg"]

_DIMENSIONS = {
    "speed": "[length] / [time]",
    "acceleration": "[length] / [time] ** 2",
    "length": "[length]",
    "pressure": "[mass] / [length] / [time] ** 2",
    "time": "[time]",
    "angular_velocity": "1 / [time]",
    "angle": "dimensionless (angle)",
}
_EXAMPLES = {
    "speed": "m s-1",
    "acceleration": "m s-2",
    "length": "m",
    "pressure": "Pa",
    "time": "s",
    "angular_velocity": "rad s-1",
    "angle": "degree",
}
#: The physical kinds :func:`parse_units` checks.
KINDS = tuple(_DIMENSIONS)

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
    kind : {"speed", "acceleration", "length", "pressure", "time", "angular_velocity", "angle"}
        The dimension expected.

    Returns
    -------
    pint.Unit

    Raises
    ------
    UnitsError
        If the attribute is missing, unparseable (whatever the unit library
        raised), or of another dimension.

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
        unit = _parse(units if isinstance(units, str) else str(units))
    except Exception as exc:  # the unit library raises many kinds on odd text
        raise UnitsError(
            f"variable {variable!r} has units {units!r}, which are not a recognised unit; "
            f"expected units of {kind} ({expected}), e.g. {_example(kind)!r}",
            variable=variable,
            expected=expected,
            found=str(units),
        ) from exc
    if unit.dimensionality != _parse(_example(kind)).dimensionality:
        raise UnitsError(
            f"variable {variable!r} has units {units!r} of dimension "
            f"{unit.dimensionality}; expected units of {kind} ({expected})",
            variable=variable,
            expected=expected,
            found=f"{units} ({unit.dimensionality})",
        )
    return unit


@functools.lru_cache(maxsize=512)
def _parse(text: str) -> pint.Unit:
    """The one call into the unit library's parser (cached: each text parsed once)."""
    if not text.isprintable() or len(text) > 200:
        raise ValueError("unit text with control characters or over 200 characters")
    try:
        return ureg.Unit(text)
    except ValueError:
        if not _SCALED.match(text):
            raise
    # a scaled unit such as "0.5 m s-1" (UDUNITS-2 allows a leading factor; frameshift
    # writes one for units UDUNITS-2 cannot name): a unit of its own in the registry
    quantity = ureg.Quantity(text)
    factor = float(quantity.magnitude)
    if not math.isfinite(factor) or factor == 0.0:
        raise ValueError(f"unit text {text!r} has a factor that is not a finite, non-zero number")
    name = "scaled_" + re.sub(r"\W", "_", f"{factor!r}_{quantity.units}")
    if name not in ureg:
        ureg.define(f"{name} = {factor!r} * {quantity.units}")
    return ureg.Unit(name)


def parse_quantity(variable: str, text: str, units: object) -> float:
    """A quantity written as text (``"250 hPa"``) in the ``units`` of a variable.

    Examples
    --------
    >>> parse_quantity("plev", "250 hPa", "Pa")
    25000.0
    """
    target = parse_units(variable, units, _kind_of(units))
    try:
        quantity = ureg.Quantity(text)
        return float(quantity.to(target).magnitude)
    except Exception as exc:  # the unit library raises many kinds on odd text
        raise UnitsError(
            f"{text!r} is not a quantity convertible to the units of {variable!r} ({units!r})",
            variable=variable,
            expected=f"a number with units convertible to {units}",
            found=str(text),
        ) from exc


def _kind_of(units: object) -> str:
    """The kind of ``units`` among :data:`KINDS` (for error messages and checks)."""
    try:
        dimensionality = _parse(str(units)).dimensionality
    except Exception as exc:
        raise UnitsError(
            f"{units!r} is not a recognised unit",
            variable="units",
            expected="a UDUNITS unit",
            found=str(units),
        ) from exc
    for kind, example in _EXAMPLES.items():
        if _parse(example).dimensionality == dimensionality:
            return kind
    raise UnitsError(
        f"{units!r} is of none of the kinds frameshift handles ({', '.join(_EXAMPLES)})",
        variable="units",
        expected=", ".join(_EXAMPLES),
        found=str(units),
    )


def scale_to(unit: pint.Unit, target: str) -> float:
    """Return the factor that converts a value in ``unit`` to ``target``.

    Examples
    --------
    >>> round(scale_to(ureg.Unit("knot"), "m s-1"), 6)
    0.514444
    """
    return float(ureg.Quantity(1.0, unit).to(_parse(target)).magnitude)


def udunits_string(unit: pint.Unit | str) -> str:
    """Write a unit as a UDUNITS-2 string meaning the same quantity (factor 1).

    pint's symbols that UDUNITS-2 reads otherwise are rewritten (``kn`` ->
    ``knot``, ``mph`` -> ``mi h-1``, ``kph`` -> ``km h-1``); a unit UDUNITS-2
    has no name for is written as a scaled SI unit (``furlong/fortnight`` ->
    ``0.00016630985642923665 m s-1``), which UDUNITS-2 and :func:`parse_units`
    read exactly.

    Examples
    --------
    >>> udunits_string("m/s")
    'm s-1'
    >>> udunits_string("knot")
    'knot'
    >>> udunits_string("mph")
    'mi h-1'
    """
    unit = _parse(unit) if isinstance(unit, str) else unit
    spelled = ureg.Unit("")
    for name, power in unit._units.items():
        if _is_safe(f"{ureg.Unit(name):cf}"):
            spelled *= ureg.Unit(name) ** power
            continue
        parts = _definition(name)
        if parts is None:
            return _scaled_si(unit)
        spelled *= parts**power
    text = f"{spelled:cf}"
    return _TOKEN.sub(lambda m: _NOT_UDUNITS.get(m.group(0), m.group(0)), text)


def _is_safe(text: str) -> bool:
    return all(t in _UDUNITS_SAFE or t in _NOT_UDUNITS for t in _TOKEN.findall(text))


def _definition(name: str) -> pint.Unit | None:
    """A unit pint defines as an exact product of UDUNITS-safe units (mph = mile/hour)."""
    definition = ureg._units.get(name)
    converter = getattr(definition, "converter", None)
    if definition is None or getattr(converter, "scale", None) != 1.0 or getattr(
            converter, "offset", 0):
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
    return _EXAMPLES[kind]
