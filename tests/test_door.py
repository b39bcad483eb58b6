"""Validation at the door: positions, heights, calendars, precision and the pole rule.

Reference values and formulas, with their sources:
- WGS 84 a, 1/f (NIMA TR8350.2); Ω = 7.292115e-5 rad s-1 (IERS Conventions 2010, Table 1.1).
- Earth Rotation Angle: ``erfa.era00`` (IAU 2000 resolution B1.8, IERS 2010 eq. 5.15).
- Julian Date of a julian-calendar date: Meeus, Astronomical Algorithms (2nd ed. 1998),
  ch. 7, JD = INT(365.25 (Y + 4716)) + INT(30.6001 (M + 1)) + D + B - 1524.5 with B = 0
  for the julian calendar (formula recalled from memory; checked here against
  ``erfa.cal2jd`` at a date where both calendars are known to differ by 13 days).
- Curvature term, northward, w = 0: -u² tan φ / (N + h), N = a / sqrt(1 - e² sin² φ)
  (the apparent-acceleration formulas of frameshift.apparent_accelerations; the prime
  vertical radius N as in NIMA TR8350.2).
"""

from __future__ import annotations

import math
import warnings

import cftime
import numpy as np
import pytest
import xarray as xr

from frameshift import EARTH, apparent_accelerations, to_inertial
from frameshift.errors import (
    FrameshiftWarning,
    MissingInputError,
    UnitsError,
    UnsupportedInputError,
)
from frameshift.frames import instants_of
from tests.helpers import (
    as_layout,
    eager_and_chunked,
    grid_dataset,
    raise_if_dask_computes,
    station_dataset,
    trajectory_dataset,
)

A, INV_F = 6378137.0, 298.257223563  # WGS 84 (NIMA TR8350.2)
E2 = (2 - 1 / INV_F) / INV_F


def _run(ds: xr.Dataset, layout: str, func=to_inertial, **kw) -> xr.Dataset:
    """Call ``func`` (no computation for chunked input), then compute the result."""
    ds = as_layout(ds, layout)
    if layout == "chunked":
        with raise_if_dask_computes():
            out = func(ds, **kw)
        return out.compute()
    return func(ds, **kw)


def _with_lat(ds: xr.Dataset, values, units: str = "degrees_north") -> xr.Dataset:
    lat = ds["lat"]
    return ds.assign_coords(lat=(lat.dims, np.asarray(values, dtype=float),
                                 {**lat.attrs, "units": units}))


# --- latitude and longitude ---------------------------------------------------------------
@eager_and_chunked
@pytest.mark.parametrize("bad", [95.0, 120.0, -180.0, 90.000001])
def test_latitude_beyond_the_poles_is_refused(layout, bad):
    ds = station_dataset()
    ds = _with_lat(ds, [10.0, bad, -20.0])
    with pytest.raises(UnsupportedInputError, match=r"outside -90\.\.90") as info:
        _run(ds, layout)
    assert info.value.variable == "lat"


@eager_and_chunked
@pytest.mark.parametrize("func", [to_inertial, apparent_accelerations])
def test_latitude_nan_is_refused(layout, func):
    ds = _with_lat(station_dataset(), [10.0, np.nan, -20.0])
    with pytest.raises(MissingInputError, match="missing or infinite"):
        _run(ds, layout, func)


@pytest.mark.parametrize("units", ["radians", "rad", "radian"])
def test_latitude_in_radians_is_refused_with_how_to_convert(units):
    ds = _with_lat(station_dataset(), [0.3, 0.1, -0.2], units=units)
    with pytest.raises(UnitsError, match=r"np.rad2deg") as info:
        to_inertial(ds)
    assert "degrees_north" in str(info.value)


@pytest.mark.parametrize(("units", "message"), [("m", "not an angle"),
                                                ("degrees_east", "longitude units")])
def test_latitude_in_other_units_is_refused(units, message):
    ds = _with_lat(station_dataset(), [10.0, 20.0, 30.0], units=units)
    ds["lat"].attrs["standard_name"] = "latitude"
    with pytest.raises(UnitsError, match=message):
        to_inertial(ds)


@eager_and_chunked
def test_longitude_not_finite_is_refused(layout):
    ds = station_dataset()
    ds = ds.assign_coords(lon=("station", [10.0, np.inf, 0.0], ds["lon"].attrs))
    with pytest.raises(MissingInputError, match="longitude 'lon'"):
        _run(ds, layout, basis="cartesian")


