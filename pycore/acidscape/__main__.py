"""Command line: ``python -m acidscape COMMAND``.

Commands
--------
solve FILE|-          read a scenario (JSON) and print the water's equilibrium as JSON
systems               print the library of acid-base systems and strong ions as JSON
version               print the package version

Errors go to stderr as one line ``error [field]: message`` and the exit status is 2
(bad input) or 1 (a numerical failure).
"""

from __future__ import annotations

import argparse
import json
import sys

from . import __version__
from .errors import AcidscapeError, ConvergenceError, InputError


def _read_json(path: str) -> dict:
    try:
        text = sys.stdin.read() if path == "-" else open(path, encoding="utf-8").read()
    except OSError as exc:
        raise InputError(f"cannot read {path!r}: {exc.strerror}", field="FILE") from None
    try:
        data = json.loads(text)
    except ValueError as exc:
        raise InputError(f"{'stdin' if path == '-' else path} is not valid JSON: {exc}", field="FILE") from None
    if not isinstance(data, dict):
        raise InputError("the scenario must be a JSON object", field="FILE")
    return data


def _print(obj) -> None:
    sys.stdout.write(json.dumps(obj, indent=2, allow_nan=False) + "\n")


def _add_commands(sub) -> None:
    """Register commands; later modules add theirs in :func:`extra_commands`."""
    p = sub.add_parser("solve", help="equilibrium of a water scenario (JSON file or - for stdin)")
    p.add_argument("file", metavar="FILE")
    sub.add_parser("systems", help="list the acid-base systems and strong ions as JSON")
    sub.add_parser("version", help="print the version")
    for add in extra_commands:
        add(sub)


#: Hooks ``add(subparsers)`` and handlers registered by other modules.
extra_commands: list = []
extra_handlers: dict = {}


def run(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="acidscape", description="Acid-base chemistry of waters.")
    sub = parser.add_subparsers(dest="command", required=True)
    _add_commands(sub)
    args = parser.parse_args(argv)
    try:
        if args.command == "solve":
            from .api import solve

            _print(solve(_read_json(args.file)))
        elif args.command == "systems":
            from .library import ions_as_json, library_as_json

            _print({"systems": library_as_json(), "ions": ions_as_json()})
        elif args.command == "version":
            _print({"acidscape": __version__})
        else:
            handler = extra_handlers[args.command]
            _print(handler(args, _read_json))
    except ConvergenceError as exc:
        sys.stderr.write(f"error{f' [{exc.field}]' if exc.field else ''}: {exc.message}\n")
        return 1
    except AcidscapeError as exc:
        sys.stderr.write(f"error{f' [{exc.field}]' if exc.field else ''}: {exc.message}\n")
        return 2
    return 0


def main() -> None:
    sys.exit(run())


if __name__ == "__main__":
    main()
