"""``frameshift earth`` end to end on real-style CF files written in the test.

Outside sources: the IOOS compliance checker's CF 1.11 suite for every file
written (``assert_cf_clean``); the CF standard name table v93 (every name written).
"""

from __future__ import annotations

import doctest
import importlib
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from frameshift.cli import main
from frameshift.errors import ConventionError
from frameshift.instruments.command import parse_pairs
from tests.helpers import cf_standard_names, written_standard_names
from tests.instruments.builders import (
    adcp_record,
    met_station,
    projected_grid,
    rotated_pole_grid,
    ship_record,
)
from tests.test_io import assert_cf_clean


def _write(ds: xr.Dataset, path: Path) -> Path:
    encoding = {n: {"_FillValue": None} for n in ds.coords}
    ds.to_netcdf(path, encoding=encoding)
    return path


@pytest.fixture(scope="module")
def files(tmp_path_factory) -> dict[str, Path]:
    root = tmp_path_factory.mktemp("earth_in")
    mag = met_station()
    mag["wdir"].attrs["north_reference"] = "magnetic"
    ship = ship_record()
    ship["time"] = ship["time"] - np.timedelta64(4 * 365, "D")  # within IGRF-14
    return {
        "station": _write(met_station(), root / "station.nc"),
        "rotated": _write(rotated_pole_grid(), root / "rotated.nc"),
        "projected": _write(projected_grid(), root / "projected.nc"),
        "magnetic": _write(mag, root / "magnetic.nc"),
        "ship": _write(ship, root / "ship.nc"),
        "adcp": _write(adcp_record(), root / "adcp.nc"),
    }


def test_earth_command_writes_clean_earth_relative_files(files, tmp_path):
    out = tmp_path / "out"
    assert main(["earth", str(files["station"]), str(files["rotated"]),
                 str(files["projected"]), "--out", str(out), "--quiet"]) == 0
    assert main(["earth", str(files["magnetic"]), "--declination", "model", "--out",
                 str(out / "mag"), "--quiet"]) == 0
    assert main(["earth", str(files["ship"]), "--relative-wind",
                 "direction=rel_wdir,speed=rel_wspd", "--zero-reference", "2.5",
                 "--out", str(out / "ship"), "--quiet"]) == 0
    assert main(["earth", str(files["adcp"]), "--platform",
                 "forward=vel_fwd,starboard=vel_stbd,up=vel_up", "--out", str(out / "adcp"),
                 "--quiet"]) == 0
    assert main(["earth", str(files["station"]), "--declination", "-12.5", "--magnetic", "wdir",
                 "--out", str(out / "named"), "--quiet"]) == 0
    with xr.open_dataset(out / "named" / "station.nc") as named, \
            xr.open_dataset(out / "station.nc") as plain:
        # a wind from magnetic d is from true d - 12.5 (declination 12.5 degrees west)
        turned = np.deg2rad(-12.5)
        u, v = plain["eastward_wind"], plain["northward_wind"]
        np.testing.assert_allclose(named["eastward_wind"], u * np.cos(turned) + v * np.sin(turned),
                                   atol=1e-9)
        assert float(named["magnetic_declination"]) == -12.5
    expected = {
        "named/station.nc": "eastward_wind",
        "station.nc": "eastward_wind", "rotated.nc": "eastward_wind",
        "projected.nc": "eastward_sea_water_velocity", "mag/magnetic.nc": "eastward_wind",
        "ship/ship.nc": "eastward_wind", "adcp/adcp.nc": "eastward_sea_water_velocity",
    }
    for rel, name in expected.items():
        path = out / rel
        with xr.open_dataset(path) as ds:
            assert name in ds
            assert written_standard_names(ds) <= cf_standard_names()
            assert "frameshift earth" in ds.attrs["history"]
        assert_cf_clean(path)  # IOOS compliance checker, cf:1.11: no errors, no warnings
    # the outputs go on to the frame change as they are
    assert main(["convert", str(out / "station.nc"), str(out / "rotated.nc"),
                 "--out", str(tmp_path / "inertial"), "--quiet"]) == 0
    assert main(["terms", str(out / "adcp" / "adcp.nc"), "--out", str(tmp_path / "terms"),
                 "--quiet"]) == 0


def test_earth_command_failures_and_bad_options(files, tmp_path, capsys):
    # a file that needs nothing fails (status 1) and names why; bad options exit 2
    plain = _write(met_station()[["tas"]], tmp_path / "plain.nc")
    assert main(["earth", str(plain), "--out", str(tmp_path / "o"), "--quiet"]) == 1
    assert "nothing to bring" in capsys.readouterr().err
    assert not (tmp_path / "o" / "plain.nc").exists()
    assert main(["earth", str(files["ship"]), "--relative-wind", "dir=x",
                 "--out", str(tmp_path / "o")]) == 2
    with pytest.raises(ConventionError, match="KEY=VARIABLE"):
        parse_pairs("forward", ("forward", "starboard"), "--platform")


@pytest.mark.parametrize("module", [
    "frameshift._kernels.instruments", "frameshift.instruments.polar",
    "frameshift.instruments.grid", "frameshift.instruments.magnetic",
    "frameshift.instruments.platform", "frameshift.instruments.command",
    "frameshift.instruments.common",
])
def test_docstring_examples_run(module):
    result = doctest.testmod(importlib.import_module(module), verbose=False)
    assert result.attempted > 0 and result.failed == 0


def test_demo_ship_record_gives_back_its_invented_true_wind():
    # data_demo/ship_met.nc stores what a bow-mounted anemometer feels; its invented true
    # wind (from 250 veering to 290 degrees over 12 h, data_demo/make_demo_data.py) comes
    # back through Smith, Bourassa & Sharp (1999) to within its 4-degree gusts
    demo = Path(__file__).resolve().parents[2] / "data_demo" / "ship_met.nc"
    from frameshift import true_wind

    with xr.open_dataset(demo) as ds:
        out = true_wind(ds, relative_direction="rel_wdir", relative_speed="rel_wspd")
        hours = (ds["time"] - ds["time"][0]).values / np.timedelta64(1, "h")
    want = 250.0 + 40.0 * hours / 12.0
    miss = (out["wind_from_direction"].values - want + 180.0) % 360.0 - 180.0
    assert abs(miss.mean()) < 1.0 and np.abs(miss).max() < 20.0
    assert 11.0 < float(out["wind_speed"][:60].mean()) < 13.0
