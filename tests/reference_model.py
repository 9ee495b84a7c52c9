"""An independent reference solver for the general equilibrium model (tests only).

Written from the equations, not from the core's code. It shares only *physical data* with
the core: the Debye-Hückel A(T) of :func:`acidscape.science.activity.debye_huckel_A` and
pKw(T) of :func:`acidscape.science.purewater.pKw` (IAPWS R11-07). Everything else is done
here again: the CSV files of ``pycore/acidscape/data`` are parsed with :mod:`csv`, the
temperature dependence of every constant is evaluated from its columns, values printed at
I != 0 are brought to I = 0, and the equilibrium is solved with numpy and scipy.

Method
------
Component-species tableau (Morel & Hering, *Principles and Applications of Aquatic
Chemistry*, Wiley 1993, ch. 2-3): components are H+, every acid-base system's fully
deprotonated species and every free ion; each species i has

    log10 c_i = log10 beta_i(T) + sum_j a_ij (x_j + lg_j) - lg_i,

x_j = log10 of the free concentration of component j, lg = log10 gamma (Davies 1962 or
ideal; gamma = 1 for neutral species). With u = ln(10) x the mass balances
T_j = sum_i a_ij c_i are the gradient of the convex function

    F(u) = sum_i c_i(u) - sum_j T_j u_j

(Smith & Missen, *Chemical Reaction Equilibrium Analysis*, Wiley 1982: the dual of
Gibbs energy minimisation). When the pH is free the proton "total" is fixed by
electroneutrality, T_H = -sum_{j != H} z_j T_j (so the charge balance holds exactly at
the minimum); a fixed pH holds u_H and drops its balance.

Solids named in ``precipitate`` are the constraints sum_j b_sj (x_j + lg_j) <= log10 Ksp_s
(SI <= 0). For a trial set S of solids taken as present, F is minimised on the affine set
where those constraints are equalities (null-space parametrisation, so the minimisation
is unconstrained); the amounts p_s are the least-squares solution of the mass balances,
each weighted by its own scale (so a trace metal held in a solid balances to its own
total, not to the rounding of the major components). The first set whose amounts are >= 0 and whose absent solids are all at SI <= 0 is the
answer: for a convex problem these Karush-Kuhn-Tucker conditions are sufficient, so the
answer does not depend on the order of trial (the previous set is tried first, then all
sets by size; ``check_unique=True`` tries them all and insists on one answer).

Each minimisation uses ``scipy.optimize.minimize(method="trust-exact")`` (a globally
convergent trust-region Newton method, Nocedal & Wright, *Numerical Optimization*, 2nd
ed. 2006, ch. 4) from a projected start, then Newton steps on the mass balances (relative
residual below 1e-14 or no further progress). If that fails, ``scipy.optimize.root``
(MINPACK hybrd, Powell's hybrid method) is tried from several starts. The ionic strength
is iterated outside, I <- 1/2 sum c_i z_i^2, to 1e-13 relative.

Constants
---------
* Acid-base steps: pKa at 25 °C from systems.csv; van 't Hoff with the step enthalpy and,
  if a ``dCp_J_per_mol_K`` column exists, a constant heat-capacity change; the fits named
  in ``temperature_model`` written again here from their papers: carbonate Plummer &
  Busenberg (1982) Geochim. Cosmochim. Acta 46, 1011, Table 2; ammonium pKa = 0.09018 +
  2729.92/T, the fit of Emerson, Russo, Lund & Thurston (1975) J. Fish. Res. Board Can. 32,
  2379 to the Bates & Pinching (1949) data; hypochlorous Morris (1966) J. Phys. Chem. 70,
  3798 (all coefficients from memory, as in the data file notes).
* Complexes and solids: the ``analytic`` fit log10 K = A + B T + C/T + D log10 T + E/T^2
  when given, else the integrated van 't Hoff equation with dH and dCp
  (Stumm & Morgan, *Aquatic Chemistry*, 3rd ed. 1996, §2.6), else the 25 °C value.
* A value printed at I != 0 (``log_K_I_M``, ``pKa_I_M``) is read as a concentration
  quotient and brought to I = 0 once, with the Davies equation at 25 °C:
  log K0 = log K_I + sum(nu lg, products) - sum(nu lg, reactants), water activity 1.

Public API
----------
load_library(data_dir=DATA_DIR) -> Library
build(scenario, library=None) -> Problem
solve(scenario, library=None, check_unique=False) -> dict   (keys documented in solve)
"""

from __future__ import annotations

import csv
import functools
import itertools
import math
import re
import warnings
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from scipy.linalg import null_space
from scipy.optimize import minimize, root

from acidscape.science.activity import debye_huckel_A
from acidscape.science.purewater import pKw as _pKw_core

DATA_DIR = Path(__file__).resolve().parents[1] / "pycore" / "acidscape" / "data"
LN10 = math.log(10.0)
T_REF = 298.15
#: Molar gas constant [J/(mol K)], CODATA 2018 (exact since the 2019 SI: N_A k_B).
R_GAS = 8.314462618
#: Units of concentration the reference accepts, in mol/L.
UNITS = {"mol/L": 1.0, "mmol/L": 1e-3, "umol/L": 1e-6, "µmol/L": 1e-6, "μmol/L": 1e-6}
#: Scenario keys the reference understands; any other key is refused (fail loudly).
SCENARIO_KEYS = {"systems", "ions", "complexes", "precipitate", "pH", "temperature_C", "activity",
                 "ionic_strength_M", "name", "note"}

