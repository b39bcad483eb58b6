"""Run the benchmark cases, print the table of ratios, write the JSON results."""

from __future__ import annotations

import argparse
import datetime as dt
import importlib
import json
import os
import platform
import sys
import time
import traceback
from pathlib import Path

from tests.benchmarks.harness import Row, format_table

__all__ = ["CASES", "machine", "main"]

#: case id -> module (under tests.benchmarks) with ``run(quick) -> list[Row]``
CASES = {
    "B1": "local",
    "B2": "cartesian",
    "B3": "terms",
    "B4": "archives",
    "B5": "small",
    "B6": "parallel",
    "B7": "instruments",
    "B13": "angular_momentum",
}
DEFAULT_JSON = Path(__file__).parent / "results" / "latest.json"


def machine() -> dict:
    """CPU model, core count, memory and library versions of this run."""
    info = {"python": platform.python_version(), "platform": platform.platform()}
    try:
        text = Path("/proc/cpuinfo").read_text()
        lines = text.splitlines()
        models = [ln.split(":", 1)[1].strip() for ln in lines if ln.startswith("model name")]
        info["cpu"] = models[0] if models else platform.processor()
    except OSError:
        info["cpu"] = platform.processor()
    info["cores"] = os.cpu_count()
    try:
        pages = os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
        info["memory_gib"] = round(pages / 2**30, 1)
    except (ValueError, OSError):
        pass
    for name in ("numpy", "xarray", "dask", "distributed", "pint", "netCDF4", "astropy", "erfa"):
        try:
            info[name] = importlib.import_module(name).__version__
        except Exception:  # a missing optional library is just not listed
            pass
    import frameshift

    info["frameshift"] = frameshift.__version__
    return info


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m tests.benchmarks", description=__doc__)
    parser.add_argument("--quick", action="store_true", help="small sizes, few repeats")
    parser.add_argument("--only", default="", help="comma-separated case ids, e.g. B1,B2")
    parser.add_argument("--json", default=str(DEFAULT_JSON), help="where to write the results")
    parser.add_argument("--markdown", default=None, help="also write the table as Markdown here")
    args = parser.parse_args(argv)
    wanted = [c.strip().upper() for c in args.only.split(",") if c.strip()] or list(CASES)
    unknown = [c for c in wanted if c not in CASES]
    if unknown:
        parser.error(f"unknown case(s) {unknown}; known: {list(CASES)}")
    rows: list[Row] = []
    load_before = _load()
    started = time.perf_counter()
    durations = {}
    for case in wanted:
        t0 = time.perf_counter()
        print(f"running {case} ({CASES[case]}){' quick' if args.quick else ''} ...", flush=True)
        try:
            module = importlib.import_module(f"tests.benchmarks.{CASES[case]}")
            new = module.run(args.quick)
        except Exception as exc:  # one broken case must not hide the others
            traceback.print_exc()
            new = [Row(case, CASES[case], "-", "-", None, "-", "", "error", note=repr(exc))]
        durations[case] = round(time.perf_counter() - t0, 1)
        for row in new:
            print(f"  {row.case} {row.what}: {row.status}", flush=True)
        rows += new
    table = format_table(rows)
    total = time.perf_counter() - started
    print()
    print(table)
    print(f"\ntotal {total:.0f} s ({', '.join(f'{k} {v} s' for k, v in durations.items())})")
    load = {"before": load_before, "after": _load()}
    print(f"load average (1, 5, 15 min): before {load['before']}, after {load['after']}")
    result = {
        "when": dt.datetime.now(dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "load_average": load,
        "quick": args.quick,
        "cases": wanted,
        "seconds": round(total, 1),
        "case_seconds": durations,
        "machine": machine(),
        "rows": [r.to_json() for r in rows],
        "table": table,
    }
    path = Path(args.json)
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(json.dumps(result, indent=2, default=str) + "\n")
    print(f"results written to {path}", file=sys.stderr)
    if args.markdown:
        Path(args.markdown).write_text(markdown(result))
        print(f"Markdown written to {args.markdown}", file=sys.stderr)
    return 0


def _load() -> list[float] | None:
    try:
        return [round(x, 2) for x in os.getloadavg()]
    except OSError:
        return None


def markdown(result: dict) -> str:
    """The results of one run as a Markdown page (table, details, machine)."""
    m = result["machine"]
    lines = [
        "# frameshift benchmark results",
        "",
        f"Run {result['when']} with `python -m tests.benchmarks"
        f"{' --quick' if result['quick'] else ''}` ({result['seconds']:.0f} s; "
        f"load average before/after {result['load_average']['before']} / "
        f"{result['load_average']['after']}).",
        "",
        f"Machine: {m.get('cpu')}, {m.get('cores')} cores, {m.get('memory_gib')} GiB; "
        f"Python {m.get('python')}, numpy {m.get('numpy')}, xarray {m.get('xarray')}, "
        f"dask {m.get('dask')}, astropy {m.get('astropy')}, pyerfa {m.get('erfa')}, "
        f"frameshift {m.get('frameshift')}.",
        "",
        "| case | what | ratio | target | status |",
        "| --- | --- | --- | --- | --- |",
    ]
    for r in result["rows"]:
        ratio = "-" if r["ratio"] is None else f"{r['ratio']:.3g} ({r['ratio_label']})"
        cells = (r["case"], r["what"], ratio, r["target"], r["status"])
        lines.append("| " + " | ".join(str(c).replace("|", "\\|") for c in cells) + " |")
    lines += ["", "## Details (median wall times)", ""]
    detail = result["table"].split("Details (median wall times):\n", 1)[-1]
    lines += [f"- {ln.strip()}" for ln in detail.splitlines() if ln.strip()]
    return "\n".join(lines) + "\n"
