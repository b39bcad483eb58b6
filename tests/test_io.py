"""File safety: chunk sizes from a memory budget, atomic writes, manifests, CF labels.

Outside sources: CF conventions 1.11 (cited by section beside each check) and
the IOOS compliance checker's CF 1.11 suite (``cf_report`` below).
"""

from __future__ import annotations

import json
import math
import os
import stat
import tempfile
from pathlib import Path

import netCDF4
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from frameshift import io
from frameshift.errors import ConventionError, FrameshiftError

DEMO = Path(__file__).resolve().parent.parent / "data_demo"


def cf_report(path: str | os.PathLike) -> dict:
    """Run the IOOS compliance checker's CF 1.11 suite; return its JSON report.

    ``high_count`` is the number of errors, ``medium_count`` of warnings
    (compliance-checker's own priorities for the CF suite).
    """
    from compliance_checker.runner import CheckSuite, ComplianceChecker

    CheckSuite.load_all_available_checkers()
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "report.json"
        ComplianceChecker.run_checker(
            os.fspath(path), ["cf:1.11"], 0, "normal", output_filename=os.fspath(out),
            output_format="json",
        )
        report = json.loads(out.read_text())["cf:1.11"]
    report["messages"] = [
        (prio, check["name"], check["msgs"])
        for prio in ("high_priorities", "medium_priorities", "low_priorities")
        for check in report[prio] if check["msgs"]
    ]
    return report


def assert_cf_clean(path: str | os.PathLike) -> None:
    """No CF errors and no warnings from the IOOS compliance checker (cf:1.11)."""
    report = cf_report(path)
    assert report["high_count"] == 0, report["messages"]
    assert report["medium_count"] == 0, report["messages"]


# --- memory budget ---------------------------------------------------------------------
@pytest.mark.parametrize(("text", "expected"), [("2GB", 2 * 10**9), ("512MiB", 512 * 2**20),
                                                 ("1000", 1000), (4096, 4096)])
def test_parse_memory_reads_sizes(text, expected):
    # decimal and binary prefixes as dask.utils.parse_bytes defines them
    assert io.parse_memory(text) == expected


@pytest.mark.parametrize("text", ["lots", "-1GB", "0"])
def test_parse_memory_refuses_non_sizes(text):
    with pytest.raises(ConventionError) as info:
        io.parse_memory(text)
    assert info.value.variable == "memory"
    assert repr(text) in info.value.found


def _chunk_bytes(ds: xr.Dataset, chunks: dict[str, int]) -> int:
    """Largest chunk of any variable, counted as float64."""
    return max(math.prod(chunks[d] for d in v.dims) * 8 for v in ds.variables.values())


@pytest.mark.parametrize("parallel", [1, 4])
@pytest.mark.parametrize("memory", [10**6, 10**7, 10**9])
def test_chunks_respect_the_budget(memory, parallel):
    ds = xr.Dataset(
        {"u": (("time", "lev", "lat", "lon"), np.zeros((400, 10, 90, 180), np.float32)),
         "ps": (("time", "lat", "lon"), np.zeros((400, 90, 180), np.float32))},
    )
    chunks = io.choose_chunks(ds, memory, parallel=parallel)
    assert _chunk_bytes(ds, chunks) * io.WORKING_COPIES * parallel <= memory
    # outer dimensions are split first: inner ones stay whole while the budget allows
    slab = {"time": 1, "lev": 1, "lat": 90, "lon": 180}
    if _chunk_bytes(ds, slab) * io.WORKING_COPIES * parallel <= memory:
        assert chunks["lat"] == 90 and chunks["lon"] == 180
    else:
        assert chunks["time"] == chunks["lev"] == 1


@settings(max_examples=60, deadline=None)
@given(
    shape=st.lists(st.integers(1, 60), min_size=1, max_size=4),
    memory=st.integers(10**3, 10**8),
    parallel=st.integers(1, 8),
)
def test_chunks_respect_any_budget(shape, memory, parallel):
    dims = [f"d{i}" for i in range(len(shape))]
    ds = xr.Dataset({"a": (dims, np.zeros(shape, np.float32)),
                     "b": (dims[::-1], np.zeros(shape[::-1], np.float32))})
    chunks = io.choose_chunks(ds, memory, parallel=parallel)
    assert all(1 <= chunks[d] <= n for d, n in zip(dims, shape, strict=True))
    floor = 8 * io.WORKING_COPIES * parallel  # one element per chunk is the smallest possible
    assert _chunk_bytes(ds, chunks) * io.WORKING_COPIES * parallel <= max(memory, floor)


