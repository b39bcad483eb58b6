"""B4: the command line converting a large NetCDF file, beside a plain xarray copy."""

from __future__ import annotations

from tests.benchmarks.harness import Row, not_available

__all__ = ["run"]


def run(quick: bool) -> list[Row]:
    return [not_available("B4", "archive conversion", "not written yet", "<= 1.3, <= 1 GB")]
