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

__all__ = ["parse_units", "scale_to", "udunits_string", "ureg"]

_DIMENSIONS = {
    "speed": "[length] / [time]",
    "acceleration": "[length] / [time] ** 2",
    "length": "[length]",
    "pressure": "[mass] / [length] / [time] ** 2",
}

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
        unit = ureg.Unit(str(units))
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


def scale_to(unit: pint.Unit, target: str) -> float:
    """Return the factor that converts a value in ``unit`` to ``target``.

    Examples
    --------
    >>> round(scale_to(ureg.Unit("knot"), "m s-1"), 6)
    0.514444
    """
    return float(ureg.Quantity(1.0, unit).to(target).magnitude)


def udunits_string(unit: pint.Unit | str) -> str:
    """Write a unit as a UDUNITS-2 string (``m s-1``, ``knot``; never ``kn``).

    Examples
    --------
    >>> udunits_string("m/s")
    'm s-1'
    >>> udunits_string("knot")
    'knot'
    """
    text = f"{ureg.Unit(unit):cf}"
    return _TOKEN.sub(lambda m: _NOT_UDUNITS.get(m.group(0), m.group(0)), text)


def _example(kind: str) -> str:
    return {"speed": "m s-1", "acceleration": "m s-2", "length": "m", "pressure": "Pa"}[kind]
