#!/usr/bin/env python
"""Regenerate the frameshift demo NetCDF files.

All data written by this script are INVENTED.  They belong to a fictional
field programme, the "Tollaven Shelf Experiment" (TSE), and do not describe
any real place, platform, cruise or data set.

Files written (into the folder holding this script, or ``--out DIR``):

* ``global_winds.nc``   coarse global pressure-level winds (time, plev, lat, lon)
* ``shelf_mooring.nc``  current profiles at mooring TSE-M2 (timeSeriesProfile)
* ``balloon_track.nc``  drifting balloon TSE-B1 (trajectory)
* ``packed_knots.nc``   buoy TSE-S3, int16-packed, knots and cm s-1, noleap time
* ``tiny_example.nc``   2 x 3 x 4 grid of 10 m winds for quick examples
* ``ship_met.nc``       research vessel TSE-V5: heading, course, speed over ground and
                        the wind its anemometer feels (relative to the moving ship)

The output is deterministic: every random number comes from
``numpy.random.default_rng(RANDOM_STATE)``.

Usage::

    python data_demo/make_demo_data.py            # write next to this script
    python data_demo/make_demo_data.py --out DIR  # write somewhere else
    python data_demo/make_demo_data.py --no-check # skip the self-check
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import xarray as xr

# --------------------------------------------------------------------------
# constants
# --------------------------------------------------------------------------
RANDOM_STATE = 20240917  # fixed: the demo files are reproducible
OMEGA = 7.292115e-5  # Earth's rotation rate [rad s-1]
EARTH_RADIUS = 6371008.7714  # mean Earth radius [m]
G0 = 9.80665  # standard gravity [m s-2]
# the subtropical jets of global_winds.nc strengthen by this fraction over its four days,
# so that the demo's angular-momentum series has a change to show (and the day lengthens)
JET_SURGE = 0.05

PROGRAMME = "Tollaven Shelf Experiment (TSE), a fictional field programme"
INSTITUTION = "frameshift project (demo data; fictional programme)"
SOURCE = "synthetic: analytic model plus pseudo-random noise, data_demo/make_demo_data.py"
HISTORY = "created by data_demo/make_demo_data.py (frameshift demo data generator)"
COMMENT = (
    "All values in this file are invented for the frameshift demo. The "
    "Tollaven Shelf Experiment, its platforms and positions are fictional; "
    "do not use these data for science."
)
REFERENCES = "none; the data are invented"

# lossless zlib compression for every data variable
COMPRESS = {"zlib": True, "complevel": 5, "shuffle": True}
# coordinates must not carry a _FillValue
COORD_ENC = {"_FillValue": None}
FLOAT_FILL = np.float32(-9999.0)
# CF 1.11 section 4.4.3: say how leap seconds are handled for the standard calendar
TIME_ATTRS = {"standard_name": "time", "long_name": "time", "axis": "T",
              "units_metadata": "leap_seconds: none"}

FILE_NAMES = (
    "global_winds.nc",
    "shelf_mooring.nc",
    "balloon_track.nc",
    "packed_knots.nc",
    "tiny_example.nc",
    "ship_met.nc",
)


def coriolis_parameter(lat_deg):
    """f = 2 Omega sin(lat) [s-1]."""
    return 2.0 * OMEGA * np.sin(np.deg2rad(lat_deg))


def global_attrs(title, **extra):
    attrs = {
        "Conventions": "CF-1.11",
        "title": title,
        "institution": INSTITUTION,
        "source": SOURCE,
        "history": HISTORY,
        "comment": COMMENT,
        "references": REFERENCES,
        "project": PROGRAMME,
    }
    attrs.update(extra)
    return attrs


def lat_attrs():
    return {"standard_name": "latitude", "long_name": "latitude",
            "units": "degrees_north"}


def lon_attrs():
    return {"standard_name": "longitude", "long_name": "longitude",
            "units": "degrees_east"}


def time_encoding(units, calendar="standard"):
    return {"units": units, "calendar": calendar, "dtype": "float64",
            "_FillValue": None}


def float_encoding():
    return {"dtype": "float32", "_FillValue": FLOAT_FILL, **COMPRESS}


def char_id(text):
    """Scalar fixed-width byte string, written as a CF char array."""
    return np.array(text.encode("ascii"), dtype=f"S{len(text)}")


def write(ds, path, encoding):
    """Write with explicit encodings; coordinates never get a _FillValue."""
    enc = {name: dict(e) for name, e in encoding.items()}
    for name in ds.variables:
        if name in ds.coords:
            enc.setdefault(name, {}).setdefault("_FillValue", None)
    ds.to_netcdf(path, engine="netcdf4", format="NETCDF4", encoding=enc)


# --------------------------------------------------------------------------
# 1. global pressure-level winds
# --------------------------------------------------------------------------
def make_global_winds(rng):
    times = np.datetime64("2031-01-10T00:00", "ns") + np.arange(16) * np.timedelta64(6, "h")
    plev = np.array([100000.0, 85000.0, 50000.0, 25000.0, 10000.0])
    lat = np.arange(-87.5, 87.6, 5.0)
    lon = np.arange(0.0, 356.0, 5.0)

    t_s = (times - times[0]) / np.timedelta64(1, "s")
    T, P, PHI, LAM = np.meshgrid(t_s, plev, lat, lon, indexing="ij")
    phi = np.deg2rad(PHI)
    lam = np.deg2rad(LAM)
    alat = np.abs(PHI)
    lnp = np.log(P / 25000.0)

    # zonal-mean zonal wind: trades, mid-latitude westerlies, polar easterlies
    u_sfc = (-7.0 * np.exp(-(((alat - 12.0) / 11.0) ** 2))
             + 8.0 * np.exp(-(((alat - 48.0) / 10.0) ** 2))
             - 3.0 * np.exp(-(((alat - 76.0) / 7.0) ** 2)))
    sfc_weight = np.interp(P, plev[::-1], np.array([0.3, 0.4, 0.6, 0.9, 1.0]))
    # subtropical jets, strongest near 250 hPa; slightly different per hemisphere
    jet_lat = np.where(PHI >= 0, 33.0, 37.0)
    jet_amp = np.where(PHI >= 0, 38.0, 33.0)
    jet_amp = jet_amp * (1.0 + JET_SURGE * T / T.max())  # a steady strengthening in time
    jet = jet_amp * np.exp(-(((alat - jet_lat) / 9.0) ** 2)) * np.exp(-((lnp / 0.8) ** 2))
    # tropical upper easterlies near 100 hPa
    ttj = -8.0 * np.exp(-((PHI / 15.0) ** 2)) * np.exp(-((np.log(P / 10000.0) / 0.6) ** 2))
    u_mean = u_sfc * sfc_weight + jet + ttj

    # Hadley cell: equatorward near the ground, poleward aloft
    hadley_p = np.interp(P, plev[::-1], np.array([-0.5, -1.0, 0.0, 1.0, 1.0]))
    v_mean = (-1.5 * np.sin(np.pi * PHI / 30.0) * (alat < 30.0)) * hadley_p

    # travelling waves from a stream function psi = Psi E(phi) cos(k lam - w t)
    wave_p = np.interp(P, plev[::-1], np.array([0.55, 1.0, 0.7, 0.45, 0.35]))
    u_wave = np.zeros_like(P)
    v_wave = np.zeros_like(P)
    z_wave = np.zeros_like(P)
    #        k, centre lat, width (deg), peak v (m s-1), phase speed (m s-1)
    for k, lat0, width, vmax, c in ((5, 45.0, 12.0, 12.0, 9.0),
                                    (4, -50.0, 12.0, 10.0, 11.0),
                                    (7, 40.0, 8.0, 4.0, 14.0)):
        phi0 = np.deg2rad(lat0)
        sig = np.deg2rad(width)
        omega_w = c * k / (EARTH_RADIUS * np.cos(phi0))
        psi_amp = vmax * EARTH_RADIUS * np.cos(phi0) / k
        env = np.exp(-(((phi - phi0) / sig) ** 2))
        denv = -2.0 * (phi - phi0) / sig**2 * env
        arg = k * lam - omega_w * T + rng.uniform(0, 2 * np.pi)
        u_wave += -(psi_amp / EARTH_RADIUS) * denv * np.cos(arg) * wave_p
        v_wave += -(k * psi_amp * env / (EARTH_RADIUS * np.cos(phi))) * np.sin(arg) * wave_p
        # geostrophic height anomaly  z' = f psi / g
        z_wave += coriolis_parameter(PHI) * psi_amp * env * np.cos(arg) * wave_p / G0

    ua = u_mean + u_wave + rng.normal(0.0, 0.4, P.shape)
    va = v_mean + v_wave + rng.normal(0.0, 0.4, P.shape)

    # geopotential height: standard-atmosphere values, warmer (higher) tropics
    z_std = np.interp(P, plev[::-1], np.array([16180.0, 10363.0, 5574.0, 1457.0, 111.0]))
    z_merid = np.interp(P, plev[::-1], np.array([1000.0, 1100.0, 700.0, 150.0, 40.0]))
    z_subtrop = 60.0 * np.exp(-(((alat - 32.0) / 10.0) ** 2)) - 90.0 * np.exp(-(((alat - 60.0) / 10.0) ** 2))
    zg = z_std + z_merid * (np.cos(phi) ** 2 - 0.5) + z_subtrop + z_wave + rng.normal(0.0, 3.0, P.shape)

    # surface pressure: subtropical highs, subpolar lows, wave imprint at 1000 hPa
    lat2 = PHI[:, 0]
    ps = (101325.0
          + 800.0 * np.exp(-(((np.abs(lat2) - 32.0) / 10.0) ** 2))
          - 1200.0 * np.exp(-(((np.abs(lat2) - 60.0) / 10.0) ** 2))
          + 1.2 * G0 * z_wave[:, 0]
          + rng.normal(0.0, 40.0, lat2.shape))

    dims = ("time", "plev", "lat", "lon")
    ds = xr.Dataset(
        {
            "ua": (dims, ua.astype("f4"), {"standard_name": "eastward_wind",
                                           "long_name": "eastward wind", "units": "m s-1"}),
            "va": (dims, va.astype("f4"), {"standard_name": "northward_wind",
                                           "long_name": "northward wind", "units": "m s-1"}),
            "zg": (dims, zg.astype("f4"), {"standard_name": "geopotential_height",
                                           "long_name": "geopotential height", "units": "m"}),
            "ps": (("time", "lat", "lon"), ps.astype("f4"),
                   {"standard_name": "surface_air_pressure",
                    "long_name": "surface air pressure", "units": "Pa"}),
        },
        coords={
            "time": ("time", times, TIME_ATTRS),
            "plev": ("plev", plev, {"standard_name": "air_pressure", "long_name": "pressure level",
                                    "units": "Pa", "positive": "down", "axis": "Z"}),
            "lat": ("lat", lat, {**lat_attrs(), "axis": "Y"}),
            "lon": ("lon", lon, {**lon_attrs(), "axis": "X"}),
        },
        attrs=global_attrs(
            "frameshift demo: coarse global pressure-level winds (invented)",
            summary=("Invented 6-hourly global winds on five pressure levels: "
                     "subtropical jets (strengthening by "
                     f"{JET_SURGE:.0%} over the four days), trades, Hadley cell and "
                     "eastward-travelling waves."),
        ),
    )
    enc = {v: float_encoding() for v in ("ua", "va", "zg", "ps")}
    enc["time"] = time_encoding("hours since 2031-01-10 00:00:00")
    return ds, enc


# --------------------------------------------------------------------------
# 2. shelf mooring: near-inertial oscillations after a storm
# --------------------------------------------------------------------------
MOORING_LAT = 47.3
MOORING_LON = -38.65


def make_shelf_mooring(rng):
    ntime = 14 * 24
    times = np.datetime64("2031-09-01T00:00", "ns") + np.arange(ntime) * np.timedelta64(1, "h")
    depth = np.arange(6.0, 70.1, 4.0)
    t = (times - times[0]) / np.timedelta64(1, "s")
    T, Z = np.meshgrid(t, depth, indexing="ij")

    f = coriolis_parameter(MOORING_LAT)  # ~1.072e-4 s-1, inertial period 2 pi / f ~ 16.3 h

    # weak mean flow and a barotropic M2-like tidal ellipse, weaker near the bottom
    bottom = 1.0 - 0.4 * np.exp(-(70.0 + 6.0 - Z) / 10.0)
    w_m2 = 2.0 * np.pi / (12.4206 * 3600.0)
    u_tide = 0.07 * np.cos(w_m2 * T + 0.4) * bottom
    v_tide = 0.04 * np.sin(w_m2 * T + 0.4) * bottom
    u_mean = 0.04 + 0.0 * Z
    v_mean = 0.015 + 0.0 * Z

    # storm on day ~4 sets off clockwise near-inertial currents:
    #   u = A cos(f t'), v = -A sin(f t')  (northern hemisphere)
    t0 = 4.0 * 86400.0
    tp = np.clip(T - t0, 0.0, None)
    onset = 1.0 - np.exp(-tp / (6.0 * 3600.0))
    decay = np.exp(-tp / (3.0 * 86400.0))
    mld = 30.0
    in_ml = 0.5 * (1.0 - np.tanh((Z - mld) / 4.0))  # 1 in the mixed layer, 0 below
    amp = 0.42 * in_ml + 0.12 * (1.0 - in_ml)
    phase = np.pi * (1.0 - in_ml) * 0.85  # currents below the mixed layer lag, almost opposing
    a = amp * onset * decay * (T >= t0)
    u_ni = a * np.cos(f * tp + phase)
    v_ni = -a * np.sin(f * tp + phase)

    # vertical velocity: small inertial pumping, largest at the mixed-layer base
    w_ni = 2.0e-4 * np.exp(-(((Z - mld) / 12.0) ** 2)) * onset * decay * np.sin(f * tp) * (T >= t0)

    u = u_mean + u_tide + u_ni + rng.normal(0.0, 0.012, T.shape)
    v = v_mean + v_tide + v_ni + rng.normal(0.0, 0.012, T.shape)
    w = w_ni + rng.normal(0.0, 2.0e-5, T.shape)

    dims = ("time", "depth")
    ds = xr.Dataset(
        {
            "u": (dims, u.astype("f4"), {"standard_name": "eastward_sea_water_velocity",
                                         "long_name": "eastward current", "units": "m s-1"}),
            "v": (dims, v.astype("f4"), {"standard_name": "northward_sea_water_velocity",
                                         "long_name": "northward current", "units": "m s-1"}),
            "w": (dims, w.astype("f4"), {"standard_name": "upward_sea_water_velocity",
                                         "long_name": "upward current", "units": "m s-1"}),
        },
        coords={
            "time": ("time", times, TIME_ATTRS),
            "depth": ("depth", depth, {"standard_name": "depth", "long_name": "depth of bin centre",
                                       "units": "m", "positive": "down", "axis": "Z"}),
            "lat": ((), MOORING_LAT, lat_attrs()),
            "lon": ((), MOORING_LON, lon_attrs()),
            "station_name": ((), char_id("TSE-M2"),
                             {"cf_role": "timeseries_id", "long_name": "mooring name"}),
        },
        attrs=global_attrs(
            "frameshift demo: current profiles at fictional mooring TSE-M2 (invented)",
            featureType="timeSeriesProfile",
            summary=(
                "Invented hourly current profiles (6-70 m, 4 m bins) at a fictional mooring "
                f"({MOORING_LAT} N, {abs(MOORING_LON)} W). A storm on day 4 sets off "
                f"clockwise near-inertial oscillations (period 2 pi / f = {2 * np.pi / f / 3600.0:.1f} h) of "
                "about 0.4 m s-1 in the 30 m mixed layer, decaying with an e-folding time "
                "of 3 days, weaker and phase-shifted below; plus a weak semidiurnal tide."
            ),
            inertial_period_hours=float(2 * np.pi / f / 3600.0),
            storm_onset="day 4.0 of the record (2031-09-05T00:00Z)",
        ),
    )
    enc = {v: float_encoding() for v in ("u", "v", "w")}
    enc["time"] = time_encoding("hours since 2031-09-01 00:00:00")
    enc["station_name"] = {"dtype": "S1", "char_dim_name": "name_strlen"}
    return ds, enc


# --------------------------------------------------------------------------
# 3. drifting balloon: positions integrated from the winds it reports
# --------------------------------------------------------------------------
def make_balloon_track(rng):
    dt = 600.0
    nstep = 2 * 24 * 6 + 1  # two days, every 10 minutes
    times = np.datetime64("2031-09-03T12:00", "ns") + np.arange(nstep) * np.timedelta64(10, "m")
    t = np.arange(nstep) * dt

    # smooth random wind variability: a few random sinusoids (periods 2-9 h)
    nmod = 6
    per = rng.uniform(2.0, 9.0, (2, nmod)) * 3600.0
    amp = rng.uniform(0.3, 1.0, (2, nmod))
    pha = rng.uniform(0.0, 2 * np.pi, (2, nmod))

    def wiggle(comp, tt):
        return np.sum(amp[comp] * np.sin(2 * np.pi * np.asarray(tt)[..., None] / per[comp] + pha[comp]),
                      axis=-1)

    # altitude: slow oscillation around 12 km; w is its exact time derivative
    a1, p1, a2, p2, ph2 = 300.0, 5.0 * 3600.0, 150.0, 13.0 * 3600.0, 1.1
    alt = 12000.0 + a1 * np.sin(2 * np.pi * t / p1) + a2 * np.sin(2 * np.pi * t / p2 + ph2)
    w = (a1 * 2 * np.pi / p1 * np.cos(2 * np.pi * t / p1)
         + a2 * 2 * np.pi / p2 * np.cos(2 * np.pi * t / p2 + ph2))

    # Lagrangian wind: mean flow + inertial circle (phase theta advances at the
    # local f) + wiggles.  State y = (lat_rad, lon_rad, theta).
    u0, v0, b = 21.0, 2.5, 4.0

    def wind(tt, y):
        u = u0 + b * np.cos(y[2]) + wiggle(0, tt)
        v = v0 - b * np.sin(y[2]) + wiggle(1, tt)
        return u, v

    def rhs(tt, y):
        u, v = wind(tt, y)
        return np.array([v / EARTH_RADIUS,
                         u / (EARTH_RADIUS * np.cos(y[0])),
                         2.0 * OMEGA * np.sin(y[0])])

    y = np.array([np.deg2rad(43.8), np.deg2rad(-41.2), 0.0])
    states = np.empty((nstep, 3))
    states[0] = y
    nsub = 10  # RK4 sub-steps of 60 s between samples
    h = dt / nsub
    for i in range(1, nstep):
        tt = t[i - 1]
        for _ in range(nsub):
            k1 = rhs(tt, y)
            k2 = rhs(tt + h / 2, y + h / 2 * k1)
            k3 = rhs(tt + h / 2, y + h / 2 * k2)
            k4 = rhs(tt + h, y + h * k3)
            y = y + h / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)
            tt += h
        states[i] = y
    u, v = wind(t, states.T)
    lat = np.rad2deg(states[:, 0])
    lon = (np.rad2deg(states[:, 1]) + 180.0) % 360.0 - 180.0

    ds = xr.Dataset(
        {
            "u": ("time", u.astype("f4"), {"standard_name": "eastward_wind",
                                           "long_name": "eastward wind at the balloon",
                                           "units": "m s-1"}),
            "v": ("time", v.astype("f4"), {"standard_name": "northward_wind",
                                           "long_name": "northward wind at the balloon",
                                           "units": "m s-1"}),
            "w": ("time", w.astype("f4"), {"standard_name": "upward_air_velocity",
                                           "long_name": "upward air velocity at the balloon",
                                           "units": "m s-1"}),
        },
        coords={
            "time": ("time", times, TIME_ATTRS),
            "lat": ("time", lat, lat_attrs()),
            "lon": ("time", lon, lon_attrs()),
            "alt": ("time", alt, {"standard_name": "altitude", "long_name": "balloon altitude",
                                  "units": "m", "positive": "up"}),
            "trajectory": ((), char_id("TSE-B1"),
                           {"cf_role": "trajectory_id", "long_name": "balloon name"}),
        },
        attrs=global_attrs(
            "frameshift demo: track of fictional drifting balloon TSE-B1 (invented)",
            featureType="trajectory",
            summary=(
                "Invented 10-minute track of a balloon that drifts with the wind near 12 km. "
                "Positions are the RK4 integral of the reported winds: "
                "dlat/dt = v / R, dlon/dt = u / (R cos lat), R = 6371008.7714 m; "
                "w is the exact time derivative of alt. The wind holds an inertial "
                "oscillation whose phase advances at the local Coriolis parameter."
            ),
            earth_radius_m=EARTH_RADIUS,
        ),
    )
    enc = {v: float_encoding() for v in ("u", "v", "w")}
    enc["time"] = time_encoding("minutes since 2031-09-03 12:00:00")
    enc["lat"] = {"dtype": "float64", **COMPRESS}
    enc["lon"] = {"dtype": "float64", **COMPRESS}
    enc["alt"] = {"dtype": "float64", **COMPRESS}
    enc["trajectory"] = {"dtype": "S1", "char_dim_name": "name_strlen"}
    return ds, enc


# --------------------------------------------------------------------------
# 4. packed int16 buoy record in knots and cm s-1, noleap calendar
# --------------------------------------------------------------------------
BUOY_LAT = 51.85
BUOY_LON = -27.4
PACK_FILL = np.int16(-32767)


def packed_encoding(scale, offset):
    return {"dtype": "int16", "scale_factor": np.float32(scale), "add_offset": np.float32(offset),
            "_FillValue": PACK_FILL, "missing_value": PACK_FILL, **COMPRESS}


def make_packed_knots(rng):
    import cftime

    # the noleap calendar matters here: the record runs across 28 Feb -> 1 Mar 2004
    # (a leap year in the real-world calendar, but 29 Feb does not exist in noleap)
    nt = 10 * 24
    start = cftime.DatetimeNoLeap(2004, 2, 24, 0, 0, 0)
    units = "hours since 2004-01-01 00:00:00"
    hours0 = cftime.date2num(start, units, calendar="noleap")
    hours = hours0 + np.arange(nt, dtype="f8")
    times = cftime.num2date(hours, units, calendar="noleap")
    ts = np.arange(nt) * 3600.0

    f = coriolis_parameter(BUOY_LAT)
    kn_per_ms = 3600.0 / 1852.0

    # wind: south-westerly that veers to north-westerly as a front passes on day 5
    front = 0.5 * (1.0 + np.tanh((ts - 5.0 * 86400.0) / (5.0 * 3600.0)))
    speed = 8.0 + 5.0 * np.exp(-(((ts - 5.0 * 86400.0) / (12 * 3600.0)) ** 2))  # m s-1
    dir_to = np.deg2rad(45.0 + 90.0 * front)  # direction the wind blows TO, from north
    diurnal = 0.8 * np.sin(2 * np.pi * ts / 86400.0)
    wu = (speed + diurnal) * np.sin(dir_to) + rng.normal(0, 0.5, nt)
    wv = (speed + diurnal) * np.cos(dir_to) + rng.normal(0, 0.5, nt)
    wspd_u = wu * kn_per_ms
    wspd_v = wv * kn_per_ms

    # current: semidiurnal tide + near-inertial response to the front [cm s-1]
    w_m2 = 2.0 * np.pi / (12.4206 * 3600.0)
    tp = np.clip(ts - 5.0 * 86400.0, 0.0, None)
    ni = 25.0 * (1 - np.exp(-tp / 21600.0)) * np.exp(-tp / (2.5 * 86400.0))
    cur_u = 6.0 + 12.0 * np.cos(w_m2 * ts) + ni * np.cos(f * tp) + rng.normal(0, 1.0, nt)
    cur_v = 2.0 + 7.0 * np.sin(w_m2 * ts) - ni * np.sin(f * tp) + rng.normal(0, 1.0, nt)

    sst = 11.2 + 0.3 * np.sin(2 * np.pi * (ts - 9 * 3600.0) / 86400.0) - 0.6 * front + rng.normal(0, 0.03, nt)

    # a few gaps: sensor dropouts
    wspd_u[100:104] = np.nan
    wspd_v[100:104] = np.nan
    for idx in (17, 58, 59, 171):
        cur_u[idx] = np.nan
        cur_v[idx] = np.nan
    sst[203] = np.nan

    ds = xr.Dataset(
        {
            "wspd_u": ("time", wspd_u.astype("f4"), {"standard_name": "eastward_wind",
                                                     "long_name": "eastward wind at 4 m",
                                                     "units": "knot"}),
            "wspd_v": ("time", wspd_v.astype("f4"), {"standard_name": "northward_wind",
                                                     "long_name": "northward wind at 4 m",
                                                     "units": "knot"}),
            "cur_u": ("time", cur_u.astype("f4"), {"standard_name": "eastward_sea_water_velocity",
                                                   "long_name": "eastward current at 1 m",
                                                   "units": "cm s-1"}),
            "cur_v": ("time", cur_v.astype("f4"), {"standard_name": "northward_sea_water_velocity",
                                                   "long_name": "northward current at 1 m",
                                                   "units": "cm s-1"}),
            "sea_water_temperature": ("time", sst.astype("f4"),
                                      {"standard_name": "sea_water_temperature",
                                       "long_name": "sea water temperature at 1 m",
                                       "units": "degree_Celsius",
                                       "units_metadata": "temperature: on_scale"}),
        },
        coords={
            "time": ("time", times, {"standard_name": "time", "long_name": "time", "axis": "T"}),
            "lat": ((), BUOY_LAT, lat_attrs()),
            "lon": ((), BUOY_LON, lon_attrs()),
            "station_name": ((), char_id("TSE-S3"),
                             {"cf_role": "timeseries_id", "long_name": "buoy name"}),
        },
        attrs=global_attrs(
            "frameshift demo: packed record from fictional buoy TSE-S3 (invented)",
            featureType="timeSeries",
            summary=(
                "Invented hourly buoy record with winds in knot and currents in cm s-1, "
                "stored as int16 with scale_factor/add_offset and a few missing values, "
                "on a noleap calendar (the record skips 29 February)."
            ),
        ),
    )
    enc = {
        "wspd_u": packed_encoding(0.01, 0.0),
        "wspd_v": packed_encoding(0.01, 0.0),
        "cur_u": packed_encoding(0.05, 0.0),
        "cur_v": packed_encoding(0.05, 0.0),
        "sea_water_temperature": packed_encoding(0.001, 15.0),
        "time": time_encoding(units, "noleap"),
        "station_name": {"dtype": "S1", "char_dim_name": "name_strlen"},
    }
    return ds, enc


# --------------------------------------------------------------------------
# 5. tiny example grid
# --------------------------------------------------------------------------
def make_tiny_example(rng):
    times = np.array(["2031-01-10T00:00", "2031-01-10T06:00"], dtype="datetime64[ns]")
    lat = np.array([40.0, 45.0, 50.0])
    lon = np.array([0.0, 10.0, 20.0, 30.0])
    _, LA, LO = np.meshgrid(np.arange(2), lat, lon, indexing="ij")
    tt = np.arange(2)[:, None, None]
    u = 8.0 + 0.2 * (LA - 45.0) + 2.0 * np.cos(np.deg2rad(LO * 3.0) - 0.5 * tt)
    v = 3.0 * np.sin(np.deg2rad(LO * 3.0) - 0.5 * tt) + 0.0 * LA
    u = np.round(u + rng.normal(0, 0.2, u.shape), 2)
    v = np.round(v + rng.normal(0, 0.2, v.shape), 2)

    dims = ("time", "lat", "lon")
    ds = xr.Dataset(
        {
            "eastward_wind": (dims, u.astype("f4"), {"standard_name": "eastward_wind",
                                                     "long_name": "eastward wind at 10 m",
                                                     "units": "m s-1"}),
            "northward_wind": (dims, v.astype("f4"), {"standard_name": "northward_wind",
                                                      "long_name": "northward wind at 10 m",
                                                      "units": "m s-1"}),
        },
        coords={
            "time": ("time", times, TIME_ATTRS),
            "lat": ("lat", lat, {**lat_attrs(), "axis": "Y"}),
            "lon": ("lon", lon, {**lon_attrs(), "axis": "X"}),
            "height": ((), 10.0, {"standard_name": "height", "long_name": "height above the surface",
                                  "units": "m", "positive": "up", "axis": "Z"}),
        },
        attrs=global_attrs(
            "frameshift demo: tiny 10 m wind grid (invented)",
            summary="Invented 2 x 3 x 4 grid of 10 m winds for quick examples.",
        ),
    )
    enc = {v: float_encoding() for v in ("eastward_wind", "northward_wind")}
    enc["time"] = time_encoding("hours since 2031-01-10 00:00:00")
    return ds, enc


# --------------------------------------------------------------------------
# 6. ship met record: the anemometer feels the true wind minus the ship's motion
# --------------------------------------------------------------------------
SHIP_START = (46.95, -39.60)  # degrees north, degrees east
KNOT = 1852.0 / 3600.0  # m s-1


def ship_true_wind(t_hours):
    """The invented true wind: from 250 veering to 290 degrees, 12 rising to 15 m s-1."""
    frac = np.clip(np.asarray(t_hours) / 12.0, 0.0, 1.0)
    return 250.0 + 40.0 * frac, 12.0 + 3.0 * frac


def make_ship_met(rng):
    dt = 60.0
    n = 12 * 60 + 1  # twelve hours, every minute
    times = np.datetime64("2031-09-02T06:00", "ns") + np.arange(n) * np.timedelta64(1, "m")
    t_hours = np.arange(n) * dt / 3600.0
    # a survey line out at 065 and back at 245 after a turn, about 10 knots
    course = np.where(t_hours < 5.5, 65.0, np.where(t_hours < 6.5,
                      65.0 + 180.0 * (t_hours - 5.5), 245.0)) % 360.0
    course = (course + rng.normal(0.0, 1.0, n)) % 360.0
    sog_kn = 10.0 + rng.normal(0.0, 0.3, n)
    heading = (course + 3.0 + rng.normal(0.0, 0.8, n)) % 360.0  # crabbing 3 degrees
    # track from course and speed over ground (simple forward steps)
    lat = np.empty(n)
    lon = np.empty(n)
    lat[0], lon[0] = SHIP_START
    c = np.deg2rad(course)
    v_east = sog_kn * KNOT * np.sin(c)
    v_north = sog_kn * KNOT * np.cos(c)
    for i in range(1, n):
        lat[i] = lat[i - 1] + np.rad2deg(v_north[i - 1] * dt / EARTH_RADIUS)
        lon[i] = lon[i - 1] + np.rad2deg(
            v_east[i - 1] * dt / (EARTH_RADIUS * np.cos(np.deg2rad(lat[i - 1]))))
    # the true wind with gusts, and what the bow-mounted anemometer (zero line on the
    # bow) feels: apparent = true - ship velocity over ground
    wdir, wspd = ship_true_wind(t_hours)
    wspd = wspd + rng.normal(0.0, 0.8, n)
    wdir = wdir + rng.normal(0.0, 4.0, n)
    u_true = -wspd * np.sin(np.deg2rad(wdir))
    v_true = -wspd * np.cos(np.deg2rad(wdir))
    u_app, v_app = u_true - v_east, v_true - v_north
    app_from = np.rad2deg(np.arctan2(-u_app, -v_app))
    rel_dir = (app_from - heading) % 360.0
    rel_spd = np.hypot(u_app, v_app)

    def f4(values):
        return values.astype("f4")

    ds = xr.Dataset(
        {
            "heading": ("time", f4(heading), {"standard_name": "platform_orientation",
                                              "long_name": "ship's heading (gyro)",
                                              "units": "degree"}),
            "cog": ("time", f4(course), {"standard_name": "platform_course",
                                         "long_name": "course over ground", "units": "degree"}),
            "sog": ("time", f4(sog_kn), {"standard_name": "platform_speed_wrt_ground",
                                         "long_name": "speed over ground", "units": "knot"}),
            "rel_wdir": ("time", f4(rel_dir), {
                "long_name": "wind direction relative to the bow (from, clockwise, "
                             "anemometer zero line on the bow)",
                "units": "degree"}),
            "rel_wspd": ("time", f4(rel_spd), {
                "long_name": "wind speed relative to the moving ship", "units": "m s-1"}),
        },
        coords={
            "time": ("time", times, TIME_ATTRS),
            "lat": ("time", lat, lat_attrs()),
            "lon": ("time", lon, lon_attrs()),
            "height": ((), 18.0, {"standard_name": "height", "long_name": "anemometer height",
                                  "units": "m", "positive": "up"}),
            "trajectory": ((), char_id("TSE-V5"),
                           {"cf_role": "trajectory_id", "long_name": "ship name"}),
        },
        attrs=global_attrs(
            "frameshift demo: met record of fictional research vessel TSE-V5 (invented)",
            featureType="trajectory",
            summary=(
                "Invented 1-minute record of a ship running a survey line out at 065 and "
                "back at 245 at about 10 knots, crabbing about 3 degrees. The true wind "
                "(from 250 veering to 290 degrees, 12 rising to 15 m s-1, with gusts) is "
                "not stored: the file holds what the bow-mounted anemometer feels, the "
                "true wind minus the ship's velocity over ground, as instruments record it. "
                "frameshift true_wind (or frameshift earth --relative-wind) recovers it."
            ),
        ),
    )
    enc = {v: float_encoding() for v in ("heading", "cog", "sog", "rel_wdir", "rel_wspd")}
    enc["time"] = time_encoding("minutes since 2031-09-02 06:00:00")
    enc["lat"] = {"dtype": "float64", **COMPRESS}
    enc["lon"] = {"dtype": "float64", **COMPRESS}
    enc["trajectory"] = {"dtype": "S1", "char_dim_name": "name_strlen"}
    return ds, enc


MAKERS = {
    "global_winds.nc": make_global_winds,
    "shelf_mooring.nc": make_shelf_mooring,
    "balloon_track.nc": make_balloon_track,
    "packed_knots.nc": make_packed_knots,
    "tiny_example.nc": make_tiny_example,
    "ship_met.nc": make_ship_met,
}


# --------------------------------------------------------------------------
# self-check
# --------------------------------------------------------------------------
def find_standard_name_table(explicit=None):
    """Locate a CF standard name table (explicit path, or the copy shipped
    with the compliance-checker package, found without importing it)."""
    if explicit:
        return Path(explicit)
    spec = importlib.util.find_spec("compliance_checker")
    if spec and spec.origin:
        cand = Path(spec.origin).parent / "data" / "cf-standard-name-table.xml"
        if cand.exists():
            return cand
    return None


def load_standard_names(path):
    root = ET.parse(path).getroot()
    names = {e.get("id") for e in root.iter("entry")}
    names |= {a.get("id") for a in root.iter("alias")}
    return names


def self_check(out_dir, table_path=None):
    import cftime

    problems = []
    table = find_standard_name_table(table_path)
    names = load_standard_names(table) if table else None
    if names is None:
        print("self-check: no CF standard name table found; skipping the name check")

    total = 0
    for fname in FILE_NAMES:
        path = out_dir / fname
        total += path.stat().st_size
        with xr.open_dataset(path) as ds:
            if ds.attrs.get("Conventions") != "CF-1.11":
                problems.append(f"{fname}: Conventions is not CF-1.11")
            t0 = ds["time"].values[0]
            if fname == "packed_knots.nc":
                if not isinstance(t0, cftime.DatetimeNoLeap):
                    problems.append(f"{fname}: time did not decode to cftime noleap")
            elif not np.issubdtype(ds["time"].dtype, np.datetime64):
                problems.append(f"{fname}: time did not decode to datetime64")
            for name, var in ds.variables.items():
                sn = var.attrs.get("standard_name")
                if names is not None and sn is not None and sn not in names:
                    problems.append(f"{fname}:{name}: unknown standard_name {sn!r}")
                if name in ds.coords and "_FillValue" in var.encoding:
                    problems.append(f"{fname}:{name}: coordinate has a _FillValue")
        with xr.open_dataset(path, mask_and_scale=False) as raw:
            if fname == "packed_knots.nc":
                for name in ("wspd_u", "wspd_v", "cur_u", "cur_v", "sea_water_temperature"):
                    if raw[name].dtype != np.int16:
                        problems.append(f"{fname}:{name}: not packed as int16")

    # physics spot checks
    with xr.open_dataset(out_dir / "balloon_track.nc") as b:
        tsec = (b.time - b.time[0]).values / np.timedelta64(1, "s")
        lat_r = np.deg2rad(b.lat.values)
        lon_r = np.unwrap(np.deg2rad(b.lon.values))
        v_fd = np.gradient(lat_r, tsec) * EARTH_RADIUS
        u_fd = np.gradient(lon_r, tsec) * EARTH_RADIUS * np.cos(lat_r)
        w_fd = np.gradient(b.alt.values, tsec)
        err = max(np.abs(u_fd - b.u.values)[1:-1].max(), np.abs(v_fd - b.v.values)[1:-1].max())
        if err > 0.1:
            problems.append(f"balloon_track.nc: winds and track disagree by {err:.3f} m s-1")
        if np.abs(w_fd - b.w.values)[1:-1].max() > 0.01:
            problems.append("balloon_track.nc: w and d(alt)/dt disagree")

    # the ship: the track follows course and speed over ground, and the true wind of the
    # Smith, Bourassa & Sharp (1999) equations is the invented one (to within the gusts)
    with xr.open_dataset(out_dir / "ship_met.nc") as s:
        tsec = (s.time - s.time[0]).values / np.timedelta64(1, "s")
        c = np.deg2rad(s.cog.values.astype(float))
        speed = s.sog.values.astype(float) * KNOT
        north = np.diff(np.deg2rad(s.lat.values)) * EARTH_RADIUS / np.diff(tsec)
        if np.abs(north - (speed * np.cos(c))[:-1]).max() > 1e-6:
            problems.append("ship_met.nc: track and course/speed over ground disagree")
        a = np.deg2rad(270.0 - (s.heading.values + s.rel_wdir.values).astype(float))
        cc = np.deg2rad(90.0 - s.cog.values.astype(float))
        u = s.rel_wspd.values * np.cos(a) + speed * np.cos(cc)
        v = s.rel_wspd.values * np.sin(a) + speed * np.sin(cc)
        wdir = np.rad2deg(np.arctan2(-u, -v)) % 360.0
        want, _ = ship_true_wind(tsec / 3600.0)
        miss = (wdir - want + 180.0) % 360.0 - 180.0  # gusts: 4 degrees of noise
        if abs(miss.mean()) > 1.0 or np.abs(miss).max() > 30.0:
            problems.append("ship_met.nc: the true wind is not the invented one")

    mb = total / 1e6
    print(f"self-check: total size {mb:.2f} MB")
    if mb >= 5.0:
        problems.append(f"total size {mb:.2f} MB is not under 5 MB")
    if problems:
        for p in problems:
            print("self-check FAILED:", p)
        return False
    print("self-check: OK" + (f" (standard names checked against {table.name})" if table else ""))
    return True


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--out", default=None,
                        help="output folder (default: the folder holding this script)")
    parser.add_argument("--no-check", action="store_true", help="skip the self-check")
    parser.add_argument("--standard-name-table", default=None,
                        help="path to cf-standard-name-table.xml for the self-check")
    args = parser.parse_args(argv)

    out_dir = Path(args.out) if args.out else Path(__file__).resolve().parent
    out_dir.mkdir(parents=True, exist_ok=True)

    rng = np.random.default_rng(RANDOM_STATE)
    for fname in FILE_NAMES:
        ds, enc = MAKERS[fname](rng)
        path = out_dir / fname
        if path.exists():
            os.remove(path)
        write(ds, path, enc)
        print(f"wrote {fname:18s} {path.stat().st_size / 1e3:8.1f} kB")

    if not args.no_check:
        if not self_check(out_dir, args.standard_name_table):
            return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
