"""Every unit string frameshift writes means, in UDUNITS-2, what the input meant.

Outside sources: UDUNITS-2 through cf-units (the CF conventions' unit
library); pint's definitions (through the registry frameshift reads units
with) for what an input unit text means; the IOOS compliance checker's CF 1.11
suite for every file written.
"""

from __future__ import annotations

import cf_units
import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift import io
from frameshift.units import udunits_string, ureg
from tests.helpers import as_layout, eager_and_chunked
from tests.test_io import assert_cf_clean

# input unit texts as found in files; pint reads each as a speed. 'mph' and 'kph' are
# milliphot and kilophot in UDUNITS-2, 'fps' and 'kn' are not UDUNITS-2 speeds at all.
SPEEDS = ["m s-1", "m/s", "knot", "kn", "kt", "km/h", "kph", "mph", "mile/hour", "ft/s",
          "fps", "cm s-1", "cm/s", "nmi/h", "furlong/fortnight", "meters per second"]


def _to_si_pint(text: str) -> float:
    return float(ureg.Quantity(1.0, ureg.Unit(text)).to("m/s").magnitude)


def _to_si_udunits(text: str) -> float:
    return float(cf_units.Unit(text).convert(1.0, cf_units.Unit("m s-1")))


@pytest.mark.parametrize("text", SPEEDS)
def test_udunits_string_means_what_pint_read(text):
    written = udunits_string(text)
    # parses in UDUNITS-2 and converts to m s-1 with the factor pint gives the input
    assert _to_si_udunits(written) == pytest.approx(_to_si_pint(text), rel=1e-12)


@pytest.mark.parametrize("text", ["mph", "kph", "fps"])
def test_pint_symbols_udunits_reads_otherwise_are_rewritten(text):
    # UDUNITS-2 reads 'mph' as milliphot and 'kph' as kilophot (illuminance), or not at all
    try:
        assert not cf_units.Unit(text).is_convertible(cf_units.Unit("m s-1"))
    except ValueError:
        pass  # not a UDUNITS-2 unit
    assert udunits_string(text) != text


def _station(units: str) -> xr.Dataset:
    rng = np.random.default_rng(5)
    time = np.datetime64("2030-05-01T00:00", "ns") + np.arange(4) * np.timedelta64(1, "h")
    ds = xr.Dataset(
        {"u": ("time", rng.normal(10, 3, 4), {"standard_name": "eastward_wind", "units": units}),
         "v": ("time", rng.normal(0, 3, 4), {"standard_name": "northward_wind", "units": units})},
        coords={"time": ("time", time, {"standard_name": "time"}),
                "lat": ((), 30.0, {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ((), -40.0, {"standard_name": "longitude", "units": "degrees_east"})},
        attrs={"Conventions": "CF-1.11", "title": "units test", "history": "made by the test"},
    )
    ds["time"].attrs["units_metadata"] = "leap_seconds: none"
    ds["time"].encoding = {"units": "hours since 2030-05-01", "calendar": "standard"}
    return ds


def _units_written(path) -> dict[str, str]:
    with xr.open_dataset(path, decode_times=False) as ds:
        return {str(n): v.attrs["units"] for n, v in ds.variables.items() if "units" in v.attrs}


@eager_and_chunked
@pytest.mark.parametrize("text", ["mph", "kn", "kph", "furlong/fortnight"])
def test_every_unit_written_parses_in_udunits_with_the_input_meaning(tmp_path, layout, text):
    src = as_layout(_station(text), layout)
    local = frameshift.to_inertial(src)
    back = frameshift.to_rotating(frameshift.to_inertial(src, basis="cartesian"),
                                  basis="cartesian")
    terms = frameshift.apparent_accelerations(src)
    for label, result in (("local", local), ("back", back), ("terms", terms)):
        path = tmp_path / f"{label}.nc"
        plan, _ = io.prepare_output(result, src)
        io.write_atomic(plan, path)
        for name, written in _units_written(path).items():
            unit = cf_units.Unit(written)  # UDUNITS-2 parses it (ValueError if not)
            if name in ("u", "v", "eastward_wind", "northward_wind"):
                # the input's unit kept: factor 1 between what was read and what is written
                assert _to_si_udunits(written) == pytest.approx(_to_si_pint(text), rel=1e-12)
            elif name.startswith(("coriolis", "centrifugal", "euler", "curvature", "total")):
                assert unit == cf_units.Unit("m s-2")
        if layout == "eager":  # the chunked run writes the same file
            assert_cf_clean(path)  # IOOS compliance checker, cf:1.11
