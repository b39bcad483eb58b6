"""Other bodies on Datasets: retrograde signs, latitude conventions, inertial axes.

Rates, radii, poles and prime meridians are those of the IAU WGCCRE 2015 report
(Archinal et al. 2018, Celest. Mech. Dyn. Astron. 130:22); every Dataset-level
check runs on eager and Dask-chunked input.
"""

from __future__ import annotations

import math
import pickle

import erfa
import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import ConventionError
from tests.helpers import as_layout, eager_and_chunked, raise_if_dask_computes
from tests.lab.reference import erfa_icrf_to_body, mars_angles_by_hand

DEG_PER_DAY = math.pi / 180.0 / 86400.0  # deg/day -> rad s-1 (day of 86400 s)


def _winds(lat, u=0.0, v=0.0, time="2026-03-01T06:00"):
    lat = np.asarray(lat, dtype=float)
    return xr.Dataset(
        {
            "u": (
                "lat",
                np.full(lat.shape, u),
                {"standard_name": "eastward_wind", "units": "m s-1"},
            ),
            "v": (
                "lat",
                np.full(lat.shape, v),
                {"standard_name": "northward_wind", "units": "m s-1"},
            ),
        },
        coords={
            "lat": ("lat", lat, {"units": "degrees_north", "standard_name": "latitude"}),
            "lon": ((), 0.0, {"units": "degrees_east", "standard_name": "longitude"}),
            "time": ((), np.datetime64(time, "ns")),
        },
    )


def _run(fn, ds, layout, *args, **kwargs):
    data = as_layout(ds, layout)
    if layout == "chunked":
        with raise_if_dask_computes():
            out = fn(data, *args, **kwargs)
        return out.compute()
    return fn(data, *args, **kwargs)


def test_named_bodies_are_frames_from_the_report():
    # 2015 report: rates of W (deg/day) and radii (km); rad s-1 = deg/day × π/180/86400
    cases = {
        frameshift.MARS: (350.891982443297, 3396.19e3, 3376.20e3),
        frameshift.VENUS: (-1.4813688, 6051.8e3, 6051.8e3),
        frameshift.JUPITER: (870.5360000, 71492e3, 66854e3),
        frameshift.SATURN: (810.7939024, 60268e3, 54364e3),
        frameshift.TITAN: (22.5769768, 2575e3, 2575e3),
    }
    for body, (rate, a, c) in cases.items():
        assert body.rotation_rate == pytest.approx(rate * DEG_PER_DAY, rel=1e-14)
        assert body.equatorial_radius == a
        assert body.polar_radius == pytest.approx(c, rel=1e-14)
        assert pickle.loads(pickle.dumps(body)) == body


@eager_and_chunked
def test_venus_frame_moves_west_and_mars_east(layout):
    # The frame's own eastward speed Ω a cos φ at the equator (Ω × r): Venus turns
    # retrograde, so its surface moves west at 1.81 m s-1 (computed from the report's
    # -1.4813688 deg/day and 6051.8 km); Mars east at 240.7 m s-1 (350.89 deg/day, 3396.19 km).
    ds = _winds([0.0, 60.0])
    venus = _run(frameshift.to_inertial, ds, layout, frameshift.VENUS)
    assert float(venus["u"][0]) == pytest.approx(-1.4813688 * DEG_PER_DAY * 6051.8e3, rel=1e-12)
    assert float(venus["u"][0]) == pytest.approx(-1.81, abs=5e-3)
    mars = _run(frameshift.to_inertial, ds, layout, frameshift.MARS)
    assert float(mars["u"][0]) == pytest.approx(350.891982443297 * DEG_PER_DAY * 3396.19e3)
    back = _run(frameshift.to_rotating, venus, layout, frameshift.VENUS)
    np.testing.assert_allclose(back["u"], 0.0, atol=1e-12)


@eager_and_chunked
def test_retrograde_coriolis_and_the_sense_of_inertial_oscillations(layout):
    # f = 2Ω sin φ (AMS Glossary, "Coriolis parameter"): negative in Venus's north. An
    # eastward wind at 45° N is deflected to the right (south) on a prograde body, so
    # inertial oscillations turn clockwise there (common practice); on Venus to the left,
    # counter-clockwise.
    ds = _winds([45.0], u=1.0)
    for body, sense in ((frameshift.VENUS, +1.0), (frameshift.MARS, -1.0)):
        acc = _run(frameshift.apparent_accelerations, ds, layout, body, terms="coriolis")
        north = float(acc["coriolis_northward"][0])
        f = 2 * body.rotation_rate * math.sin(math.radians(45.0))
        assert north == pytest.approx(-f * 1.0, rel=1e-12)
        # turning sense: z-component of V × a, positive = counter-clockwise
        assert np.sign(1.0 * north - 0.0 * float(acc["coriolis_eastward"][0])) == sense
    params = frameshift.coriolis_parameters(_winds([30.0]), frameshift.VENUS)
    assert float(params["coriolis_parameter"][0]) < 0


