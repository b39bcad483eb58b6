"""Speed and direction on Datasets: a met station file, both conventions, refusals.

Outside source: the CF standard name table v93 (definitions of wind_from_direction,
sea_water_velocity_to_direction and the component names; every name written exists).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import ConventionError, FrameshiftError, MissingInputError
from tests.helpers import (
    as_layout,
    assert_udunits,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    written_standard_names,
)
from tests.instruments.builders import met_station


@eager_and_chunked
def test_met_station_to_components(layout):
    ds = as_layout(met_station(), layout)
    with raise_if_dask_computes():
        out = frameshift.from_speed_direction(ds)
    raw = met_station()
    spd = raw["wspd"].values
    d = np.deg2rad(raw["wdir"].values)
    u, v = out["eastward_wind"].values, out["northward_wind"].values
    ok = np.isfinite(d)
    # CF v93 wind_from_direction: from; u = -s sin d, v = -s cos d
    np.testing.assert_allclose(u[ok], -spd[ok] * np.sin(d[ok]), atol=1e-12)
    np.testing.assert_allclose(v[ok], -spd[ok] * np.cos(d[ok]), atol=1e-12)
    assert u[1] == 0.0 and v[1] == 0.0  # calm with no direction: zero, not missing
    assert np.isnan(u[3]) and np.isnan(v[3])  # a speed without direction: missing
    assert out["eastward_wind"].attrs["units"] == "knot"  # the speed's units, UDUNITS spelling
    assert_udunits(out["eastward_wind"].attrs["units"])
    assert "wspd" not in out and "wdir" not in out and "tas" in out
    assert "averaged" in out["eastward_wind"].attrs["assumptions"]
    assert written_standard_names(out) <= cf_standard_names()
    assert "from_speed_direction" in out.attrs["history"]
    assert "history" not in raw.attrs  # the input is untouched


@eager_and_chunked
def test_station_chain_reaches_apparent_accelerations(layout):
    ds = as_layout(met_station(), layout)
    with raise_if_dask_computes():
        out = frameshift.from_speed_direction(ds)
        inertial = frameshift.to_inertial(out)
        terms = frameshift.apparent_accelerations(out)
    assert inertial["eastward_wind"].attrs["reference_frame"] == "inertial"
    assert "coriolis_eastward" in terms


@eager_and_chunked
def test_round_trip_through_speed_and_direction(layout):
    ds = as_layout(met_station(), layout)
    comps = frameshift.from_speed_direction(ds)
    polar = frameshift.to_speed_direction(comps)
    raw = met_station()
    ok = np.isfinite(raw["wdir"].values) & (raw["wspd"].values > 0)
    np.testing.assert_allclose(polar["wind_speed"].values[ok], raw["wspd"].values[ok],
                               rtol=1e-12)
    diff = (polar["wind_from_direction"].values[ok] - raw["wdir"].values[ok] + 180) % 360 - 180
    np.testing.assert_allclose(diff, 0.0, atol=1e-9)
    assert polar["wind_from_direction"].values[1] == 0.0  # the calm
    assert polar["wind_from_direction"].attrs["units"] == "degree"


@eager_and_chunked
def test_currents_default_to_the_to_convention(layout):
    ds = xr.Dataset({
        "u": ("t", [1.0, 0.0], {"standard_name": "eastward_sea_water_velocity", "units": "m s-1"}),
        "v": ("t", [0.0, -2.0], {"standard_name": "northward_sea_water_velocity",
                                 "units": "m s-1"}),
    })
    out = frameshift.to_speed_direction(as_layout(ds, layout))
    # CF v93 sea_water_velocity_to_direction: toward; east = 90, south = 180
    np.testing.assert_allclose(out["sea_water_velocity_to_direction"].values, [90.0, 180.0])
    np.testing.assert_allclose(out["sea_water_speed"].values, [1.0, 2.0])
    wind = frameshift.to_speed_direction(as_layout(ds, layout), convention="from")
    np.testing.assert_allclose(wind["sea_water_velocity_from_direction"].values, [270.0, 0.0])


@eager_and_chunked
def test_direction_without_convention_is_refused(layout):
    ds = xr.Dataset({"spd": ("t", [3.0], {"standard_name": "wind_speed", "units": "m s-1"}),
                     "dir": ("t", [10.0], {"units": "degree"})})
    ds = as_layout(ds, layout)
    with pytest.raises(ConventionError) as info:
        frameshift.from_speed_direction(ds, direction="dir")
    assert "convention='from'" in str(info.value) and "convention='to'" in str(info.value)
    out = frameshift.from_speed_direction(ds, direction="dir", convention="to")
    assert out["northward_wind"].values[0] == pytest.approx(3 * np.cos(np.deg2rad(10.0)))


@eager_and_chunked
def test_contradicting_convention_and_bad_units_are_refused(layout):
    ds = as_layout(met_station(), layout)
    with pytest.raises(ConventionError, match="contradicts"):
        frameshift.from_speed_direction(ds, convention="to")
    bad = ds.assign(wdir=ds["wdir"].assign_attrs(units="degrees_north"))
    with pytest.raises(FrameshiftError, match="latitude or longitude units"):
        frameshift.from_speed_direction(bad)
    with pytest.raises(MissingInputError, match="no speed and direction"):
        frameshift.from_speed_direction(ds[["tas"]])


@eager_and_chunked
def test_output_name_clash_is_refused_and_names_choose(layout):
    ds = met_station().assign(eastward_wind=("time", np.zeros(8), {"units": "1"}))
    ds = as_layout(ds, layout)
    with pytest.raises(FrameshiftError, match="already taken"):
        frameshift.from_speed_direction(ds)
    out = frameshift.from_speed_direction(ds, names={"eastward": "U10", "northward": "V10"},
                                          keep_inputs=True)
    assert {"U10", "V10", "wspd", "wdir"} <= set(out.data_vars)


@eager_and_chunked
def test_accessor_delegates(layout):
    ds = as_layout(met_station(), layout)
    xr.testing.assert_identical(
        ds.frameshift.from_speed_direction().drop_attrs(),
        frameshift.from_speed_direction(ds).drop_attrs(),
    )
