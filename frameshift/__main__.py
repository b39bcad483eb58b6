"""``python -m frameshift``: the same command line as the ``frameshift`` script."""

from frameshift.cli import main

__all__: list[str] = []

if __name__ == "__main__":
    raise SystemExit(main())