SYSTEMS_COLUMNS = ("system_id", "step", "acid_formula", "base_formula", "pKa_25C", "pKa_I_M",
                   "dH_kJ_per_mol", "temperature_model")
SPECIES_COLUMNS = ("system_id", "index", "formula", "charge")
IONS_COLUMNS = ("id", "name", "formula", "charge", "aliases", "system")
COMPLEXES_COLUMNS = ("id", "formula", "charge", "reactants", "log_K_25C", "log_K_I_M", "dH_kJ_per_mol",
                     "dCp_J_per_mol_K", "analytic", "T_range_C", "ion_size_A", "K_source", "dH_source",
                     "provenance", "note")
SOLIDS_COLUMNS = ("id", "name", "formula", "weighed_formula", "reactants", "log_K_25C", "log_K_I_M",
                  "dH_kJ_per_mol", "dCp_J_per_mol_K", "analytic", "T_range_C", "K_source", "dH_source",
                  "provenance", "note")
TEMPERATURE_MODELS = ("vant-hoff", "carbonate-PB82", "ammonium-BP49", "hypochlorous-M66")


class ReferenceDataError(ValueError):
    """A data file does not follow the data contract (file and line named)."""


# ----------------------------------------------------------------------------- physics


def davies_lg(z, I, T):
    """log10 gamma by the Davies (1962) equation; 0 for neutral species (as the core)."""
    z = np.asarray(z, dtype=float)
    if I <= 0.0:
        return np.zeros_like(z)
    s = math.sqrt(I)
    return -debye_huckel_A(T) * z * z * (s / (1.0 + s) - 0.3 * I)


def pKw(T):
    """Ion product of water (IAPWS R11-07, through the core's implementation: physical data)."""
    return _pKw_core(T)


def vant_hoff_log10K(logK_ref, dH_kJ, dCp_J, T):
    """Integrated van 't Hoff with a constant dCp (Stumm & Morgan 1996, §2.6)."""
    out = logK_ref
    if dH_kJ is not None:
        out -= dH_kJ * 1000.0 / (R_GAS * LN10) * (1.0 / T - 1.0 / T_REF)
    if dCp_J is not None:
        out += dCp_J / (R_GAS * LN10) * (math.log(T / T_REF) + T_REF / T - 1.0)
    return out


def analytic_log10K(coef, T):
    """log10 K = A + B T + C/T + D log10 T + E/T^2 (T in K)."""
    a, b, c, d, e = coef
    return a + b * T + c / T + d * math.log10(T) + e / (T * T)


def fitted_pKa(model, T):
    """pKa values of the published fits named in systems.csv (coefficients from memory)."""
    if model == "carbonate-PB82":  # Plummer & Busenberg (1982), Table 2
        k1 = analytic_log10K((-356.3094, -0.06091964, 21834.37, 126.8339, -1684915.0), T)
        k2 = analytic_log10K((-107.8871, -0.03252849, 5151.79, 38.92561, -563713.9), T)
        return (-k1, -k2)
    if model == "ammonium-BP49":  # Emerson et al. (1975)'s fit to Bates & Pinching (1949), per systems.csv
        return (0.09018 + 2729.92 / T,)
    if model == "hypochlorous-M66":  # Morris (1966)
        return (3000.00 / T - 10.0686 + 0.0253 * T,)
    raise ReferenceDataError(f"temperature model {model!r} is not known to the reference")


def formula_charge(formula):
    """Charge of a formula in the data notation ('Ca+2', 'HCO3-', 'CaCO3', 'H2CO3*')."""
    m = re.search(r"([+-])(\d*)$", formula)
    if not m:
        return 0
    n = int(m.group(2)) if m.group(2) else 1
    if m.group(2) == "1":
        raise ReferenceDataError(f"formula {formula!r}: charge magnitude 1 is written without the digit")
    return n if m.group(1) == "+" else -n


# ----------------------------------------------------------------------------- data files


def _rows(path, required):
    """(line number, row dict) of a CSV data file; '#' lines are comments."""
    path = Path(path)
    if not path.exists():
        raise ReferenceDataError(f"{path.name} not found in {path.parent}")
    with open(path, newline="", encoding="utf-8") as fh:
        lines = [(n, line) for n, line in enumerate(fh, 1) if line.strip() and not line.lstrip().startswith("#")]
    reader = csv.reader([line for _, line in lines])
    header = None
    out = []
    for (lineno, _), cells in zip(lines, reader):
        if header is None:
            header = [h.strip() for h in cells]
            missing = [c for c in required if c not in header]
            if missing:
                raise ReferenceDataError(f"{path.name}:{lineno}: missing columns {missing} (have {header})")
            if len(set(header)) != len(header):
                raise ReferenceDataError(f"{path.name}:{lineno}: duplicate column names")
            continue
        if len(cells) != len(header):
            raise ReferenceDataError(f"{path.name}:{lineno}: {len(cells)} cells for {len(header)} columns")
        out.append((lineno, {h: c.strip() for h, c in zip(header, cells)}))
    if header is None:
        raise ReferenceDataError(f"{path.name}: no header line")
    return path.name, out


