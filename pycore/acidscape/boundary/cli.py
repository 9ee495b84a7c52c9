"""Command line: ``python -m acidscape COMMAND``.

Commands
--------
solve FILE|-          read a scenario (JSON) and print the water's equilibrium as JSON
systems               print the library of acid-base systems and strong ions as JSON
solids                print the solids (solubility constants, temperature data, citations) as JSON
titrate FILE --titrant ID [--titrant-M C] [--sample-mL V] [--to-pH X] [--points N]
                      titration curve (points, equivalence points) as JSON; with --titrant EDTA
                      and --fixed-pH X (default 10): hardness titration (pM, end points, mg/L CaCO3)
solubility FILE --metal lead|copper --axis pH|DIC|orthophosphate --from A --to B [--points N]
           [--fixed-pH X] [--unit U] [--solids ID,ID]
                      dissolved lead or copper in equilibrium with its least soluble solid, as JSON
dose FILE --chemical ID --target-pH X [--strength-pct S] [--density-kg-per-L D]
     [--flow VALUE --flow-unit U]
                      dose to a target pH, product feed and the water after, as JSON
batch IN.csv --mapping MAP.json [--jobs N] [--out OUT.csv] [--digits D]
                      one row of results per sample of a CSV, as CSV (see acidscape.boundary.batch);
                      bad rows are listed by spreadsheet row on stderr; batch --template: a CSV to fill in
version               print the package version

Errors go to stderr as one line ``error [field]: message`` and the exit status is 2
(bad input) or 1 (a numerical failure).
"""

from __future__ import annotations

import argparse
import json
import sys

from .._version import __version__
from ..errors import AcidscapeError, ConvergenceError, InputError


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
    sub.add_parser("solids", help="list the solids with their constants and citations as JSON")
    sub.add_parser("version", help="print the version")
    t = sub.add_parser("titrate", help="titration curve of a water scenario with a titrant")
    t.add_argument("file", metavar="FILE")
    t.add_argument("--titrant", required=True, metavar="ID", help="NaOH, HCl, H2SO4, Ca(OH)2, Na2CO3, NaHCO3, CO2 "
                   "or a library system id")
    t.add_argument("--titrant-M", type=float, default=0.1, metavar="C", help="titrant concentration [mol/L]")
    t.add_argument("--sample-mL", type=float, default=100.0, metavar="V", help="sample volume [mL]")
    t.add_argument("--to-pH", type=float, default=None, metavar="X", help="pH where the curve ends")
    t.add_argument("--points", type=int, default=400, metavar="N", help="number of points")
    t.add_argument("--fixed-pH", type=float, default=None, metavar="X",
                   help="buffered pH of an EDTA (hardness) titration (default 10 with --titrant EDTA)")
    so = sub.add_parser("solubility", help="dissolved lead or copper in equilibrium with its least soluble solid")
    so.add_argument("file", metavar="FILE")
    so.add_argument("--metal", default="lead", choices=("lead", "copper"))
    so.add_argument("--axis", default="pH", choices=("pH", "DIC", "orthophosphate"))
    so.add_argument("--from", dest="start", type=float, default=None, metavar="A",
                    help="first axis value (pH, or DIC / orthophosphate in --unit)")
    so.add_argument("--to", dest="stop", type=float, default=None, metavar="B", help="last axis value")
    so.add_argument("--points", type=int, default=81, metavar="N", help="number of points")
    so.add_argument("--fixed-pH", type=float, default=None, metavar="X",
                    help="pH of a DIC or orthophosphate axis (default: the water's pH)")
    so.add_argument("--unit", default=None, metavar="U",
                    help="unit of --from/--to on a DIC (default 'mg/L as C') or orthophosphate (default 'mg/L', "
                    "as PO4) axis")
    so.add_argument("--solids", default=None, metavar="ID,ID", help="candidate solids (default: all that hold the metal)")
    d = sub.add_parser("dose", help="dose of a chemical that brings a water to a target pH")
    d.add_argument("file", metavar="FILE")
    d.add_argument("--chemical", required=True, metavar="ID")
    d.add_argument("--target-pH", type=float, required=True, metavar="X")
    d.add_argument("--strength-pct", type=float, default=None, metavar="S", help="product strength [%% w/w]")
    d.add_argument("--density-kg-per-L", type=float, default=None, metavar="D", help="product density [kg/L]")
    d.add_argument("--flow", type=float, default=None, metavar="VALUE", help="plant flow")
    d.add_argument("--flow-unit", default=None, metavar="U", help="m3/d, m3/h, L/s, L/min, MGD or gpm")
    b = sub.add_parser("batch", help="results of every sample of a CSV, as CSV")
    b.add_argument("file", metavar="IN.csv", nargs="?", help="CSV of samples (- for stdin)")
    b.add_argument("--mapping", metavar="MAP.json", help="which column holds what (JSON)")
    b.add_argument("--jobs", type=int, nargs="?", const=0, default=1, metavar="N",
                   help="processes (0 or no number: one per core); the output does not depend on it")
    b.add_argument("--out", default="-", metavar="OUT.csv", help="result CSV (default: stdout)")
    b.add_argument("--digits", type=int, default=None, metavar="D",
                   help="significant digits of quantities (default 4; 0: full precision)")
    b.add_argument("--template", action="store_true", help="write a CSV template to fill in instead")
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
            from ..data.library import ions_as_json, library_as_json

            _print({"systems": library_as_json(), "ions": ions_as_json()})
        elif args.command == "solids":
            from ..data.library import solids_as_json

            _print({"solids": solids_as_json()})
        elif args.command == "titrate":
            from .api import titrate

            _print(titrate({"scenario": _read_json(args.file), "titrant": args.titrant, "titrant_M": args.titrant_M,
                            "sample_mL": args.sample_mL, "to_pH": args.to_pH, "points": args.points,
                            "fixed_pH": args.fixed_pH}))
        elif args.command == "solubility":
            from .api import solubility

            params = {"scenario": _read_json(args.file), "metal": args.metal, "axis": args.axis,
                      "points": args.points, "fixed_pH": args.fixed_pH}
            for key, value in (("from", args.start), ("to", args.stop), ("unit", args.unit)):
                if value is not None:
                    params[key] = value
            if args.solids:
                params["solids"] = [x.strip() for x in args.solids.split(",") if x.strip()]
            _print(solubility(params))
        elif args.command == "dose":
            from .api import dose

            _print(dose({"scenario": _read_json(args.file), "chemical": args.chemical, "target_pH": args.target_pH,
                         "strength_pct": args.strength_pct, "density_kg_per_L": args.density_kg_per_L,
                         "flow": args.flow, "flow_unit": args.flow_unit}))
        elif args.command == "batch":
            from .batch import run_cli

            return run_cli(args)
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
