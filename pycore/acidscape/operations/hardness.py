"""Hardness by EDTA titration at a buffered pH: the curve, its end points and the conditional constants.

A sample of volume V_s holding calcium and magnesium (and any other metal the database lets
EDTA bind) is titrated with V_t of EDTA at C_t mol/L while a buffer holds the pH. Every point
of the curve is the water at that pH with every total diluted into V_s + V_t and the EDTA
total C_t V_t / (V_s + V_t), solved with the database's constants: the EDTA acid constants
(systems.csv), the metal-EDTA complexes CaEDTA-2, MgEDTA-2 ... and every side reaction the
database holds (hydroxo complexes, carbonate, sulfate and other ion pairs of the metals;
sodium-EDTA; ammonia only through the pH, since the database holds no calcium or magnesium
ammine complex). The result gives pM = -log10 [M+2] (free aquo ion, mol/L) of calcium and
magnesium against titrant volume.

Conditional constants
---------------------
The textbook treatment of an EDTA titration (Harris [1]_, EDTA chapter; Schwarzenbach &
Flaschka [2]_) folds the side reactions into one conditional formation constant at the
buffer's pH,

.. math::

    K'_{MY} = \\frac{[MY]}{[M'][Y']} = K_{MY}\\,\\alpha_{Y^{4-}}\\,\\alpha_M, \\qquad
    \\alpha_{Y^{4-}} = \\frac{[Y^{4-}]}{\\sum_p [H_pY]}, \\qquad
    \\alpha_M = \\frac{[M]}{[M] + \\sum_k [ML_k]},

with K_MY the concentration constant at the water's ionic strength (the thermodynamic value
of the database with the water's activity coefficients), [Y'] the EDTA not bound to a metal,
[M'] the metal not bound to EDTA, the ligands L_k at their free concentrations in the water
at that pH. :func:`conditional_constants` gives log K' against pH for each metal: it is
small at low pH (EDTA protonated), largest near pH 10-12 and falls again where hydroxo
complexes take the metal; for magnesium it reaches about 10^8 only near pH 10, which is why
the standard hardness method buffers at pH 10.0 +- 0.1 (common practice; Standard Methods
2340 C [3]_, from memory): calcium and magnesium are then both titrated sharply, and most
waters are still below the pH where magnesium hydroxide precipitates (calcium carbonate
can form, which is why the method completes the titration within minutes of adding the
buffer). The result warns when calcite, brucite, portlandite or gypsum is oversaturated at
the titration pH; no solid is allowed to form in the calculation.

End points
----------
The metals are titrated in order of decreasing conditional constant; metal k is complete at
the stoichiometric volume V_k = (moles of metals titrated up to and including k) / C_t.
The end point of metal k is the steepest rise of its pM curve (the maximum of dpM/dV) between
the midpoints to the neighbouring stoichiometric volumes, located on the curve and refined
on successively finer local grids (each a fifth of the last) and a parabola through the
slope. The total hardness is that of the
last calcium or magnesium end point, C_t V_end / V_s, as mg/L CaCO3 (100.09 g/mol,
:data:`acidscape.constants.M_CaCO3`; common practice). Metals other than calcium and
magnesium that EDTA binds are titrated too, and counted; the standard method masks them.

The titrant's counter-ions (sodium of Na2H2Y) and the buffer's ions are not added to the
water: at a fixed pH they matter through the ionic strength only, which the scenario can fix
(``ionic_strength_M``; the printed EDTA constants refer to I = 0.1 mol/L). pH is the meter pH,
-log10 a(H+). Every point is solved at the fixed pH by
:class:`acidscape.operations.solubility.FixedPHSolver` (the tableau of
:class:`acidscape.science.tableau.WaterModel`, Newton's method); the end point is checked
against :func:`acidscape.science.model.equilibrium`.

Functions
---------
edta_titration(parsed, ...)         curve, end points, total hardness (dict)
conditional_constants(parsed, ...)  log K' of each metal-EDTA complex against pH (dict)

References
----------
.. [1] D. C. Harris, Quantitative Chemical Analysis, W. H. Freeman (7th ed. 2007 and later),
   chapter "EDTA titrations": alpha_Y4-, conditional formation constant, the titration curve
   of Ca2+ with EDTA at pH 10 (from memory).
.. [2] G. Schwarzenbach, H. Flaschka, Complexometric Titrations, 2nd English ed., Methuen,
   1969 (conditional constants; from memory).
.. [3] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater,
   method 2340 C, EDTA titrimetric method (hardness; buffer pH 10.0 +- 0.1; titration
   completed within 5 min of adding the buffer; from memory).
"""

