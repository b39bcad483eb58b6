"""Moving platforms on Datasets: a ship's met record and a ship-mounted current profiler.

Outside sources: Smith, Bourassa & Sharp 1999 (J. Atmos. Oceanic Technol. 16,
939-952) for the true wind (cases worked by hand in test_kernels; here the
same equations written out in numpy beside the Dataset call); scipy's
``Rotation`` (intrinsic z-y'-x'' Euler matrices) for the profiler; the CF
standard name table v93 for the platform names (platform_orientation is
clockwise from north; platform_yaw is relative to the "at rest" orientation).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import FrameshiftError, MissingInputError, UnsupportedInputError
from frameshift.units import ureg
from tests.helpers import (
    as_layout,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    written_standard_names,
)
from tests.instruments.builders import adcp_record, ship_record

KNOT = 1852.0 / 3600.0  # m s-1 per knot (international nautical mile, 1852 m)


def _sbs(hd, crse, sog, rdir, rspd, zrf):
    """Smith, Bourassa & Sharp (1999), their equations as printed."""
    a = np.deg2rad(270.0 - (hd + zrf + rdir))
    c = np.deg2rad(90.0 - crse)
    return rspd * np.cos(a) + sog * np.cos(c), rspd * np.sin(a) + sog * np.sin(c)


@eager_and_chunked
def test_ship_record_true_wind(layout):
    raw = ship_record()
    ds = as_layout(raw, layout)
    with raise_if_dask_computes():
        out = frameshift.true_wind(ds, relative_direction="rel_wdir", relative_speed="rel_wspd",
                                   zero_reference=5.0)
    u, v = _sbs(raw["heading"].values, raw["cog"].values, raw["sog"].values * KNOT,
                raw["rel_wdir"].values, raw["rel_wspd"].values, 5.0)
    np.testing.assert_allclose(out["eastward_wind"].values, u, atol=1e-12)
    np.testing.assert_allclose(out["northward_wind"].values, v, atol=1e-12)
    np.testing.assert_allclose(out["wind_speed"].values, np.hypot(u, v), atol=1e-12)
    assert out["wind_speed"].attrs["units"] == "m s-1"  # the relative speed's units
    assert "Smith, Bourassa and Sharp 1999" in out["eastward_wind"].attrs["comment"]
    assert "rel_wdir" not in out and "heading" in out
    assert written_standard_names(out) <= cf_standard_names()
    with raise_if_dask_computes():
        inertial = frameshift.to_inertial(out)  # ready for the frame change, no renaming
    assert inertial["eastward_wind"].attrs["reference_frame"] == "inertial"


@eager_and_chunked
def test_true_wind_from_values_with_units(layout):
    # ship stationary: heading 30, relative from 60 at 10 knots -> true wind from 90
    rel = as_layout(xr.Dataset({"d": ("t", [60.0, 60.0], {"units": "degree"}),
                                "s": ("t", [10.0, 10.0], {"units": "knot"})}), layout)
    with raise_if_dask_computes():
        out = frameshift.true_wind(ureg.Quantity(30.0, "degree"), 0.0,
                                   ureg.Quantity(0.0, "knot"), rel["d"], rel["s"])
    assert float(out["wind_from_direction"][0]) == pytest.approx(90.0, abs=1e-9)
    assert float(out["wind_speed"][0]) == pytest.approx(10.0, abs=1e-12)
    assert out["wind_speed"].attrs["units"] == "knot"


@eager_and_chunked
def test_true_wind_refusals(layout):
    ds = as_layout(ship_record(), layout)
    with pytest.raises(MissingInputError, match="no standard name"):
        frameshift.true_wind(ds)
    yaw = ds.rename(heading="yaw")
    yaw["yaw"].attrs["standard_name"] = "platform_yaw"
    with pytest.raises(UnsupportedInputError, match="at rest"):
        frameshift.true_wind(yaw, relative_direction="rel_wdir", relative_speed="rel_wspd")
    with pytest.raises(FrameshiftError):
        frameshift.true_wind(1.0, 2.0, 3.0, "north", 5.0)


@eager_and_chunked
def test_profiler_on_ship_axes_to_earth(layout):
    from scipy.spatial.transform import Rotation

    raw = adcp_record()
    ds = as_layout(raw, layout)
    vel = {"forward": "vel_fwd", "starboard": "vel_stbd", "up": "vel_up"}
    with raise_if_dask_computes():
        out = frameshift.platform_to_earth(ds, velocity=vel)
    rot = Rotation.from_euler("ZYX", np.column_stack(
        [raw["heading"], raw["pitch"], raw["roll"]]), degrees=True)
    body = np.stack([raw["vel_fwd"].values, raw["vel_stbd"].values, -raw["vel_up"].values], -1)
    ned = np.einsum("tij,tbj->tbi", rot.as_matrix(), body)  # (north, east, down)
    cog = np.deg2rad(raw["cog"].values)[:, None]
    sog = raw["sog"].values[:, None]
    np.testing.assert_allclose(out["eastward_sea_water_velocity"].values,
                               ned[..., 1] + sog * np.sin(cog), atol=1e-12)
    np.testing.assert_allclose(out["northward_sea_water_velocity"].values,
                               ned[..., 0] + sog * np.cos(cog), atol=1e-12)
    np.testing.assert_allclose(out["upward_sea_water_velocity"].values, -ned[..., 2], atol=1e-12)
    assert written_standard_names(out) <= cf_standard_names()
    with raise_if_dask_computes():
        terms = frameshift.apparent_accelerations(out)
    assert "coriolis_northward" in terms


@eager_and_chunked
def test_bottom_track_equals_navigation_when_they_agree(layout):
    # the bottom seen from the ship moves at minus the ship's velocity, on ship axes
    raw = adcp_record()
    hd = np.deg2rad(raw["heading"].values)
    cog = np.deg2rad(raw["cog"].values)
    rel = cog - hd  # course relative to the bow, level ship
    bt = raw.assign(
        pitch=raw["pitch"] * 0, roll=raw["roll"] * 0,
        bt_fwd=("time", -raw["sog"].values * np.cos(rel), {"units": "m s-1"}),
        bt_stbd=("time", -raw["sog"].values * np.sin(rel), {"units": "m s-1"}),
    )
    vel = {"forward": "vel_fwd", "starboard": "vel_stbd", "up": "vel_up"}
    nav = frameshift.platform_to_earth(as_layout(bt, layout), velocity=vel)
    bot = frameshift.platform_to_earth(as_layout(bt, layout), velocity=vel,
                                       bottom_velocity={"forward": "bt_fwd",
                                                        "starboard": "bt_stbd"})
    for name in ("eastward_sea_water_velocity", "northward_sea_water_velocity"):
        np.testing.assert_allclose(bot[name].values, nav[name].values, atol=1e-12)
    assert "bottom track" in bot["eastward_sea_water_velocity"].attrs["comment"]


@eager_and_chunked
def test_profiler_refusals_and_notes(layout):
    ds = as_layout(adcp_record(), layout)
    with pytest.raises(MissingInputError, match=r"no standard\s+names"):
        frameshift.platform_to_earth(ds, velocity=None)
    unsure = ds.assign(pitch=ds["pitch"].assign_attrs(standard_name="platform_pitch"))
    with pytest.raises(UnsupportedInputError, match="sign"):
        frameshift.platform_to_earth(unsure, velocity={"forward": "vel_fwd",
                                                       "starboard": "vel_stbd"})
    out = frameshift.platform_to_earth(unsure, velocity={"forward": "vel_fwd",
                                                         "starboard": "vel_stbd"},
                                       pitch="pitch")
    notes = out["eastward_sea_water_velocity"].attrs["assumptions"]
    assert "taken as positive bow up" in notes and "no upward component" in notes
    no_nav = ds.drop_vars(["cog", "sog"])
    with pytest.raises(MissingInputError, match="course"):
        frameshift.platform_to_earth(no_nav, velocity={"forward": "vel_fwd",
                                                       "starboard": "vel_stbd"})
