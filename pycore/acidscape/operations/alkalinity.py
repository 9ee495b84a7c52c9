"""Alkalinity and acidity of a water, following Standard Methods 2320 B and the proton reference level.

Two definitions are computed and labelled, because labs and textbooks use both. Both are
evaluated with the one equilibrium model (:mod:`acidscape.science.model`), so ion pairs and
complexes (CaCO3°, CaHCO3+, MgOH+ ...) count exactly as their protons say.

*Fixed end point* (what a lab titration to a set pH reports, Standard Methods
2320 B [1]_): the strong acid, per litre of sample, that brings the water to
pH 4.5 (total alkalinity, "T") or pH 8.3 (phenolphthalein alkalinity, "P"),

.. math::

    A(\\mathrm{pH}_e) = T_H(\\mathrm{pH}_e) - T_H(\\mathrm{pH}), \\qquad
    T_H = \\sum_i a_{iH}\\, c_i,

where :math:`T_H` is the proton total the species hold (``a_iH`` the protons of species i
relative to the components: 1 for H+, -1 for OH-, 2 for H2CO3*, 1 for CaHCO3+, -1 for
CaOH+), both at the sample's other totals and ionic strength (dilution by the titrant
neglected): strong acid adds only protons and an inert anion. As the standard reports
it, P is zero when the sample's pH is already at or below 8.3, and T is zero at or
below pH 4.5 (the water then has mineral acidity).

*Equivalence point* (proton reference level, Stumm & Morgan [2]_ ch. 4, from
memory): alkalinity is the excess of proton acceptors over donors relative to a
reference species of each component,

.. math::

    \\mathrm{Alk} = \\sum_i c_i \\Big(\\sum_{j \\ne H} a_{ij}\\, r_j - a_{iH}\\Big),

where ``r_j`` is the number of protons the reference species of component j holds
(the component being the fully deprotonated base; metals and strong ions: 0). For total
alkalinity the reference is H2CO3* (r = 2) and, for every other system, the species that
predominates at the carbonate end point: it has released as many protons as there are
pKa values below 4.5 (H2PO4-, NH4+, B(OH)3, H4SiO4, SO4-2 ...). For phenolphthalein
(carbonate) alkalinity the reference is HCO3- and the pKa values below 8.3 count (HPO4-2
for phosphate). So CaCO3° counts 2 in the total alkalinity, CaHCO3+ 1 and CaOH+ 1, as a
titration with strong acid to the H2CO3* end point would find. Total alkalinity so
defined is conservative: it equals the net charge of the strong ions plus each system's
total times the charge of its reference species. The equivalence pH is where the same
expression vanishes at the sample's totals and ionic strength, the pH a titration reaches
when exactly that much acid has been added.

The hydroxide / carbonate / bicarbonate split is given twice: from P and T by
the relationship table of Standard Methods 2320 B [1]_ (from memory), and
from the speciation: [OH-] and hydroxo complexes, carbonate units held as CO3 (x 2) and
as HCO3 (x 1), free or paired with metals; the non-carbonate bases are listed beside it.
Acidity is reported as its negative counterparts: mineral acidity = -(total alkalinity)
and CO2 (phenolphthalein) acidity = -(phenolphthalein alkalinity), both on the
equivalence-point definition.

mg/L as CaCO3 = meq/L x 50.04 (half the molar mass of CaCO3 from IUPAC 2021
atomic weights, 100.087 g/mol; Standard Methods 2320 B uses 50 000 mg CaCO3
per equivalent with its rounded weights, from memory).

A water open to CO2 is taken as the sample in the bottle (closed at its carbonate
total); solids present are left out (a filtered sample).

Functions
---------
meq_to_mg_as_CaCO3(meq), mg_as_CaCO3_to_meq(mg)   the 50.04 conversion
reference_index(pKa, pH_ref)                       protons a system's reference species has released
reference_levels(wm, pH_ref)                       r_j of every component of a water
equivalence_alkalinity(sol, r)                     Alk above [eq/L] for a solved water
end_point_alkalinity(wm, sol, pH_e)                A(pH_e) above [eq/L] and the water at pH_e
equivalence_pH(wm, sol, pH_ref)                    pH where Alk of that reference level vanishes
sm2320_split(P, T)                                 hydroxide / carbonate / bicarbonate from P and T
speciation_split(wm, sol)                          the same split from the species [eq/L]
alkalinity_report(wm, sol)                         everything above for a solved water (JSON-ready)

References
----------
.. [1] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater, 23rd ed.,
   2017, Method 2320 B (Alkalinity, titration method) and 2310 B (Acidity) (from memory).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, New York, 1996, ch. 4.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from ..checks import number
from ..constants import LN10, M_CaCO3
from ..errors import ConvergenceError, InputError
from .probe import aqueous_totals, derivatives, held, resolve

#: mg of CaCO3 per meq: half the molar mass of CaCO3 (IUPAC 2021 weights) [mg/meq].
MG_CACO3_PER_MEQ = M_CaCO3 / 2.0
#: Nominal end point of total alkalinity, Standard Methods 2320 B (from memory) [-].
TOTAL_END_POINT_PH = 4.5
#: Phenolphthalein end point, Standard Methods 2320 B (from memory) [-].
PHENOLPHTHALEIN_END_POINT_PH = 8.3
#: Bracket of the equivalence-pH search [-] and its tolerance [-].
EQUIVALENCE_BRACKET = (-2.0, 18.0)
EQUIVALENCE_TOL = 1e-11


def meq_to_mg_as_CaCO3(meq_per_L: float) -> float:
    """Alkalinity in meq/L to mg/L as CaCO3.

    Parameters
    ----------
    meq_per_L : float
        Alkalinity [meq/L]

    Returns
    -------
    float
        Alkalinity [mg/L as CaCO3]

    Examples
    --------
    >>> round(meq_to_mg_as_CaCO3(1.0), 2)
    50.04
    """
    return meq_per_L * MG_CACO3_PER_MEQ


def mg_as_CaCO3_to_meq(mg_per_L: float) -> float:
    """Alkalinity in mg/L as CaCO3 to meq/L (inverse of :func:`meq_to_mg_as_CaCO3`).

    Examples
    --------
    >>> round(mg_as_CaCO3_to_meq(100.0), 4)
    1.9983
    """
    return mg_per_L / MG_CACO3_PER_MEQ


def reference_index(pKa: Sequence[float], pH_ref: float) -> int:
    """Protons released by a system's reference species: the number of pKa below ``pH_ref``.

    Parameters
    ----------
    pKa : sequence of float
        Thermodynamic pKa values, increasing [-]
    pH_ref : float
        Reference pH: 4.5 for total alkalinity, 8.3 for phenolphthalein alkalinity [-]

    Returns
    -------
    int
        r; the reference species is species number r (0 = most protonated) [-]

    Examples
    --------
    Phosphate (pKa 2.148, 7.198, 12.35): H2PO4- for total, HPO4-2 for phenolphthalein alkalinity.

    >>> reference_index([2.148, 7.198, 12.35], 4.5), reference_index([2.148, 7.198, 12.35], 8.3)
    (1, 2)
    """
    return sum(1 for v in pKa if v < pH_ref)


def sm2320_split(P: float, T: float) -> dict:
    """Hydroxide, carbonate and bicarbonate alkalinity from P and T (Standard Methods 2320 B table).

    ==================  =============  =============  ==============
    result of titration hydroxide      carbonate      bicarbonate
    ==================  =============  =============  ==============
    P = 0               0              0              T
    P < T/2             0              2P             T - 2P
    P = T/2             0              2P             0
    P > T/2             2P - T         2(T - P)       0
    P = T               T              0              0
    ==================  =============  =============  ==============

    Parameters
    ----------
    P : float
        Phenolphthalein alkalinity, >= 0 [mg/L as CaCO3] (or meq/L)
    T : float
        Total alkalinity, >= P [same unit as P]

    Returns
    -------
    dict
        ``{"hydroxide", "carbonate", "bicarbonate"}`` [same unit as P]; they sum to T

    Notes
    -----
    The table (Standard Methods 2320 B, from memory) assumes the only bases are OH-,
    CO3-2 and HCO3- and that OH- and HCO3- do not coexist; the speciation-based split
    is exact and is reported beside it.

    Examples
    --------
    >>> sm2320_split(30.0, 100.0)
    {'hydroxide': 0.0, 'carbonate': 60.0, 'bicarbonate': 40.0}
    >>> sm2320_split(80.0, 100.0)
    {'hydroxide': 60.0, 'carbonate': 40.0, 'bicarbonate': 0.0}
    """
    P = number(P, "P", lo=0.0)
    T = number(T, "T", lo=0.0)
    if P > T * (1 + 1e-12):
        raise InputError(f"The phenolphthalein alkalinity ({P:g}) cannot exceed the total alkalinity ({T:g}); "
                         "check both.", field="P")
    P = min(P, T)
    if 2.0 * P <= T:
        return {"hydroxide": 0.0, "carbonate": 2.0 * P, "bicarbonate": T - 2.0 * P}
    return {"hydroxide": 2.0 * P - T, "carbonate": 2.0 * (T - P), "bicarbonate": 0.0}


def reference_levels(wm, pH_ref: float) -> list[int]:
    """Protons ``r_j`` held by the reference species of each component of a water.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water (its systems' thermodynamic pKa at its temperature choose the references)
    pH_ref : float
        4.5 (total alkalinity) or 8.3 (phenolphthalein alkalinity) [-]

    Returns
    -------
    list of int
        Per component: n - reference_index(pKa, pH_ref) for a system with n pKa (its
        component is the fully deprotonated base), 0 for H+, metals and strong ions [-]
    """
    r = [0] * len(wm.tab.components)
    for s in wm.systems:
        r[wm.comp_index[s.key]] = len(s.pKa) - reference_index(s.pKa, pH_ref)
    return r


def _coefficients(tab, r) -> list[int]:
    """Per species: sum_j a_ij r_j - a_iH, its alkalinity per mole [eq/mol]."""
    return [sum(a * r[j] for j, a in sp.stoich if j) - dict(sp.stoich).get(0, 0) for sp in tab.species]


def equivalence_alkalinity(sol, r: Sequence[int]) -> float:
    """Equivalence-point alkalinity of a solved water relative to the reference levels ``r`` [eq/L].

    .. math::

        \\mathrm{Alk} = \\sum_i c_i \\Big(\\sum_{j \\ne H} a_{ij} r_j - a_{iH}\\Big)

    Examples
    --------
    1 mmol/L carbonate at pH = pKa1 = 6.352 (ideal) is half HCO3-: its total alkalinity is
    about 0.5 meq/L.

    >>> from acidscape.science.model import Species, Tableau, equilibrium
    >>> from acidscape.science.activity import gamma_function
    >>> tab = Tableau(("H+", "carbonate"), (1, -2), (9.0, 4.5), (
    ...     Species("H+", ((0, 1),), 0.0, 1, kind="water"), Species("OH-", ((0, -1),), -14.0, -1, kind="water"),
    ...     Species("H2CO3*", ((1, 1), (0, 2)), 16.681, 0), Species("HCO3-", ((1, 1), (0, 1)), 10.329, -1),
    ...     Species("CO3-2", ((1, 1),), 0.0, -2)))
    >>> sol = equilibrium(tab, [0.0, 1e-3], T=298.15, gamma_of=gamma_function(298.15, "ideal"), pH=6.352)
    >>> round(equivalence_alkalinity(sol, [0, 2]) * 1e3, 3)
    0.5
    """
    coef = _coefficients(sol.tableau, r)
    return math.fsum(k * c for k, c in zip(coef, sol.conc) if k and c)


def end_point_alkalinity(wm, sol, pH_e: float, guess: dict | None = None):
    """Strong acid per litre that takes the sample to ``pH_e`` (negative: base) [eq/L].

    A(pH_e) = T_H(pH_e) - T_H(sample): the proton total of the sample's dissolved totals at
    pH_e, at the sample's ionic strength, minus the sample's own.

    Returns
    -------
    tuple of (float, Solution)
        A [eq/L] and the water at pH_e
    """
    at = resolve(wm, pH=pH_e, totals=aqueous_totals(sol), I=sol.I, closed=True, guess=guess or sol.state)
    return held(at) - held(sol), at


def equivalence_pH(wm, sol, pH_ref: float, totals=None) -> float:
    """pH at which the equivalence-point alkalinity of the ``pH_ref`` reference level vanishes.

    At the sample's dissolved totals and ionic strength, Alk(pH) = sum_j r_j T_j - T_H(pH)
    rises with pH with slope ln10 S (the buffer intensity, :func:`acidscape.operations.probe.derivatives`);
    Newton steps on that slope, kept inside a shrinking bracket and replaced by bisection
    when a step leaves it, find its root.

    Parameters
    ----------
    wm : WaterModel
    sol : Solution
        The solved sample
    pH_ref : float
        4.5 or 8.3 [-]
    totals : list of float, optional
        Dissolved totals to use [mol/L] (default: the sample's)

    Returns
    -------
    float
        Equivalence pH [-]
    """
    T = aqueous_totals(sol) if totals is None else list(totals)
    r = reference_levels(wm, pH_ref)
    target = math.fsum(rj * t for j, (rj, t) in enumerate(zip(r, T)) if j and rj)
    lo, hi = EQUIVALENCE_BRACKET
    x = pH_ref
    state = sol.state
    for _ in range(200):
        at = resolve(wm, pH=x, totals=T, I=sol.I, closed=True, guess=state)
        state = at.state
        f = target - held(at)
        if f == 0.0:
            return x
        if f < 0.0:
            lo = x
        else:
            hi = x
        S, _ = derivatives(at)
        xn = x - f / (LN10 * S) if S > 0.0 else 0.5 * (lo + hi)
        if not lo < xn < hi:
            xn = 0.5 * (lo + hi)
        if abs(xn - x) < EQUIVALENCE_TOL or hi - lo < EQUIVALENCE_TOL:
            if min(xn - EQUIVALENCE_BRACKET[0], EQUIVALENCE_BRACKET[1] - xn) < 1e-6:
                break  # squeezed against an end: no root inside
            return xn
        x = xn
    raise ConvergenceError(f"no equivalence pH between {EQUIVALENCE_BRACKET[0]:g} and {EQUIVALENCE_BRACKET[1]:g} "
                           f"for reference pH {pH_ref:g}", field=None)


def _mg(eq_per_L: float) -> float:
    return eq_per_L * 1e3 * MG_CACO3_PER_MEQ


def speciation_split(wm, sol) -> tuple[float, float, float]:
    """Hydroxide, carbonate and bicarbonate alkalinity of a solved water, from its species.

    Hydroxide: [OH-] and the OH- of hydroxo complexes of metals; carbonate and bicarbonate:
    every carbonate unit held as CO3 (2 eq) or as HCO3 (1 eq), free or in an ion pair.
    Species holding another acid-base system (a non-carbonate base) are left out.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's model
    sol : acidscape.science.model.Solution
        Its solution

    Returns
    -------
    (float, float, float)
        Hydroxide, carbonate and bicarbonate alkalinity [eq/L]

    Examples
    --------
    2 mmol/L of sodium bicarbonate at 25 °C (Davies): nearly all bicarbonate, and the three
    parts add up to the water's alkalinity, its 2 meq/L of sodium ([H+] negligible):

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 2e-3)
    >>> wm = WaterModel([c], [IonInput("sodium", "Na+", 1, 2e-3)], T=298.15, pKw=13.995, model="davies")
    >>> OH, CO3, HCO3 = speciation_split(wm, wm.solve())
    >>> round(OH * 1e3, 3), round(CO3 * 1e3, 3), round(HCO3 * 1e3, 3), round((OH + CO3 + HCO3) * 1e3, 4)
    (0.002, 0.041, 1.957, 2.0)
    """
    tab = wm.tab
    jc = wm.comp_index.get("carbonate")
    r = reference_levels(wm, TOTAL_END_POINT_PH)
    OH = CO3 = HCO3 = 0.0
    for sp, c in zip(tab.species, sol.conc):
        if not c:
            continue
        st = dict(sp.stoich)
        aH = st.get(0, 0)
        others = [j for j in st if j not in (0, jc)]
        if any(r[j] for j in others):
            continue  # holds another acid-base system: a non-carbonate base
        ac = st.get(jc, 0) if jc is not None else 0
        if ac == 0:
            if aH < 0:
                OH += -aH * c
            continue
        if aH < 0:
            OH += -aH * c
            CO3 += 2 * ac * c
        elif aH <= ac:
            HCO3 += aH * c
            CO3 += 2 * (ac - aH) * c
        else:
            HCO3 += (2 * ac - aH) * c
    return OH, CO3, HCO3


def alkalinity_report(wm, sol, *, equivalence_pH_too: bool = True) -> dict:
    """Alkalinity and acidity of a solved water, both definitions, JSON-ready.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's tableau
    sol : acidscape.science.model.Solution
        Its solution (free pH or a given pH)
    equivalence_pH_too : bool
        False leaves ``total_equivalence_pH`` and ``phenolphthalein_equivalence_pH`` of the
        equivalence-point block None: two searches of the model that a quick first answer (the
        page's headline) can go without and fetch afterwards with :func:`equivalence_pH` [-]

    Returns
    -------
    dict
        Headline ``total_meq_per_L``, ``total_mg_per_L_as_CaCO3``,
        ``phenolphthalein_meq_per_L``, ``phenolphthalein_mg_per_L_as_CaCO3`` (fixed end points,
        as reported per Standard Methods 2320 B), and the blocks ``fixed_end_point``,
        ``equivalence_point``, ``split_from_P_and_T``, ``split_from_speciation``,
        ``contributions`` (water, each system, and the ion pairs and complexes together),
        ``acidity``, ``notes``

    Examples
    --------
    2 mmol/L NaHCO3-like water, ideal activities: total alkalinity 2 meq/L by stoichiometry.

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 2e-3)
    >>> wm = WaterModel([c], [IonInput("Na+", "Na+", 1, 2e-3)], T=298.15, pKw=13.995, model="ideal",
    ...                 complexes=False)
    >>> rep = alkalinity_report(wm, wm.solve())
    >>> round(rep["equivalence_point"]["total_meq_per_L"], 6)
    2.0
    >>> abs(rep["total_meq_per_L"] - 2.0) < 0.01   # fixed end point pH 4.5: close, not equal
    True
    """
    tab = wm.tab
    pH = sol.pH
    notes = []
    fixed = {}
    headline = {}
    state = sol.state
    for label, end in (("total", TOTAL_END_POINT_PH), ("phenolphthalein", PHENOLPHTHALEIN_END_POINT_PH)):
        a, at = end_point_alkalinity(wm, sol, end, guess=state)
        state = at.state
        fixed[f"{label}_end_point_pH"] = end
        fixed[f"{label}_meq_per_L"] = a * 1e3
        fixed[f"{label}_mg_per_L_as_CaCO3"] = _mg(a)
        if pH <= end:
            notes.append(f"the sample's pH {pH:.2f} is at or below the {label} end point pH {end:g}: "
                         f"{label} alkalinity is reported as 0 (Standard Methods 2320 B); the signed "
                         f"value is in fixed_end_point")
        headline[label] = a if pH > end else 0.0
    equiv = {"reference": "H2CO3* for total, HCO3- for phenolphthalein; other systems at the "
                          "species predominant at pH 4.5 / 8.3 (proton reference level); complexes "
                          "count the protons of their components' reference species"}
    levels = {}
    for label, ref in (("total", TOTAL_END_POINT_PH), ("phenolphthalein", PHENOLPHTHALEIN_END_POINT_PH)):
        r = reference_levels(wm, ref)
        levels[label] = r
        alk = equivalence_alkalinity(sol, r)
        equiv[f"{label}_meq_per_L"] = alk * 1e3
        equiv[f"{label}_mg_per_L_as_CaCO3"] = _mg(alk)
        equiv[f"{label}_equivalence_pH"] = equivalence_pH(wm, sol, ref) if equivalence_pH_too else None
    OH, CO3, HCO3 = speciation_split(wm, sol)
    split_exact = {
        "method": "speciation: [OH-] (and hydroxo complexes), 2 x carbonate and 1 x bicarbonate units, "
                  "free or in ion pairs",
        "hydroxide_meq_per_L": OH * 1e3, "hydroxide_mg_per_L_as_CaCO3": _mg(OH),
        "carbonate_meq_per_L": CO3 * 1e3, "carbonate_mg_per_L_as_CaCO3": _mg(CO3),
        "bicarbonate_meq_per_L": HCO3 * 1e3, "bicarbonate_mg_per_L_as_CaCO3": _mg(HCO3),
    }
    P_mg, T_mg = _mg(headline["phenolphthalein"]), _mg(headline["total"])
    if P_mg <= T_mg:
        table = sm2320_split(P_mg, T_mg)
        split_table = {"method": "Standard Methods 2320 B relationship table from P and T",
                       "hydroxide_mg_per_L_as_CaCO3": table["hydroxide"],
                       "carbonate_mg_per_L_as_CaCO3": table["carbonate"],
                       "bicarbonate_mg_per_L_as_CaCO3": table["bicarbonate"]}
    else:
        split_table = {"method": "Standard Methods 2320 B relationship table from P and T",
                       "hydroxide_mg_per_L_as_CaCO3": None, "carbonate_mg_per_L_as_CaCO3": None,
                       "bicarbonate_mg_per_L_as_CaCO3": None}
        notes.append("P exceeds T (strong non-carbonate bases): the P/T relationship table does not apply")
    coef = _coefficients(tab, levels["total"])
    water = math.fsum(k * c for k, c, sp in zip(coef, sol.conc, tab.species) if sp.kind == "water")
    contributions = [{"source": "water", "reference_species": "H2O", "meq_per_L": water * 1e3,
                      "mg_per_L_as_CaCO3": _mg(water), "note": "[OH-] - [H+]"}]
    for s in wm.systems:
        idx = wm.system_species[s.key]
        term = math.fsum(coef[i] * sol.conc[i] for i in idx)
        contributions.append({
            "source": s.key, "name": s.name,
            "reference_species": s.species[reference_index(s.pKa, TOTAL_END_POINT_PH)],
            "meq_per_L": term * 1e3, "mg_per_L_as_CaCO3": _mg(term),
        })
    cx = [(sp.name, coef[i] * sol.conc[i]) for i, sp in enumerate(tab.species)
          if sp.kind == "complex" and sol.conc[i] > 0.0 and coef[i]]
    if cx:
        term = math.fsum(v for _, v in cx)
        contributions.append({
            "source": "complexes", "name": "ion pairs and complexes", "reference_species": None,
            "meq_per_L": term * 1e3, "mg_per_L_as_CaCO3": _mg(term),
            "note": "each counts the protons its components' reference species hold beyond its own "
                    "(CaCO3° 2, CaHCO3+ 1, CaOH+ 1)",
            "species": [{"name": n, "meq_per_L": v * 1e3} for n, v in sorted(cx, key=lambda t: -abs(t[1]))],
        })
    if wm.fixed_species:
        notes.append("water open to CO2: alkalinity is that of the sample as taken (closed, at its "
                     "current carbonate total)")
    if sol.solids:
        notes.append("solids present are left out: alkalinity of the dissolved water (a filtered sample)")
    notes.append("fixed end points: acid per litre of sample at the sample's ionic strength, "
                 "dilution by the titrant neglected")
    return {
        "total_meq_per_L": headline["total"] * 1e3,
        "total_mg_per_L_as_CaCO3": _mg(headline["total"]),
        "phenolphthalein_meq_per_L": headline["phenolphthalein"] * 1e3,
        "phenolphthalein_mg_per_L_as_CaCO3": P_mg,
        "definition": "fixed end points pH 4.5 (total) and 8.3 (phenolphthalein), Standard Methods 2320 B",
        "mg_CaCO3_per_meq": MG_CACO3_PER_MEQ,
        "fixed_end_point": fixed,
        "equivalence_point": equiv,
        "split_from_P_and_T": split_table,
        "split_from_speciation": split_exact,
        "contributions": contributions,
        "acidity": {
            "mineral_meq_per_L": -equiv["total_meq_per_L"],
            "CO2_meq_per_L": -equiv["phenolphthalein_meq_per_L"],
            "mineral_mg_per_L_as_CaCO3": -equiv["total_mg_per_L_as_CaCO3"],
            "CO2_mg_per_L_as_CaCO3": -equiv["phenolphthalein_mg_per_L_as_CaCO3"],
            "definition": "negative of the equivalence-point alkalinities (Stumm & Morgan ch. 4); "
                          "a negative value means the water has alkalinity instead",
        },
        "notes": notes,
    }
