"""Units at the boundary: one registry, checked once, converted once.

frameshift uses cf-xarray's UDUNITS-aware pint registry and nothing else.
Kernels never see units: the xarray layer checks each variable's ``units``
attribute here, works out one scale factor to SI, and hands bare floats on.
"""

from __future__ import annotations

import functools
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

# Spellings cf-xarray's formatter writes that UDUNITS-2 does not accept,
# and the UDUNITS-2 names to write instead (udunits2-common.xml).
_NOT_UDUNITS = {"kn": "knot", "deg": "degree", "nmi": "nautical_mile"}
_TOKEN = re.compile(r"[A-Za-z_]+")


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
    return ureg.Unit(text)


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
    """Write a unit as a UDUNITS-2 string (``m s-1``, ``knot``; never ``kn``).

    Examples
    --------
    >>> udunits_string("m/s")
    'm s-1'
    >>> udunits_string("knot")
    'knot'
    """
    text = f"{_parse(unit) if isinstance(unit, str) else unit:cf}"
    return _TOKEN.sub(lambda m: _NOT_UDUNITS.get(m.group(0), m.group(0)), text)


def _example(kind: str) -> str:
    return _EXAMPLES[kind]
