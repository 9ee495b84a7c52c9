"""Lime (and soda ash) softening to equilibrium, recarbonation, and the textbook stoichiometry beside it.

Equilibrium softening
---------------------
Lime, Ca(OH)2, and soda ash, Na2CO3, are added to the water together and calcite (CaCO3)
and brucite (Mg(OH)2) precipitate to equilibrium (SI = 0) in the softening basin; the
solids are settled and the softened water goes on (:mod:`acidscape.operations.treatment`
does the dosing, the equilibrium model the chemistry, with ion pairs, activities and the
constants at the water's temperature). The equilibrium state depends only on what was
added, so adding the two together is the same as one after the other with the solids
forming at the end.

- Lime: the dose that brings the water to the softening pH (default 10.3 for calcium
  removal, 11.0 with magnesium removal: where calcite, and brucite, precipitate well in
  practice; common practice), or a given ``lime_mg_per_L`` (as Ca(OH)2).
- Soda ash: a given ``soda_ash_mg_per_L``, or the dose that brings the total hardness of
  the softened water down to ``target_hardness_mg_per_L_as_CaCO3`` (the lime found again
  for each trial, so the pH stays at the softening pH; hardness falls as soda ash supplies
  the carbonate that the non-carbonate calcium hardness lacks), or none.
- Recarbonation: CO2 dosed into the settled softened water to a target LSI (default 0: a
  saturated, stable water), CCPP or pH (``recarbonation``; None or false: no
  recarbonation). The softened water leaves the basin saturated with calcite, so after
  calcium-only softening an LSI of 0 needs no CO2 (the result says so; give a pH or a
  negative LSI for a lower pH). After excess-lime softening CO2 first turns the hydroxide
  into carbonate and raises the LSI, then lowers it: the dose is the one that brings the LSI
  back to the target (the water between is oversaturated). With magnesium removal a first
  recarbonation stage comes before (``first_stage_pH``, default 10.3; common practice about
  pH 10-10.5, from memory): CO2 turns the excess lime into calcium carbonate, which
  precipitates (calcite allowed) and settles; the final recarbonation then starts from that
  settled water.

Stoichiometric estimate (textbook)
----------------------------------
In meq/L (:func:`stoichiometric_softening`; the rules of the lime-soda softening chapters of
Davis & Cornwell [1]_ and Hammer & Hammer [2]_, from memory, common practice), with the
carbonate hardness split as CaCH = min(Ca, Alk), MgCH = min(Mg, Alk - CaCH), NCH the rest:

- with magnesium removal (excess lime):
  lime = CO2 + CaCH + 2 MgCH + MgNCH + (Alk - TH if positive) + excess (default 1.25 meq/L),
  soda ash = CaNCH + MgNCH;
- calcium only (selective): lime = CO2 + CaCH, soda ash = CaNCH;
- residual hardness: the practical limits, about 30 mg/L as CaCO3 of calcium and 10 of
  magnesium (magnesium unchanged in calcium-only softening) (common practice);
- sludge: the calcium and magnesium removed (raw + lime - residual) as CaCO3 and Mg(OH)2
  (with magnesium removal the excess lime is taken as precipitated by first-stage
  recarbonation), calcium carbonate limited by the carbonate available.

The two differ (the result lists why with the numbers of the water): ion pairs (CaCO3°,
CaHCO3+, CaSO4°, MgCO3°, MgOH+) keep calcium and magnesium dissolved; divalent activity
coefficients of about 0.6-0.7 at the ionic strength of a hard water raise what stays
dissolved at saturation; the constants depend on temperature; and the equilibrium model
lets the solids reach equilibrium, while the practical limits are what a basin reaches in
its detention time, with fines carried over.

Result JSON::

    {"mode": "calcium only" | "calcium and magnesium", "softening_pH": x | null,
     "lime": {"chemical", "basis", "dose_mmol_per_L", "dose_mg_per_L" (as Ca(OH)2),
              "dose_mg_per_L_as_CaO", "dose_mg_per_L_as_CaCO3", "kg_per_d"},
     "soda_ash": {"chemical", "basis", "dose_mmol_per_L", "dose_mg_per_L", "dose_mg_per_L_as_CaCO3", "kg_per_d"},
     "softening_step": <dose step record of the lime, treatment module>,
     "softened": <water summary after the solids are settled>,
     "sludge": {"solids": [{"stage", "id", "name", "formula", "mol_per_L", "mg_per_L", "kg_per_d"}],
                "dry_solids_mg_per_L", "dry_solids_kg_per_d"},
     "residual_hardness_mg_per_L_as_CaCO3": {"calcium", "magnesium", "total"},
     "first_stage_recarbonation": <dose step record of the CO2 to the first-stage pH, calcite
                                   forming> | null,
     "recarbonation": <dose step record of the CO2 to the final target> | null,
     "mass_balance": {component: {"raw_mmol_per_L", "added_mmol_per_L", "dissolved_mmol_per_L",
                                  "in_solids_mmol_per_L", "balance_mmol_per_L"}}  (whole process),
     "water_before", "water_after", "scenario_after",
     "stoichiometric": <stoichiometric_softening(...)>,
     "comparison": {"lime_mg_per_L_as_CaO": {"equilibrium", "stoichiometric", "difference"},
                    "soda_ash_mg_per_L": {...}, "residual_hardness_mg_per_L_as_CaCO3": {...},
                    "sludge_mg_per_L": {...}, "why": [str],
                    "evidence": {"temperature_C", "ionic_strength_M", "calcium_free_fraction",
                                 "calcium_activity_coefficient", "magnesium_free_fraction",
                                 "magnesium_activity_coefficient"} (of the softened water), "note"},
     "flow", "cautions", "warnings", "method"}

Functions
---------
stoichiometric_softening(CO2_meq, alkalinity_meq, calcium_meq, magnesium_meq, ...) -> dict
soften(closed, ...) -> dict

References
----------
.. [1] M. L. Davis, D. A. Cornwell, Introduction to Environmental Engineering, McGraw-Hill,
   chapter on water treatment, lime-soda softening (from memory; edition not checked).
.. [2] M. J. Hammer, M. J. Hammer Jr., Water and Wastewater Technology, Prentice Hall,
   chapter on water treatment, softening (from memory; edition not checked).
"""

