"""A water described as a lab reports it (pH and alkalinity), turned into an ordinary scenario.

A scenario may give ``measured`` instead of a carbonate total::

    "measured": {"pH": 7.6,
                 "alkalinity": {"value": 120, "unit": "mg/L as CaCO3",   # or "meq/L"
                                "definition": "end-point",               # default; or "equivalence-point"
                                "end_point_pH": 4.5}}                    # default 4.5

At the measured pH every alpha fraction is known, so the alkalinity is linear in
the dissolved inorganic carbon C_T (DIC) and C_T follows explicitly:

.. math::

    C_T = \\frac{A - \\big([OH^-] - [H^+] + \\sum_{other} C_j(\\bar\\imath_j - r_j)\\big)
                 + \\big(\\text{same at } \\mathrm{pH}_e\\big)}
               {(\\alpha_1 + 2\\alpha_2)(\\mathrm{pH}) - (\\alpha_1 + 2\\alpha_2)(\\mathrm{pH}_e)}

(the proton reference level of :mod:`acidscape.operations.alkalinity`; for the
equivalence-point definition the terms at the end point pH_e are dropped).
The strong ions not given are then represented by one monovalent "balancing"
ion whose concentration closes the charge balance at the measured pH. Both
depend on the ionic strength through the activity coefficients, and the ionic
strength on both, so the pair is iterated to a fixed point (a few steps). The
result is an ordinary closed scenario whose solved pH is the measured one.

The same closing is applied to a scenario that gives ``pH`` with totals
(the imbalance becomes the balancing ion) and to a water open to CO2 (its
carbonate total at equilibrium becomes a closed total), so that titration and
dosing start from a water that is electroneutral as described.

Functions
---------
resolve_measured(scenario) -> (dict, dict)   ordinary scenario and what was inferred
close_scenario(scenario) -> Closed            closed, electroneutral water for titration and dosing

References
----------
APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater, 23rd ed., 2017,
Method 2320 B (from memory); W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, 1996,
ch. 4 (from memory).
"""

from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field

from .alkalinity import MG_CACO3_PER_MEQ, TOTAL_END_POINT_PH, reference_index
from ..science.activity import gamma_function
from ..constants import ATOMIC_WEIGHT
from ..errors import ConvergenceError, InputError
from ..science.solver import ION_SIZE_H, ION_SIZE_OH
from ..science.speciation import alpha_from_cumulative, cumulative_pKa

_LN10 = math.log(10.0)
#: Name of the ion that stands for the strong ions a description leaves out.
BALANCE_NAME = "balancing ion (unassigned strong ions)"
ALK_UNITS = ("mg/L as CaCO3", "meq/L")
DEFINITIONS = ("end-point", "equivalence-point")


def _alphas(pH: float, pKa_m) -> list[float]:
    return alpha_from_cumulative(pH, cumulative_pKa(pKa_m))


def _num(value, field: str, lo=None, hi=None) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    value = float(value)
    if lo is not None and value < lo:
        raise InputError(f"{field} = {value:g} is below the allowed minimum {lo:g}", field=field)
    if hi is not None and value > hi:
        raise InputError(f"{field} = {value:g} is above the allowed maximum {hi:g}", field=field)
    return value


class _Medium:
    """Mixed constants and water ions at one ionic strength."""

    def __init__(self, parsed):
        self.lg = gamma_function(parsed.T, parsed.model)
        self.pKw = parsed.pKw

    def mixed(self, comp, I):
        sizes = comp.ion_sizes or (None,) * len(comp.charges)
        lgs = [self.lg(z, a, I) for z, a in zip(comp.charges, sizes)]
        return [pk + lgs[j + 1] - lgs[j] for j, pk in enumerate(comp.pKa)]

    def water(self, pH, I):
        lgH = self.lg(1, ION_SIZE_H, I)
        lgOH = self.lg(-1, ION_SIZE_OH, I)
        return 10.0 ** (-pH - lgH), 10.0 ** (pH - self.pKw - lgOH)


