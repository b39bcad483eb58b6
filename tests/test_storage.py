"""What the written files hold: precision, fill attributes, untouched variables, labels.

Outside sources: IEEE 754 binary32 (a float32 rounding errs by at most 2^-24
relative), NetCDF User Guide and CF conventions 1.11 §2.5.1 (``_FillValue``,
``missing_value``; none on coordinates), CF 1.11 §8.1 (packed data: the
unpacked type is that of ``scale_factor``, a number), and the IOOS compliance
checker's CF 1.11 suite (``assert_cf_clean``) for every file written here.
"""

from __future__ import annotations

from pathlib import Path

import netCDF4
import numpy as np
import pytest
import xarray as xr

from frameshift import io
from frameshift.cli import main
from frameshift.errors import UnsupportedInputError
from frameshift.storage import plan_output, stored_precision
from tests.helpers import as_layout, eager_and_chunked, grid_dataset
from tests.test_io import assert_cf_clean, assert_same_stored

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
OMEGA_A = 7.292115e-5 * 6378137.0  # Ω a, WGS 84 (NIMA TR8350.2), m s-1


def _run(*args) -> int:
    return main([*map(str, args)])


def make_station_file(path: Path) -> Path:
    """A real-style station file: winds with only ``missing_value``, a packed
    temperature with ``_FillValue``, a char label with a numeric ``missing_value``,
    and a float observation time with missing values."""
    with netCDF4.Dataset(path, "w") as nc:
        nc.setncatts({"Conventions": "CF-1.11", "title": "storage test station",
                      "history": "made by the test", "featureType": "timeSeries"})
        nc.createDimension("time", 6)
        nc.createDimension("name_strlen", 8)
        t = nc.createVariable("time", "f8", ("time",), fill_value=False)
        t.setncatts({"standard_name": "time", "units": "hours since 2030-01-01",
                     "calendar": "standard", "units_metadata": "leap_seconds: none",
                     "axis": "T"})
        t[:] = np.arange(6.0)
        for name, std, units, value in (("lat", "latitude", "degrees_north", 45.0),
                                        ("lon", "longitude", "degrees_east", 10.0)):
            v = nc.createVariable(name, "f4", (), fill_value=False)
            v.setncatts({"standard_name": std, "units": units})
            v.assignValue(value)
        label = nc.createVariable("station_name", "S1", ("name_strlen",), fill_value=False)
        label.setncatts({"long_name": "station name", "cf_role": "timeseries_id"})
        label[:] = netCDF4.stringtochar(np.array(["buoy 7"], "S8"))[0]
        for name, std, values in (("u", "eastward_wind", [1, 2, -999, 4, 5, 6]),
                                  ("v", "northward_wind", [0, -1, -999, 3, 2, 1])):
            var = nc.createVariable(name, "f4", ("time",), fill_value=False)
            var.setncatts({"standard_name": std, "units": "m s-1",
                           "missing_value": np.float32(-999.0),
                           "coordinates": "lat lon station_name"})
            var[:] = np.array(values, "f4")
        temp = nc.createVariable("temp", "i2", ("time",), fill_value=np.int16(-32767))
        temp.setncatts({"standard_name": "air_temperature", "units": "K",
                        "scale_factor": np.float32(0.01), "add_offset": np.float32(280.0),
                        "units_metadata": "temperature: on_scale",
                        "coordinates": "lat lon station_name"})
        temp.set_auto_maskandscale(False)
        temp[:] = np.array([10, 20, -32767, 40, 50, 60], "i2")
        obs = nc.createVariable("obs_time", "f8", ("time",), fill_value=False)
        obs.setncatts({"long_name": "time of the observation", "units": "hours since 2030-01-01",
                       "calendar": "standard", "units_metadata": "leap_seconds: none",
                       "missing_value": -1.0, "coordinates": "lat lon station_name"})
        obs[:] = [0.1, 1.1, -1.0, 3.1, -1.0, 5.1]
    # the label variable carries a numeric missing_value (netCDF4 warns that it cannot
    # cast it to char; it is stored all the same)
    with netCDF4.Dataset(path, "a") as nc, pytest.warns(UserWarning, match="missing_value"):
        nc["station_name"].missing_value = np.int8(0)
    return path


