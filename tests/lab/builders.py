"""Lab (rotating-table) test Datasets: arbitrary test inputs, not reference values."""

from __future__ import annotations

import numpy as np
import xarray as xr


def lab_dataset(
    field=None,
    *,
    ntime: int = 4,
    step_ms: int = 500,
    units: str = "mm s-1",
    frame: str | None = None,
) -> xr.Dataset:
    """A PIV-like Dataset: u, v (and a dye concentration) on (time, y, x) in cm.

    ``field(x_m, y_m, t_s)`` gives (u, v) in m s-1 (default: a linear field);
    the Dataset holds them in ``units``. ``frame`` sets ``reference_frame``.
    """
    x = np.linspace(-30.0, 30.0, 13)  # cm
    y = np.linspace(25.0, -25.0, 11)  # cm, descending as image rows are
    t = np.arange(ntime) * np.timedelta64(step_ms, "ms")
    tt = (t / np.timedelta64(1, "s"))[:, None, None]
    yy, xx = np.meshgrid(y / 100, x / 100, indexing="ij")
    if field is None:
        u, v = 0.01 + 0.2 * xx - 0.05 * yy + 0 * tt, -0.02 + 0.07 * xx + 0.11 * yy + 0 * tt
    else:
        u, v = field(xx, yy, tt)
    scale = {"mm s-1": 1000.0, "m s-1": 1.0, "cm s-1": 100.0}[units]
    vattrs = {"units": units}
    if frame:
        vattrs["reference_frame"] = frame
    shape = (ntime, y.size, x.size)
    return xr.Dataset(
        {
            "u": (("time", "y", "x"), np.broadcast_to(u * scale, shape).copy(), dict(vattrs)),
            "v": (("time", "y", "x"), np.broadcast_to(v * scale, shape).copy(), dict(vattrs)),
            "dye": (
                ("time", "y", "x"),
                np.broadcast_to(1.0 + 0 * xx, shape).copy(),
                {"units": "1"},
            ),
        },
        coords={
            "time": ("time", t, {"long_name": "time since the start of the run"}),
            "y": ("y", y, {"units": "cm", "axis": "Y"}),
            "x": ("x", x, {"units": "cm", "axis": "X"}),
        },
        attrs={"title": "invented PIV test field"},
    )
