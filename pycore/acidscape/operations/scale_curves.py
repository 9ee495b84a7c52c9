"""Curves of the calcium carbonate indices for the page's plots: the saturation index against
pH and the CCPP against temperature, each with its uncertainty band.

Both curves are made of the numbers :mod:`acidscape.operations.indices` reports for one
water (Standard Methods 2330 B and C, 23rd ed. 2017, from memory; its docstring holds the
equations and sources); this module only evaluates them over a range and moves the inputs
by their usual uncertainties. No new solver: every point is the equilibrium model's
(:meth:`acidscape.science.tableau.WaterModel.solve`) through the indices module's helpers.

- **Saturation index against pH** (:func:`saturation_against_pH`): the water's calcium and
  carbonate totals kept, its pH set to each value of the grid with an inert strong acid or
  base (the inert balancing ion of :mod:`acidscape.operations.indices`, so the water's own
  point lies on the curve), and the LSI (with ion pairs: the calcite saturation index) of that
  water. This is what adjusting the pH with a strong acid or base, without carbonate, does.
- **CCPP against temperature** (:func:`ccpp_against_temperature`): the closed water heated
  (or cooled) to each temperature of the grid, its pH from the charge balance, and its CCPP
  (2330 C) there, as the ``at_temperatures`` rows of the indices do.

The bands: each input moved by its usual uncertainty (pH +-0.05, alkalinity and calcium
+-3 %, temperature +-1 °C; log10 Ksp of calcite and pK2 of carbonate by their published
spread; :data:`acidscape.operations.indices.UNCERTAINTY_PH` and the rest), the water solved
again as the indices module does for its ranges, and the deviations added in quadrature
(independent errors). The band is computed in full at up to :data:`BAND_POINTS_PH` (pH) or
:data:`BAND_POINTS_T` (temperature) points spread over the grid, and its width interpolated
linearly in between. On the pH axis the pH's own uncertainty is the axis (it moves the point
along the curve) and is left out of the band; a shift of log10 Ksp moves the saturation index
at a fixed composition by exactly minus the shift, so that row needs no solve. On the
temperature axis the uncertainty of the measured temperature (+-1 °C) is left out: the axis
is the temperature; the pH is the one measured at the water's own temperature.

Functions
---------
saturation_against_pH(wm, sol, ...) -> dict
ccpp_against_temperature(wm, sol, ...) -> dict
"""

from __future__ import annotations

import dataclasses
import math

from ..constants import T0
from ..errors import ConvergenceError, InputError
from ..science.tableau import WaterModel
from . import indices as ix

#: Largest grid of either curve (each point of the band is up to eleven solves).
MAX_POINTS = 81
#: At most this many points of each curve carry a full band; in between the band's width is
#: interpolated linearly (it changes slowly along either axis).
BAND_POINTS_PH = 7
BAND_POINTS_T = 6
#: Default grids: pH 6 to 10.5; 5 to 100 °C (the hot-water heater and boiling included).
DEFAULT_PH = (6.0, 10.5, 31)
DEFAULT_TEMPERATURE_C = (5.0, 100.0, 20)

BAND_PH = ("the band adds in quadrature how the saturation index moves at each pH for alkalinity and calcium "
           "+-3 %, temperature +-1 °C, log10 Ksp of calcite and pK2 of carbonate by their published spread "
           "(the pH's own +-0.05 moves the point along the curve and is not in the band)")
BAND_T = ("the band adds in quadrature how the CCPP moves at each temperature for the measured pH +-0.05, "
          "alkalinity and calcium +-3 %, log10 Ksp of calcite and pK2 of carbonate by their published spread, "
          "each applied to the water as measured and then heated (the temperature is the axis)")
METHOD_PH = ("the water's calcium and carbonate totals kept and its pH set with an inert strong acid or base; "
             "LSI = pH - pHs with the free-ion activities of the equilibrium model (Standard Methods 2330 B, "
             "23rd ed. 2017, from memory; Langelier 1936)")
METHOD_T = ("the closed water heated or cooled to each temperature, pH from the charge balance, and brought to "
            "equilibrium with calcite: CCPP = dissolved calcium before - after in mg/L as CaCO3 (Standard Methods "
            "2330 C, 23rd ed. 2017, from memory)")


def _grid(lo: float, hi: float, n: int) -> list[float]:
    if n == 1:
        return [lo]
    return [lo + (hi - lo) * k / (n - 1) for k in range(n)]


