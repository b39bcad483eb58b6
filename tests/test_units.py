"""Units at the boundary: one parser, every failure a UnitsError naming what it found."""

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.units import parse_quantity, parse_units, scale_to


@pytest.mark.parametrize(
    "text",
    ["m s-1 (", "__import__('os')", "m/s**", "1e999 m", "m s-1\x00", "[m]", "m**m",
     "m s-1 + 1", "m^(1/2)", "x" * 500, 3.5, ["m", "s-1"]],
)
def test_any_failure_of_the_unit_library_is_a_units_error(text):
    with pytest.raises(frameshift.UnitsError) as info:
        parse_units("u", text, "speed")
    err = info.value
    assert isinstance(err, ValueError)
    assert err.variable == "u" and err.expected == "[length] / [time]"
    assert str(text)[:20] in err.found or err.found.startswith(str(text)[:20])


def test_conversion_factors_follow_udunits_definitions():
    # knot = 1852 m / 3600 s (international nautical mile, UDUNITS-2 udunits2-common.xml)
    assert scale_to(parse_units("u", "knot", "speed"), "m s-1") == pytest.approx(1852 / 3600)
    # 1 rpm = 2π/60 rad s-1 (one revolution per minute)
    assert scale_to(parse_units("w", "rpm", "angular_velocity"), "rad s-1") == pytest.approx(
        2 * np.pi / 60, rel=1e-15
    )
    assert parse_quantity("plev", "250 hPa", "Pa") == pytest.approx(25000.0)


def test_dut1_goes_through_the_unit_parser():
    ds = xr.Dataset(
        {"u": ("time", [1.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
         "v": ("time", [0.0], {"standard_name": "northward_wind", "units": "m s-1"})},
        coords={"time": np.array(["2030-01-01"], "datetime64[ns]"),
                "lat": ((), 10.0, {"units": "degrees_north"}),
                "lon": ((), 20.0, {"units": "degrees_east"})},
    )
    bad = xr.DataArray([0.1], dims="time", coords={"time": ds["time"]}, attrs={"units": "metre"})
    with pytest.raises(frameshift.UnitsError, match="dut1"):
        frameshift.to_inertial(ds, basis="cartesian", dut1=bad)
    ms = (bad * 0 + 100.0).assign_attrs(units="ms")  # 100 ms = 0.1 s
    a = frameshift.to_inertial(ds, basis="cartesian", dut1=ms)
    b = frameshift.to_inertial(ds, basis="cartesian", dut1=0.1)
    np.testing.assert_allclose(a["position"].values, b["position"].values, rtol=0, atol=1e-9)