def _num(text, where, blank=False):
    if text == "":
        if blank:
            return None
        raise ReferenceDataError(f"{where}: a number is required")
    try:
        v = float(text)
    except ValueError:
        raise ReferenceDataError(f"{where}: {text!r} is not a number") from None
    if not math.isfinite(v):
        raise ReferenceDataError(f"{where}: {text!r} is not finite")
    return v


def _int(text, where):
    v = _num(text, where)
    if v != int(v):
        raise ReferenceDataError(f"{where}: {text!r} is not a whole number")
    return int(v)


@dataclass
class System:
    id: str
    pKa_25: list          # printed values
    pKa_I: list           # ionic strength of each printed value [mol/L]
    dH: list              # kJ/mol or None
    dCp: list             # J/(mol K) or None
    model: str
    formulas: list = field(default_factory=list)  # most protonated first
    charges: list = field(default_factory=list)

    def pKa0_25(self):
        """pKa at I = 0, 25 °C: printed values at I != 0 converted by Davies (see module doc)."""
        out = []
        for k, (pk, I) in enumerate(zip(self.pKa_25, self.pKa_I)):
            if I:
                za, zb = self.charges[k], self.charges[k + 1]
                lg = davies_lg([zb, 1, za], I, T_REF)
                # Ka0 = Ka_I * g(base) g(H+) / g(acid)
                pk = pk - (lg[0] + lg[1] - lg[2])
            out.append(pk)
        return out

    def pKa_at(self, T):
        if self.model == "vant-hoff":
            return [-vant_hoff_log10K(-pk, h, cp, T) for pk, h, cp in zip(self.pKa0_25(), self.dH, self.dCp)]
        return list(fitted_pKa(self.model, T))


@dataclass
class Ion:
    id: str
    formula: str
    charge: int
    system: str | None


@dataclass
class Reaction:
    """A complex (formation) or solid (dissolution) row."""
    id: str
    formula: str
    charge: int
    reactants: list       # [(ref, coef)]
    logK_25: float
    logK_I: float
    dH: float | None
    dCp: float | None
    analytic: tuple | None
    kind: str             # "complex" | "solid"


@dataclass
class Library:
    path: Path
    systems: dict
    species_index: dict   # formula -> (system id, n_H above the base)
    ions: dict
    alias: dict           # id or alias -> ion id
    complexes: list
    solids: dict

    # -- references ------------------------------------------------------------------
    def ref_charge(self, ref):
        if ref == "H+":
            return 1
        if ref == "OH-":
            return -1
        if ref in self.ions:
            return self.ions[ref].charge
        sid, nH = self.species_index[ref]
        return self.systems[sid].charges[-1 - nH]

    def resolve(self, ref, T):
        """(components {id: coef}, log10 beta of ``ref`` from its components at T)."""
        if ref == "H+":
            return {"H+": 1}, 0.0
        if ref == "OH-":
            return {"H+": -1}, -pKw(T)
        if ref in self.ions:
            ion = self.ions[ref]
            return ({ion.system: 1} if ion.system else {ion.id: 1}), 0.0
        if ref in self.species_index:
            sid, nH = self.species_index[ref]
            pKa = self.systems[sid].pKa_at(T)
            comps = {sid: 1}
            if nH:
                comps["H+"] = nH
            return comps, float(sum(pKa[len(pKa) - nH:]))
        raise ReferenceDataError(f"reference {ref!r} does not resolve")

    def reaction_at(self, rx, T):
        """Reaction in components: ({component: coef}, log10 K at T, I = 0).

        complex: log10 c = logK + sum coef log10 a(component) - lg(complex)
        solid:   SI = sum coef log10 a(component) - logK
        """
        logK = self.log_K_written(rx, T)
        comps = {}
        for ref, coef in rx.reactants:
            c, lb = self.resolve(ref, T)
            for k, v in c.items():
                comps[k] = comps.get(k, 0) + coef * v
            logK = logK + coef * lb if rx.kind == "complex" else logK - coef * lb
        return {k: v for k, v in comps.items() if v != 0}, logK

    def log_K_written(self, rx, T):
        """log10 K of the row's reaction as written, at T and I = 0."""
        if rx.analytic is not None:
            logK = analytic_log10K(rx.analytic, T)
        else:
            logK = rx.logK_25
            if rx.logK_I:
                zs = [self.ref_charge(r) for r, _ in rx.reactants]
                lg = davies_lg(zs, rx.logK_I, T_REF)
                s = float(sum(c * g for (_, c), g in zip(rx.reactants, lg)))
                if rx.kind == "complex":  # K0 = K_I g(complex) / prod g(ref)^c
                    logK = logK + float(davies_lg([rx.charge], rx.logK_I, T_REF)[0]) - s
                else:                     # K0 = K_I prod g(ref)^c
                    logK = logK + s
            logK = vant_hoff_log10K(logK, rx.dH, rx.dCp, T)
        return logK


