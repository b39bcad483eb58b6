"""Timing, result rows and the table the benchmark run prints."""

from __future__ import annotations

import gc
import statistics
import time
from collections.abc import Callable
from dataclasses import asdict, dataclass, field

__all__ = ["Row", "format_table", "median_time", "not_available", "verdict"]


def median_time(fn: Callable[[], object], repeats: int, warmup: int = 1) -> tuple[float, list]:
    """Median wall time (s) of ``fn()`` over ``repeats`` calls, after ``warmup`` calls.

    Garbage is collected before each call so one call's leftovers are not
    charged to the next.
    """
    for _ in range(warmup):
        fn()
    times = []
    for _ in range(repeats):
        gc.collect()
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), times


@dataclass
class Row:
    """One measured ratio (or one case that could not run)."""

    case: str
    what: str
    sizes: str
    repeats: str
    ratio: float | None
    ratio_label: str
    target: str
    status: str
    timings: dict = field(default_factory=dict)
    extra: dict = field(default_factory=dict)
    note: str = ""

    def to_json(self) -> dict:
        return asdict(self)


def verdict(ratio: float | None, *, at_most: float | None = None, at_least: float | None = None):
    """``"PASS"``/``"MISS"`` for ``ratio`` against an upper or lower bound."""
    if ratio is None:
        return "n/a"
    if at_most is not None and ratio > at_most:
        return "MISS"
    if at_least is not None and ratio < at_least:
        return "MISS"
    return "PASS"


def not_available(case: str, what: str, reason: str, target: str = "") -> Row:
    """A row for a case whose subject does not exist yet (reported, not failed)."""
    return Row(case, what, "-", "-", None, "-", target, "not available", note=reason)


def _fmt_seconds(t: float) -> str:
    if t >= 1.0:
        return f"{t:.2f} s"
    if t >= 1e-3:
        return f"{t * 1e3:.1f} ms"
    return f"{t * 1e6:.0f} µs"


def format_table(rows: list[Row]) -> str:
    """A fixed-width table of the rows, with the timings spelled out below each case."""
    head = ("case", "what", "ratio", "target", "status")
    body = []
    for r in rows:
        ratio = "-" if r.ratio is None else f"{r.ratio:.3g} ({r.ratio_label})"
        body.append((r.case, r.what, ratio, r.target, r.status))
    widths = [max(len(h), *(len(b[i]) for b in body)) for i, h in enumerate(head)]
    line = "  ".join(h.ljust(w) for h, w in zip(head, widths, strict=True))
    out = [line, "-" * len(line)]
    for b in body:
        out.append("  ".join(c.ljust(w) for c, w in zip(b, widths, strict=True)))
    out.append("")
    out.append("Details (median wall times):")
    for r in rows:
        bits = ", ".join(f"{k} {_fmt_seconds(v)}" for k, v in r.timings.items())
        extra = ", ".join(f"{k} {v}" for k, v in r.extra.items())
        text = f"  {r.case} {r.what}: {r.sizes}; repeats {r.repeats}"
        if bits:
            text += f"; {bits}"
        if extra:
            text += f"; {extra}"
        if r.note:
            text += f"; {r.note}"
        out.append(text)
    return "\n".join(out)