def _base(wm: WaterModel, sol, pH_given: float | None, allow_solids: tuple[str, ...]):
    """(recipe, model, solution) of the closed, neutral water the indices start from."""
    rec = ix._recipe(wm, sol, tuple(allow_solids))
    if pH_given is not None:
        rec = dataclasses.replace(rec, balance_eq=sol.charge_residual)
        return ix._at_pH(rec, sol.pH, sol.state)
    if wm.fixed_species:  # open to a gas: the same water, closed with its carbonate total
        wm_b = rec.build()
        return rec, wm_b, wm_b.solve(allow_solids=rec.allow, guess=sol.state)
    return rec, wm, sol


def _has_calcium_carbonate(wm: WaterModel, sol) -> None:
    jCa, jC = wm.comp_index.get(ix.CALCIUM), wm.comp_index.get(ix.CARBONATE)
    missing = []
    if jCa is None or sol.totals[jCa] <= 0:
        missing.append("calcium")
    if jC is None or sol.totals[jC] <= 0:
        missing.append("carbonate (alkalinity or DIC)")
    if missing:
        raise InputError(f"the calcium carbonate curves need calcium and carbonate; the water has no "
                         f"{' and no '.join(missing)}", field="scenario")


def _band_indices(n: int, most: int) -> list[int]:
    """About ``most`` evenly spread indices of a grid of ``n`` points, both ends included."""
    if n <= most:
        return list(range(n))
    return sorted({round(k * (n - 1) / (most - 1)) for k in range(most)})


def _spread(grid: list[float], values: list, at: list[int], dev: dict[int, tuple[float, float]]):
    """(low, high) at every grid point: the deviations found at the indices ``at``, linearly
    interpolated in between (None where the value itself is None)."""
    known = [k for k in at if k in dev]
    low, high = [], []
    for k, v in enumerate(values):
        if v is None or not known:
            low.append(None)
            high.append(None)
            continue
        right = next((j for j in known if j >= k), known[-1])
        left = next((j for j in reversed(known) if j <= k), known[0])
        w = 0.0 if right == left else (grid[k] - grid[left]) / (grid[right] - grid[left])
        down = (1 - w) * dev[left][0] + w * dev[right][0]
        up = (1 - w) * dev[left][1] + w * dev[right][1]
        low.append(v - down)
        high.append(v + up)
    return low, high


def _quadrature(base: float, pairs: list[list[float]]) -> tuple[float, float]:
    up = down = 0.0
    for pair in pairs:
        d = [v - base for v in pair]
        up += max(0.0, *d) ** 2
        down += max(0.0, *[-x for x in d]) ** 2
    return base - math.sqrt(down), base + math.sqrt(up)


def _band_from_curves(grid: list[float], values: list, at: list[int], curves: dict,
                      extra: float = 0.0) -> tuple[list, list]:
    """(low, high) at every grid point from the curves of the perturbed inputs.

    ``curves`` maps an input's name to its pair of curves (low and high input), each computed
    at the grid indices ``at``; at each such index the deviations are added in quadrature
    (with ``extra``, a symmetric spread of its own, when it is not zero), then :func:`_spread`
    fills the points between.
    """
    dev = {}
    for i, k in enumerate(at):
        v = values[k]
        pairs = [[c[0][i], c[1][i]] for c in curves.values() if c[0][i] is not None and c[1][i] is not None]
        if extra:
            pairs.append([v - extra, v + extra])
        lo, hi = _quadrature(v, pairs)
        dev[k] = (v - lo, hi - v)
    return _spread(grid, values, at, dev)


class _Chain:
    """A recipe balanced at successive pH values with the inert ion of the indices module.

    :func:`acidscape.operations.indices._at_pH` continued from one pH to the next: the ion's
    amount starts from the straight line through the last two points, and the last model is
    handed on while the ion keeps its sign (a :class:`~acidscape.errors.ConvergenceError` where
    the balance does not close).
    """

    def __init__(self, rec):
        self.rec, self.guess, self.wm = rec, None, None
        self.seen: list[tuple[float, float]] = []  # (pH, balance_eq) of the last points

    def at(self, pH: float):
        rec = self.rec
        if len(self.seen) >= 2:
            (p1, q1), (p2, q2) = self.seen[-2:]
            if p2 != p1:
                rec = dataclasses.replace(rec, balance_eq=q2 + (q2 - q1) * (pH - p2) / (p2 - p1))
        wm = None
        if self.wm is not None and rec.balance_eq and self.rec.balance_eq and \
                (rec.balance_eq > 0) == (self.rec.balance_eq > 0):
            wm = self.wm  # the same ion, another amount
            wm.totals = wm.totals[:-1] + [abs(rec.balance_eq)]
        rec, wm, sol = ix._at_pH(rec, pH, self.guess, wm)
        self.rec, self.guess, self.wm = rec, sol.state, wm
        self.seen = (self.seen + [(pH, rec.balance_eq)])[-2:]
        return wm, sol


