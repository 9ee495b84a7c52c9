"""Titration curves of a water through the one equilibrium model.

A sample of volume V_s is titrated with V_t of a titrant holding C_t mol/L of a chemical.
Every point of the curve is a pH of an even grid from the sample's pH towards ``to_pH``,
and the titrant amount that gives it: the mixture (sample and titrant, every concentration
diluted into V_s + V_t, ion pairs and complexes included) is solved by the model at that
pH, and the amount ``d`` is the root of its charge, found by Newton steps on the exact
derivative (:class:`acidscape.operations.mixture.Mixture`). Without complexes the
relation is de Levie's explicit titrant amount [1]_ [2]_ and one step reaches it; each point
is started from the one before, extrapolated along the curve's slope, and its ionic
strength is iterated with the amount. A gas (CO2) adds no volume: the amount is per litre
of sample. pH is the meter pH, -log10 a(H+).

The slope dd/dpH (the mixture's buffer intensity over the charge one mole of titrant
brings, both exact) is known at every point; equivalence (inflection) points are its
local minima, refined by golden-section search, each with a ``sharpness`` (how much
steeper the curve is there than in the buffer regions either side). Half-equivalence
points lie midway in titrant amount between successive equivalence points (the first
between the start and the first equivalence point), found by Newton steps on the same
slope; for a weak monoprotic acid titrated with strong base their pH is close to pKa
(Henderson-Hasselbalch).

The titrant approaches, however much is added, the pH of the titrant itself (with
dilution) or, for a gas, the pH at which one more mole brings no charge; a curve cannot
go beyond it. A CO2 curve stops where the dissolved H2CO3* reaches its solubility under
1 atm of CO2, K_H(T) x 1 atm (Plummer & Busenberg 1982 via
:func:`acidscape.science.temperature.log10_KH_CO2`). The titration is that of the dissolved
sample: solids present in the water are left out (a filtered sample) and none form.

Functions
---------
titration_curve(water, titrant, ...)   points, equivalence and half-equivalence points (dict)

References
----------
.. [1] R. de Levie, "A general simulator for acid-base titrations", J. Chem. Educ. 76 (1999)
   987-991, doi:10.1021/ed076p987 (from memory).
.. [2] R. de Levie, "Explicit expressions of the general form of the titration curve in terms
   of concentration", J. Chem. Educ. 70 (1993) 209; and R. de Levie, Principles of
   Quantitative Chemical Analysis, McGraw-Hill, 1997, ch. 6 (from memory).
"""

from __future__ import annotations

import dataclasses
import math
from typing import NamedTuple

from ..checks import MAX_SAMPLE_ML, MAX_TOTAL_M, fmt, number, whole
from ..data import library
from ..errors import InputError, UnreachableError
from ..science.tableau import IonInput, WaterModel
from .closure import Closed
from .mixture import MAX_AMOUNT_M, PH_RANGE, Mixture, limit_pH_trace

#: Default and largest number of curve points.
DEFAULT_POINTS = 400
MAX_POINTS = 5001
#: Sharpness below which a local minimum of dV/dpH is not reported as an equivalence point.
MIN_SHARPNESS = 1.1
#: pH tolerance of the equivalence and half-equivalence searches [-].
PH_TOL = 1e-7


def _positive(value, field: str, hi: float) -> float:
    return number(value, field, above=0.0, hi=hi)


def _golden_min(f, a, b, tol=PH_TOL):
    g = (math.sqrt(5.0) - 1.0) / 2.0
    c, d = b - g * (b - a), a + g * (b - a)
    fc, fd = f(c), f(d)
    while abs(b - a) > tol:
        if fc < fd:
            b, d, fd = d, c, fc
            c = b - g * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + g * (b - a)
            fd = f(d)
    return 0.5 * (a + b)


class _Point(NamedTuple):
    """A point of the curve: pH [-], amount [mol/L of sample], dd/dpH, the mixture's state and I [mol/L]."""

    pH: float
    d: float
    slope: float
    sol: object
    I: float


