"""A water described as a lab reports it (pH and alkalinity), and a closed water for titration and dosing.

A scenario may give ``measured`` instead of a carbonate total::

    "measured": {"pH": 7.6,
                 "alkalinity": {"value": 120, "unit": "mg/L as CaCO3",   # or "meq/L"
                                "definition": "end-point",               # default; or "equivalence-point"
                                "end_point_pH": 4.5}}                    # default 4.5

The carbonate total C (dissolved inorganic carbon, DIC) is then the one that gives the
measured alkalinity at the measured pH, found with the one equilibrium model at that fixed
pH (ion pairs and complexes included). At a fixed pH the alkalinity rises monotonically
with C (each mole of carbonate adds its acceptor protons), with slope

.. math::

    \\frac{d\\mathrm{Alk}}{dC} = r_c - g_c(\\mathrm{pH}) \\quad\\text{(equivalence point)}, \\qquad
    g_c(\\mathrm{pH}_e) - g_c(\\mathrm{pH}) \\quad\\text{(end point)},

where :math:`r_c = 2` (H2CO3* reference) and :math:`g_c` the protons held per mole of
carbonate added at fixed pH (:func:`acidscape.operations.probe.derivatives`; without
complexes :math:`2 - g_c = \\alpha_1 + 2\\alpha_2`). Newton steps on that slope start at
C = 0, where the first step is the classic explicit formula
:math:`C = (A - [OH^-] + [H^+] - \\ldots)/(\\alpha_1 + 2\\alpha_2)` (Stumm & Morgan ch. 4),
and are kept inside a bracket. The strong ions not given are then represented by one
monovalent "balancing" ion whose concentration closes the charge balance at the measured
pH. Both depend on the ionic strength through the activity coefficients, and the ionic
strength on both, so the three (carbonate total, balancing charge, ionic strength) are
found together by Newton's method with the model's exact derivatives (three or four
solves at the measured pH). The result is an ordinary closed scenario whose solved pH is
the measured one.

The same closing is applied to a scenario that gives ``pH`` with totals (the imbalance
becomes the balancing ion) and to a water open to CO2 (its carbonate total at equilibrium
becomes a closed total), so that titration and dosing start from a water that is
electroneutral as described.

This module never reads a scenario itself: the boundary parses it
(``acidscape.boundary.scenario.read_scenario``) and passes the parsed water in.

Functions and classes
---------------------
read_measured(scenario) -> (dict, Measured)           check ``measured``; the scenario to parse
resolve_measured(base, parsed, measured) -> (dict, dict)  ordinary scenario and what was inferred
warm_start(wm, inferred) -> dict                       model guess for that ordinary water
close_scenario(scenario, parsed[, inferred]) -> Closed closed, electroneutral water for titration and dosing
Closed                                                that water: scenario, model, solution, notes

References
----------
APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater, 23rd ed., 2017,
Method 2320 B (from memory); W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, 1996,
ch. 4 (from memory).
"""

from __future__ import annotations

import copy
import dataclasses
import math
from dataclasses import dataclass, field

from ..checks import PH_RANGE, fmt, number, shown
from ..constants import ATOMIC_WEIGHT, LN10
from ..errors import ConvergenceError, InputError
from ..science.model import I_RTOL
from ..science.tableau import IonInput
from .alkalinity import (
    MG_CACO3_PER_MEQ,
    TOTAL_END_POINT_PH,
    equivalence_alkalinity,
    reference_levels,
)
from .probe import Linearization, aqueous_totals, held, ionic_strength, model_of, resolve

#: Name of the ion that stands for the strong ions a description leaves out.
BALANCE_NAME = "balancing ion (unassigned strong ions)"
ALK_UNITS = ("mg/L as CaCO3", "meq/L")
DEFINITIONS = ("end-point", "equivalence-point")
#: Keys of the two balancing-ion components used while closing (one of them stays at 0).
_BAL = ("balance+", "balance-")
#: Relative tolerance of the closing iteration: the carbonate total, and the balancing charge
#: (relative to the water's sum |z| c). The end-point alkalinity is a difference of two proton
#: totals, each converged by the model to about 1e-13 of its own size, so 1e-11 is what it holds.
CLOSE_RTOL = 1e-11
#: A Newton step of the closing this small (relative) is the last one taken (see :func:`_close`).
ACCEPT_STEP = 1e-7


