"""Time for rotation laws: real dates as two-part Julian dates, or elapsed seconds.

Velocity records carry civil time (UTC, or something close to it) as
``datetime64`` or ``cftime`` values; laboratory records carry seconds on the
experiment's own clock. Both become :class:`Instants`, the one time value the
rotation laws read. The Earth Rotation Angle wants UT1 (UTC + ``dut1``);
precession-nutation wants TT (UTC + leap seconds + 32.184 s, via pyerfa).
Model calendars (``noleap``, ``360_day``...) do not map onto real days, so
the rotation angle is refused for them rather than guessed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from frameshift.errors import MissingInputError, UnsupportedInputError

__all__ = [
    "ELAPSED",
    "UTC",
    "Instants",
    "instants_of",
    "julian_date_parts",
    "require_erfa",
    "utc_to_tt",
]

#: The two kinds of time a rotation law reads.
UTC = "utc"
ELAPSED = "elapsed"
_NS_PER_SECOND = 1_000_000_000


@dataclass(frozen=True, eq=False)
class Instants:
    """Times at which a rotation law is evaluated.

    Either real dates, as two-part UTC Julian dates (``kind == "utc"``: ``jd1``
    whole days plus 0.5, ``jd2`` the fraction), or seconds elapsed on an
    experiment's clock (``kind == "elapsed"``: ``seconds``). Make them with
    :meth:`from_julian`, :meth:`from_seconds` or :func:`instants_of`.

    Examples
    --------
    >>> t = Instants.from_seconds([0.0, 1.5])
    >>> t.kind, t.shape
    ('elapsed', (2,))
    """

    kind: str
    jd1: np.ndarray | None = None
    jd2: np.ndarray | None = None
    seconds: np.ndarray | None = None

    @classmethod
    def from_julian(cls, jd1, jd2=0.0) -> Instants:
        """Real (UTC) dates from two-part Julian dates, broadcast together."""
        a, b = np.broadcast_arrays(np.asarray(jd1, np.float64), np.asarray(jd2, np.float64))
        return cls(UTC, jd1=a, jd2=b)

    @classmethod
    def from_seconds(cls, seconds) -> Instants:
        """Seconds elapsed on an experiment's clock."""
        return cls(ELAPSED, seconds=np.asarray(seconds, np.float64))

    @property
    def shape(self) -> tuple[int, ...]:
        return np.shape(self.jd1 if self.kind == UTC else self.seconds)

    def seconds_since(self, epoch: tuple[float, float] | float) -> np.ndarray:
        """Seconds from ``epoch`` (a two-part Julian date for real dates, else seconds)."""
        if self.kind == UTC:
            e1, e2 = epoch
            return ((self.jd1 - e1) + (self.jd2 - e2)) * 86400.0
        return self.seconds - float(epoch)


def instants_of(values, variable: str = "time") -> Instants:
    """Decoded time values as :class:`Instants`.

    ``datetime64`` and ``cftime`` values of a real calendar are UTC dates;
    ``timedelta64`` values are seconds elapsed on an experiment's clock.

    Examples
    --------
    >>> instants_of(np.array([0, 2], "timedelta64[s]")).seconds
    array([0., 2.])
    """
    values = np.asarray(values)
    if np.issubdtype(values.dtype, np.timedelta64):
        if np.isnat(values).any():
            raise MissingInputError(
                f"{variable!r} holds missing times (NaT); the rotation needs every time",
                variable=variable,
                expected="valid times",
                found="NaT",
            )
        ns = values.astype("timedelta64[ns]").astype(np.int64)
        whole, rest = np.divmod(ns, _NS_PER_SECOND)
        return Instants.from_seconds(whole.astype(np.float64) + rest / _NS_PER_SECOND)
    return Instants.from_julian(*julian_date_parts(values, variable))

_UNIX_EPOCH_JD = 2440587.5
_NS_PER_DAY = 86_400_000_000_000
_REAL_CALENDARS = ("standard", "gregorian", "proleptic_gregorian", "julian")


