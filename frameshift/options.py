"""Option values checked before any file is opened.

A bad value given to :func:`frameshift.batch.convert_operation` or
:func:`frameshift.batch.terms_operation` (and so on the command line) is
refused here, once, with a :class:`~frameshift.errors.ConventionError`
naming the option, instead of once per file after opening each file.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from frameshift.errors import ConventionError

__all__ = ["check_dut1", "check_height", "check_terms", "check_velocity_set"]


def check_velocity_set(velocity: Mapping) -> dict[str, str]:
    """One ``velocity=`` set: known components of one basis, the two horizontal ones present.

    The components are ``eastward``, ``northward`` [, ``upward``] (local axes on
    a body) or ``x``, ``y`` [, ``z``] (a lab's axes), not mixed.

    Examples
    --------
    >>> check_velocity_set({"eastward": "U", "northward": "V"})
    {'eastward': 'U', 'northward': 'V'}
    >>> check_velocity_set({"x": "u", "y": "v"})
    {'x': 'u', 'y': 'v'}
    """
    from frameshift.detect.criteria import COMPONENTS, PLANAR_COMPONENTS

    if not isinstance(velocity, Mapping):
        raise ConventionError(
            f"velocity must name components, e.g. eastward=U,northward=V; found {velocity!r}",
            variable="velocity", expected="a mapping of component to variable name",
            found=type(velocity).__name__,
        )
    planar = bool(set(velocity) & set(PLANAR_COMPONENTS))
    valid = PLANAR_COMPONENTS if planar else COMPONENTS
    unknown = sorted(set(velocity) - set(valid))
    missing = [c for c in valid[:2] if c not in velocity]
    if unknown or missing:
        found = ", ".join(f"{k}={v}" for k, v in velocity.items())
        what = f"unknown component(s) {unknown}" if unknown else f"no {' or '.join(missing)}"
        raise ConventionError(
            f"velocity {found!r}: {what}; the components are {', '.join(COMPONENTS)} "
            f"(eastward and northward required) or, on a lab's axes, "
            f"{', '.join(PLANAR_COMPONENTS)} (x and y required), not mixed; e.g. "
            "eastward=U,northward=V",
            variable="velocity", expected="eastward=NAME,northward=NAME[,upward=NAME]",
            found=found,
        )
    return dict(velocity)


def check_terms(terms: list) -> list[str]:
    """The terms asked for, all known.

    Examples
    --------
    >>> check_terms(["coriolis"])
    ['coriolis']
    """
    from frameshift.dynamics.accelerations import TERMS

    bad = [t for t in terms if not isinstance(t, str) or t not in TERMS]
    if bad or not terms:
        found = ", ".join(map(repr, bad)) or "no terms"
        raise ConventionError(
            f"terms {found} not known; valid terms are {', '.join(TERMS)}",
            variable="terms", expected=" | ".join(TERMS), found=found,
        )
    return terms


def check_dut1(dut1: object) -> None:
    """Refuse a UT1 - UTC that is not finite or not below 1 s in size."""
    try:
        value = float(dut1)
    except (TypeError, ValueError):
        value = math.nan
    if not math.isfinite(value) or abs(value) >= 1.0:
        # UTC is kept within 0.9 s of UT1 (ITU-R TF.460-6, common practice since 1972)
        raise ConventionError(
            f"dut1 (UT1 - UTC) must be a finite number of seconds below 1 in size; found {dut1!r}",
            variable="dut1", expected="-1 < dut1 < 1 (s)", found=repr(dut1),
        )


def check_height(height: object) -> None:
    """Refuse a number given as height that is not finite or lies below the Earth's centre."""
    if height is None or isinstance(height, str):
        return
    try:
        value = float(height)
    except (TypeError, ValueError):
        return  # a DataArray: checked where it is read
    from frameshift import EARTH

    if not math.isfinite(value) or value <= -EARTH.polar_radius:
        raise ConventionError(
            f"height {height!r} m is not a finite height above the Earth's centre; give the "
            "height above the reference ellipsoid in metres",
            variable="height", expected=f"a finite number > {-EARTH.polar_radius:.0f} m",
            found=repr(height),
        )