class _Curve:
    """The mixture along the curve: the amount at a pH, started from points already known."""

    def __init__(self, mix: Mixture, sign: float):
        self.mix, self.sign = mix, sign

    def at(self, pH: float, near: _Point, history=()) -> _Point:
        """The point at ``pH``, started from ``near``.

        The start is extrapolated along the slope at ``near`` or, given the points before it in
        ``history`` (two or three, oldest first), by the polynomial through them and ``near``
        (amount and ionic strength).
        """
        d0 = near.d + near.slope * (pH - near.pH) if math.isfinite(near.slope) else near.d
        I0 = near.I
        pts = list(history) + [near]
        if len(pts) >= 3 and len({q.pH for q in pts}) == len(pts):
            # Lagrange extrapolation through the last points (amount and ionic strength)
            w = []
            for a, qa in enumerate(pts):
                la = 1.0
                for b, qb in enumerate(pts):
                    if a != b:
                        la *= (pH - qb.pH) / (qa.pH - qb.pH)
                w.append(la)
            poly = sum(la * q.d for la, q in zip(w, pts))
            if math.isfinite(poly) and abs(poly - d0) <= 0.5 * abs(d0 - near.d) + 1e-300:
                d0 = poly
            I_p = sum(la * q.I for la, q in zip(w, pts))
            if I_p > 0.0:
                I0 = I_p
        d, sol, ok, I = self.mix.amount(pH, max(d0, 0.0), I0=I0, guess=near.sol.state, sign=self.sign,
                                        d_max=MAX_AMOUNT_M)
        if not ok or not 0.0 <= d <= MAX_AMOUNT_M:
            raise UnreachableError(
                f"An end pH of {pH:.3g} needs more than {fmt(MAX_AMOUNT_M)} mol of {self.mix.chem.id} per litre of sample, "
                "or cannot be reached. Choose an end pH closer to the water's own.", field="to_pH")
        return _Point(pH, d, self.mix.slope(sol, d), sol, I)


def _titrant_pH(chem, wm, titrant_M: float) -> float:
    """pH of the titrant itself at titrant_M [mol/L] (what an endless titration approaches)."""
    own_systems = chem.components_at(wm.T)
    systems = [dataclasses.replace(own_systems[key], total_M=n * titrant_M) for key, n in chem.systems]
    ions = []
    for iid, n in chem.ions:
        ion = library.get_ion(iid)
        ions.append(IonInput(ion.id, ion.formula, ion.charge, n * titrant_M, ion.ion_size_A))
    own = WaterModel(systems, ions, T=wm.T, pKw=wm.pKw, model=wm.model, complexes=wm.complexes)
    return own.solve().pH


def _co2_saturation_pH(curve: _Curve, start: _Point, pH0, to_pH, sat: float):
    """pH between pH0 and to_pH at which dissolved H2CO3* reaches ``sat`` [mol/L], or None.

    H2CO3* rises as CO2 is added and the pH falls, so the crossing is bracketed and bisected.
    """
    wm = curve.mix.wm
    i0 = wm.system_species["carbonate"][0]
    last = [start]

    def excess(pH):
        pt = curve.at(pH, min(last, key=lambda k: abs(k.pH - pH)))
        last.append(pt)
        return pt.sol.conc[i0] - sat

    if excess(to_pH) <= 0.0:
        return None
    hi, lo = pH0, to_pH  # excess(hi) < 0 < excess(lo)
    if excess(hi) >= 0.0:
        return pH0
    while abs(hi - lo) > 1e-9:
        mid = 0.5 * (hi + lo)
        if excess(mid) > 0.0:
            lo = mid
        else:
            hi = mid
    return hi