def test_chunks_keep_component_whole_and_follow_stored_chunks():
    ds = xr.Dataset({"p": (("time", "x", "component"), np.zeros((1000, 50, 3)))})
    ds["p"].encoding["chunksizes"] = (7, 50, 3)
    chunks = io.choose_chunks(ds, 8 * 3 * 50 * 100 * io.WORKING_COPIES)
    assert chunks["component"] == 3
    assert chunks["time"] % 7 == 0  # Dask chunks never cut a stored chunk
    assert chunks["time"] * 50 * 3 <= 3 * 50 * 100


def test_disk_chunks_divide_the_dask_block():
    block = (96, 17, 36, 72)
    shape = io.disk_chunks(block, 8)
    assert all(b % s == 0 for b, s in zip(block, shape, strict=True))
    assert math.prod(shape) * 8 <= io.DISK_CHUNK_BYTES
    assert io.disk_chunks((10, 10), 8) == (10, 10)


# --- atomic writes ---------------------------------------------------------------------
def _small() -> xr.Dataset:
    return xr.Dataset({"a": (("x",), np.arange(40.0))}).chunk({"x": 10})


class _Boom(RuntimeError):
    pass


def _fail_after(monkeypatch, n: int, exc: type[BaseException]) -> None:
    """Make the NetCDF writer raise on its (n+1)-th chunk write."""
    from xarray.backends import netCDF4_ as nc4

    original = nc4.NetCDF4ArrayWrapper.__setitem__
    calls = {"n": 0}

    def setitem(self, key, value):
        calls["n"] += 1
        if calls["n"] > n:
            raise exc("injected failure mid-write")
        return original(self, key, value)

    monkeypatch.setattr(nc4.NetCDF4ArrayWrapper, "__setitem__", setitem)


@pytest.mark.parametrize("exc", [_Boom, KeyboardInterrupt])
def test_failed_write_leaves_nothing(tmp_path, monkeypatch, exc):
    _fail_after(monkeypatch, 2, exc)
    target = tmp_path / "out" / "a.nc"
    with pytest.raises(exc):
        io.write_atomic(_small(), target)
    assert not target.exists()
    assert list(target.parent.iterdir()) == []  # the temporary file is gone too


def test_failed_write_keeps_the_previous_file(tmp_path, monkeypatch):
    target = tmp_path / "a.nc"
    io.write_atomic(_small(), target)
    before = target.read_bytes()
    _fail_after(monkeypatch, 1, _Boom)
    with pytest.raises(_Boom):
        io.write_atomic(_small() * 2, target)
    assert target.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["a.nc"]


def test_written_file_is_complete_and_readable_by_others(tmp_path):
    target = io.write_atomic(_small(), tmp_path / "a.nc")
    with xr.open_dataset(target) as back:
        np.testing.assert_array_equal(back["a"].values, np.arange(40.0))
    mode = stat.S_IMODE(target.stat().st_mode)
    assert mode & stat.S_IRGRP  # not the 0600 of a temporary file (under a usual umask)


# --- manifests -------------------------------------------------------------------------
def test_manifest_tracks_inputs_settings_and_output(tmp_path):
    src = tmp_path / "in.nc"
    _small().to_netcdf(src)
    out = io.write_atomic(_small(), tmp_path / "o" / "in.nc")
    io.write_manifest(out, [src], {"to": "inertial"}, command="frameshift convert")
    assert io.is_current(out, [src], {"to": "inertial"}) == (True, "up to date")
    assert io.is_current(out, [src], {"to": "rotating"})[0] is False
    record = json.loads(io.manifest_path(out).read_text())
    assert record["command"] == "frameshift convert"
    # an input touched after the output was made
    os.utime(src, ns=(out.stat().st_mtime_ns + 10**9,) * 2)
    assert io.is_current(out, [src], {"to": "inertial"}) == (False, "inputs changed since")
    io.write_manifest(out, [src], {"to": "inertial"})
    assert io.is_current(out, [src], {"to": "inertial"}) == (False, "output older than an input")
    os.utime(out, ns=(out.stat().st_mtime_ns + 2 * 10**9,) * 2)
    assert io.is_current(out, [src], {"to": "inertial"}) == (
        False, "output changed since it was written")
    io.manifest_path(out).write_text("{not json")
    assert io.is_current(out, [src], {"to": "inertial"}) == (False, "no readable manifest")


