"""Alkalinity and acidity of a water, following Standard Methods 2320 B and the proton reference level.

Two definitions are computed and labelled, because labs and textbooks use both:

*Fixed end point* (what a lab titration to a set pH reports, Standard Methods
2320 B [1]_): the strong acid, per litre of sample, that brings the water to
pH 4.5 (total alkalinity, "T") or pH 8.3 (phenolphthalein alkalinity, "P").
It is computed exactly from the charge terms (see :mod:`acidscape.operations.buffer`),

.. math::

    A(\\mathrm{pH}_e) = P(\\mathrm{pH}) - P(\\mathrm{pH}_e), \\qquad
    P = [OH^-] - [H^+] + \\sum C_T \\bar{\\imath},

at the sample's ionic strength, dilution by the titrant neglected. As the
standard reports it, P is zero when the sample's pH is already at or below
8.3, and T is zero at or below pH 4.5 (the water then has mineral acidity).

*Equivalence point* (proton reference level, Stumm & Morgan [2]_ ch. 4, from
memory): alkalinity is the excess of proton acceptors over donors relative to a
reference species of each system,

.. math::

    \\mathrm{Alk} = [OH^-] - [H^+] + \\sum_{systems} C_T\\,(\\bar{\\imath} - r),

where ``r`` is the number of protons the reference species has released. For
total alkalinity the reference is H2CO3* and, for every other system, the
species that predominates at the carbonate end point: ``r`` counts the pKa
values below 4.5 (H2PO4-, NH4+, B(OH)3, H4SiO4, HSO4- -> SO4-2 ...). For
phenolphthalein (carbonate) alkalinity the reference is HCO3- and ``r`` counts
the pKa values below 8.3 (HPO4-2 for phosphate). Total alkalinity so defined
is conservative: it equals the net charge of the strong ions plus each
system's total times the charge of its reference species. The equivalence
pH is where the same expression vanishes, the pH a titration reaches when
exactly that much acid has been added.

The hydroxide / carbonate / bicarbonate split is given twice: from P and T by
the relationship table of Standard Methods 2320 B [1]_ (from memory), and
from the speciation ([OH-], 2[CO3-2], [HCO3-]) with the non-carbonate bases
listed beside it. Acidity is reported as its negative counterparts: mineral
acidity = -(total alkalinity) and CO2 (phenolphthalein) acidity =
-(phenolphthalein alkalinity), both on the equivalence-point definition.

mg/L as CaCO3 = meq/L x 50.04 (half the molar mass of CaCO3 from IUPAC 2021
atomic weights, 100.087 g/mol; Standard Methods 2320 B uses 50 000 mg CaCO3
per equivalent with its rounded weights, from memory).

Functions
---------
meq_to_mg_as_CaCO3(meq), mg_as_CaCO3_to_meq(mg)   the 50.04 conversion
reference_index(pKa, pH_ref)                       r of a system at a reference pH
proton_alkalinity(pH, systems, pH_ref, ...)        equivalence-point alkalinity [eq/L] and terms
sm2320_split(P, T)                                 hydroxide / carbonate / bicarbonate from P and T
alkalinity_report(eq)                              everything above for a solved water (JSON-ready)

References
----------
.. [1] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater, 23rd ed.,
   2017, Method 2320 B (Alkalinity, titration method) and 2310 B (Acidity) (from memory).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, New York, 1996, ch. 4.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

_LN10 = math.log(10.0)

from .buffer import _cum, _moments, proton_level
from ..constants import M_CaCO3
from ..errors import ConvergenceError, InputError

#: mg of CaCO3 per meq: half the molar mass of CaCO3 (IUPAC 2021 weights) [mg/meq].
MG_CACO3_PER_MEQ = M_CaCO3 / 2.0
#: Nominal end point of total alkalinity, Standard Methods 2320 B (from memory) [-].
TOTAL_END_POINT_PH = 4.5
#: Phenolphthalein end point, Standard Methods 2320 B (from memory) [-].
PHENOLPHTHALEIN_END_POINT_PH = 8.3


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


def proton_alkalinity(pH: float, systems: Sequence, pH_ref: float, pKw: float = 14.0,
                      log10_gamma_H: float = 0.0, log10_gamma_OH: float = 0.0) -> tuple[float, list[float]]:
    """Equivalence-point alkalinity relative to the reference level of ``pH_ref``.

    .. math::

        \\mathrm{Alk} = [OH^-] - [H^+] + \\sum C_T (\\bar{\\imath} - r)

    Parameters
    ----------
    pH : float
        Meter pH of the water [-]
    systems : sequence of (sequence of float, sequence of float, float)
        Per system: thermodynamic pKa (to choose the reference) [-], pKa on the meter-pH
        scale at the water's ionic strength [-], total [mol/L]
    pH_ref : float
        4.5 (total alkalinity) or 8.3 (phenolphthalein alkalinity) [-]
    pKw : float
        Ion product of water [-]
    log10_gamma_H, log10_gamma_OH : float
        log10 activity coefficients of H+ and OH- [-]

    Returns
    -------
    tuple of (float, list of float)
        Alkalinity [eq/L] and each system's contribution C_T (mean(i) - r) [eq/L]

    Examples
    --------
    1 mmol/L carbonate at pH = pKa1 = 6.352 is half HCO3-: its total alkalinity is
    about 0.5 meq/L:

    >>> alk, _ = proton_alkalinity(6.352, [([6.352, 10.329], [6.352, 10.329], 1e-3)], 4.5)
    >>> round(alk * 1e3, 3)
    0.5
    """
    H = 10.0 ** (-pH - log10_gamma_H)
    OH = 10.0 ** (pH - pKw - log10_gamma_OH)
    terms = []
    for pKa_ref, pKa_m, total in systems:
        mean, _ = _moments(pH, _cum(pKa_m))
        terms.append(total * (mean - reference_index(pKa_ref, pH_ref)))
    return OH - H + sum(terms), terms


def _alk_and_slope(pH, prep, pKw, lgH, lgOH):
    """Equivalence-point alkalinity [eq/L] and its pH derivative (the buffer intensity)."""
    H = 10.0 ** (-pH - lgH)
    OH = 10.0 ** (pH - pKw - lgOH)
    alk = OH - H
    slope = OH + H
    for cum, total, r in prep:
        mean, var = _moments(pH, cum)
        alk += total * (mean - r)
        slope += total * var
    return alk, _LN10 * slope


def _equivalence_pH(systems, pH_ref, pKw, lgH, lgOH) -> float:
    """pH at which the equivalence-point alkalinity of the reference level vanishes.

    Newton steps on the analytic slope (the buffer intensity), kept inside a shrinking
    bracket and replaced by bisection when a step leaves it (alkalinity rises with pH).
    """
    prep = [(_cum(pKa_m), total, reference_index(pKa_ref, pH_ref)) for pKa_ref, pKa_m, total in systems]
    lo, hi = -2.0, 18.0
    if not (_alk_and_slope(lo, prep, pKw, lgH, lgOH)[0] < 0.0 < _alk_and_slope(hi, prep, pKw, lgH, lgOH)[0]):
        raise ConvergenceError(f"no equivalence pH between {lo:g} and {hi:g} for reference pH {pH_ref:g}")
    x = pH_ref
    for _ in range(200):
        f, df = _alk_and_slope(x, prep, pKw, lgH, lgOH)
        if f == 0.0:
            return x
        if f < 0.0:
            lo = x
        else:
            hi = x
        xn = x - f / df if df > 0.0 else 0.5 * (lo + hi)
        if not lo < xn < hi:
            xn = 0.5 * (lo + hi)
        if abs(xn - x) < 1e-11 or hi - lo < 1e-11:
            return xn
        x = xn
    raise ConvergenceError(f"the equivalence pH for reference pH {pH_ref:g} did not converge", field=None)


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
    for name, v in (("P", P), ("T", T)):
        if not math.isfinite(v) or v < 0:
            raise InputError(f"{name} = {v!r} must be a finite alkalinity >= 0", field=name)
    if P > T * (1 + 1e-12):
        raise InputError(f"P = {P:g} exceeds T = {T:g}; phenolphthalein alkalinity cannot exceed total",
                         field="P")
    P = min(P, T)
    if 2.0 * P <= T:
        return {"hydroxide": 0.0, "carbonate": 2.0 * P, "bicarbonate": T - 2.0 * P}
    return {"hydroxide": 2.0 * P - T, "carbonate": 2.0 * (T - P), "bicarbonate": 0.0}


def _mg(eq_per_L: float) -> float:
    return eq_per_L * 1e3 * MG_CACO3_PER_MEQ


def alkalinity_report(eq) -> dict:
    """Alkalinity and acidity of a solved water, both definitions, JSON-ready.

    Parameters
    ----------
    eq : acidscape.science.solver.Equilibrium
        A solved (or fixed-pH) water; its totals, mixed constants and ionic strength are used

    Returns
    -------
    dict
        Headline ``total_meq_per_L``, ``total_mg_per_L_as_CaCO3``,
        ``phenolphthalein_meq_per_L``, ``phenolphthalein_mg_per_L_as_CaCO3`` (fixed end points,
        as reported per Standard Methods 2320 B), and the blocks ``fixed_end_point``,
        ``equivalence_point``, ``split_from_P_and_T``, ``split_from_speciation``,
        ``contributions``, ``acidity``, ``notes``

    Examples
    --------
    >>> from acidscape.science.solver import Component, Ion, equilibrate
    >>> c = Component("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 2e-3)
    >>> eq = equilibrate([c], [Ion("Na+", "Na+", 1, 2e-3)], T=298.15, pKw=13.995, model="ideal")
    >>> rep = alkalinity_report(eq)
    >>> round(rep["equivalence_point"]["total_meq_per_L"], 6)
    2.0
    >>> abs(rep["total_meq_per_L"] - 2.0) < 0.01   # fixed end point pH 4.5: close, not equal
    True
    """
    pH = eq.pH
    pKw, lgH, lgOH = eq.pKw, eq.log10_gamma_H, eq.log10_gamma_OH
    mixed = [(st.pKa_mixed, st.total_M) for st in eq.systems]
    full = [(st.component.pKa, st.pKa_mixed, st.total_M) for st in eq.systems]
    notes = []
    P_here = proton_level(pH, mixed, pKw, lgH, lgOH)
    fixed = {}
    headline = {}
    for label, end in (("total", TOTAL_END_POINT_PH), ("phenolphthalein", PHENOLPHTHALEIN_END_POINT_PH)):
        a = P_here - proton_level(end, mixed, pKw, lgH, lgOH)
        fixed[f"{label}_end_point_pH"] = end
        fixed[f"{label}_meq_per_L"] = a * 1e3
        fixed[f"{label}_mg_per_L_as_CaCO3"] = _mg(a)
        reported = a if pH > end else 0.0
        if pH <= end:
            notes.append(f"the sample's pH {pH:.2f} is at or below the {label} end point pH {end:g}: "
                         f"{label} alkalinity is reported as 0 (Standard Methods 2320 B); the signed "
                         f"value is in fixed_end_point")
        headline[label] = reported
    equiv = {"reference": "H2CO3* for total, HCO3- for phenolphthalein; other systems at the "
                          "species predominant at pH 4.5 / 8.3 (proton reference level)"}
    eq_terms = {}
    for label, ref in (("total", TOTAL_END_POINT_PH), ("phenolphthalein", PHENOLPHTHALEIN_END_POINT_PH)):
        alk, terms = proton_alkalinity(pH, full, ref, pKw, lgH, lgOH)
        eq_terms[label] = terms
        equiv[f"{label}_meq_per_L"] = alk * 1e3
        equiv[f"{label}_mg_per_L_as_CaCO3"] = _mg(alk)
        equiv[f"{label}_equivalence_pH"] = _equivalence_pH(full, ref, pKw, lgH, lgOH)
    H = 10.0 ** (-pH - lgH)
    OH = 10.0 ** (pH - pKw - lgOH)
    carb = next((st for st in eq.systems if st.component.key == "carbonate"), None)
    HCO3 = carb.total_M * carb.fractions[1] if carb else 0.0
    CO3 = carb.total_M * carb.fractions[2] if carb and len(carb.fractions) > 2 else 0.0
    split_exact = {
        "method": "speciation: [OH-], 2[CO3-2], [HCO3-]",
        "hydroxide_meq_per_L": OH * 1e3, "hydroxide_mg_per_L_as_CaCO3": _mg(OH),
        "carbonate_meq_per_L": 2 * CO3 * 1e3, "carbonate_mg_per_L_as_CaCO3": _mg(2 * CO3),
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
    contributions = [{"source": "water", "reference_species": "H2O", "meq_per_L": (OH - H) * 1e3,
                      "mg_per_L_as_CaCO3": _mg(OH - H), "note": "[OH-] - [H+]"}]
    for st, term in zip(eq.systems, eq_terms["total"]):
        r = reference_index(st.component.pKa, TOTAL_END_POINT_PH)
        contributions.append({
            "source": st.component.key, "name": st.component.name,
            "reference_species": st.component.species[r],
            "meq_per_L": term * 1e3, "mg_per_L_as_CaCO3": _mg(term),
        })
    if any(getattr(st.component, "fixed_first_M", None) is not None for st in eq.systems):
        notes.append("water open to CO2: alkalinity is that of the sample as taken (closed, at its "
                     "current carbonate total)")
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
