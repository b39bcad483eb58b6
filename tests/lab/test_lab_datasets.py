"""Lab Datasets between a rotating table and the lab, the planar terms and the free surface.

Every check runs on eager and Dask-chunked input (chunked runs must not compute).
"""

from __future__ import annotations

import pickle

import numpy as np
import pytest
import xarray as xr

import frameshift
from frameshift.errors import ConventionError, FrameError, MissingInputError, UnitsError
from tests.helpers import as_layout, eager_and_chunked, raise_if_dask_computes
from tests.lab.builders import lab_dataset

RPM = 2.0 * np.pi / 60.0  # definition of the revolution per minute, rad s-1
G0 = 9.80665  # standard gravity, m s-2 (3rd CGPM, 1901)
VEL = {"x": "u", "y": "v"}


def _run(fn, ds, layout, *args, **kwargs):
    data = as_layout(ds, layout)
    if layout == "chunked":
        with raise_if_dask_computes():
            out = fn(data, *args, **kwargs)
        assert out["u"].chunks is not None if "u" in out else True
        return out.compute()
    return fn(data, *args, **kwargs)


# --- the table as a frame ---------------------------------------------------------------
def test_rotating_table_rates_with_units():
    # 1 rpm = 2π/60 rad s-1 and 1 deg s-1 = π/180 rad s-1 (unit definitions)
    assert frameshift.RotatingTable("10 rpm").rotation_rate == pytest.approx(10 * RPM, rel=1e-15)
    assert frameshift.RotatingTable((60, "deg s-1")).rotation_rate == pytest.approx(np.pi / 3)
    assert frameshift.RotatingTable("1.5 rad s-1").rotation_rate == 1.5
    cw = frameshift.RotatingTable("10 rpm", sense="clockwise")
    assert cw.rotation_rate == pytest.approx(-10 * RPM, rel=1e-15)
    assert pickle.loads(pickle.dumps(cw)) == cw
    assert frameshift.RotatingTable("10 rpm", center=("5 cm", 0.02)).figure.center == (0.05, 0.02)


@pytest.mark.parametrize(
    ("rate", "kwargs", "error"),
    [
        (10.0, {}, UnitsError),  # no units
        ("2 Hz", {}, UnitsError),  # cycles or radians?
        ("3 m s-1", {}, UnitsError),  # not a rate
        ("10 rpm", {"sense": "anticlockwise"}, ConventionError),
        ("10 rpm", {"center": (0.0,)}, ConventionError),
    ],
)
def test_rotating_table_refuses_what_is_ambiguous(rate, kwargs, error):
    with pytest.raises(error):
        frameshift.RotatingTable(rate, **kwargs)


def _spin_up(omega0_rpm=6.0, omega1_rpm=10.0, ramp_s=1.0):
    t = np.arange(0, 2001) * np.timedelta64(1, "ms")
    sec = t / np.timedelta64(1, "s")
    rpm = omega0_rpm + (omega1_rpm - omega0_rpm) * np.clip(sec / ramp_s, 0, 1)
    return xr.DataArray(rpm, dims="time", coords={"time": t}, attrs={"units": "rpm"})


# --- lab fields both ways ----------------------------------------------------------------
@eager_and_chunked
def test_fluid_at_rest_in_the_lab_seen_from_a_table_at_10_rpm(layout):
    # Solid-body kinematics (common practice): relative to a table at Ω the fluid at
    # rest in the lab moves with -Ω × r; in the table frame at the same points.
    ds = lab_dataset(lambda x, y, t: (0 * x + 0 * t, 0 * y + 0 * t), frame="inertial")
    table = frameshift.RotatingTable("10 rpm")
    out = _run(frameshift.to_rotating, ds, layout, table, velocity=VEL)
    # positions of the points in the table frame: the table turned by Ω t
    x_t, y_t = out["x_rotating"] / 100, out["y_rotating"] / 100  # cm -> m
    np.testing.assert_allclose(out["u"] / 1000, 10 * RPM * y_t, atol=1e-14)
    np.testing.assert_allclose(out["v"] / 1000, -10 * RPM * x_t, atol=1e-14)
    assert out["u"].attrs["reference_frame"] == "rotating"
    assert out["u"].attrs["units"] == "mm s-1"
    assert ds["u"].attrs["reference_frame"] == "inertial"  # input untouched


