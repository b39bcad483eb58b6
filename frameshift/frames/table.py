"""The rotating lab table: a plane turning about a vertical axis.

A :func:`RotatingTable` is a :class:`~frameshift.frames.Frame` whose figure
is a :class:`~frameshift.frames.Plane` (axis along +z through the centre
point) and whose rotation law is a steady rate or a rate series (spin-up,
spin-down). Rates are signed in the sense the caller states:
``sense="counter-clockwise"`` (seen from above, the default and the sign
convention of every frameshift frame) or ``"clockwise"`` (the rate is then
negated): the sense is an explicit, checked argument, never guessed from
the data. The table's angle is the time integral of its rate from the
epoch; its axes coincide with the lab's when the angle is zero.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import xarray as xr

from frameshift.errors import ConventionError, FrameError, UnitsError, check_choice
from frameshift.frames.bodies import Frame
from frameshift.frames.figure import Plane
from frameshift.frames.rotation import RateSeries, SteadyRate
from frameshift.units import ureg

__all__ = ["SENSES", "RotatingTable", "angular_rate"]

SENSES = ("counter-clockwise", "clockwise")
#: unit names that say which angle a rate turns through (pint names; rpm is
#: revolutions_per_minute, which contains "revolution")
_ANGLE_WORDS = ("radian", "degree", "revolution", "turn", "cycle", "arcminute", "arcsecond")


def angular_rate(value: object, variable: str = "rate") -> float:
    """A rotation rate with units, in rad s-1.

    Accepts a string (``"10 rpm"``, ``"0.5 rad s-1"``, ``"60 deg s-1"``), a
    pint Quantity, or a ``(value, units)`` pair. The units must name the
    angle: ``s-1`` or ``Hz`` alone are refused (cycles or radians?).

    Examples
    --------
    >>> round(angular_rate("10 rpm"), 12)
    1.047197551197
    >>> round(angular_rate((60, "deg s-1")), 12)
    1.047197551197
    """
    if isinstance(value, tuple) and len(value) == 2:
        value = f"{value[0]} {value[1]}"
    if isinstance(value, (int, float, np.number)) and not isinstance(value, bool):
        raise UnitsError(
            f"{variable}={value!r} has no units; give the rate with units, e.g. "
            f"'{value} rpm', '{value} rad s-1' or '{value} deg s-1'",
            variable=variable,
            expected="a rotation rate with units (rpm, rad s-1, deg s-1)",
            found=repr(value),
        )
    try:
        q = ureg.Quantity(value) if isinstance(value, str) else value
        magnitude = float(q.to("rad / s").magnitude)
        unit_names = " ".join(str(u) for u in q.units._units)
    except Exception as exc:
        raise UnitsError(
            f"{variable}={value!r} is not a rotation rate; expected units such as rpm, "
            "rad s-1 or deg s-1",
            variable=variable,
            expected="a rotation rate (rpm, rad s-1, deg s-1)",
            found=repr(value),
        ) from exc
    if not any(word in unit_names for word in _ANGLE_WORDS):
        raise UnitsError(
            f"{variable}={value!r} does not say which angle it turns through; use rad s-1, "
            "deg s-1 or rpm (s-1 and Hz are ambiguous between radians and turns)",
            variable=variable,
            expected="units naming the angle",
            found=str(getattr(q, "units", value)),
        )
    if not math.isfinite(magnitude):
        raise FrameError(
            f"{variable}={value!r} must be finite",
            variable=variable,
            expected="a finite rate",
            found=repr(value),
        )
    return magnitude


def _series(rate: xr.DataArray, sign: float) -> xr.DataArray:
    if rate.ndim != 1:
        raise FrameError(
            f"a rate series must be a DataArray over one time dimension; found dims {rate.dims}",
            variable="rate",
            expected="a 1-D DataArray over time",
            found=str(rate.dims),
        )
    units = rate.attrs.get("units")
    scale = angular_rate(f"1 {units}", "rate") if units else angular_rate(1.0, "rate")
    out = rate.astype(np.float64) * (sign * scale)
    out.attrs = {"units": "rad s-1", "long_name": "rotation rate of the table"}
    return out


@dataclass(frozen=True)
class _Clockwise:
    """A rate function given clockwise-positive, turned to the counter-clockwise sign."""

    function: Callable

    def __call__(self, seconds):
        return -np.asarray(self.function(seconds), dtype=np.float64)


def RotatingTable(
    rate: object,
    *,
    center: tuple[float, float] = (0.0, 0.0),
    epoch: object = None,
    angle_at_epoch: float = 0.0,
    sense: str = "counter-clockwise",
    name: str = "rotating table",
) -> Frame:
    """A lab table turning about a vertical axis through ``center``.

    Parameters
    ----------
    rate : str, Quantity, (value, units), DataArray or callable
        Steady rate with units (``"10 rpm"``, ``"1.2 rad s-1"``,
        ``(60, "deg s-1")``); or a rate series for spin-up or spin-down: a
        DataArray over one time dimension (elapsed time or dates) with a
        ``units`` attribute (``"rpm"``, ``"rad s-1"``...), or a callable of
        seconds since the epoch returning rad s-1.
    center : (float, float), default (0, 0)
        Foot of the axis in lab (and table) x, y coordinates: numbers in m, or
        lengths with units (``("5 cm", "0 cm")``).
    epoch : optional
        Time at which the angle is ``angle_at_epoch`` (default: elapsed time 0).
    angle_at_epoch : float, default 0
        Table angle at the epoch, rad.
    sense : {"counter-clockwise", "clockwise"}
        Sense of ``rate`` seen from above; a clockwise rate is stored negated.
    name : str
        Label written into the attributes of converted variables.

    Returns
    -------
    Frame

    Examples
    --------
    >>> table = RotatingTable("10 rpm")
    >>> round(table.rotation_rate, 6)
    1.047198
    >>> round(RotatingTable("10 rpm", sense="clockwise").rotation_rate, 6)
    -1.047198
    """
    check_choice("sense", sense, SENSES)
    sign = 1.0 if sense == "counter-clockwise" else -1.0
    cx, cy = _center(center)
    if isinstance(rate, xr.DataArray):
        law = RateSeries(_series(rate, sign), epoch=epoch, angle_at_epoch=angle_at_epoch)
        kind = "rate series"
    elif callable(rate) and not isinstance(rate, str):
        fn: Callable = rate if sign > 0 else _Clockwise(rate)
        law = RateSeries(fn, epoch=epoch, angle_at_epoch=angle_at_epoch)
        kind = "rate function"
    else:
        law = SteadyRate(sign * angular_rate(rate), epoch=epoch, angle_at_epoch=angle_at_epoch)
        kind = "steady rate"
    return Frame(
        name,
        law,
        Plane(center=(cx, cy)),
        description=f"rotating table ({kind}, {sense} positive as given), axis at ({cx}, {cy}) m",
    )


def _center(center) -> tuple[float, float]:
    try:
        cx, cy = (_length(c) for c in center)
    except (TypeError, ValueError, UnitsError) as exc:
        raise ConventionError(
            f"center must be two lengths (x, y): numbers in metres or quantities such as "
            f"'5 cm'; found {center!r}",
            variable="center",
            expected="(x, y) in m, or two lengths with units",
            found=repr(center),
        ) from exc
    if not (math.isfinite(cx) and math.isfinite(cy)):
        raise ConventionError(
            f"center must be finite; found {center!r}",
            variable="center",
            expected="finite (x, y) in m",
            found=repr(center),
        )
    return cx, cy


def _length(value) -> float:
    if isinstance(value, (int, float, np.number)) and not isinstance(value, bool):
        return float(value)
    try:
        q = ureg.Quantity(value) if isinstance(value, str) else value
        return float(q.to("m").magnitude)
    except Exception as exc:
        raise UnitsError(
            f"{value!r} is not a length",
            variable="center",
            expected="a length",
            found=repr(value),
        ) from exc
