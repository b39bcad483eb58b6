"""Earth-rotating <-> inertial transforms on gridded, station and trajectory Datasets."""

import numpy as np
import pyproj
import pytest
import xarray as xr

import frameshift
from frameshift import (
    EARTH,
    EARTH_SPHERE,
    FrameError,
    InputTypeError,
    MissingInputError,
    UnitsError,
    UnsupportedInputError,
)
from tests.helpers import (
    BUILDERS,
    all_kinds,
    as_layout,
    assert_udunits,
    cf_standard_names,
    eager_and_chunked,
    raise_if_dask_computes,
    written_standard_names,
)

OMEGA = 7.292115e-5  # IERS Conventions (2010) Table 1.1
_ECEF = pyproj.Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
KNOT = 1852.0 / 3600.0  # international knot, m s-1 (SI Brochure, Table 8: 1 nmi = 1852 m)


def _names(ds):
    east = next(
        n
        for n, v in ds.data_vars.items()
        if v.attrs.get("standard_name", "").startswith("eastward")
    )
    return east


def _expected_shift(ds, east):
    """Ω × distance from the axis, with the distance from pyproj's WGS 84 ECEF (EPSG:4978)."""
    lat, lon = xr.broadcast(ds["lat"], ds["lon"])
    if "z" in ds:
        h = ds["z"]
    elif "depth" in ds:
        h = -ds["depth"]
    else:
        h = ds["alt"]
    lat, lon, h = xr.broadcast(lat, lon, h)
    x, y, _ = _ECEF.transform(lon.values, lat.values, h.values)
    return xr.DataArray(OMEGA * np.hypot(x, y), dims=lat.dims).transpose(
        *[d for d in ds[east].dims if d in lat.dims]
    )


@all_kinds
@eager_and_chunked
def test_local_basis_adds_omega_times_axis_distance(kind, layout):
    ds = as_layout(BUILDERS[kind](), layout)
    before = ds.copy(deep=True)
    with raise_if_dask_computes():
        out = frameshift.to_inertial(ds)
    east = _names(before)
    unit = {"m s-1": 1.0, "cm s-1": 0.01, "knot": KNOT}[before[east].attrs["units"]]
    shift = (out[east] - before[east]).compute() * unit
    expected = _expected_shift(before, east).broadcast_like(shift.drop_vars(shift.coords))
    np.testing.assert_allclose(shift.values, expected.transpose(*shift.dims).values, atol=1e-6)
    # the input is untouched, and so is everything that is not the eastward component
    xr.testing.assert_identical(ds.compute(), before)
    for name in before.variables:
        if name != east:
            np.testing.assert_array_equal(out[name].values, before[name].values)
    for name in before.coords:
        assert out[name].attrs == before[name].attrs
    assert out[east].dims == before[east].dims
    assert out[east].attrs["units"] == before[east].attrs["units"]


@eager_and_chunked
def test_shift_at_45n_sea_level_is_omega_times_4517590_879(layout):
    # WGS 84: N cos φ at 45° N, 0 m = 4517590.879 m (computed from the defining constants)
    ds = xr.Dataset(
        {
            "u": ("p", [0.0], {"standard_name": "eastward_wind", "units": "m s-1"}),
            "v": ("p", [0.0], {"standard_name": "northward_wind", "units": "m s-1"}),
        },
        coords={
            "lat": ("p", [45.0], {"units": "degrees_north"}),
            "lon": ("p", [7.0], {"units": "degrees_east"}),
        },
    )
    ds = as_layout(ds, layout)
    out = frameshift.to_inertial(ds)
    assert float(out["u"][0]) == pytest.approx(OMEGA * 4517590.879, abs=OMEGA * 1e-3)  # 1 mm
    # on the IUGG mean sphere: Ω R1 cos 45° (Moritz 1980, R1 = 6371008.7714 m)
    sph = frameshift.to_inertial(ds, EARTH_SPHERE)
    assert float(sph["u"][0]) == pytest.approx(OMEGA * 6371008.7714 * np.cos(np.pi / 4), rel=1e-13)