def saturation_against_pH(wm: WaterModel, sol, *, pH_given: float | None = None,
                          allow_solids: tuple[str, ...] = (), pH_from: float = DEFAULT_PH[0],
                          pH_to: float = DEFAULT_PH[1], points: int = DEFAULT_PH[2], band: bool = True) -> dict:
    """LSI (calcite saturation index) of the water with its pH set to each value of a grid.

    .. math::

        LSI(pH) = pH - pH_s(pH), \\qquad pH_s = pK_2 - pK_s - \\log_{10} a(\\mathrm{Ca^{2+}})
        - \\log_{10} a(\\mathrm{HCO_3^-})

    with the calcium and carbonate totals of the water and an inert strong acid or base setting
    the pH (Standard Methods 2330 B [1]_, with the free-ion activities of the model).

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's model
    sol : acidscape.science.model.Solution
        Its solution
    pH_given : float, optional
        The pH the scenario fixed [-]
    allow_solids : tuple of str
        Solids the scenario lets form [-]
    pH_from, pH_to : float
        Ends of the pH grid [-]
    points : int
        Number of pH values [-]
    band : bool
        Also compute the uncertainty band

    Returns
    -------
    dict
        ``pH`` [-], ``LSI`` [-], ``LSI_low``, ``LSI_high`` [-] (the band; absent without it),
        ``water`` (``{"pH", "LSI"}`` of the water itself), ``temperature_C``, ``method``,
        ``band``, ``inputs`` (names of the inputs in the band), ``notes``

    Examples
    --------
    Calcium bicarbonate water, 2 mmol/L of calcium and 4 mmol/L of DIC at 25 °C (Davies):
    the water's own point lies on the curve, and the LSI rises with pH.

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 4e-3)
    >>> wm = WaterModel([c], [IonInput("calcium", "Ca+2", 2, 2e-3)], T=298.15, pKw=13.995, model="davies")
    >>> out = saturation_against_pH(wm, wm.solve(), pH_from=7.0, pH_to=9.0, points=3, band=False)
    >>> [round(x, 2) for x in out["LSI"]], round(out["water"]["LSI"], 2)
    ([-0.23, 0.83, 1.73], 0.88)

    References
    ----------
    .. [1] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater,
       23rd ed., 2017, method 2330 B (from memory).
    """
    _has_calcium_carbonate(wm, sol)
    rec, wm_b, sol_b = _base(wm, sol, pH_given, allow_solids)
    water = {"pH": sol_b.pH, "LSI": ix._indices(wm_b, sol_b)["LSI"]}
    grid = _grid(pH_from, pH_to, points)
    # each chain starts at the water's pH and walks out both ways (small steps, good starts)

    def curve(r, pHs: list[float]) -> list[float | None]:
        out: list[float | None] = [None] * len(pHs)
        up, down = _Chain(r), _Chain(r)
        order = sorted(range(len(pHs)), key=lambda k: (pHs[k] < water["pH"], abs(pHs[k] - water["pH"])))
        for k in order:
            chain = up if pHs[k] >= water["pH"] else down
            try:
                wm_k, sol_k = chain.at(pHs[k])
                out[k] = ix._indices(wm_k, sol_k)["LSI"]
            except ConvergenceError:
                out[k] = None
        return out

    lsi = curve(rec, grid)
    result = {"pH": grid, "LSI": lsi, "water": water, "temperature_C": rec.T - T0, "method": METHOD_PH,
              "notes": []}
    if any(v is None for v in lsi):
        result["notes"].append("the model did not converge at some pH values; those points are left out")
    if not band:
        return result
    rows = [row for row in ix._perturbations(rec, wm_b, sol_b) if row[0] not in ("pH", "calcite Ksp")]
    at = [k for k in _band_indices(len(grid), BAND_POINTS_PH) if lsi[k] is not None]
    sub = [grid[k] for k in at]
    curves = {name: [curve(r, sub) for r in recs] for name, _, recs, _ in rows}
    _, ksp = ix._calcite_spread()
    # LSI = log IAP - log Ks: a shift of log Ks moves it by minus the shift
    low, high = _band_from_curves(grid, lsi, at, curves, extra=ksp)
    result.update({"LSI_low": low, "LSI_high": high, "band": BAND_PH, "inputs": list(curves) + ["calcite Ksp"]})
    return result