@dataclass(frozen=True)
class Measured:
    """A lab's description: pH [-], alkalinity [eq/L], its definition and end point pH [-]."""

    pH: float
    alkalinity_eq_per_L: float
    definition: str = "end-point"
    end_point_pH: float = TOTAL_END_POINT_PH


@dataclass
class Closed:
    """A closed, electroneutral water ready for titration or dosing.

    ``scenario`` is the closed scenario (totals in mol/L; no ``pH``, ``gas`` or ``measured``),
    ``wm`` its tableau and ``sol`` its equilibrium; ``precipitate`` the solids its scenario
    allows.
    """

    scenario: dict
    wm: object
    sol: object
    notes: list = field(default_factory=list)
    inferred: dict | None = None
    precipitate: tuple = ()

    @property
    def eq(self):
        """The solution (the name earlier versions used)."""
        return self.sol


def _num(value, field_name: str, lo=None, hi=None) -> float:
    return number(value, field_name, lo=lo, hi=hi)


def read_measured(scenario: dict) -> tuple[dict, Measured]:
    """Check a scenario's ``measured`` block; the scenario to parse and the measurements.

    Parameters
    ----------
    scenario : dict
        Scenario with ``measured: {"pH", "alkalinity": {"value", "unit", ["definition"],
        ["end_point_pH"]}}`` and no carbonate total, ``pH`` or ``gas``

    Returns
    -------
    tuple of (dict, Measured)
        The scenario without ``measured`` and with a carbonate system of total 0 appended
        (for the boundary to parse), and the measurements

    Raises
    ------
    InputError
        A missing or unknown alkalinity unit (field ``measured.alkalinity.unit``), a conflict
        with ``pH``, ``gas`` or a carbonate total, a pH at or below the end point

    Examples
    --------
    >>> base, m = read_measured({"measured": {"pH": 8.0, "alkalinity": {"value": 100, "unit": "mg/L as CaCO3"}}})
    >>> base["systems"], round(m.alkalinity_eq_per_L * 1e3, 4)
    ([{'id': 'carbonate', 'total': 0.0, 'unit': 'mol/L'}], 1.9983)
    """
    m = scenario.get("measured")
    if not isinstance(m, dict):
        raise InputError("Enter the measured pH and alkalinity (such as pH 7.5 and 120 mg/L as CaCO3).",
                         field="measured")
    if scenario.get("pH") is not None:
        raise InputError("Give the pH once: as the measured pH, or as a fixed pH of the water, not both.", field="pH")
    if scenario.get("gas") is not None:
        raise InputError("The measured pH and alkalinity set the carbonate of the water; clear the CO₂ partial "
                         "pressure or the measurements.", field="gas")
    if m.get("pH") is None:
        raise InputError(f"Enter the measured pH (from {PH_RANGE[0]:g} to {PH_RANGE[1]:g}).", field="measured.pH")
    pH = _num(m.get("pH"), "measured.pH", PH_RANGE[0], PH_RANGE[1])
    a = m.get("alkalinity")
    if not isinstance(a, dict):
        raise InputError("Enter the measured alkalinity and its unit (mg/L as CaCO3 or meq/L).",
                         field="measured.alkalinity")
    unit = a.get("unit")
    if unit is None:
        raise InputError("Choose the alkalinity unit: mg/L as CaCO3 or meq/L.", field="measured.alkalinity.unit")
    if unit not in ALK_UNITS:
        raise InputError(f"The alkalinity unit {shown(unit)} is not offered; choose mg/L as CaCO3 or meq/L.",
                         field="measured.alkalinity.unit")
    value = _num(a.get("value"), "measured.alkalinity.value", 0.0, 50000.0)
    alk_meq = value if unit == "meq/L" else value / MG_CACO3_PER_MEQ
    definition = a.get("definition", "end-point")
    if definition not in DEFINITIONS:
        raise InputError(f"The kind of alkalinity {shown(definition)} is not offered; choose one of "
                         f"{', '.join(DEFINITIONS)}.", field="measured.alkalinity.definition")
    end_pH = _num(a.get("end_point_pH", TOTAL_END_POINT_PH), "measured.alkalinity.end_point_pH", 3.5, 5.5)
    if definition == "end-point" and pH <= end_pH:
        raise InputError(f"The measured pH ({pH:g}) must be above the alkalinity end point (pH {end_pH:g}): a "
                         "water at or below it has no alkalinity. Check the measured pH.", field="measured.pH")
    systems = list(scenario.get("systems") or [])
    for i, e in enumerate(systems):
        if isinstance(e, dict) and e.get("id") == "carbonate":
            raise InputError("The carbonate of this water follows from the measured pH and alkalinity; remove the "
                             "carbonate row or clear the measurements.", field=f"systems[{i}]")
    base = {k: v for k, v in scenario.items() if k != "measured"}
    base["systems"] = systems + [{"id": "carbonate", "total": 0.0, "unit": "mol/L"}]
    return base, Measured(pH, alk_meq * 1e-3, definition, end_pH)


