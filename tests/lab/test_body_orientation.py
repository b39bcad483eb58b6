"""Body orientation (pole α0, δ0 and prime meridian W) against pyerfa and astropy.

The rotational elements are those of the IAU Working Group on Cartographic
Coordinates and Rotational Elements 2015 report (Archinal et al. 2018, Celest.
Mech. Dyn. Astron. 130:22). The expressions for Mars are written out again in
this file, term by term from the report, so the data module and the series
evaluator are checked against a second transcription; the matrices are
checked against pyerfa's rotation routines and astropy's coordinates.
"""

import math

import erfa
import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord

from frameshift._kernels import orientation
from frameshift.frames.iau2015 import ELEMENTS
from tests.lab.reference import erfa_icrf_to_body, jupiter_angles_by_hand, mars_angles_by_hand

#: UTC calendar dates of the checks, and two-part TT Julian dates for them (pyerfa)
DATES = [(1990, 1, 1, 0, 0, 0.0), (2000, 1, 1, 12, 0, 0.0), (2026, 12, 2, 5, 30, 0.0),
         (2024, 6, 15, 18, 0, 0.0)]  # fmt: skip


def _tt(date):
    jd1, jd2 = erfa.dtf2d("UTC", *date)
    tai1, tai2 = erfa.utctai(jd1, jd2)
    return erfa.taitt(tai1, tai2)


@pytest.mark.parametrize(
    ("body", "deg_per_day", "rad_per_s"),
    [
        # Rates of W from the 2015 report (deg/day); rad s-1 computed as
        # deg/day × π/180 / 86400, as listed in shared/REFERENCE_VALUES.md
        ("mars", 350.891982443297, 7.0882181e-5),
        ("jupiter", 870.5360000, 1.7585323e-4),
        ("saturn", 810.7939024, 1.6378499e-4),
        ("venus", -1.4813688, -2.9924494e-7),
        ("titan", 22.5769768, 4.5606780e-6),
    ],
)
def test_rotation_rates_match_the_report(body, deg_per_day, rad_per_s):
    el = ELEMENTS[body]
    assert el.meridian[1] == deg_per_day
    assert el.rotation_rate == pytest.approx(rad_per_s, rel=1e-7)


def test_figures_match_the_report():
    # 2015 report, size and shape tables (km): equatorial and polar radii.
    assert ELEMENTS["mars"].radii_km == (3396.19, 3396.19, 3376.20)
    assert ELEMENTS["jupiter"].radii_km == (71492.0, 71492.0, 66854.0)
    assert ELEMENTS["saturn"].radii_km == (60268.0, 60268.0, 54364.0)
    assert ELEMENTS["venus"].radii_km == (6051.8,) * 3
    assert ELEMENTS["titan"].radii_km == (2575.0,) * 3
    # flattening f = (a - c)/a, computed
    assert 1 / ELEMENTS["jupiter"].inverse_flattening == pytest.approx(
        (71492 - 66854) / 71492, rel=1e-14
    )
    assert ELEMENTS["venus"].inverse_flattening == 0.0


@pytest.mark.parametrize(
    ("body", "by_hand"), [("mars", mars_angles_by_hand), ("jupiter", jupiter_angles_by_hand)]
)
@pytest.mark.parametrize("date", DATES)
def test_element_angles_follow_the_report_expressions(body, by_hand, date):
    jd1, jd2 = _tt(date)  # TT stands for TDB: they differ by < 2 ms (IAU 2006 B3)
    d = (jd1 - 2451545.0) + jd2
    ra, dec, w = by_hand(d, d / 36525.0)
    got = orientation.element_angles(ELEMENTS[body], jd1, jd2)
    # 1e-9 deg: float rounding of a W that has grown by ~1e7 deg in 40 years
    assert math.degrees(got[0]) == pytest.approx(ra, abs=1e-10)
    assert math.degrees(got[1]) == pytest.approx(dec, abs=1e-10)
    diff = (math.degrees(got[2]) - w + 180.0) % 360.0 - 180.0
    assert abs(diff) < 1e-8


@pytest.mark.parametrize("body", sorted(ELEMENTS))
@pytest.mark.parametrize("date", DATES[::2])
def test_body_to_icrf_matches_pyerfa_rotations(body, date):
    jd1, jd2 = _tt(date)
    ra, dec, w = orientation.element_angles(ELEMENTS[body], jd1, jd2)
    matrix = orientation.body_to_icrf(ra, dec, w)
    np.testing.assert_allclose(matrix, erfa_icrf_to_body(ra, dec, w).T, atol=2e-15)
    np.testing.assert_allclose(matrix @ matrix.T, np.eye(3), atol=2e-15)
    # the body's z axis is the pole at (α0, δ0): astropy's ICRS unit vector
    pole = SkyCoord(ra=ra * u.rad, dec=dec * u.rad, frame="icrs").cartesian.xyz.value
    np.testing.assert_allclose(matrix[:, 2], pole, atol=2e-15)
    np.testing.assert_allclose(orientation.pole_vector(ra, dec), pole, atol=2e-15)
    # W = 0 puts the prime meridian on the node: on the ICRF equator at α0 + 90°
    node = orientation.body_to_icrf(ra, dec, 0.0)[:, 0]
    ref = SkyCoord(ra=ra * u.rad + 90 * u.deg, dec=0 * u.deg, frame="icrs").cartesian.xyz.value
    np.testing.assert_allclose(node, ref, atol=2e-15)


def test_prime_meridians_turn_the_right_way():
    # Over a short step the body's x axis turns about the pole by Ẇ dt (the report's
    # sign: positive W rate counter-clockwise seen from the north pole); Venus backwards.
    jd1, jd2 = _tt(DATES[2])
    for body in ("mars", "venus"):
        el = ELEMENTS[body]
        a = orientation.body_to_icrf(*orientation.element_angles(el, jd1, jd2))
        b = orientation.body_to_icrf(*orientation.element_angles(el, jd1, jd2 + 0.01))
        turn = np.dot(np.cross(a[:, 0], b[:, 0]), a[:, 2])  # sin of the turn about the pole
        assert turn == pytest.approx(math.sin(math.radians(el.meridian[1] * 0.01)), rel=1e-6)


def test_venus_spins_backwards_relative_to_the_ecliptic():
    # Venus's obliquity to its orbit is about 177° (planetary fact sheets, recalled from
    # memory): its spin vector, rate × pole, lies near the south ecliptic pole. The north
    # ecliptic pole is at α = 270°, δ = 90° - 23.439° (IAU 2006 obliquity at J2000).
    el = ELEMENTS["venus"]
    ra, dec, _ = orientation.element_angles(el, 2451545.0, 0.0)
    spin = orientation.icrf_rotation_vector(ra, dec, el.rotation_rate)
    ecl = SkyCoord(ra=270 * u.deg, dec=(90 - 23.439) * u.deg).cartesian.xyz.value
    angle = math.degrees(math.acos(np.dot(spin, ecl) / np.linalg.norm(spin)))
    assert 170.0 < angle < 180.0
