"""The figure functions on the bundled invented demo data.

Each figure must come out as a real PNG (sensible size, not blank), label its axes
with units, carry a caption, and draw the values of the Dataset it was given.
"""

from __future__ import annotations

import re
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import MissingInputError

matplotlib = pytest.importorskip("matplotlib", reason="the plot extra is not installed")
matplotlib.use("Agg")
from matplotlib.collections import LineCollection, QuadMesh  # noqa: E402
from matplotlib.image import imread  # noqa: E402

from frameshift import plotting  # noqa: E402

DATA = Path(__file__).resolve().parents[1] / "data_demo"
ACCEL = "m s⁻²"
_COMPONENT_TITLE = re.compile(r"^\w+, (eastward|northward|upward)$")
_SUP = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")


@pytest.fixture(scope="module")
def winds() -> xr.Dataset:
    return xr.open_dataset(DATA / "global_winds.nc")


@pytest.fixture(scope="module")
def mooring() -> xr.Dataset:
    return xr.open_dataset(DATA / "shelf_mooring.nc")


@pytest.fixture(scope="module")
def balloon() -> xr.Dataset:
    return xr.open_dataset(DATA / "balloon_track.nc")


@pytest.fixture(scope="module")
def figures(tmp_path_factory, winds, mooring, balloon) -> dict:
    """Each figure function run once on its demo file, with the PNG it wrote."""
    out = tmp_path_factory.mktemp("figures")
    made = {}

    def make(key, func, *args, **kwargs):
        path = out / f"{key}.png"
        made[key] = (func(*args, path=path, **kwargs), path)

    winds_terms = frameshift.apparent_accelerations(winds)
    make("maps", plotting.plot_term_maps, winds_terms, "250 hPa")
    make("series", plotting.plot_terms_timeseries, frameshift.apparent_accelerations(mooring), 10)
    make("zonal", plotting.plot_zonal_mean_velocity, winds, frameshift.to_inertial(winds))
    make("track", plotting.plot_track_terms, frameshift.apparent_accelerations(balloon), balloon)
    made["winds_terms"] = winds_terms
    return made


def _labels(fig) -> list[str]:
    return [t for ax in fig.axes for t in (ax.get_xlabel(), ax.get_ylabel()) if t]


def _axes_titled(fig, title: str):
    hits = [ax for ax in fig.axes if ax.get_title(loc="left") == title]
    assert len(hits) == 1, f"expected one panel titled {title!r}; found {len(hits)}"
    return hits[0]


def _power_of_ten(label: str) -> int:
    match = re.match(r"10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+) ", label)
    return int(match.group(1).translate(_SUP)) if match else 0


def _colourbar_label(fig, mappable) -> str:
    for ax in fig.axes:
        cbar = getattr(ax, "_colorbar", None)
        if cbar is not None and cbar.mappable is mappable:
            return cbar.ax.get_ylabel() or cbar.ax.get_xlabel()
    raise AssertionError("the mappable has no colour bar")


@pytest.mark.parametrize("key", ["maps", "series", "zonal", "track"])
def test_png_is_a_real_figure(figures, key):
    fig, path = figures[key]
    assert path.stat().st_size > 20_000
    image = imread(path)
    height, width = image.shape[:2]
    assert image.shape[2] in (3, 4)
    # sensible size: readable on a screen, not a poster
    assert 500 <= width <= 2400 and 400 <= height <= 2000, image.shape
    w_in, h_in = fig.get_size_inches()
    # default dpi 120 (matplotlib rounds the pixel size down or to nearest)
    assert abs(width - w_in * 120) <= 1 and abs(height - h_in * 120) <= 1
    rgb = image[..., :3].reshape(-1, 3)
    colours = np.unique(np.round(rgb * 255).astype(np.uint8), axis=0)
    assert len(colours) > 100, "the image is (nearly) a single colour"
    not_white = np.any(rgb < 0.95, axis=1).mean()
    assert 0.05 < not_white < 0.97, f"{not_white:.0%} of the pixels are not white"


@pytest.mark.parametrize("key", ["maps", "series", "zonal", "track"])
def test_caption_and_title(figures, key):
    fig, _ = figures[key]
    captions = [t.get_text() for t in fig.texts if t.get_position()[1] < 0.1]
    assert captions and len(captions[0]) > 80, captions
    assert fig.get_suptitle()


