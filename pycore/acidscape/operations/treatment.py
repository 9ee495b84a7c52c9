"""Treatment jobs on the one equilibrium model: doses to a target pH, LSI or CCPP with solids
forming, and several chemicals in sequence.

A *water* here is a closed, electroneutral water described by its dissolved totals
(:class:`Water`, built from the :class:`acidscape.operations.closure.Closed` water the
boundary prepares). Dosing ``d`` mol/L of a chemical adds ``d n_j`` to the total of each
component j it carries (its strong ions and acid-base systems, ``data/chemicals.csv``;
:func:`acidscape.operations.dosing.get_chemical`), and the dosed water is solved by the
equilibrium model with its pH free (the charge balance sets it) and the allowed solids at
equilibrium (:meth:`acidscape.science.tableau.WaterModel.solve`). A plant dose is per litre
of water treated: no dilution.

Targets
-------
``target_pH``, ``target_LSI`` or ``target_CCPP`` [mg/L as CaCO3] of the dosed water, or a
given ``dose_mg_per_L``. The LSI and CCPP are those of
:func:`acidscape.operations.indices.calcium_carbonate` (Standard Methods 2330 B and C; the
LSI with free-ion activities, which equals the model's calcite saturation index, the
identity the search uses between reports; the CCPP of the closed water). The dose is the
root of ``value(d) - target`` on ``d >= 0`` found in two stages:

1. *bracket*: the value at ``d = 0`` and at a first dose give the direction the chemical
   moves it; later doses follow secant estimates (at least x1.5, at most x16 per step;
   x4 while a hump carries the value away from the target) until the value passes the
   target or the dose reaches :data:`MAX_DOSE_M`;
2. *refine*: Brent's method [1]_ inside the bracket (inverse quadratic interpolation,
   secant and bisection steps), to :data:`TOLERANCE`.

For the indices the value is probed first at 1 umol/L, to see which way the chemical moves
it where a hump would begin; a pH search starts at 0.1 mmol/L. pH and the
indices are monotone in the dose in the usual cases (a base raises them, an acid lowers
them). Where they are not, the result says so (``search.monotone`` false and a warning):
CO2 dosed into a water that holds hydroxide alkalinity (after lime softening) first turns
OH- into CO3-2 and *raises* the LSI and CCPP, which fall only later. For the indices the
direction is the chemical's own (:func:`chemical_direction`: a base raises them, an acid
or CO2 lowers them; for pH it is the first move), and the dose is the smallest at which the
value passes the target *moving that way*: such a hump is passed and the target is met on
its far side (``search.hump``: the extreme sampled on it); the water between is
oversaturated. This is the recarbonation of a softened water, which leaves the basin
saturated (LSI 0): CO2 to LSI 0 or to a small positive CCPP is the dose past the hump.

A target already met, or already passed in the direction the chemical moves the value (and
not crossed again by a hump), needs no dose: the result has ``status`` "no dose needed"
and zero dose (not an error).
A target the chemical cannot reach raises :class:`TargetUnreachableError` (an
:class:`acidscape.errors.UnreachableError`) naming the field (``target_LSI``,
``steps[1].target_CCPP`` ...), which way it fails and the best value reached.
For CO2 the dose is also limited by its solubility: the dissolved H2CO3* may not exceed
K_H(T) x 1 atm (Plummer & Busenberg 1982, :func:`acidscape.science.temperature.log10_KH_CO2`).

Solids
------
Solids allowed to form reach equilibrium in the dosed water (SI = 0); the dose then
includes what they take up, and each step reports what precipitated (mol/L, mg/L and, with
the plant flow, kg/d of dry solids). The solids allowed, in order of precedence: the
step's ``precipitate``; the scenario's ``precipitate``; by default calcite and brucite
(:data:`DEFAULT_SOLIDS`: calcite forms when the dosed water is oversaturated with it, brucite
only at the high pH of softening). For LSI and CCPP targets the default is brucite only
(:data:`DEFAULT_SOLIDS_INDEX`): those targets are the calcium carbonate driving force of the
water leaving the step, which calcite forming in it would cancel (an LSI above 0 cannot be
reached with calcite at equilibrium; the error says so). A default solid is left out where
the water *enters* the step already oversaturated with it: such a water is taken as
metastable, as it was described or as an LSI or CCPP target before left it (calcite
precipitates from solution only with enough supersaturation and seed; a stabilised water
keeps its small oversaturation for days, common practice), so that orthophosphate dosed
after caustic to a CCPP target does not undo the target; a warning says so, and naming
the solid lets it form. Give ``"precipitate": []`` to let nothing form. Solids formed in a
step are taken to be settled or filtered off before the next step: the next step starts
from the dissolved water.

JSON shapes
-----------
A *water summary* (``water_before``, ``water_after``, ``blend``, ...)::

    {"pH", "temperature_C", "ionic_strength_M",
     "total_alkalinity_meq_per_L", "total_alkalinity_mg_per_L_as_CaCO3",
     "DIC_mmol_per_L", "DIC_mg_per_L_as_C", "CO2_mg_per_L",
     "calcium_mg_per_L", "magnesium_mg_per_L", "calcium_hardness_mg_per_L_as_CaCO3",
     "magnesium_hardness_mg_per_L_as_CaCO3", "total_hardness_mg_per_L_as_CaCO3",
     "orthophosphate_mg_per_L_as_PO4", "orthophosphate_mg_per_L_as_P",   (null without phosphate)
     "LSI", "RSI", "pHs", "CCPP_mg_per_L_as_CaCO3", "tendency",        (null without Ca or carbonate)
     "SI": {solid id: saturation index} (calcite, aragonite, brucite, portlandite, gypsum, brushite
           when their components are present),
     "components_M": {component id: dissolved total [mol/L]}, "notes": [str]}

A *dose step* (each entry of ``treat``'s ``steps``; :func:`dose_to_target` adds the keys
marked +)::

    {"step": 1, "chemical": <Chemical.as_json()>, "target": {"field", "value"},
     "status": "dosed" | "no dose needed", "message",
     "dose_mmol_per_L", "dose_mg_per_L", "dose_meq_per_L",
     "pure_chemical_kg_per_d" (null without flow),
     "product": {"strength_pct", "density_kg_per_L", "product_mg_per_L", "feed_kg_per_d",
                 "feed_L_per_h", "feed_gal_per_d"} | null (without strength_pct),
     "reached": {"pH", "LSI", "CCPP_mg_per_L_as_CaCO3"}   (the dosed water with its solids),
     "precipitation": {"allowed", "basis" ("step" | "scenario" | "default" | "softening"),
                       "formed": [{"id", "name", "formula", "mol_per_L", "mg_per_L", "kg_per_d"}],
                       "total_mg_per_L", "total_kg_per_d",
                       "dose_without_precipitation_mmol_per_L" (single doses to a target where
                       solids formed; null otherwise), "note"},
     "search": {"evaluations", "monotone", "direction" ("raises" | "lowers"), "bracket_mmol_per_L",
                "hump": {"dose_mmol_per_L", "value"} | null}   (nulls for a given dose),
     "water_after": <water summary>, "warnings": [str],
     + "water_before", "scenario_after", "precipitated" (= precipitation.formed), "initial_pH",
     + "flow", "cautions"}

``treat`` returns::

    {"water_before", "steps": [<dose step>...], "water_after", "scenario_after",
     "chemicals": [{"id", "dose_mg_per_L", "pure_chemical_kg_per_d"}] (summed by chemical),
     "precipitated_total_mg_per_L", "precipitated_total_kg_per_d", "flow", "cautions",
     "warnings", "method"}

``scenario_after`` is an ordinary scenario (totals in mol/L) of the dissolved water after the
last step: ``acidscape.solve`` of it describes that water in full.

An unreachable target becomes, at the boundary, ``{"type": "UnreachableError", "message",
"field", "detail": {"direction": "above" | "below", "best_value", "best_dose_mmol_per_L",
"searched_to_mmol_per_L", "chemical"}}`` (``direction`` "none" when the chemical does not
move the value at all).

Functions and classes
---------------------
Water, water_from_closed(closed)        a closed water by its dissolved totals
make_water(systems, ions, ...)          a water from library ids and totals (examples, scripts)
water_scenario(water) -> dict           the same as an ordinary scenario
summarize(water) -> dict                the water summary above
read_steps(raw, path) -> list[Step]     checked steps of a sequence; make_step(...) one step
read_solids(raw, where) -> tuple        checked solid ids
add_chemical(water, chem, d) -> Water   a water with a chemical added (nothing solved)
dose_to_target(closed, chemical, field, value, ...) -> dict
treat(closed, steps, ...) -> dict
cautions_for(chemicals) -> list[str]
TargetUnreachableError

References
----------
.. [1] R. P. Brent, Algorithms for Minimization without Derivatives, Prentice-Hall, 1973,
   ch. 4 (the zero-finding algorithm; written here from its published description).
.. [2] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater, 23rd
   ed., 2017, methods 2320 (alkalinity), 2330 (calcium carbonate saturation) and 2340
   (hardness: calcium and magnesium as CaCO3) (from memory).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

from ..checks import PH_RANGE, describe, fmt, number, sentence, shown
from ..constants import ATOMIC_WEIGHT, M_CaCO3, T0
from ..data import library
from ..errors import AcidscapeError, ConvergenceError, InputError, UnknownIdError, UnreachableError
from ..science import purewater, temperature
from ..science.tableau import IonInput, SystemInput, WaterModel
from .dosing import CAUTIONS as GENERAL_CAUTIONS
from .dosing import flow_L_per_d, get_chemical, product_feed
from .indices import calcium_carbonate
from .probe import aqueous_totals

#: The largest dose searched [mol/L]: 100 mmol/L (4000 mg/L of NaOH), beyond any water treatment.
MAX_DOSE_M = 0.1
#: Dose that probes the direction a chemical moves a value at the start [mol/L] (1 umol/L).
PROBE_DOSE_M = 1e-6
#: First trial dose of a search after the probe [mol/L] (0.1 mmol/L, 4 mg/L of NaOH).
FIRST_DOSE_M = 1e-4
#: Dose standing for "a trace" where a value is not defined without the chemical [mol/L].
TRACE_DOSE_M = 1e-9
#: Target fields and the tolerance of the value reached [pH units, LSI units, mg/L as CaCO3].
TOLERANCE = {"target_pH": 1e-6, "target_LSI": 1e-6, "target_CCPP": 1e-5}
#: Relative tolerance on the dose where the value is not yet within its tolerance.
DOSE_RTOL = 1e-9
#: Accepted range of each target or dose.
BOUNDS = {"target_pH": PH_RANGE, "target_LSI": (-5.0, 5.0), "target_CCPP": (-5000.0, 5000.0),
          "dose_mg_per_L": (0.0, 100000.0)}
FIELDS = ("target_pH", "target_LSI", "target_CCPP", "dose_mg_per_L")
#: Solids allowed to form by default in a pH or fixed-dose step: calcite (it forms where the
#: dosed water is oversaturated) and brucite (only at the high pH of softening).
DEFAULT_SOLIDS = ("calcite", "brucite")
#: The default for LSI and CCPP targets: calcite forming would cancel the target itself.
DEFAULT_SOLIDS_INDEX = ("brucite",)
#: A default solid is left out of a step whose water enters with a saturation index above this.
METASTABLE_SI = 1e-6
#: The calcium carbonate targets.
INDEX_FIELDS = ("target_LSI", "target_CCPP")
#: Solids whose saturation index a water summary reports (when their components are present).
SUMMARY_SOLIDS = ("calcite", "aragonite", "brucite", "portlandite", "gypsum", "brushite")
#: Component ids.
CALCIUM, MAGNESIUM, CARBONATE, PHOSPHATE = "calcium", "magnesium", "carbonate", "phosphate"
#: Molar masses [g/mol] from the IUPAC 2021 atomic weights (acidscape.constants).
M_CO2 = ATOMIC_WEIGHT["C"] + 2 * ATOMIC_WEIGHT["O"]
M_PO4 = ATOMIC_WEIGHT["P"] + 4 * ATOMIC_WEIGHT["O"]
#: Total alkalinity reference: each system counts with the charge of its species that
#: predominates at pH 4.5 (Standard Methods 2320 B total end point, common practice).
ALKALINITY_REFERENCE_PH = 4.5
#: Bisections locating a physical limit of the dose (CO2 solubility) when a target lies beyond it.
LIMIT_BISECTIONS = 24
#: Golden-section steps refining the extreme of a hump that might pass the target.
HUMP_REFINEMENTS = 10
#: A change of a value below this is no change (rounding of the solves).
NO_CHANGE = 1e-9

#: Cautions added for particular chemicals (common practice of chemical handling in water
#: treatment, worded here); the general ones (PPE for caustics and acids, jar or bench test,
#: overfeed, local regulations and licensed operators) are :data:`acidscape.operations.dosing.CAUTIONS`.
LIME_CAUTION = ("Lime is caustic: its dust and slurry burn eyes, skin and airways. Wear eye protection, gloves "
                "and a dust mask where it is handled; quicklime heats strongly when it is slaked.")
CO2_CAUTION = ("Carbon dioxide is heavier than air and collects in low or enclosed spaces (feed rooms, pits, "
               "covered basins), where it can suffocate without warning: ventilate, monitor CO2 and oxygen, and "
               "follow confined-space entry rules.")
PHOSPHATE_CAUTION = ("Orthophosphate overfeed adds a nutrient load to sewers and receiving waters (algal growth) "
                     "and can break discharge limits: dose to the residual a corrosion-control study sets and "
                     "monitor it. Phosphoric acid is corrosive: wear the protective equipment for acids.")
SODA_ASH_CAUTION = ("Soda ash dust irritates eyes and airways: wear eye protection and a dust mask where it is "
                    "handled.")


class TargetUnreachableError(UnreachableError):
    """A target no amount of the chemical reaches; ``detail`` says which way and the best value.

    ``to_dict`` reports the type as ``UnreachableError`` (the boundary's error shape) with the
    extra ``detail`` object.
    """

    def __init__(self, message: str, field: str | None, detail: dict):
        super().__init__(message, field)
        self.detail = detail

    def to_dict(self) -> dict:
        return {"type": "UnreachableError", "message": self.message, "field": self.field, "detail": self.detail}


def cautions_for(chemicals) -> list[str]:
    """The cautions that travel with a dose of these chemicals.

    Parameters
    ----------
    chemicals : iterable of Chemical
        The chemicals dosed [-]

    Returns
    -------
    list of str
        The general dosing cautions, then those of lime, soda ash, CO2 and orthophosphate
        when one of them is dosed

    Examples
    --------
    >>> texts = cautions_for([get_chemical("CO2")])
    >>> any("suffocate" in t for t in texts), any("jar" in t for t in texts)
    (True, True)
    """
    chems = list(chemicals)
    out = list(GENERAL_CAUTIONS)
    if any(any(library.get_ion(i).id == CALCIUM for i, _ in c.ions) and c.alkalinity_eq_per_mol > 0 and
           not c.systems for c in chems):
        out.append(LIME_CAUTION)
    if any(c.id == "Na2CO3" for c in chems):
        out.append(SODA_ASH_CAUTION)
    if any(c.is_gas for c in chems):
        out.append(CO2_CAUTION)
    if any(any(k == PHOSPHATE for k, _ in c.systems) for c in chems):
        out.append(PHOSPHATE_CAUTION)
    return out


def chemical_direction(chem) -> int:
    """+1 if the chemical is a base (raises pH, LSI and CCPP), -1 an acid or CO2, 0 not known.

    A chemical that adds equivalence-point alkalinity is a base; one that removes it, or CO2
    (no alkalinity, two equivalents of acidity per mole), an acid.

    Examples
    --------
    >>> chemical_direction(get_chemical("NaOH")), chemical_direction(get_chemical("CO2"))
    (1, -1)
    """
    if chem.is_gas or chem.alkalinity_eq_per_mol < 0:
        return -1
    if chem.alkalinity_eq_per_mol > 0:
        return 1
    return 0


# --------------------------------------------------------------------------------------
# a water by its dissolved totals


@dataclass
class Water:
    """A closed, electroneutral water by its dissolved totals.

    ``systems`` (:class:`acidscape.science.tableau.SystemInput`, pKa at ``T``) and ``ions``
    (:class:`IonInput`) name the components; ``totals`` maps each component id to its
    dissolved total [mol/L]; ``guess`` is a warm start (component names to ln free
    concentration, ``I``, solids present) for the next solve.
    """

    systems: tuple
    ions: tuple
    totals: dict
    T: float
    pKw: float
    model: str = "davies"
    complexes: bool = True
    I_fixed: float | None = None
    notes: tuple = ()
    guess: dict | None = field(default=None, repr=False, compare=False)

    @property
    def temperature_C(self) -> float:
        return self.T - T0

    def keys(self) -> list[str]:
        return [s.key for s in self.systems] + [i.key for i in self.ions]

    def build(self) -> WaterModel:
        """The water's tableau with its totals."""
        systems = [dataclasses.replace(s, total_M=self.totals.get(s.key, 0.0), fixed_first_M=None)
                   for s in self.systems]
        ions = [dataclasses.replace(i, conc_M=self.totals.get(i.key, 0.0)) for i in self.ions]
        return WaterModel(systems, ions, T=self.T, pKw=self.pKw, model=self.model, complexes=self.complexes,
                          I_fixed=self.I_fixed)


def _named_state(wm: WaterModel, sol) -> dict:
    """A solve's warm start keyed by component name and solid id (survives a new tableau)."""
    st = sol.state
    return {"x": {wm.tab.components[j]: v for j, v in st.get("x", {}).items()}, "I": st.get("I"),
            "active": [wm.tab.solids[s].id for s in st.get("active", [])]}


def _indexed_state(wm: WaterModel, named: dict | None) -> dict | None:
    if not named:
        return None
    comps = wm.tab.components
    return {"x": {j: named["x"][c] for j, c in enumerate(comps) if c in named["x"]}, "I": named.get("I"),
            "active": [wm.solid_index[s] for s in named.get("active", []) if s in wm.solid_index]}


def water_from_closed(closed) -> Water:
    """The dissolved water of a closed water (:class:`acidscape.operations.closure.Closed`).

    Solids present in the water as described (its scenario's ``precipitate``) are left
    behind (settled); a note says so. A :class:`Water` is returned as a copy.
    """
    if isinstance(closed, Water):
        return dataclasses.replace(closed, totals=dict(closed.totals))
    wm, sol = closed.wm, closed.sol
    dis = aqueous_totals(sol)
    totals = {c: max(dis[j], 0.0) for j, c in enumerate(wm.tab.components) if j}
    notes = list(getattr(closed, "notes", []) or [])
    if sol.solids:
        notes.append("solids present in the water as described ("
                     + ", ".join(wm.tab.solids[s].id for s in sol.solids)
                     + ") are taken as settled: treatment starts from the dissolved water")
    systems = tuple(dataclasses.replace(s, fixed_first_M=None) for s in wm.systems)
    w = Water(systems, tuple(wm.ions), totals, wm.T, wm.pKw, wm.model, wm.complexes, wm.I_fixed, tuple(notes))
    w.guess = _named_state(wm, sol)
    return w


def make_water(systems: dict, ions: dict, *, temperature_C: float = 25.0, model: str = "davies",
               complexes: bool = True) -> Water:
    """A water from library ids and totals, for examples and scripts.

    Parameters
    ----------
    systems : dict
        Acid-base system id -> total [mol/L] (``{"carbonate": 4e-3}``)
    ions : dict
        Ion id -> total [mol/L] (``{"calcium": 2e-3}``)
    temperature_C : float
        Temperature [°C]; the pKa are taken there
    model : str
        Activity model [-]
    complexes : bool
        Ion pairs and complexes of the database on or off [-]

    Examples
    --------
    >>> w = make_water({"carbonate": 4e-3}, {"calcium": 2e-3})
    >>> round(summarize(w)["pH"], 2)
    8.05
    """
    T = temperature_C + T0
    sys_in, ion_in, totals = [], [], {}
    for key, t in systems.items():
        s = library.get_system(key)
        sys_in.append(SystemInput(s.id, s.name, tuple(sp.formula for sp in s.species),
                                  tuple(sp.charge for sp in s.species), tuple(temperature.pKa_at(s, T)), 0.0,
                                  tuple(sp.ion_size_A for sp in s.species)))
        totals[s.id] = t
    for key, t in ions.items():
        ion = library.get_ion(key)
        ion_in.append(IonInput(ion.id, ion.formula, ion.charge, 0.0, ion.ion_size_A))
        totals[ion.id] = t
    return Water(tuple(sys_in), tuple(ion_in), totals, T, purewater.pKw(T), model, complexes)


def water_scenario(water: Water) -> dict:
    """An ordinary scenario of the water (totals in mol/L), for ``acidscape.solve``.

    Library systems and ions are named by id; others (a custom acid, the balancing ion of a
    closed water) are written as ``custom`` entries with their name, pKa and charges.
    """
    known_systems = library.systems()
    systems, ions = [], []
    for s in water.systems:
        t = water.totals.get(s.key, 0.0)
        if s.key in known_systems:
            systems.append({"id": s.key, "total": t, "unit": "mol/L"})
        else:
            systems.append({"custom": {"name": s.name, "pKa": list(s.pKa), "charge_most_protonated": s.charges[0]},
                            "total": t, "unit": "mol/L"})
    for i in water.ions:
        t = water.totals.get(i.key, 0.0)
        try:
            lib = library.get_ion(i.key)
        except UnknownIdError:
            lib = None
        if lib is not None and lib.id == i.key:
            ions.append({"id": i.key, "total": t, "unit": "mol/L"})
        else:
            ions.append({"custom": {"name": i.name, "charge": i.charge}, "total": t, "unit": "mol/L"})
    out = {"temperature_C": water.temperature_C, "activity": water.model, "complexes": water.complexes,
           "systems": systems, "ions": ions}
    if water.I_fixed is not None:
        out["ionic_strength_M"] = water.I_fixed
    return out


# --------------------------------------------------------------------------------------
# what a water is: the summary every job reports


def total_alkalinity(wm: WaterModel, dissolved: list[float]) -> float:
    """Equivalence-point total alkalinity [eq/L] of a neutral water from its dissolved totals.

    Each acid-base system counts with the charge of its species that predominates at pH 4.5
    (H2CO3*, H2PO4-, SO4-2, NH4+ ...) times its total, each ion with its charge: by the charge
    balance this is [HCO3-] + 2 [CO3-2] + [OH-] - [H+] + ..., ion pairs counted (Standard
    Methods 2320, from memory).

    Examples
    --------
    >>> from acidscape.science.tableau import SystemInput
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 2e-3)
    >>> wm = WaterModel([c], [IonInput("sodium", "Na+", 1, 1.5e-3)], T=298.15, pKw=13.995, model="ideal")
    >>> round(total_alkalinity(wm, wm.totals) * 1e3, 6)
    1.5
    """
    alk = 0.0
    for s in wm.systems:
        k = sum(1 for p in s.pKa if p < ALKALINITY_REFERENCE_PH)
        alk += s.charges[k] * dissolved[wm.comp_index[s.key]]
    for ion in wm.ions:
        alk += ion.charge * dissolved[wm.comp_index[ion.key]]
    return alk


def _summary(wm: WaterModel, sol, *, indices: bool = True) -> dict:
    """The water summary (see the module notes) of a solved water without solids."""
    dis = aqueous_totals(sol)

    def tot(key):
        j = wm.comp_index.get(key)
        return dis[j] if j is not None else 0.0

    alk = total_alkalinity(wm, dis)
    ca, mg, c, p = tot(CALCIUM), tot(MAGNESIUM), tot(CARBONATE), tot(PHOSPHATE)
    h2co3 = sol.conc[wm.system_species[CARBONATE][0]] if CARBONATE in wm.system_species else 0.0
    has_p = PHOSPHATE in wm.comp_index
    out = {
        "pH": sol.pH,
        "temperature_C": wm.T - T0,
        "ionic_strength_M": sol.I,
        "total_alkalinity_meq_per_L": alk * 1e3,
        "total_alkalinity_mg_per_L_as_CaCO3": alk * 1e3 * M_CaCO3 / 2.0,
        "DIC_mmol_per_L": c * 1e3,
        "DIC_mg_per_L_as_C": c * ATOMIC_WEIGHT["C"] * 1e3,
        "CO2_mg_per_L": h2co3 * M_CO2 * 1e3,
        "calcium_mg_per_L": ca * ATOMIC_WEIGHT["Ca"] * 1e3,
        "magnesium_mg_per_L": mg * ATOMIC_WEIGHT["Mg"] * 1e3,
        "calcium_hardness_mg_per_L_as_CaCO3": ca * M_CaCO3 * 1e3,
        "magnesium_hardness_mg_per_L_as_CaCO3": mg * M_CaCO3 * 1e3,
        "total_hardness_mg_per_L_as_CaCO3": (ca + mg) * M_CaCO3 * 1e3,
        "orthophosphate_mg_per_L_as_PO4": p * M_PO4 * 1e3 if has_p else None,
        "orthophosphate_mg_per_L_as_P": p * ATOMIC_WEIGHT["P"] * 1e3 if has_p else None,
        "LSI": None, "RSI": None, "pHs": None, "CCPP_mg_per_L_as_CaCO3": None, "tendency": None,
        "SI": {sid: sol.SI[wm.solid_index[sid]] for sid in SUMMARY_SOLIDS
               if sid in wm.solid_index and wm.solid_index[sid] in sol.SI},
        "components_M": {cid: dis[j] for j, cid in enumerate(wm.tab.components) if j},
        "notes": [],
    }
    if indices:
        cc, notes = calcium_carbonate(wm, sol)
        out["notes"].extend(notes)
        if cc is not None:
            out.update(LSI=cc["LSI"], RSI=cc["RSI"], pHs=cc["pHs"], CCPP_mg_per_L_as_CaCO3=cc["CCPP_mg_per_L_as_CaCO3"],
                       tendency=cc["tendency"])
            out["notes"].extend(cc.get("notes", []))
    out["notes"].extend(sol.warnings)
    return out


def summarize(water: Water) -> dict:
    """The summary of a water (see the module notes): pH, alkalinity, hardness, indices.

    Examples
    --------
    >>> from acidscape.science.tableau import SystemInput
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 0.0)
    >>> w = Water((c,), (IonInput("calcium", "Ca+2", 2, 0.0),), {"carbonate": 4e-3, "calcium": 2e-3},
    ...           T=298.15, pKw=13.995)
    >>> s = summarize(w)
    >>> round(s["pH"], 2), round(s["total_hardness_mg_per_L_as_CaCO3"], 1), round(s["LSI"], 2)
    (8.05, 200.2, 0.88)
    """
    wm = water.build()
    sol = wm.solve(guess=_indexed_state(wm, water.guess))
    water.guess = _named_state(wm, sol)
    return _summary(wm, sol)


def _summary_of_closed(closed, water: Water) -> dict:
    """The summary of a closed water, from its own solution when it holds no solid."""
    if not isinstance(closed, Water) and not closed.sol.solids and not closed.wm.fixed_species:
        return _summary(closed.wm, closed.sol)
    return summarize(water)


# --------------------------------------------------------------------------------------
# one water plus one chemical


@dataclass
class _Point:
    d: float               # dose [mol/L]
    totals: list
    sol: object
    allowed: tuple         # solids allowed at this dose (ids)
    value: float | None    # the searched quantity
    cc: dict | None = None  # calcium carbonate block, when computed
    limit: bool = False    # beyond a physical limit (CO2 solubility)


class _Dosed:
    """A water and one chemical as one tableau holding the components of both."""

    def __init__(self, water: Water, chem, allow: tuple):
        self.water, self.chem = water, chem
        systems, ions = list(water.systems), list(water.ions)
        keys = set(water.keys())
        add: dict[str, float] = {}
        for key, n in chem.systems:
            if key not in keys:
                systems.append(chem.components_at(water.T)[key])
                keys.add(key)
            add[key] = add.get(key, 0.0) + n
        for iid, n in chem.ions:
            ion = library.get_ion(iid)
            key = ion.id
            if key not in keys:
                ions.append(IonInput(key, ion.formula, ion.charge, 0.0, ion.ion_size_A))
                keys.add(key)
            add[key] = add.get(key, 0.0) + n
        self.new_keys = [k for k in add if k not in water.totals]
        self.base_water = Water(tuple(systems), tuple(ions), dict(water.totals), water.T, water.pKw, water.model,
                                water.complexes, water.I_fixed, water.notes)
        self.wm = wm = self.base_water.build()
        self.base = list(wm.totals)
        self.per = [0.0] * len(self.base)
        for key, n in add.items():
            self.per[wm.comp_index[key]] += n
        self.allow = tuple(allow)
        self.guess = _indexed_state(wm, water.guess)
        self.evaluations = 0
        self._stoich = {sid: wm.tab.solids[wm.solid_index[sid]].stoich for sid in self.allow if sid in wm.solid_index}
        self.sat_H2CO3 = (10.0 ** temperature.log10_KH_CO2(water.T)
                          if chem.is_gas and CARBONATE in wm.system_species else None)

    def totals(self, d: float) -> list[float]:
        return [b + d * n for b, n in zip(self.base, self.per)]

    def allowed(self, totals) -> tuple:
        """The allowed solids whose components are all present."""
        return tuple(sid for sid, st in self._stoich.items() if all(totals[j] > 0.0 for j, _ in st if j))

    def solve(self, d: float, allow: tuple | None = None):
        T = self.totals(d)
        allowed = self.allowed(T) if allow is None else allow
        sol = self.wm.solve(totals=T, allow_solids=allowed, guess=self.guess)
        self.guess = sol.state
        self.evaluations += 1
        return T, sol, allowed

    def point(self, d: float, kind: str) -> _Point:
        T, sol, allowed = self.solve(d)
        p = _Point(d, T, sol, allowed, None)
        if kind in ("target_pH", "dose_mg_per_L"):
            p.value = sol.pH
        elif kind == "target_LSI":
            p.value = self.lsi(sol)
        else:
            p.cc, _ = calcium_carbonate(self.wm, sol, allow_solids=allowed)
            p.value = None if p.cc is None else p.cc["CCPP_mg_per_L_as_CaCO3"]
        if self.sat_H2CO3 is not None:
            p.limit = sol.conc[self.wm.system_species[CARBONATE][0]] > self.sat_H2CO3
        return p

    def lsi(self, sol) -> float | None:
        """The LSI of a solved dosed water: with free-ion activities it equals the calcite
        saturation index (:mod:`acidscape.operations.indices`), read here off the solution."""
        s = self.wm.solid_index.get("calcite")
        jCa, jC = self.wm.comp_index.get(CALCIUM), self.wm.comp_index.get(CARBONATE)
        if s is None or jCa is None or jC is None or not (sol.totals[jCa] > 0 and sol.totals[jC] > 0):
            return None
        return sol.SI.get(s)

    def indices(self, p: _Point) -> dict | None:
        if p.cc is None:
            p.cc, _ = calcium_carbonate(self.wm, p.sol, allow_solids=p.allowed)
        return p.cc


def add_chemical(water: Water, chem, d: float) -> Water:
    """The water with ``d`` mol/L of a chemical added to its totals (nothing solved, no solid formed)."""
    dosed = _Dosed(water, chem, ())
    T = dosed.totals(d)
    bw = dosed.base_water
    out = Water(bw.systems, bw.ions, {c: T[j] for j, c in enumerate(dosed.wm.tab.components) if j}, bw.T, bw.pKw,
                bw.model, bw.complexes, bw.I_fixed, bw.notes)
    out.guess = water.guess
    return out


# --------------------------------------------------------------------------------------
# the 1-D search on the dose


@dataclass
class _Found:
    status: str                  # "found" | "met" | "unreachable" | "no effect"
    point: _Point
    start: _Point
    direction: int               # +1 the chemical raises the value, -1 lowers it
    points: list
    hump: tuple | None = None    # (dose, value) where the value turned, when it first moved the other way
    bracket: tuple | None = None
    limited: bool = False        # stopped by a physical limit (CO2 solubility)
    best: _Point | None = None   # the point nearest the target (unreachable)

    @property
    def monotone(self) -> bool:
        if self.hump is not None:
            return False
        pts = sorted(self.points, key=lambda q: q.d)
        return all((b.value - a.value) * self.direction >= -1e3 * NO_CHANGE
                   for a, b in zip(pts, pts[1:]) if a.value is not None and b.value is not None)


def _brent(g, a: float, ga: float, b: float, gb: float, xtol, ftol: float, max_iter: int = 100):
    """Zero of g in [a, b] with g(a) g(b) < 0 by Brent's method (Brent 1973, ch. 4)."""
    if abs(ga) < abs(gb):
        a, b, ga, gb = b, a, gb, ga
    c, gc, d_prev = a, ga, a
    bisected = True
    for _ in range(max_iter):
        if abs(gb) <= ftol or abs(b - a) <= xtol(b):
            return b
        if ga != gc and gb != gc:  # inverse quadratic interpolation
            s = (a * gb * gc / ((ga - gb) * (ga - gc)) + b * ga * gc / ((gb - ga) * (gb - gc))
                 + c * ga * gb / ((gc - ga) * (gc - gb)))
        else:  # secant
            s = b - gb * (b - a) / (gb - ga)
        lo, hi = sorted(((3 * a + b) / 4, b))
        if (not lo < s < hi or (bisected and abs(s - b) >= abs(b - c) / 2)
                or (not bisected and abs(s - b) >= abs(c - d_prev) / 2)
                or (bisected and abs(b - c) < xtol(b)) or (not bisected and abs(c - d_prev) < xtol(b))):
            s = 0.5 * (a + b)
            bisected = True
        else:
            bisected = False
        gs = g(s)
        d_prev, c, gc = c, b, gb
        if (ga < 0) != (gs < 0):
            b, gb = s, gs
        else:
            a, ga = s, gs
        if abs(ga) < abs(gb):
            a, b, ga, gb = b, a, gb, ga
    return b


def _search(evaluate, target: float, tol: float, direction: int, d_first: float = FIRST_DOSE_M,
            d_max: float = MAX_DOSE_M, start: _Point | None = None) -> _Found:
    """The smallest dose whose value reaches ``target`` (see the module notes).

    ``evaluate(d) -> _Point``; ``direction`` is the chemical's own (+1, -1) or 0 (take the
    first move's); ``start`` the point at zero dose if already evaluated. Returns a
    :class:`_Found`; never raises for an unreachable target.
    """
    pts: list[_Point] = []
    by_d: dict[float, _Point] = {}

    def ev(d: float) -> _Point:
        if d in by_d:
            return by_d[d]
        p = evaluate(d)
        if p.value is None:
            raise ConvergenceError(f"the searched value could not be computed at a dose of {d * 1e3:.4g} mmol/L",
                                   field=None)
        pts.append(p)
        by_d[d] = p
        return p

    if start is not None:
        pts.append(start)
        by_d[start.d] = start
    p0 = start if start is not None else ev(0.0)
    # the first move, from a small dose: the direction at the start (where a hump begins);
    # a search that takes the first move's direction (pH) has no hump and starts larger
    d = max(PROBE_DOSE_M if direction else d_first, 10.0 * p0.d)
    p1 = ev(d)
    while abs(p1.value - p0.value) <= NO_CHANGE and d < d_max and not p1.limit:
        d = min(10.0 * d, d_max)
        p1 = ev(d)
    if abs(p1.value - p0.value) <= NO_CHANGE:
        return _Found("no effect", p0, p0, 0, pts)
    first = 1 if p1.value > p0.value else -1
    s = direction or first
    hump = first != s

    def past(q: _Point) -> bool:
        return (q.value - target) * s >= 0

    if not hump and (p0.value - target) * s >= -tol:
        return _Found("met", p0, p0, s, pts)
    # walk up the dose to the first crossing from short of the target to past it
    short = p0 if (p0.value - target) * s < -tol else None
    prev, cur = p0, p1
    crossed = False
    while True:
        if not past(cur):
            short = cur
        elif short is not None:
            crossed = True
            break
        if cur.limit or cur.d >= d_max:
            break
        slope = (cur.value - prev.value) / (cur.d - prev.d)
        if short is cur and slope * s > 0:
            est = cur.d + (target - cur.value) / slope
            nd = min(max(est + 0.5 * (est - cur.d), 1.5 * cur.d), 16.0 * cur.d)
        elif short is None:  # on the rising side of a hump: sample it closely
            nd = 4.0 * cur.d
        else:
            nd = max(4.0 * cur.d, d_first)
        prev, cur = cur, ev(min(nd, d_max))
    if hump and short is None:
        # the hump's sampled extreme did not pass the target: refine the extreme before saying so
        q = _hump_extreme(ev, pts, s, cur.d, lambda r: not past(r))
        if q is not None and not past(q):
            short = q
            after = [r for r in pts if r.d > q.d and past(r)]
            cur, crossed = min(after, key=lambda r: r.d), True
    turn = None
    if hump:
        ext = max((q for q in pts if q.d <= cur.d), key=lambda q: -q.value * s)
        turn = (ext.d, ext.value)
    found = _Found("unreachable", cur, p0, s, pts, hump=turn)
    if short is None:  # past the target at the start, and the hump never carried the value back over it
        found.status, found.point = "met", p0
        return found
    if cur.limit:  # the best value is at the limit itself: bisect on it (the root may lie before it)
        found.limited = True
        lo, hi = short.d, cur.d
        for _ in range(LIMIT_BISECTIONS):
            mid = 0.5 * (lo + hi)
            q = ev(mid)
            if q.limit:
                hi = mid
            elif past(q):
                cur, crossed = q, True
                break
            else:
                lo, short = mid, q
    if not crossed:
        found.best = _best(pts, s, target)
        return found
    # refine inside the bracket: in ln(dose) when the bracket does not start at zero (titration
    # curves and indices are smoother against the logarithm of the dose)
    if short.d > 0.0:
        u = _brent(lambda x: ev(math.exp(x)).value - target, math.log(short.d), short.value - target,
                   math.log(cur.d), cur.value - target, lambda x: DOSE_RTOL, tol)
        root = ev(math.exp(u))
    else:
        root = ev(_brent(lambda x: ev(x).value - target, 0.0, short.value - target, cur.d, cur.value - target,
                         lambda x: DOSE_RTOL * abs(x) + 1e-15, tol))
    found.bracket = (short.d, cur.d)
    if root.limit:
        found.limited = True
        found.best = _best(pts, s, target)
        return found
    found.status, found.point, found.limited = "found", root, False
    return found


def _hump_extreme(ev, pts, s: int, d_end: float, stop) -> _Point | None:
    """Golden-section refinement of the extreme of a hump (the value furthest against ``s``)
    between the sampled points beside the sampled extreme; stops early where ``stop(point)``."""
    seq = sorted((q for q in pts if q.d <= d_end), key=lambda q: q.d)
    k = max(range(len(seq)), key=lambda i: -seq[i].value * s)
    if k == 0 or k == len(seq) - 1:
        return None
    a, b = math.log(max(seq[k - 1].d, TRACE_DOSE_M)), math.log(seq[k + 1].d)
    r = (math.sqrt(5.0) - 1.0) / 2.0
    x1, x2 = b - r * (b - a), a + r * (b - a)
    f1, f2 = ev(math.exp(x1)), ev(math.exp(x2))
    for _ in range(HUMP_REFINEMENTS):
        for q in (f1, f2):
            if stop(q):
                return q
        if -f1.value * s > -f2.value * s:
            b, x2, f2 = x2, x1, f1
            x1 = b - r * (b - a)
            f1 = ev(math.exp(x1))
        else:
            a, x1, f1 = x1, x2, f2
            x2 = a + r * (b - a)
            f2 = ev(math.exp(x2))
    return max((f1, f2), key=lambda q: -q.value * s)


def _best(pts, s: int, target: float) -> _Point | None:
    ok = [q for q in pts if q.value is not None and not q.limit]
    return max(ok, key=lambda q: q.value * s) if ok else None


# --------------------------------------------------------------------------------------
# steps


@dataclass
class Step:
    """One checked step: a chemical and what fixes its dose."""

    chemical: object             # Chemical
    field: str                   # one of FIELDS
    value: float
    strength_pct: float | None = None
    density_kg_per_L: float | None = None
    precipitate: tuple | None = None   # None: the default
    path: str = ""               # "steps[0]" in a sequence; "" for a single dose
    basis: str | None = None     # where ``precipitate`` came from, when not from the user ("softening")

    def where(self, key: str) -> str:
        return f"{self.path}.{key}" if self.path else key


def read_solids(raw, where: str) -> tuple | None:
    """Check a list of solid ids of the database (None stays None: the default applies).

    Examples
    --------
    >>> read_solids(["calcite", "brucite", "calcite"], "precipitate")
    ('calcite', 'brucite')
    """
    if raw is None:
        return None
    if isinstance(raw, str):
        raw = [raw]
    if not isinstance(raw, (list, tuple)):
        raise InputError(sentence(f"Choose {describe(where)} from the list (such as calcite)."), field=where)
    out = []
    for k, sid in enumerate(raw):
        if not isinstance(sid, str):
            raise InputError(sentence(f"Choose {describe(f'{where}[{k}]')} from the list."), field=f"{where}[{k}]")
        try:
            sid = library.get_solid(sid).id
        except UnknownIdError as exc:
            exc.field = f"{where}[{k}]"
            raise
        if sid not in out:
            out.append(sid)
    return tuple(out)


def _positive(value, where: str, hi: float) -> float | None:
    if value is None:
        return None
    return number(value, where, above=0.0, hi=hi, allow_text=True)


def make_step(chemical, field: str, value, *, strength_pct=None, density_kg_per_L=None, precipitate=None,
              path: str = "") -> Step:
    """A checked :class:`Step` (errors name ``path.key``)."""
    where = (lambda k: f"{path}.{k}" if path else k)  # noqa: E731
    chem = get_chemical(chemical, field=where("chemical")) if isinstance(chemical, str) else None
    if chem is None:
        raise InputError(sentence(f"Choose {describe(where('chemical'))} from the list (such as NaOH)."),
                         field=where("chemical"))
    if field not in FIELDS:
        raise InputError(f"Give one target: {_TARGET_WORDS}.", field=where("target_pH"))
    lo, hi = BOUNDS[field]
    v = number(value, where(field), lo=lo, hi=hi, allow_text=True)
    return Step(chem, field, v, _positive(strength_pct, where("strength_pct"), 100.0),
                _positive(density_kg_per_L, where("density_kg_per_L"), 5.0),
                read_solids(precipitate, where("precipitate")), path)


#: Keys a step may hold.
STEP_KEYS = {"chemical", "strength_pct", "density_kg_per_L", "precipitate", "note", "name"} | set(FIELDS)
#: At most this many steps in one sequence.
MAX_STEPS = 20


def read_steps(raw, path: str = "steps") -> list[Step]:
    """Check a list of steps, each ``{chemical, target_pH | target_LSI | target_CCPP |
    dose_mg_per_L, strength_pct?, density_kg_per_L?, precipitate?}``.

    Errors name the step and key (``steps[1].target_LSI``).

    Examples
    --------
    >>> [s.field for s in read_steps([{"chemical": "Ca(OH)2", "target_pH": 10.3},
    ...                               {"chemical": "CO2", "target_LSI": 0}])]
    ['target_pH', 'target_LSI']
    >>> read_steps([{"chemical": "NaOH"}])
    Traceback (most recent call last):
    ...
    acidscape.errors.InputError: Treatment step 1: give one target, a target pH, a target LSI, a target CCPP or a dose in mg/L.
    """
    if not isinstance(raw, list) or not raw:
        raise InputError("Add at least one treatment step (a chemical and its target, such as NaOH to pH 8.5).",
                         field=path)
    if len(raw) > MAX_STEPS:
        raise InputError(f"{len(raw)} treatment steps were given; at most {MAX_STEPS} are allowed.", field=path)
    out = []
    for k, st in enumerate(raw):
        where = f"{path}[{k}]"
        if not isinstance(st, dict):
            raise InputError(sentence(f"{describe(where)} needs a chemical and one target ({_TARGET_WORDS})."),
                             field=where)
        unknown = sorted(set(st) - STEP_KEYS)
        if unknown:
            raise InputError(sentence(f"{describe(where)} holds settings that are not known here: "
                                      f"{', '.join(describe(k).removeprefix('the ') for k in unknown)}."),
                             field=f"{where}.{unknown[0]}")
        given = [f for f in FIELDS if st.get(f) is not None]
        if len(given) != 1:
            raise InputError(sentence(f"{describe(where)}: give one target, {_TARGET_WORDS}"
                                      + (" (several were given)." if given else ".")),
                             field=f"{where}.{given[1] if len(given) > 1 else 'target_pH'}")
        out.append(make_step(st.get("chemical"), given[0], st[given[0]], strength_pct=st.get("strength_pct"),
                             density_kg_per_L=st.get("density_kg_per_L"), precipitate=st.get("precipitate"),
                             path=where))
    return out


#: The targets of a step, in words.
_TARGET_WORDS = "a target pH, a target LSI, a target CCPP or a dose in mg/L"


def _label(field: str) -> str:
    return {"target_pH": "pH", "target_LSI": "LSI", "target_CCPP": "CCPP", "dose_mg_per_L": "dose"}[field]


def _fmt(field: str, v: float) -> str:
    if field == "target_CCPP":
        return f"{v:+.4g} mg/L as CaCO3"
    if field == "target_LSI":
        return f"{v:+.3f}"
    return f"{v:.3f}"


def _allowed_solids(step: Step, default_scenario: tuple, entering_SI: dict | None) -> tuple[tuple, str, list]:
    """(solids allowed, basis, default solids left out because the water entered oversaturated)."""
    if step.precipitate is not None:
        return step.precipitate, step.basis or "step", []
    if default_scenario:
        return tuple(default_scenario), "scenario", []
    default = DEFAULT_SOLIDS_INDEX if step.field in ("target_LSI", "target_CCPP") else DEFAULT_SOLIDS
    # a water that enters the step already oversaturated is metastable as described (or as an
    # LSI or CCPP target before left it): its solid forms only if named
    kept = tuple(sid for sid in default if (entering_SI or {}).get(sid, -1.0) <= METASTABLE_SI)
    return kept, "default", [sid for sid in default if sid not in kept]


def _formed(dosed: _Dosed, sol, flow_Ld: float | None) -> list[dict]:
    return _formed_rows(dosed.wm, sol, flow_Ld)


def _formed_rows(wm: WaterModel, sol, flow_Ld: float | None) -> list[dict]:
    """One row per solid present: id, name, formula, mol/L, mg/L and (with a flow) kg/d."""
    out = []
    for s, n in sorted(sol.solids.items()):
        info = wm.solid_info[s]
        mg = n * info.molar_mass_g_per_mol * 1e3
        out.append({"id": info.id, "name": info.name, "formula": info.formula, "mol_per_L": n, "mg_per_L": mg,
                    "kg_per_d": mg * flow_Ld * 1e-6 if flow_Ld is not None else None})
    return out


def _unreachable(step: Step, found: _Found, allowed: tuple) -> TargetUnreachableError:
    chem = step.chemical
    label = _label(step.field)
    where = step.where(step.field)
    s = found.direction
    best = found.best
    side = "above" if s > 0 else "below"
    most = "highest" if s > 0 else "lowest"
    if best is None:
        best = found.start
    msg = (f"{describe(where)} ({_fmt(step.field, step.value)}) is {side} the {most} {label} {chem.id} can give "
           f"this water: {_fmt(step.field, best.value)} at {fmt(best.d * 1e3)} mmol/L")
    if found.limited:
        msg += ("; more CO₂ would not dissolve (it would leave more dissolved CO₂ than 1 atm of pure CO₂ holds, "
                "Henry's law, Plummer & Busenberg 1982)")
    elif found.point.d >= MAX_DOSE_M:
        msg += f" (doses up to {fmt(MAX_DOSE_M * 1e3)} mmol/L were tried)"
    if step.field in ("target_LSI", "target_CCPP") and "calcite" in allowed and s > 0:
        msg += ("; calcite is allowed to form in this step, which holds the water at saturation (LSI 0, "
                "CCPP 0): do not let calcite form to dose to an oversaturated water")
    msg = sentence(msg) + ". Choose a target the chemical can reach, or another chemical."
    detail = {"direction": side, "best_value": best.value, "best_dose_mmol_per_L": best.d * 1e3,
              "searched_to_mmol_per_L": max(q.d for q in found.points) * 1e3, "chemical": chem.id}
    return TargetUnreachableError(msg, where, detail)


def _run_step(water: Water, step: Step, *, flow_Ld: float | None, scenario_solids: tuple = (),
              number_: int = 1, compare: bool = False, entering_SI: dict | None = None
              ) -> tuple[dict, Water, list[dict]]:
    """One dose on a water: (step record, the dissolved water after, solids formed).

    ``compare``: when solids formed, also find the dose that would reach the target if none formed.
    ``entering_SI``: saturation indices of the water as it enters (its summary's ``SI``).
    """
    chem = step.chemical
    allow, basis, metastable = _allowed_solids(step, scenario_solids, entering_SI)
    dosed = _Dosed(water, chem, allow)
    requested = [sid for sid in allow if sid not in dosed._stoich]
    warnings: list[str] = []
    if requested and basis in ("step", "scenario"):
        warnings.append("cannot form in this water (a component is missing): " + ", ".join(requested))
    if metastable:
        warnings.append("the water enters this step oversaturated with " + ", ".join(metastable)
                        + " and is taken as metastable: name it in precipitate to let it form")
    kind = step.field
    found = None
    if kind == "dose_mg_per_L":
        d = step.value / chem.molar_mass_g_per_mol * 1e-3
        p = dosed.point(d, kind)
        if p.limit:
            warnings.append(f"this CO2 dose leaves more dissolved H2CO3* than 1 atm of pure CO2 holds in solution; "
                            "part of it would not dissolve")
        status = "dosed" if d > 0 else "no dose needed"
        message = f"{chem.id} {step.value:g} mg/L as given"
    else:
        p0 = None
        direction = 0
        if kind == "target_LSI" or kind == "target_CCPP":
            direction = chemical_direction(chem)
            p0 = dosed.point(0.0, kind)
            if p0.value is None:
                # the chemical may bring the missing calcium or carbonate (lime or soda ash into a
                # water without it): start from a trace of it
                p0 = dosed.point(TRACE_DOSE_M, kind)
                if p0.value is None:
                    raise InputError(f"The {_label(kind)} is not defined for this water: it holds no calcium or "
                                     f"no carbonate (alkalinity), and {chem.id} adds none. Choose a pH target, "
                                     "or add calcium and alkalinity to the water.", field=step.where(kind))
                warnings.append(f"the water holds no calcium or no carbonate before the dose: its {_label(kind)} is "
                                f"not defined, and the search starts from a trace of {chem.id}")
        found = _search(lambda x: dosed.point(x, kind), step.value, TOLERANCE[kind], direction, start=p0)
        if found.status == "no effect":
            raise TargetUnreachableError(
                f"{chem.id} does not change the {_label(kind)} of this water; choose another chemical.",
                step.where(kind), {"direction": "none", "best_value": found.start.value, "best_dose_mmol_per_L": 0.0,
                                   "searched_to_mmol_per_L": max(q.d for q in found.points) * 1e3,
                                   "chemical": chem.id})
        if found.status == "unreachable":
            raise _unreachable(step, found, dosed.allowed(dosed.totals(MAX_DOSE_M)))
        p = found.point
        d = p.d
        moves = "raises" if found.direction > 0 else "lowers"
        if found.status == "met":
            status = "no dose needed"
            v0 = found.start.value
            if abs(v0 - step.value) <= TOLERANCE[kind]:
                message = f"no dose needed: the {_label(kind)} is already at the target {_fmt(kind, step.value)}"
            elif found.hump is not None:
                message = (f"no dose needed: the {_label(kind)} is {_fmt(kind, v0)}, "
                           f"{'above' if found.direction > 0 else 'below'} the target {_fmt(kind, step.value)}; "
                           f"{chem.id} first {'lowers' if found.direction > 0 else 'raises'} it only to "
                           f"{_fmt(kind, found.hump[1])} (at {found.hump[0] * 1e3:.4g} mmol/L) and then {moves} it")
            else:
                message = (f"no dose needed: the {_label(kind)} is {_fmt(kind, v0)}, already "
                           f"{'above' if found.direction > 0 else 'below'} the target {_fmt(kind, step.value)}, "
                           f"and {chem.id} {moves} it further; moving it back needs a chemical that acts the other way")
        else:
            status = "dosed"
            message = f"{chem.id} {moves} the {_label(kind)} to {_fmt(kind, p.value)}"
            if found.hump is not None:
                warnings.append(
                    f"the {_label(kind)} is not monotone in the {chem.id} dose: it first moves the other way "
                    f"(to {_fmt(kind, found.hump[1])} at {found.hump[0] * 1e3:.4g} mmol/L) and reaches the target "
                    "on its far side; the water between is " + ("oversaturated and may deposit calcite"
                                                                if found.direction < 0 else "undersaturated"))
            elif not found.monotone:
                warnings.append(f"the {_label(kind)} is not monotone in the {chem.id} dose; the smallest dose "
                                "found to reach the target is reported")
    mg = d * chem.molar_mass_g_per_mol * 1e3
    formed = _formed(dosed, p.sol, flow_Ld)
    # the dissolved water after: solids separated; chemical components left at zero dropped
    dis = aqueous_totals(p.sol)
    comps = dosed.wm.tab.components
    totals = {c: max(dis[j], 0.0) for j, c in enumerate(comps) if j}
    drop = {k for k in dosed.new_keys if totals.get(k, 0.0) == 0.0}
    bw = dosed.base_water
    after = Water(tuple(s for s in bw.systems if s.key not in drop), tuple(i for i in bw.ions if i.key not in drop),
                  {k: v for k, v in totals.items() if k not in drop}, bw.T, bw.pKw, bw.model, bw.complexes,
                  bw.I_fixed)
    if p.sol.solids:
        sol_after = dosed.wm.solve(totals=dis, guess=p.sol.state)
    else:
        sol_after = p.sol
    after.guess = _named_state(dosed.wm, sol_after)
    summary_after = _summary(dosed.wm, sol_after)
    calcite = dosed.wm.solid_index.get("calcite")
    if p.sol.solids and calcite in p.sol.solids and not p.cc:
        # at equilibrium with calcite: LSI = its saturation index (0), and the closed CCPP is 0
        # by its definition (Standard Methods 2330 C: nothing more precipitates or dissolves)
        reached = {"pH": p.sol.pH, "LSI": dosed.lsi(p.sol), "CCPP_mg_per_L_as_CaCO3": 0.0}
    elif p.sol.solids:  # the dosed water in contact with its solids
        cc = dosed.indices(p)
        reached = {"pH": p.sol.pH, "LSI": None if cc is None else cc["LSI"],
                   "CCPP_mg_per_L_as_CaCO3": None if cc is None else cc["CCPP_mg_per_L_as_CaCO3"]}
    else:  # the same water as after the step
        reached = {"pH": p.sol.pH, "LSI": summary_after["LSI"],
                   "CCPP_mg_per_L_as_CaCO3": summary_after["CCPP_mg_per_L_as_CaCO3"]}
    without = None
    if compare and formed and kind != "dose_mg_per_L" and status == "dosed":
        plain = _Dosed(water, chem, ())
        try:
            alt = _search(lambda x: plain.point(x, kind), step.value, TOLERANCE[kind],
                          found.direction if kind != "target_pH" else 0)
            without = alt.point.d * 1e3 if alt.status in ("found", "met") else None
        except (ConvergenceError, AcidscapeError):
            without = None
    total_mg = sum(f["mg_per_L"] for f in formed)
    record = {
        "step": number_,
        "chemical": chem.as_json(),
        "target": {"field": kind, "value": step.value},
        "status": status,
        "message": message,
        "dose_mmol_per_L": d * 1e3,
        "dose_mg_per_L": mg,
        "dose_meq_per_L": d * chem.alkalinity_eq_per_mol * 1e3,
        "pure_chemical_kg_per_d": mg * flow_Ld * 1e-6 if flow_Ld is not None else None,
        "product": product_feed(mg, step.strength_pct, step.density_kg_per_L, flow_Ld, warnings),
        "reached": reached,
        "precipitation": {
            "allowed": list(allow),
            "basis": basis,
            "formed": formed,
            "total_mg_per_L": total_mg,
            "total_kg_per_d": total_mg * flow_Ld * 1e-6 if flow_Ld is not None else None,
            "dose_without_precipitation_mmol_per_L": without,
            "note": ("solids allowed to form reach equilibrium (SI 0) in the dosed water and the dose includes what "
                     "they take up; they are taken as settled or filtered before the water goes on"
                     if allow else "no solid was allowed to form"),
        },
        "search": {
            "evaluations": dosed.evaluations,
            "monotone": None if found is None else found.monotone,
            "direction": None if found is None else ("raises" if found.direction > 0 else "lowers"),
            "bracket_mmol_per_L": None if found is None or found.bracket is None
            else [found.bracket[0] * 1e3, found.bracket[1] * 1e3],
            "hump": None if found is None or found.hump is None
            else {"dose_mmol_per_L": found.hump[0] * 1e3, "value": found.hump[1]},
        },
        "water_after": summary_after,
        "warnings": warnings + [w for w in p.sol.warnings if w not in warnings],
    }
    if formed:
        record["warnings"].append(("solids formed in the dosed water: " if kind == "dose_mg_per_L" else
                                   "the dose includes what the solids formed take up: ")
                                  + ", ".join(f"{f['name']} {f['mg_per_L']:.4g} mg/L" for f in formed))
    over = [(si, sid) for sid, si in summary_after["SI"].items() if si > 0.3 and sid in ("calcite", "brucite")
            and sid not in allow and sid not in metastable and not (sid == "calcite" and kind in INDEX_FIELDS)]
    for si, sid in over:
        record["warnings"].append(f"the water after this step is oversaturated with {sid} (SI {si:+.2f}); name it in "
                                  "precipitate to let it form")
    return record, after, formed


def _flow(flow, flow_unit) -> float | None:
    if flow is None and flow_unit is None:
        return None
    if flow is None:
        raise InputError("Enter the plant flow, or clear the flow unit.", field="flow")
    return flow_L_per_d(flow, flow_unit)


def _flow_json(flow, flow_unit, flow_Ld) -> dict | None:
    if flow_Ld is None:
        return None
    return {"value": float(flow), "unit": flow_unit, "L_per_d": flow_Ld, "m3_per_d": flow_Ld / 1e3}


def dose_to_target(closed, chemical: str, field: str, value, *, strength_pct=None, density_kg_per_L=None,
                   flow=None, flow_unit=None, precipitate=None) -> dict:
    """Dose of one chemical that brings a water to a target pH, LSI or CCPP (or a given dose).

    Parameters
    ----------
    closed : acidscape.operations.closure.Closed or Water
        The closed water (the boundary reads and closes the scenario)
    chemical : str
        Chemical id (:func:`acidscape.operations.dosing.get_chemical`) [-]
    field : str
        ``"target_pH"`` [-], ``"target_LSI"`` [-], ``"target_CCPP"`` [mg/L as CaCO3] or
        ``"dose_mg_per_L"`` [mg/L]
    value : float
        The target or the dose [unit of ``field``]
    strength_pct : float, optional
        Product strength, 0 < S <= 100 [% w/w]
    density_kg_per_L : float, optional
        Product density, 0 < rho <= 5 [kg/L]
    flow, flow_unit : float, str, optional
        Plant flow [flow_unit] and its unit (m3/d, m3/h, L/s, L/min, MGD, gpm)
    precipitate : list of str, optional
        Solids allowed to form in the dosed water (default: see the module notes) [-]

    Returns
    -------
    dict
        The dose step record (module notes) plus ``water_before``, ``initial_pH``,
        ``scenario_after``, ``precipitated``, ``flow``, ``cautions``

    Raises
    ------
    TargetUnreachableError
        No dose reaches the target (field names the target; ``detail`` which way and the best value)

    Examples
    --------
    Caustic soda to LSI +0.2 (a 15 °C water; the dosed water's LSI is checked in the tests
    against an independent solver):

    >>> w = make_water({"carbonate": 2e-3}, {"calcium": 1e-3, "chloride": 0.2e-3}, temperature_C=15)
    >>> out = dose_to_target(w, "NaOH", "target_LSI", 0.2)
    >>> out["status"], round(out["reached"]["LSI"], 4)
    ('dosed', 0.2)
    """
    step = make_step(chemical, field, value, strength_pct=strength_pct, density_kg_per_L=density_kg_per_L,
                     precipitate=precipitate)
    flow_Ld = _flow(flow, flow_unit)
    water = water_from_closed(closed)
    before = _summary_of_closed(closed, water)
    record, after, formed = _run_step(water, step, flow_Ld=flow_Ld,
                                      scenario_solids=tuple(getattr(closed, "precipitate", ()) or ()), compare=True,
                                      entering_SI=before["SI"])
    record["water_before"] = before
    record["initial_pH"] = before["pH"]
    record["scenario_after"] = water_scenario(after)
    record["precipitated"] = formed
    record["flow"] = _flow_json(flow, flow_unit, flow_Ld)
    record["warnings"] = list(water.notes) + record["warnings"]
    if flow_Ld is None and step.strength_pct is not None:
        record["warnings"].append("give flow and flow_unit for the product feed in kg/d")
    record["cautions"] = cautions_for([step.chemical])
    return record


def treat(closed, steps, *, flow=None, flow_unit=None) -> dict:
    """Several chemicals in sequence, each step on the water the one before left.

    Parameters
    ----------
    closed : acidscape.operations.closure.Closed or Water
        The raw water, closed
    steps : list of dict or Step
        ``{chemical, target_pH | target_LSI | target_CCPP | dose_mg_per_L, strength_pct?,
        density_kg_per_L?, precipitate?}`` in order (see :func:`read_steps`)
    flow, flow_unit : float, str, optional
        Plant flow and its unit, for kg/d of chemicals and solids

    Returns
    -------
    dict
        ``water_before``, ``steps`` (each a dose step record, module notes), ``water_after``,
        ``scenario_after``, ``chemicals`` (summed by chemical), ``precipitated_total_mg_per_L``,
        ``precipitated_total_kg_per_d``, ``flow``, ``cautions``, ``warnings``, ``method``

    Examples
    --------
    Lime to pH 10.3 with calcite forming, then CO2 to LSI -0.1 (a calcium bicarbonate water
    with some free CO2, undersaturated with calcite):

    >>> w = make_water({"carbonate": 5e-3}, {"calcium": 2e-3})
    >>> out = treat(w, [{"chemical": "Ca(OH)2", "target_pH": 10.3}, {"chemical": "CO2", "target_LSI": -0.1}])
    >>> [s["status"] for s in out["steps"]], out["steps"][0]["precipitation"]["formed"][0]["id"]
    (['dosed', 'dosed'], 'calcite')
    >>> round(out["water_after"]["LSI"], 4)
    -0.1
    """
    parsed = [s if isinstance(s, Step) else None for s in steps] if isinstance(steps, list) else None
    if parsed is None or any(s is None for s in parsed):
        parsed = read_steps(steps)
    flow_Ld = _flow(flow, flow_unit)
    water = start = water_from_closed(closed)
    scenario_solids = tuple(getattr(closed, "precipitate", ()) or ())
    before = _summary_of_closed(closed, water)
    records = []
    for k, step in enumerate(parsed):
        entering = before if k == 0 else records[-1]["water_after"]
        rec, water, _ = _run_step(water, step, flow_Ld=flow_Ld, scenario_solids=scenario_solids, number_=k + 1,
                                  entering_SI=entering["SI"])
        rec["water_before"] = before if k == 0 else records[-1]["water_after"]
        records.append(rec)
    for rec in records[1:]:
        rec.pop("water_before", None)  # the previous step's water_after
    records[0].pop("water_before", None)
    sums: dict[str, dict] = {}
    for rec, step in zip(records, parsed):
        e = sums.setdefault(step.chemical.id, {"id": step.chemical.id, "dose_mg_per_L": 0.0,
                                               "pure_chemical_kg_per_d": 0.0 if flow_Ld is not None else None})
        e["dose_mg_per_L"] += rec["dose_mg_per_L"]
        if flow_Ld is not None:
            e["pure_chemical_kg_per_d"] += rec["pure_chemical_kg_per_d"]
    solids_mg = sum(r["precipitation"]["total_mg_per_L"] for r in records)
    warnings = list(start.notes)
    return {
        "water_before": before,
        "steps": records,
        "water_after": records[-1]["water_after"],
        "scenario_after": water_scenario(water),
        "chemicals": list(sums.values()),
        "precipitated_total_mg_per_L": solids_mg,
        "precipitated_total_kg_per_d": solids_mg * flow_Ld * 1e-6 if flow_Ld is not None else None,
        "flow": _flow_json(flow, flow_unit, flow_Ld),
        "cautions": cautions_for(s.chemical for s in parsed),
        "warnings": warnings,
        "method": METHOD,
    }


METHOD = ("each step: the water as the step finds it plus the dose (no dilution: a dose per litre treated), solved "
          "by the equilibrium model with its pH from the charge balance and the allowed solids at equilibrium; the "
          "dose is the root of value(dose) - target, bracketed and refined by Brent's method; LSI and CCPP after "
          "Standard Methods 2330 (acidscape.operations.indices); solids formed in a step are settled before the "
          "next; no gas exchange and no temperature change")