from __future__ import annotations

import dataclasses
import math

from ..checks import MAX_SAMPLE_ML, MAX_TOTAL_M, PH_RANGE, number
from ..constants import LN10, M_CaCO3
from ..data import library
from ..errors import InputError, UnknownIdError
from ..science.model import equilibrium
from ..science.tableau import IonInput, WaterModel
from .solubility import FixedPHSolver, _system_input, temperature_notes

#: The hardness metals reported in every point's pM.
HARDNESS_METALS = ("calcium", "magnesium")
#: Acid-base system id of EDTA.
EDTA = "edta"
#: The standard method's buffer pH (common practice; Standard Methods 2340 C, from memory).
STANDARD_PH = 10.0
#: Solids whose oversaturation at the titration pH is named in a warning (they form within the
#: time of a titration: common practice).
PRECIPITATES = ("calcite", "brucite", "portlandite", "gypsum")
#: Default and largest number of curve points.
DEFAULT_POINTS = 401
MAX_POINTS = 5001
#: Points of each finer local grid around an end point, at most this many grids, and the
#: relative width [-] of the bracket where the zoom stops.
REFINE_POINTS = 11
ZOOM_LEVELS = 12
ZOOM_RTOL = 1e-9
#: The curve runs to this multiple of the last stoichiometric volume unless told otherwise.
OVERSHOOT = 1.5

BASIS = (
    "EDTA titration at a fixed (buffered) pH, every point solved with the database constants: EDTA acid "
    "constants, metal-EDTA complexes and the metals' side reactions (hydroxo and ion-pair complexes; the "
    "database holds no calcium or magnesium ammine complex, so an ammonia buffer acts through the pH only). "
    "The titrant's sodium and the buffer's ions are not added (give ionic_strength_M to fix the ionic "
    "strength; the printed EDTA constants refer to 0.1 mol/L). pM = -log10 of the free metal ion "
    "concentration [mol/L]. End points: steepest rise of each metal's pM near its stoichiometric volume."
)


def _edta_water(parsed, metals) -> tuple[WaterModel, list[str]]:
    """The water with EDTA (total as given, or 0) and each of ``metals`` as components."""
    systems = list(parsed.components)
    notes: list[str] = []
    if any(s.fixed_first_M is not None for s in systems):
        wm0 = WaterModel(systems, list(parsed.ions), T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                         complexes=getattr(parsed, "complexes", True), I_fixed=parsed.I_fixed)
        sol0 = wm0.solve(pH=parsed.pH)
        systems = [dataclasses.replace(s, total_M=sol0.totals[wm0.comp_index[s.key]], fixed_first_M=None)
                   if s.fixed_first_M is not None else s for s in systems]
        notes.append("water open to CO2: titrated as a closed sample at its equilibrium carbonate total")
    if not any(s.key == EDTA for s in systems):
        systems.append(_system_input(EDTA, 0.0, parsed.T, notes))
    ions = list(parsed.ions)
    have = {i.key for i in ions}
    for mid in metals:
        if mid not in have:
            ion = library.get_ion(mid)
            ions.append(IonInput(key=ion.id, name=ion.formula, charge=ion.charge, conc_M=0.0,
                                 ion_size_A=ion.ion_size_A))
    if not getattr(parsed, "complexes", True):
        raise InputError("An EDTA titration needs the metal-EDTA complexes: switch ion pairs and complexes on.",
                         field="complexes")
    wm = WaterModel(systems, ions, T=parsed.T, pKw=parsed.pKw, model=parsed.model, complexes=True,
                    I_fixed=parsed.I_fixed)
    # temperature notes of the metal-EDTA complexes (the constants the titration turns on)
    notes.extend(temperature_notes(wm, [i for i in (_edta_complex(wm, m) for m in metals) if i is not None]))
    return wm, notes


