"""Calcium carbonate indices of a water: pHs, Langelier and Ryznar indices, and the CCPP.

For every water that holds calcium and carbonate this module reports, after Standard
Methods 2330 [1]_ (23rd ed., 2017; 2330 B for the indices, 2330 C for the precipitation
potential; the equations below are written from memory of the method and of its sources):

- **pHs and the Langelier saturation index** [2]_ (LSI = pH - pHs), with

  .. math::

      pH_s = pK_2 - pK_s - \\log_{10} a(\\mathrm{Ca^{2+}}) - \\log_{10} a(\\mathrm{HCO_3^-})

  which is the 2330 B formula :math:`pK_2 - pK_s + p[\\mathrm{Ca^{2+}}] + p[\\mathrm{HCO_3^-}]
  + 5\\,pf_m` written with activities (under the Davies equation :math:`\\gamma_2 = f_m^4`, so
  :math:`-\\log\\gamma_{Ca} - \\log\\gamma_{HCO_3} = 5\\,pf_m`). K2 (HCO3- = CO3-2 + H+) and Ks
  (calcite) are the model's constants at the water's temperature (Plummer & Busenberg 1982
  fits in the data files). Two ways of filling in the formula are reported:

  * ``"with ion pairs"`` (the headline numbers): the free-ion activities of Ca2+ and HCO3-
    from the equilibrium model at the water's pH, so calcium held in CaHCO3+, CaCO3°,
    CaSO4° ... is not counted. The LSI then equals the model's saturation index of calcite;
  * ``"classic"``: total calcium and the bicarbonate computed from total alkalinity at the
    water's pH, :math:`[\\mathrm{HCO_3^-}] = (Alk - [\\mathrm{OH^-}] + [\\mathrm{H^+}]) /
    (1 + 2 K_2'/[\\mathrm{H^+}])`, activity coefficients from the water's ionic strength with
    the scenario's activity model: the way the index is usually worked by hand. Total
    alkalinity is the equivalence-point (total) alkalinity of the water: the charge of each
    system's species that predominates at pH 4.5 times its total, plus the strong ions.

  With ion pairs switched off (``"complexes": false``) and the Davies equation the two agree
  for a water whose alkalinity is all carbonate.
- **Ryznar stability index** [3]_ RSI = 2 pHs - pH.
- **CCPP** (calcium carbonate precipitation potential, 2330 C): the water is brought to
  equilibrium with calcite by the equilibrium model, and

  .. math::

      CCPP = ([\\mathrm{Ca}]_{dissolved,\\ before} - [\\mathrm{Ca}]_{dissolved,\\ after})
             \\; M(\\mathrm{CaCO_3}) \\;\\; [\\mathrm{mg/L\\ as\\ CaCO_3}]

  positive: calcite can precipitate; negative: the water would dissolve that much. Closed:
  the water keeps its totals (calcium, DIC and alkalinity fall by x, x and 2x). Open: the
  water is also held at a CO2 partial pressure (H2CO3* fixed by Henry's law, as scenario
  ``gas`` does). To let calcite dissolve, the solve starts from the water plus a reservoir of
  solid CaCO3 (added to the calcium and carbonate totals) that is larger than what dissolves;
  calcite stays present at equilibrium and the reservoir cancels out of the difference.

A water given at a fixed pH is first made electrically neutral at that pH with an inert
balancing ion (anion or cation, whichever is missing), so that the water with its pH free
reproduces the pH that was given; heating, equilibrating with calcite or with a gas then
move the pH by the charge balance.

Functions
---------
calcium_carbonate(wm, sol, ...) -> (dict or None, warnings)   the result block of ``solve``

References
----------
.. [1] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater,
   23rd ed., 2017, method 2330 (Calcium carbonate saturation), B and C (from memory).
.. [2] W. F. Langelier, The analytical control of anti-corrosion water treatment, J. Am.
   Water Works Assoc. 28 (1936) 1500-1521 (citation from memory).
.. [3] J. W. Ryznar, A new index for determining amount of calcium carbonate scale formed
   by a water, J. Am. Water Works Assoc. 36 (1944) 472-486 (citation from memory).
.. [4] L. N. Plummer, E. Busenberg, Geochim. Cosmochim. Acta 46 (1982) 1011-1040 (calcite
   Ksp, K2 and the calcium carbonate ion pairs, 0-90 °C; citation from memory).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

from ..constants import M_CaCO3, T0
from ..data import library
from ..errors import AcidscapeError, ConvergenceError, UnknownIdError
from ..science import purewater, temperature
from ..science.tableau import IonInput, WaterModel
from .probe import aqueous_totals

#: The solid the indices compare with (the Langelier index is a calcite saturation index).
CALCITE = "calcite"
#: Component keys of calcium and of the carbonate system in a water model.
CALCIUM, CARBONATE = "calcium", "carbonate"
#: Key of the inert ion that makes a water given at a fixed pH electrically neutral.
BALANCE_KEY = "charge-balance"
#: End-point pH that fixes each system's reference species for total alkalinity
#: (Standard Methods 2320 B total alkalinity end point, about pH 4.5; common practice).
ALKALINITY_REFERENCE_PH = 4.5
#: |LSI| below this reads "balanced": the sign of an index inside the +-0.05 repeatability of
#: a field pH measurement is not known (common practice).
BALANCED_LSI = 0.05
#: Usual measurement uncertainties (the issue's figures; common practice for field and
#: laboratory work): pH +-0.05, alkalinity and calcium +-3 %, temperature +-1 °C.
UNCERTAINTY_PH = 0.05
UNCERTAINTY_ALKALINITY_REL = 0.03
UNCERTAINTY_CALCIUM_REL = 0.03
UNCERTAINTY_TEMPERATURE_K = 1.0
#: Spread of log10 Ksp of calcite at 25 °C among modern determinations used when the data
#: file records none: -8.48 (Plummer & Busenberg 1982), -8.47 (Jacobson & Langmuir 1974,
#: Geochim. Cosmochim. Acta 38, 301), -8.48 (Nordstrom et al. 1990); about +-0.02 (from memory).
#: Older values printed with the first Langelier tables were higher by up to about 0.15 log units
#: (from memory); hand-worked shortcuts built on them give pHs about 0.2 higher at 25 °C.
CALCITE_LOG_KSP_SPREAD = 0.02
#: Spread of pK2 of carbonic acid at 25 °C: 10.329 (Harned & Scholes 1941, J. Am. Chem. Soc.
#: 63, 1706; Plummer & Busenberg 1982), 10.33 (Stumm & Morgan 1996); about +-0.01 (from memory).
CARBONATE_PK2_SPREAD = 0.01
#: At most this many extra temperatures.
MAX_TEMPERATURES = 8

METHOD_PAIRS = (
    "with ion pairs: Standard Methods 2330 B (23rd ed. 2017, from memory) pHs = pK2 - pKs "
    "- log a(Ca2+) - log a(HCO3-), with the free-ion activities of the equilibrium model at the "
    "water's pH (calcium and bicarbonate held in ion pairs not counted); LSI = pH - pHs (Langelier "
    "1936) equals the calcite saturation index; RSI = 2 pHs - pH (Ryznar 1944); pK2 and pKs of "
    "calcite from Plummer & Busenberg (1982) at the water's temperature; the classic form with total calcium "
    "and total alkalinity is given beside it under 'classic'"
)
METHOD_NO_PAIRS = (
    "ion pairs off: Standard Methods 2330 B (23rd ed. 2017, from memory) pHs = pK2 - pKs "
    "- log a(Ca2+) - log a(HCO3-) with the activities of the equilibrium model without ion pairs "
    "(\"complexes\": false); LSI = pH - pHs (Langelier 1936); RSI = 2 pHs - pH (Ryznar 1944); "
    "pK2 and pKs of calcite from Plummer & Busenberg (1982) at the water's temperature"
)
METHOD_CLASSIC = (
    "classic: Standard Methods 2330 B (23rd ed. 2017, from memory) pHs = pK2 - pKs + p[Ca] + "
    "p[HCO3-] + 5 pfm with TOTAL calcium and [HCO3-] = (Alk - [OH-] + [H+]) / (1 + 2 K2'/[H+]) from "
    "total (equivalence-point) alkalinity at the water's pH; activity coefficients at the water's "
    "ionic strength from the scenario's activity model (5 pfm under Davies); no ion pairs"
)
METHOD_CCPP = (
    "Standard Methods 2330 C (23rd ed. 2017, from memory): the water brought to equilibrium with "
    "calcite by the equilibrium model; CCPP = dissolved calcium before - after, in mg/L as CaCO3 "
    "(positive: can precipitate; negative: would dissolve). Closed: the water keeps its totals; "
    "open: H2CO3* held by the CO2 partial pressure (Henry's law, Plummer & Busenberg 1982)"
)


# --------------------------------------------------------------------------------------
# a water as a recipe that can be rebuilt: other temperature, other totals, other constants


@dataclass(frozen=True)
class _Recipe:
    """The inputs of a closed water model (totals include any solid already present)."""

    systems: tuple          # SystemInput with pKa at T, fixed_first_M None
    ions: tuple             # IonInput (the balancing ion last, if any)
    T: float
    model: str
    complexes: bool
    I_fixed: float | None
    allow: tuple[str, ...]  # solids the scenario lets form (calcite is added for the CCPP)
    balance_eq: float = 0.0  # inert ion: > 0 an anion of that many eq/L, < 0 a cation
    dlogKsp: float = 0.0     # shift of log10 Ksp of calcite
    dpK2: float = 0.0        # shift of pK2 of carbonate

    def build(self, open_H2CO3_M: float | None = None) -> WaterModel:
        systems = []
        for s in self.systems:
            if s.key == CARBONATE:
                pKa = tuple(s.pKa[:-1]) + (s.pKa[-1] + self.dpK2,)
                s = dataclasses.replace(s, pKa=pKa, fixed_first_M=open_H2CO3_M,
                                        total_M=0.0 if open_H2CO3_M is not None else s.total_M)
            systems.append(s)
        ions = list(self.ions)
        if self.balance_eq:
            z = -1 if self.balance_eq > 0 else 1
            ions.append(IonInput(BALANCE_KEY, "balancing anion" if z < 0 else "balancing cation", z,
                                 abs(self.balance_eq)))
        wm = WaterModel(systems, ions, T=self.T, pKw=purewater.pKw(self.T), model=self.model,
                        complexes=self.complexes, I_fixed=self.I_fixed)
        if self.dlogKsp:
            solids = tuple(dataclasses.replace(s, log10_Ksp=s.log10_Ksp + self.dlogKsp) if s.id == CALCITE else s
                           for s in wm.tab.solids)
            wm.tab = dataclasses.replace(wm.tab, solids=solids)
        return wm

    def with_total(self, key: str, total: float) -> "_Recipe":
        return dataclasses.replace(
            self,
            systems=tuple(dataclasses.replace(s, total_M=total) if s.key == key else s for s in self.systems),
            ions=tuple(dataclasses.replace(i, conc_M=total) if i.key == key else i for i in self.ions))

    def total(self, key: str) -> float:
        for s in self.systems:
            if s.key == key:
                return s.total_M
        for i in self.ions:
            if i.key == key:
                return i.conc_M
        raise KeyError(key)

    def at_temperature(self, T: float) -> tuple["_Recipe", list[str]]:
        """The same water at another temperature: every library system's pKa at T."""
        notes: list[str] = []
        systems = []
        for s in self.systems:
            try:
                src = library.get_system(s.key)
            except UnknownIdError:
                notes.append(f"{s.name}: pKa used as given at every temperature")
                systems.append(s)
                continue
            pKa, n = temperature.pKa_at_with_notes(src, T)
            notes.extend(n)
            systems.append(dataclasses.replace(s, pKa=tuple(pKa)))
        return dataclasses.replace(self, systems=tuple(systems), T=T), notes


