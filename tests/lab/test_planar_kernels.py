"""Planar (rotating-table) kernels against outside sources and exact properties."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from frameshift._kernels import planar

RPM = 2.0 * np.pi / 60.0  # 1 revolution per minute in rad s-1 (definition of the unit)
G0 = 9.80665  # standard acceleration of gravity, m s-2 (3rd CGPM, 1901; SI Brochure)

finite = st.floats(-10.0, 10.0, allow_nan=False)


@settings(max_examples=100, deadline=None)
@given(
    x=finite,
    y=finite,
    u=finite,
    v=finite,
    angle=st.floats(-50.0, 50.0),
    rate=st.floats(-5.0, 5.0),
    cx=finite,
    cy=finite,
)
def test_table_lab_round_trip(x, y, u, v, angle, rate, cx, cy):
    # A frame change and its inverse compose to the identity (exact algebra).
    lab = planar.table_to_lab(x, y, u, v, angle, rate, cx, cy)
    back = planar.lab_to_table(*lab, angle, rate, cx, cy)
    np.testing.assert_allclose(back, (x, y, u, v), atol=1e-11)


def test_fluid_at_rest_in_the_lab_seen_from_a_table_at_10_rpm():
    # Solid-body kinematics (common practice): fluid at rest in the lab has, relative to
    # a table turning at Ω, the velocity -Ω × r (clockwise circles for a
    # counter-clockwise table), whatever the table's angle.
    omega = 10 * RPM
    x, y = np.meshgrid(np.linspace(-0.3, 0.3, 7), np.linspace(-0.2, 0.4, 5))
    for angle in (0.0, 0.7, -2.5):
        lab_x, lab_y = planar.rotate(x, y, angle)
        tx, ty, u, v = planar.lab_to_table(lab_x, lab_y, 0.0, 0.0, angle, omega)
        np.testing.assert_allclose((tx, ty), (x, y), atol=1e-15)
        np.testing.assert_allclose(u, omega * y, atol=1e-15)  # -Ω ẑ × r = Ω (y, -x)
        np.testing.assert_allclose(v, -omega * x, atol=1e-15)


def test_fluid_turning_with_the_table_is_at_rest_on_it():
    # Solid-body rotation with the table (common practice): lab velocity Ω × (r - c)
    # about the axis through c, and zero velocity relative to the table.
    omega, cx, cy = 10 * RPM, 0.05, -0.02
    x, y = np.meshgrid(np.linspace(-0.3, 0.3, 7), np.linspace(-0.3, 0.3, 7))
    u_lab, v_lab = -omega * (y - cy), omega * (x - cx)
    _, _, u, v = planar.lab_to_table(x, y, u_lab, v_lab, 1.2, omega, cx, cy)
    np.testing.assert_allclose(u, 0.0, atol=1e-15)
    np.testing.assert_allclose(v, 0.0, atol=1e-15)


def test_rim_of_a_30_cm_tank_at_10_rpm_stands_5_03_mm_above_the_centre():
    # Handbook formula for the free surface of a liquid in solid-body rotation,
    # h = Ω² r² / (2 g) (e.g. White, Fluid Mechanics, "rigid-body rotation"; recalled from
    # memory); the value for 10 rpm and r = 0.30 m is about 5.03 mm.
    rim = planar.solid_body_surface(0.30, 0.0, 10 * RPM, G0)
    assert rim == pytest.approx(5.03e-3, abs=5e-6)
    assert planar.solid_body_surface(0.0, 0.0, 10 * RPM, G0) == 0.0
    # a clockwise table raises the same surface (Ω² does not care about the sense)
    assert planar.solid_body_surface(0.0, 0.30, -10 * RPM, G0) == pytest.approx(rim, rel=1e-15)


def test_surface_departure_removes_the_paraboloid_and_the_mean_level():
    # A measured surface = paraboloid + level + a bump: the departure is the bump minus
    # its area mean (volume kept), whatever the level (definition, common practice).
    omega = 8 * RPM
    x, y = np.meshgrid(np.linspace(-0.3, 0.3, 31), np.linspace(-0.3, 0.3, 31))
    bump = 1e-3 * np.exp(-((x - 0.1) ** 2 + y**2) / 0.01)
    height = planar.solid_body_surface(x, y, omega, G0) + 0.12 + bump
    height = np.stack([height, height - 0.05])  # two times: the level changes
    height[1, 0, 0] = np.nan  # a missing point is left out of the mean
    dep = planar.surface_departure(height, x, y, omega, G0)
    np.testing.assert_allclose(dep[0], bump - bump.mean(), atol=1e-15)
    ok = np.isfinite(height[1])
    np.testing.assert_allclose(dep[1][ok], bump[ok] - bump[ok].mean(), atol=1e-15)
    assert np.isnan(dep[1, 0, 0])


def test_coriolis_deflects_to_the_right_on_a_counter_clockwise_table():
    # -2Ω × V with Ω along +z (counter-clockwise seen from above) points to the right of
    # V (common practice, as in the northern hemisphere); a clockwise table to the left.
    ax, ay = planar.coriolis(1.0, 0.0, 1.0)
    assert (ax, ay) == (0.0, -2.0)
    ax, ay = planar.coriolis(1.0, 0.0, -1.0)
    assert (ax, ay) == (0.0, 2.0)


def _straight_line_seen_from_a_spinning_up_table(t, omega0, alpha, cx, cy):
    x0, y0, u0, v0 = 0.21, -0.13, 0.034, 0.051  # a particle moving freely in the lab
    lab_x, lab_y = x0 + u0 * t, y0 + v0 * t
    angle = omega0 * t + 0.5 * alpha * t * t  # θ = ∫ Ω dt with Ω = Ω0 + α t
    rate = omega0 + alpha * t
    return planar.lab_to_table(lab_x, lab_y, u0, v0, angle, rate, cx, cy), rate


@pytest.mark.parametrize("alpha", [0.0, 0.05, -0.2])
def test_closure_straight_line_in_the_lab_seen_from_a_spinning_up_table(alpha):
    # Acceleration in a rotating frame (Goldstein, Poole & Safko, Classical Mechanics,
    # 3rd ed., ch. 4, rotating frames; recalled from memory): for a particle with no
    # force on it in the lab, d²r/dt² seen on the table = -2Ω × v - Ω × (Ω × r) - Ω̇ × r.
    # The table-frame path is differenced numerically (central differences, step h):
    # the residual must be at the level of the differencing error, O(h²).
    omega0, cx, cy, h = 1.1, 0.02, -0.03, 1e-3
    t = np.array([0.5, 3.0, 7.25])
    steps = t[:, None] + h * np.array([-1.0, 0.0, 1.0])
    (x, y, u, v), rate = _straight_line_seen_from_a_spinning_up_table(steps, omega0, alpha, cx, cy)
    vel_x, vel_y = (x[:, 2] - x[:, 0]) / (2 * h), (y[:, 2] - y[:, 0]) / (2 * h)
    acc_x = (x[:, 2] - 2 * x[:, 1] + x[:, 0]) / h**2
    acc_y = (y[:, 2] - 2 * y[:, 1] + y[:, 0]) / h**2
    # the kernel's table-frame velocity is the derivative of the table-frame path
    np.testing.assert_allclose(u[:, 1], vel_x, atol=2e-6)
    np.testing.assert_allclose(v[:, 1], vel_y, atol=2e-6)
    terms = planar.planar_accelerations(
        x[:, 1], y[:, 1], u[:, 1], v[:, 1], rate[:, 1], alpha, cx, cy
    )
    total_x, total_y, total_z = terms[-3:]
    np.testing.assert_allclose(total_x, acc_x, atol=2e-5)
    np.testing.assert_allclose(total_y, acc_y, atol=2e-5)
    assert np.all(total_z == 0.0)
    # the totals are the sums of the three terms, and the Euler part is -Ω̇ × r
    cor_x, cor_y, _, cen_x, cen_y, _, eul_x, eul_y, _ = terms[:9]
    np.testing.assert_allclose(total_x, cor_x + cen_x + eul_x, rtol=1e-14)
    np.testing.assert_allclose(eul_x, alpha * (y[:, 1] - cy), rtol=1e-14, atol=0)
    np.testing.assert_allclose(eul_y, -alpha * (x[:, 1] - cx), rtol=1e-14, atol=0)
    if alpha == 0.0:
        assert np.all(eul_x == 0.0) and np.all(eul_y == 0.0)
    # without the Euler term the closure fails during spin-up (the check has teeth)
    if alpha != 0.0:
        assert np.max(np.abs(cor_x + cen_x - acc_x) + np.abs(cor_y + cen_y - acc_y)) > 1e-3


def _linear_lab_field(x, y):
    return 0.01 + 0.2 * x - 0.05 * y, -0.02 + 0.07 * x + 0.11 * y


@pytest.mark.parametrize("direction", planar.DIRECTIONS)
def test_fixed_grid_reproduces_a_linear_field_inside_the_measured_area(direction):
    # Bilinear interpolation reproduces any field linear in x and y exactly (a property
    # of tensor-product linear interpolation, common practice in numerical analysis),
    # and a linear field stays linear under a frame change of a rotating table.
    ax_x = np.linspace(-0.3, 0.3, 25)
    ax_y = np.linspace(0.25, -0.25, 21)  # a descending axis, as image rows often are
    gy, gx = np.meshgrid(ax_y, ax_x, indexing="ij")
    angle = np.array([0.0, 0.4, 2.0])
    rate = np.array([0.5, 0.8, 1.3])
    cx, cy = 0.03, -0.01
    if direction == "to_inertial":  # table field = the lab field seen from the table
        lab_x, lab_y = planar.table_to_lab(gx, gy, 0, 0, angle[:, None, None], 0, cx, cy)[:2]
        u_lab, v_lab = _linear_lab_field(lab_x, lab_y)
        src = planar.lab_to_table(
            lab_x, lab_y, u_lab, v_lab, angle[:, None, None], rate[:, None, None], cx, cy
        )[2:]
        expected = [np.broadcast_to(q, (3, *gx.shape)) for q in _linear_lab_field(gx, gy)]
    else:  # lab field measured on the grid; expected: its table-frame view on the grid
        src = _linear_lab_field(gx, gy)
        lab_x, lab_y = planar.table_to_lab(gx, gy, 0, 0, angle[:, None, None], 0, cx, cy)[:2]
        u_lab, v_lab = _linear_lab_field(lab_x, lab_y)
        expected = planar.lab_to_table(
            lab_x, lab_y, u_lab, v_lab, angle[:, None, None], rate[:, None, None], cx, cy
        )[2:]
    got_u, got_v = planar.fixed_grid_change(
        ax_y, ax_x, src[0], src[1], angle, rate, cx, cy, direction=direction
    )
    # which target points lie inside the measured area: their source-frame position
    qx, qy = (planar.lab_to_table if direction == "to_inertial" else planar.table_to_lab)(
        gx, gy, 0, 0, angle[:, None, None], 0, cx, cy
    )[:2]
    inside = (np.abs(qx) <= 0.3 - 1e-9) & (np.abs(qy) <= 0.25 - 1e-9)
    outside = (np.abs(qx) > 0.3 + 1e-9) | (np.abs(qy) > 0.25 + 1e-9)
    assert inside[1].sum() > 300 and outside[1].sum() > 50  # the test covers both cases
    np.testing.assert_allclose(got_u[inside], expected[0][inside], atol=1e-13)
    np.testing.assert_allclose(got_v[inside], expected[1][inside], atol=1e-13)
    assert np.all(np.isnan(got_u[outside])) and np.all(np.isnan(got_v[outside]))
    # at angle 0 every point is inside and the result is the same-point change
    assert np.all(np.isfinite(got_u[0]))


def test_fixed_grid_keeps_missing_values_missing():
    # A gap in the measurement stays a gap (no value is invented next to a missing one).
    ax = np.linspace(-1.0, 1.0, 11)
    u = np.ones((11, 11))
    u[5, 5] = np.nan
    out_u, out_v = planar.fixed_grid_change(
        ax, ax, u, np.zeros_like(u), 0.0, 0.0, direction="to_inertial"
    )
    assert np.isnan(out_u[5, 5]) and np.isnan(out_v[5, 5])
    assert np.isfinite(out_u[0, 0])


def test_kernels_broadcast_time_against_a_grid():
    # Kernel contract (frameshift._kernels): inputs broadcast-compatible, outputs full shape.
    x = np.linspace(-0.2, 0.2, 4)[None, None, :]
    y = np.linspace(-0.1, 0.1, 3)[None, :, None]
    rate = np.array([0.1, 0.2])[:, None, None]
    out = planar.table_to_lab(x, y, 0.0, 0.0, rate * 10, rate)
    assert all(q.shape == (2, 3, 4) for q in out)
    terms = planar.planar_accelerations(x, y, 0.0, 0.0, rate, 0.01)
    assert len(terms) == 12 and all(q.shape == (2, 3, 4) for q in terms)