def _edta_complex(wm: WaterModel, metal: str) -> int | None:
    """Tableau index of the 1:1 metal-EDTA complex (M + Y -> MY), or None."""
    jM, jY = wm.comp_index[metal], wm.comp_index[EDTA]
    for i, sp in enumerate(wm.tab.species):
        if dict(sp.stoich) == {jM: 1, jY: 1}:
            return i
    return None


def _metal_ids(wm: WaterModel, requested) -> list[str]:
    out = []
    for mid in requested:
        ion = library.get_ion(mid)
        if ion.id not in wm.comp_index:
            raise UnknownIdError(f"{mid} is not in this water; choose metals the water holds.", field="metals")
        out.append(ion.id)
    return out


def _conditional(wm: WaterModel, st, metal: str) -> dict:
    """log10 of K_MY (concentration, at the state's I), alpha_Y4-, alpha_M and K' at a solved state."""
    tab = wm.tab
    g = wm.gamma_of
    I = st.I
    jM, jY = wm.comp_index[metal], wm.comp_index[EDTA]
    lgc = [g(tab.charges[j], tab.ion_sizes[j], I) for j in range(len(tab.components))]
    x = st.x
    # EDTA protonation: [H_pY]/[Y] = K'_p [H+]^p (mixed through the gammas of the tableau)
    terms = []
    for i in wm.system_species[EDTA]:
        sp = tab.species[i]
        p = dict(sp.stoich).get(0, 0)
        lnK = LN10 * (sp.log10_K + sum(a * lgc[j] for j, a in sp.stoich) - g(sp.charge, sp.ion_size_A, I))
        terms.append(lnK + p * x[0])
    top = max(terms)
    ln_sum = top + math.log(sum(math.exp(t - top) for t in terms))
    log_aY = -ln_sum / LN10
    # metal side reactions: complexes holding the metal once and no EDTA
    side = [0.0]
    for i, sp in enumerate(tab.species):
        st_i = dict(sp.stoich)
        if st_i.get(jM, 0) != 1 or st_i.get(jY, 0) or len(st_i) == 1:
            continue
        if any(x[j] == -math.inf for j in st_i if j != jM):
            continue
        lnK = LN10 * (sp.log10_K + sum(a * lgc[j] for j, a in sp.stoich) - g(sp.charge, sp.ion_size_A, I))
        side.append(lnK + sum(a * x[j] for j, a in sp.stoich if j != jM))
    top = max(side)
    ln_side = top + math.log(sum(math.exp(t - top) for t in side))
    log_aM = -ln_side / LN10
    iMY = _edta_complex(wm, metal)
    sp = tab.species[iMY]
    log_Kc = sp.log10_K + lgc[jM] + lgc[jY] - g(sp.charge, sp.ion_size_A, I)
    return {"log10_Kf": log_Kc, "log10_alpha_Y4": log_aY, "log10_alpha_M": log_aM,
            "log10_K_conditional": log_Kc + log_aY + log_aM, "ionic_strength_M": I}