def _with_balance(parsed, systems=None):
    """The parsed water's model with two balancing-ion components (+1 and -1, total 0)."""
    ions = list(parsed.ions) + [IonInput(_BAL[0], BALANCE_NAME, 1, 0.0), IonInput(_BAL[1], BALANCE_NAME, -1, 0.0)]
    wm = model_of(parsed, systems=systems, ions=ions)
    return wm, wm.comp_index[_BAL[0]], wm.comp_index[_BAL[1]]


def _close(parsed, pH: float, *, measured: Measured | None = None, systems=None):
    """Solve (carbonate total C, balancing charge q, ionic strength I) jointly at a fixed pH.

    The first step solves the water at the measured pH with the model's own ionic strength;
    every later step solves it at the current ionic strength, held, and takes a Newton step
    on the three equations

    .. math::

        \\mathrm{Alk}(C, I) = \\mathrm{Alk_{meas}}, \\qquad R(C, q, I) = 0, \\qquad
        I_{sp}(C, q, I) = I,

    (``R`` the charge left over, ``I_sp`` = 1/2 sum z^2 c of the species) with exact
    derivatives from the model's linearisation at both states (the sample, and the water at
    the end-point pH): dAlk/dC is the acceptor count per mole of carbonate (monotone, so the
    step on C is kept inside a bracket), R moves one for one with q (the balancing ion forms
    no complex), and the ionic-strength derivatives come from the activity model
    (:meth:`acidscape.operations.probe.Linearization.with_I`). Newton's method converges
    quadratically, in three or four solves of each state instead of a dozen substitutions.

    Returns (carbonate total or None, balancing charge q [eq/L], I [mol/L]).
    """
    wm, jp, jm = _with_balance(parsed, systems)
    totals = list(wm.totals)
    jc = wm.comp_index.get("carbonate") if measured is not None else None
    r = reference_levels(wm, TOTAL_END_POINT_PH)
    field_alk = "measured.alkalinity.value"
    held_I = wm.I_fixed is not None
    q = 0.0
    C = 0.0
    I = None                      # first solve: the model's own ionic strength
    lo, hi, I_br = 0.0, math.inf, None   # bracket on C, valid at ionic strength I_br
    state = None
    state_e = None
    for _ in range(200):
        totals[jp], totals[jm] = max(q, 0.0), max(-q, 0.0)
        if jc is not None:
            totals[jc] = C
        sol = resolve(wm, pH=pH, totals=totals, I=I, guess=state)
        state = sol.state
        I = sol.I
        R = sol.charge_residual
        q_new = q - R
        scale = sum(abs(sp.charge) * c for sp, c in zip(wm.tab.species, sol.conc))
        q_settled = abs(q_new - q) <= CLOSE_RTOL * max(scale, 1e-300)
        lin = Linearization(sol)
        if held_I:
            F_I = rI = iI = 0.0
        else:
            F_I = ionic_strength(sol) - I
            rI, iI = lin.with_I(wm.gamma_of)
        I_ok = abs(F_I) <= I_RTOL * max(I, 1e-14)
        if I_br is None or abs(I - I_br) > 1e-6 * max(I, 1e-14):
            lo, hi, I_br = 0.0, math.inf, I   # a bracket holds only at the ionic strength it was found at
        if jc is not None:
            rC, iC = lin.along({jc: 1.0})
            g_c = lin.g((jc,))[jc]
            if measured.definition == "end-point":
                at = resolve(wm, pH=measured.end_point_pH, totals=aqueous_totals(sol), I=I, closed=True,
                             guess=state_e or state)
                state_e = at.state
                lin_e = Linearization(at)
                a = held(at) - held(sol)
                slope = lin_e.g((jc,))[jc] - g_c
                aI = (0.0 if held_I else lin_e.with_I(wm.gamma_of)[0]) - rI
            else:
                a = equivalence_alkalinity(sol, r)
                slope = r[jc] - g_c
                aI = -rI
            f = a - measured.alkalinity_eq_per_L
            if not slope > 0.0:
                raise InputError(
                    f"The measured pH ({pH:g}) must be above the alkalinity end point (pH "
                    f"{measured.end_point_pH:g}): the carbonate cannot be found from an alkalinity there. "
                    "Check the measured pH.", field="measured.pH")
            if f > 0.0:
                if C == 0.0:
                    raise InputError(
                        f"The measured alkalinity is too low for a measured pH of {pH:g}: at that pH the rest of "
                        f"this water alone gives {fmt(a * 1e3)} meq/L of alkalinity, before any carbonate. Check "
                        "the measured pH and alkalinity.", field=field_alk)
                hi = C
            else:
                lo = C
        else:
            f = slope = aI = rC = iC = 0.0
        # Newton on (C, q, I): q from the charge row, dq = -R - rC dC - rI dI, then a 2 x 2 system
        iq = 0.5 if q_new > 0.0 else -0.5 if q_new < 0.0 else 0.0
        b1, b2, rhs2 = iC - iq * rC, iI - 1.0 - iq * rI, -F_I + iq * R
        if held_I:
            dC = -f / slope if jc is not None else 0.0
            dI = 0.0
        elif jc is None:
            dC, dI = 0.0, rhs2 / b2
        else:
            det = slope * b2 - aI * b1
            if det != 0.0:
                dC = (-f * b2 - aI * rhs2) / det
                dI = (slope * rhs2 + b1 * f) / det
            else:
                dC, dI = -f / slope, F_I
        Cn = C + dC
        newton = True
        if jc is not None and not lo <= Cn <= hi:
            # out of the bracket: bisect (or double) C, and let I follow its own species
            Cn = 0.5 * (lo + hi) if math.isfinite(hi) else 2.0 * max(C, 1e-12)
            dI = F_I
            newton = False
        if jc is not None:
            c_done = abs(Cn - C) <= CLOSE_RTOL * max(Cn, 1e-15) or abs(f) <= CLOSE_RTOL * max(
                measured.alkalinity_eq_per_L, 1e-15)
        else:
            c_done = True
        if c_done and q_settled and I_ok:
            return (Cn if jc is not None else None), q_new, I
        q_next = q - R - rC * (Cn - C) - rI * dI
        I_next = I if held_I else max(I + dI, 0.5 * I)
        if newton and abs(Cn - C) <= ACCEPT_STEP * max(Cn, 1e-15) and abs(q_next - q) <= ACCEPT_STEP * scale \
                and abs(I_next - I) <= ACCEPT_STEP * max(I, 1e-14):
            # Newton converges quadratically: after a step this small every unknown is exact to
            # about ACCEPT_STEP**2, far inside CLOSE_RTOL; no further solve is needed
            return (Cn if jc is not None else None), q_next, I_next
        q, C, I = q_next, Cn, I_next
    raise ConvergenceError("The water could not be matched to the measured pH and alkalinity; check the "
                           "measurements and the amounts.", field=None)