def julian_date_parts(values: np.ndarray, variable: str = "time") -> tuple[np.ndarray, np.ndarray]:
    """Split time values into a two-part Julian date (whole part, fraction).

    Parameters
    ----------
    values : ndarray of datetime64 or cftime.datetime
        Decoded time values (UTC).
    variable : str
        Name used in error messages.

    Returns
    -------
    jd1, jd2 : ndarray of float64
        ``jd1`` holds whole days plus 0.5 (Julian dates start at noon), ``jd2``
        the fraction of a day in [0, 1), so ``jd1 + jd2`` is the Julian date.

    Examples
    --------
    >>> jd1, jd2 = julian_date_parts(np.array(["2000-01-01T12:00"], "datetime64[ns]"))
    >>> float(jd1[0] + jd2[0])
    2451545.0
    """
    values = np.asarray(values)
    if np.issubdtype(values.dtype, np.datetime64):
        if np.isnat(values).any():
            raise MissingInputError(
                f"{variable!r} holds missing times (NaT); the rotation angle needs every time",
                variable=variable,
                expected="valid times",
                found="NaT",
            )
        ns = values.astype("datetime64[ns]").astype(np.int64)
        days, rest = np.divmod(ns, _NS_PER_DAY)
        return _UNIX_EPOCH_JD + days.astype(np.float64), rest.astype(np.float64) / _NS_PER_DAY
    if values.dtype == object and values.size:
        first = values.flat[0]
        calendar = getattr(first, "calendar", None)
        if calendar is None:
            raise UnsupportedInputError(
                f"{variable!r} holds {type(first).__name__} values; expected decoded times "
                "(numpy datetime64 or cftime datetimes)",
                variable=variable,
                expected="datetime64 or cftime",
                found=type(first).__name__,
            )
        if calendar not in _REAL_CALENDARS:
            raise UnsupportedInputError(
                f"{variable!r} uses the model calendar {calendar!r}, which does not map onto "
                "real days; the rotation angle needs real (UTC) time. Convert the times "
                "to a standard calendar first, or use basis='local', which needs no time",
                variable=variable,
                expected="a standard, gregorian or proleptic_gregorian calendar",
                found=calendar,
            )
        import cftime

        jd = np.asarray(
            cftime.date2num(values.ravel(), "days since 2000-01-01 12:00:00", calendar=calendar),
            dtype=np.float64,
        ).reshape(values.shape)
        whole = np.floor(jd)
        return 2451545.0 + whole, jd - whole
    raise UnsupportedInputError(
        f"{variable!r} holds values of dtype {values.dtype}; expected decoded times "
        "(open the file with decode_times=True)",
        variable=variable,
        expected="datetime64 or cftime",
        found=str(values.dtype),
    )


def utc_to_tt(jd1: np.ndarray, jd2: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """UTC two-part Julian date to TT, with leap seconds from pyerfa (SOFA)."""
    import warnings

    erfa = require_erfa()
    with warnings.catch_warnings():
        # Past the end of pyerfa's leap-second table, UTC -> TAI is "dubious":
        # a leap second not yet announced shifts TT by 1 s, which moves the
        # precession-nutation matrix by ~1e-12 rad (5e-6 m at the surface).
        warnings.filterwarnings("ignore", message=".*dubious year", category=erfa.ErfaWarning)
        tai1, tai2 = erfa.utctai(jd1, jd2)
    return erfa.taitt(tai1, tai2)


def require_erfa():
    """pyerfa, or an error saying how to install it."""
    try:
        import erfa
    except ImportError as exc:  # pragma: no cover - pyerfa is a dependency of frameshift
        raise UnsupportedInputError(
            "TT, precession-nutation and the orientation of other bodies need pyerfa, a "
            "dependency of frameshift that is missing here; install it with: pip install pyerfa",
            variable="celestial",
            expected="pyerfa installed",
            found="pyerfa missing",
        ) from exc
    return erfa
