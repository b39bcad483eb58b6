"""Rotary spectra and inertial demodulation of current records.

Checks: the rotary decomposition of a circle at f (Gonella 1972, Deep-Sea Res.
19), Parseval's theorem for the density scaling (textbook), the inertial
period 2π/f (AMS Glossary relation, WGS 84 rate), gaps refused or split.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import ConventionError, UnsupportedInputError
from tests.diagnostics.data import moorings, run_lazily, seconds, times
from tests.helpers import as_layout, assert_udunits, eager_and_chunked, raise_if_dask_computes

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1; WGS 84


def circles(lats, amplitude=0.25, n=1440, step=30.0, noise=0.0):
    """Inertial circles at each latitude: w = A exp(-i f t) (clockwise where f > 0)."""
    t = times(n, step)
    s = seconds(t)
    f = 2 * OMEGA * np.sin(np.deg2rad(np.atleast_1d(lats)))[:, None]
    rng = np.random.default_rng(9)
    u = amplitude * np.cos(f * s) + noise * rng.standard_normal((f.shape[0], n))
    v = -amplitude * np.sin(f * s) + noise * rng.standard_normal((f.shape[0], n))
    if np.ndim(lats) == 0:
        return moorings(u[0], v[0], t, lats, -35.0)
    return moorings(u, v, t, lats, [-35.0] * len(lats))


@eager_and_chunked
def test_inertial_period_from_f(layout):
    # 2π / (2 Ω sin φ) with the WGS 84 rate: 23.93 h at 30°, 16.92 h at 45° (reference
    # values, computed; the relation as in the AMS Glossary, "inertial period").
    out = run_lazily(frameshift.rotary_spectrum, circles([30.0, 45.0]), layout)
    np.testing.assert_allclose(out.inertial_period.values / 3600.0, [23.9345, 16.9242],
                               atol=5e-5)
    np.testing.assert_allclose(out.inertial_frequency.values,
                               2 * OMEGA * np.sin(np.deg2rad([30.0, 45.0])) / (2 * np.pi),
                               rtol=1e-12)


@eager_and_chunked
def test_clockwise_circle_in_the_north(layout):
    # Gonella (1972): a clockwise circle at frequency f has all its variance in the
    # clockwise part at f; in the south inertial motion turns counter-clockwise.
    ds = circles([40.0, -40.0], noise=0.01)
    with raise_if_dask_computes():
        out = frameshift.rotary_spectrum(as_layout(ds, layout), segment=480)
    freq = out.frequency.values
    f_cyc = 2 * OMEGA * np.sin(np.deg2rad(40.0)) / (2 * np.pi)
    north, south = out.isel(station=0), out.isel(station=1)
    assert abs(freq[int(north.clockwise.argmax("frequency"))] - f_cyc) <= freq[1]
    assert float(north.clockwise.max()) > 100 * float(north.counterclockwise.max())
    assert abs(freq[int(south.counterclockwise.argmax("frequency"))] - f_cyc) <= freq[1]
    assert float(south.counterclockwise.max()) > 100 * float(south.clockwise.max())
    assert (out.inertial_band_fraction.values > 0.95).all()
    # Parseval (density scaling): both parts integrate to var(u) + var(v) = A² + 2σ²
    total = ((out.clockwise + out.counterclockwise).sum("frequency") * freq[1]).values
    np.testing.assert_allclose(total, 0.25**2 + 2 * 0.01**2, rtol=0.02)
    for name in ("clockwise", "counterclockwise", "inertial_band_fraction", "inertial_period"):
        assert_udunits(out[name].attrs["units"])
    assert out.frequency.attrs["units"] == "s-1"
    # CF 1.11 section 2.4: a dimension other than T, Z, Y, X lies to their left
    assert out.clockwise.dims == out.counterclockwise.dims == ("frequency", "station")


@eager_and_chunked
def test_gaps_refused_or_split(layout):
    ds = circles(45.0)
    holed = ds.drop_isel(time=np.arange(600, 640))
    with pytest.raises(UnsupportedInputError, match="gaps='split'"):
        frameshift.rotary_spectrum(as_layout(holed, layout))
    split = run_lazily(frameshift.rotary_spectrum, holed, layout, segment=240, gaps="split")
    whole = run_lazily(frameshift.rotary_spectrum, ds, layout, segment=240)
    np.testing.assert_allclose(split.clockwise.values, whole.clockwise.values, rtol=0.05,
                               atol=1e-3 * float(whole.clockwise.max()))
    assert split.clockwise.attrs["gaps"] == "stretches between gaps used"
    missing = ds.copy(deep=True)
    missing["u"][100] = np.nan
    with pytest.raises(UnsupportedInputError, match="missing values"):
        frameshift.rotary_spectrum(as_layout(missing, layout)).compute()  # found in the data
    uneven = ds.isel(time=slice(0, 50)).assign_coords(
        time=ds.time.values[:50] + (np.arange(50) % 2) * np.timedelta64(7, "s"))
    with pytest.raises(UnsupportedInputError, match="resample"):
        frameshift.rotary_spectrum(as_layout(uneven, layout), gaps="split")


@eager_and_chunked
def test_demodulation_recovers_amplitude_and_phase(layout):
    # A circle at f with a slowly changing amplitude and a fixed phase: w = A(t) exp(i(φ0 - f t)).
    t = times(1440, 30.0)
    s = seconds(t)
    lats = np.array([35.0, -50.0])
    f = 2 * OMEGA * np.sin(np.deg2rad(lats))[:, None]
    amp = 0.2 * (1 + 0.3 * np.sin(2 * np.pi * s / (15 * 86400.0)))
    w = amp * np.exp(1j * (0.7 - f * s))
    ds = moorings(w.real, w.imag, t, lats, [-35.0, -35.0])
    with raise_if_dask_computes():
        out = frameshift.inertial_demodulation(as_layout(ds, layout))
    a = out.inertial_amplitude.values
    good = np.isfinite(a)
    assert good[:, 720].all() and not good[:, 0].any()  # NaN where the window leaves the record
    np.testing.assert_allclose(a[good], np.broadcast_to(amp, a.shape)[good], rtol=0.01)
    np.testing.assert_allclose(out.inertial_phase.values[good], 0.7, atol=1e-6)
    assert out.inertial_amplitude.attrs["units"] == "m s-1"
    assert out.inertial_phase.attrs["units"] == "radian"


@eager_and_chunked
def test_demodulation_refusals_and_window(layout):
    ds = as_layout(circles(0.0, n=200), layout)
    with pytest.raises(UnsupportedInputError, match="equator"):
        frameshift.inertial_demodulation(ds).compute()  # f comes with the data
    ds = as_layout(circles(45.0, n=200), layout)
    with pytest.raises(ConventionError, match="window="):
        frameshift.inertial_demodulation(ds, window="a while")
    with pytest.raises(UnsupportedInputError, match="does not fit"):
        frameshift.inertial_demodulation(ds, window=5000).compute()
    out = frameshift.inertial_demodulation(ds, window="12h")
    assert "25 samples" in out.inertial_amplitude.attrs["demodulation"]
    moving = ds.assign_coords(lat=("time", np.linspace(40, 41, 200), ds.lat.attrs))
    with pytest.raises(UnsupportedInputError, match="changes along"):
        frameshift.inertial_demodulation(moving)
    with pytest.raises(ConventionError, match="band="):
        frameshift.rotary_spectrum(ds, band=(1.1, 0.9))


@eager_and_chunked
def test_accessor_delegates(layout):
    ds = as_layout(circles(45.0, n=400), layout)
    xr.testing.assert_allclose(ds.frameshift.rotary_spectrum().drop_attrs(),
                               frameshift.rotary_spectrum(ds).drop_attrs())
    xr.testing.assert_allclose(ds.frameshift.inertial_demodulation().drop_attrs(),
                               frameshift.inertial_demodulation(ds).drop_attrs())