def warm_start(wm, inferred: dict | None) -> dict | None:
    """A warm start for solving the ordinary water :func:`resolve_measured` returned.

    That water's pH is the measured one and its ionic strength the one the closing settled,
    so the model's solve (``guess`` of :func:`acidscape.science.model.equilibrium`) starts at
    its answer; the answer does not depend on the start.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The ordinary water's tableau (component 0 is H+)
    inferred : dict or None
        What :func:`resolve_measured` inferred (``pH``, ``ionic_strength_M``); None gives None

    Returns
    -------
    dict or None
        ``{"I": ionic strength [mol/L], "I_settled": True, "x": {0: ln [H+]}}``
    """
    if not inferred:
        return None
    I = inferred["ionic_strength_M"]
    return {"I": I, "I_settled": True,
            "x": {0: LN10 * (-inferred["pH"] - wm.gamma_of(1, wm.tab.ion_sizes[0], I))}}


def _balance_entry(q: float) -> dict | None:
    if q == 0.0:
        return None
    return {"custom": {"name": BALANCE_NAME, "charge": 1 if q > 0 else -1}, "total": abs(q), "unit": "mol/L"}


def _balance_ion(q: float, index: int) -> IonInput:
    """The balancing ion as the boundary reads it back (``custom-ion-<index>``, no ion size)."""
    return IonInput(f"custom-ion-{index}", BALANCE_NAME, 1 if q > 0 else -1, abs(q))