from __future__ import annotations

import math

from ..checks import fmt, number, shown
from ..constants import ATOMIC_WEIGHT, M_CaCO3
from ..data import library
from ..errors import InputError
from .dosing import get_chemical
from .probe import aqueous_totals
from .treatment import (DEFAULT_SOLIDS, MAX_DOSE_M, TOLERANCE, TargetUnreachableError, _Dosed, _flow,
                        _flow_json, _indexed_state, _Point, _run_step, _search, add_chemical, cautions_for, make_step,
                        summarize, water_from_closed, water_scenario)

#: Softening pH without and with magnesium removal (common practice: calcite precipitates well
#: about pH 10.3, brucite about pH 11 and above; from memory).
SOFTENING_PH_CALCIUM = 10.3
SOFTENING_PH_MAGNESIUM = 11.0
#: Excess lime of the stoichiometric rule [meq/L] (1.25 meq/L, about 35 mg/L as CaO; Davis &
#: Cornwell, from memory; common practice).
EXCESS_LIME_MEQ = 1.25
#: Practical limits of lime softening [mg/L as CaCO3] (common practice).
PRACTICAL_CALCIUM = 30.0
PRACTICAL_MAGNESIUM = 10.0
#: First-stage recarbonation pH after excess-lime softening: the excess lime's calcium
#: precipitates as calcium carbonate and settles (common practice: about pH 10-10.5, from memory).
FIRST_STAGE_PH = 10.3
#: Marks an option left to its default.
DEFAULT = "default"
#: Default recarbonation: CO2 to a saturated, stable water.
DEFAULT_RECARBONATION = {"target_LSI": 0.0}
#: Tolerance of the soda-ash search on the residual hardness [mg/L as CaCO3].
HARDNESS_TOL = 1e-4

# molar and equivalent masses [g/mol, g/eq] from the IUPAC 2021 atomic weights
_W = ATOMIC_WEIGHT
M_CAO = _W["Ca"] + _W["O"]
M_CAOH2 = _W["Ca"] + 2 * (_W["O"] + _W["H"])
M_NA2CO3 = 2 * _W["Na"] + _W["C"] + 3 * _W["O"]
M_CO2 = _W["C"] + 2 * _W["O"]
M_MGOH2 = _W["Mg"] + 2 * (_W["O"] + _W["H"])