def _recipe(wm: WaterModel, sol, allow: tuple[str, ...]) -> _Recipe:
    """The closed water of a solved model: every total as used (an open system's filled in)."""
    systems = tuple(dataclasses.replace(s, total_M=sol.totals[wm.comp_index[s.key]], fixed_first_M=None)
                    for s in wm.systems)
    ions = tuple(dataclasses.replace(i, conc_M=sol.totals[wm.comp_index[i.key]]) for i in wm.ions)
    return _Recipe(systems, ions, wm.T, wm.model, wm.complexes, wm.I_fixed, tuple(allow))


def _charge_scale(wm: WaterModel, sol) -> float:
    return sum(abs(sp.charge) * c for sp, c in zip(wm.tab.species, sol.conc)) + 1e-30


#: Most solves before a water at a fixed pH counts as not balanced (the invented test waters
#: of tests/test_indices.py close in one to six, pH 6 to 10.5, 10 to 95 °C).
BALANCE_TRIES = 10


def _at_pH(rec: _Recipe, pH: float, guess: dict | None, wm: WaterModel | None = None,
           tries: int = BALANCE_TRIES) -> tuple[_Recipe, WaterModel, object]:
    """Balance ``rec`` at a fixed pH with the inert ion; its pH-free equilibrium is then that pH.

    The ion's amount is corrected until the charge balance closes to 1e-9 of the water's
    ionic charge (the ion itself moves the ionic strength a little); the model is rebuilt
    only when the ion changes sign.

    Parameters
    ----------
    rec : _Recipe
        The water; its ``balance_eq`` is the first amount of the inert ion tried [eq/L]
    pH : float
        The pH to hold [-]
    guess : dict or None
        Starting state of the solver (a neighbouring water's ``Solution.state``)
    wm : WaterModel, optional
        ``rec`` already built (a model reused from a neighbouring pH, its ion's amount set to
        ``abs(rec.balance_eq)``); built here when None
    tries : int
        Most solves before giving up

    Returns
    -------
    (_Recipe, WaterModel, Solution)
        The recipe with the ion's amount that closes the balance, its model and solution.

    Raises
    ------
    ConvergenceError
        When the balance has not closed after ``tries`` solves.
    """
    if wm is None:
        wm = rec.build()
    for _ in range(tries):
        sol = wm.solve(pH=pH, allow_solids=rec.allow, guess=guess)
        guess = sol.state
        if abs(sol.charge_residual) <= 1e-9 * _charge_scale(wm, sol):
            return rec, wm, sol
        q = rec.balance_eq + sol.charge_residual
        same_ion = rec.balance_eq != 0.0 and (q > 0) == (rec.balance_eq > 0)
        rec = dataclasses.replace(rec, balance_eq=q)
        if same_ion:
            wm.totals = wm.totals[:-1] + [abs(q)]
        else:
            wm = rec.build()
    raise ConvergenceError(f"the water could not be balanced at pH {pH:g}")


