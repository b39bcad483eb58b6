"""``frameshift momentum`` on files: same numbers as the function, safe outputs, refusals."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.cli import main
from tests.diagnostics.data import grid, times
from tests.test_io import assert_cf_clean

DEMO_WINDS = Path(__file__).resolve().parents[2] / "data_demo" / "global_winds.nc"

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
        # sums over the grid are stored in float64 even from float32 winds: a float32
        # total keeps ~7 digits, less than the changes of the frame part it carries
        for name in out.data_vars:
            assert out[name].encoding["dtype"] == np.float64, name
            assert "sum over many points" in out[name].attrs["storage_precision"], name


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


@pytest.mark.parametrize("options", [["--excitation"], ["--over", "latitude"],
                                     ["--over", "column"]], ids=["excitation", "bands", "columns"])
def test_momentum_outputs_pass_the_cf_checker(tmp_path, options):
    # IOOS compliance checker, cf:1.11: no errors and no warnings, on the invented demo winds
    code = main(["momentum", str(DEMO_WINDS), "--out", str(tmp_path), "--surface-pressure", "ps",
                 "--quiet", *options])
    assert code == 0
    assert_cf_clean(tmp_path / DEMO_WINDS.name)


DEMO_MOORING = DEMO_WINDS.with_name("shelf_mooring.nc")


def test_spectrum_operation_writes_the_function_s_numbers(tmp_path):
    # the runner writes what frameshift.rotary_spectrum returns (Gonella 1972 parts),
    # with a manifest that recognises the output as up to date on a second run
    from frameshift import batch
    from frameshift.diagnostics.command import spectrum_operation

    options = batch.RunOptions(out_dir=tmp_path, quiet=True, progress=False,
                               precision="float64")
    job = batch.Job((DEMO_MOORING,), tmp_path / "spectrum.nc")
    operation = spectrum_operation(segment="4D", band=(0.8, 1.2))
    assert batch.process(job, operation, options).status == "written"
    with xr.open_dataset(DEMO_MOORING) as ds, xr.open_dataset(job.output) as out:
        direct = frameshift.rotary_spectrum(ds, segment="4D", band=(0.8, 1.2))
        for name in ("clockwise", "counterclockwise", "inertial_band_fraction"):
            np.testing.assert_allclose(out[name].values, direct[name].values, rtol=1e-12)
        assert out.inertial_band_fraction.attrs["band"] == "0.8 1.2"
        assert "96 samples per segment" in out.clockwise.attrs["spectral_estimate"]  # 4 days
    assert batch.process(job, operation, options).status == "skipped"
    assert_cf_clean(job.output)  # IOOS compliance checker, cf:1.11
    with xr.open_dataset(DEMO_MOORING) as ds, xr.open_dataset(job.output) as out:
        assert "featureType" in ds.attrs  # a time series profile ...
        assert "featureType" not in out.attrs  # ... whose spectra are not (CF 1.11 §9)


@pytest.mark.parametrize(("options", "variable"), [
    ({"band": (0.9,)}, "band"), ({"band": ("low", "high")}, "band"),
    ({"segment": 4.5}, "segment"), ({"gaps": "fill"}, "gaps")])
def test_spectrum_operation_refuses_bad_settings(options, variable):
    from frameshift.diagnostics.command import spectrum_operation

    with pytest.raises(frameshift.ConventionError) as info:
        spectrum_operation(**options)
    assert info.value.variable == variable
