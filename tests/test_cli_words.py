"""The command line speaks command line: options in messages, usage errors, settings kept.

Outside sources: POSIX utility conventions as argparse implements them (exit
status 2 for a usage error, common practice), the IOOS compliance checker's
CF 1.11 suite for the files written here.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import xarray as xr

from frameshift.cli import cli_wording, main
from tests.test_io import assert_cf_clean

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
TINY = DEMO / "tiny_example.nc"


def _run(*args) -> int:
    return main([*map(str, args)])


@pytest.mark.parametrize(("args", "named"), [
    (("convert", TINY, "--celestial", "gcrs"), "--celestial"),
    (("convert", TINY, "--dut1", "0.2", "--basis", "local"), "--dut1"),
    (("convert", TINY, "--combined-name", "x.nc"), "--combined-name"),
    (("convert", TINY, "--workers", "2", "--scheduler", "tcp://h:1"), "--scheduler"),
    (("convert", TINY, "--to", "rotating", "--basis", "cartesian", "--height", "10"),
     "--height"),
    (("convert", TINY, "--to", "rotating", "--basis", "cartesian", "--velocity",
      "eastward=a,northward=b"), "--velocity"),
    (("terms", TINY, "--terms", "centrifugal", "--traditional"), "--traditional"),
    (("terms", TINY, "--terms", "coriolis,spin"), "coriolis, centrifugal, euler, curvature"),
    (("convert", TINY, "--precision", "half"), "'input', 'float64'"),
    (("convert", TINY, "--basis", "cartesian", "--dut1", "1.5"), "--dut1 1.5"),
])
def test_useless_or_bad_options_are_usage_errors(tmp_path, capsys, args, named):
    with pytest.raises(SystemExit) as info:
        _run(*args, "--out", tmp_path / "o")
    assert info.value.code == 2
    err = capsys.readouterr().err
    assert named in err and "usage: frameshift" in err
    assert not (tmp_path / "o").exists()  # nothing opened, nothing written


@pytest.mark.parametrize(("command", "listed"), [
    ("terms", ["coriolis, centrifugal, euler, curvature", "without-centrifugal",
               "--keep-input", "2 Omega cos(lat)"]),
    ("convert", ["{input,float64}", "{netcdf,zarr}", "{cirs,gcrs}", "[-1, 1]"]),
])
def test_help_lists_valid_values(capsys, command, listed):
    with pytest.raises(SystemExit):
        _run(command, "--help")
    text = " ".join(capsys.readouterr().out.split())
    for words in listed:
        assert words in text, words


def test_messages_name_options_not_python(tmp_path, capsys):
    anonymous = tmp_path / "in" / "anonymous.nc"  # velocities without standard names
    anonymous.parent.mkdir()
    with xr.open_dataset(DEMO / "packed_knots.nc") as ds:
        copy = ds.copy()
        for name in ("wspd_u", "wspd_v", "cur_u", "cur_v"):
            copy[name].attrs.pop("standard_name")
        copy.to_netcdf(anonymous)
    assert _run("convert", anonymous, "--out", tmp_path / "o", "--quiet") == 1
    err = capsys.readouterr().err
    assert "(option --velocity)" in err and "--velocity eastward=NAME,northward=NAME" in err
    assert "velocity={" not in err and "(variable 'velocity')" not in err
    assert _run("terms", TINY, "--out", tmp_path / "t", "--height", "nowhere", "--quiet") == 1
    err = capsys.readouterr().err
    assert "--height 'nowhere' names no variable" in err and "height=" not in err


def test_wording_of_library_hints():
    assert cli_wording("Convert it back with frameshift.to_rotating first") == (
        "Convert it back with 'frameshift convert --to rotating' first")
    assert cli_wording("use basis='local', which needs no time") == (
        "use --basis local, which needs no time")
    assert cli_wording("pass height= (a number in m)") == "give --height (a number in m)"


def test_cartesian_file_converts_back_as_it_says(tmp_path, capsys):
    # GCRS axes and dut1 are read from the file: no --basis, --celestial or --dut1 again
    cart = tmp_path / "cart"
    assert _run("convert", TINY, "--basis", "cartesian", "--celestial", "gcrs", "--dut1", "0.3",
                "--out", cart, "--quiet") == 0
    with xr.open_dataset(cart / "tiny_example.nc") as ds:
        # every setting that changed the numbers is an attribute of the outputs
        for name in ("position", "velocity"):
            assert ds[name].attrs["inertial_axes"] == "GCRS"
            assert ds[name].attrs["ut1_minus_utc_seconds"] == 0.3
            assert "float32" in ds[name].attrs["storage_precision"]
    assert_cf_clean(cart / "tiny_example.nc")  # IOOS compliance checker, cf:1.11
    assert _run("inspect", cart / "tiny_example.nc", "--json") == 0
    report = json.loads(capsys.readouterr().out)[0]
    assert report["operations"]["convert --to rotating --basis cartesian"] == "ok"
    assert _run("convert", cart / "tiny_example.nc", "--to", "rotating", "--out",
                tmp_path / "back", "--quiet") == 0
    with xr.open_dataset(TINY) as a, xr.open_dataset(tmp_path / "back" / "tiny_example.nc") as b:
        # float32 storage, two roundings (README bound with Ω a = 465.1 m s-1, WGS 84);
        # a wrong dut1 or wrong axes would miss by metres per second
        bound = 2.0**-22 * (float(abs(a["eastward_wind"]).max()) + 465.1011)
        assert float(abs(a["eastward_wind"] - b["eastward_wind"]).max()) <= bound
    assert_cf_clean(tmp_path / "back" / "tiny_example.nc")  # IOOS checker, cf:1.11


def test_inspect_takes_the_options_that_decide(tmp_path, capsys):
    assert _run("inspect", DEMO / "packed_knots.nc", "--velocity",
                "eastward=wspd_u,northward=wspd_v", "--height", "4", "--json") == 0
    report = json.loads(capsys.readouterr().out)[0]
    assert report["operations"]["convert --to inertial --basis local"] == "ok"
    assert report["operations"]["terms"] == "ok"
    assert any("given by the caller (--height)" in note for note in report["notes"])
    # a coordinate option decides too, and its refusal names it
    assert _run("inspect", DEMO / "shelf_mooring.nc", "--latitude", "nosuch", "--json") == 0
    report = json.loads(capsys.readouterr().out)[0]
    assert "--latitude 'nosuch' names no variable" in report["operations"]["terms"]
    assert _run("inspect", tmp_path / "nothing.nc") == 2  # a missing input: usage error
    assert "matches no file" in capsys.readouterr().err
    anonymous = tmp_path / "anonymous.nc"
    with xr.open_dataset(DEMO / "packed_knots.nc") as ds:
        copy = ds.copy()
        for name in ("wspd_u", "wspd_v", "cur_u", "cur_v"):
            copy[name].attrs.pop("standard_name")
        copy.to_netcdf(anonymous)
    assert _run("inspect", anonymous) == 0
    text = capsys.readouterr().out
    assert "found found" not in text and "velocity={" not in text
    assert "--velocity eastward=NAME" in text


def test_terms_record_their_settings(tmp_path):
    assert _run("terms", TINY, "--terms", "coriolis,centrifugal", "--traditional", "--totals",
                "without-centrifugal", "--precision", "float64", "--out", tmp_path,
                "--quiet") == 0
    path = tmp_path / "tiny_example.nc"
    with xr.open_dataset(path) as ds:
        assert "total_eastward" not in ds
        part = ds["total_without_centrifugal_upward"]
        assert part.attrs["terms_included"] == "coriolis"
        assert part.attrs["traditional_approximation"] == "applied"
        assert ds["coriolis_upward"].attrs["traditional_approximation"] == "applied"
        assert "traditional_approximation" not in ds["centrifugal_upward"].attrs
        assert ds["coriolis_upward"].encoding["dtype"] == "float64"
        assert ds["coriolis_upward"].attrs["storage_precision"].startswith("float64 (as asked)")
    assert_cf_clean(path)  # IOOS compliance checker, cf:1.11


@pytest.mark.filterwarnings("default::frameshift.errors.FrameshiftWarning")  # as a user runs it
@pytest.mark.parametrize("quiet", [False, True])
def test_warnings_are_one_line_naming_the_file(tmp_path, capsys, quiet):
    # A pole row (latitude ±90°) gives NaN east components there, and says so: as a
    # line naming the input, not Python's warning with a source line, and with --quiet too
    # (common practice for command-line diagnostics: one line on stderr naming the file,
    # as in the GNU Coding Standards' "Formatting Error Messages")
    # (a failure is shown with --quiet; a warning about the data is as much the user's)
    import numpy as np

    from tests.helpers import grid_dataset

    ds = grid_dataset(nlat=3)
    ds = ds.assign_coords(lat=("lat", np.array([-90.0, 0.0, 90.0]), ds["lat"].attrs))
    path = tmp_path / "with_poles.nc"
    ds.to_netcdf(path)
    args = ["convert", path, "--out", tmp_path / "o"] + (["--quiet"] if quiet else [])
    assert _run(*args) == 0
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if line.startswith("warning:")]
    assert len(lines) == 1, err
    assert lines[0].startswith(f"warning: {path}: ") and "pole" in lines[0]
    assert ".py:" not in err and "Warning:" not in err  # no Python warning format