# --------------------------------------------------------------------------------------
# the numbers of one solved (closed, neutral) water


def _pK2_pKs(wm: WaterModel) -> tuple[float, float]:
    iHCO3 = wm.system_species[CARBONATE][-2]
    solid = wm.tab.solids[wm.solid_index[CALCITE]]
    jCa, jC = wm.comp_index[CALCIUM], wm.comp_index[CARBONATE]
    if sorted(solid.stoich) != sorted(((jCa, 1), (jC, 1))):
        raise ValueError("calcite is not Ca+2 + CO3-2 in the component basis")
    return wm.tab.species[iHCO3].log10_K, -solid.log10_Ksp


def _indices(wm: WaterModel, sol) -> dict:
    """pHs, LSI, RSI with the free-ion activities of the model."""
    iCa = wm.ion_species[CALCIUM]
    iHCO3 = wm.system_species[CARBONATE][-2]
    pK2, pKs = _pK2_pKs(wm)
    aCa = sol.conc[iCa] * 10.0 ** sol.log10_gamma[iCa]
    aHCO3 = sol.conc[iHCO3] * 10.0 ** sol.log10_gamma[iHCO3]
    if aCa <= 0 or aHCO3 <= 0:
        return {"pHs": None, "LSI": None, "RSI": None}
    pHs = pK2 - pKs - math.log10(aCa) - math.log10(aHCO3)
    return {"pHs": pHs, "LSI": sol.pH - pHs, "RSI": 2.0 * pHs - sol.pH, "pK2": pK2, "pKs": pKs}


