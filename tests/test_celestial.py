"""Precession-nutation on many dates: interpolated CIP coordinates against pyerfa."""

import erfa
import numpy as np
import pytest

from frameshift import EARTH
from frameshift._kernels import rotation
from frameshift.frames.celestial import NODE_STEP, body_to_inertial_matrix, cip_coordinates
from frameshift.frames.timescales import julian_date_parts, utc_to_tt


def _dates(start: str, days: float, n: int, seed: int = 0):
    rng = np.random.default_rng(seed)
    t0 = np.datetime64(start, "ns")
    offsets = np.sort(rng.uniform(0.0, days * 86400.0, n)) * 1e9
    return julian_date_parts(t0 + offsets.astype("timedelta64[ns]"))


@pytest.mark.parametrize(
    ("start", "days"),
    [
        ("2020-01-01", 730.0),  # two years, no leap second
        ("2016-11-01", 120.0),  # across the leap second at the end of 2016-12-31
        ("2030-06-01", 2.0),  # a short span (past the leap-second table)
    ],
)
def test_interpolated_cip_matches_erfa(start, days):
    # pyerfa xys06a (IAU 2006/2000A X, Y, s at TT) at every date is the reference;
    # interpolation must stay at the float64 rounding of the series (~1e-15 rad).
    jd1, jd2 = _dates(start, days, 20000)
    assert days / NODE_STEP < jd1.size  # enough dates that the nodes are used
    got = cip_coordinates(jd1, jd2)
    ref = erfa.xys06a(*utc_to_tt(jd1, jd2))
    for g, r in zip(got, ref, strict=True):
        np.testing.assert_allclose(g, r, rtol=0, atol=3e-15)


def test_few_dates_are_evaluated_exactly():
    jd1, jd2 = _dates("2024-03-15", 10.0, 5)
    ref = erfa.xys06a(*utc_to_tt(jd1, jd2))
    for g, r in zip(cip_coordinates(jd1, jd2), ref, strict=True):
        np.testing.assert_array_equal(g, r)


def test_gcrs_matrix_matches_erfa_c2i06a_on_many_dates():
    # r_GCRS = C2I^T R3(-ERA) r_TIRS (SOFA: c2i06a, era00; polar motion not applied)
    jd1, jd2 = _dates("2021-01-01", 365.0, 5000, seed=1)
    m = body_to_inertial_matrix(EARTH, jd1, jd2, 0.0, "gcrs")
    c2i = erfa.c2i06a(*utc_to_tt(jd1, jd2))
    ref = np.einsum("...ji,...jk->...ik", c2i, rotation.rotation_about_z(erfa.era00(jd1, jd2)))
    np.testing.assert_allclose(m, ref, rtol=0, atol=5e-15)
    # orthonormal to rounding
    eye = np.einsum("...ji,...jk->...ik", m, m)
    np.testing.assert_allclose(eye, np.broadcast_to(np.eye(3), eye.shape), atol=1e-15)


def test_matrix_arrays_behave_as_ordinary_arrays():
    m = rotation.rotation_about_z(np.array([0.3, 1.2]))
    assert m.shape == (2, 3, 3)
    plain = np.ascontiguousarray(m)
    vec = np.array([[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]])
    np.testing.assert_array_equal(rotation.apply_matrix(m, vec), rotation.apply_matrix(plain, vec))
