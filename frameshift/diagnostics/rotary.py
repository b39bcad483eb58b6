"""Inertial oscillations in velocity records: rotary spectra and complex demodulation."""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import xarray as xr

from frameshift._apply import apply_kernel
from frameshift._kernels import spectra
from frameshift.diagnostics import common
from frameshift.errors import ConventionError, UnsupportedInputError, check_choice
from frameshift.frames import EARTH, Ellipsoid, check_frame

__all__ = ["check_band", "inertial_demodulation", "rotary_spectrum"]

_GAPS = ("refuse", "split")


class _Record:
    """A velocity record along time: sampling, the gap index and the inertial frequency."""

    def __init__(self, ds, velocity, frame, gaps: str) -> None:
        check_choice("gaps", gaps, _GAPS)
        self.frame = check_frame(frame, Ellipsoid)
        self.vel = common.velocity_in_si(ds, velocity, self.frame)
        dims = tuple(map(str, self.vel.u.dims))
        self.time_dim, self.seconds = common.seconds_along(ds, self.vel.time, dims)
        self.time_name = str(self.vel.time)
        if self.seconds.size < 8:
            raise UnsupportedInputError(
                f"the record along {self.time_dim!r} has {self.seconds.size} samples; at least "
                "8 are needed",
                variable=self.time_name, expected=">= 8 samples", found=str(self.seconds.size),
            )
        steps = np.diff(self.seconds)
        self.dt = float(steps.min())
        multiples = steps / self.dt
        self.index = None
        if not np.allclose(steps, self.dt, rtol=1e-6, atol=0.0):
            whole = np.allclose(multiples, np.round(multiples), rtol=0.0, atol=1e-3)
            if gaps == "refuse" or not whole:
                raise UnsupportedInputError(
                    f"time {self.time_name!r} is not evenly spaced (steps from {self.dt:g} s to "
                    f"{steps.max():g} s); frameshift does not fill gaps: "
                    + ("pass gaps='split' to use the stretches between them" if whole
                       else "resample the record first (its steps are not whole multiples "
                            "of the shortest)"),
                    variable=self.time_name, expected="evenly spaced time",
                    found=f"steps {self.dt:g} to {steps.max():g} s",
                )
            self.index = np.concatenate([[0], np.cumsum(np.round(multiples))]).astype(np.int64)
        self.length = int(self.index[-1] + 1) if self.index is not None else self.seconds.size
        lat_var = ds.variables[self.vel.latitude]
        if self.time_dim in lat_var.dims:
            raise UnsupportedInputError(
                f"latitude {self.vel.latitude!r} changes along {self.time_dim!r}: the inertial "
                "frequency of a moving record is not one number; use a fixed-position record",
                variable=self.vel.latitude, expected="latitude fixed in time",
                found=str(lat_var.dims),
            )
        lat = common.as_plain(lat_var).astype(np.float64)
        #: signed inertial (Coriolis) frequency f = 2 Ω sin φ, rad s-1
        self.f = 2.0 * float(self.frame.rotation_rate) * np.sin(np.deg2rad(lat))
        u, v = self.vel.u, self.vel.v
        if u.chunks is not None:
            u = u.chunk({self.time_dim: -1})
        if v.chunks is not None:
            v = v.chunk({self.time_dim: -1})
        self.u, self.v = u, v
        self.split = gaps == "split"

    def inertial_variables(self) -> dict[str, xr.DataArray]:
        base = common.frame_attrs(self.frame)
        with np.errstate(divide="ignore"):
            period = 2.0 * np.pi / np.abs(self.f)
        return {
            "inertial_frequency": (self.f / (2.0 * np.pi)).assign_attrs(
                long_name="inertial frequency f / 2π (signed as f = 2 Ω sin φ; positive: "
                "clockwise motion)", units="s-1", **base),
            "inertial_period": period.assign_attrs(
                long_name="inertial period 2π / |f|", units="s", **base),
        }