def _total_alkalinity(wm: WaterModel, dissolved: list[float]) -> float:
    """Equivalence-point total alkalinity [eq/L] from the totals of a neutral water.

    Each system counts with the charge of its species that predominates at pH 4.5 (H2CO3*,
    H2PO4-, SO4-2, NH4+, B(OH)3 ...), each strong ion with its charge: the charge balance then
    says Alk = [HCO3-] + 2[CO3-2] + [OH-] - [H+] + ... with the ion pairs counted.
    """
    alk = 0.0
    for s in wm.systems:
        k = sum(1 for p in s.pKa if p < ALKALINITY_REFERENCE_PH)
        alk += s.charges[k] * dissolved[wm.comp_index[s.key]]
    for ion in wm.ions:
        alk += ion.charge * dissolved[wm.comp_index[ion.key]]
    return alk


def _classic(wm: WaterModel, sol, alk: float) -> dict | None:
    """pHs, LSI, RSI from total calcium and total alkalinity (no ion pairs)."""
    tab, lg, I, pH = wm.tab, wm.gamma_of, sol.I, sol.pH
    iCa = wm.ion_species[CALCIUM]
    idx = wm.system_species[CARBONATE]
    iHCO3, iCO3 = idx[-2], idx[-1]
    pK2, pKs = _pK2_pKs(wm)
    Ca = aqueous_totals(sol)[wm.comp_index[CALCIUM]]
    g = {k: lg(tab.species[i].charge, tab.species[i].ion_size_A, I)
         for k, i in (("Ca", iCa), ("HCO3", iHCO3), ("CO3", iCO3), ("H", 0), ("OH", 1))}
    H = 10.0 ** (-pH - g["H"])
    OH = 10.0 ** (pH - wm.pKw - g["OH"])
    ratio = 10.0 ** (pH - pK2 + g["HCO3"] - g["CO3"])  # [CO3-2]/[HCO3-] at this pH
    HCO3 = (alk - OH + H) / (1.0 + 2.0 * ratio)
    if Ca <= 0 or HCO3 <= 0:
        return None
    pHs = pK2 - pKs - math.log10(Ca) - g["Ca"] - math.log10(HCO3) - g["HCO3"]
    return {"pHs": pHs, "LSI": pH - pHs, "RSI": 2.0 * pHs - pH, "alkalinity_meq_per_L": alk * 1e3,
            "HCO3_M": HCO3, "calcium_M": Ca, "method": METHOD_CLASSIC}