def _close(parsed, pH: float, *, alk=None, carb_index=None, definition="end-point", end_pH=TOTAL_END_POINT_PH,
           field_alk="measured.alkalinity.value"):
    """Iterate (carbonate total, balancing charge, I) at a fixed pH.

    Returns (carbonate total or None, balancing charge [eq/L], I).
    """
    med = _Medium(parsed)
    comps = parsed.components
    ions = parsed.ions
    S = sum(i.charge * i.conc_M for i in ions)
    J = 0.5 * sum(i.charge * i.charge * i.conc_M for i in ions)
    I = parsed.I_fixed if parsed.I_fixed is not None else max(J, 1e-6)
    C = None
    for _ in range(200):
        H, OH = med.water(pH, I)
        totals = [c.total_M for c in comps]
        if alk is not None:
            # alkalinity at pH (and at the end point) from everything but the carbonate
            def parts(p):
                h, oh = med.water(p, I)
                other = oh - h
                unit = 0.0
                for k, c in enumerate(comps):
                    a = _alphas(p, med.mixed(c, I))
                    mean = sum(i * x for i, x in enumerate(a))
                    if k == carb_index:
                        unit = mean  # alpha1 + 2 alpha2
                    else:
                        other += c.total_M * (mean - reference_index(c.pKa, TOTAL_END_POINT_PH))
                return other, unit
            other, unit = parts(pH)
            if definition == "end-point":
                other_e, unit_e = parts(end_pH)
                other -= other_e
                unit -= unit_e
            if unit <= 0.0:
                raise InputError(
                    f"measured pH {pH:g} is at or below the alkalinity end point pH {end_pH:g}: carbonate "
                    f"cannot be inferred from an alkalinity there", field="measured.pH")
            C = (alk - other) / unit
            if C < 0.0:
                raise InputError(
                    f"measured alkalinity {alk * 1e3:.4g} meq/L is less than pH {pH:g} and the other systems "
                    f"give without any carbonate ({other * 1e3:.4g} meq/L): the measurements are inconsistent",
                    field=field_alk)
            totals[carb_index] = C
        # charge balance at pH: H - OH + S + sum C zbar + q = 0
        f = H - OH + S
        Jsys = 0.0
        for c, tot in zip(comps, totals):
            a = _alphas(pH, med.mixed(c, I))
            f += tot * sum(z * x for z, x in zip(c.charges, a))
            Jsys += tot * sum(z * z * x for z, x in zip(c.charges, a))
        q = -f
        I_new = J + 0.5 * (Jsys + abs(q) + H + OH)
        if parsed.I_fixed is not None or parsed.model == "ideal":
            return C, q, (parsed.I_fixed if parsed.I_fixed is not None else I_new)
        if abs(I_new - I) <= 1e-12 * I_new + 1e-18:
            return C, q, I_new
        I = I_new
    raise ConvergenceError("ionic strength did not settle while closing the water at its pH", field=None)


def _balance_entry(q: float) -> dict | None:
    if q == 0.0:
        return None
    return {"custom": {"name": BALANCE_NAME, "charge": 1 if q > 0 else -1}, "total": abs(q), "unit": "mol/L"}


def resolve_measured(scenario: dict) -> tuple[dict, dict]:
    """Turn a scenario with ``measured`` into an ordinary one (carbonate total and balancing ion).

    Parameters
    ----------
    scenario : dict
        Scenario with ``measured: {"pH", "alkalinity": {"value", "unit", ["definition"],
        ["end_point_pH"]}}`` and no carbonate total, ``pH`` or ``gas``

    Returns
    -------
    tuple of (dict, dict)
        The ordinary scenario (no ``measured``, no ``pH``; totals in mol/L) and the inferred
        values ``{"pH", "alkalinity_meq_per_L", "alkalinity_definition", "DIC_M",
        "DIC_mg_per_L_as_C", "balancing_ion_eq_per_L", "ionic_strength_M"}``

    Raises
    ------
    InputError
        A missing or unknown alkalinity unit (field ``measured.alkalinity.unit``), a conflict
        with ``pH``, ``gas`` or a carbonate total, or measurements that no carbonate total fits

    Examples
    --------
    Lab report: pH 8.0 and 100 mg/L as CaCO3 (1.998 meq/L), ideal activities. At pH 8
    (pKa 6.352, 10.329) alpha1 + 2 alpha2 = 0.9826, so DIC = (1.998 - [OH-]) / 0.9826:

    >>> sc, info = resolve_measured({"activity": "ideal", "measured": {"pH": 8.0,
    ...     "alkalinity": {"value": 100, "unit": "mg/L as CaCO3", "definition": "equivalence-point"}}})
    >>> round(info["DIC_M"] * 1e3, 2)
    2.03
    """
    from ..data import library
    from ..boundary.scenario import read_scenario

    m = scenario.get("measured")
    if not isinstance(m, dict):
        raise InputError("measured must be an object like {\"pH\": 7.5, \"alkalinity\": {\"value\": 120, "
                         "\"unit\": \"mg/L as CaCO3\"}}", field="measured")
    if scenario.get("pH") is not None:
        raise InputError("give the pH once: in measured.pH, not also as pH", field="pH")
    if scenario.get("gas") is not None:
        raise InputError("measured (pH and alkalinity) fixes the carbonate total; it cannot be combined with gas",
                         field="gas")
    pH = _num(m.get("pH"), "measured.pH", 0.0, 14.0) if m.get("pH") is not None else None
    if pH is None:
        raise InputError("measured.pH is required", field="measured.pH")
    a = m.get("alkalinity")
    if not isinstance(a, dict):
        raise InputError("measured.alkalinity must be an object {\"value\", \"unit\"}", field="measured.alkalinity")
    unit = a.get("unit")
    if unit is None:
        raise InputError("measured.alkalinity.unit is missing; give \"mg/L as CaCO3\" or \"meq/L\"",
                         field="measured.alkalinity.unit")
    if unit not in ALK_UNITS:
        raise InputError(f"measured.alkalinity.unit = {unit!r} is not an alkalinity unit; give "
                         "\"mg/L as CaCO3\" or \"meq/L\"", field="measured.alkalinity.unit")
    value = _num(a.get("value"), "measured.alkalinity.value", 0.0, 50000.0)
    alk_meq = value if unit == "meq/L" else value / MG_CACO3_PER_MEQ
    definition = a.get("definition", "end-point")
    if definition not in DEFINITIONS:
        raise InputError(f"measured.alkalinity.definition = {definition!r}; allowed: {', '.join(DEFINITIONS)}",
                         field="measured.alkalinity.definition")
    end_pH = _num(a.get("end_point_pH", TOTAL_END_POINT_PH), "measured.alkalinity.end_point_pH", 3.5, 5.5)
    if definition == "end-point" and pH <= end_pH:
        raise InputError(f"measured.pH {pH:g} is at or below the end point pH {end_pH:g}; such a water has no "
                         "alkalinity to that end point", field="measured.pH")
    systems = list(scenario.get("systems") or [])
    for i, e in enumerate(systems):
        if isinstance(e, dict) and e.get("id") == "carbonate":
            raise InputError(f"systems[{i}]: the carbonate total is inferred from measured pH and alkalinity; "
                             "remove it or drop measured", field=f"systems[{i}]")
    library.get_system("carbonate")
    base = {k: v for k, v in scenario.items() if k != "measured"}
    base["systems"] = systems + [{"id": "carbonate", "total": 0.0, "unit": "mol/L"}]
    parsed = read_scenario(base)
    carb = len(parsed.components) - 1
    C, q, I = _close(parsed, pH, alk=alk_meq * 1e-3, carb_index=carb, definition=definition, end_pH=end_pH)
    out = copy.deepcopy(base)
    out["systems"][-1] = {"id": "carbonate", "total": C, "unit": "mol/L"}
    bal = _balance_entry(q)
    if bal is not None:
        out["ions"] = list(out.get("ions") or []) + [bal]
    info = {
        "pH": pH,
        "alkalinity_meq_per_L": alk_meq,
        "alkalinity_definition": (f"fixed end point pH {end_pH:g}" if definition == "end-point"
                                  else "equivalence point (H2CO3* reference)"),
        "DIC_M": C,
        "DIC_mg_per_L_as_C": C * ATOMIC_WEIGHT["C"] * 1e3,
        "balancing_ion_eq_per_L": q,
        "ionic_strength_M": I,
        "note": "strong ions not given are represented by one monovalent balancing ion",
    }
    return out, info


