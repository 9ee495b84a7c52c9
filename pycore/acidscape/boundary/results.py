"""Shaping a solved water (:class:`acidscape.science.model.Solution`) into the JSON result.

Every row is a plain dict with the unit in the key. Species rows carry the components they
hold (``holds``), so a complex such as CaHCO3+ is counted under calcium and under carbonate.

Functions
---------
species_rows(wm, sol, masses)     every aqueous species but H+ and OH-
component_rows(wm, sol)           total, free, complexed and precipitated of each component
saturation_rows(wm, sol)          SI of every database solid whose components are present
precipitated_rows(wm, sol)        solids present at equilibrium
residual_report(wm, sol)          mass- and charge-balance residuals
trail_rows(wm, sol)               each term of the charge balance
condense_notes(notes)             one line per kind of temperature note instead of one per constant
"""

from __future__ import annotations

import math
import re

from ..science.tableau import WaterModel

_LN10 = math.log(10.0)


def component_masses(wm: WaterModel, sources, ion_sources) -> list[float | None]:
    """Molar mass [g/mol] of each component (H+ 1.008; a system's base; an ion), or None."""
    out: list[float | None] = [1.008] + [None] * (len(wm.tab.components) - 1)
    for s, src in zip(wm.systems, sources):
        sp = getattr(src, "species", ())
        out[wm.comp_index[s.key]] = sp[-1].molar_mass_g_per_mol if sp else None
    for ion, src in zip(wm.ions, ion_sources):
        out[wm.comp_index[ion.key]] = getattr(src, "molar_mass_g_per_mol", None)
    return out


def _species_mass(stoich, masses) -> float | None:
    total = 0.0
    for j, a in stoich:
        if masses[j] is None:
            return None
        total += a * masses[j]
    return total


def species_rows(wm: WaterModel, sol, masses) -> list[dict]:
    """Every aqueous species except H+ and OH- (those are ``water_ions``).

    Acid-base species come first, system by system (most protonated first), then free ions,
    then complexes. ``fraction`` is the share of the system's total for acid-base species.
    """
    tab = wm.tab
    rows = []
    order = [i for idx in wm.system_species.values() for i in idx]
    order += list(wm.ion_species.values())
    order += [i for i, sp in enumerate(tab.species) if sp.kind == "complex"]
    for i in order:
        sp = tab.species[i]
        c = sol.conc[i]
        if sp.kind == "complex" and c == 0.0:
            continue
        g = 10.0 ** sol.log10_gamma[i]
        holds = {tab.components[j]: a for j, a in sp.stoich if j != 0}
        fraction = None
        if sp.kind == "acid-base":
            tot = sol.totals[wm.comp_index[sp.system]]
            fraction = c / tot if tot > 0 else 0.0
        rows.append({
            "name": sp.name, "system": sp.system, "kind": sp.kind, "charge": sp.charge,
            "concentration_M": c, "activity_M": g * c, "activity_coefficient": g, "fraction": fraction,
            "molar_mass_g_per_mol": _species_mass(sp.stoich, masses), "holds": holds,
        })
    return rows


def component_rows(wm: WaterModel, sol, names: dict[str, str]) -> list[dict]:
    """For each system and ion: total, free (not complexed), complexed and precipitated [mol/L]."""
    tab = wm.tab
    m = len(tab.components)
    free = [0.0] * m
    cplx = [0.0] * m
    for sp, c in zip(tab.species, sol.conc):
        for j, a in sp.stoich:
            if sp.kind == "complex":
                cplx[j] += a * c
            else:
                free[j] += a * c
    solid = [0.0] * m
    for s, n in sol.solids.items():
        for j, b in tab.solids[s].stoich:
            solid[j] += b * n
    rows = []
    for j in range(1, m):
        key = tab.components[j]
        tot = sol.totals[j]
        rows.append({
            "id": key, "name": names.get(key, key), "total_M": tot, "free_M": free[j],
            "free_fraction": free[j] / tot if tot > 0 else None,
            "complexed_M": cplx[j], "precipitated_M": solid[j],
        })
    return rows