def _ccpp(rec: _Recipe, wm: WaterModel, sol, open_pCO2: float | None = None) -> tuple[float, float]:
    """(CCPP [mol/L], pH after) of a closed neutral water; open to ``open_pCO2`` [atm] if given."""
    allow = tuple(dict.fromkeys(rec.allow + (CALCITE,)))
    jCa, jC = wm.comp_index[CALCIUM], wm.comp_index[CARBONATE]
    s_cal = wm.solid_index[CALCITE]
    before = aqueous_totals(sol)[jCa]
    first_reservoir = max(1e-4, 0.5 * sol.totals[jCa], 0.5 * sol.totals[jC])
    if open_pCO2 is not None:
        wm = rec.build(open_H2CO3_M=10.0 ** temperature.log10_KH_CO2(rec.T) * open_pCO2)
        reservoir = 0.0  # first try without: the gas may leave the water oversaturated
    else:
        reservoir = 0.0 if sol.SI.get(s_cal, 0.0) > 0 else first_reservoir
    guess = {"x": dict(sol.state.get("x", {})), "I": sol.I,
             "active": [s_cal] + [s for s in sol.solids if s != s_cal]}
    for _ in range(8):
        totals = list(sol.totals)
        totals[jCa] += reservoir
        totals[jC] += reservoir
        after = wm.solve(totals=totals, allow_solids=allow, guess=guess)
        if s_cal in after.solids or (reservoir == 0.0 and open_pCO2 is None):
            return before - aqueous_totals(after)[jCa], after.pH
        # undersaturated: calcite must be able to dissolve; start again with a reservoir, larger each time
        reservoir = first_reservoir if reservoir == 0.0 else 8.0 * reservoir
    raise ValueError("calcite did not reach equilibrium: the water dissolves more than 8 mol/L of it")


def _tendency(lsi: float | None) -> str | None:
    if lsi is None:
        return None
    if lsi > BALANCED_LSI:
        return "deposit"
    if lsi < -BALANCED_LSI:
        return "dissolve"
    return "balanced"


def _mg(mol_per_L: float) -> float:
    return mol_per_L * M_CaCO3 * 1e3


def _evaluate(rec: _Recipe, wm: WaterModel, sol, open_pCO2: float | None, *, classic: bool = True) -> dict:
    """Every index of one closed neutral water."""
    out = _indices(wm, sol)
    out = {"temperature_C": rec.T - T0, "pH": sol.pH, **out}
    for suffix, p in (("", None), ("_open", open_pCO2)) if open_pCO2 is not None else (("", None),):
        try:
            ccpp, pH_after = _ccpp(rec, wm, sol, p)
            out[f"CCPP{suffix}_mg_per_L_as_CaCO3"], out[f"pH_after_CCPP{suffix}"] = _mg(ccpp), pH_after
        except (ConvergenceError, ValueError) as exc:  # the indices stay; the water's solve is not lost
            out[f"CCPP{suffix}_mg_per_L_as_CaCO3"] = out[f"pH_after_CCPP{suffix}"] = None
            out.setdefault("errors", []).append(f"CCPP{suffix.replace('_', ' ')} not computed: {exc}")
    out["tendency"] = _tendency(out["LSI"])
    if classic:
        out["classic"] = _classic(wm, sol, _total_alkalinity(wm, aqueous_totals(sol)))
    return out