WHY = (
    "ion pairs: the model keeps calcium and magnesium dissolved as CaCO3°, CaHCO3+, CaSO4°, MgCO3°, MgOH+ ... "
    "beside the free ions, which the stoichiometric rules do not count",
    "activity: at the ionic strength of a hard water divalent ions have activity coefficients of about 0.6-0.7 "
    "(Davies equation), so more stays dissolved at saturation than the concentrations in the solubility products "
    "suggest",
    "temperature: the solubility products of calcite and brucite and the carbonate and water constants are taken "
    "at the water's temperature; the stoichiometric rules have no temperature",
    "equilibrium against practical limits: the model lets calcite and brucite reach equilibrium (SI 0); the "
    "practical limits (about 30 mg/L as CaCO3 of calcium and 10 of magnesium) are what a basin reaches in its "
    "detention time, with fines carried over",
    "lime to a pH: the model doses the lime that gives the softening pH, counting every base and buffer in the "
    "water; the stoichiometric rule adds a fixed excess to the reactions it writes",
)


def stoichiometric_softening(CO2_meq: float, alkalinity_meq: float, calcium_meq: float, magnesium_meq: float, *,
                             remove_magnesium: bool = True, excess_lime_meq: float | None = None,
                             practical_calcium: float = PRACTICAL_CALCIUM,
                             practical_magnesium: float = PRACTICAL_MAGNESIUM) -> dict:
    """Lime and soda ash by the textbook lime-soda stoichiometry (see the module notes).

    Parameters
    ----------
    CO2_meq : float
        Free carbon dioxide [meq/L] (2 meq per mmol; mg/L CO2 / 22.0)
    alkalinity_meq : float
        Total alkalinity, taken as bicarbonate [meq/L]
    calcium_meq, magnesium_meq : float
        Calcium and magnesium [meq/L] (2 meq per mmol)
    remove_magnesium : bool
        Excess-lime softening (True) or calcium only [-]
    excess_lime_meq : float, optional
        Excess lime with magnesium removal [meq/L] (default 1.25)
    practical_calcium, practical_magnesium : float
        Practical limits [mg/L as CaCO3] (default 30 and 10)

    Returns
    -------
    dict
        ``hardness_split_meq_per_L`` (CO2, calcium and magnesium carbonate and non-carbonate
        hardness, alkalinity beyond hardness), ``excess_lime_meq_per_L``, ``lime_meq_per_L``,
        ``lime_mg_per_L_as_CaO``, ``lime_mg_per_L`` (as Ca(OH)2), ``soda_ash_meq_per_L``,
        ``soda_ash_mg_per_L``, ``residual_hardness_mg_per_L_as_CaCO3`` (calcium, magnesium,
        total), ``sludge_mg_per_L`` (CaCO3, Mg(OH)2, total), ``basis``, ``notes``

    Examples
    --------
    A water of 3 meq/L calcium, 1 meq/L magnesium, 3.2 meq/L alkalinity and 0.4 meq/L CO2,
    excess lime: lime = 0.4 + 3 + 2 x 0.2 + 0.8 + 1.25 = 5.85 meq/L, soda ash = 0.8 meq/L.

    >>> out = stoichiometric_softening(0.4, 3.2, 3.0, 1.0)
    >>> round(out["lime_meq_per_L"], 6), round(out["soda_ash_meq_per_L"], 6)
    (5.85, 0.8)
    """
    for name, v in (("CO2_meq", CO2_meq), ("alkalinity_meq", alkalinity_meq), ("calcium_meq", calcium_meq),
                    ("magnesium_meq", magnesium_meq)):
        if not (v >= 0.0) or not math.isfinite(v):
            raise InputError(f"The {name.removesuffix('_meq').replace('_', ' ')} must be a number, zero or more "
                             "(meq/L).", field=name)
    excess = EXCESS_LIME_MEQ if excess_lime_meq is None else excess_lime_meq
    Ca, Mg, Alk, CO2 = calcium_meq, magnesium_meq, alkalinity_meq, CO2_meq
    TH = Ca + Mg
    CaCH = min(Ca, Alk)
    MgCH = min(Mg, max(Alk - CaCH, 0.0))
    CaNCH, MgNCH = Ca - CaCH, Mg - MgCH
    beyond = max(Alk - TH, 0.0)
    notes = []
    eq_CaCO3 = M_CaCO3 / 2.0
    if remove_magnesium:
        lime = CO2 + CaCH + 2.0 * MgCH + MgNCH + beyond + excess
        soda = CaNCH + MgNCH
        res_Ca, res_Mg = practical_calcium, min(practical_magnesium, Mg * eq_CaCO3)
        basis = ("excess lime (magnesium removal): lime = CO2 + CaCH + 2 MgCH + MgNCH + alkalinity beyond hardness + "
                 "excess; soda ash = CaNCH + MgNCH")
    else:
        lime = CO2 + CaCH + beyond
        soda = CaNCH
        excess = 0.0
        res_Ca, res_Mg = practical_calcium, Mg * eq_CaCO3
        basis = "calcium only (selective): lime = CO2 + CaCH + alkalinity beyond hardness; soda ash = CaNCH"
    if beyond > 0:
        notes.append("the alkalinity exceeds the hardness: the bicarbonate beyond it (sodium bicarbonate) takes lime "
                     "too, and its carbonate precipitates calcium")
    res_Ca = min(res_Ca, Ca * eq_CaCO3 + lime * eq_CaCO3)
    # sludge: calcium and magnesium removed (mmol/L)
    ca_removed = max(Ca / 2.0 + lime / 2.0 - res_Ca / M_CaCO3, 0.0)
    carbonate = CO2 / 2.0 + Alk + soda / 2.0 + (excess / 2.0 if remove_magnesium else 0.0)
    if ca_removed > carbonate:
        notes.append("less carbonate than calcium to remove: calcium carbonate limited by the carbonate available")
        ca_removed = carbonate
    mg_removed = max(Mg / 2.0 - res_Mg / M_CaCO3, 0.0) if remove_magnesium else 0.0
    s_ca, s_mg = ca_removed * M_CaCO3, mg_removed * M_MGOH2
    return {
        "basis": basis,
        "hardness_split_meq_per_L": {"CO2": CO2, "calcium_carbonate_hardness": CaCH,
                                     "magnesium_carbonate_hardness": MgCH, "calcium_noncarbonate_hardness": CaNCH,
                                     "magnesium_noncarbonate_hardness": MgNCH, "alkalinity_beyond_hardness": beyond},
        "excess_lime_meq_per_L": excess,
        "lime_meq_per_L": lime,
        "lime_mg_per_L_as_CaO": lime * M_CAO / 2.0,
        "lime_mg_per_L": lime * M_CAOH2 / 2.0,
        "soda_ash_meq_per_L": soda,
        "soda_ash_mg_per_L": soda * M_NA2CO3 / 2.0,
        "residual_hardness_mg_per_L_as_CaCO3": {"calcium": res_Ca, "magnesium": res_Mg, "total": res_Ca + res_Mg},
        "recarbonation_CO2_mg_per_L": excess * M_CO2 / 2.0 if remove_magnesium else 0.0,
        "sludge_mg_per_L": {"CaCO3": s_ca, "Mg(OH)2": s_mg, "total": s_ca + s_mg},
        "practical_limits_mg_per_L_as_CaCO3": {"calcium": practical_calcium, "magnesium": practical_magnesium},
        "notes": notes,
    }


