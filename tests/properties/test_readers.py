"""Fuzzing the readers: any CF-ish input gives the right answer or a FrameshiftError.

Random attribute sets (units texts valid and not, standard names, ``positive``,
``axis``), random latitude/longitude/height values (out of range, NaN,
infinite), dtypes and calendars go through the local and Cartesian
conversions and the terms, from memory and from a NetCDF file. Whatever
happens must be one of: a :class:`~frameshift.errors.FrameshiftError`, or a
result. A local conversion's result is checked against the textbook formula
u_inertial = u + Ω (N + h) cos φ (Ω = 7.292115e-5 rad s-1, IERS Conventions 2010
Table 1.1; N = a / sqrt(1 - e² sin² φ) on the WGS 84 ellipsoid, NIMA TR8350.2).

Default: a few dozen examples per property (fast). ``pytest --fuzz=long``
runs thousands.
"""

from __future__ import annotations

import os
import re
import warnings

import cftime
import numpy as np
import xarray as xr
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from frameshift import apparent_accelerations, batch, to_inertial
from frameshift.errors import FrameshiftError, FrameshiftWarning

LONG = os.environ.get("FRAMESHIFT_FUZZ") == "long"
FUZZ = settings(max_examples=2000 if LONG else 20, deadline=None, derandomize=not LONG,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

#: how an internal error would look in a failure line (batch prefixes its type name)
INTERNAL = re.compile(r"^[A-Z]\w*(Error|Exception)\b|__loopdim|Traceback")
OMEGA = 7.292115e-5  # IERS Conventions 2010, Table 1.1
A, INV_F = 6378137.0, 298.257223563  # WGS 84 (NIMA TR8350.2)
E2 = (2 - 1 / INV_F) / INV_F

SPEED_UNITS = {"m s-1": 1.0, "m/s": 1.0, "cm s-1": 0.01, "km h-1": 1 / 3.6,
               "knot": 1852 / 3600}  # knot = 1852 m per hour (international nautical mile)
BAD_UNITS = ["", " ", "K", "m", "m s-1)", "__import__('os')", "m**", "s-1 m-1 m2 kg",
             "degrees_north", "1e400 m s-1", "m s^-1^", "\x00", "nan"]
LAT_UNITS = ["degrees_north", "degree_north", "degrees_N", "degrees", "radians", "rad",
             "degrees_east", "m", None, "", "degrees north"]
CALENDARS = ["standard", "gregorian", "proleptic_gregorian", "julian", "tai", "noleap",
             "365_day", "360_day", "all_leap", "366_day"]
VERTICAL_NAMES = ["height", "altitude", "depth", "height_above_reference_ellipsoid",
                  "air_pressure", "geopotential_height", None, "bogus_name"]
DTYPES = ["float64", "float32", "int16", "int32"]

unit_text = st.one_of(st.sampled_from(list(SPEED_UNITS) + BAD_UNITS),
                      st.text(max_size=12))
odd_floats = st.one_of(st.floats(-95, 95), st.sampled_from([90.0, -90.0, np.nan, np.inf, 1e300]))


@st.composite
def datasets(draw) -> xr.Dataset:
    n = draw(st.integers(1, 4))
    lat = np.array(draw(st.lists(odd_floats, min_size=n, max_size=n)))
    lon = np.array(draw(st.lists(st.one_of(st.floats(-400, 400), st.just(np.nan)),
                                 min_size=n, max_size=n)))
    dtype = draw(st.sampled_from(DTYPES))
    with np.errstate(invalid="ignore", over="ignore"):
        if dtype.startswith("int"):
            lat = np.nan_to_num(lat, nan=0, posinf=0, neginf=0).clip(-1000, 1000)
            lon = np.nan_to_num(lon, nan=0).clip(-1000, 1000)
        lat, lon = lat.astype(dtype), lon.astype(dtype)
    lat_attrs = {"standard_name": "latitude"}
    lat_units = draw(st.sampled_from(LAT_UNITS))
    if lat_units is not None:
        lat_attrs["units"] = lat_units
    u_units = draw(unit_text)
    v_units = draw(st.one_of(st.just(u_units), unit_text))
    family = draw(st.sampled_from([("eastward_wind", "northward_wind"),
                                   ("eastward_sea_water_velocity",
                                    "northward_sea_water_velocity")]))
    rng = np.random.default_rng(draw(st.integers(0, 2**16)))
    calendar = draw(st.sampled_from(CALENDARS))
    times = [cftime.datetime(2030, 1, 1 + i, 6, calendar=calendar) for i in range(n)]
    if calendar in ("standard", "gregorian", "proleptic_gregorian") and draw(st.booleans()):
        times = np.datetime64("2030-01-01T06", "ns") + np.arange(n) * np.timedelta64(1, "D")
    coords = {
        "time": ("obs", np.asarray(times)),
        "lat": ("obs", lat, lat_attrs),
        "lon": ("obs", lon, {"standard_name": "longitude", "units": "degrees_east"}),
    }
    vname = draw(st.sampled_from(VERTICAL_NAMES))
    if vname is not None:
        vattrs = {"standard_name": vname, "units": draw(st.sampled_from(["m", "km", "hPa", "K"]))}
        positive = draw(st.sampled_from([None, "up", "down", "sideways"]))
        if positive:
            vattrs["positive"] = positive
        values = draw(st.lists(st.one_of(st.floats(-1e7, 5e4), st.just(np.nan)),
                               min_size=n, max_size=n))
        coords["z"] = ("obs", np.array(values), vattrs)
    return xr.Dataset(
        {"u": ("obs", rng.normal(0, 10, n), {"standard_name": family[0], "units": u_units}),
         "v": ("obs", rng.normal(0, 10, n), {"standard_name": family[1], "units": v_units})},
        coords=coords,
    )


def _expected_local(ds: xr.Dataset) -> np.ndarray | None:
    """u + Ω (N + h) cos φ in the input's units, where the reader's choices are plain."""
    units = ds["u"].attrs["units"]
    if units not in SPEED_UNITS or ds["lat"].attrs.get("units") not in (
            "degrees_north", "degree_north", "degrees_N", "degrees"):
        return None
    if "z" in ds.coords:
        z = ds["z"]
        if z.attrs["units"] not in ("m", "km") or z.attrs.get("standard_name") not in (
                "height", "altitude", "depth", "height_above_reference_ellipsoid",
                "geopotential_height"):
            return None
        sign = -1.0 if z.attrs["standard_name"] == "depth" else 1.0
        sign = {"up": 1.0, "down": -1.0}.get(z.attrs.get("positive"), sign)  # CF 1.11 §4.3
        h = sign * z.values.astype(float) * (1000.0 if z.attrs["units"] == "km" else 1.0)
    else:
        h = 0.0
    phi = np.deg2rad(ds["lat"].values.astype(float))
    n = A / np.sqrt(1 - E2 * np.sin(phi) ** 2)
    shift = OMEGA * (n + h) * np.cos(phi) / SPEED_UNITS[units]
    return np.where(np.abs(ds["lat"].values) == 90, np.nan, ds["u"].values + shift)


def _attempt(func, ds: xr.Dataset, **kw) -> xr.Dataset | None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FrameshiftWarning)
        try:
            return func(ds, **kw).compute()
        except FrameshiftError:
            return None  # refused, with a FrameshiftError: allowed


