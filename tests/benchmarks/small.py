"""B5: per-call time on a 1,000-point Dataset (the fixed cost of a call)."""

from __future__ import annotations

import frameshift
from tests.benchmarks.data import grid_winds
from tests.benchmarks.harness import Row, median_time, not_available, verdict

__all__ = ["run"]


def _small():
    ds = grid_winds(1000, upward=True)
    assert ds["ua"].size == 1000
    return ds


def run(quick: bool) -> list[Row]:
    repeats = 50 if quick else 300
    ds = _small()
    calls = {
        "to_inertial(basis='local')": lambda: frameshift.to_inertial(ds)["ua"].values,
        "to_inertial(basis='cartesian')": lambda: (
            frameshift.to_inertial(ds, basis="cartesian")["velocity"].values
        ),
        "to_inertial(basis='cartesian', celestial='gcrs')": lambda: (
            frameshift.to_inertial(ds, basis="cartesian", celestial="gcrs")["velocity"].values
        ),
    }
    accel = getattr(frameshift, "apparent_accelerations", None)
    rows = []
    sizes = f"{ds['ua'].size} points {tuple(ds['ua'].shape)} (time, z, lat, lon), u/v/w"
    for name, call in calls.items():
        t, _ = median_time(call, repeats, warmup=5)
        rows.append(_row(name, sizes, repeats, t))
    if accel is None:
        rows.append(
            not_available(
                "B5", "apparent_accelerations", "apparent_accelerations not found", "<= 5 ms"
            )
        )
    else:
        t, _ = median_time(lambda: accel(ds)["total_eastward"].values, repeats, warmup=5)
        rows.append(_row("apparent_accelerations (all terms)", sizes, repeats, t))
    return rows


def _row(name: str, sizes: str, repeats: int, t: float) -> Row:
    ms = t * 1e3
    return Row(
        "B5",
        f"small call: {name}",
        sizes,
        str(repeats),
        ms,
        "ms per call",
        "<= 5 ms",
        verdict(ms, at_most=5.0),
        {"per call": t},
    )