def _component_of(ref: str) -> str | None:
    key = library.resolve_ref(ref)
    if key[0] in ("ion", "system"):
        ion_system = None
        if key[0] == "ion":
            ion_system = getattr(library.get_ion(key[1]), "system", None)
        return ion_system or key[1]
    return None


def _in_solids(formed_lists) -> dict[str, float]:
    """Moles of each component [mol/L] held in the solids formed."""
    out: dict[str, float] = {}
    for formed in formed_lists:
        for f in formed:
            for ref, coef in library.get_solid(f["id"]).reactants:
                comp = _component_of(ref)
                if comp is not None:
                    out[comp] = out.get(comp, 0.0) + coef * f["mol_per_L"]
    return out


def _opt(value, field: str, lo: float, hi: float) -> float | None:
    return None if value is None else number(value, field, lo=lo, hi=hi, allow_text=True)


def soften(closed, *, softening_pH=None, lime_mg_per_L=None, soda_ash_mg_per_L=None,
           target_hardness_mg_per_L_as_CaCO3=None, remove_magnesium: bool = False, excess_lime_meq_per_L=None,
           first_stage_pH=DEFAULT, recarbonation=DEFAULT_RECARBONATION, flow=None, flow_unit=None) -> dict:
    """Lime (and soda ash) softening to equilibrium, then recarbonation (see the module notes).

    Parameters
    ----------
    closed : acidscape.operations.closure.Closed or treatment.Water
        The raw water, closed (the boundary reads and closes the scenario)
    softening_pH : float, optional
        pH the lime brings the water to [-] (default 10.3, or 11.0 with ``remove_magnesium``)
    lime_mg_per_L : float, optional
        A given lime dose instead [mg/L as Ca(OH)2]
    soda_ash_mg_per_L : float, optional
        A given soda ash dose [mg/L as Na2CO3]
    target_hardness_mg_per_L_as_CaCO3 : float, optional
        Total hardness of the softened water the soda ash dose is found for [mg/L as CaCO3]
    remove_magnesium : bool
        Excess-lime softening (magnesium removal) [-]
    excess_lime_meq_per_L : float, optional
        Excess lime of the stoichiometric estimate [meq/L] (default 1.25)
    first_stage_pH : float or None
        pH of a first recarbonation stage with calcite precipitating and settled (the excess
        lime's calcium) [-]; default 10.3 with ``remove_magnesium``, none otherwise; None: none
    recarbonation : dict or None
        ``{"target_LSI": x}``, ``{"target_CCPP": x}`` [mg/L as CaCO3], ``{"target_pH": x}`` or
        ``{"dose_mg_per_L": x}`` of CO2, optional ``precipitate``; None or false for none
        (default ``{"target_LSI": 0}``)
    flow, flow_unit : float, str, optional
        Plant flow and its unit, for kg/d of chemicals and sludge

    Returns
    -------
    dict
        See the module notes

    Raises
    ------
    InputError
        Conflicting or out-of-range options; a water without calcium or magnesium
    TargetUnreachableError
        A softening pH, hardness or recarbonation target that cannot be reached (field names it)

    Examples
    --------
    Calcium-only softening of a calcium bicarbonate water (mass balances are checked in the tests):

    >>> from acidscape.operations.treatment import make_water
    >>> out = soften(make_water({"carbonate": 5e-3}, {"calcium": 2.5e-3}))
    >>> round(out["softened"]["pH"], 6), out["sludge"]["solids"][0]["id"]
    (10.3, 'calcite')
    """
    if not isinstance(remove_magnesium, bool):
        raise InputError("Magnesium removal must be switched on or off (true or false).", field="remove_magnesium")
    if lime_mg_per_L is not None and softening_pH is not None:
        raise InputError("Give the softening pH or the lime dose, not both.", field="lime_mg_per_L")
    if soda_ash_mg_per_L is not None and target_hardness_mg_per_L_as_CaCO3 is not None:
        raise InputError("Give the soda ash dose or the target hardness, not both.", field="soda_ash_mg_per_L")
    pH_s = _opt(softening_pH, "softening_pH", 8.5, 12.5)
    lime_mg = _opt(lime_mg_per_L, "lime_mg_per_L", 0.0, 5000.0)
    soda_mg = _opt(soda_ash_mg_per_L, "soda_ash_mg_per_L", 0.0, 5000.0)
    target_H = _opt(target_hardness_mg_per_L_as_CaCO3, "target_hardness_mg_per_L_as_CaCO3", 0.0, 5000.0)
    excess = _opt(excess_lime_meq_per_L, "excess_lime_meq_per_L", 0.0, 20.0)
    if lime_mg is None and pH_s is None:
        pH_s = SOFTENING_PH_MAGNESIUM if remove_magnesium else SOFTENING_PH_CALCIUM
    rc_step = None
    if recarbonation:
        if not isinstance(recarbonation, dict):
            raise InputError("The recarbonation step needs one target (such as an LSI of 0), or none at all.",
                             field="recarbonation")
        fields = [k for k in ("target_pH", "target_LSI", "target_CCPP", "dose_mg_per_L")
                  if recarbonation.get(k) is not None]
        if len(fields) != 1:
            raise InputError("The recarbonation step needs one target: an LSI, a CCPP, a pH or a dose in mg/L.",
                             field="recarbonation")
        unknown = sorted(set(recarbonation) - {fields[0], "precipitate", "strength_pct", "density_kg_per_L"})
        if unknown:
            raise InputError("The recarbonation step holds settings that are not known here: "
                             + ", ".join(k.replace("_", " ") for k in unknown) + ".", field=f"recarbonation.{unknown[0]}")
        rc_step = make_step("CO2", fields[0], recarbonation[fields[0]], precipitate=recarbonation.get("precipitate"),
                            strength_pct=recarbonation.get("strength_pct"),
                            density_kg_per_L=recarbonation.get("density_kg_per_L"), path="recarbonation")
    if first_stage_pH == DEFAULT:
        first_stage_pH = FIRST_STAGE_PH if remove_magnesium else None
    first_pH = _opt(first_stage_pH, "first_stage_pH", 7.0, 12.5)
    flow_Ld = _flow(flow, flow_unit)
    lime, soda = get_chemical("Ca(OH)2"), get_chemical("Na2CO3")
    w0 = water_from_closed(closed)
    Ca0, Mg0 = w0.totals.get("calcium", 0.0), w0.totals.get("magnesium", 0.0)
    if not Ca0 + Mg0 > 0.0:
        raise InputError("The water holds no calcium or magnesium: there is nothing to soften. Add them to the "
                         "water.", field="scenario")
    before = summarize(w0)
    warnings: list[str] = list(w0.notes)

    # calcite and brucite precipitate in the softening basin (whatever the raw water's saturation)
    step = (make_step("Ca(OH)2", "dose_mg_per_L", lime_mg) if lime_mg is not None
            else make_step("Ca(OH)2", "target_pH", pH_s))
    step.precipitate, step.basis = DEFAULT_SOLIDS, "softening"
    field_pH = "softening_pH"

    def softened_hardness(S: float) -> _Point:
        """Total hardness [mg/L as CaCO3] after softening with S mol/L of soda ash."""
        water = add_chemical(w0, soda, S) if S > 0 else w0
        dosed = _Dosed(water, lime, DEFAULT_SOLIDS)
        if lime_mg is not None:
            p = dosed.point(lime_mg / lime.molar_mass_g_per_mol * 1e-3, "dose_mg_per_L")
        else:
            found = _search(lambda x: dosed.point(x, "target_pH"), pH_s, TOLERANCE["target_pH"], 0)
            if found.status in ("unreachable", "no effect"):
                best = found.best or found.start
                raise TargetUnreachableError(
                    f"The softening pH ({pH_s:g}) is above the highest pH lime gives this water: {best.value:.3f} "
                    f"at {fmt(best.d * 1e3)} mmol/L. Choose a lower softening pH.", field_pH,
                    {"direction": "above", "best_value": best.value, "best_dose_mmol_per_L": best.d * 1e3,
                     "searched_to_mmol_per_L": MAX_DOSE_M * 1e3, "chemical": lime.id})
            p = found.point
        dis = aqueous_totals(p.sol)
        H = sum(dis[dosed.wm.comp_index[k]] for k in ("calcium", "magnesium") if k in dosed.wm.comp_index)
        water.guess = {"x": {dosed.wm.tab.components[j]: v for j, v in p.sol.state.get("x", {}).items()},
                       "I": p.sol.state.get("I"), "active": []}
        return _Point(S, None, p.sol, (), H * M_CaCO3 * 1e3)

    soda_basis = "none"
    S = 0.0
    if soda_mg is not None:
        S = soda_mg / soda.molar_mass_g_per_mol * 1e-3
        soda_basis = "given"
    elif target_H is not None:
        found = _search(softened_hardness, target_H, HARDNESS_TOL, -1)
        if found.status == "unreachable" or found.status == "no effect":
            best = found.best or found.start
            raise TargetUnreachableError(
                f"The target hardness ({target_H:g} mg/L as CaCO3) is below the lowest total hardness soda ash "
                f"gives this water at the softening conditions: {best.value:.4g} mg/L as CaCO3 at "
                f"{fmt(best.d * 1e3)} mmol/L of soda ash (the rest is magnesium, which soda ash does not remove"
                + ("; soften at a higher pH to remove it)." if not remove_magnesium else ")."),
                "target_hardness_mg_per_L_as_CaCO3",
                {"direction": "below", "best_value": best.value, "best_dose_mmol_per_L": best.d * 1e3,
                 "searched_to_mmol_per_L": max(q.d for q in found.points) * 1e3, "chemical": soda.id})
        S = found.point.d
        soda_basis = (f"to a total hardness of {target_H:g} mg/L as CaCO3" if found.status == "found"
                      else f"none needed: the lime alone leaves {found.start.value:.4g} mg/L as CaCO3, at or below "
                           f"{target_H:g}")
    water_in = add_chemical(w0, soda, S) if S > 0 else w0
    try:
        rec, softened, formed = _run_step(water_in, step, flow_Ld=flow_Ld, scenario_solids=())
    except TargetUnreachableError as exc:
        exc.field = field_pH if step.field == "target_pH" else "lime_mg_per_L"
        exc.message = exc.message.replace("The target pH", "The softening pH", 1)
        exc.args = (exc.message,)
        raise
    if rec["status"] == "no dose needed" and pH_s is not None:
        warnings.append(f"the water is already at or above pH {pH_s:g}: no lime is needed to reach the softening pH")
    d_lime = rec["dose_mmol_per_L"] * 1e-3
    rc = rc1 = None
    final = softened
    formed_rc: list[dict] = []
    formed_rc1: list[dict] = []
    if first_pH is not None:
        st1 = make_step("CO2", "target_pH", first_pH, precipitate=["calcite"], path="first_stage")
        try:
            rc1, final, formed_rc1 = _run_step(final, st1, flow_Ld=flow_Ld, scenario_solids=(), number_=2,
                                           entering_SI=rec["water_after"]["SI"])
        except TargetUnreachableError as exc:
            exc.field = "first_stage_pH"
            raise
    if rc_step is not None:
        rc, final, formed_rc = _run_step(final, rc_step, flow_Ld=flow_Ld, scenario_solids=(),
                                         number_=3 if rc1 is not None else 2,
                                         entering_SI=(rc1 or rec)["water_after"]["SI"])
        if rc["status"] == "no dose needed" and rc_step.field == "target_LSI":
            rc["warnings"].append("the settled water is saturated with calcite (LSI 0 at equilibrium), and CO2 only "
                                  "lowers its LSI: give recarbonation a target_pH (or a negative target_LSI) to lower "
                                  "its pH")
    water_after = (rc or rc1 or rec)["water_after"]
    # mass balance of the whole process: raw + chemicals = dissolved after + solids
    co2 = sum(r["dose_mmol_per_L"] * 1e-3 for r in (rc1, rc) if r is not None)
    added = {"calcium": d_lime, "carbonate": S + co2, "sodium": 2.0 * S, "magnesium": 0.0}
    held = _in_solids([formed, formed_rc1, formed_rc])
    balance = {}
    for comp in ("calcium", "magnesium", "carbonate", "sodium"):
        raw = w0.totals.get(comp, 0.0)
        dis = final.totals.get(comp, 0.0)
        if raw == 0.0 and added[comp] == 0.0 and dis == 0.0:
            continue
        balance[comp] = {"raw_mmol_per_L": raw * 1e3, "added_mmol_per_L": added[comp] * 1e3,
                         "dissolved_mmol_per_L": dis * 1e3, "in_solids_mmol_per_L": held.get(comp, 0.0) * 1e3,
                         "balance_mmol_per_L": (raw + added[comp] - dis - held.get(comp, 0.0)) * 1e3}
    solids_all = ([dict(f, stage="softening") for f in formed]
                  + [dict(f, stage="first-stage recarbonation") for f in formed_rc1]
                  + [dict(f, stage="recarbonation") for f in formed_rc])
    dry = sum(f["mg_per_L"] for f in solids_all)
    sm = rec["water_after"]
    stoich = stoichiometric_softening(
        2.0 * before["CO2_mg_per_L"] / M_CO2, max(before["total_alkalinity_meq_per_L"], 0.0),
        2.0 * Ca0 * 1e3, 2.0 * Mg0 * 1e3, remove_magnesium=remove_magnesium, excess_lime_meq=excess)
    eq_lime_CaO = d_lime * M_CAO * 1e3
    soda_mg_eq = S * soda.molar_mass_g_per_mol * 1e3
    H_eq = water_after["total_hardness_mg_per_L_as_CaCO3"]

    def cmp(eq, st):
        return {"equilibrium": eq, "stoichiometric": st, "difference": eq - st}

    # the numbers behind the reasons, in the softened water
    wm_s = softened.build()
    sol_s = wm_s.solve(guess=_indexed_state(wm_s, softened.guess))
    evidence = {"temperature_C": sm["temperature_C"], "ionic_strength_M": sol_s.I}
    for comp in ("calcium", "magnesium"):
        i = wm_s.ion_species.get(comp)
        tot = softened.totals.get(comp, 0.0)
        if i is not None and tot > 0:
            evidence[f"{comp}_free_fraction"] = sol_s.conc[i] / tot
            evidence[f"{comp}_activity_coefficient"] = 10.0 ** sol_s.log10_gamma[i]
    comparison = {
        "lime_mg_per_L_as_CaO": cmp(eq_lime_CaO, stoich["lime_mg_per_L_as_CaO"]),
        "soda_ash_mg_per_L": cmp(soda_mg_eq, stoich["soda_ash_mg_per_L"]),
        "residual_hardness_mg_per_L_as_CaCO3": cmp(H_eq, stoich["residual_hardness_mg_per_L_as_CaCO3"]["total"]),
        "sludge_mg_per_L": cmp(dry, stoich["sludge_mg_per_L"]["total"]),
        "why": list(WHY),
        "evidence": evidence,
        "note": ("equilibrium residual hardness is that of the water after recarbonation (solids formed in "
                 "recarbonation settled)" if rc or rc1 else "equilibrium residual hardness of the softened water"),
    }
    if soda_basis == "none" and stoich["soda_ash_meq_per_L"] > 0:
        comparison["note"] += ("; no soda ash was dosed here (give soda_ash_mg_per_L or "
                               "target_hardness_mg_per_L_as_CaCO3), while the stoichiometric estimate removes the "
                               "non-carbonate hardness with it")
    chems = [lime] + ([soda] if S > 0 else []) + ([get_chemical("CO2")] if rc is not None or rc1 is not None else [])
    return {
        "mode": "calcium and magnesium" if remove_magnesium else "calcium only",
        "softening_pH": pH_s,
        "lime": {"chemical": lime.id, "basis": "given" if lime_mg is not None else f"to pH {pH_s:g}",
                 "dose_mmol_per_L": d_lime * 1e3, "dose_mg_per_L": d_lime * M_CAOH2 * 1e3,
                 "dose_mg_per_L_as_CaO": eq_lime_CaO, "dose_mg_per_L_as_CaCO3": d_lime * M_CaCO3 * 1e3,
                 "kg_per_d": d_lime * M_CAOH2 * 1e3 * flow_Ld * 1e-6 if flow_Ld is not None else None},
        "soda_ash": {"chemical": soda.id, "basis": soda_basis, "dose_mmol_per_L": S * 1e3, "dose_mg_per_L": soda_mg_eq,
                     "dose_mg_per_L_as_CaCO3": S * M_CaCO3 * 1e3,
                     "kg_per_d": soda_mg_eq * flow_Ld * 1e-6 if flow_Ld is not None else None},
        "softening_step": rec,
        "softened": sm,
        "sludge": {"solids": solids_all, "dry_solids_mg_per_L": dry,
                   "dry_solids_kg_per_d": dry * flow_Ld * 1e-6 if flow_Ld is not None else None},
        "residual_hardness_mg_per_L_as_CaCO3": {"calcium": sm["calcium_hardness_mg_per_L_as_CaCO3"],
                                                "magnesium": sm["magnesium_hardness_mg_per_L_as_CaCO3"],
                                                "total": sm["total_hardness_mg_per_L_as_CaCO3"]},
        "first_stage_recarbonation": rc1,
        "recarbonation": rc,
        "mass_balance": balance,
        "water_before": before,
        "water_after": water_after,
        "scenario_after": water_scenario(final),
        "stoichiometric": stoich,
        "comparison": comparison,
        "flow": _flow_json(flow, flow_unit, flow_Ld),
        "cautions": cautions_for(chems),
        "warnings": warnings,
        "method": METHOD,
    }


METHOD = ("lime and soda ash added together and calcite and brucite brought to equilibrium by the equilibrium model "
          "(ion pairs, activities, constants at the water's temperature); the lime dose is the root of pH(dose) - "
          "softening pH, the soda ash dose (when a hardness is asked) the root of hardness(dose) - target; solids "
          "settled; recarbonation with CO2 on the settled water (acidscape.operations.treatment); beside it the "
          "textbook stoichiometric estimate with the practical limits")
