"""``python -m acidscape``: the command line (see :mod:`acidscape.boundary.cli`)."""

from .boundary.cli import main

if __name__ == "__main__":
    raise SystemExit(main())