# --------------------------------------------------------------------------------------
# uncertainty: one input at a time, re-solved


def _carbonate_alkalinity(wm: WaterModel, sol) -> float:
    """The carbonate part of the alkalinity [eq/L] (H2CO3* reference, ion pairs counted)."""
    jC = wm.comp_index[CARBONATE]
    out = 0.0
    for sp, c in zip(wm.tab.species, sol.conc):
        st = dict(sp.stoich)
        a = st.get(jC, 0)
        if a:
            out += c * (2 * a - st.get(0, 0))
    return out


def _perturbations(rec: _Recipe, wm: WaterModel, sol) -> list[tuple[str, str, list[_Recipe], list[float]]]:
    """(input, description, [recipe at -, at +], [pH at -, at +]) for each perturbed input."""
    pH = sol.pH
    dis = aqueous_totals(sol)
    out = [("pH", f"pH +-{UNCERTAINTY_PH:g}", [rec, rec], [pH - UNCERTAINTY_PH, pH + UNCERTAINTY_PH])]
    C = rec.total(CARBONATE)
    alk = _total_alkalinity(wm, dis)
    calk = _carbonate_alkalinity(wm, sol)
    if calk > 0 and alk > 0:
        dC = UNCERTAINTY_ALKALINITY_REL * alk * C / calk
        out.append(("alkalinity", f"alkalinity +-{UNCERTAINTY_ALKALINITY_REL:.0%} (carbonate total at the same pH)",
                    [rec.with_total(CARBONATE, max(C - dC, 1e-12)), rec.with_total(CARBONATE, C + dC)], [pH, pH]))
    Ca = rec.total(CALCIUM)
    out.append(("calcium", f"calcium +-{UNCERTAINTY_CALCIUM_REL:.0%}",
                [rec.with_total(CALCIUM, Ca * (1 - UNCERTAINTY_CALCIUM_REL)),
                 rec.with_total(CALCIUM, Ca * (1 + UNCERTAINTY_CALCIUM_REL))], [pH, pH]))
    T = rec.T
    lo_T, hi_T = max(T - UNCERTAINTY_TEMPERATURE_K, T0), min(T + UNCERTAINTY_TEMPERATURE_K, T0 + 100.0)
    out.append(("temperature", f"temperature +-{UNCERTAINTY_TEMPERATURE_K:g} °C (same pH reading)",
                [rec.at_temperature(lo_T)[0], rec.at_temperature(hi_T)[0]], [pH, pH]))
    spread = _calcite_spread()
    out.append(("calcite Ksp", f"log10 Ksp of calcite +-{spread[1]:g} ({spread[0]})",
                [dataclasses.replace(rec, dlogKsp=-spread[1]), dataclasses.replace(rec, dlogKsp=spread[1])], [pH, pH]))
    out.append(("carbonate K2", f"pK2 of carbonate +-{CARBONATE_PK2_SPREAD:g} (published spread, from memory)",
                [dataclasses.replace(rec, dpK2=-CARBONATE_PK2_SPREAD), dataclasses.replace(rec, dpK2=CARBONATE_PK2_SPREAD)],
                [pH, pH]))
    return out


def _calcite_spread() -> tuple[str, float]:
    """(source, half-width) of log10 Ksp of calcite: the data file's spread, else the module's."""
    try:
        spread = library.get_solid(CALCITE).log10_K_spread
    except AcidscapeError:
        spread = None
    if spread:
        return "spread recorded in solids.csv", 0.5 * (spread[1] - spread[0])
    return "spread of modern determinations, from memory", CALCITE_LOG_KSP_SPREAD


_RANGE_KEYS = (("pHs", "pHs_range"), ("LSI", "LSI_range"), ("RSI", "RSI_range"),
               ("CCPP_mg_per_L_as_CaCO3", "CCPP_range_mg_per_L_as_CaCO3"),
               ("CCPP_open_mg_per_L_as_CaCO3", "CCPP_open_range_mg_per_L_as_CaCO3"))


