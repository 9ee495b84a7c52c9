"""Curves of a whole water against pH: distribution (fractions) and log concentrations.

Each grid pH is solved by the one equilibrium model (:mod:`acidscape.science.model`) at
that pH, at the water's temperature, dissolved totals and the ionic strength of its
equilibrium (held fixed along the curve), warm started from the grid pH before. Ion pairs
and complexes are included, so a carbonate curve shows CaCO3° and CaHCO3+ beside HCO3-,
and the curves pass exactly through the solved state at the equilibrium pH. Without
complexes every species is :math:`C_T\\,\\alpha_i(\\mathrm{pH})` with the conditional
constants at that ionic strength, the textbook distribution diagram.

A system open to a gas keeps its gas species fixed: its total follows the pH. Solids are
not allowed to form along the curve (the dissolved water's totals are held).

Fractions: for each acid-base system and each ion that forms complexes, the share of the
component's total held by each species, :math:`a_{ij} c_i / T_j` (they sum to 1).

Functions
---------
pH_grid(pH_min, pH_max, points) -> list[float]
water_curves(wm, sol, grid) -> dict
"""

from __future__ import annotations

import math

from ..checks import number, whole
from ..errors import InputError
from .probe import aqueous_totals, resolve


def pH_grid(pH_min: float = 0.0, pH_max: float = 14.0, points: int = 281) -> list[float]:
    """Evenly spaced pH values, both ends included.

    Parameters
    ----------
    pH_min, pH_max : float
        Ends of the grid [-]
    points : int
        Number of values, 2..5001 [-]

    >>> pH_grid(2, 4, 3)
    [2.0, 3.0, 4.0]
    """
    points = whole(points, "points", lo=2, hi=5001)
    pH_min = number(pH_min, "pH_min")
    pH_max = number(pH_max, "pH_max")
    if not pH_max > pH_min:
        raise InputError(f"The highest pH of the plot ({pH_max:g}) must be above the lowest ({pH_min:g}).",
                         field="pH_max")
    step = (pH_max - pH_min) / (points - 1)
    grid = [pH_min + k * step for k in range(points)]
    grid[-1] = float(pH_max)
    return [float(v) for v in grid]


def _log10(c: float) -> float | None:
    return math.log10(c) if c > 0.0 else None


def water_curves(wm, sol, grid: list[float]) -> dict:
    """Fractions and log10 concentrations [log10 mol/L] of every species over ``grid``.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's tableau
    sol : acidscape.science.model.Solution
        Its solution (its ionic strength and dissolved totals are used)
    grid : list of float
        pH values [-]

    Returns
    -------
    dict
        ``{"pH": grid, "equilibrium_pH", "ionic_strength_M", "systems": [{"id", "name",
        "species": [...], "charges": [...], "kinds": [...], "fractions": [[...] per species]}],
        "ions": [same, for each ion that forms complexes], "log_concentration": [{"name",
        "system", "kind", "values": [...]}]}``. ``systems`` lists each system's acid-base
        species (most protonated first), then the complexes holding it; the water's own H+
        and OH- lines come first in ``log_concentration`` (system "water"), then the acid-base
        species, the free ions and the complexes (system None); a value is None where the
        species is absent.

    Examples
    --------
    1 mmol/L of a monoprotic acid (pKa 7, ideal): half dissociated at pH 7.

    >>> from acidscape.science.tableau import SystemInput, WaterModel
    >>> wm = WaterModel([SystemInput("a", "acid", ("HA", "A-"), (0, -1), (7.0,), 1e-3)], [], T=298.15,
    ...                 pKw=14.0, model="ideal", complexes=False)
    >>> out = water_curves(wm, wm.solve(), [6.0, 7.0, 8.0])
    >>> [round(f, 4) for f in out["systems"][0]["fractions"][1]]
    [0.0909, 0.5, 0.9091]
    """
    tab = wm.tab
    n = len(grid)
    T = aqueous_totals(sol)
    # what to draw: per component the species holding it (acid-base ladder first, then complexes)
    groups = []
    for s in wm.systems:
        j = wm.comp_index[s.key]
        idx = list(wm.system_species[s.key])
        idx += [i for i, sp in enumerate(tab.species) if sp.kind == "complex" and dict(sp.stoich).get(j)]
        groups.append(("systems", s.key, s.name, j, idx))
    for ion in wm.ions:
        j = wm.comp_index[ion.key]
        cx = [i for i, sp in enumerate(tab.species) if sp.kind == "complex" and dict(sp.stoich).get(j)]
        if cx:
            groups.append(("ions", ion.key, ion.name, j, [wm.ion_species[ion.key]] + cx))
    conc = [[0.0] * n for _ in tab.species]
    tot = [[0.0] * n for _ in tab.components]
    state = sol.state
    for k, p in enumerate(grid):
        at = resolve(wm, pH=p, totals=T, I=sol.I, guess=state)
        state = at.state
        for i, c in enumerate(at.conc):
            conc[i][k] = c
        for j, t in enumerate(at.totals):
            tot[j][k] = t
    out = {"pH": list(grid), "equilibrium_pH": sol.pH, "ionic_strength_M": sol.I, "systems": [], "ions": []}
    for key, cid, name, j, idx in groups:
        fr = []
        for i in idx:
            a = dict(tab.species[i].stoich)[j]
            fr.append([a * conc[i][k] / tot[j][k] if tot[j][k] > 0 else 0.0 for k in range(n)])
        out[key].append({"id": cid, "name": name, "species": [tab.species[i].name for i in idx],
                         "charges": [tab.species[i].charge for i in idx],
                         "kinds": [tab.species[i].kind for i in idx], "fractions": fr})
    logc = []
    order = [0, 1] + [i for s in wm.systems for i in wm.system_species[s.key]]
    order += [wm.ion_species[ion.key] for ion in wm.ions]
    order += [i for i, sp in enumerate(tab.species) if sp.kind == "complex" and any(conc[i])]
    for i in order:
        sp = tab.species[i]
        system = "water" if sp.kind == "water" else sp.system
        logc.append({"name": sp.name, "system": system, "kind": sp.kind,
                     "values": [_log10(c) for c in conc[i]]})
    out["log_concentration"] = logc
    return out
