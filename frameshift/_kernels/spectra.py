"""Rotary spectra and complex demodulation of horizontal velocity records, in numpy.

A horizontal velocity (u east, v north) is the complex series w = u + i v.
Motion turning counter-clockwise (seen from above) puts its variance at
positive frequencies of w, clockwise motion at negative ones (the rotary
decomposition of Gonella 1972, Deep-Sea Res. 19). Spectra are averages of
windowed periodograms over half-overlapping segments (Welch's method, through
``scipy.signal.welch``), density scaled so that the clockwise and
counter-clockwise parts together integrate over frequency to the variance of
u plus that of v.

Records are on trailing time axes, sampled every ``1 / fs`` seconds; a
record with missing samples comes with ``index``, the position of each
sample on the regular grid, and NaN where a value is missing. Gaps are never
filled: they are refused, or (``split=True``) only stretches without gaps
are used.
"""

from __future__ import annotations

import numpy as np

from frameshift.errors import UnsupportedInputError

__all__ = ["band_fraction", "demodulate", "rotary_frequencies", "rotary_welch", "runs"]


def rotary_frequencies(nperseg: int, fs: float) -> np.ndarray:
    """Non-negative frequencies (cycles per unit of ``fs``) of :func:`rotary_welch`."""
    return np.arange(nperseg // 2 + 1) * (fs / nperseg)


def runs(valid: np.ndarray) -> list[tuple[int, int]]:
    """``(start, stop)`` of the stretches of True in a 1-D boolean array.

    Examples
    --------
    >>> runs(np.array([True, True, False, True]))
    [(0, 2), (3, 4)]
    """
    v = np.concatenate([[False], np.asarray(valid, dtype=bool), [False]])
    edges = np.flatnonzero(np.diff(v.astype(np.int8)))
    return list(zip(edges[::2].tolist(), edges[1::2].tolist(), strict=True))


def _regular(x: np.ndarray, index: np.ndarray | None) -> np.ndarray:
    if index is None:
        return x
    out = np.full((*x.shape[:-1], int(index[-1]) + 1), np.nan, dtype=x.dtype)
    out[..., index] = x
    return out


def _fold(spectrum: np.ndarray, nperseg: int) -> tuple[np.ndarray, np.ndarray]:
    """Two-sided spectrum in FFT order -> clockwise and counter-clockwise on f >= 0."""
    half = nperseg // 2
    ccw = spectrum[..., : half + 1].copy()
    cw = np.concatenate([spectrum[..., :1], spectrum[..., :-half - 1:-1]], axis=-1)
    if nperseg % 2 == 0:  # the Nyquist bin is shared: half to each sense
        cw[..., -1] = spectrum[..., half]
    cw[..., 0] *= 0.5
    ccw[..., 0] *= 0.5
    if nperseg % 2 == 0:
        cw[..., -1] *= 0.5
        ccw[..., -1] *= 0.5
    return cw, ccw


def rotary_welch(u, v, *, fs: float, nperseg: int, index=None, split: bool = False):
    """Clockwise and counter-clockwise spectral densities on trailing frequency axes.

    Returns ``(clockwise, counterclockwise)``, each of shape ``(..., nperseg // 2 + 1)``
    in (units of u)² per unit of ``fs``. A record with no stretch of at least
    ``nperseg`` good samples gets NaN.

    Examples
    --------
    >>> t = np.arange(512.0)
    >>> u, v = np.cos(0.25 * np.pi * t), -np.sin(0.25 * np.pi * t)
    >>> cw, ccw = rotary_welch(u, v, fs=1.0, nperseg=64)
    >>> int(np.argmax(cw)), bool(cw.max() > 1e3 * ccw.max())  # 1/8 cycle per sample = bin 8
    (8, True)
    """
    from scipy import signal  # imported here: importing frameshift stays quick

    w = np.asarray(u, dtype=np.float64) + 1j * np.asarray(v, dtype=np.float64)
    w = _regular(w, index)
    missing = ~np.isfinite(w)
    if missing.any() and not split:
        raise UnsupportedInputError(
            "the velocity record has missing values or missing time steps; frameshift does not "
            "fill gaps: drop them or pass gaps='split' to use only the stretches between them",
            variable="velocity", expected="a record without gaps", found="gaps",
        )
    noverlap = nperseg // 2
    kwargs = {"fs": fs, "window": "hann", "nperseg": nperseg, "noverlap": noverlap,
              "detrend": "constant", "return_onesided": False, "scaling": "density"}
    if not missing.any():
        if w.shape[-1] < nperseg:
            return _fold(np.full((*w.shape[:-1], nperseg), np.nan), nperseg)
        return _fold(signal.welch(w, axis=-1, **kwargs)[1], nperseg)
    flat = w.reshape(-1, w.shape[-1])
    out = np.full((flat.shape[0], nperseg), np.nan)
    step = nperseg - noverlap
    for i, series in enumerate(flat):
        total, count = np.zeros(nperseg), 0
        for start, stop in runs(np.isfinite(series)):
            if stop - start < nperseg:
                continue
            nseg = 1 + (stop - start - nperseg) // step
            total += nseg * signal.welch(series[start:stop], **kwargs)[1]
            count += nseg
        if count:
            out[i] = total / count
    return _fold(out.reshape(*w.shape[:-1], nperseg), nperseg)


def band_fraction(clockwise, counterclockwise, inertial, *, frequency, low: float, high: float):
    """Fraction of the variance in the inertial sense within ``[low, high] × |inertial|``.

    ``inertial`` is the signed inertial frequency (same units as ``frequency``,
    broadcasting against the leading axes): positive (northern hemisphere)
    means clockwise motion, negative counter-clockwise.
    """
    cw = np.asarray(clockwise, dtype=np.float64)
    ccw = np.asarray(counterclockwise, dtype=np.float64)
    f = np.asarray(inertial, dtype=np.float64)[..., None]
    freq = np.asarray(frequency, dtype=np.float64)
    inside = (freq >= low * np.abs(f)) & (freq <= high * np.abs(f))
    sense = np.where(f > 0, cw, ccw)
    total = np.sum(cw + ccw, axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.sum(np.where(inside, sense, 0.0), axis=-1) / total


def demodulate(u, v, inertial, *, seconds, dt: float, window: int | None = None, index=None,
               split: bool = False):
    """Complex demodulation at the signed inertial frequency: amplitude and phase.

    ``w = u + i v`` is multiplied by ``exp(i f t)`` (f in rad s-1, t in s), which
    brings motion turning as ``exp(-i f t)`` (clockwise for f > 0) to zero
    frequency, then averaged with a Hann window of ``window`` samples (odd;
    default one inertial period 2π / |f| of each record, ``dt`` being the
    sampling step in s). So w ≈ amplitude × exp(i (phase - f t)). Where the
    window reaches past the record or over a gap, the result is NaN; gaps are
    refused unless ``split``.

    Examples
    --------
    >>> t = np.arange(0.0, 4 * 86400.0, 600.0); f = 1.0e-4
    >>> amp, ph = demodulate(0.2 * np.cos(f * t - 0.5), -0.2 * np.sin(f * t - 0.5), f, seconds=t,
    ...                      dt=600.0)
    >>> round(float(np.nanmean(amp)), 6), round(float(np.nanmean(ph)), 6)
    (0.2, 0.5)
    """
    from scipy import signal  # imported here: importing frameshift stays quick

    w = np.asarray(u, dtype=np.float64) + 1j * np.asarray(v, dtype=np.float64)
    t = np.asarray(seconds, dtype=np.float64)
    f = np.broadcast_to(np.asarray(inertial, dtype=np.float64), w.shape[:-1])
    if np.any(f == 0.0):
        raise UnsupportedInputError(
            "the inertial frequency is 0 (a record on the equator, or a frame that does not "
            "rotate): there is nothing to demodulate at",
            variable="latitude", expected="latitude away from the equator", found="f = 0",
        )
    z = _regular(w * np.exp(1j * f[..., None] * t), index)
    good = np.isfinite(z)
    if not split and not good.all():
        raise UnsupportedInputError(
            "the velocity record has missing values or missing time steps; frameshift does not "
            "fill gaps: drop them or pass gaps='split' to demodulate between them",
            variable="velocity", expected="a record without gaps", found="gaps",
        )
    z = np.where(good, z, 0.0)
    n = z.shape[-1]
    if window is not None:
        windows = np.full(f.shape, int(window))
    else:
        windows = np.rint(2.0 * np.pi / np.abs(f) / dt).astype(np.int64)
    windows = windows + 1 - windows % 2
    if np.any(windows < 3) or np.any(windows > n):
        raise UnsupportedInputError(
            f"a demodulation window of {int(windows.max())} samples does not fit the record "
            f"of {n} samples (3 samples at least)",
            variable="window", expected=f"3 to {n} samples", found=str(int(windows.max())),
        )
    smooth = np.full(z.shape, np.nan + 0j)
    for size in np.unique(windows):
        rows = windows == size
        kernel = np.hanning(size + 2)[1:-1]
        kernel /= kernel.sum()
        sub, ok = z[rows], good[rows]
        shape = (1,) * (sub.ndim - 1) + (int(size),)
        mean = signal.oaconvolve(sub, kernel.reshape(shape), mode="same", axes=-1)
        bad = signal.oaconvolve((~ok).astype(np.float64), np.ones(shape), mode="same", axes=-1)
        reach = signal.oaconvolve(np.ones(n), np.ones(int(size)), mode="same")
        invalid = (bad > 0.5) | (reach < size - 0.5)
        smooth[rows] = np.where(invalid, np.nan + 0j, mean)
    if index is not None:
        smooth = smooth[..., index]
    return np.abs(smooth), np.angle(smooth)