@pytest.fixture(scope="module")
def station(tmp_path_factory) -> dict[str, Path]:
    root = tmp_path_factory.mktemp("storage")
    (root / "in").mkdir()
    src = make_station_file(root / "in" / "station.nc")
    assert _run("convert", src, "--out", root / "inertial", "--quiet") == 0
    assert _run("convert", root / "inertial" / "station.nc", "--to", "rotating",
                "--out", root / "back", "--quiet") == 0
    assert _run("terms", src, "--keep-input", "--totals", "both", "--out", root / "terms",
                "--quiet") == 0
    return {"in": src, "inertial": root / "inertial" / "station.nc",
            "back": root / "back" / "station.nc", "terms": root / "terms" / "station.nc"}


def _nc(path: Path) -> netCDF4.Dataset:
    nc = netCDF4.Dataset(path)
    nc.set_auto_maskandscale(False)
    return nc


def test_untouched_variables_keep_bytes_encoding_and_attributes(station):
    # char label with a numeric missing_value, packed int16 with _FillValue, float time
    # with missing values: dtype, dimensions, raw values, attributes and filters as stored
    for out in ("inertial", "back", "terms"):
        with _nc(station["in"]) as a, _nc(station[out]) as b:
            for name in ("station_name", "temp", "obs_time", "time", "lat", "lon"):
                assert_same_stored(a[name], b[name])
            assert b["obs_time"].dtype == np.float64  # not int64 nanoseconds
            assert b["station_name"].getncattr("missing_value") == np.int8(0)


def test_missing_value_alone_stays_alone_and_converts_back(station):
    with _nc(station["inertial"]) as mid, _nc(station["back"]) as back:
        for nc in (mid, back):
            for name in ("u", "v"):  # the converted and the relabelled component
                attrs = nc[name].ncattrs()
                assert "missing_value" in attrs and "_FillValue" not in attrs, (name, attrs)
                assert nc[name].getncattr("missing_value") == np.float32(-999.0)
        assert mid["u"][2] == np.float32(-999.0)  # the gap stays a gap
    with xr.open_dataset(station["in"]) as a, xr.open_dataset(station["back"]) as b:
        for name in ("u", "v"):
            assert np.array_equal(np.isnan(a[name]), np.isnan(b[name]))
            # one float32 rounding of u + Ω p, one of the way back (README bound)
            bound = 2.0**-23 * (float(np.nanmax(np.abs(a[name]))) + OMEGA_A)
            assert float(np.nanmax(np.abs(a[name] - b[name]))) <= bound


def test_float32_in_float32_out_and_the_precision_is_recorded(station):
    with xr.open_dataset(station["inertial"]) as ds:
        assert ds["u"].encoding["dtype"] == np.float32
        assert ds["u"].attrs["storage_precision"].startswith("float32")
    with xr.open_dataset(station["terms"]) as ds:
        assert ds["coriolis_northward"].encoding["dtype"] == np.float32


def test_written_files_pass_the_cf_checker(station):
    for path in station.values():
        assert_cf_clean(path)  # IOOS compliance checker, cf:1.11: no errors, no warnings


def test_keep_input_writes_terms_beside_the_untouched_input(station):
    with _nc(station["in"]) as a, _nc(station["terms"]) as b:
        for name in ("u", "v", "temp", "station_name"):
            assert_same_stored(a[name], b[name])
        assert {"coriolis_eastward", "total_eastward",
                "total_without_centrifugal_eastward"} <= set(b.variables)


def test_totals_say_which_terms_they_hold(station):
    with xr.open_dataset(station["terms"]) as ds:
        full, part = ds["total_northward"], ds["total_without_centrifugal_northward"]
        assert full.attrs["terms_included"] == "coriolis centrifugal euler curvature"
        assert part.attrs["terms_included"] == "coriolis euler curvature"
        assert "without the centrifugal term" in part.attrs["long_name"]
        # the two sums differ by the centrifugal term (definition of the sums), to the
        # three float32 roundings of the stored values
        diff = (full - part - ds["centrifugal_northward"]).values
        scale = float(np.nanmax(np.abs(full)))
        assert np.nanmax(np.abs(diff)) <= 3 * 2.0**-24 * scale


def test_text_scale_factor_is_refused_naming_the_variable(tmp_path, capsys):
    src = make_station_file(tmp_path / "bad.nc")
    with netCDF4.Dataset(src, "a") as nc:
        nc["temp"].delncattr("scale_factor")
        nc["temp"].setncattr_string("scale_factor", "0.01")
    with pytest.raises(UnsupportedInputError, match="'temp' has scale_factor stored as text"):
        io.open_input(src)
    assert _run("convert", src, "--out", tmp_path / "out", "--quiet") == 1
    err = capsys.readouterr().err
    assert "FAILED" in err and "(variable 'temp')" in err and "Traceback" not in err
    assert not (tmp_path / "out" / "bad.nc").exists()


