"""Magnetic to true north: given declinations and IGRF-14 through ppigrf.

Outside sources: the World Magnetic Model 2025 values NOAA publishes in the
description of its ``wmm-calculator`` package (version 1.4.4, "WMM Python API
Quick Start": declination 3.6678175 degree at 23.35 N, 40 E, 21 km on
2025-12-06 and 3.2466589 degree at 24.5 N, 45 E, 21 km on 2026-01-15), a
different main-field model from IGRF-14, so the two agree to a few
hundredths of a degree there, not exactly; ppigrf's own
``get_inclination_declination``; the definition of declination (angle from
true north to magnetic north, positive east: common practice).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import FrameshiftError, MissingInputError, UnsupportedInputError
from tests.helpers import as_layout, eager_and_chunked, raise_if_dask_computes
from tests.instruments.builders import met_station

pytest.importorskip("ppigrf")


def _mooring(when="2027-03-01", n=4):
    time = np.datetime64(when, "ns") + np.arange(n) * np.timedelta64(12, "h")
    return xr.Dataset(
        {
            "u": ("time", np.zeros(n), {"standard_name": "eastward_sea_water_velocity",
                                        "units": "m s-1", "north_reference": "magnetic"}),
            "v": ("time", np.ones(n), {"standard_name": "northward_sea_water_velocity",
                                       "units": "m s-1", "north_reference": "magnetic"}),
            "cdir": ("time", np.zeros(n), {"standard_name": "sea_water_velocity_to_direction",
                                           "units": "degree", "north_reference": "magnetic"}),
        },
        coords={"time": ("time", time),
                "lat": ((), 24.5, {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ((), 45.0, {"standard_name": "longitude", "units": "degrees_east"})},
    )


@eager_and_chunked
def test_toward_magnetic_north_with_plus_ten_points_to_ten_true(layout):
    # declination +10 (magnetic north 10 degrees east of true north): a current toward
    # magnetic north goes toward 10 degrees true (definition of declination).
    ds = as_layout(_mooring(), layout)
    with raise_if_dask_computes():
        out = frameshift.magnetic_to_true(ds, declination=10.0)
    np.testing.assert_allclose(out["u"], np.sin(np.deg2rad(10.0)), atol=1e-12)
    np.testing.assert_allclose(out["v"], np.cos(np.deg2rad(10.0)), atol=1e-12)
    np.testing.assert_allclose(out["cdir"], 10.0, atol=1e-12)
    assert out["u"].attrs["north_reference"] == "true"
    assert out["u"].attrs["standard_name"] == "eastward_sea_water_velocity"
    assert "given by the caller" in out["u"].attrs["magnetic_declination_source"]


@eager_and_chunked
def test_per_record_declination_variable_and_wrap(layout):
    ds = _mooring().assign(decl=("time", [-5.0, 5.0, 20.0, -20.0], {"units": "degree"}))
    ds["cdir"] = (ds["cdir"] + 355.0).assign_attrs(ds["cdir"].attrs)
    ds = as_layout(ds, layout)
    out = frameshift.magnetic_to_true(ds, declination="decl", directions=["cdir"])
    np.testing.assert_allclose(out["cdir"], [350.0, 0.0, 15.0, 335.0], atol=1e-12)
    assert set(out["cdir"].values) <= set(np.arange(0.0, 360.0, 5.0))


@eager_and_chunked
def test_model_declination_against_published_wmm2025_values(layout):
    # WMM2025 as published with wmm-calculator 1.4.4 (see module docstring); IGRF-14 is
    # another model: agreement within 0.05 degree here.
    ds = xr.Dataset(coords={
        "time": ("obs", np.array(["2025-12-06", "2026-01-15"], dtype="datetime64[ns]")),
        "lat": ("obs", [23.35, 24.5], {"standard_name": "latitude", "units": "degrees_north"}),
        "lon": ("obs", [40.0, 45.0], {"standard_name": "longitude", "units": "degrees_east"}),
    })
    with raise_if_dask_computes():
        decl = frameshift.magnetic_declination(as_layout(ds, layout), height=21000.0)
    np.testing.assert_allclose(decl.values, [3.6678175, 3.2466589], atol=0.05)
    assert "IGRF-14" in decl.attrs["source"] and "ppigrf" in decl.attrs["source"]


@pytest.mark.filterwarnings("ignore:'where' used without 'out':UserWarning")
@eager_and_chunked
def test_model_declination_agrees_with_ppigrf_own_function(layout):
    import datetime as dt

    import ppigrf

    lat = np.array([-60.0, 0.0, 45.0, 70.0])
    lon = np.array([-120.0, 10.0, 150.0, -40.0])
    be, bn, bu = ppigrf.igrf(lon, lat, 0.0, dt.datetime(2028, 7, 1))
    _, expected = ppigrf.get_inclination_declination(be, bn, bu, degrees=True)
    ds = xr.Dataset(coords={
        "time": ("p", np.full(4, np.datetime64("2028-07-01", "ns"))),
        "lat": ("p", lat, {"standard_name": "latitude"}),
        "lon": ("p", lon, {"standard_name": "longitude"}),
    })
    np.testing.assert_allclose(frameshift.magnetic_declination(as_layout(ds, layout)),
                               np.ravel(expected),
                               atol=1e-9)


@eager_and_chunked
def test_model_chain_records_model_and_epoch(layout):
    ds = as_layout(_mooring(), layout)
    with raise_if_dask_computes():
        out = frameshift.magnetic_to_true(ds, declination="model")
    source = out["u"].attrs["magnetic_declination_source"]
    assert "IGRF-14" in source and "2027-03-01" in source and "2027-03-02" in source
    assert "magnetic_declination" in out and out["magnetic_declination"].attrs["units"] == "degree"
    d = np.deg2rad(out["magnetic_declination"].values)
    np.testing.assert_allclose(out["u"], np.sin(d), atol=1e-12)
    inertial = frameshift.to_inertial(out)  # ready for the frame change
    assert inertial["u"].attrs["reference_frame"] == "inertial"


@pytest.mark.parametrize("when", ["1899-12-31", "2030-01-01"])
@eager_and_chunked
def test_dates_outside_the_model_are_refused(when, layout):
    with pytest.raises(UnsupportedInputError, match="validity of IGRF-14"):
        frameshift.magnetic_to_true(as_layout(_mooring(when, n=1), layout), declination="model")


@eager_and_chunked
def test_unmarked_and_model_calendar_inputs_are_refused(layout):
    ds = as_layout(met_station(), layout)
    with pytest.raises(MissingInputError, match="north_reference"):
        frameshift.magnetic_to_true(ds, declination=3.0)
    noleap = as_layout(_mooring().convert_calendar("noleap"), layout)
    with pytest.raises(FrameshiftError, match="model calendar"):
        frameshift.magnetic_to_true(noleap, declination="model")


@eager_and_chunked
def test_one_place_many_days_equals_day_by_day(layout):
    # the one-call path for a fixed place gives what the day-by-day path gives
    days = np.array(["2026-02-01", "2027-08-15", "2029-12-31"], dtype="datetime64[ns]")
    fixed = xr.Dataset(coords={"time": ("time", days),
                               "lat": ((), 47.3, {"standard_name": "latitude"}),
                               "lon": ((), -38.65, {"standard_name": "longitude"})})
    moving = xr.Dataset(coords={"time": ("time", np.concatenate([days, days[:1]])),
                                "lat": ("time", [47.3, 47.3, 47.3, -10.0],
                                        {"standard_name": "latitude"}),
                                "lon": ("time", [-38.65, -38.65, -38.65, 120.0],
                                        {"standard_name": "longitude"})})
    one = frameshift.magnetic_declination(as_layout(fixed, layout)).values
    many = frameshift.magnetic_declination(as_layout(moving, layout)).values
    np.testing.assert_allclose(one, many[:3], atol=1e-12)
    assert abs(many[3] - one[0]) > 1.0  # another place, another declination
