"""The ``frameshift`` command line, end to end on the bundled (invented) demo files.

Outside sources: the IOOS compliance checker's CF 1.11 suite for every file
the command line writes (``assert_cf_clean``), CF conventions 1.11 §2.6.2 for
``history`` and ``Conventions``.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import netCDF4
import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.cli import main, parse_velocity
from frameshift.errors import ConventionError
from tests.test_io import _fail_after, assert_cf_clean, assert_same_stored

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
WIND = "eastward=wspd_u,northward=wspd_v"
#: files with real (standard-calendar) time, which the Cartesian basis needs
TIMED = ["balloon_track.nc", "global_winds.nc", "shelf_mooring.nc", "tiny_example.nc"]


def _run(*args: str) -> int:
    return main([*map(str, args)])


@pytest.fixture(scope="module")
def runs(tmp_path_factory) -> Path:
    """Every conversion the CLI offers, once, on the demo files (about 5 s)."""
    root = tmp_path_factory.mktemp("cli")
    packed = DEMO / "packed_knots.nc"
    timed = [DEMO / n for n in TIMED]
    steps = [
        ("convert", *timed, "--out", root / "local"),
        ("convert", packed, "--velocity", WIND, "--out", root / "local"),
        ("convert", *[root / "local" / n for n in TIMED], "--to", "rotating",
         "--out", root / "local_back"),
        ("convert", root / "local" / "packed_knots.nc", "--velocity", WIND, "--to", "rotating",
         "--out", root / "local_back"),
        ("convert", *timed, "--basis", "cartesian", "--out", root / "cart"),
        ("convert", root / "cart", "--to", "rotating", "--basis", "cartesian",
         "--out", root / "cart_back"),
        ("convert", *timed[:2], "--basis", "cartesian", "--celestial", "gcrs",
         "--out", root / "gcrs"),
        ("terms", *timed, "--out", root / "terms"),
        ("terms", packed, "--velocity", WIND, "--terms", "coriolis,centrifugal",
         "--traditional", "--out", root / "terms"),
    ]
    for step in steps:
        assert _run(*step, "--quiet") == 0, step
    return root


def _round_trip_bound(var: xr.DataArray, stored: np.dtype, steps: int) -> float:
    """The README's precision bound: 2^-(24 - steps) × (|u| + Ω a) in the variable's units.

    Float32 storage rounds each value once, by at most half a step, 2^-24 relative
    (IEEE 754 binary32); ``steps`` is 1 for the local round trip, 2 for the Cartesian
    one (position and velocity both rounded). Float64 storage: the 1e-12 relative
    bound of the arithmetic itself.
    """
    omega_a = frameshift.EARTH.rotation_rate * frameshift.EARTH.equatorial_radius  # m s-1
    per_unit = frameshift.units.scale_to(frameshift.units.ureg.Unit(var.attrs["units"]), "m s-1")
    size = float(np.nanmax(np.abs(var.values))) + omega_a / per_unit
    if np.dtype(stored) == np.float32:
        return 2.0 ** -(24 - steps) * size
    return 1e-12 * size


def test_local_round_trip_restores_the_input(runs):
    for name in [*TIMED, "packed_knots.nc"]:
        with xr.open_dataset(DEMO / name) as a, xr.open_dataset(runs / "local_back" / name) as b:
            for var in a.data_vars:
                x, y = a[var].values.astype(np.float64), b[var].values.astype(np.float64)
                assert np.array_equal(np.isnan(x), np.isnan(y)), (name, var)
                if "units" not in a[var].attrs or np.array_equal(x, y, equal_nan=True):
                    continue
                # float32 (or packed int16) in: float32 out, within the stated bound
                assert b[var].encoding["dtype"] == np.float32, (name, var)
                bound = _round_trip_bound(a[var], b[var].encoding["dtype"], 1)
                assert np.nanmax(np.abs(y - x)) <= bound, (name, var)


def test_local_round_trip_keeps_untouched_variables_byte_for_byte(runs):
    # packed int16 with scale_factor/add_offset/_FillValue/missing_value and a noleap calendar
    with netCDF4.Dataset(DEMO / "packed_knots.nc") as a, \
            netCDF4.Dataset(runs / "local_back" / "packed_knots.nc") as b, \
            netCDF4.Dataset(runs / "local" / "packed_knots.nc") as mid:
        for nc in (a, b, mid):
            nc.set_auto_maskandscale(False)
        for var in ("cur_u", "cur_v", "sea_water_temperature", "time", "lat", "lon",
                    "station_name"):
            assert_same_stored(a[var], b[var])
            assert_same_stored(a[var], mid[var])
        assert b["time"].calendar == "noleap" and b["time"].units == "hours since 2004-01-01"
        # the northward wind keeps its values and packing (lossless); the eastward wind
        # got new values, so it is float, compressed and not re-packed
        np.testing.assert_array_equal(a["wspd_v"][:], mid["wspd_v"][:])
        east = mid["wspd_u"]
        # float32: the packed int16 input's precision (README, precision policy); the
        # fill attributes as the input had them, in the new type
        assert east.dtype == np.float32 and east.filters()["zlib"]
        assert east.getncattr("_FillValue") == a["wspd_u"].getncattr("_FillValue")
        assert east.getncattr("missing_value") == a["wspd_u"].getncattr("missing_value")
        assert "scale_factor" not in east.ncattrs() and "add_offset" not in east.ncattrs()
    for name in TIMED:
        with xr.open_dataset(DEMO / name) as ds:
            moved = {n for s in frameshift.detect.read_layout(ds).sets for n in s.names()}
        with netCDF4.Dataset(DEMO / name) as a, netCDF4.Dataset(runs / "local" / name) as b:
            a.set_auto_maskandscale(False)
            b.set_auto_maskandscale(False)
            for var in set(a.variables) - moved:
                assert_same_stored(a[var], b[var])


def test_cartesian_round_trip_restores_the_velocities(runs):
    for name in TIMED:
        with xr.open_dataset(DEMO / name) as a, xr.open_dataset(runs / "cart_back" / name) as b, \
                xr.open_dataset(runs / "cart" / name) as c:
            speed = max(float(np.sqrt((c[v] ** 2).sum("component")).max())
                        for v in c.data_vars if v.startswith("velocity"))
            assert speed < 520.0  # |V| + Ω a bounds the inertial speed of these winds
            for vset in frameshift.detect.read_layout(a).sets:  # every set, each converted
                for var in vset.names():
                    bound = _round_trip_bound(a[var], c["velocity"].encoding["dtype"], 2)
                    np.testing.assert_allclose(b[var].values, a[var].values, rtol=0,
                                               atol=bound, err_msg=f"{name}:{var}")
                assert b[vset.eastward].attrs["reference_frame"] == "rotating"


def test_every_written_file_passes_the_cf_checker(runs):
    written = sorted(runs.rglob("*.nc"))
    # local and back (5 files each), Cartesian and back (4 each), GCRS (2), terms (5)
    assert len(written) == 5 + 5 + 4 + 4 + 2 + 5
    for path in written:
        assert_cf_clean(path)  # IOOS compliance checker, cf:1.11: no errors, no warnings


def test_provenance(runs):
    # CF 1.11 §2.6.2: history gets one line per program run; Conventions names CF
    with xr.open_dataset(DEMO / "shelf_mooring.nc") as a, \
            xr.open_dataset(runs / "cart" / "shelf_mooring.nc") as b:
        old, new = a.attrs["history"].splitlines(), b.attrs["history"].splitlines()
        assert new[:-1] == old and len(new) == len(old) + 1
        line = new[-1]
        assert f"frameshift {frameshift.__version__}:" in line
        assert "frameshift convert" in line and "--basis cartesian" in line
        assert "to_inertial(basis='cartesian'" in line
        assert b.attrs["Conventions"] == "CF-1.11"
        assert b["velocity"].attrs["reference_frame"] == "inertial"
        assert b["velocity"].attrs["inertial_axes"] == "CIRS"
    with xr.open_dataset(runs / "gcrs" / "global_winds.nc") as g:
        assert g["velocity"].attrs["inertial_axes"] == "GCRS"
    with xr.open_dataset(runs / "local" / "tiny_example.nc") as loc:
        for var in ("eastward_wind", "northward_wind"):
            assert loc[var].attrs["reference_frame"] == "inertial"
    json.loads((runs / "local" / "tiny_example.nc.frameshift.json").read_text())


def test_terms_output(runs):
    with xr.open_dataset(runs / "terms" / "packed_knots.nc") as t:
        assert {"coriolis_eastward", "centrifugal_upward", "total_northward"} <= set(t.data_vars)
        assert "euler_eastward" not in t
        assert all(t[v].attrs["units"] == "m s-2" for v in t.data_vars)
        # --traditional: no upward Coriolis term
        assert float(np.abs(t["coriolis_upward"]).max()) == 0.0


def test_failures_give_one_line_each_and_a_nonzero_exit(tmp_path, capsys):
    anonymous = tmp_path / "in" / "anonymous.nc"  # velocities without standard names
    anonymous.parent.mkdir()
    with xr.open_dataset(DEMO / "packed_knots.nc") as ds:
        copy = ds.copy()
        for name in ("wspd_u", "wspd_v", "cur_u", "cur_v"):
            copy[name].attrs.pop("standard_name")
        copy.to_netcdf(anonymous)
    code = _run("convert", anonymous, DEMO / "tiny_example.nc", "--out", tmp_path / "o",
                "--quiet")
    assert code == 1
    err = capsys.readouterr().err.splitlines()
    failed = [line for line in err if line.startswith("FAILED")]
    assert len(failed) == 1
    assert "anonymous.nc" in failed[0] and "(option --velocity)" in failed[0]
    assert "--velocity eastward=NAME,northward=NAME" in failed[0]
    assert [p.name for p in (tmp_path / "o").rglob("*.nc")] == ["tiny_example.nc"]


def test_quiet_success_prints_nothing(tmp_path, capsys):
    assert _run("convert", DEMO / "tiny_example.nc", "--out", tmp_path, "--quiet") == 0
    out = capsys.readouterr()
    assert out.out == "" and out.err == ""
    assert _run("convert", DEMO / "tiny_example.nc", "--out", tmp_path) == 0
    assert "skipped" in capsys.readouterr().out


def test_bad_arguments_exit_2_with_a_reason(tmp_path, capsys):
    copy = tmp_path / "tiny_example.nc"
    shutil.copy(DEMO / "tiny_example.nc", copy)
    assert _run("convert", copy, "--out", tmp_path) == 2
    assert "would overwrite the input" in capsys.readouterr().err
    assert _run("convert", copy, "--out", tmp_path / "o", "--memory", "plenty") == 2
    assert "memory budget 'plenty'" in capsys.readouterr().err
    assert _run("convert", tmp_path / "absent.nc", "--out", tmp_path / "o") == 2
    with pytest.raises(SystemExit) as info:
        _run("convert", copy, "--out", tmp_path / "o", "--basis", "spherical")
    assert info.value.code == 2
    assert copy.read_bytes() == (DEMO / "tiny_example.nc").read_bytes()  # input untouched


def test_ctrl_c_exits_130_and_leaves_no_partial_file(tmp_path, monkeypatch, capsys):
    _fail_after(monkeypatch, 1, KeyboardInterrupt)
    assert _run("convert", DEMO / "shelf_mooring.nc", "--out", tmp_path, "--quiet") == 130
    assert list(tmp_path.iterdir()) == []
    assert "INTERRUPTED" in capsys.readouterr().err


def test_parse_velocity():
    assert parse_velocity("eastward=U, northward=V,upward=W") == {
        "eastward": "U", "northward": "V", "upward": "W"}
    with pytest.raises(ConventionError) as info:
        parse_velocity("U,V")
    assert info.value.variable == "velocity"


@pytest.mark.parametrize("command", ["convert", "terms", "inspect", "demo"])
def test_help_has_examples(command, capsys):
    with pytest.raises(SystemExit) as info:
        main([command, "--help"])
    assert info.value.code == 0
    assert "examples:" in capsys.readouterr().out


def test_module_and_console_script_run():
    version = f"frameshift {frameshift.__version__}"
    res = subprocess.run([sys.executable, "-m", "frameshift", "--version"],
                         capture_output=True, text=True, check=True)
    assert res.stdout.strip() == version
    script = Path(sys.executable).with_name("frameshift")
    if script.exists():  # installed with the package's console script
        res = subprocess.run([script, "--version"], capture_output=True, text=True, check=True)
        assert res.stdout.strip() == version


def test_inspect_reports_detection_and_refusals(capsys):
    assert _run("inspect", DEMO / "packed_knots.nc", DEMO / "balloon_track.nc") == 0
    text = capsys.readouterr().out
    assert "2 velocity sets" in text  # winds and currents of the buoy, each listed
    assert "eastward  wspd_u [knot]" in text and "eastward  cur_u" in text
    assert "calendar noleap" in text
    assert "convert --to inertial --basis cartesian: refused" in text
    assert "eastward  u [m s-1] eastward_wind" in text
    assert _run("inspect", DEMO / "packed_knots.nc", "--velocity", WIND, "--json") == 0
    report = json.loads(capsys.readouterr().out)[0]
    assert report["velocity"]["eastward"]["variable"] == "wspd_u"
    assert report["velocity"]["eastward"]["units"] == "knot"
    assert report["operations"]["convert --to inertial --basis local"] == "ok"
    assert "noleap" in report["operations"]["convert --to inertial --basis cartesian"]
    assert report["time"]["calendar"] == "noleap"


def test_inspect_recognises_cartesian_output(runs, capsys):
    assert _run("inspect", runs / "cart" / "shelf_mooring.nc") == 0
    text = capsys.readouterr().out
    assert "velocity [m s-1] relative to the inertial frame on CIRS x/y/z axes" in text
    assert "convert --to rotating --basis cartesian: ok" in text


# Mars: W = 176.630° + 350.891982443297° d, d in days of 86400 s (IAU WGCCRE 2015 report,
# Archinal et al. 2018, Celest. Mech. Dyn. Astr. 130:22), so Ω = 350.891982443297° / 86400 s.
MARS_OMEGA = np.deg2rad(350.891982443297) / 86400.0


def test_frame_option_names_the_body(tmp_path):
    out = tmp_path / "mars"
    assert _run("terms", DEMO / "global_winds.nc", "--terms", "coriolis", "--frame", "mars",
                "--out", out, "--quiet") == 0
    with xr.open_dataset(out / "global_winds.nc") as terms, \
            xr.open_dataset(DEMO / "global_winds.nc") as winds:
        north = terms["coriolis_northward"]
        assert "Mars" in north.attrs["reference_body"]
        f = 2 * MARS_OMEGA * np.sin(np.deg2rad(winds["lat"]))
        expected = (-f * winds["ua"]).transpose(*north.dims)
        # stored as float32 like the input: within float32 rounding of the float64 value
        np.testing.assert_allclose(north, expected, rtol=2e-7, atol=1e-12)
    assert _run("convert", DEMO / "global_winds.nc", "--frame", "earth_sphere",
                "--out", tmp_path / "sphere", "--quiet") == 0


@pytest.mark.parametrize("args, words", [
    (("terms", "--frame", "pluto"), "--frame 'pluto' is not a frame name"),
    (("convert", "--frame", "table:fast rpm"), "--frame"),
    (("momentum", "--frame", "mars", "--excitation", "--surface-pressure", "ps"),
     "--excitation is the excitation of Earth rotation"),
])
def test_frame_option_refusals_are_usage_errors(tmp_path, capsys, args, words):
    command, *rest = args
    try:  # argparse's own refusals exit; an operation's are returned: status 2 either way
        status = _run(command, DEMO / "global_winds.nc", "--out", tmp_path / "o", *rest)
    except SystemExit as info:
        status = info.code
    assert status == 2
    assert words in capsys.readouterr().err
    assert not (tmp_path / "o").exists()


def test_a_table_rate_variable_is_looked_for_in_each_file(tmp_path, capsys):
    assert _run("terms", DEMO / "global_winds.nc", "--frame", "table:spin_rate",
                "--out", tmp_path / "o") == 1
    err = capsys.readouterr().err
    assert "no variable 'spin_rate'" in err