def rotary_spectrum(
    ds: xr.Dataset,
    frame=EARTH,
    *,
    velocity: Mapping[str, str] | None = None,
    segment: int | str | np.timedelta64 | None = None,
    band: tuple[float, float] = (0.9, 1.1),
    gaps: str = "refuse",
) -> xr.Dataset:
    """Clockwise and counter-clockwise spectra of a horizontal velocity record.

    The record w = u + i v along time is split into half-overlapping
    Hann-windowed segments whose periodograms are averaged (Welch's method,
    ``scipy.signal.welch``); variance at negative frequencies of w is clockwise
    motion, at positive ones counter-clockwise (Gonella 1972). Both parts are
    given on a ``frequency`` coordinate (cycles per second, f >= 0; the first
    dimension, left of any vertical or horizontal one as CF recommends),
    density scaled so that together they integrate to the variance of u plus
    that of v.

    Parameters
    ----------
    ds : xarray.Dataset
        Velocity along a decoded, evenly spaced time coordinate at fixed
        positions (one mooring, or several along other dimensions).
    frame : Planet, default EARTH
    velocity : mapping, optional
    segment : int, str or numpy.timedelta64, optional
        Segment length: a number of samples or a duration (``"4D"``); default
        a quarter of the record (seven half-overlapping segments).
    band : (float, float), default (0.9, 1.1)
        The band around |f|, as multiples of it, for ``inertial_band_fraction``:
        the share of all the variance that lies in that band in the sense
        inertial motion turns (clockwise where f > 0, counter-clockwise where f < 0).
    gaps : {"refuse", "split"}
        Missing time steps or values: refuse (default), or use only the
        stretches between gaps that hold at least one segment. Never filled.

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> t = np.datetime64("2031-05-01", "ns") + np.arange(2000) * np.timedelta64(30, "m")
    >>> f = 2 * frameshift.EARTH.rotation_rate * np.sin(np.deg2rad(40.0))
    >>> s = (t - t[0]) / np.timedelta64(1, "s")
    >>> def cf(name, units):
    ...     return {"standard_name": name, "units": units}
    >>> ds = xr.Dataset({"u": ("time", 0.2 * np.cos(f * s),
    ...                        cf("eastward_sea_water_velocity", "m s-1")),
    ...                  "v": ("time", -0.2 * np.sin(f * s),
    ...                        cf("northward_sea_water_velocity", "m s-1"))},
    ...                 coords={"time": t, "lat": ((), 40.0, cf("latitude", "degrees_north")),
    ...                         "lon": ((), -30.0, cf("longitude", "degrees_east"))})
    >>> out = frameshift.rotary_spectrum(ds)
    >>> bool(out.inertial_band_fraction > 0.9)
    True
    """
    rec = _Record(ds, velocity, frame, gaps)
    lo, hi = check_band(band)
    nperseg = _segment(segment, rec)
    fs = 1.0 / rec.dt
    freq = spectra.rotary_frequencies(nperseg, fs)
    cw, ccw = apply_kernel(
        spectra.rotary_welch, rec.u, rec.v, input_core_dims=([rec.time_dim], [rec.time_dim]),
        output_core_dims=(["frequency"], ["frequency"]), output_sizes={"frequency": freq.size},
        kwargs={"fs": fs, "nperseg": nperseg, "index": rec.index, "split": rec.split},
    )
    # CF 1.11 section 2.4: dimensions other than T, Z, Y, X go to the left of them
    cw, ccw = cw.transpose("frequency", ...), ccw.transpose("frequency", ...)
    inertial = rec.inertial_variables()
    fraction = apply_kernel(
        spectra.band_fraction, cw, ccw, inertial["inertial_frequency"].drop_attrs(),
        input_core_dims=(["frequency"], ["frequency"], []),
        kwargs={"frequency": freq, "low": lo, "high": hi},
    )
    base = {**common.frame_attrs(rec.frame),
            "velocity_variables": f"{rec.vel.eastward} {rec.vel.northward}",
            "spectral_estimate": f"Welch: Hann window, {nperseg} samples per segment "
            f"({nperseg * rec.dt:g} s), half overlap, mean removed per segment",
            "gaps": "stretches between gaps used" if rec.split else "none allowed"}
    out = xr.Dataset(
        {
            "clockwise": cw.assign_attrs(
                long_name="rotary spectral density, clockwise part of u + i v",
                units="m2 s-1", **base),
            "counterclockwise": ccw.assign_attrs(
                long_name="rotary spectral density, counter-clockwise part of u + i v",
                units="m2 s-1", **base),
            "inertial_band_fraction": fraction.assign_attrs(
                long_name=f"share of the variance within {lo:g}-{hi:g} x |f| turning as "
                "inertial motion does", units="1", band=f"{lo:g} {hi:g}", **base),
            **inertial,
        },
        coords={"frequency": ("frequency", freq,
                              {"long_name": "frequency (cycles per second)", "units": "s-1"})},
    )
    keep = set(out.dims) - {"frequency"}
    out = out.assign_coords({n: c.variable for n, c in ds.coords.items()
                             if set(c.dims) <= keep and n != rec.time_name})
    out = common.finish(out, ds, f"rotary spectrum ({rec.frame.name})")
    out.attrs.pop("featureType", None)  # spectra over frequency: no longer a CF §9 sampling
    return out