def _reactants(text, where):
    out = []
    if not text:
        raise ReferenceDataError(f"{where}: no reactants")
    for part in text.split(";"):
        if part.count(":") != 1:
            raise ReferenceDataError(f"{where}: reactant {part!r} is not 'ref:coef'")
        ref, coef = (s.strip() for s in part.split(":"))
        c = _int(coef, f"{where} reactant {ref!r}")
        if c == 0 or not ref:
            raise ReferenceDataError(f"{where}: reactant {part!r}")
        if any(r == ref for r, _ in out):
            raise ReferenceDataError(f"{where}: reactant {ref!r} twice")
        out.append((ref, c))
    return out


def _analytic(text, where):
    if not text:
        return None
    parts = text.split(";")
    if len(parts) != 5:
        raise ReferenceDataError(f"{where}: analytic needs 5 coefficients A;B;C;D;E, got {text!r}")
    return tuple(_num(p.strip(), where) for p in parts)


@functools.lru_cache(maxsize=8)
def load_library(data_dir=DATA_DIR) -> Library:
    """Parse the five CSV files of ``data_dir``; raise ReferenceDataError on any surprise."""
    d = Path(data_dir)
    # systems + species
    fname, rows = _rows(d / "systems.csv", SYSTEMS_COLUMNS)
    systems: dict[str, System] = {}
    for ln, r in rows:
        w = f"{fname}:{ln}"
        sid = r["system_id"]
        if r["temperature_model"] not in TEMPERATURE_MODELS:
            raise ReferenceDataError(f"{w}: temperature model {r['temperature_model']!r} unknown")
        s = systems.setdefault(sid, System(sid, [], [], [], [], r["temperature_model"]))
        if s.model != r["temperature_model"]:
            raise ReferenceDataError(f"{w}: temperature model differs within {sid}")
        if _int(r["step"], w) != len(s.pKa_25) + 1:
            raise ReferenceDataError(f"{w}: steps of {sid} out of order")
        s.pKa_25.append(_num(r["pKa_25C"], w))
        s.pKa_I.append(_num(r["pKa_I_M"], w))
        s.dH.append(_num(r["dH_kJ_per_mol"], w, blank=True))
        s.dCp.append(_num(r.get("dCp_J_per_mol_K", ""), w, blank=True))
        if s.pKa_I[-1] < 0:
            raise ReferenceDataError(f"{w}: negative ionic strength")
        s.formulas.append((r["acid_formula"], r["base_formula"]))
    steps = {k: list(v.formulas) for k, v in systems.items()}
    for s in systems.values():
        s.formulas, s.charges = [], []
    fname, rows = _rows(d / "species.csv", SPECIES_COLUMNS)
    for ln, r in rows:
        w = f"{fname}:{ln}"
        sid = r["system_id"]
        if sid not in systems:
            raise ReferenceDataError(f"{w}: species of unknown system {sid!r}")
        s = systems[sid]
        if _int(r["index"], w) != len(s.formulas):
            raise ReferenceDataError(f"{w}: species of {sid} out of order")
        z = _int(r["charge"], w)
        if z != formula_charge(r["formula"]):
            raise ReferenceDataError(f"{w}: charge {z} does not match formula {r['formula']!r}")
        s.formulas.append(r["formula"])
        s.charges.append(z)
    species_index = {}
    for sid, s in systems.items():
        n = len(s.pKa_25)
        if len(s.formulas) != n + 1:
            raise ReferenceDataError(f"system {sid}: {n} steps but {len(s.formulas)} species")
        for k, (acid, base) in enumerate(steps[sid]):
            if (acid, base) != (s.formulas[k], s.formulas[k + 1]):
                raise ReferenceDataError(f"system {sid} step {k + 1}: {acid}/{base} differ from species.csv")
            if s.charges[k] != s.charges[k + 1] + 1:
                raise ReferenceDataError(f"system {sid} step {k + 1}: charge must drop by one")
        if s.model != "vant-hoff" and len(fitted_pKa(s.model, T_REF)) != n:
            raise ReferenceDataError(f"system {sid}: fit {s.model} has a different number of steps")
        for k, f in enumerate(s.formulas):
            if f in species_index or f in ("H+", "OH-"):
                raise ReferenceDataError(f"species formula {f!r} is ambiguous (systems {species_index.get(f)}, {sid})")
            species_index[f] = (sid, n - k)
    # ions
    fname, rows = _rows(d / "ions.csv", IONS_COLUMNS)
    ions, alias = {}, {}
    for ln, r in rows:
        w = f"{fname}:{ln}"
        iid = r["id"]
        if not re.fullmatch(r"[a-z][a-z0-9\-]*(\([IVX]+\))?", iid):
            raise ReferenceDataError(f"{w}: ion id {iid!r} is not a lower-case word")
        z = _int(r["charge"], w)
        if z == 0 or z != formula_charge(r["formula"]):
            raise ReferenceDataError(f"{w}: charge {z} does not match formula {r['formula']!r}")
        sysid = r["system"] or None
        if sysid is not None:
            if sysid not in systems:
                raise ReferenceDataError(f"{w}: system {sysid!r} unknown")
            s = systems[sysid]
            if (s.formulas[-1], s.charges[-1]) != (r["formula"], z):
                raise ReferenceDataError(f"{w}: ion {iid} is not the base {s.formulas[-1]} of {sysid}")
        if iid in ions:
            raise ReferenceDataError(f"{w}: duplicate ion id {iid!r}")
        ions[iid] = Ion(iid, r["formula"], z, sysid)
        for a in [iid] + [x.strip() for x in r["aliases"].split(";") if x.strip()]:
            if a in alias:
                raise ReferenceDataError(f"{w}: id or alias {a!r} used twice")
            alias[a] = iid
    for iid in ions:
        if iid in systems and ions[iid].system != iid:
            raise ReferenceDataError(f"ion id {iid!r} collides with a system id")
        if iid in species_index or iid in ("H+", "OH-"):
            raise ReferenceDataError(f"ion id {iid!r} collides with a species formula")
    lib = Library(d, systems, species_index, ions, alias, [], {})

    def reaction_rows(fn, columns, kind):
        fname, rows = _rows(d / fn, columns)
        out = []
        seen = set()
        for ln, r in rows:
            w = f"{fname}:{ln}"
            rid = r["id"]
            if rid in seen:
                raise ReferenceDataError(f"{w}: duplicate id {rid!r}")
            seen.add(rid)
            reactants = _reactants(r["reactants"], w)
            for ref, _ in reactants:
                if not (ref in ("H+", "OH-") or ref in ions or ref in species_index):
                    raise ReferenceDataError(f"{w}: reactant {ref!r} does not resolve")
            z = _int(r["charge"], w) if kind == "complex" else 0
            if kind == "complex" and z != formula_charge(r["formula"]):
                raise ReferenceDataError(f"{w}: charge {z} does not match formula {r['formula']!r}")
            if z != sum(c * lib.ref_charge(ref) for ref, c in reactants):
                raise ReferenceDataError(f"{w}: reaction of {rid} is not charge balanced")
            I_p = _num(r["log_K_I_M"] or "0", w)
            if I_p < 0:
                raise ReferenceDataError(f"{w}: negative ionic strength")
            an = _analytic(r["analytic"], w)
            if an is not None and I_p:
                raise ReferenceDataError(f"{w}: an analytic fit for a constant printed at I != 0 is not expected")
            rx = Reaction(rid, r["formula"], z, reactants, _num(r["log_K_25C"], w), I_p,
                          _num(r["dH_kJ_per_mol"], w, blank=True), _num(r["dCp_J_per_mol_K"], w, blank=True),
                          an, kind)
            if an is not None and abs(analytic_log10K(an, T_REF) - rx.logK_25) > 0.05:
                raise ReferenceDataError(f"{w}: analytic fit gives {analytic_log10K(an, T_REF):.3f} at 25 C, "
                                         f"log_K_25C is {rx.logK_25}")
            out.append(rx)
        return out

    lib.complexes = reaction_rows("complexes.csv", COMPLEXES_COLUMNS, "complex")
    lib.solids = {rx.id: rx for rx in reaction_rows("solids.csv", SOLIDS_COLUMNS, "solid")}
    names = set(species_index) | {i.formula for i in ions.values()} | {"H+", "OH-"}
    for rx in lib.complexes:
        if rx.formula in names:
            raise ReferenceDataError(f"complex {rx.id}: formula {rx.formula!r} names another species")
        names.add(rx.formula)
    return lib