def conditional_constants(parsed, metals=HARDNESS_METALS, pH_from: float = 6.0, pH_to: float = 13.0,
                          points: int = 71) -> dict:
    """log10 of the conditional formation constant K'_MY = K_MY alpha_Y4- alpha_M against pH.

    Parameters
    ----------
    parsed : object
        The water (the boundary's parsed scenario; read by attribute). Its ions and systems set
        the metals' side reactions and the ionic strength (unless it is given)
    metals : sequence of str
        Ion ids of metals with an EDTA complex in the database [-]
    pH_from, pH_to : float
        pH range [-]
    points : int
        Number of pH values [-]

    Returns
    -------
    dict
        ``pH`` (list), ``metals`` (per metal ``id``, ``complex``, ``log10_Kf_printed``,
        ``log10_Kf_printed_I_M``, ``source``, and lists ``log10_Kf`` (concentration constant at
        each point's ionic strength), ``log10_alpha_Y4``, ``log10_alpha_M``,
        ``log10_K_conditional``), ``ionic_strength_M`` (list), ``basis``

    Examples
    --------
    Calcium at pH 10 and I = 0.1 mol/L (Davies): log K' is log Kf + log alpha_Y4- + log alpha_Ca.

    >>> from types import SimpleNamespace as NS
    >>> water = NS(components=[], ions=[], T=298.15, pKw=13.995, model="davies", I_fixed=0.1,
    ...            complexes=True, pH=None, CO2_partial_pressure_atm=None)
    >>> c = conditional_constants(water, ["calcium"], 10.0, 10.0, 1)["metals"][0]
    >>> round(c["log10_Kf"][0], 2), round(c["log10_alpha_Y4"][0], 2), round(c["log10_K_conditional"][0], 2)
    (10.65, -0.6, 10.05)
    """
    if not 1 <= points <= MAX_POINTS:
        raise InputError(f"The number of points must be from 1 to {MAX_POINTS} (you entered {points}).",
                         field="points")
    for v, f in ((pH_from, "pH_from"), (pH_to, "pH_to")):
        number(v, f, lo=PH_RANGE[0], hi=PH_RANGE[1])
    ids = [library.get_ion(m).id for m in metals]
    wm, notes = _edta_water(parsed, ids)
    ids = _metal_ids(wm, ids)
    rows = []
    for mid in ids:
        i = _edta_complex(wm, mid)
        if i is None:
            raise InputError(f"The library holds no EDTA complex of {mid}; choose another metal.", field="metals")
        cx = wm.complex_info[i]
        src = library.sources().get(cx.K_source)
        rows.append({"id": mid, "complex": cx.formula, "log10_Kf_printed": cx.log10_K_printed,
                     "log10_Kf_printed_I_M": cx.log10_K_I_M, "source": src.text if src else None,
                     "provenance": cx.provenance, "log10_Kf": [], "log10_alpha_Y4": [], "log10_alpha_M": [],
                     "log10_K_conditional": []})
    solver = FixedPHSolver(wm)
    totals = list(wm.totals)
    totals[wm.comp_index[EDTA]] = 0.0
    grid = [pH_from + (pH_to - pH_from) * k / (points - 1) for k in range(points)] if points > 1 else [pH_from]
    I_list = []
    past: list = []
    for pH in grid:
        st = solver.solve(pH, totals, start=past[0] if past else None, before=tuple(past[1:3]))
        past = [st] + past[:2]
        I_list.append(st.I)
        for row in rows:
            c = _conditional(wm, st, row["id"])
            for key in ("log10_Kf", "log10_alpha_Y4", "log10_alpha_M", "log10_K_conditional"):
                row[key].append(c[key])
    return {
        "pH": grid, "metals": rows, "ionic_strength_M": I_list, "temperature_C": parsed.T - 273.15,
        "activity": parsed.model,
        "basis": ("K' = K_MY alpha_Y4- alpha_M: K_MY the concentration constant at the water's ionic strength, "
                  "alpha_Y4- from the EDTA acid constants, alpha_M from the metal's complexes with the water's "
                  "own ligands at that pH (EDTA excluded); pH is the meter pH"),
        "warnings": list(getattr(parsed, "warnings", []) or []) + notes,
    }