def inertial_demodulation(
    ds: xr.Dataset,
    frame=EARTH,
    *,
    velocity: Mapping[str, str] | None = None,
    window: int | str | np.timedelta64 | None = None,
    gaps: str = "refuse",
) -> xr.Dataset:
    """Amplitude and phase of inertial oscillations over time, by complex demodulation.

    w = u + i v is multiplied by exp(i f t) (f = 2 Ω sin φ, t in seconds from
    the first time), which brings motion turning as exp(-i f t) (clockwise in
    the north, counter-clockwise in the south) to zero frequency, then
    averaged over a Hann window. So w ≈ ``inertial_amplitude`` ×
    exp(i (``inertial_phase`` - f t)). Where the window reaches past the
    record (or a gap, with ``gaps="split"``) the result is NaN.

    Parameters
    ----------
    ds : xarray.Dataset
    frame : Planet, default EARTH
    velocity : mapping, optional
    window : int, str or numpy.timedelta64, optional
        Averaging window: samples or a duration; default one inertial period
        (the longest among the records), rounded to an odd number of samples.
    gaps : {"refuse", "split"}

    Examples
    --------
    >>> import numpy as np, xarray as xr, frameshift
    >>> t = np.datetime64("2031-05-01", "ns") + np.arange(500) * np.timedelta64(30, "m")
    >>> f = 2 * frameshift.EARTH.rotation_rate * np.sin(np.deg2rad(40.0))
    >>> s = (t - t[0]) / np.timedelta64(1, "s")
    >>> def cf(name, units):
    ...     return {"standard_name": name, "units": units}
    >>> ds = xr.Dataset({"u": ("time", 0.3 * np.cos(f * s),
    ...                        cf("eastward_sea_water_velocity", "m s-1")),
    ...                  "v": ("time", -0.3 * np.sin(f * s),
    ...                        cf("northward_sea_water_velocity", "m s-1"))},
    ...                 coords={"time": t, "lat": ((), 40.0, cf("latitude", "degrees_north")),
    ...                         "lon": ((), -30.0, cf("longitude", "degrees_east"))})
    >>> out = frameshift.inertial_demodulation(ds)
    >>> round(float(out.inertial_amplitude.isel(time=250)), 6)
    0.3
    """
    rec = _Record(ds, velocity, frame, gaps)
    samples = None if window is None else _samples(window, rec.dt, "window")
    amplitude, phase = apply_kernel(
        spectra.demodulate, rec.u, rec.v, rec.f,
        input_core_dims=([rec.time_dim], [rec.time_dim], []),
        output_core_dims=([rec.time_dim], [rec.time_dim]),
        kwargs={"seconds": rec.seconds, "dt": rec.dt, "window": samples, "index": rec.index,
                "split": rec.split},
    )
    amplitude = amplitude.transpose(*rec.vel.u.dims)
    phase = phase.transpose(*rec.vel.u.dims)
    first = ds.variables[rec.time_name].values[0]
    base = {**common.frame_attrs(rec.frame),
            "velocity_variables": f"{rec.vel.eastward} {rec.vel.northward}",
            "demodulation": "Hann window of "
            + ("one inertial period" if samples is None
               else f"{samples + 1 - samples % 2} samples")
            + f"; t in seconds from {first}; u + i v ≈ amplitude exp(i (phase - f t))"}
    out = xr.Dataset({
        "inertial_amplitude": amplitude.assign_attrs(
            long_name="amplitude of the inertial oscillation", units="m s-1", **base),
        "inertial_phase": phase.assign_attrs(
            long_name="phase of the inertial oscillation", units="radian", **base),
        **rec.inertial_variables(),
    })
    out = out.assign_coords({n: c.variable for n, c in ds.coords.items()
                             if set(c.dims) <= set(out.dims)})
    return common.finish(out, ds, f"inertial demodulation ({rec.frame.name})")


def check_band(band) -> tuple[float, float]:
    """A band (low, high) in multiples of |f|, checked: two numbers, 0 <= low < high.

    Examples
    --------
    >>> check_band((0.9, 1.1))
    (0.9, 1.1)
    """
    try:
        lo, hi = (float(b) for b in band)
    except (TypeError, ValueError) as exc:
        raise ConventionError(
            f"band= must be two numbers (multiples of |f|), e.g. (0.9, 1.1); found {band!r}",
            variable="band", expected="(low, high)", found=repr(band),
        ) from exc
    if not 0 <= lo < hi:
        raise ConventionError(
            f"band= must satisfy 0 <= low < high; found {band!r}",
            variable="band", expected="0 <= low < high", found=repr(band),
        )
    return lo, hi


def _samples(value, dt: float, name: str) -> int:
    if isinstance(value, int | np.integer) and not isinstance(value, bool):
        return int(value)
    try:
        import pandas as pd

        seconds = pd.Timedelta(value).total_seconds()
    except (TypeError, ValueError) as exc:
        raise ConventionError(
            f"{name}= must be a number of samples or a duration such as '4D' or "
            f"np.timedelta64(4, 'D'); found {value!r}",
            variable=name, expected="int or duration", found=repr(value),
        ) from exc
    return round(seconds / dt)


def _segment(segment, rec: _Record) -> int:
    nperseg = rec.length // 4 if segment is None else _samples(segment, rec.dt, "segment")
    if nperseg < 8 or nperseg > rec.length:
        raise UnsupportedInputError(
            f"segment of {nperseg} samples does not fit the record of {rec.length} samples "
            "(8 samples at least)",
            variable="segment", expected=f"8 to {rec.length} samples", found=str(nperseg),
        )
    return nperseg