def _uncertainty(rec: _Recipe, wm: WaterModel, sol, base: dict, open_pCO2: float | None) -> dict:
    rows = []
    for name, what, recs, pHs in _perturbations(rec, wm, sol):
        row = {"input": name, "perturbation": what}
        vals = []
        try:
            for r, pH in zip(recs, pHs):
                r2, wm2, sol2 = _at_pH(r, pH, sol.state)
                vals.append(_evaluate(r2, wm2, sol2, open_pCO2, classic=False))
        except ConvergenceError as exc:
            row["error"] = f"not computed: {exc}"
            rows.append(row)
            continue
        for key, _ in _RANGE_KEYS:
            if base.get(key) is not None and vals[0].get(key) is not None and vals[1].get(key) is not None:
                row[key] = [vals[0][key], vals[1][key]]
        rows.append(row)
    out = {"inputs": rows}
    for key, rkey in _RANGE_KEYS:
        if base.get(key) is None or not any(key in row for row in rows):
            continue
        up = down = 0.0
        for row in rows:
            if key not in row:
                continue
            d = [v - base[key] for v in row[key]]
            up += max(0.0, *d) ** 2
            down += max(0.0, *[-x for x in d]) ** 2
        out[rkey] = [base[key] - math.sqrt(down), base[key] + math.sqrt(up)]
    out["dominant"] = {key: max((r for r in rows if key in r), key=lambda r: abs(r[key][1] - r[key][0]))["input"]
                       for key, rkey in _RANGE_KEYS if rkey in out}
    out["method"] = ("one input at a time moved by its uncertainty and the water solved again at the measured "
                     "pH (inert ion rebalanced); the ranges add the deviations in quadrature (independent errors); "
                     "'dominant' names the input that moves each number most")
    return out


# --------------------------------------------------------------------------------------
# the public function


def calcium_carbonate(wm: WaterModel, sol, *, pH_given: float | None = None, allow_solids: tuple[str, ...] = (),
                      open_CO2_partial_pressure_atm: float | None = None, temperatures_C=(),
                      uncertainty: bool = False) -> tuple[dict | None, list[str]]:
    """Calcium carbonate indices of a solved water (Standard Methods 2330 B and C).

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's model
    sol : acidscape.science.model.Solution
        Its solution
    pH_given : float, optional
        The pH the scenario fixed [-] (the water is then made neutral with an inert ion)
    allow_solids : tuple of str
        Solids the scenario lets form [-]; calcite is added for the CCPP
    open_CO2_partial_pressure_atm : float, optional
        CO2 partial pressure for the open-system CCPP [atm]
    temperatures_C : sequence of float
        Further temperatures at which the same (closed) water is evaluated [°C]
    uncertainty : bool
        Also move each input by its usual uncertainty and report ranges

    Returns
    -------
    (dict or None, list of str)
        The ``calcium_carbonate`` block (None when calcium or carbonate is missing) and warnings.
        Keys: ``pHs``, ``LSI``, ``RSI``, ``CCPP_mg_per_L_as_CaCO3``, ``pH_after_CCPP``,
        ``method``, ``tendency``, ``classic``, ``CCPP_method``, ``temperature_C``, ``pH``,
        ``pK2``, ``pKs``, ``at_temperatures``, ``notes``; with a partial pressure also
        ``CCPP_open_mg_per_L_as_CaCO3``, ``pH_after_CCPP_open``, ``CO2_partial_pressure_atm``;
        when asked ``uncertainty``.

    Examples
    --------
    Calcium bicarbonate water, 2 mmol/L of calcium and 4 mmol/L of DIC at 25 °C (Davies):
    pH 8.05 from the charge balance, oversaturated with calcite.

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 4e-3)
    >>> wm = WaterModel([c], [IonInput("calcium", "Ca+2", 2, 2e-3)], T=298.15, pKw=13.995, model="davies")
    >>> cc, warnings = calcium_carbonate(wm, wm.solve())
    >>> round(cc["pH"], 2), round(cc["LSI"], 2), round(cc["CCPP_mg_per_L_as_CaCO3"], 1), cc["tendency"]
    (8.05, 0.88, 33.7, 'deposit')
    """
    warnings: list[str] = []
    jCa, jC = wm.comp_index.get(CALCIUM), wm.comp_index.get(CARBONATE)
    has_ca = jCa is not None and sol.totals[jCa] > 0
    has_c = jC is not None and sol.totals[jC] > 0
    if not (has_ca and has_c):
        if has_ca or has_c:
            missing = "carbonate (alkalinity or DIC)" if has_ca else "calcium"
            warnings.append(f"calcium carbonate indices (LSI, RSI, CCPP) not computed: the water has no {missing}")
        return None, warnings
    if CALCITE not in wm.solid_index:  # the database always holds calcite; a custom tableau may not
        return None, warnings
    try:
        return _calcium_carbonate(wm, sol, pH_given, allow_solids, open_CO2_partial_pressure_atm, temperatures_C,
                                  uncertainty), warnings
    except ConvergenceError as exc:  # the water's own answer is not lost for want of an index
        warnings.append(f"calcium carbonate indices not computed: {exc}")
        return None, warnings