def _slope(V, y):
    """Central-difference slope dy/dV on a grid (one-sided at the ends)."""
    n = len(V)
    out = [0.0] * n
    for k in range(n):
        a, b = max(k - 1, 0), min(k + 1, n - 1)
        out[k] = (y[b] - y[a]) / (V[b] - V[a]) if V[b] > V[a] else 0.0
    return out


def _vertex(V, s, k) -> float:
    """Abscissa of the parabola's vertex through (V, s) at k-1, k, k+1 (V[k] if degenerate)."""
    if k <= 0 or k >= len(V) - 1:
        return V[k]
    x0, x1, x2 = V[k - 1], V[k], V[k + 1]
    y0, y1, y2 = s[k - 1], s[k], s[k + 1]
    den = (x0 - x1) * (x0 - x2) * (x1 - x2)
    A = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / den
    B = (x2 * x2 * (y0 - y1) + x1 * x1 * (y2 - y0) + x0 * x0 * (y1 - y2)) / den
    if A >= 0:
        return x1
    v = -B / (2 * A)
    return min(max(v, x0), x2)


def edta_titration(parsed, titrant_M: float, sample_mL: float, fixed_pH: float = STANDARD_PH,
                   points: int = DEFAULT_POINTS, to_mL: float | None = None) -> dict:
    """Titration of a water's calcium and magnesium with EDTA at a fixed pH.

    Parameters
    ----------
    parsed : object
        The sample (the boundary's parsed scenario; read by attribute)
    titrant_M : float
        EDTA concentration of the titrant [mol/L]
    sample_mL : float
        Sample volume [mL]
    fixed_pH : float
        pH held by the buffer [-] (default 10, the standard method's)
    points : int
        Number of curve points [-]
    to_mL : float, optional
        Last titrant volume [mL] (default 1.5 times the last stoichiometric volume)

    Returns
    -------
    dict
        ``points`` (each ``titrant_mL``, ``pH``, ``pM`` {calcium, magnesium} (None for an
        absent metal), ``ionic_strength_M``), ``end_points`` (each ``metal``, ``titrant_mL``,
        ``stoichiometric_mL``, ``pM``, ``sharp``), ``total_hardness_mg_per_L_as_CaCO3`` (from the
        last calcium or magnesium end point), ``hardness_from_composition_mg_per_L_as_CaCO3``,
        ``conditional_constants`` (at the fixed pH, per metal), ``model_check``, ``basis``,
        ``warnings``

    Examples
    --------
    40 mg/L calcium (1 mmol/L; 100.09 mg/L as CaCO3), 50 mL titrated with 0.01 M EDTA at pH 10:
    the end point is at 5.00 mL.

    >>> from types import SimpleNamespace as NS
    >>> from acidscape.science.tableau import IonInput
    >>> water = NS(components=[], ions=[IonInput("calcium", "Ca+2", 2, 1e-3, 6.0)], T=298.15,
    ...            pKw=13.995, model="davies", I_fixed=0.1, complexes=True, pH=None, CO2_partial_pressure_atm=None)
    >>> out = edta_titration(water, 0.01, 50.0, 10.0, points=201)
    >>> round(out["end_points"][0]["titrant_mL"], 3), round(out["total_hardness_mg_per_L_as_CaCO3"], 2)
    (5.0, 100.09)
    """
    number(titrant_M, "titrant_M", above=0.0, hi=MAX_TOTAL_M)
    number(sample_mL, "sample_mL", above=0.0, hi=MAX_SAMPLE_ML)
    number(fixed_pH, "fixed_pH", lo=PH_RANGE[0], hi=PH_RANGE[1])
    if not 3 <= points <= MAX_POINTS:
        raise InputError(f"The number of points must be from 3 to {MAX_POINTS} (you entered {points}).",
                         field="points")
    wm, notes = _edta_water(parsed, HARDNESS_METALS)
    warnings = list(getattr(parsed, "warnings", []) or []) + notes
    if getattr(parsed, "precipitate", ()):
        warnings.append("solids named in precipitate are not allowed to form during the titration")
    tab = wm.tab
    jY = wm.comp_index[EDTA]
    base_totals = list(wm.totals)
    # metals EDTA binds, present in the sample
    binders = []
    for key, j in wm.comp_index.items():
        if key in wm.ion_species and base_totals[j] > 0 and _edta_complex(wm, key) is not None:
            binders.append(key)
    hard = [m for m in HARDNESS_METALS if base_totals[wm.comp_index[m]] > 0]
    if not hard:
        raise InputError("The sample holds neither calcium nor magnesium: there is no hardness to titrate. Add "
                         "them to the water.", field="scenario")
    solver = FixedPHSolver(wm)
    # conditional constants at the fixed pH set the order of titration
    st0 = solver.solve(fixed_pH, base_totals)
    for sid in PRECIPITATES:
        s = wm.solid_index.get(sid)
        stoich = tab.solids[s].stoich if s is not None else ()
        if stoich and all(st0.x[j] > -math.inf for j, _ in stoich):
            si = sum(b * (st0.x[j] / LN10 + st0.lgc[j]) for j, b in stoich) - tab.solids[s].log10_Ksp
            if si > 0.3:
                warnings.append(f"at pH {fixed_pH:g} the sample is oversaturated with {wm.solid_info[s].name} "
                                f"(saturation index {si:+.2f}): it may precipitate during the titration (not "
                                "modelled; the standard method completes the titration within minutes of adding "
                                "the buffer to limit this)")
    cond = {m: _conditional(wm, st0, m) for m in binders}
    order = sorted(binders, key=lambda m: -cond[m]["log10_K_conditional"])
    Vs = sample_mL
    n_mol = {m: base_totals[wm.comp_index[m]] * Vs * 1e-3 for m in binders}
    n_Y0 = base_totals[jY] * Vs * 1e-3  # EDTA already in the sample
    stoich = {}
    acc = -n_Y0
    for m in order:
        acc += n_mol[m]
        stoich[m] = acc / titrant_M * 1e3  # mL
    V_last = max(stoich.values())
    if to_mL is None:
        to_mL = OVERSHOOT * V_last if V_last > 0 else 1.0
    number(to_mL, "to_mL", above=0.0, hi=MAX_SAMPLE_ML)
    others = [m for m in binders if m not in HARDNESS_METALS]
    if others:
        warnings.append("EDTA also binds " + ", ".join(others) + " in this sample: titrated and counted as "
                        "hardness here (the standard method masks such metals)")
    if n_Y0 > 0:
        warnings.append("the sample already holds EDTA: it is counted against the metals")

    def state_at(V, start=None, before=()):
        f = Vs / (Vs + V)
        tot = [t * f for t in base_totals]
        tot[jY] = (base_totals[jY] * Vs + titrant_M * V) / (Vs + V)
        return solver.solve(fixed_pH, tot, start=start, before=before), tot

    def pM(st, m):
        j = wm.comp_index[m]
        return -st.x[j] / LN10 if st.x[j] > -math.inf else None

    V = [to_mL * k / (points - 1) for k in range(points)]
    states = []
    past: list = []
    for v in V:
        st, _ = state_at(v, past[0] if past else None, tuple(past[1:3]))
        past = [st] + past[:2]
        states.append(st)
    out_points = [{"titrant_mL": v, "pH": st.pH,
                   "pM": {m: (pM(st, m) if m in hard else None) for m in HARDNESS_METALS},
                   "ionic_strength_M": st.I} for v, st in zip(V, states)]
    # end points: steepest rise of each metal's pM between the midpoints to its neighbours
    seq = [(stoich[m], m) for m in order]
    end_points = []
    for idx, (Vk, m) in enumerate(seq):
        lo = 0.0 if idx == 0 else 0.5 * (seq[idx - 1][0] + Vk)
        hi = to_mL if idx == len(seq) - 1 else 0.5 * (Vk + seq[idx + 1][0])
        ys = [pM(st, m) for st in states]
        sl = _slope(V, ys)
        window = [k for k in range(1, len(V) - 1) if lo <= V[k] <= hi]
        entry = {"metal": m, "stoichiometric_mL": Vk, "titrant_mL": None, "pM": None, "sharp": False}
        if window:
            kmax = max(window, key=lambda k: sl[k])
            edge = max(sl[window[0]], sl[window[-1]], 1e-300)
            if kmax not in (window[0], window[-1]) and sl[kmax] > 3.0 * edge:
                # zoom in: finer local grids around the steepest point until the bracket is tiny
                a, b = V[kmax - 1], V[kmax + 1]
                st_a = states[kmax - 1]
                for _level in range(ZOOM_LEVELS):
                    Vf = [a + (b - a) * q / (REFINE_POINTS - 1) for q in range(REFINE_POINTS)]
                    st_prev = st_a
                    yf, sts = [], []
                    for v in Vf:
                        st_prev, _ = state_at(v, st_prev)
                        sts.append(st_prev)
                        yf.append(pM(st_prev, m))
                    sf = _slope(Vf, yf)
                    kf = max(range(1, REFINE_POINTS - 1), key=lambda q: sf[q])
                    a, b, st_a = Vf[kf - 1], Vf[kf + 1], sts[kf - 1]
                    if b - a <= ZOOM_RTOL * max(Vk, b):
                        break
                Vend = _vertex(Vf, sf, kf)
                st_end, _ = state_at(Vend, st_a)
                entry.update(titrant_mL=Vend, pM=pM(st_end, m), sharp=True,
                             slope_pM_per_mL=sf[kf])
        end_points.append(entry)
    hard_eps = [e for e in end_points if e["metal"] in HARDNESS_METALS and e["titrant_mL"] is not None]
    total_hardness = None
    if hard_eps:
        last = max(hard_eps, key=lambda e: e["stoichiometric_mL"])
        if last["metal"] == max((e for e in end_points if e["metal"] in HARDNESS_METALS),
                                key=lambda e: e["stoichiometric_mL"])["metal"]:
            total_hardness = titrant_M * last["titrant_mL"] / Vs * M_CaCO3 * 1e3
    if total_hardness is None:
        warnings.append(f"no sharp end point for the last hardness metal at pH {fixed_pH:g}: the total "
                        "hardness cannot be read from this curve")
    composition = sum(base_totals[wm.comp_index[m]] for m in HARDNESS_METALS) * M_CaCO3 * 1e3
    check = None
    if hard_eps:
        e = hard_eps[-1]
        st_e, tot_e = state_at(e["titrant_mL"], states[0])
        sol = equilibrium(tab, tot_e, T=wm.T, gamma_of=wm.gamma_of, pH=fixed_pH, fixed_species={},
                          I_fixed=wm.I_fixed)
        j = wm.comp_index[e["metal"]]
        ref = -math.log10(sol.conc[wm.ion_species[e["metal"]]])
        check = {"titrant_mL": e["titrant_mL"], "metal": e["metal"], "pM": -st_e.x[j] / LN10, "pM_model": ref,
                 "difference": -st_e.x[j] / LN10 - ref}
    return {
        "titrant": "EDTA",
        "titrant_M": titrant_M,
        "sample_mL": sample_mL,
        "fixed_pH": fixed_pH,
        "temperature_C": parsed.T - 273.15,
        "activity": parsed.model,
        "points": out_points,
        "end_points": end_points,
        "total_hardness_mg_per_L_as_CaCO3": total_hardness,
        "hardness_from_composition_mg_per_L_as_CaCO3": composition,
        "conditional_constants": [dict(metal=m, complex=tab.species[_edta_complex(wm, m)].name, **cond[m])
                                  for m in order],
        "model_check": check,
        "basis": BASIS,
        "warnings": warnings,
    }