@eager_and_chunked
def test_solid_body_rotation_with_the_table_is_zero_on_it(layout):
    # Fluid turning with the table (common practice): zero velocity relative to it.
    omega = 10 * RPM
    table = frameshift.RotatingTable("10 rpm", center=(0.02, -0.01))
    ds = lab_dataset(lambda x, y, t: (-omega * (y + 0.01) + 0 * t, omega * (x - 0.02) + 0 * t))
    ds["u"].attrs["reference_frame"] = ds["v"].attrs["reference_frame"] = "inertial"
    out = _run(frameshift.to_rotating, ds, layout, table, velocity=VEL, grid="same")
    # lab positions are the grid here (a lab camera): the table sees no motion
    np.testing.assert_allclose(out["u"], 0.0, atol=1e-12)
    np.testing.assert_allclose(out["v"], 0.0, atol=1e-12)


@eager_and_chunked
@pytest.mark.parametrize("grid", ["same", "fixed"])
def test_round_trip_table_lab_table(layout, grid):
    # A frame change and its inverse compose to the identity (exact algebra); on the
    # fixed grid the way back lands on the input points again, so a linear field
    # returns exactly inside the measured area.
    ds = lab_dataset()
    table = frameshift.RotatingTable(_spin_up(), center=(0.01, 0.0))
    lab = _run(frameshift.to_inertial, ds, layout, table, velocity=VEL, grid=grid)
    back = frameshift.to_rotating(lab, table, grid=grid)
    ok = np.isfinite(back["u"].values)
    assert ok.sum() > 0.5 * ok.size
    np.testing.assert_allclose(back["u"].values[ok], ds["u"].values[ok], atol=1e-9)
    np.testing.assert_allclose(back["v"].values[ok], ds["v"].values[ok], atol=1e-9)
    assert back["u"].attrs["reference_frame"] == "rotating"


@eager_and_chunked
def test_fixed_grid_reproduces_a_linear_lab_field(layout):
    # Bilinear interpolation reproduces a field linear in x and y (common practice in
    # numerical analysis); seen from a table, a linear lab field stays linear.
    def lab_field(x, y):
        return 0.01 + 0.2 * x - 0.05 * y, -0.02 + 0.07 * x + 0.11 * y

    table = frameshift.RotatingTable("10 rpm")
    ds = lab_dataset()
    sec = (ds["time"] / np.timedelta64(1, "s")).values[:, None, None]
    yy, xx = np.meshgrid(ds["y"].values / 100, ds["x"].values / 100, indexing="ij")
    # the table-frame view of the lab field at the table grid points (kernel-free algebra)
    th = 10 * RPM * sec
    lx, ly = np.cos(th) * xx - np.sin(th) * yy, np.sin(th) * xx + np.cos(th) * yy
    lu, lv = lab_field(lx, ly)
    tu = np.cos(th) * lu + np.sin(th) * lv + 10 * RPM * yy
    tv = -np.sin(th) * lu + np.cos(th) * lv - 10 * RPM * xx
    ds["u"].values[:] = tu * 1000
    ds["v"].values[:] = tv * 1000
    out = _run(frameshift.to_inertial, ds, layout, table, velocity=VEL, grid="fixed")
    eu, ev = lab_field(xx, yy)
    # inside: the lab point's table position (rotated back by Ω t) is on the grid
    qx, qy = np.cos(th) * xx + np.sin(th) * yy, -np.sin(th) * xx + np.cos(th) * yy
    inside = (np.abs(qx) <= 0.3 - 1e-9) & (np.abs(qy) <= 0.25 - 1e-9)
    outside = (np.abs(qx) > 0.3 + 1e-9) | (np.abs(qy) > 0.25 + 1e-9)
    assert outside.any() and inside.sum() > 100
    np.testing.assert_allclose(
        (out["u"].values / 1000)[inside], np.broadcast_to(eu, inside.shape)[inside], atol=1e-12
    )
    np.testing.assert_allclose(
        (out["v"].values / 1000)[inside], np.broadcast_to(ev, inside.shape)[inside], atol=1e-12
    )
    assert np.isnan(out["u"].values[outside]).all()
    assert np.isnan(out["dye"].values[outside]).all()  # other fields move with the grid
    np.testing.assert_allclose(out["dye"].values[inside], 1.0)
    assert out["x"].attrs["reference_frame"] == "inertial"
    assert "x_inertial" not in out.coords