def test_term_maps_labels_and_values(figures):
    fig, _ = figures["maps"]
    terms = figures["winds_terms"]
    labels = _labels(fig)
    assert "latitude (°N)" in labels and "longitude (°E)" in labels
    panels = [ax for ax in fig.axes if not hasattr(ax, "_colorbar")]
    meshes = [(ax, c) for ax in panels for c in ax.collections if isinstance(c, QuadMesh)]
    # coriolis, centrifugal, curvature, total x 3 components, less centrifugal eastward (zero)
    assert len(meshes) == 11
    for _, mesh in meshes:
        assert _colourbar_label(fig, mesh).endswith(ACCEL)
    caption = fig.texts[-1].get_text()
    assert "250 hPa" in caption and "Euler" in caption  # Euler: zero for steady rotation

    ax = _axes_titled(fig, "Coriolis, eastward")
    (mesh,) = [c for c in ax.collections if isinstance(c, QuadMesh)]
    scale = 10.0 ** _power_of_ten(_colourbar_label(fig, mesh))
    expected = terms["coriolis_eastward"].sel(plev=25000.0).isel(time=0).transpose("lat", "lon")
    np.testing.assert_allclose(mesh.get_array().reshape(expected.shape) * scale, expected.values)
    # a signed term: diverging map centred on zero
    assert mesh.get_cmap().name == plotting.SIGNED_CMAP
    assert mesh.norm.vmin == pytest.approx(-mesh.norm.vmax)

    ax = _axes_titled(fig, "centrifugal, upward")
    (mesh,) = [c for c in ax.collections if isinstance(c, QuadMesh)]
    # one diverging palette for every signed term, even one that keeps its sign
    assert mesh.get_cmap().name == plotting.SIGNED_CMAP
    assert mesh.norm.vmin == pytest.approx(-mesh.norm.vmax)
    assert "zero everywhere" in [
        t.get_text() for t in _axes_titled(fig, "centrifugal, eastward").texts
    ]


def test_term_maps_time_mean_on_chunked_terms(winds):
    terms = frameshift.apparent_accelerations(winds.chunk({"time": 4}))
    fig = plotting.plot_term_maps(terms, level=25000.0, time="mean", terms=["coriolis"])
    ax = _axes_titled(fig, "Coriolis, northward")
    (mesh,) = [c for c in ax.collections if isinstance(c, QuadMesh)]
    scale = 10.0 ** _power_of_ten(_colourbar_label(fig, mesh))
    expected = terms["coriolis_northward"].sel(plev=25000.0).mean("time").transpose("lat", "lon")
    np.testing.assert_allclose(mesh.get_array().reshape(expected.shape) * scale, expected.values)
    assert "mean of 16 times" in fig.texts[-1].get_text()


def test_timeseries_labels_and_values(figures, mooring):
    fig, _ = figures["series"]
    terms = frameshift.apparent_accelerations(mooring)
    labels = _labels(fig)
    assert "days since 2031-09-01 00:00 (standard calendar)" in labels and "depth (m)" in labels
    line_axes = [ax for ax in fig.axes if ax.lines and _COMPONENT_TITLE.match(ax.get_title("left"))]
    assert len(line_axes) == 11  # 4 terms x 3 components, less the zero centrifugal eastward
    assert all(ax.get_ylabel().endswith(ACCEL) for ax in line_axes)

    ax = _axes_titled(fig, "Coriolis, northward")
    line = max(ax.lines, key=lambda ln: len(ln.get_ydata()))
    scale = 10.0 ** _power_of_ten(ax.get_ylabel())
    expected = terms["coriolis_northward"].sel(depth=10.0)
    np.testing.assert_allclose(np.asarray(line.get_ydata()) * scale, expected.values)
    # the time axis starts where the data start, in days since the first time
    elapsed = (mooring.time.values - mooring.time.values[0]) / np.timedelta64(1, "D")
    np.testing.assert_allclose(line.get_xdata(), elapsed)
    assert ax.get_xlim()[0] == 0.0
    # the inertial period of the bar is 2π/f at the mooring's latitude
    f = 2 * frameshift.EARTH.rotation_rate * np.sin(np.deg2rad(float(mooring.lat)))
    period_h = 2 * np.pi / f / 3600
    assert f"2π/f = {period_h:.1f} h" in " ".join(t.get_text() for a in fig.axes for t in a.texts)
    assert f"{mooring.attrs['inertial_period_hours']:.1f} h" in fig.texts[-1].get_text()


def test_zonal_mean_labels_and_values(figures, winds):
    fig, _ = figures["zonal"]
    labels = _labels(fig)
    assert "latitude (°N)" in labels
    assert "geopotential height (km)" in labels
    assert "zonal-mean eastward velocity (m s⁻¹)" in labels
    ax = _axes_titled(fig, "at 250 hPa")  # where the demo jets peak (data_demo/README.md)
    earth, inertial, difference = ax.lines[:3]
    expected = winds["ua"].sel(plev=25000.0).mean(["time", "lon"])
    np.testing.assert_allclose(earth.get_ydata(), expected.values, rtol=1e-6)
    # the difference is the eastward speed of the ground, Ω (N + h) cos φ: about
    # Ω a cos φ with the WGS 84 equatorial radius (NIMA TR8350.2), within 0.5 %
    lat = np.deg2rad(winds["lat"].values)
    ground = frameshift.EARTH.rotation_rate * 6378137.0 * np.cos(lat)
    np.testing.assert_allclose(difference.get_ydata(), ground, rtol=5e-3)
    np.testing.assert_allclose(inertial.get_ydata(), earth.get_ydata() + ground, rtol=5e-3)


