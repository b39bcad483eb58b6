"""``frameshift momentum`` on files: same numbers as the function, safe outputs, refusals."""

from __future__ import annotations

import numpy as np
import xarray as xr

import frameshift
from frameshift.cli import main
from tests.diagnostics.data import grid, times

PLEV = np.array([100000.0, 70000.0, 40000.0, 10000.0])


def write_archive(path, ntime=4):
    lat = np.linspace(-88.0, 88.0, 23)
    lon = np.arange(0.0, 360.0, 15.0)
    rng = np.random.default_rng(4)
    shape = (ntime, PLEV.size, lat.size, lon.size)
    ds = grid(rng.normal(10, 6, shape).astype("f4"), rng.normal(0, 4, shape).astype("f4"), lat,
              lon, dims=("time", "plev", "lat", "lon"), coords={
                  "time": ("time", times(ntime, 360.0)),
                  "plev": ("plev", PLEV, {"standard_name": "air_pressure", "units": "Pa",
                                          "axis": "Z", "positive": "down"})})
    ds["ps"] = (("time", "lat", "lon"), rng.normal(98000.0, 1500.0, shape[:1] + shape[2:]),
                {"standard_name": "surface_air_pressure", "units": "Pa"})
    ds.to_netcdf(path)
    return ds


def test_momentum_command_writes_the_series(tmp_path, capsys):
    src = tmp_path / "in" / "winds.nc"
    src.parent.mkdir()
    ds = write_archive(src)
    code = main(["momentum", str(src), "--out", str(tmp_path / "out"), "--surface-pressure",
                 "ps", "--excitation", "--quiet"])
    assert code == 0
    with xr.open_dataset(tmp_path / "out" / "winds.nc") as out:
        direct = frameshift.integrate_angular_momentum(ds, surface_pressure="ps")
        chi = frameshift.excitation(ds, surface_pressure="ps")
        np.testing.assert_allclose(out.angular_momentum_relative.values,
                                   direct.angular_momentum_relative.values, rtol=1e-12)
        np.testing.assert_allclose(out.length_of_day_change.values,
                                   chi.length_of_day_change.values, rtol=1e-12)
        for name in ("angular_momentum_frame", "angular_momentum_absolute", "mass"):
            np.testing.assert_allclose(out[name].values, direct[name].values, rtol=1e-12)
        assert "ua" not in out and "u" not in out  # the winds are not copied along
        assert "frameshift momentum" in out.attrs["history"]
        assert out.length_of_day_change.attrs["units"] == "ms"


def test_momentum_command_refusals(tmp_path, capsys):
    src = tmp_path / "winds.nc"
    write_archive(src, ntime=1)
    out = tmp_path / "out"
    code = main(["momentum", str(src), "--out", str(out), "--density", "1.2", "--quiet"])
    assert code == 1
    assert "density= is not used on pressure levels" in capsys.readouterr().err
    assert not (out / "winds.nc").exists()
    code = main(["momentum", str(src), "--out", str(out), "--over", "latitude", "--excitation"])
    assert code == 2
    assert "--excitation needs the global integrals" in capsys.readouterr().err