@eager_and_chunked
def test_lab_refusals(layout):
    table = frameshift.RotatingTable("10 rpm")
    ds = as_layout(lab_dataset(), layout)
    with pytest.raises(MissingInputError):
        frameshift.to_inertial(ds, table)  # no velocity= and nothing marked
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, table, velocity={"eastward": "u", "northward": "v"})
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, table, velocity=VEL, grid="nearest")
    with pytest.raises(ConventionError):
        frameshift.to_inertial(ds, table, velocity=VEL, basis="cartesian")
    with pytest.raises(ConventionError):  # grid= places lab fields only
        frameshift.to_inertial(ds, frameshift.EARTH, grid="fixed")
    with pytest.raises(MissingInputError):
        frameshift.to_inertial(ds.isel(time=0, drop=True), table, velocity=VEL)
    lab = frameshift.to_inertial(ds, table, velocity=VEL)
    with pytest.raises(FrameError):
        frameshift.to_inertial(lab, table)
    before = ds.copy(deep=True)
    bad = ds.assign(u=ds["u"].assign_attrs(units="K"))
    with pytest.raises(UnitsError):
        frameshift.to_inertial(bad, table, velocity=VEL)
    frameshift.to_inertial(ds, table, velocity=VEL, grid="fixed")
    xr.testing.assert_identical(ds, before)  # the input is never modified


# --- terms on Cartesian axes -------------------------------------------------------------
@eager_and_chunked
def test_spin_up_gives_the_euler_term_and_steady_rotation_none(layout):
    # -(dΩ/dt) × r = Ω̇ (y, -x) (rotating-frame mechanics, e.g. Goldstein, Classical
    # Mechanics, ch. 4; recalled from memory); zero for a steady table.
    ds = lab_dataset(ntime=3, step_ms=200)
    ramp = _spin_up(6.0, 10.0, 1.0)  # +4 rpm per second during the first second
    spin = frameshift.RotatingTable(ramp)
    acc = _run(frameshift.apparent_accelerations, ds, layout, frame=spin, velocity=VEL)
    alpha = 4 * RPM
    yy, xx = np.meshgrid(ds["y"].values / 100, ds["x"].values / 100, indexing="ij")
    np.testing.assert_allclose(acc["euler_x"].isel(time=1), alpha * yy, rtol=1e-6, atol=1e-12)
    np.testing.assert_allclose(acc["euler_y"].isel(time=1), -alpha * xx, rtol=1e-6, atol=1e-12)
    assert set(acc.data_vars) >= {
        f"{t}_{c}" for t in ("coriolis", "centrifugal", "euler", "total") for c in "xyz"
    }
    assert acc["total_x"].attrs["units"] == "m s-2"
    assert (acc["coriolis_z"] == 0).all()
    steady = frameshift.RotatingTable("10 rpm")
    acc2 = _run(frameshift.apparent_accelerations, ds, layout, frame=steady, velocity=VEL)
    assert (acc2["euler_x"] == 0).all() and (acc2["euler_y"] == 0).all()
    # Coriolis -2Ω × V = (2Ω v, -2Ω u), centrifugal Ω² r (same source)
    u, v = ds["u"] / 1000, ds["v"] / 1000
    np.testing.assert_allclose(acc2["coriolis_x"], 2 * 10 * RPM * v, rtol=1e-12)
    np.testing.assert_allclose(acc2["coriolis_y"], -2 * 10 * RPM * u, rtol=1e-12)
    np.testing.assert_allclose(acc2["centrifugal_x"].isel(time=0), (10 * RPM) ** 2 * xx, rtol=1e-12)