def resolve_measured(base: dict, parsed, measured: Measured) -> tuple[dict, dict]:
    """Turn a measured water into an ordinary one (carbonate total and balancing ion).

    Parameters
    ----------
    base : dict
        The scenario :func:`read_measured` returned
    parsed : object
        ``base`` parsed by the boundary (``acidscape.boundary.scenario.read_scenario``); its last
        system is the carbonate placeholder
    measured : Measured
        The measurements :func:`read_measured` returned

    Returns
    -------
    tuple of (dict, dict)
        The ordinary scenario (no ``measured``, no ``pH``; totals in mol/L) and the inferred
        values ``{"pH", "alkalinity_meq_per_L", "alkalinity_definition", "DIC_M",
        "DIC_mg_per_L_as_C", "balancing_ion_eq_per_L", "ionic_strength_M", "note"}``

    Raises
    ------
    InputError
        Measurements that no carbonate total fits (field ``measured.alkalinity.value``)

    Examples
    --------
    Lab report: pH 8.0 and 100 mg/L as CaCO3 (1.998 meq/L), ideal activities, equivalence
    point. At pH 8 (pKa 6.352, 10.329) alpha1 + 2 alpha2 = 0.9826, so DIC = (1.998 - [OH-]) / 0.9826:

    >>> from types import SimpleNamespace
    >>> from acidscape.science.tableau import SystemInput
    >>> base, m = read_measured({"measured": {"pH": 8.0, "alkalinity": {
    ...     "value": 100, "unit": "mg/L as CaCO3", "definition": "equivalence-point"}}})
    >>> carbonate = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2),
    ...                         (6.352, 10.329), 0.0)
    >>> parsed = SimpleNamespace(components=[carbonate], ions=[], T=298.15, pKw=13.995, model="ideal",
    ...                          I_fixed=None, complexes=False)
    >>> _, info = resolve_measured(base, parsed, m)
    >>> round(info["DIC_M"] * 1e3, 2)
    2.03
    """
    pH = measured.pH
    C, q, I = _close(parsed, pH, measured=measured)
    out = copy.deepcopy(base)
    out["systems"][-1] = {"id": "carbonate", "total": C, "unit": "mol/L"}
    bal = _balance_entry(q)
    if bal is not None:
        out["ions"] = list(out.get("ions") or []) + [bal]
    info = {
        "pH": pH,
        "alkalinity_meq_per_L": measured.alkalinity_eq_per_L * 1e3,
        "alkalinity_definition": (f"fixed end point pH {measured.end_point_pH:g}" if measured.definition == "end-point"
                                  else "equivalence point (H2CO3* reference)"),
        "DIC_M": C,
        "DIC_mg_per_L_as_C": C * ATOMIC_WEIGHT["C"] * 1e3,
        "balancing_ion_eq_per_L": q,
        "ionic_strength_M": I,
        "note": "strong ions not given are represented by one monovalent balancing ion",
    }
    return out, info


