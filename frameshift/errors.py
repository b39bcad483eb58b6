"""The frameshift exception family.

Every error frameshift raises on purpose derives from :class:`FrameshiftError`
and also from the builtin that fits (``ValueError`` or ``TypeError``), so
callers can catch either. Each error carries structured fields (the variable
concerned, what was expected, what was found) and pickles, so it survives
being raised on a Dask worker.
"""

from __future__ import annotations

__all__ = [
    "ConventionError",
    "FrameError",
    "FrameshiftError",
    "FrameshiftWarning",
    "InputTypeError",
    "MissingInputError",
    "UnitsError",
    "UnsupportedInputError",
    "check_choice",
    "check_finite",
]


class FrameshiftError(Exception):
    """Base class of every error frameshift raises on purpose.

    Parameters
    ----------
    message : str
        The full, human-readable explanation.
    variable : str, optional
        Name of the variable (or argument) the error is about.
    expected, found : str, optional
        What frameshift expected and what it found instead.
    """

    def __init__(
        self,
        message: str,
        *,
        variable: str | None = None,
        expected: str | None = None,
        found: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.variable = variable
        self.expected = expected
        self.found = found

    def __reduce__(self):  # keep the keyword fields through pickling
        return (
            _rebuild,
            (type(self), self.message, self.variable, self.expected, self.found),
        )

    def __str__(self) -> str:
        return self.message


def _rebuild(cls, message, variable, expected, found):
    return cls(message, variable=variable, expected=expected, found=found)


class UnitsError(FrameshiftError, ValueError):
    """A variable's units are missing, unparseable, or of the wrong dimension."""


class MissingInputError(FrameshiftError, ValueError):
    """Something frameshift needs (a velocity, a position, time) is absent."""


class UnsupportedInputError(FrameshiftError, ValueError):
    """The input is recognised but cannot be used as it is.

    Examples: grid-relative velocity components, a pressure-only vertical
    coordinate, a model calendar where real time is needed.
    """


class FrameError(FrameshiftError, ValueError):
    """A frame is ill-defined, or a variable is already in the requested frame."""


class ConventionError(FrameshiftError, ValueError):
    """A convention argument (basis, direction, celestial frame...) has a bad value."""


class InputTypeError(FrameshiftError, TypeError):
    """An argument has the wrong type (e.g. a DataArray where a Dataset is needed)."""


class FrameshiftWarning(UserWarning):
    """Warnings frameshift emits (an assumption made, a value approximated)."""


def check_choice(name: str, value: object, choices: tuple[str, ...]) -> str:
    """Return ``value`` if it is one of ``choices``; raise :class:`ConventionError` if not."""
    if not isinstance(value, str) or value not in choices:
        raise ConventionError(
            f"{name}={value!r} is not valid; expected one of {', '.join(map(repr, choices))}",
            variable=name,
            expected=" | ".join(choices),
            found=repr(value),
        )
    return value


def check_finite(name: str, value: object) -> float:
    """``value`` as a float if it is a finite real number; raise :class:`FrameError` if not.

    Examples
    --------
    >>> check_finite("rate", 2)
    2.0
    """
    import math

    import numpy as np

    ok = not isinstance(value, bool) and isinstance(value, (int, float, np.integer, np.floating))
    if not ok or not math.isfinite(float(value)):
        raise FrameError(
            f"{name} must be a finite number; found {value!r}",
            variable=name,
            expected="finite number",
            found=repr(value),
        )
    return float(value)