@eager_and_chunked
def test_planar_terms_refuse_inertial_velocities_and_curvature(layout):
    table = frameshift.RotatingTable("10 rpm")
    ds = as_layout(lab_dataset(frame="inertial"), layout)
    with pytest.raises(FrameError):
        frameshift.apparent_accelerations(ds, frame=table, velocity=VEL)
    with pytest.raises(ConventionError):
        frameshift.apparent_accelerations(
            as_layout(lab_dataset(), layout), frame=table, velocity=VEL, terms=["curvature"]
        )


# --- free surface ------------------------------------------------------------------------
@eager_and_chunked
def test_free_surface_rim_of_a_30_cm_tank_at_10_rpm(layout):
    # Handbook formula h = Ω² r² / (2 g) for rigid-body rotation of a liquid (e.g.
    # White, Fluid Mechanics; recalled from memory): about 5.03 mm at the rim (the issue).
    ds = lab_dataset()
    table = frameshift.RotatingTable("10 rpm")
    bump = 0.4 * np.exp(-((ds["x"] - 5) ** 2 + ds["y"] ** 2) / 50.0)  # mm
    ds["eta"] = (
        20.0
        + 0 * ds["dye"]
        + frameshift.free_surface(ds, table)["solid_body_surface"] * 1000
        + bump
    ).assign_attrs(units="mm")
    out = _run(frameshift.free_surface, ds, layout, table, height="eta")
    surface = out["solid_body_surface"]
    assert surface.attrs["units"] == "mm"
    rim = surface.sel(x=30.0, y=0.0, method="nearest").isel(time=0)
    assert float(rim) == pytest.approx(5.03, abs=0.005)
    dep = out["surface_departure"].isel(time=0)
    np.testing.assert_allclose(dep, (bump - bump.mean()).transpose(*dep.dims), atol=1e-12)


@eager_and_chunked
def test_vertical_component_and_dated_times(layout):
    # The axis is vertical, so w is the same in both frames (common practice); a table
    # whose epoch is a date works on dated data: 90 s after the epoch at 10 rpm the table
    # has turned 15 turns, so the lab axes and the table axes coincide again.
    ds = lab_dataset(lambda x, y, t: (0 * x + 0 * t, 0 * y + 0 * t), ntime=2, step_ms=90_000)
    ds = ds.assign(w=ds["u"] + 3.0)
    ds = ds.assign_coords(time=np.datetime64("2026-05-04T10:00:00") + ds["time"].values)
    table = frameshift.RotatingTable("10 rpm", epoch="2026-05-04T10:00:00")
    out = _run(frameshift.to_inertial, ds, layout, table, velocity={**VEL, "z": "w"})
    np.testing.assert_allclose(out["w"], 3.0)
    assert out["w"].attrs["velocity_component"] == "z"
    yy, xx = np.meshgrid(ds["y"].values, ds["x"].values, indexing="ij")
    np.testing.assert_allclose(out["u"].isel(time=1), -10 * RPM * yy * 10, atol=1e-9)  # mm s-1
    np.testing.assert_allclose(out["v"].isel(time=1), 10 * RPM * xx * 10, atol=1e-9)
    fixed = _run(frameshift.to_inertial, ds, layout, table, velocity={**VEL, "z": "w"},
                 grid="fixed")  # fmt: skip
    assert np.isnan(fixed["w"].values).sum() == 0  # whole turns: every point is inside
    np.testing.assert_allclose(fixed["w"], 3.0)
