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
dose FILE --chemical ID (--target-pH X | --target-LSI X | --target-CCPP X) [--precipitate IDS]
     [--strength-pct S] [--density-kg-per-L D] [--flow VALUE --flow-unit U]
                      dose to a target pH, LSI or CCPP (mg/L as CaCO3), product feed and the water after,
                      as JSON; --precipitate: solids allowed to form (comma-separated ids)
treat FILE [--flow VALUE --flow-unit U]
                      chemicals in sequence: FILE is {"scenario": {...}, "steps": [{"chemical": ID,
                      "target_pH" | "target_LSI" | "target_CCPP" | "dose_mg_per_L": X, "strength_pct"?,
                      "density_kg_per_L"?, "precipitate"?}, ...], "flow"?, "flow_unit"?}; each step's
                      dose and the water after it, as JSON
blend FILE FILE... --fractions F1,F2,... [--precipitate IDS] [--flow VALUE --flow-unit U]
                      waters (scenario files) blended by flow fraction: the blend's equilibrium and indices
soften FILE [--softening-pH X | --lime-mg-per-L L] [--soda-ash-mg-per-L S | --target-hardness H]
       [--remove-magnesium] [--first-stage-pH X | --no-first-stage] [--recarbonate-LSI X |
       --recarbonate-CCPP X | --recarbonate-pH X | --no-recarbonation] [--flow VALUE --flow-unit U]
                      lime (and soda ash) softening to equilibrium with calcite and brucite, sludge,
                      recarbonation, and the textbook stoichiometric estimate beside it, as JSON
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
    target = d.add_mutually_exclusive_group(required=True)
    target.add_argument("--target-pH", type=float, metavar="X")
    target.add_argument("--target-LSI", type=float, metavar="X", help="Langelier saturation index to reach")
    target.add_argument("--target-CCPP", type=float, metavar="X",
                        help="calcium carbonate precipitation potential to reach [mg/L as CaCO3]")
    d.add_argument("--precipitate", default=None, metavar="IDS",
                   help="solids allowed to form as the dose is added (comma-separated ids, e.g. calcite,brucite)")
    d.add_argument("--strength-pct", type=float, default=None, metavar="S", help="product strength [%% w/w]")
    d.add_argument("--density-kg-per-L", type=float, default=None, metavar="D", help="product density [kg/L]")
    d.add_argument("--flow", type=float, default=None, metavar="VALUE", help="plant flow")
    d.add_argument("--flow-unit", default=None, metavar="U", help="m3/d, m3/h, L/s, L/min, MGD or gpm")
    tr = sub.add_parser("treat", help="chemicals in sequence on a water (scenario and steps in one JSON file)")
    tr.add_argument("file", metavar="FILE")
    _flow_arguments(tr)
    bl = sub.add_parser("blend", help="waters blended by flow fraction")
    bl.add_argument("files", metavar="FILE", nargs="+")
    bl.add_argument("--fractions", required=True, metavar="F1,F2,...", help="flow fractions, one per file, sum 1")
    bl.add_argument("--precipitate", default=None, metavar="IDS", help="solids allowed to form in the blend")
    _flow_arguments(bl)
    sf = sub.add_parser("soften", help="lime (and soda ash) softening to equilibrium, then recarbonation")
    sf.add_argument("file", metavar="FILE")
    lime = sf.add_mutually_exclusive_group()
    lime.add_argument("--softening-pH", type=float, default=None, metavar="X",
                      help="pH the lime brings the water to (default 10.3; 11.0 with --remove-magnesium)")
    lime.add_argument("--lime-mg-per-L", type=float, default=None, metavar="L", help="lime dose [mg/L as Ca(OH)2]")
    soda = sf.add_mutually_exclusive_group()
    soda.add_argument("--soda-ash-mg-per-L", type=float, default=None, metavar="S", help="soda ash dose [mg/L]")
    soda.add_argument("--target-hardness", type=float, default=None, metavar="H",
                      help="total hardness of the softened water the soda ash is dosed for [mg/L as CaCO3]")
    sf.add_argument("--remove-magnesium", action="store_true", help="excess-lime softening (magnesium removal)")
    sf.add_argument("--excess-lime-meq-per-L", type=float, default=None, metavar="E",
                    help="excess lime of the stoichiometric estimate [meq/L] (default 1.25)")
    first = sf.add_mutually_exclusive_group()
    first.add_argument("--first-stage-pH", type=float, default=None, metavar="X",
                       help="first recarbonation stage pH, calcite settled (default 10.3 with --remove-magnesium)")
    first.add_argument("--no-first-stage", action="store_true", help="no first recarbonation stage")
    rc = sf.add_mutually_exclusive_group()
    rc.add_argument("--recarbonate-LSI", type=float, default=None, metavar="X",
                    help="recarbonate to this LSI (default 0)")
    rc.add_argument("--recarbonate-CCPP", type=float, default=None, metavar="X",
                    help="recarbonate to this CCPP [mg/L as CaCO3]")
    rc.add_argument("--recarbonate-pH", type=float, default=None, metavar="X", help="recarbonate to this pH")
    rc.add_argument("--no-recarbonation", action="store_true", help="no recarbonation")
    _flow_arguments(sf)
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