@eager_and_chunked
def test_planetocentric_latitude_on_jupiter(layout):
    # The frame speed is Ω times the distance from the axis. For a surface point at
    # planetocentric latitude ψ on an ellipse of radii a, c, that distance is
    # r cos ψ with r = a c / sqrt(c² cos² ψ + a² sin² ψ) (polar equation of an ellipse,
    # standard geometry); read as planetographic the same number is another point.
    jup = frameshift.JUPITER
    a, c = 71492e3, 66854e3
    psi = math.radians(45.0)
    r = a * c / math.sqrt((c * math.cos(psi)) ** 2 + (a * math.sin(psi)) ** 2)
    ds = _winds([45.0])
    centric = _run(frameshift.to_inertial, ds, layout, jup, latitude_kind="planetocentric")
    assert float(centric["u"][0]) == pytest.approx(jup.rotation_rate * r * math.cos(psi), rel=1e-12)
    graphic = _run(frameshift.to_inertial, ds, layout, jup)  # the default
    assert abs(float(graphic["u"][0]) - float(centric["u"][0])) > 500.0
    assert centric["lat"].values.tolist() == [45.0]  # the caller's latitudes stay
    assert centric["u"].attrs["latitude_kind"] == "planetocentric"
    back = _run(frameshift.to_rotating, centric, layout, jup, latitude_kind="planetocentric")
    np.testing.assert_allclose(back["u"], 0.0, atol=1e-9)
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, jup, latitude_kind="geocentric")


@eager_and_chunked
def test_mars_on_icrf_axes_matches_pyerfa_rotations(layout):
    # A point on Mars's equator at the prime meridian, at rest on Mars: its inertial
    # position is M (a, 0, 0) and velocity M (Ω × r), with M built by pyerfa's rotation
    # routines from the report's α0, δ0, W (written out in test_body_orientation) at TT.
    ds = _winds([0.0], time="2026-03-01T06:00")
    out = _run(frameshift.to_inertial, ds, layout, frameshift.MARS, basis="cartesian",
               celestial="icrf")  # fmt: skip
    jd1, jd2 = erfa.dtf2d("UTC", 2026, 3, 1, 6, 0, 0.0)
    tt1, tt2 = erfa.taitt(*erfa.utctai(jd1, jd2))
    d = (tt1 - 2451545.0) + tt2
    ra, dec, w = (math.radians(q) for q in mars_angles_by_hand(d, d / 36525.0))
    m = erfa_icrf_to_body(ra, dec, w).T
    a = 3396.19e3
    omega = 350.891982443297 * DEG_PER_DAY
    flat = out.transpose(..., "component")  # stored component first (CF 2.4)
    np.testing.assert_allclose(flat["position"].values[0], m @ [a, 0.0, 0.0], atol=1e-3)
    np.testing.assert_allclose(flat["velocity"].values[0], m @ [0.0, omega * a, 0.0], atol=1e-9)
    assert out["velocity"].attrs["inertial_axes"] == "ICRF"
    own = _run(frameshift.to_inertial, ds, layout, frameshift.MARS, basis="cartesian")
    assert own["velocity"].attrs["inertial_axes"] == "POLE"  # not "CIRS": Mars is not the Earth
    # own axes: z along the pole, so the velocity of a point at rest has no z part
    assert abs(float(own["velocity"].sel(component="z").values[0])) < 1e-9
    back = frameshift.to_rotating(out, frameshift.MARS, basis="cartesian", celestial="icrf")
    np.testing.assert_allclose(back["u"], 0.0, atol=1e-6)


@eager_and_chunked
def test_axes_refused_where_they_do_not_apply(layout):
    ds = as_layout(_winds([0.0]), layout)
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, frameshift.MARS, basis="cartesian", celestial="gcrs")
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, frameshift.EARTH, basis="cartesian", celestial="icrf")
    homemade = frameshift.Planet("test body", 1e-4, 1e6)
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, homemade, basis="cartesian", celestial="icrf")