# ----------------------------------------------------------------------------- problem


@dataclass
class Problem:
    """A scenario as a tableau at temperature T."""
    T: float
    model: str
    pH: float | None
    I_fixed: float | None
    comps: list           # component ids; comps[0] == "H+"
    comp_z: np.ndarray
    totals: np.ndarray    # mol/L; totals[0] = -sum z_j T_j (electroneutrality)
    names: list           # species names
    kinds: list           # "water" | "free ion" | "acid-base" | "complex"
    species_system: list  # system id or None
    A: np.ndarray         # species x components
    logb: np.ndarray      # log10 beta at T, I = 0
    z: np.ndarray
    free_row: list        # species row of each component's free form
    solids: list          # ids of every library solid whose components are present
    B: np.ndarray         # solids x components
    logKs: np.ndarray     # log10 Ksp at T, I = 0 (in components)
    allowed: list         # indices into solids of the named ones


def _molar(entry, path):
    if not isinstance(entry, dict) or "id" not in entry:
        raise ValueError(f"{path}: entry needs an id")
    unit = entry.get("unit", "mol/L")
    if unit not in UNITS:
        raise ValueError(f"{path}: unit {unit!r} not supported by the reference")
    total = float(entry.get("total", 0.0))
    if not math.isfinite(total) or total < 0:
        raise ValueError(f"{path}: bad total {entry.get('total')!r}")
    return total * UNITS[unit]