def _flow_arguments(p) -> None:
    p.add_argument("--flow", type=float, default=None, metavar="VALUE", help="plant flow")
    p.add_argument("--flow-unit", default=None, metavar="U", help="m3/d, m3/h, L/s, L/min, MGD or gpm")


def _ids(text: str | None) -> list[str] | None:
    return None if text is None else [x.strip() for x in text.split(",") if x.strip()]


def _with_flow(params: dict, args) -> dict:
    """``params`` with the command line's flow, when given (it overrides the file's)."""
    if args.flow is not None or args.flow_unit is not None:
        params = dict(params, flow=args.flow, flow_unit=args.flow_unit)
    return params


def _fractions(text: str) -> list:
    out = []
    for part in text.split(","):
        try:
            out.append(float(part))
        except ValueError:
            raise InputError(f"--fractions must be numbers separated by commas, got {text!r}",
                             field="fractions") from None
    return out


def _soften_params(args, read) -> dict:
    params = {"scenario": read(args.file), "softening_pH": args.softening_pH, "lime_mg_per_L": args.lime_mg_per_L,
              "soda_ash_mg_per_L": args.soda_ash_mg_per_L,
              "target_hardness_mg_per_L_as_CaCO3": args.target_hardness, "remove_magnesium": args.remove_magnesium,
              "excess_lime_meq_per_L": args.excess_lime_meq_per_L}
    if args.no_first_stage:
        params["first_stage_pH"] = None
    elif args.first_stage_pH is not None:
        params["first_stage_pH"] = args.first_stage_pH
    if args.no_recarbonation:
        params["recarbonation"] = None
    else:
        for key, value in (("target_LSI", args.recarbonate_LSI), ("target_CCPP", args.recarbonate_CCPP),
                           ("target_pH", args.recarbonate_pH)):
            if value is not None:
                params["recarbonation"] = {key: value}
    return _with_flow(params, args)


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
                         "target_LSI": args.target_LSI, "target_CCPP": args.target_CCPP,
                         "precipitate": _ids(args.precipitate),
                         "strength_pct": args.strength_pct, "density_kg_per_L": args.density_kg_per_L,
                         "flow": args.flow, "flow_unit": args.flow_unit}))
        elif args.command == "treat":
            from .api import treat

            _print(treat(_with_flow(_read_json(args.file), args)))
        elif args.command == "blend":
            from .api import blend

            _print(blend(_with_flow({"waters": [_read_json(f) for f in args.files],
                                     "fractions": _fractions(args.fractions),
                                     "precipitate": _ids(args.precipitate)}, args)))
        elif args.command == "soften":
            from .api import soften

            _print(soften(_soften_params(args, _read_json)))
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
