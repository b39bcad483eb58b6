"""Angular momentum, its integrals and the excitation of Earth rotation.

Checks against analytic results (solid-body superrotation), published
constants (Barnes et al. 1983; Rosen & Salstein 1983; IAU WGCCRE 2015 for a
retrograde body), and a reference library (pyproj: ellipsoidal areas and
body-fixed positions for independent vector algebra).
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr
from pyproj import Geod, Transformer

import frameshift
from frameshift import (
    EARTH,
    EARTH_SPHERE,
    ConventionError,
    InputTypeError,
    MissingInputError,
    Planet,
    UnsupportedInputError,
)
from frameshift._kernels import integrals
from frameshift.diagnostics.angular_momentum import EXCITATION_CONSTANTS, STANDARD_GRAVITY
from tests.diagnostics.data import CURRENT, grid, run_lazily, times
from tests.helpers import (
    as_layout,
    assert_udunits,
    eager_and_chunked,
    raise_if_dask_computes,
    station_dataset,
)

OMEGA = 7.292115e-5  # rad s-1, IERS Conventions 2010 Table 1.1
LAT = np.arange(-89.5, 90.0, 1.0)
LON = np.arange(0.0, 360.0, 1.0)
PLEV = np.array([100000.0, 85000.0, 70000.0, 50000.0, 25000.0, 10000.0])


def superrotation(frame=EARTH_SPHERE, ntime: int = 3, speed: float = 20.0) -> xr.Dataset:
    """u = U cos φ on pressure levels along time, with a uniform surface pressure."""
    shape = (ntime, PLEV.size, LAT.size, LON.size)
    u = speed * np.cos(np.deg2rad(LAT))[:, None] * np.ones(shape)
    t = times(ntime, 360.0)
    ds = grid(u, np.zeros(shape), LAT, LON, dims=("time", "plev", "lat", "lon"), coords={
        "time": ("time", t),
        "plev": ("plev", PLEV, {"standard_name": "air_pressure", "units": "Pa",
                                "positive": "down", "axis": "Z"}),
    })
    ds["ps"] = (("time", "lat", "lon"), np.full((ntime, LAT.size, LON.size), 1000.0),
                {"standard_name": "surface_air_pressure", "units": "hPa"})
    return ds


@eager_and_chunked
def test_solid_body_superrotation_two_thirds_m_a_u(layout):
    # Analytic (sphere): u = U cos φ over a uniform surface pressure carries relative
    # angular momentum ∫ U a cos²φ dm = (2/3) M a U, M = 4π a² ps / g (mean of cos²φ
    # over the sphere is 2/3). Midpoint quadrature on 1° cells: ~1.3e-5 relative.
    ds = superrotation()
    original = ds.copy(deep=True)
    with raise_if_dask_computes():
        out = frameshift.integrate_angular_momentum(
            as_layout(ds, layout), EARTH_SPHERE, surface_pressure="ps")
    a = EARTH_SPHERE.equatorial_radius
    mass = 4 * np.pi * a**2 * 1.0e5 / STANDARD_GRAVITY
    assert out.angular_momentum_relative.dims == ("time",)
    np.testing.assert_allclose(out.mass.values, mass, rtol=1e-12)
    np.testing.assert_allclose(out.angular_momentum_relative.values, 2 / 3 * mass * a * 20.0,
                               rtol=5e-5)
    # frame part: Ω ∫ a² cos²φ dm = (2/3) M Ω a² (same analytic mean)
    np.testing.assert_allclose(out.angular_momentum_frame.values, 2 / 3 * mass * OMEGA * a**2,
                               rtol=5e-5)
    xr.testing.assert_identical(ds, original)


@eager_and_chunked
def test_single_level_column_and_latitude_bands_add_up(layout):
    # One level with surface pressure is the whole column (ps / g): same analytic value.
    ds = superrotation(ntime=1).isel(time=0, plev=0, drop=True)
    glob = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                      surface_pressure="ps")
    a = EARTH_SPHERE.equatorial_radius
    mass = 4 * np.pi * a**2 * 1.0e5 / STANDARD_GRAVITY  # analytic sphere area x ps / g
    np.testing.assert_allclose(float(glob.angular_momentum_relative), 2 / 3 * mass * a * 20.0,
                               rtol=5e-5)
    bands = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                       surface_pressure="ps", over="latitude")
    cols = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                      surface_pressure="ps", over="column")
    assert bands.angular_momentum_relative.dims == ("lat",)
    assert cols.angular_momentum_relative.dims == ("lat", "lon")
    np.testing.assert_allclose(float(bands.angular_momentum_relative.sum()),
                               float(glob.angular_momentum_relative), rtol=1e-12)
    np.testing.assert_allclose(float(cols.mass.sum()), float(glob.mass), rtol=1e-12)


@eager_and_chunked
def test_levels_below_the_surface_weigh_nothing(layout):
    # Surface at 800 hPa: the 1000 hPa level (NaN, below ground) weighs nothing, the
    # 850 hPa layer keeps the 25 hPa above the surface; the column weighs ps / g (cells
    # reach half a spacing beyond the outer grid points).
    lat, lon = np.array([-45.0, 0.0, 45.0]), np.array([0.0, 120.0, 240.0])
    plev = np.array([100000.0, 85000.0, 70000.0])
    u = np.ones((3, 3, 3))
    u[0] = np.nan
    ds = grid(u, 0 * u, lat, lon, dims=("plev", "lat", "lon"), coords={
        "plev": ("plev", plev, {"standard_name": "air_pressure", "units": "Pa", "axis": "Z"})})
    out = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                     surface_pressure=80000.0, over="column")
    area = integrals.cell_areas(np.array([[-67.5, -22.5], [-22.5, 22.5], [22.5, 67.5]]),
                                np.full(3, 120.0), EARTH_SPHERE.equatorial_radius, 0.0)
    np.testing.assert_allclose(out.mass.values, area * 80000.0 / STANDARD_GRAVITY, rtol=1e-12)
    assert np.isfinite(out.angular_momentum_relative.values).all()


def test_ellipsoidal_cell_areas_match_pyproj():
    # pyproj (GeographicLib) polygon areas on WGS 84, parallels densified so geodesic
    # edges follow them; total against the area of the WGS 84 ellipsoid from pyproj.
    geod = Geod(ellps="WGS84")
    a, f = EARTH.equatorial_radius, EARTH.flattening
    for (lat0, lat1), (lon0, lon1) in [((10.0, 11.0), (0.0, 1.0)), ((60.0, 62.5), (30.0, 35.0)),
                                       ((-80.0, -70.0), (100.0, 110.0))]:
        lons = np.concatenate([np.linspace(lon0, lon1, 2001), np.linspace(lon1, lon0, 2001)])
        lats = np.concatenate([np.full(2001, lat0), np.full(2001, lat1)])
        ref, _ = geod.polygon_area_perimeter(lons, lats)
        ours = integrals.cell_areas(np.array([[lat0, lat1]]), np.array([lon1 - lon0]), a, f)
        np.testing.assert_allclose(ours[0, 0], abs(ref), rtol=2e-7)
    lats = np.linspace(0.0, 90.0, 3)
    total = 4 * abs(float(integrals.zone_area(np.pi / 2, a, f))) * np.pi
    north, _ = geod.polygon_area_perimeter(np.linspace(0, 360, 4001)[:-1], np.zeros(4000))
    np.testing.assert_allclose(total, 2 * abs(north), rtol=1e-8)
    del lats


@eager_and_chunked
def test_per_unit_mass_values_and_retrograde_sign(layout):
    # AMS Glossary: m = (u + Ω r cos φ) r cos φ. At 45° on WGS 84, r cos φ is the
    # distance from the axis 4517590.879 m (computed: prime-vertical radius x cos φ).
    lat = np.array([0.0, 45.0])
    ds = grid(np.array([[10.0], [10.0]]), np.zeros((2, 1)), lat, np.array([0.0]))
    with raise_if_dask_computes():
        out = frameshift.axial_angular_momentum(as_layout(ds, layout))
    p = np.array([EARTH.equatorial_radius, 4517590.879])
    np.testing.assert_allclose(out.angular_momentum_relative.values[:, 0], 10.0 * p, rtol=1e-9)
    np.testing.assert_allclose(out.angular_momentum_frame.values[:, 0], OMEGA * p**2, rtol=1e-9)
    np.testing.assert_allclose(out.superrotation_index.values[0, 0],
                               10.0 / (OMEGA * EARTH.equatorial_radius), rtol=1e-9)
    # Venus turns retrograde: Ẇ = -1.4813688 deg/day (IAU WGCCRE 2015, Archinal et al.
    # 2018); mean radius 6051.8 km (same report). Wind blowing westward, with the
    # planet's turning, is superrotation: positive index u / (Ω a).
    rate = np.deg2rad(-1.4813688) / 86400.0
    venus = Planet("Venus", rate, 6051800.0)
    vds = grid(np.array([[-100.0]]), np.zeros((1, 1)), np.array([0.0]), np.array([0.0]))
    vout = frameshift.axial_angular_momentum(vds, venus)
    index = float(vout.superrotation_index[0, 0])
    assert index > 0
    np.testing.assert_allclose(index, -100.0 / (rate * 6051800.0), rtol=1e-12)
    assert float(vout.angular_momentum_frame[0, 0]) < 0


@eager_and_chunked
def test_density_on_depth_levels(layout):
    # Ocean shell 500 m deep (depth bounds 0-100-500 m), ρ = 1025 kg m-3: M = ρ H × area;
    # solid-body u = U cos φ gives (2/3) M a U (analytic, as above).
    depth = np.array([50.0, 300.0])
    u = 0.1 * np.cos(np.deg2rad(LAT))[None, :, None] * np.ones((2, LAT.size, LON.size))
    ds = grid(u, 0 * u, LAT, LON, dims=("depth", "lat", "lon"), family=CURRENT, coords={
        "depth": ("depth", depth, {"standard_name": "depth", "units": "m", "positive": "down",
                                   "bounds": "depth_bnds"})})
    ds["depth_bnds"] = (("depth", "nv"), np.array([[0.0, 100.0], [100.0, 500.0]]))
    # the bounds (a data variable, so chunked too) are read while the graph is built
    reads = 1 if layout == "chunked" else 0
    out = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                     density=1025.0, computes=reads)
    # a density field gives the same (a variable with units, here in g cm-3)
    ds["rho"] = (("depth", "lat", "lon"), np.full(u.shape, 1.025), {"units": "g cm-3"})
    field = run_lazily(frameshift.integrate_angular_momentum, ds, layout, EARTH_SPHERE,
                       density="rho", computes=reads)
    np.testing.assert_allclose(float(field.mass), float(out.mass), rtol=1e-12)
    a = EARTH_SPHERE.equatorial_radius
    mass = 4 * np.pi * a**2 * 500.0 * 1025.0
    np.testing.assert_allclose(float(out.mass), mass, rtol=1e-12)
    np.testing.assert_allclose(float(out.angular_momentum_relative), 2 / 3 * mass * a * 0.1,
                               rtol=5e-5)


@eager_and_chunked
def test_one_millisecond_of_length_of_day(layout):
    # Barnes et al. (1983) constants: ΔLOD = χ3 × 86400 s with χ3 = h3 / (C_m Ω), so 1 ms
    # needs h3 = 1e-3 / 86400 × 7.04e37 × Ω ≈ 5.94e25 kg m2 s-1 (the reference values'
    # computed figure); Rosen & Salstein (1983, J. Geophys. Res. 88) give about
    # 1.68e-29 s of LOD per kg m2 s-1.
    ds = superrotation(ntime=1).isel(time=0, plev=0, drop=True)
    out = run_lazily(frameshift.excitation, ds, layout, EARTH_SPHERE, surface_pressure="ps")
    h3 = float(out.angular_momentum_relative)
    lod_ms = float(out.chi3_motion) * 86400e3
    np.testing.assert_allclose(h3 / lod_ms, 5.94e25, rtol=1e-3)
    np.testing.assert_allclose(lod_ms * 1e-3 / h3, 1.68e-29, rtol=5e-3)
    k = EXCITATION_CONSTANTS["eubanks1993"]
    eub = run_lazily(frameshift.excitation, ds, layout, EARTH_SPHERE, surface_pressure="ps",
                     constants="eubanks1993")
    np.testing.assert_allclose(float(eub.chi3_motion), 0.998 * h3 / (7.1236e37 * OMEGA),
                               rtol=1e-12)  # Eubanks (1993) factors as tabulated
    assert k["motion3"] == 0.998
    # symmetric flow and mass: no equatorial excitation
    assert abs(float(out.chi1)) < 1e-12 * abs(float(out.chi3))
    assert abs(float(out.chi2)) < 1e-12 * abs(float(out.chi3))


@eager_and_chunked
def test_equatorial_terms_against_independent_vector_algebra(layout):
    # h = Σ r × v dm and I13 = -Σ x z dm, I23 = -Σ y z dm with r from pyproj (EPSG:4979 ->
    # EPSG:4978, WGS 84 body-fixed) and v = u ê + v n̂ from numpy cross products of the
    # axis and r; then χ1 = (1.00 I13 + 1.43 h1 / Ω) / (C - A) (Barnes et al. 1983).
    lat, lon = np.arange(-85.0, 86.0, 10.0), np.arange(0.0, 360.0, 15.0)
    rng = np.random.default_rng(5)
    u = rng.normal(10, 8, (2, lat.size, lon.size))
    v = rng.normal(0, 5, (2, lat.size, lon.size))
    ps = rng.normal(98000.0, 2000.0, (2, lat.size, lon.size))
    ds = grid(u, v, lat, lon, dims=("time", "lat", "lon"), coords={"time": times(2)})
    ds["ps"] = (("time", "lat", "lon"), ps, {"standard_name": "surface_air_pressure",
                                             "units": "Pa"})
    with raise_if_dask_computes():
        out = frameshift.excitation(as_layout(ds, layout), EARTH, surface_pressure="ps")
    la, lo = np.meshgrid(lat, lon, indexing="ij")
    x, y, z = Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True).transform(
        lo, la, np.zeros_like(la))
    r = np.stack([x, y, z], axis=-1)
    up = np.cross([0.0, 0.0, 1.0], r)
    east = up / np.linalg.norm(up, axis=-1, keepdims=True)
    normal = np.stack([np.cos(np.deg2rad(la)) * np.cos(np.deg2rad(lo)),
                       np.cos(np.deg2rad(la)) * np.sin(np.deg2rad(lo)),
                       np.sin(np.deg2rad(la))], axis=-1)  # ellipsoid normal (geodetic)
    north = np.cross(normal, east)
    edges = integrals.cell_edges(lat, -90.0, 90.0)
    area = integrals.cell_areas(np.stack([edges[:-1], edges[1:]], 1), np.full(lon.size, 15.0),
                                EARTH.equatorial_radius, EARTH.flattening)
    k = EXCITATION_CONSTANTS["barnes1983"]
    for i in range(2):
        dm = ps[i] / STANDARD_GRAVITY * area
        vel = u[i][..., None] * east + v[i][..., None] * north
        h = np.sum(np.cross(r, vel) * dm[..., None], axis=(0, 1))
        i13, i23 = -np.sum(x * z * dm), -np.sum(y * z * dm)
        chi1 = (k["matter12"] * i13 + k["motion12"] * h[0] / OMEGA) / k["c_minus_a"]
        chi2 = (k["matter12"] * i23 + k["motion12"] * h[1] / OMEGA) / k["c_minus_a"]
        np.testing.assert_allclose(float(out.chi1[i]), chi1, rtol=1e-9)
        np.testing.assert_allclose(float(out.chi2[i]), chi2, rtol=1e-9)
        np.testing.assert_allclose(float(out.angular_momentum_relative[i]), h[2], rtol=1e-9)
    anomalies = run_lazily(frameshift.excitation, ds, layout, EARTH, surface_pressure="ps",
                           anomalies=True)
    np.testing.assert_allclose(float(anomalies.chi3.mean()), 0.0, atol=1e-15)


@eager_and_chunked
def test_metadata(layout):
    ds = superrotation(ntime=2)
    with raise_if_dask_computes():
        results = [frameshift.integrate_angular_momentum(as_layout(ds, layout),
                                                         surface_pressure="ps"),
                   frameshift.excitation(as_layout(ds, layout), surface_pressure="ps"),
                   frameshift.axial_angular_momentum(as_layout(ds, layout))]
    for out in results:
        assert "frameshift" in out.attrs["history"] and out.attrs["Conventions"] == "CF-1.11"
        for var in out.data_vars.values():
            assert_udunits(var.attrs["units"])
            assert var.attrs["reference_body"] == EARTH.name
            # no CF v93 name exists for angular momentum or excitation (reference values)
            assert "standard_name" not in var.attrs
    assert results[1].length_of_day_change.attrs["units"] == "ms"
    assert results[0].angular_momentum_relative.attrs["cell_methods"] == "plev: lat: lon: sum"


@eager_and_chunked
def test_refusals(layout):
    ds = as_layout(superrotation(ntime=1), layout)
    with pytest.raises(ConventionError, match="over="):
        frameshift.integrate_angular_momentum(ds, over="everywhere")
    with pytest.raises(ConventionError, match="density= is not used on pressure levels"):
        frameshift.integrate_angular_momentum(ds, density=1.2)
    with pytest.raises(ConventionError, match="constants="):
        frameshift.excitation(ds, surface_pressure="ps", constants="mine")
    with pytest.raises(MissingInputError, match="surface_pressure="):
        frameshift.integrate_angular_momentum(ds.isel(plev=0, drop=True))
    with pytest.raises(UnsupportedInputError, match="latitude-longitude grid"):
        frameshift.integrate_angular_momentum(as_layout(station_dataset(), layout), density=1025.0)
    with pytest.raises(MissingInputError, match="'nothing'"):
        frameshift.integrate_angular_momentum(ds, surface_pressure="nothing")
    bad = ds.copy()
    bad["ps"].attrs["units"] = "m"
    with pytest.raises(frameshift.UnitsError, match="ps"):
        frameshift.integrate_angular_momentum(bad, surface_pressure="ps")
    with pytest.raises(InputTypeError):
        frameshift.axial_angular_momentum(ds.u)
    with pytest.raises(UnsupportedInputError, match="does not rotate"):
        frameshift.axial_angular_momentum(ds, Planet("still", 0.0, 1.0e6))
    with pytest.raises(ConventionError, match="keys"):
        frameshift.excitation(ds, surface_pressure="ps", constants={"c_m": 1.0})


@eager_and_chunked
def test_accessor_delegates(layout):
    ds = as_layout(superrotation(ntime=1), layout)
    via = ds.frameshift.integrate_angular_momentum(surface_pressure="ps")
    direct = frameshift.integrate_angular_momentum(ds, surface_pressure="ps")
    xr.testing.assert_allclose(via.drop_attrs(), direct.drop_attrs())