def test_track_labels_and_values(figures, balloon):
    fig, _ = figures["track"]
    terms = frameshift.apparent_accelerations(balloon)
    labels = _labels(fig)
    assert "latitude (°N)" in labels and "longitude (°E)" in labels
    map_ax = _axes_titled(fig, "track")
    (coll,) = [c for c in map_ax.collections if isinstance(c, LineCollection)]
    label = _colourbar_label(fig, coll)
    assert label.endswith(f"{ACCEL})")
    scale = 10.0 ** _power_of_ten(label.split("(")[-1])
    mag = np.hypot(terms["coriolis_eastward"].values, terms["coriolis_northward"].values)
    np.testing.assert_allclose(coll.get_array() * scale, 0.5 * (mag[1:] + mag[:-1]))
    assert len(coll.get_segments()) == balloon.sizes["time"] - 1
    x0, x1 = map_ax.get_xlim()
    assert x0 < float(balloon.lon.min()) and float(balloon.lon.max()) < x1
    line_axes = [ax for ax in fig.axes if ax.lines and _COMPONENT_TITLE.match(ax.get_title("left"))]
    assert len(line_axes) == 11
    assert all(ax.get_ylabel().endswith(ACCEL) for ax in line_axes)


def test_dpi_sets_the_png_size(tmp_path, mooring):
    terms = frameshift.apparent_accelerations(mooring, terms="coriolis")
    path = tmp_path / "small.png"
    fig = plotting.plot_terms_timeseries(terms, "30 m", path=path, dpi=80, section=None)
    height, width = imread(path).shape[:2]
    w_in, h_in = fig.get_size_inches()
    assert abs(width - w_in * 80) <= 1 and abs(height - h_in * 80) <= 1
    assert "at 30 m depth" in fig.texts[-1].get_text()


def test_no_terms_is_refused(winds):
    with pytest.raises(MissingInputError, match="no acceleration terms"):
        plotting.plot_term_maps(winds)
    terms = frameshift.apparent_accelerations(winds, terms="coriolis")
    with pytest.raises(MissingInputError, match="curvature"):
        plotting.plot_term_maps(terms, terms=["curvature"])


def test_unit_label():
    assert plotting.unit_label("m s-2") == ACCEL
    assert plotting.unit_label("m s-1", -3) == "10⁻³ m s⁻¹"


def test_plotting_imports_without_matplotlib():
    """matplotlib is imported inside the figure functions only."""
    script = textwrap.dedent(
        """
        import sys
        sys.modules["matplotlib"] = None  # any import of matplotlib now fails
        import xarray as xr
        import frameshift
        import frameshift.plotting as p
        ds = xr.open_dataset(sys.argv[1])
        terms = frameshift.apparent_accelerations(ds)
        try:
            p.plot_term_maps(terms)
        except ImportError as exc:
            print(exc)
        """
    )
    done = subprocess.run(
        [sys.executable, "-c", script, str(DATA / "tiny_example.nc")],
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    assert "pip install 'frameshift[plot]'" in done.stdout


@pytest.mark.parametrize("calendar", ["noleap", "360_day", "julian", "proleptic_gregorian"])
def test_timeseries_on_every_cf_calendar(tmp_path, mooring, calendar):
    # a terms file written and reopened with a model calendar holds cftime values
    terms = frameshift.apparent_accelerations(mooring.isel(depth=[0, 1]), terms="coriolis")
    terms["time"].encoding = {"units": "hours since 2031-09-01", "calendar": calendar}
    terms["time"].attrs["units_metadata"] = "leap_seconds: none"
    terms.attrs.update(title="calendar test", Conventions="CF-1.11")
    for name in terms.coords:
        terms[name].encoding["_FillValue"] = None
    terms.to_netcdf(tmp_path / "t.nc")
    if calendar == "noleap":  # the file is valid CF (IOOS compliance checker, cf:1.11)
        from tests.test_io import assert_cf_clean

        assert_cf_clean(tmp_path / "t.nc")
    with xr.open_dataset(tmp_path / "t.nc", use_cftime=True) as back:
        fig = plotting.plot_terms_timeseries(back, path=tmp_path / "t.png")
    ax = _axes_titled(fig, "Coriolis, northward")
    line = max(ax.lines, key=lambda ln: len(ln.get_ydata()))
    hours = (mooring.time.values - mooring.time.values[0]) / np.timedelta64(1, "D")
    # the same elapsed times whatever the calendar (these dates have no 29 February)
    np.testing.assert_allclose(line.get_xdata(), hours)
    assert f"({calendar} calendar)" in ax.get_xlabel() or f"({calendar} calendar)" in " ".join(
        a.get_xlabel() for a in fig.axes)
    assert (tmp_path / "t.png").stat().st_size > 20_000