def test_plain_degrees_are_accepted_as_common_practice():
    ds = station_dataset()
    plain = _with_lat(ds, ds["lat"].values, units="degrees")
    xr.testing.assert_allclose(to_inertial(plain)["u"], to_inertial(ds)["u"], rtol=0, atol=0)


# --- heights --------------------------------------------------------------------------------
@pytest.mark.parametrize(("height", "error", "message"), [
    (float("nan"), MissingInputError, "missing or infinite"),
    (float("inf"), MissingInputError, "missing or infinite"),
    (-1e7, UnsupportedInputError, "body's centre"),
])
def test_height_argument_must_be_a_place(height, error, message):
    with pytest.raises(error, match=message):
        to_inertial(grid_dataset(nlev=1).drop_vars("z").squeeze(), height=height)


@eager_and_chunked
def test_height_variable_below_the_centre_or_missing_is_refused(layout):
    ds = trajectory_dataset()
    low = ds.assign(alt=ds["alt"].copy(data=np.full(ds.sizes["time"], -7e6)))
    with pytest.raises(UnsupportedInputError, match="body's centre"):
        _run(low, layout)
    gap = ds.assign(alt=ds["alt"].where(ds["time"] != ds["time"][2]))
    with pytest.raises(MissingInputError, match="missing or infinite height"):
        _run(gap, layout)


@eager_and_chunked
def test_depth_with_positive_up_is_read_as_positive_up(layout):
    # CF 1.11 §4.3: the 'positive' attribute gives the direction of increasing values
    down = station_dataset()
    up = down.assign_coords(depth=("depth", -down["depth"].values,
                                   {**down["depth"].attrs, "positive": "up"}))
    a, b = _run(down, layout), _run(up, layout)
    np.testing.assert_array_equal(a["u"].values, b["u"].values)


# --- calendars ----------------------------------------------------------------------------
def _meeus_jd_julian(year: int, month: int, day: float) -> float:
    """JD of a julian-calendar date (Meeus 1998, ch. 7, B = 0; from memory)."""
    if month <= 2:
        year, month = year - 1, month + 12
    return (math.floor(365.25 * (year + 4716)) + math.floor(30.6001 * (month + 1))
            + day - 1524.5)


def test_meeus_formula_agrees_with_erfa_on_the_gregorian_shift():
    import erfa

    # julian 2030-03-01 is gregorian 2030-03-14 (13 days apart since 1900)
    jd1, jd2 = erfa.cal2jd(2030, 3, 14)
    assert _meeus_jd_julian(2030, 3, 1) == jd1 + jd2  # both: JD at 0 h of the day


@pytest.mark.parametrize("when", [(2030, 3, 1, 6, 30, 0), (1999, 12, 19, 12, 0, 0),
                                  (2024, 2, 16, 23, 59, 30)])
def test_era_at_julian_calendar_instants_matches_erfa(when):
    import erfa

    y, m, d, hh, mm, ss = when
    value = cftime.datetime(y, m, d, hh, mm, ss, calendar="julian")
    jd = _meeus_jd_julian(y, m, d)  # JD at 0 h of the day
    fraction = (hh * 3600 + mm * 60 + ss) / 86400.0
    expected = erfa.era00(jd, fraction)  # UT1 taken as UTC (dut1 = 0)
    got = EARTH.rotation_angle(instants_of(np.array([value]), "time"))
    assert abs(float(np.asarray(got).ravel()[0]) - expected) < 1e-12  # erfa.era00, IAU 2000


@eager_and_chunked
def test_julian_times_give_the_positions_of_the_same_gregorian_instants(layout):
    ds = trajectory_dataset()
    greg = ds["time"].values.astype("datetime64[s]").astype(object)
    julian = np.array([cftime.datetime(t.year, t.month, t.day, t.hour, t.minute, t.second,
                                       calendar="standard").change_calendar("julian")
                       for t in greg])
    other = ds.assign_coords(time=("time", julian))
    a = _run(ds, layout, basis="cartesian")
    b = _run(other, layout, basis="cartesian")
    np.testing.assert_allclose(b["position"].values, a["position"].values, rtol=0, atol=1e-6)
    np.testing.assert_allclose(b["velocity"].values, a["velocity"].values, rtol=0, atol=1e-9)