def build(scenario, library=None) -> Problem:
    lib = library or load_library()
    unknown = set(scenario) - SCENARIO_KEYS
    if unknown:
        raise ValueError(f"scenario keys not supported by the reference: {sorted(unknown)}")
    T = 273.15 + float(scenario.get("temperature_C", 25.0))
    model = scenario.get("activity", "davies")
    if model not in ("ideal", "davies"):
        raise ValueError(f"activity model {model!r} not supported by the reference")
    totals: dict[str, float] = {}
    order: list[str] = []

    def add(cid, value, path):
        if cid in totals:
            raise ValueError(f"{path}: component {cid!r} given twice")
        totals[cid] = value
        order.append(cid)

    for i, e in enumerate(scenario.get("systems", []) or []):
        if e.get("id") not in lib.systems:
            raise ValueError(f"systems[{i}]: unknown system {e.get('id')!r}")
        add(e["id"], _molar(e, f"systems[{i}]"), f"systems[{i}]")
    for i, e in enumerate(scenario.get("ions", []) or []):
        iid = lib.alias.get(e.get("id"))
        if iid is None:
            raise ValueError(f"ions[{i}]: unknown ion {e.get('id')!r}")
        ion = lib.ions[iid]
        add(ion.system or iid, _molar(e, f"ions[{i}]"), f"ions[{i}]")
    comps = ["H+"] + [c for c in order if totals[c] > 0.0]
    present = set(comps)
    ci = {c: k for k, c in enumerate(comps)}
    comp_z = np.array([1] + [lib.systems[c].charges[-1] if c in lib.systems else lib.ions[c].charge
                             for c in comps[1:]], dtype=float)
    tot = np.array([0.0] + [totals[c] for c in comps[1:]])
    tot[0] = -float(np.dot(comp_z[1:], tot[1:]))

    rows, names, kinds, ssys, logb, zs = [], [], [], [], [], []
    free_row = [None] * len(comps)

    def species(name, kind, system, comp_coefs, lb, z):
        a = np.zeros(len(comps))
        for k, v in comp_coefs.items():
            a[ci[k]] += v
        if name in names:
            raise ValueError(f"species {name!r} twice")
        rows.append(a)
        names.append(name)
        kinds.append(kind)
        ssys.append(system)
        logb.append(lb)
        zs.append(z)
        return len(rows) - 1

    free_row[0] = species("H+", "water", None, {"H+": 1}, 0.0, 1)
    species("OH-", "water", None, {"H+": -1}, -pKw(T), -1)
    for c in comps[1:]:
        if c in lib.systems:
            s = lib.systems[c]
            pKa = s.pKa_at(T)
            n = len(pKa)
            for k, (f, z) in enumerate(zip(s.formulas, s.charges)):
                nH = n - k
                r = species(f, "acid-base", c, {c: 1, "H+": nH}, float(sum(pKa[k:])), z)
                if nH == 0:
                    free_row[ci[c]] = r
        else:
            ion = lib.ions[c]
            free_row[ci[c]] = species(ion.formula, "free ion", None, {c: 1}, 0.0, ion.charge)
    if scenario.get("complexes", True):
        for rx in lib.complexes:
            cc, lk = lib.reaction_at(rx, T)
            if set(cc) <= present:
                species(rx.formula, "complex", None, cc, lk, rx.charge)
    solids, Brows, logKs = [], [], []
    for sid, rx in lib.solids.items():
        cc, lk = lib.reaction_at(rx, T)
        if set(cc) <= present:
            b = np.zeros(len(comps))
            for k, v in cc.items():
                b[ci[k]] = v
            solids.append(sid)
            Brows.append(b)
            logKs.append(lk)
    allowed = []
    for name in scenario.get("precipitate", []) or []:
        if name not in lib.solids:
            raise ValueError(f"precipitate: unknown solid {name!r}")
        if name not in solids:
            raise ValueError(f"precipitate: {name!r} needs components absent from the water")
        allowed.append(solids.index(name))
    pH = scenario.get("pH")
    I_fixed = scenario.get("ionic_strength_M")
    return Problem(T, model, None if pH is None else float(pH), None if I_fixed is None else float(I_fixed),
                   comps, comp_z, tot, names, kinds, ssys, np.array(rows), np.array(logb), np.array(zs, float),
                   free_row, solids, np.array(Brows).reshape(len(solids), len(comps)), np.array(logKs), allowed)


# ----------------------------------------------------------------------------- solver


class ReferenceSolveError(RuntimeError):
    """The reference did not converge."""


def _conditional(prob, I):
    """ln K' of each species, ln Ksp' of each solid (concentration scale), lg of components."""
    lg_s = davies_lg(prob.z, I, prob.T) if prob.model == "davies" else np.zeros(len(prob.z))
    lg_c = lg_s[prob.free_row]
    lnK = LN10 * (prob.logb + prob.A @ lg_c - lg_s)
    lnKs = LN10 * (prob.logKs - prob.B @ lg_c) if len(prob.solids) else np.zeros(0)
    return lnK, lnKs, lg_s, lg_c