def ccpp_against_temperature(wm: WaterModel, sol, *, pH_given: float | None = None,
                             allow_solids: tuple[str, ...] = (), t_from_C: float = DEFAULT_TEMPERATURE_C[0],
                             t_to_C: float = DEFAULT_TEMPERATURE_C[1], points: int = DEFAULT_TEMPERATURE_C[2],
                             band: bool = True) -> dict:
    """CCPP [mg/L as CaCO3] of the closed water heated or cooled to each temperature of a grid.

    .. math::

        CCPP(T) = ([\\mathrm{Ca}]_{before} - [\\mathrm{Ca}]_{after,\\ calcite\\ at\\ equilibrium})
        \\, M(\\mathrm{CaCO_3})

    (Standard Methods 2330 C [1]_; the water keeps its totals, its pH follows the charge
    balance at T).

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's model
    sol : acidscape.science.model.Solution
        Its solution
    pH_given : float, optional
        The pH the scenario fixed [-]
    allow_solids : tuple of str
        Solids the scenario lets form [-]
    t_from_C, t_to_C : float
        Ends of the temperature grid [°C]
    points : int
        Number of temperatures [-]
    band : bool
        Also compute the uncertainty band

    Returns
    -------
    dict
        ``temperature_C`` [°C], ``CCPP_mg_per_L_as_CaCO3``, ``CCPP_low``, ``CCPP_high``
        [mg/L as CaCO3] (the band), ``pH`` [-] (of the heated water), ``pH_after_CCPP`` [-],
        ``water`` (``{"temperature_C", "CCPP_mg_per_L_as_CaCO3"}`` of the water itself),
        ``method``, ``band``, ``inputs``, ``notes``

    Examples
    --------
    The calcium bicarbonate water of :func:`saturation_against_pH` can lay down more calcium
    carbonate the hotter it gets:

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> c = SystemInput("carbonate", "Carbonate", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2), (6.352, 10.329), 4e-3)
    >>> wm = WaterModel([c], [IonInput("calcium", "Ca+2", 2, 2e-3)], T=298.15, pKw=13.995, model="davies")
    >>> out = ccpp_against_temperature(wm, wm.solve(), t_from_C=25.0, t_to_C=75.0, points=3, band=False)
    >>> c25, c50, c75 = out["CCPP_mg_per_L_as_CaCO3"]
    >>> round(c25, 1), c25 < c50 < c75
    (33.7, True)

    References
    ----------
    .. [1] APHA, AWWA, WEF, Standard Methods for the Examination of Water and Wastewater,
       23rd ed., 2017, method 2330 C (from memory).
    """
    _has_calcium_carbonate(wm, sol)
    rec, wm_b, sol_b = _base(wm, sol, pH_given, allow_solids)
    grid = _grid(t_from_C, t_to_C, points)
    notes: list[str] = []

    def curve(r, guess, temps: list[float]) -> tuple[list, list, list]:
        ccpp, pH, after = [], [], []
        for t_C in temps:
            r_T, tnotes = r.at_temperature(t_C + T0)
            notes.extend(tnotes)
            try:
                wm_T = r_T.build()
                sol_T = wm_T.solve(allow_solids=r_T.allow, guess=guess)
                x, pH_after = ix._ccpp(r_T, wm_T, sol_T)
                guess = sol_T.state
                ccpp.append(ix._mg(x))
                pH.append(sol_T.pH)
                after.append(pH_after)
            except (ConvergenceError, ValueError):
                ccpp.append(None)
                pH.append(None)
                after.append(None)
        return ccpp, pH, after

    ccpp, pH, after = curve(rec, sol_b.state, grid)
    x0, _ = ix._ccpp(rec, wm_b, sol_b)
    if max(grid) > 90.0:
        notes.append("the Plummer & Busenberg (1982) fits are measured to 90 °C; extrapolated above")
    if any(v is None for v in ccpp):
        notes.append("the CCPP was not computed at some temperatures; those points are left out")
    result = {"temperature_C": grid, "CCPP_mg_per_L_as_CaCO3": ccpp, "pH": pH, "pH_after_CCPP": after,
              "water": {"temperature_C": rec.T - T0, "CCPP_mg_per_L_as_CaCO3": ix._mg(x0)},
              "method": METHOD_T}
    if band:
        at = [k for k in _band_indices(len(grid), BAND_POINTS_T) if ccpp[k] is not None]
        sub = [grid[k] for k in at]
        curves = {}
        for name, _, recs, pHs in ix._perturbations(rec, wm_b, sol_b):
            if name == "temperature":
                continue
            pair = []
            for r, p in zip(recs, pHs):
                try:
                    r2, _, sol2 = ix._at_pH(r, p, sol_b.state)
                except ConvergenceError:
                    pair = None
                    break
                pair.append(curve(r2, sol2.state, sub)[0])
            if pair:
                curves[name] = pair
        low, high = _band_from_curves(grid, ccpp, at, curves)
        result.update({"CCPP_low": low, "CCPP_high": high, "band": BAND_T, "inputs": list(curves)})
    result["notes"] = list(dict.fromkeys(notes))
    return result
