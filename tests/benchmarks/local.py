"""B1: ``to_inertial(basis="local")`` on a large eager grid, beside plain numpy."""

from __future__ import annotations

import numpy as np

import frameshift
from tests.benchmarks.data import A_WGS84, F_WGS84, OMEGA, grid_shape, grid_winds
from tests.benchmarks.harness import Row, median_time, verdict

__all__ = ["run"]


def hand_written(ds) -> np.ndarray:
    """What a scientist would type: u + Ω (N + h) cos φ, broadcast by hand."""
    u = ds["ua"].values
    lat = np.deg2rad(ds["lat"].values)
    z = ds["z"].values
    e2 = F_WGS84 * (2.0 - F_WGS84)
    n = A_WGS84 / np.sqrt(1.0 - e2 * np.sin(lat) ** 2)
    shift = OMEGA * (n[None, :] + z[:, None]) * np.cos(lat)[None, :]
    return u + shift[None, :, :, None]


def run(quick: bool) -> list[Row]:
    points = 2 * 10**6 if quick else 2 * 10**7
    repeats = 3 if quick else 7
    ds = grid_winds(points)
    shape = grid_shape(points)
    u = ds["ua"].values
    floor_out = np.empty_like(u)

    def frameshift_call():
        return np.asarray(frameshift.to_inertial(ds, basis="local")["ua"].values)

    def floor_call():
        return np.add(u, 0.0, out=floor_out)

    # the same answer, or the comparison means nothing
    np.testing.assert_allclose(frameshift_call(), hand_written(ds), rtol=0, atol=1e-9)
    t_fs, _ = median_time(frameshift_call, repeats)
    t_hand, _ = median_time(lambda: hand_written(ds), repeats)
    t_floor, _ = median_time(floor_call, repeats)
    t_copy, _ = median_time(u.copy, repeats)
    sizes = f"{u.size:.2e} float64 points {shape} (time, z, lat, lon), {u.nbytes / 2**20:.0f} MiB"
    timings = {
        "frameshift": t_fs,
        "hand-written numpy": t_hand,
        "floor np.add(u, 0, out=)": t_floor,
        "u.copy()": t_copy,
    }
    r_hand = t_fs / t_hand
    r_floor = t_fs / t_floor
    return [
        Row(
            "B1",
            "local transform vs hand-written numpy",
            sizes,
            str(repeats),
            r_hand,
            "frameshift / numpy",
            "<= 1.2",
            verdict(r_hand, at_most=1.2),
            timings,
        ),
        Row(
            "B1",
            "local transform vs memory floor",
            sizes,
            str(repeats),
            r_floor,
            "frameshift / one read-write pass",
            "<= 3",
            verdict(r_floor, at_most=3.0),
            timings,
            extra={"frameshift / u.copy()": f"{t_fs / t_copy:.2f}"},
            note="floor: one read and one write of the field into a preallocated array",
        ),
    ]