def _subset_solve(prob, lnK, lnKs, S, u_start, u_fixed):
    """Minimise F on {B_S u = lnKs_S}; returns (u, p, max relative residual) or None."""
    n = len(prob.comps)
    fixed = np.zeros(n, bool)
    if prob.pH is not None:
        fixed[0] = True
    Fr = np.flatnonzero(~fixed)
    Fx = np.flatnonzero(fixed)
    A_fr = prob.A[:, Fr]
    T_fr = prob.totals[Fr]
    base0 = lnK + prob.A[:, Fx] @ u_fixed[Fx]
    S = list(S)
    Bs = prob.B[S][:, Fr] if S else np.zeros((0, len(Fr)))
    ks = (lnKs[S] - prob.B[S][:, Fx] @ u_fixed[Fx]) if S else np.zeros(0)
    if S and np.linalg.matrix_rank(Bs) < len(S):
        return None
    u0 = u_start[Fr].copy()
    if S:
        u0 = u0 + Bs.T @ np.linalg.solve(Bs @ Bs.T, ks - Bs @ u0)
        N = null_space(Bs)
    else:
        N = np.eye(len(Fr))
    M = A_fr @ N
    b0 = base0 + A_fr @ u0
    tN = N.T @ T_fr

    def conc(zv):
        e = b0 + M @ zv
        return np.exp(np.minimum(e, 700.0)), e

    def fun(zv):
        c, e = conc(zv)
        if np.any(e > 700.0):
            return np.inf
        return float(c.sum() - tN @ zv)

    def jac(zv):
        return M.T @ conc(zv)[0] - tN

    def hess(zv):
        c = conc(zv)[0]
        return (M * c[:, None]).T @ M

    def residual(zv):
        """Mass-balance residuals relative to their terms, with the solid amounts that make them
        smallest in that relative measure (weighted least squares: a trace metal held in a
        solid is balanced to its own total, not to the major components' rounding)."""
        if not np.all(np.isfinite(zv)):
            return np.inf, np.zeros(len(S))
        c, e = conc(zv)
        if np.any(e > 700.0):  # far outside any equilibrium: not a candidate
            return np.inf, np.zeros(len(S))
        r = A_fr.T @ c - T_fr
        w = 1.0 / (np.abs(A_fr).T @ c + np.abs(T_fr) + 1e-300)
        try:
            p = np.linalg.lstsq(Bs.T * w[:, None], -r * w, rcond=None)[0] if S else np.zeros(0)
        except np.linalg.LinAlgError:
            return np.inf, np.zeros(len(S))
        res = r + Bs.T @ p
        scale = np.abs(A_fr).T @ c + np.abs(T_fr) + (np.abs(Bs).T @ np.abs(p) if S else 0.0)
        return np.max(np.abs(res) / scale) if len(res) else 0.0, p

    def polish(zv):
        best, _ = residual(zv)
        for _ in range(60):
            if best < 1e-14:
                break
            H = hess(zv)
            g = jac(zv)
            if not (np.all(np.isfinite(H)) and np.all(np.isfinite(g))):
                break
            d = 1.0 / np.sqrt(np.maximum(np.diag(H), 1e-300))
            try:
                step = -d * np.linalg.solve(H * d[:, None] * d[None, :], d * g)
            except np.linalg.LinAlgError:
                step = -d * np.linalg.lstsq(H * d[:, None] * d[None, :], d * g, rcond=None)[0]
            t = 1.0
            while t > 1e-6:
                cand = zv + t * step
                rc, _ = residual(cand)
                if np.isfinite(rc) and rc < best:
                    zv, best = cand, rc
                    break
                t *= 0.5
            else:
                break
        return zv, best

    z_best, r_best = np.zeros(M.shape[1]), np.inf
    if M.shape[1] == 0:
        r_best, p = residual(z_best)
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            zs = np.zeros(M.shape[1])
            res = minimize(fun, zs, jac=jac, hess=hess, method="trust-exact",
                           options={"gtol": 1e-300, "maxiter": 400})
            z_best, r_best = polish(res.x if np.isfinite(res.fun) else zs)
            if r_best > 1e-12:  # fall back on MINPACK root finding from several starts
                for shift in (0.0, -4.6, 4.6, -11.5):
                    for zs in (z_best, N.T @ (np.full(len(Fr), shift))):
                        def f_scaled(zv):
                            c = conc(zv)[0]
                            return (M.T @ c - tN) / (np.abs(M).T @ c + np.abs(tN) + 1e-300)
                        sol = root(f_scaled, zs, method="hybr", options={"xtol": 1e-15})
                        zv, rv = polish(sol.x)
                        if rv < r_best:
                            z_best, r_best = zv, rv
        _, p = residual(z_best)
    if not np.isfinite(r_best) or r_best > 1e-10:
        return None
    u = u_fixed.copy()
    u[Fr] = u0 + N @ z_best
    return u, np.asarray(p), r_best


def _solve_at_I(prob, I, u_start, S_prev, check_unique):
    lnK, lnKs, lg_s, lg_c = _conditional(prob, I)
    u_fixed = np.zeros(len(prob.comps))
    if prob.pH is not None:
        u_fixed[0] = LN10 * (-prob.pH - lg_c[0])
        u_start = u_start.copy()
        u_start[0] = u_fixed[0]
    allowed = prob.allowed
    candidates = [tuple(S_prev)] + [S for k in range(len(allowed) + 1)
                                    for S in itertools.combinations(allowed, k) if tuple(S) != tuple(S_prev)]
    found = []
    for S in candidates:
        out = _subset_solve(prob, lnK, lnKs, S, u_start, u_fixed)
        if out is None:
            continue
        u, p, rres = out
        scale_p = np.array([np.min([prob.totals[j] / abs(prob.B[s, j]) for j in np.flatnonzero(prob.B[s])
                                    if j != 0]) for s in S]) if S else np.zeros(0)
        if np.any(p < -1e-12 * scale_p):
            continue
        others = [s for s in allowed if s not in S]
        si = (prob.B[others] @ u - lnKs[others]) / LN10 if others else np.zeros(0)
        if np.any(si > 1e-10):
            continue
        found.append((S, u, p, rres))
        if not check_unique:
            break
    if not found:
        raise ReferenceSolveError(f"no consistent set of solids at I = {I:g} (tried {len(candidates)})")
    if check_unique and len(found) > 1:
        us = np.array([f[1] for f in found])
        if np.max(np.abs(us - us[0])) > 1e-8:
            raise ReferenceSolveError(f"several solid sets satisfy the KKT conditions: {[f[0] for f in found]}")
    S, u, p, rres = found[0]
    c = np.exp(lnK + prob.A @ u)
    return S, u, p, c, rres, lg_s, lg_c, lnKs