def saturation_rows(wm: WaterModel, sol) -> list[dict]:
    """``{"id", "name", "formula", "log_IAP", "log_Ksp", "SI"}`` per solid, highest SI first.

    ``log_Ksp`` is the constant of the reaction as the source prints it (at the water's
    temperature, I = 0) and ``log_IAP`` the ion activity product of that same reaction.
    """
    rows = []
    for s, si in sol.SI.items():
        info = wm.solid_info[s]
        logK = wm.solid_log10_K[s]
        rows.append({"id": info.id, "name": info.name, "formula": info.formula,
                     "log_IAP": si + logK, "log_Ksp": logK, "SI": si})
    rows.sort(key=lambda r: -r["SI"])
    return rows


def precipitated_rows(wm: WaterModel, sol) -> list[dict]:
    """``{"id", "mol_per_L", "mg_per_L"}`` of each solid present at equilibrium."""
    rows = []
    for s, n in sorted(sol.solids.items()):
        info = wm.solid_info[s]
        mm = info.molar_mass_g_per_mol
        rows.append({"id": info.id, "mol_per_L": n, "mg_per_L": n * mm * 1e3 if mm else None})
    return rows


def residual_report(wm: WaterModel, sol) -> dict:
    """Mass balance of every component [mol/L] (also relative) and the charge balance [eq/L]."""
    tab = wm.tab
    held = [0.0] * len(tab.components)
    for sp, c in zip(tab.species, sol.conc):
        for j, a in sp.stoich:
            held[j] += abs(a) * c
    rel = 0.0
    for j in range(1, len(tab.components)):
        scale = max(abs(sol.totals[j]), held[j])
        if scale > 0:
            rel = max(rel, abs(sol.residuals[j]) / scale)
    return {
        "mass_balance_M": {tab.components[j]: sol.residuals[j] for j in range(1, len(tab.components))},
        "max_relative_mass_balance": rel,
        "charge_balance_eq_per_L": sol.charge_residual,
    }


def trail_rows(wm: WaterModel, sol) -> list[dict]:
    """Each charged species' term z*c of the charge balance; they sum to the residual [eq/L]."""
    rows = []
    tab = wm.tab
    for sp, c in zip(tab.species, sol.conc):
        if sp.charge and (c > 0 or sp.kind != "complex"):
            row = {"term": sp.name, "charge": sp.charge, "concentration_M": c, "charge_eq_per_L": sp.charge * c}
            if sp.system:
                row["system"] = sp.system
            if sp.kind == "complex":
                row["kind"] = "complex"
            rows.append(row)
    return rows


_NO_DH = re.compile(r"^(?P<name>.+?): no reaction enthalpy is known; its 25 °C log K \(.*\) is used at (?P<t>.+)$")
_OUT_OF_FIT = re.compile(r"^(?P<name>.+?): its log K fit was measured from (?P<range>.+); at (?P<t>.+) it is extrapolated$")


def condense_notes(notes: list[str]) -> list[str]:
    """Group the per-constant temperature notes of complexes and solids into one line per kind.

    >>> condense_notes(["CaOH+: no reaction enthalpy is known; its 25 °C log K (-12.78) is used at 7.0 °C",
    ...                 "NaHCO3: no reaction enthalpy is known; its 25 °C log K (-0.25) is used at 7.0 °C",
    ...                 "other note"])
    ['other note', 'no reaction enthalpy is known for CaOH+, NaHCO3: their 25 °C constants are used at 7.0 °C']
    """
    plain, no_dh, out = [], {}, {}
    for n in notes:
        m = _NO_DH.match(n)
        if m:
            no_dh.setdefault(m["t"], []).append(m["name"])
            continue
        m = _OUT_OF_FIT.match(n)
        if m:
            out.setdefault(m["t"], []).append(f"{m['name']} ({m['range']})")
            continue
        if n not in plain:
            plain.append(n)
    for t, names in no_dh.items():
        plain.append(f"no reaction enthalpy is known for {', '.join(names)}: their 25 °C constants are used at {t}")
    for t, names in out.items():
        plain.append(f"temperature fits used outside the range they were measured over, at {t}: {', '.join(names)}")
    return plain
