"""Frames by name for the batch runner, and the runner on other frames (eager and chunked)."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import batch
from frameshift.errors import ConventionError, MissingInputError
from frameshift.frames.named import frame_from_name
from tests.helpers import as_layout, eager_and_chunked, raise_if_dask_computes
from tests.lab.builders import lab_dataset

RPM = 2.0 * np.pi / 60.0  # definition of the revolution per minute, rad s-1


def test_names_give_the_frames():
    assert frame_from_name("venus") is frameshift.VENUS
    assert frame_from_name("Earth") is frameshift.EARTH
    assert frame_from_name("table:10 rpm").rotation_rate == pytest.approx(10 * RPM)
    assert frame_from_name("table-clockwise:10 rpm").rotation_rate == pytest.approx(-10 * RPM)
    for bad in ("pluto", "table:", 3):
        with pytest.raises(ConventionError):
            frame_from_name(bad)
    with pytest.raises(MissingInputError):
        frame_from_name("table:rate", lab_dataset())


@eager_and_chunked
def test_batch_operations_on_a_table_whose_rate_is_in_the_file(layout):
    # The table's rate read from the file (a spin-up series in rpm) gives the same result
    # as the frame built by hand from that series.
    ds = lab_dataset(ntime=3, step_ms=200)
    t = ds["time"]
    ds["table_rate"] = xr.DataArray(6.0 + 4.0 * (t / np.timedelta64(1, "s")), dims="time",
                                    attrs={"units": "rpm"})  # fmt: skip
    data = as_layout(ds, layout)
    op = batch.convert_operation("inertial", velocity={"x": "u", "y": "v"},
                                 frame="table:table_rate")  # fmt: skip
    terms = batch.terms_operation(velocity={"x": "u", "y": "v"}, frame="table:table_rate")
    assert op.settings["frame"] == "table:table_rate"  # plain data for the manifest
    # each operation reads the short rate series once to build its frame; the fields stay lazy
    with raise_if_dask_computes(max_computes=0 if layout == "eager" else 2):
        out = op.apply(data)
        acc = terms.apply(data)
    assert layout == "eager" or out["u"].chunks is not None
    table = frameshift.RotatingTable(ds["table_rate"].reset_coords(drop=True))
    ref = frameshift.to_inertial(ds, table, velocity={"x": "u", "y": "v"})
    np.testing.assert_allclose(out["u"], ref["u"], rtol=1e-12)
    alpha = 4.0 * RPM  # +4 rpm per second: the Euler term Ω̇ (y, -x)
    yy = ds["y"].values[:, None] / 100 + 0 * ds["x"].values
    np.testing.assert_allclose(acc["euler_x"].isel(time=1), alpha * yy, rtol=1e-9, atol=1e-15)