def solve(scenario, library=None, check_unique=False):
    """Equilibrium of a scenario by the reference method (see the module docstring).

    Returns
    -------
    dict with
      pH               -log10 a(H+)
      I                ionic strength [mol/L]
      log_free         {component id: log10 free concentration [mol/L]} (H+ included)
      free_M           {component id: free concentration [mol/L]}
      uncomplexed_M    {component id: sum of its "free ion"/"acid-base" species [mol/L]}
      total_M          {component id: total [mol/L]} (H+: the electroneutral proton total)
      species          {name: concentration [mol/L]}
      species_charge, species_kind, species_holds   {name: ...}
      log_gamma        {species name: log10 gamma}
      precipitated     {solid id: mol/L} for the named solids present (p > 0)
      saturation       {solid id: SI} for every library solid whose components are present
      log_Ksp          {solid id: log10 Ksp at T, I = 0, of the reaction as written in solids.csv}
      log_Ksp_components {solid id: the same reaction written in the components}
      solid_holds      {solid id: {component: coef}} (H+ included)
      charge_balance_eq_per_L, max_relative_residual, iterations
    """
    lib = library or load_library()
    prob = build(scenario, lib)
    n = len(prob.comps)
    u = np.empty(n)
    u[1:] = np.log(np.maximum(prob.totals[1:], 1e-30)) - 2.0
    u[0] = LN10 * (-(prob.pH if prob.pH is not None else 7.0))
    if prob.I_fixed is not None:
        I = prob.I_fixed
    else:
        I = 0.5 * float(np.sum(prob.comp_z[1:] ** 2 * prob.totals[1:]))
    S = ()
    for it in range(1, 300):
        S, u, p, c, rres, lg_s, lg_c, lnKs = _solve_at_I(prob, I, u, S, check_unique)
        if prob.I_fixed is not None or prob.model == "ideal":
            I_new = 0.5 * float(np.sum(prob.z ** 2 * c)) if prob.I_fixed is None else I
            if prob.I_fixed is None:
                I = I_new
            break
        I_new = 0.5 * float(np.sum(prob.z ** 2 * c))
        if abs(I_new - I) <= 1e-13 * I_new:
            I = I_new
            S, u, p, c, rres, lg_s, lg_c, lnKs = _solve_at_I(prob, I, u, S, check_unique)
            break
        I = I_new if it < 50 else 0.5 * (I + I_new)
    else:
        raise ReferenceSolveError("ionic strength did not settle")
    if rres > 1e-12:
        raise ReferenceSolveError(f"mass balances closed only to {rres:.1e} relative")
    x = u / LN10
    comps = prob.comps
    species = dict(zip(prob.names, c))
    uncomplexed = {}
    for j, cid in enumerate(comps):
        if j == 0:
            continue
        uncomplexed[cid] = float(sum(ci * prob.A[i, j] for i, ci in enumerate(c)
                                     if prob.kinds[i] in ("free ion", "acid-base") and prob.A[i, j]))
    si_all = {sid: float((prob.B[k] @ u - lnKs[k]) / LN10) for k, sid in enumerate(prob.solids)}
    lg_comp = dict(zip(comps, lg_c))
    return {
        "pH": float(-(x[0] + lg_c[0])),
        "I": I,
        "log_free": dict(zip(comps, map(float, x))),
        "free_M": dict(zip(comps, map(float, 10.0 ** x))),
        "uncomplexed_M": uncomplexed,
        "total_M": dict(zip(comps, map(float, prob.totals))),
        "species": {k: float(v) for k, v in species.items()},
        "species_charge": dict(zip(prob.names, map(int, prob.z))),
        "species_kind": dict(zip(prob.names, prob.kinds)),
        "species_holds": {nm: {comps[j]: int(prob.A[i, j]) for j in range(n) if prob.A[i, j]}
                          for i, nm in enumerate(prob.names)},
        "log_gamma": dict(zip(prob.names, map(float, lg_s))),
        "log_gamma_component": {k: float(v) for k, v in lg_comp.items()},
        "precipitated": {prob.solids[s]: float(pv) for s, pv in zip(S, p) if pv > 0},
        "saturation": si_all,
        "log_Ksp": {sid: float(lib.log_K_written(lib.solids[sid], prob.T)) for sid in prob.solids},
        "log_Ksp_components": {sid: float(prob.logKs[k]) for k, sid in enumerate(prob.solids)},
        "solid_holds": {sid: {comps[j]: int(prob.B[k, j]) for j in range(n) if prob.B[k, j]}
                        for k, sid in enumerate(prob.solids)},
        "charge_balance_eq_per_L": float(np.dot(prob.z, c)),
        "max_relative_residual": float(rres),
        "iterations": it,
    }
