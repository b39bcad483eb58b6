"""Entry point: ``python -m tests.benchmarks``."""

from tests.benchmarks.runner import main

raise SystemExit(main())