# --- the policy itself, on eager and chunked input ------------------------------------------
def _with_encoding(ds: xr.Dataset, **encoding) -> xr.Dataset:
    ds = ds.copy()
    for name in ("ua", "va", "wa"):
        ds[name].encoding = dict(encoding)
    return ds


@eager_and_chunked
@pytest.mark.parametrize(("stored", "precision", "expected"), [
    ({"dtype": np.dtype("float32")}, "input", np.float32),
    ({"dtype": np.dtype("float64")}, "input", np.float64),
    ({"dtype": np.dtype("int16"), "scale_factor": 0.01}, "input", np.float32),
    ({"dtype": np.dtype("int32"), "scale_factor": 0.01}, "input", np.float64),
    ({"dtype": np.dtype("float32")}, "float64", np.float64),
])
def test_computed_variables_follow_the_input_precision(layout, stored, precision, expected):
    import frameshift

    src = as_layout(_with_encoding(grid_dataset(), **stored), layout)
    out = frameshift.to_inertial(src)
    plan, how = plan_output(out, src, precision=precision)
    assert how["ua"] == "computed" and how["ta"] == "copied"
    assert plan["ua"].encoding["dtype"] == expected
    # the input held uncompressed: the converted variable stays so (as compact as its input)
    assert "zlib" not in plan["ua"].encoding
    terms = frameshift.apparent_accelerations(src)
    plan, _ = plan_output(terms, src, precision=precision)
    assert plan["total_eastward"].encoding["dtype"] == expected  # from velocity_variables
    # new variables are compressed, at the fast level
    assert plan["total_eastward"].encoding["zlib"]
    assert plan["total_eastward"].encoding["complevel"] == 1


@eager_and_chunked
@pytest.mark.parametrize(("fills", "written"), [
    ({"_FillValue": np.float32(1e20)}, {"_FillValue": float(np.float32(1e20))}),
    ({"missing_value": np.float32(-999.0)}, {"missing_value": -999.0, "_FillValue": None}),
    ({"_FillValue": np.int16(-32767), "missing_value": np.int16(-32767),
      "scale_factor": 0.1}, {"_FillValue": -32767.0, "missing_value": -32767.0}),
    ({}, {"_FillValue": None}),
])
def test_fill_attributes_as_the_input_had_them(layout, fills, written):
    import frameshift

    dtype = np.dtype("int16") if "scale_factor" in fills else np.dtype("float32")
    src = as_layout(_with_encoding(grid_dataset(), dtype=dtype, **fills), layout)
    plan, _ = plan_output(frameshift.to_inertial(src), src)
    enc = plan["ua"].encoding
    for key, value in written.items():
        assert (enc.get(key) is None) if value is None else float(enc[key]) == value, key
    assert "missing_value" in enc if "missing_value" in fills else "missing_value" not in enc
    assert "scale_factor" not in enc  # computed values are never re-packed


def test_stored_precision_reads_the_encoding():
    v = xr.Variable("x", np.zeros(2))
    v.encoding = {"dtype": np.dtype("uint8"), "scale_factor": 0.5}
    assert stored_precision(v) == np.float32
    v.encoding = {}
    assert stored_precision(v) == np.float64


@eager_and_chunked
def test_compressed_input_gives_compressed_output(layout):
    import frameshift

    src = as_layout(_with_encoding(grid_dataset(), dtype=np.dtype("float32"), zlib=True,
                                   complevel=6), layout)
    plan, _ = plan_output(frameshift.to_inertial(src), src)
    assert plan["ua"].encoding["zlib"] and plan["ua"].encoding["complevel"] == 1


def test_combined_run_copies_shared_variables_as_stored(tmp_path):
    # --combine opens the inputs as one Dataset; variables every file shares are still
    # copied as the first file stored them (the char label with its numeric missing_value)
    (tmp_path / "in").mkdir()
    src = make_station_file(tmp_path / "in" / "station.nc")
    assert _run("convert", src, "--combine", "--out", tmp_path / "out", "--quiet") == 0
    out = tmp_path / "out" / "combined.nc"
    with _nc(src) as a, _nc(out) as b:
        for name in ("station_name", "temp", "obs_time", "lat", "lon"):
            assert_same_stored(a[name], b[name])
    assert_cf_clean(out)  # IOOS compliance checker, cf:1.11
