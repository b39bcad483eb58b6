"""Time values to two-part Julian dates, and UTC to the scales rotation needs.

Velocity records carry civil time (UTC, or something close to it) as
``datetime64`` or ``cftime`` values. The Earth Rotation Angle wants UT1
(UTC + ``dut1``); precession-nutation wants TT (UTC + leap seconds + 32.184 s,
via pyerfa). Model calendars (``noleap``, ``360_day``...) do not map onto real
days, so the rotation angle is refused for them rather than guessed.
"""

from __future__ import annotations

import numpy as np

from frameshift.errors import MissingInputError, UnsupportedInputError

__all__ = ["julian_date_parts", "utc_to_tt"]

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

    erfa = _require_erfa()
    with warnings.catch_warnings():
        # Past the end of pyerfa's leap-second table, UTC -> TAI is "dubious":
        # a leap second not yet announced shifts TT by 1 s, which moves the
        # precession-nutation matrix by ~1e-12 rad (5e-6 m at the surface).
        warnings.filterwarnings("ignore", message=".*dubious year", category=erfa.ErfaWarning)
        tai1, tai2 = erfa.utctai(jd1, jd2)
    return erfa.taitt(tai1, tai2)


def _require_erfa():
    try:
        import erfa
    except ImportError as exc:  # pragma: no cover - exercised only without the extra
        raise UnsupportedInputError(
            "celestial='gcrs' needs pyerfa; install it with: pip install 'frameshift[celestial]'",
            variable="celestial",
            expected="pyerfa installed",
            found="pyerfa missing",
        ) from exc
    return erfa