# --- precision ------------------------------------------------------------------------------
def _single(ds: xr.Dataset) -> xr.Dataset:
    return ds.assign_coords({n: ds[n].astype(np.float32) for n in ("lat", "lon", "z")})


@eager_and_chunked
@pytest.mark.parametrize(("func", "kw"), [(to_inertial, {}),
                                          (to_inertial, {"basis": "cartesian"}),
                                          (apparent_accelerations, {})])
def test_float32_coordinates_give_the_float64_answer(layout, func, kw):
    ds32 = _single(grid_dataset())
    ds64 = ds32.assign_coords({n: ds32[n].astype(np.float64) for n in ("lat", "lon", "z")})
    a, b = _run(ds32, layout, func, **kw), _run(ds64, layout, func, **kw)
    for name in b.data_vars:
        if b[name].dtype.kind == "f":
            np.testing.assert_allclose(a[name].values, b[name].values, rtol=1e-9, atol=0,
                                       err_msg=name)


# --- the pole rule --------------------------------------------------------------------------
def _polar_grid() -> xr.Dataset:
    ds = grid_dataset(nlat=5)
    return _with_lat(ds, [-90.0, -89.999, 0.0, 89.999, 90.0])


@eager_and_chunked
def test_pole_points_are_nan_with_a_warning_counting_them(layout):
    ds = _polar_grid()  # latitude is a dimension coordinate: in memory in both layouts
    with pytest.warns(FrameshiftWarning, match=r"^48 point\(s\)"):  # 2 lats × 3 t × 2 z × 4 lon
        out = _run(ds, layout)
    u = out["ua"].transpose("lat", ...).values
    assert np.isnan(u[[0, 4]]).all()
    assert np.isfinite(u[[1, 2, 3]]).all()


def test_pole_rule_for_the_terms_keeps_the_position_only_terms():
    ds = _polar_grid()
    with pytest.warns(FrameshiftWarning, match="at a pole"):
        out = apparent_accelerations(ds)
    at_pole = {"lat": [0, 4]}
    for name in ("coriolis_eastward", "curvature_northward", "total_eastward"):
        assert np.isnan(out[name].isel(at_pole).values).all(), name
    for name in ("centrifugal_northward", "centrifugal_upward", "euler_eastward"):
        assert np.isfinite(out[name].isel(at_pole).values).all(), name
    # just off the pole the curvature term is finite and follows its formula
    near = out["curvature_northward"].sel(lat=89.999)
    sub = ds.sel(lat=89.999)
    phi = np.deg2rad(89.999)
    n = A / np.sqrt(1 - E2 * np.sin(phi) ** 2)
    # w enters the northward curvature term as -v w/(M+h): compare with it included
    m = A * (1 - E2) / (1 - E2 * np.sin(phi) ** 2) ** 1.5
    expected = (-sub["ua"] ** 2 * np.tan(phi) / (n + sub["z"])
                - sub["va"] * sub["wa"] / (m + sub["z"]))
    np.testing.assert_allclose(near.transpose(*expected.dims).values, expected.values,
                               rtol=1e-9)


@eager_and_chunked
def test_a_lazy_latitude_at_the_pole_is_masked_without_a_count(layout):
    ds = trajectory_dataset()
    ds = ds.assign_coords(lat=("time", [90.0, 89.0, 0.0, -89.0, -90.0, 10.0],
                                 ds["lat"].attrs))
    if layout == "eager":
        with pytest.warns(FrameshiftWarning, match=r"^2 point\(s\)"):
            out = _run(ds, layout)
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("error", FrameshiftWarning)  # no count: nothing computed
            out = _run(ds, layout)
    assert np.isnan(out["u"].values[[0, 4]]).all() and np.isfinite(out["u"].values[1:4]).all()


def test_position_only_terms_at_the_pole_need_no_warning():
    with warnings.catch_warnings():
        warnings.simplefilter("error", FrameshiftWarning)
        out = apparent_accelerations(_polar_grid(), terms=["centrifugal", "euler"])
    assert np.isfinite(out["total_northward"].values).all()


def test_no_warning_and_nothing_masked_away_from_the_poles():
    with warnings.catch_warnings():
        warnings.simplefilter("error", FrameshiftWarning)
        out = to_inertial(grid_dataset())
    assert np.isfinite(out["ua"].values).all()