# --- what is written how ---------------------------------------------------------------
def test_untouched_packed_variables_are_copied_as_stored(tmp_path):
    ds, raw = io.open_input(DEMO / "packed_knots.nc", memory=10**6)
    with ds, raw:
        result = ds.assign(speed=np.hypot(ds["wspd_u"], ds["wspd_v"]).assign_attrs(units="knot"))
        to_write, how = io.prepare_output(result, ds, raw)
        io.write_atomic(to_write, tmp_path / "p.nc")
    assert how["speed"] == "computed"
    assert {how[n] for n in ("wspd_u", "sea_water_temperature", "time", "station_name")} == {
        "copied"}
    with netCDF4.Dataset(DEMO / "packed_knots.nc") as a, netCDF4.Dataset(tmp_path / "p.nc") as b:
        a.set_auto_maskandscale(False)
        b.set_auto_maskandscale(False)
        for name in ("wspd_u", "cur_v", "sea_water_temperature", "time", "station_name"):
            assert_same_stored(a[name], b[name])
        new = b["speed"]
        assert new.dtype.kind == "f"  # computed values: float, not the input's int16
        assert "scale_factor" not in new.ncattrs() and new.filters()["zlib"]
        for name in ("time", "lat", "lon"):  # CF 2.5.1: no missing data in coordinates
            assert "_FillValue" not in b[name].ncattrs()
    assert_cf_clean(tmp_path / "p.nc")


def assert_same_stored(a: netCDF4.Variable, b: netCDF4.Variable) -> None:
    """Same dtype, raw (undecoded) values, attributes and storage filters."""
    assert a.dtype == b.dtype, a.name
    assert a.dimensions == b.dimensions, a.name
    np.testing.assert_array_equal(np.asarray(a[:]), np.asarray(b[:]), err_msg=a.name)
    assert sorted(a.ncattrs()) == sorted(b.ncattrs()), a.name
    for key in a.ncattrs():
        np.testing.assert_array_equal(a.getncattr(key), b.getncattr(key), err_msg=f"{a.name}:{key}")
    assert a.filters() == b.filters(), a.name


@pytest.mark.parametrize("order", [("time", "component"), ("component", "time")])
def test_component_labels_round_trip_and_pass_cf(tmp_path, order):
    shape = tuple(4 if d == "time" else 3 for d in order)
    ds = xr.Dataset(
        {"p": (order, np.ones(shape), {"long_name": "position", "units": "m"})},
        coords={"time": ("time", np.arange(4.0), {"standard_name": "time",
                                                  "units": "s since 2030-01-01"}),
                "component": ("component", ["x", "y", "z"], {"long_name": "Cartesian axis"})},
        attrs={"Conventions": "CF-1.11", "title": "labels test",
               "history": "made by the test"},
    )
    ds["time"].attrs.update(calendar="standard", units_metadata="leap_seconds: none")
    to_write, how = io.prepare_output(ds, xr.Dataset())
    assert how["component"] == "computed"
    io.write_atomic(to_write, tmp_path / "c.nc")
    with netCDF4.Dataset(tmp_path / "c.nc") as nc:
        # the axis names as a char coordinate variable any netCDF reader decodes (NUG, CF 2.2)
        assert nc["component"].dtype == np.dtype("S1")
        assert nc["component"].dimensions == ("component", "component_strlen")
        assert "_FillValue" not in nc["component"].ncattrs()  # CF 2.5.1
        # CF 2.4: extra dimensions left of the space-time ones
        assert nc["p"].dimensions == ("component", "time")
    assert_cf_clean(tmp_path / "c.nc")
    # plain xarray, no frameshift: labelled, same order as in memory
    with xr.open_dataset(tmp_path / "c.nc") as back:
        assert back["component"].values.tolist() == ["x", "y", "z"]
        assert back["p"].dims == ("component", "time")
        assert back["p"].sel(component="y").dims == ("time",)


def test_files_of_earlier_versions_get_their_labels_back():
    old = xr.Dataset({"p": (("component", "t"), np.ones((3, 2)))},
                     coords={"component_label": ("component", np.array([b"x", b"y", b"z"]))})
    back = io.decode_labels(old)
    assert back["component"].values.tolist() == ["x", "y", "z"]
    assert "component_label" not in back.variables


def test_open_input_is_lazy_and_chunked_from_budget():
    ds, raw = io.open_input(DEMO / "global_winds.nc", memory=10**6, parallel=2)
    with ds, raw:
        assert ds["ua"].chunks is not None and raw["ua"].chunks is not None
        chunk = math.prod(c[0] for c in ds["ua"].chunks) * 8
        assert chunk * io.WORKING_COPIES * 2 <= 10**6
        assert raw["ua"].dtype == ds["ua"].dtype  # float32 in the file, not packed


def test_errors_are_frameshift_errors():
    with pytest.raises(FrameshiftError):
        io.parse_memory("much")