def titration_curve(water, titrant: str, *, titrant_M: float | None = 0.1, sample_mL: float = 100.0,
                    to_pH: float | None = None, points: int = DEFAULT_POINTS) -> dict:
    """Titration curve of a water with a titrant, through the one equilibrium model.

    Parameters
    ----------
    water : acidscape.operations.closure.Closed
        The closed water (:func:`acidscape.operations.closure.close_scenario` of the parsed
        scenario: ``measured``, ``pH`` and ``gas`` turned into the equivalent closed water)
    titrant : str
        Chemical id (``NaOH``, ``HCl``, ``H2SO4``, ``Ca(OH)2``, ``Na2CO3``, ``NaHCO3``, ``CO2``)
        or a library system id (its neutral species is added) [-]
    titrant_M : float or None
        Titrant concentration [mol/L of the chemical]; ignored for CO2 (a gas, no volume)
    sample_mL : float
        Sample volume [mL]
    to_pH : float, optional
        Where the curve ends [-]; default 3.5 for an acid, 11 for a base (or short of the
        pH the titrant itself has)
    points : int
        Number of points on the pH grid [-]

    Returns
    -------
    dict
        ``titrant``, ``sample_mL``, ``initial_pH``, ``to_pH``, ``limit_pH``, ``volumes_apply``,
        ``points`` (each ``pH``, ``titrant_mL`` (None without volumes), ``dose_mmol_per_L``,
        ``dose_mg_per_L``, ``ionic_strength_M``), ``equivalence_points`` (same keys plus
        ``sharpness``), ``half_equivalence_points``, ``fixed_end_points`` (pH 8.3 and 4.5 when
        crossed), ``method``, ``warnings``

    Raises
    ------
    UnreachableError
        The titrant moves pH away from ``to_pH``, or ``to_pH`` lies beyond the pH the
        titrant can give

    Examples
    --------
    0.1 mol/L acetic acid (pKa 4.756) with 0.1 mol/L NaOH, ideal activities: the
    half-equivalence pH is pKa (Henderson-Hasselbalch) within the [H+] correction.

    >>> from types import SimpleNamespace
    >>> from acidscape.science.tableau import SystemInput
    >>> from acidscape.operations.closure import close_scenario
    >>> acetic = SystemInput("acetic", "Acetic acid", ("CH3COOH", "CH3COO-"), (0, -1), (4.756,), 0.1)
    >>> parsed = SimpleNamespace(components=[acetic], ions=[], T=298.15, pKw=13.995, model="ideal",
    ...                          I_fixed=None, complexes=False, pH=None, CO2_partial_pressure_atm=None,
    ...                          precipitate=(), warnings=[])
    >>> out = titration_curve(close_scenario({}, parsed), "NaOH", titrant_M=0.1, sample_mL=50, to_pH=12,
    ...                       points=200)
    >>> round(out["equivalence_points"][0]["titrant_mL"], 2)
    50.0
    >>> round(out["half_equivalence_points"][0]["pH"], 2)
    4.76
    """
    from .dosing import get_chemical

    points = whole(points, "points", lo=3, hi=MAX_POINTS)
    sample_mL = _positive(sample_mL, "sample_mL", MAX_SAMPLE_ML)
    chem = get_chemical(titrant, field="titrant")
    volumes = not chem.is_gas
    if volumes:
        if titrant_M is None:
            raise InputError(f"Enter the titrant concentration (above 0 and at most {fmt(MAX_TOTAL_M)} mol/L).",
                             field="titrant_M")
        titrant_M = _positive(titrant_M, "titrant_M", MAX_TOTAL_M)
    if not isinstance(water, Closed):
        raise InputError("The water could not be read.", field="scenario")
    closed = water
    warnings = list(closed.notes)
    if closed.sol.solids:
        warnings.append("solids present in the water are left out: the curve is that of the dissolved sample")
    mix = Mixture(closed, chem, titrant_M=titrant_M if volumes else None, aqueous=True)
    pH0, I0 = closed.sol.pH, closed.sol.I
    sol0 = mix.solve(pH0, 0.0, I=I0)
    g0 = mix.charge_per_mol(sol0, 0.0)
    if g0 == 0.0:
        raise UnreachableError(f"{chem.id} does not change the pH of this water; choose an acid or a base.",
                               field="titrant")
    upward = g0 > 0
    sign = 1.0 if upward else -1.0
    if volumes:
        limit = _titrant_pH(chem, closed.wm, titrant_M)
        if (limit > pH0) != upward or not PH_RANGE[0] - 2.0 < limit < PH_RANGE[1] + 3.0:
            limit = None
    else:
        limit = limit_pH_trace(mix, pH0, upward, PH_RANGE[1] + 3.0 if upward else PH_RANGE[0] - 2.0, I0)
    given_to_pH = to_pH is not None
    if to_pH is None:
        to_pH = 11.0 if upward else 3.5
        if limit is not None and ((upward and to_pH > limit - 0.2) or (not upward and to_pH < limit + 0.2)):
            to_pH = limit - 0.2 if upward else limit + 0.2
            warnings.append(f"curve ends at pH {to_pH:.2f}, 0.2 short of the pH {limit:.2f} {chem.id} approaches")
    else:
        to_pH = number(to_pH, "to_pH", lo=PH_RANGE[0], hi=PH_RANGE[1])
    kind = "base" if upward else "acid"
    if (to_pH > pH0) != upward or to_pH == pH0:
        raise UnreachableError(
            f"{chem.id} acts as {'a base' if upward else 'an acid'} on this water (pH {pH0:.2f}): it "
            f"{'raises' if upward else 'lowers'} the pH and cannot take it to {to_pH:g}. Choose an end pH "
            f"{'above' if upward else 'below'} {pH0:.2f}, or {'an acid' if upward else 'a base'} as the titrant.",
            field="to_pH")
    if limit is not None and ((upward and to_pH >= limit) or (not upward and to_pH <= limit)):
        raise UnreachableError(
            f"An end pH of {to_pH:g} is beyond what {chem.id}{f' at {fmt(titrant_M)} mol/L' if volumes else ''} can give: "
            f"however much is added, the pH only approaches {limit:.2f}. Choose an end pH short of {limit:.2f}.",
            field="to_pH")
    curve = _Curve(mix, sign)
    first = _Point(pH0, 0.0, mix.slope(sol0, 0.0), sol0, I0)
    if chem.is_gas:
        from ..science.temperature import log10_KH_CO2

        sat_pH = _co2_saturation_pH(curve, first, pH0, to_pH, 10.0 ** log10_KH_CO2(closed.wm.T))
        if sat_pH is not None:
            if given_to_pH:
                raise UnreachableError(
                    f"An end pH of {to_pH:g} is beyond what {chem.id} can give: the water is saturated with CO₂ under "
                    f"1 atm at pH {sat_pH:.2f}, and more does not dissolve. Choose an end pH above {sat_pH:.2f}.",
                    field="to_pH")
            to_pH = sat_pH
            warnings.append(f"curve ends at pH {sat_pH:.2f}, where the water holds as much CO2 as 1 atm of pure "
                            "CO2 dissolves")
    Vs = sample_mL
    mm = chem.molar_mass_g_per_mol

    def row(pt: _Point, pH=None):
        return {"pH": pt.pH if pH is None else pH, "titrant_mL": (pt.d * Vs / titrant_M) if volumes else None,
                "dose_mmol_per_L": pt.d * 1e3, "dose_mg_per_L": pt.d * mm * 1e3, "ionic_strength_M": pt.I}

    grid = [pH0 + (to_pH - pH0) * k / (points - 1) for k in range(points)]
    grid[-1] = to_pH
    pts = [first]
    for pH in grid[1:]:
        pts.append(curve.at(pH, pts[-1], pts[-4:-1] if len(pts) >= 4 else ()))
    out_pts = [row(pt) for pt in pts]
    slopes = [abs(pt.slope) for pt in pts]
    amounts = [pt.d for pt in pts]
    # equivalence points: interior local minima of |dd/dpH|
    eq_points = []
    mins = [k for k in range(1, points - 1) if slopes[k] < slopes[k - 1] and slopes[k] <= slopes[k + 1]]
    bounds = [0] + mins + [points - 1]
    for j, k in enumerate(mins):
        left = max(slopes[bounds[j]:k + 1])
        right = max(slopes[k:bounds[j + 2] + 1])
        sharp = min(left, right) / slopes[k] if slopes[k] > 0 else math.inf
        if sharp < MIN_SHARPNESS:
            continue
        start = [pts[k]]
        # the grid points around the minimum: the amount and ionic strength at each trial pH are
        # interpolated through them (a start the Newton step accepts at once)
        around = [pts[i] for i in (k - 2, k - 1, k + 1) if 0 <= i < points]

        def f(pH):
            pt = curve.at(pH, start[0], around)
            start[0] = pt
            return abs(pt.slope)
        pe = _golden_min(f, min(grid[k - 1], grid[k + 1]), max(grid[k - 1], grid[k + 1]))
        r = row(curve.at(pe, start[0], around))
        r["sharpness"] = sharp if math.isfinite(sharp) else None
        eq_points.append(r)
    half = []
    prev = 0.0
    for e in eq_points:
        target = 0.5 * (prev + e["dose_mmol_per_L"] * 1e-3)
        prev = e["dose_mmol_per_L"] * 1e-3
        half.append(row(_solve_amount(curve, grid, amounts, pts, target)))
    fixed = []
    for end in (8.3, 4.5):
        if min(pH0, to_pH) < end < max(pH0, to_pH):
            k = min(range(points), key=lambda i: abs(grid[i] - end))
            r = row(curve.at(end, pts[k]))
            r["name"] = "phenolphthalein end point" if end == 8.3 else "total alkalinity end point"
            fixed.append(r)
    return {
        "titrant": {"id": chem.id, "name": chem.name, "kind": kind,
                    "concentration_M": titrant_M if volumes else None,
                    "normality_eq_per_L": (titrant_M * abs(chem.alkalinity_eq_per_mol)) if volumes else None,
                    "molar_mass_g_per_mol": mm, "alkalinity_eq_per_mol": chem.alkalinity_eq_per_mol},
        "sample_mL": Vs if volumes else None,
        "volumes_apply": volumes,
        "initial_pH": pH0,
        "to_pH": to_pH,
        "limit_pH": limit,
        "points": out_pts,
        "equivalence_points": eq_points,
        "half_equivalence_points": half,
        "fixed_end_points": fixed,
        "method": "titrant amount per pH by the equilibrium model (complexes "
                  + ("included" if closed.wm.complexes else "off") + "), dilution "
                  + ("included" if volumes else "none: gas") + "; ionic strength iterated per point",
        "warnings": warnings,
    }


def _solve_amount(curve: _Curve, grid, amounts, pts, target) -> _Point:
    """The point where the amount equals ``target``: Newton steps on the slope inside the grid bracket.

    The amount grows along the grid (towards ``to_pH``), so the root is bracketed by the
    two grid points around ``target``.
    """
    k = next((i for i in range(1, len(amounts)) if amounts[i] >= target), len(amounts) - 1)
    lo, hi = sorted((grid[k - 1], grid[k]))
    rising = grid[-1] > grid[0]          # does the amount rise with pH?
    pt = pts[k] if abs(amounts[k] - target) < abs(amounts[k - 1] - target) else pts[k - 1]
    for _ in range(100):
        f = pt.d - target
        if f == 0.0:
            break
        if (f < 0.0) == rising:
            lo = pt.pH
        else:
            hi = pt.pH
        xn = pt.pH - f / pt.slope if pt.slope and math.isfinite(pt.slope) else 0.5 * (lo + hi)
        if not lo < xn < hi:
            xn = 0.5 * (lo + hi)
        if abs(xn - pt.pH) < 1e-10 or hi - lo < 1e-10:
            break
        pt = curve.at(xn, pt)
    return pt