def close_scenario(scenario: dict, parsed, inferred: dict | None = None) -> Closed:
    """The closed, electroneutral water equivalent to ``scenario``, solved by the model.

    Parameters
    ----------
    scenario : dict
        An ordinary scenario (``measured`` already resolved by :func:`resolve_measured`)
    parsed : object
        ``scenario`` parsed by the boundary
    inferred : dict, optional
        What :func:`resolve_measured` inferred, when ``scenario`` came from it: the solve then
        starts at the measured pH and settled ionic strength (:func:`warm_start`)

    Returns
    -------
    Closed
        A given ``pH`` becomes a balancing ion so the water solves to that pH; a water open
        to CO2 is closed at its equilibrium carbonate total. Totals in the returned scenario
        are in mol/L.
    """
    if not isinstance(scenario, dict):
        raise InputError("The water could not be read: it must be a group of named values (a JSON object).",
                         field="scenario")
    notes = []
    precipitate = tuple(getattr(parsed, "precipitate", ()) or ())
    out = copy.deepcopy(scenario)
    systems, ions = list(parsed.components), list(parsed.ions)
    pH_given = parsed.pH
    if parsed.CO2_partial_pressure_atm is not None or pH_given is not None:
        wm0 = model_of(parsed)
        sol0 = wm0.solve(pH=pH_given, allow_solids=precipitate)
        entries = list(out.get("systems") or [])
        new_entries = []
        closed_systems = []
        for k, comp in enumerate(systems):
            total = sol0.totals[wm0.comp_index[comp.key]]
            e = dict(entries[k]) if k < len(entries) else {"id": comp.key}
            e["total"] = total
            e["unit"] = "mol/L"
            new_entries.append(e)
            closed_systems.append(dataclasses.replace(comp, total_M=total, fixed_first_M=None))
        out["systems"] = new_entries
        systems = closed_systems
        if parsed.CO2_partial_pressure_atm is not None:
            out.pop("gas", None)
            carb = next((s.total_M for s in systems if s.key == "carbonate"), 0.0)
            notes.append("water open to CO2: treated as closed at its equilibrium carbonate total "
                         f"({carb * 1e3:.4g} mmol/L) from the moment of titration or dosing")
        if pH_given is not None:
            _, q, _ = _close(parsed, pH_given, systems=systems)
            out.pop("pH", None)
            bal = _balance_entry(q)
            if bal is not None:
                ions.append(_balance_ion(q, len(out.get("ions") or [])))
                out["ions"] = list(out.get("ions") or []) + [bal]
                notes.append(f"the given pH {pH_given:g} leaves a charge imbalance of {q * 1e3:.4g} meq/L; "
                             "it is carried by a monovalent balancing ion")
    wm = model_of(parsed, systems=systems, ions=ions)
    as_is = parsed.pH is None and parsed.CO2_partial_pressure_atm is None
    sol = wm.solve(allow_solids=precipitate, guess=warm_start(wm, inferred) if as_is else None)
    return Closed(scenario=out, wm=wm, sol=sol, notes=notes + list(parsed.warnings), precipitate=precipitate)