@FUZZ
@given(datasets())
def test_local_conversion_is_right_or_refused(ds):
    out = _attempt(to_inertial, ds)
    if out is None:
        return
    lat = ds["lat"].values.astype(float)
    assert np.isfinite(lat).all() and (np.abs(lat) <= 90).all()  # no silent bad position
    expected = _expected_local(ds)
    if expected is not None:
        np.testing.assert_allclose(out["u"].values, expected, rtol=1e-12, atol=1e-9)


@FUZZ
@given(datasets(), st.sampled_from(["local", "cartesian"]))
def test_cartesian_conversion_and_terms_never_fail_otherwise(ds, basis):
    out = _attempt(to_inertial, ds, basis="cartesian")
    if out is not None:
        assert np.isfinite(out["position"].values).all()
    terms = _attempt(apparent_accelerations, ds)
    if terms is not None:
        off_pole = np.abs(ds["lat"].values.astype(float)) < 90
        assert np.isfinite(terms["total_eastward"].values[off_pole]).all()


@settings(FUZZ, max_examples=2000 if LONG else 10)
@given(ds=datasets(), command=st.sampled_from(["convert", "terms"]))
def test_from_a_file_through_the_batch_runner(tmp_path_factory, ds, command):
    # as a user meets it: the file fails alone with one plain line, or is written
    folder = tmp_path_factory.mktemp("fuzz")
    try:
        ds.to_netcdf(folder / "f.nc")
    except (ValueError, TypeError, OverflowError, UnicodeError, RuntimeError):
        return  # not storable as NetCDF: not an input frameshift can meet
    op = batch.convert_operation() if command == "convert" else batch.terms_operation()
    options = batch.RunOptions(out_dir=folder / "out", progress=False, quiet=True)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FrameshiftWarning)
        (outcome,) = batch.run([folder / "f.nc"], op, options).outcomes
    assert outcome.status in ("written", "failed")
    if outcome.status == "failed":
        assert not INTERNAL.search(outcome.reason), outcome.reason
        assert not (folder / "out" / "f.nc").exists()