def _calcium_carbonate(wm, sol, pH_given, allow_solids, open_CO2_partial_pressure_atm, temperatures_C,
                       uncertainty) -> dict:
    rec = _recipe(wm, sol, allow_solids)
    notes: list[str] = []
    if pH_given is not None or wm.fixed_species:
        if pH_given is not None:
            rec = dataclasses.replace(rec, balance_eq=sol.charge_residual)
            rec, wm_b, sol_b = _at_pH(rec, sol.pH, sol.state)
            if rec.balance_eq:
                notes.append(f"the water at the given pH was made neutral with an inert "
                             f"{'anion' if rec.balance_eq > 0 else 'cation'} of {abs(rec.balance_eq) * 1e3:.3g} meq/L "
                             "before heating or equilibrating it")
        else:  # open to a gas: the same water, closed with its carbonate total
            wm_b = rec.build()
            sol_b = wm_b.solve(allow_solids=rec.allow, guess=sol.state)
    else:
        wm_b, sol_b = wm, sol
    base = _evaluate(rec, wm_b, sol_b, open_CO2_partial_pressure_atm)
    pairs = wm.complexes
    out = {
        "pHs": base["pHs"], "LSI": base["LSI"], "RSI": base["RSI"],
        "CCPP_mg_per_L_as_CaCO3": base["CCPP_mg_per_L_as_CaCO3"], "pH_after_CCPP": base["pH_after_CCPP"],
        "method": METHOD_PAIRS if pairs else METHOD_NO_PAIRS,
        "method_id": "with ion pairs" if pairs else "ion pairs off",
        "tendency": base["tendency"],
        "temperature_C": base["temperature_C"], "pH": base["pH"], "pK2": base.get("pK2"), "pKs": base.get("pKs"),
        "classic": base["classic"],
        "LSI_classic_minus_model": (base["classic"]["LSI"] - base["LSI"]
                                    if base["classic"] and base["LSI"] is not None else None),
        "CCPP_method": METHOD_CCPP,
    }
    notes.extend(base.pop("errors", []))
    if base["classic"] is None:
        notes.append("classic index not computed: the total alkalinity leaves no bicarbonate at this pH")
    if open_CO2_partial_pressure_atm is not None:
        out["CO2_partial_pressure_atm"] = open_CO2_partial_pressure_atm
        out["CCPP_open_mg_per_L_as_CaCO3"] = base["CCPP_open_mg_per_L_as_CaCO3"]
        out["pH_after_CCPP_open"] = base["pH_after_CCPP_open"]
    def row_of(values: dict) -> dict:  # the classic method is described once, at the top
        row = dict(values)
        if row.get("classic"):
            row["classic"] = {k: v for k, v in row["classic"].items() if k != "method"}
        return row

    rows = [row_of(base)]
    seen = {round(base["temperature_C"], 9)}
    for t_C in list(temperatures_C)[:MAX_TEMPERATURES]:
        if round(t_C, 9) in seen:
            continue
        seen.add(round(t_C, 9))
        rec_T, tnotes = rec.at_temperature(t_C + T0)
        wm_T = rec_T.build()
        notes_T = tnotes + wm_T.notes
        try:
            sol_T = wm_T.solve(allow_solids=rec_T.allow, guess=sol_b.state)
        except ConvergenceError as exc:
            rows.append({"temperature_C": t_C, "pHs": None, "LSI": None, "RSI": None,
                         "CCPP_mg_per_L_as_CaCO3": None, "notes": [f"not computed: {exc}"]})
            continue
        row = _evaluate(rec_T, wm_T, sol_T, open_CO2_partial_pressure_atm)
        notes_T += sol_T.warnings + row.pop("errors", [])
        if t_C > 90.0:
            notes_T.append("the Plummer & Busenberg (1982) fits are measured to 90 °C; extrapolated")
        row = row_of(row)
        row["notes"] = list(dict.fromkeys(notes_T))
        rows.append(row)
    out["at_temperatures"] = rows
    if uncertainty:
        out["uncertainty"] = _uncertainty(rec, wm_b, sol_b, base, open_CO2_partial_pressure_atm)
    out["notes"] = notes
    return out
