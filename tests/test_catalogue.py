"""The catalogue of bad inputs: one row per case, with the error each must give.

Every row is a file (or a command line) that frameshift must refuse. Each
file case is run twice: through the library (the operation the command
would run, computed, so lazy checks count) where it must raise the listed
:class:`~frameshift.errors.FrameshiftError` subclass naming the listed
variable; and through the command line, where the file must fail alone
with one line holding the listed words, no traceback, no internal
exception name, and no output file. Option cases must exit with status 2
before any file is opened. DEVELOPERS.md lists the catalogue.

The bad values are facts of the CF conventions (CF 1.11 §4.1-4.4: latitude
in degrees_north within ±90, longitude in degrees_east, time units and
calendars, ``positive``) or of geometry (no height at or below the Earth's
centre, WGS 84 polar radius 6356752.3142 m, NIMA TR8350.2); the data are
arbitrary test inputs.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import cftime
import numpy as np
import pytest
import xarray as xr

from frameshift import batch, cli, to_inertial
from frameshift.errors import (
    ConventionError,
    FrameError,
    FrameshiftError,
    InputTypeError,
    MissingInputError,
    UnitsError,
    UnsupportedInputError,
)
from tests.helpers import grid_dataset, station_dataset, trajectory_dataset

CONVERT = ("convert",)
CARTESIAN = ("convert", "--basis", "cartesian")
BACK = ("convert", "--to", "rotating", "--basis", "cartesian")
ROTATING = ("convert", "--to", "rotating")
TERMS = ("terms",)


@dataclass(frozen=True)
class Case:
    """One bad input: how to make it, the command, and the error it must give."""

    key: str
    what: str
    command: tuple[str, ...]
    build: Callable[[], xr.Dataset] | None
    error: type[FrameshiftError] | type[OSError]
    variable: str | None
    words: str  # must appear in the one line the command line prints
    raw: bytes | None = None  # file bytes instead of a Dataset


# --- builders -------------------------------------------------------------------------------
def _lat(values, units="degrees_north", ds=None, **attrs) -> xr.Dataset:
    ds = station_dataset() if ds is None else ds
    old = ds["lat"].attrs
    return ds.assign_coords(lat=("station", np.asarray(values), {**old, "units": units, **attrs}))


def _lat_attrs(**attrs) -> xr.Dataset:
    ds = station_dataset()
    new = {k: v for k, v in {**ds["lat"].attrs, **attrs}.items() if v is not None}
    return ds.assign_coords(lat=("station", ds["lat"].values, new))


def _lat_fill() -> xr.Dataset:
    ds = _lat([10.0, np.nan, 20.0])
    ds["lat"].encoding["_FillValue"] = -999.0
    return ds


def _lon(values, units="degrees_east") -> xr.Dataset:
    ds = station_dataset()
    return ds.assign_coords(lon=("station", np.asarray(values, float),
                                 {**ds["lon"].attrs, "units": units}))


def _traj(**changes) -> xr.Dataset:
    ds = trajectory_dataset().set_coords("alt")  # the velocity's coordinates name it
    for name, values in changes.items():
        ds[name] = ds[name].copy(data=np.asarray(values, dtype=ds[name].dtype))
    return ds


def _attr(ds: xr.Dataset, name: str, **attrs) -> xr.Dataset:
    var = ds[name].copy()
    var.attrs = {k: v for k, v in {**var.attrs, **attrs}.items() if v is not None}
    return ds.assign({name: var}) if name in ds.data_vars else ds.assign_coords({name: var})


def _times(values) -> xr.Dataset:
    ds = trajectory_dataset()
    return ds.assign_coords(time=("time", values))


def _model_times(calendar: str) -> xr.Dataset:
    n = trajectory_dataset().sizes["time"]
    return _times(np.array([cftime.datetime(2030, 1, 1, i, calendar=calendar)
                            for i in range(n)]))


def _nat_time() -> xr.Dataset:
    ds = trajectory_dataset()
    t = ds["time"].values.copy()
    t[2] = np.datetime64("NaT")
    return ds.assign_coords(time=("time", t))


def _pressure_only() -> xr.Dataset:
    ds = grid_dataset()
    return ds.assign_coords(z=("z", [850.0, 500.0], {"standard_name": "air_pressure",
                                                     "units": "hPa", "positive": "down",
                                                     "axis": "Z"}))


def _rotated_only() -> xr.Dataset:
    ds = grid_dataset()
    ds = ds.rename({"lat": "rlat", "lon": "rlon"})
    ds["rlat"].attrs = {"standard_name": "grid_latitude", "units": "degrees"}
    ds["rlon"].attrs = {"standard_name": "grid_longitude", "units": "degrees"}
    return ds


def _two_latitudes() -> xr.Dataset:
    ds = station_dataset()
    return ds.assign_coords(lat2=("station", ds["lat"].values + 1, dict(ds["lat"].attrs)))


def _grid_relative() -> xr.Dataset:
    ds = grid_dataset()
    ds["ua"].attrs["standard_name"] = "x_wind"
    ds["va"].attrs["standard_name"] = "y_wind"
    return ds


def _different_dims() -> xr.Dataset:
    ds = station_dataset()
    return ds.assign(v=ds["v"].isel(depth=0, drop=True))


def _no_velocity() -> xr.Dataset:
    return station_dataset().drop_vars(["u", "v"])


def _only_eastward() -> xr.Dataset:
    return station_dataset().drop_vars("v")


def _text_velocity() -> xr.Dataset:
    ds = trajectory_dataset()
    return ds.assign(u=("time", np.array(["fast"] * ds.sizes["time"]), ds["u"].attrs))


def _inertial() -> xr.Dataset:
    return to_inertial(station_dataset())


def _cartesian() -> xr.Dataset:

    return to_inertial(trajectory_dataset(), basis="cartesian")


def _cartesian_with(**attrs) -> Callable[[], xr.Dataset]:
    def build() -> xr.Dataset:
        ds = _cartesian()
        for key, value in attrs.items():
            var, attr = key.split("__")
            ds[var].attrs[attr] = value
        return ds

    return build


def _cartesian_two_components() -> xr.Dataset:
    return _cartesian().isel(component=slice(0, 2))


def _cartesian_no_position() -> xr.Dataset:
    return _cartesian().drop_vars("position")


def _empty_time(ds_builder) -> Callable[[], xr.Dataset]:
    return lambda: ds_builder().isel(time=slice(0, 0))


# --- the catalogue ---------------------------------------------------------------------------
CASES = [
    # latitude (CF 1.11 §4.1)
    Case("lat_95", "latitude 95°", CONVERT, lambda: _lat([10, 95, -20]),
         UnsupportedInputError, "lat", "outside -90..90"),
    Case("lat_120", "latitude 120°", TERMS, lambda: _lat([10, 120, -20]),
         UnsupportedInputError, "lat", "outside -90..90"),
    Case("lat_minus_180", "latitude -180°", CARTESIAN, lambda: _lat([-180, 0, 10]),
         UnsupportedInputError, "lat", "outside -90..90"),
    Case("lat_radians", "latitude in radians (0.3 rad)", CONVERT,
         lambda: _lat([0.3, 0.1, -0.2], "radians"), UnitsError, "lat", "np.rad2deg"),
    Case("lat_radians_terms", "latitude in radians, terms", TERMS,
         lambda: _lat([0.3, 0.1, -0.2], "rad"), UnitsError, "lat", "degrees"),
    Case("lat_nan", "latitude NaN", CONVERT, lambda: _lat([10, np.nan, 20]),
         MissingInputError, "lat", "missing or infinite"),
    Case("lat_fill", "latitude holding its _FillValue", TERMS, _lat_fill,
         MissingInputError, "lat", "missing or infinite"),
    Case("lat_inf", "latitude infinite", CARTESIAN, lambda: _lat([10, np.inf, 20]),
         MissingInputError, "lat", "missing or infinite"),
    Case("lat_no_units", "latitude without units", CONVERT, lambda: _lat_attrs(units=None),
         UnitsError, "lat", "has no units"),
    Case("lat_metres", "latitude in metres", CONVERT,
         lambda: _lat([10, 20, 30], "m", standard_name="latitude"), UnitsError, "lat",
         "not an angle"),
    Case("lat_east_units", "latitude with degrees_east", CONVERT,
         lambda: _lat([10, 20, 30], "degrees_east", standard_name="latitude"), UnitsError,
         "lat", "longitude units"),
    Case("lat_text", "latitude stored as text", CONVERT,
         lambda: _lat(np.array(["10N", "20N", "30N"])), InputTypeError, "lat",
         "expected numbers"),
    Case("no_latitude", "no latitude at all", CONVERT,
         lambda: station_dataset().drop_vars("lat"), MissingInputError, "latitude",
         "no latitude found"),
    Case("two_latitudes", "two latitude coordinates", CONVERT, _two_latitudes,
         UnsupportedInputError, "u", "more than one latitude"),
    Case("rotated_only", "rotated-pole grid without true latitude", CONVERT, _rotated_only,
         MissingInputError, "latitude", "rotated-pole"),
    # longitude (CF 1.11 §4.2)
    Case("lon_nan", "longitude NaN", CARTESIAN, lambda: _lon([10, np.nan, 0]),
         MissingInputError, "lon", "missing or infinite"),
    Case("lon_inf", "longitude infinite", CARTESIAN, lambda: _lon([10, np.inf, 0]),
         MissingInputError, "lon", "missing or infinite"),
    Case("lon_radians", "longitude in radians", CARTESIAN, lambda: _lon([1, 2, 3], "radian"),
         UnitsError, "lon", "np.rad2deg"),
    Case("lon_north_units", "longitude with degrees_north", CARTESIAN,
         lambda: _lon([1, 2, 3], "degrees_north").assign_coords(
             lon=lambda d: d["lon"].assign_attrs(standard_name="longitude")),
         UnitsError, "lon", "latitude units"),
    # heights (CF 1.11 §4.3; WGS 84)
    Case("alt_below_centre", "altitude -7000 km", CONVERT, lambda: _traj(alt=np.full(6, -7e6)),
         UnsupportedInputError, "alt", "body's centre"),
    Case("alt_below_centre_terms", "altitude -1e7 m, terms", TERMS,
         lambda: _traj(alt=np.full(6, -1e7)), UnsupportedInputError, "alt", "body's centre"),
    Case("alt_nan", "altitude NaN", CARTESIAN,
         lambda: _traj(alt=[1.0, np.nan, 2, 3, 4, 5]), MissingInputError, "alt",
         "missing or infinite height"),
    Case("alt_kelvin", "altitude in K", CONVERT,
         lambda: _attr(_traj(), "alt", units="K"), UnitsError, "alt", "length"),
    Case("depth_kelvin", "depth in K", CONVERT,
         lambda: _attr(station_dataset(), "depth", units="K"), UnitsError, "depth", "length"),
    Case("pressure_only", "pressure levels without heights", CONVERT, _pressure_only,
         UnsupportedInputError, "z", "pressure"),
    # time (CF 1.11 §4.4)
    Case("time_nat", "a missing time, Cartesian", CARTESIAN, _nat_time, MissingInputError,
         "time", "missing times"),
    Case("time_noleap", "noleap calendar, Cartesian", CARTESIAN, lambda: _model_times("noleap"),
         UnsupportedInputError, "time", "model calendar"),
    Case("time_360_day", "360_day calendar, Cartesian", CARTESIAN,
         lambda: _model_times("360_day"), UnsupportedInputError, "time", "model calendar"),
    Case("time_all_leap", "all_leap calendar, Cartesian", CARTESIAN,
         lambda: _model_times("all_leap"), UnsupportedInputError, "time", "model calendar"),
    Case("time_none", "no time, Cartesian", CARTESIAN,
         lambda: station_dataset().drop_vars("time"), MissingInputError, "time", "time"),
    # velocity
    Case("vel_no_units", "velocity without units", CONVERT,
         lambda: _attr(station_dataset(), "u", units=None), UnitsError, "u", "units"),
    Case("vel_kelvin", "velocity in K", TERMS,
         lambda: _attr(station_dataset(), "u", units="K"), UnitsError, "u", "speed"),
    Case("vel_code_units", "code as unit text", CONVERT,
         lambda: _attr(station_dataset(), "u", units="__import__('os').getcwd()"),
         UnitsError, "u", "units"),
    Case("vel_malformed_units", "malformed unit text", CONVERT,
         lambda: _attr(station_dataset(), "u", units="m s-1)"), UnitsError, "u", "units"),
    Case("vel_assert_units", "unit text the unit library chokes on", CONVERT,
         lambda: _attr(station_dataset(), "u", units="m**"), UnitsError, "u", "units"),
    Case("vel_empty_units", "empty unit text", TERMS,
         lambda: _attr(station_dataset(), "v", units=" "), UnitsError, "v", "units"),
    Case("vel_text", "velocity stored as text", CONVERT, _text_velocity, InputTypeError, "u",
         "numbers"),
    Case("no_velocity", "no velocity", CONVERT, _no_velocity, MissingInputError, "velocity",
         "no eastward/northward"),
    Case("only_eastward", "eastward without northward", TERMS, _only_eastward,
         MissingInputError, "velocity", "northward"),
    Case("grid_relative", "grid-relative x_wind/y_wind", CONVERT, _grid_relative,
         UnsupportedInputError, "ua", "grid-relative"),
    Case("different_dims", "components on different dimensions", CONVERT, _different_dims,
         UnsupportedInputError, "u", "share their dimensions"),
    Case("already_inertial", "inertial velocities to inertial", CONVERT, _inertial,
         FrameError, "u", "already relative to the inertial"),
    Case("terms_of_inertial", "terms of inertial velocities", TERMS, _inertial, FrameError,
         "u", "rotating frame"),
    Case("rotating_to_rotating", "Earth-relative velocities to rotating", ROTATING,
         station_dataset, FrameError, "u", "already relative to the rotating"),
    # Cartesian files back to the rotating frame
    Case("back_no_position", "velocity without position", BACK, _cartesian_no_position,
         MissingInputError, "position", "position"),
    Case("back_two_components", "component of length 2", BACK, _cartesian_two_components,
         MissingInputError, "position", "length 3"),
    Case("back_bad_json", "malformed JSON attribute", BACK,
         _cartesian_with(velocity__rotating_frame_variables="{not json"), UnitsError,
         "velocity", "rotating_frame_variables"),
    Case("back_json_not_object", "JSON attribute of the wrong shape", BACK,
         _cartesian_with(velocity__rotating_frame_variables="[1, 2]"), UnitsError,
         "velocity", "rotating_frame_variables"),
    Case("back_frame_rotating", "Cartesian velocity marked rotating", BACK,
         _cartesian_with(velocity__reference_frame="rotating"), FrameError, "velocity",
         "already relative to the rotating"),
    Case("back_axes_gcrs", "GCRS axes converted as CIRS", (*BACK, "--celestial", "cirs"),
         _cartesian_with(velocity__inertial_axes="GCRS", position__inertial_axes="GCRS"),
         ConventionError, "celestial", "GCRS"),
    Case("back_position_kelvin", "position in K", BACK, _cartesian_with(position__units="K"),
         UnitsError, "position", "length"),
    # files that are not NetCDF
    Case("not_netcdf", "a text file named .nc", CONVERT, None, UnsupportedInputError, None,
         "not a NetCDF file", raw=b"station,u,v\n1,2,3\n"),
    Case("empty_file", "an empty file", TERMS, None, UnsupportedInputError, None,
         "not a NetCDF file", raw=b""),
]

OPTION_CASES = [
    ("velocity_sideways", ["convert", "--velocity", "sideways=U,northward=V"],
     "unknown component"),
    ("terms_bogus", ["terms", "--terms", "bogus"], "unknown term(s) bogus"),
    ("height_nan", ["convert", "--height", "nan"], "not a finite height"),
    ("height_below_centre", ["terms", "--height=-7e6"], "above the Earth's centre"),
    ("dut1_nan", ["convert", "--dut1", "nan"], "dut1"),
    ("combined_name_outside", ["convert", "--combine", "--combined-name", "../x.nc"],
     "plain file name"),
    ("workers_zero", ["convert", "--workers", "0"], "at least 1"),
]

INTERNAL = re.compile(r"^[A-Z]\w*(Error|Exception|Interrupt)\b|__loopdim|Traceback")


def test_zero_time_records_give_an_empty_output_not_a_crash(tmp_path, capsys):
    # the ZeroDivisionError / "__loopdim" case: nothing to convert is not an error
    folder = tmp_path / "in"
    folder.mkdir()
    _empty_time(trajectory_dataset)().to_netcdf(folder / "empty.nc")
    assert cli.main(["convert", str(folder), "--out", str(tmp_path / "cart"),
                     "--basis", "cartesian", "--quiet"]) == 0
    assert cli.main(["convert", str(tmp_path / "cart"), "--out", str(tmp_path / "back"),
                     "--to", "rotating", "--basis", "cartesian", "--quiet"]) == 0
    with xr.open_dataset(tmp_path / "back" / "empty.nc") as back:
        assert back.sizes["time"] == 0 and back["u"].attrs["reference_frame"] == "rotating"
    assert "Traceback" not in capsys.readouterr().err


@pytest.mark.parametrize("key", ["lat_95", "lat_nan", "lat_radians", "alt_below_centre",
                                 "lon_nan"])
def test_inspect_no_longer_reports_bad_positions_as_ok(key, tmp_path, capsys):
    import json

    case = next(c for c in CASES if c.key == key)
    path = _write(case, tmp_path)
    assert cli.main(["inspect", str(path), "--json"]) == 0
    (report,) = json.loads(capsys.readouterr().out)
    verdict = report["operations"]["convert --to inertial --basis local"]
    assert verdict.startswith("refused") and case.words in verdict, verdict


def test_the_catalogue_is_large_and_keys_are_unique():
    keys = [c.key for c in CASES] + [k for k, _, _ in OPTION_CASES]
    assert len(keys) == len(set(keys))
    assert len(keys) >= 45


def _write(case: Case, folder: Path) -> Path:
    path = folder / f"{case.key}.nc"
    if case.raw is not None:
        path.write_bytes(case.raw)
    else:
        from frameshift.io import encode_labels

        encode_labels(case.build()).to_netcdf(path)
    return path


@pytest.mark.parametrize("case", [c for c in CASES if c.build is not None], ids=lambda c: c.key)
def test_library_raises_the_listed_error(case):
    # in memory (the command-line test below runs the same cases from files, lazily)
    ds = case.build()
    op = _operation(case.command)
    with pytest.raises(case.error) as info:
        op.apply(ds).compute()
    assert info.value.variable == case.variable, str(info.value)
    assert case.words in str(info.value)


def _operation(command: tuple[str, ...]) -> batch.Operation:
    args = cli.build_parser().parse_args([command[0], "x.nc", "--out", "o", *command[1:]])
    if args.command == "terms":
        return batch.terms_operation()
    # as the command line does: with no --basis, local into the inertial frame, and the
    # file's own basis on the way back
    basis = args.basis or ("local" if args.to == "inertial" else "auto")
    return batch.convert_operation(args.to, basis=basis)


@pytest.mark.parametrize("command", sorted({c.command for c in CASES}), ids=" ".join)
def test_command_line_fails_each_file_alone_with_one_clear_line(command, tmp_path, capsys):
    cases = [c for c in CASES if c.command == command]
    folder = tmp_path / "in"
    folder.mkdir()
    for case in cases:
        _write(case, folder)
    status = cli.main([command[0], str(folder), "--out", str(tmp_path / "out"), *command[1:]])
    err = capsys.readouterr().err
    assert status == 1
    assert "Traceback" not in err
    failed = {}
    for line in err.splitlines():
        match = re.match(
            r"FAILED (\S+?\.nc)(?: \((?:variable '([^']*)'|option --([\w-]+))\))?: (.*)$", line
        )
        if match:
            failed[Path(match[1]).stem] = (match[2] or match[3], match[4])
    for case in cases:
        assert case.key in failed, (case.key, err)
        variable, reason = failed[case.key]
        assert case.words in reason, (case.key, reason)
        assert not INTERNAL.search(reason), (case.key, reason)
        if case.variable is not None:
            assert variable == case.variable, (case.key, variable, reason)
    out = tmp_path / "out"
    assert not out.exists() or not list(out.rglob("*.nc"))


@pytest.mark.parametrize(("key", "argv", "words"), OPTION_CASES,
                         ids=[k for k, _, _ in OPTION_CASES])
def test_bad_options_exit_2_before_any_file(key, argv, words, tmp_path, capsys, monkeypatch):
    from frameshift import io

    def refuse(*args, **kwargs):
        raise AssertionError("a file was opened")

    monkeypatch.setattr(io, "open_input", refuse)
    src = Path(__file__).resolve().parent.parent / "data_demo" / "tiny_example.nc"
    try:
        status = cli.main([argv[0], str(src), "--out", str(tmp_path / "out"), *argv[1:]])
    except SystemExit as exc:  # refused by the option parser itself (usage, then the error)
        status = exc.code
    err = capsys.readouterr().err
    errors = [line for line in err.strip().splitlines() if "error" in line]
    assert status == 2 and words in err and len(errors) == 1, err
    assert not (tmp_path / "out").exists()