@dataclass
class Closed:
    """A closed, electroneutral water ready for titration or dosing."""

    scenario: dict
    parsed: object
    eq: object
    notes: list = field(default_factory=list)
    inferred: dict | None = None


def close_scenario(scenario: dict) -> Closed:
    """The closed, electroneutral scenario equivalent to ``scenario``, parsed and solved.

    ``measured`` is resolved (:func:`resolve_measured`); a given ``pH`` becomes a balancing
    ion so the water solves to that pH; a water open to CO2 is closed at its equilibrium
    carbonate total. Totals in the returned scenario are in mol/L.
    """
    from ..boundary.scenario import read_scenario
    from ..science.solver import equilibrate

    if not isinstance(scenario, dict):
        raise InputError("the scenario must be a JSON object", field="scenario")
    notes = []
    inferred = None
    if scenario.get("measured") is not None:
        scenario, inferred = resolve_measured(scenario)
    parsed = read_scenario(scenario)
    out = copy.deepcopy(scenario)
    entries = list(out.get("systems") or [])
    new_entries = []
    if parsed.CO2_partial_pressure_atm is not None or parsed.pH is not None:
        eq = equilibrate(parsed.components, parsed.ions, T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                         I_fixed=parsed.I_fixed, pH=parsed.pH)
        for k, st in enumerate(eq.systems):
            e = dict(entries[k]) if k < len(entries) else {"id": st.component.key}
            e["total"] = st.total_M
            e["unit"] = "mol/L"
            new_entries.append(e)
        out["systems"] = new_entries
        if parsed.CO2_partial_pressure_atm is not None:
            out.pop("gas", None)
            notes.append("water open to CO2: treated as closed at its equilibrium carbonate total "
                         f"({eq.systems[-1].total_M * 1e3:.4g} mmol/L) from the moment of titration or dosing")
        if parsed.pH is not None:
            reparsed = read_scenario({k: v for k, v in out.items() if k != "pH"})
            _, q, _ = _close(reparsed, parsed.pH)
            out.pop("pH", None)
            bal = _balance_entry(q)
            if bal is not None:
                out["ions"] = list(out.get("ions") or []) + [bal]
                notes.append(f"the given pH {parsed.pH:g} leaves a charge imbalance of {q * 1e3:.4g} meq/L; "
                             "it is carried by a monovalent balancing ion")
        parsed = read_scenario(out)
    eq = equilibrate(parsed.components, parsed.ions, T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                     I_fixed=parsed.I_fixed)
    return Closed(scenario=out, parsed=parsed, eq=eq, notes=notes + list(parsed.warnings), inferred=inferred)
