"""Side-by-side benchmarks of frameshift (not part of the default test run).

Run ``python -m tests.benchmarks [--quick] [--only B1,B2] [--json PATH]`` from
the repository root. Each case times frameshift next to the alternatives a
user would otherwise reach for, reports medians and ratios, and marks each
ratio PASS or MISS against its target (informational: the exit code is 0).
See ``tests/benchmarks/README.md``.
"""