@eager_and_chunked
def test_local_metadata_and_round_trip(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    out = frameshift.to_inertial(ds)
    for name in ("ua", "va", "wa"):
        attrs = out[name].attrs
        assert "standard_name" not in attrs  # eastward_wind means relative to the Earth
        assert attrs["reference_frame"] == "inertial"
        assert attrs["reference_body"] == EARTH.name
        assert "inertial" in attrs["long_name"]
        assert_udunits(attrs["units"])
    assert out["ua"].attrs["cell_methods"] == "time: mean"
    assert written_standard_names(out) <= cf_standard_names()
    assert out.attrs["Conventions"] == "CF-1.11"
    assert out.attrs["history"].splitlines()[-1].split(" ", 1)[1].startswith("frameshift")
    assert "to_inertial" in out.attrs["history"]
    back = frameshift.to_rotating(out)
    for name in ("ua", "va", "wa"):
        np.testing.assert_allclose(back[name].values, ds[name].values, rtol=1e-12, atol=1e-12)
        assert back[name].attrs["standard_name"] == ds[name].attrs["standard_name"]
        assert back[name].attrs["reference_frame"] == "rotating"
    assert back.attrs["history"].count("\n") == 1


@eager_and_chunked
def test_converting_twice_or_to_the_frame_it_is_in_is_refused(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    with pytest.raises(FrameError, match="already relative to the rotating frame"):
        frameshift.to_rotating(ds)
    out = frameshift.to_inertial(ds)
    with pytest.raises(FrameError, match="already relative to the inertial frame") as info:
        frameshift.to_inertial(out)
    assert info.value.variable == "ua"


@eager_and_chunked
@pytest.mark.parametrize("units", ["knot", "cm s-1", "km h-1", "m/s"])
def test_any_speed_unit_is_accepted_and_kept(units, layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    factor = float(frameshift.units.ureg.Quantity(1.0, "m/s").to(units).magnitude)
    for name in ("ua", "va", "wa"):
        ds[name] = ds[name] * factor
        ds[name].attrs.update(BUILDERS["grid"]()[name].attrs, units=units)
    ref = frameshift.to_inertial(as_layout(BUILDERS["grid"](), layout))
    out = frameshift.to_inertial(ds)
    np.testing.assert_allclose(out["ua"].values / factor, ref["ua"].values, rtol=1e-13)
    assert_udunits(out["ua"].attrs["units"])
    assert frameshift.units.ureg.Unit(out["ua"].attrs["units"]) == frameshift.units.ureg.Unit(units)


@pytest.mark.parametrize(
    ("units", "message"),
    [
        (None, "has no 'units'"),
        ("furlongs per fortnightly", "not a recognised unit"),
        ("K", "dimension"),
    ],
)
@eager_and_chunked
def test_bad_velocity_units_raise_units_error(units, message, layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    if units is None:
        del ds["ua"].attrs["units"]
    else:
        ds["ua"].attrs["units"] = units
    with pytest.raises(UnitsError, match=message) as info:
        frameshift.to_inertial(ds)
    assert info.value.variable == "ua"
    assert "length" in info.value.expected


@eager_and_chunked
def test_grid_relative_components_are_refused(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    ds["ua"].attrs["standard_name"] = "x_wind"
    ds["va"].attrs["standard_name"] = "y_wind"
    with pytest.raises(UnsupportedInputError, match="rotate the components to east/north"):
        frameshift.to_inertial(ds)
    with pytest.raises(UnsupportedInputError, match="grid-relative"):
        frameshift.to_inertial(ds, velocity={"eastward": "ua", "northward": "va"})


def _pressure_dataset():
    ds = BUILDERS["grid"]().drop_vars("z").rename(z="plev")
    ds = ds.assign_coords(
        plev=(
            "plev",
            [85000.0, 50000.0],
            {"standard_name": "air_pressure", "units": "Pa", "positive": "down"},
        )
    )
    return ds


@eager_and_chunked
def test_pressure_only_vertical_is_refused_and_height_or_geopotential_height_fix_it(layout):
    ds = as_layout(_pressure_dataset(), layout)
    with pytest.raises(UnsupportedInputError, match=r"pass height= .* geopotential height"):
        frameshift.to_inertial(ds)
    zg = xr.DataArray(
        [1500.0, 5500.0], dims="plev", attrs={"standard_name": "geopotential_height", "units": "m"}
    )
    with_zg = ds.assign(zg=zg)
    a = frameshift.to_inertial(with_zg)
    b = frameshift.to_inertial(ds, height=zg)
    c = frameshift.to_inertial(ds.assign(zg=zg), height="zg")
    xr.testing.assert_allclose(a["ua"], b["ua"])
    xr.testing.assert_allclose(a["ua"], c["ua"])
    assert "geopotential height" in a["ua"].attrs["assumptions"]


@eager_and_chunked
def test_no_vertical_means_zero_height_and_says_so(layout):
    ds = as_layout(BUILDERS["grid"](), layout).isel(z=0).drop_vars("z")
    out = frameshift.to_inertial(ds)
    assert "height taken as 0 m" in out["ua"].attrs["assumptions"]
    ref = frameshift.to_inertial(ds, height=0.0)
    xr.testing.assert_allclose(out["ua"], ref["ua"])


@eager_and_chunked
def test_missing_upward_velocity_is_taken_as_zero_and_said_so(layout):
    ds = as_layout(BUILDERS["station"](), layout)
    out = frameshift.to_inertial(ds)
    assert "no upward velocity" in out["u"].attrs["assumptions"]


@eager_and_chunked
def test_velocity_mapping_for_variables_without_standard_names(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    for name in ("ua", "va", "wa"):
        del ds[name].attrs["standard_name"]
    with pytest.raises(MissingInputError, match="velocity="):
        frameshift.to_inertial(ds)
    out = frameshift.to_inertial(ds, velocity={"eastward": "ua", "northward": "va", "upward": "wa"})
    ref = frameshift.to_inertial(as_layout(BUILDERS["grid"](), layout))
    np.testing.assert_allclose(out["ua"].values, ref["ua"].values)
    with pytest.raises(ValueError, match="unknown component"):
        frameshift.to_inertial(ds, velocity={"eastwards": "ua", "northward": "va"})


@eager_and_chunked
def test_several_velocity_sets_need_a_choice(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    ds["u2"] = ds["ua"].copy()
    # two eastward winds and one northward: which pairs with which is not said
    with pytest.raises(UnsupportedInputError, match="cannot be paired") as info:
        frameshift.to_inertial(ds)
    assert info.value.variable == "velocity" and "ua" in info.value.found
    out = frameshift.to_inertial(ds, velocity={"eastward": "u2", "northward": "va"})
    assert out["ua"].attrs["standard_name"] == "eastward_wind"  # untouched
    assert out["u2"].attrs["reference_frame"] == "inertial"


@eager_and_chunked
def test_dataarray_input_is_a_type_error(layout):
    with pytest.raises(InputTypeError) as info:
        frameshift.to_inertial(BUILDERS["grid"]()["ua"])
    assert isinstance(info.value, TypeError)


@eager_and_chunked
def test_bad_convention_values_list_the_valid_ones(layout):
    with pytest.raises(ValueError, match="'local', 'cartesian'"):
        frameshift.to_inertial(as_layout(BUILDERS["grid"](), layout), basis="polar")
    with pytest.raises(ValueError, match="'cirs', 'gcrs'"):
        frameshift.to_inertial(
            as_layout(BUILDERS["grid"](), layout), basis="cartesian", celestial="icrs"
        )


@eager_and_chunked
def test_accessor_delegates(layout):
    ds = as_layout(BUILDERS["trajectory"](), layout)
    xr.testing.assert_identical(
        ds.frameshift.to_inertial().drop_attrs(), frameshift.to_inertial(ds).drop_attrs()
    )


@eager_and_chunked
def test_depth_is_positive_down(layout):
    ds = as_layout(BUILDERS["station"](), layout)
    out = frameshift.to_inertial(ds)
    shift = (out["u"] - ds["u"]) * 0.01  # cm s-1 to m s-1
    deep, shallow = shift.isel(depth=1), shift.isel(depth=0)
    # deeper is closer to the axis: Ω cos φ × 40 m less (geometry of the ellipsoid normal)
    np.testing.assert_allclose(
        (shallow - deep).values,
        (OMEGA * np.cos(np.deg2rad(ds["lat"])) * 40.0).values[:, None] * np.ones(ds.sizes["time"]),
        rtol=1e-9,
    )


@eager_and_chunked
def test_the_set_still_to_convert_is_found_where_another_set_was_left_alone(layout):
    ds = as_layout(BUILDERS["grid"](), layout)
    currents = {"standard_name": "eastward_sea_water_velocity", "units": "m s-1"}
    ds["uo"] = ds["ua"].copy(deep=True).assign_attrs(currents)
    ds["vo"] = (
        ds["va"]
        .copy(deep=True)
        .assign_attrs(currents, standard_name="northward_sea_water_velocity")
    )
    both = frameshift.to_inertial(ds)  # winds and currents, each set converted
    for name in ("ua", "va", "uo", "vo"):
        assert both[name].attrs["reference_frame"] == "inertial"
    np.testing.assert_array_equal(both["uo"].values, both["ua"].values)  # same data, same shift
    out = frameshift.to_inertial(ds, velocity={"eastward": "ua", "northward": "va"})
    back = frameshift.to_rotating(out)  # only the winds are inertial: no choice needed
    np.testing.assert_allclose(back["ua"].values, ds["ua"].values, rtol=1e-12)
    assert back["uo"].attrs == ds["uo"].attrs


@all_kinds
@eager_and_chunked
def test_precision_input_rounds_once_what_float64_computes(kind, layout):
    # precision="input": the same float64 sum, rounded once to the input's float32
    # (IEEE 754 round to nearest), made in the one pass over the data
    ds = as_layout(BUILDERS[kind](), layout)
    east = _names(ds)
    ds[east] = ds[east].astype(np.float32)
    ds[east].encoding = {"dtype": np.dtype(np.float32)}
    before = ds.copy(deep=True)
    with raise_if_dask_computes():
        narrow = frameshift.to_inertial(ds, precision="input")
    wide = frameshift.to_inertial(ds)
    assert narrow[east].dtype == np.float32 and wide[east].dtype == np.float64
    assert (narrow[east].chunks is None) == (ds[east].chunks is None)  # lazy stays lazy
    np.testing.assert_array_equal(narrow[east].values, wide[east].values.astype(np.float32))
    assert narrow[east].attrs == wide[east].attrs
    xr.testing.assert_identical(ds.compute(), before)
    back = frameshift.to_rotating(narrow, precision="input")
    # float32 twice: within 2 ulp of the largest inertial value (in the variable's own
    # units) of where it started (IEEE 754 binary32: unit roundoff 2^-24, spacing 2^-23)
    bound = 2 * 2.0**-23 * float(abs(wide[east]).max())
    np.testing.assert_allclose(back[east].values, before[east].values, rtol=0, atol=bound)


def test_precision_input_keeps_float64_for_float64_input():
    ds = BUILDERS["grid"]()
    np.testing.assert_array_equal(frameshift.to_inertial(ds, precision="input")["ua"].values,
                                  frameshift.to_inertial(ds)["ua"].values)


@pytest.mark.parametrize("case", ["cartesian", "plane", "unknown"])
def test_precision_input_is_refused_where_it_would_do_nothing(case):
    ds = BUILDERS["grid"]()
    if case == "cartesian":
        call = dict(basis="cartesian", precision="input")
    elif case == "plane":
        call = dict(frame=frameshift.RotatingTable("10 rpm"), precision="input")
    else:
        call = dict(precision="float32")
    with pytest.raises(frameshift.ConventionError) as info:
        frameshift.to_inertial(ds, **call)
    assert info.value.variable == "precision"
    assert isinstance(info.value, ValueError)
