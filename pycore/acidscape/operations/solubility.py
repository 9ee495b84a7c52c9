"""Lead and copper solubility: the dissolved metal in equilibrium with its least soluble solid.

For a water and a metal (lead or copper) this module computes, at each point of a grid in
pH (at the water's DIC and orthophosphate), in DIC or in orthophosphate (at a fixed pH),
the total dissolved metal -- the sum of every dissolved species holding it, free ion,
hydroxo, carbonate, sulfate, chloride and chelate complexes of the database, polynuclear
species counted with their metal content -- in equilibrium with the candidate solid that
gives the lowest value, and names that solid.

Formulation
-----------
The water is the tableau of :class:`acidscape.science.tableau.WaterModel` (its systems, ions,
the database's complexes and solids, constants at the water's temperature). At a point:

- the pH is held (meter pH, -log10 a(H+));
- every other component's total is held: the DIC and orthophosphate of the point and the
  water's other ions are the *dissolved* totals at equilibrium, the amounts a water analysis
  reports (what the metal's complexes hold is part of them);
- the metal's total is open: a candidate solid s is an unlimited reservoir, so the
  metal's free concentration obeys the solid's mass-action law

  .. math::

      \\sum_j b_{sj} (\\ln c_j + \\ln\\gamma_j) = \\ln K_{sp,s}

  (Morel & Hering [1]_ ch. 5; Stumm & Morgan [2]_ ch. 7), a constraint that makes the free
  metal a function of the free ligands;
- the ionic strength is computed from the species (including the dissolved metal) and
  iterated to self-consistency unless the scenario fixes it.

With the ligands held, the dissolved metal rises with its free activity, and the solid
present at equilibrium when every candidate may form is the one that needs the lowest free
metal activity (every other candidate then has SI < 0). The module therefore *minimises
over the solids*: it solves the water with the solid that the metal-free water makes the
least soluble, then checks the saturation index of every other candidate and moves to the
most oversaturated one until none is above 0 (1e-10). This is equivalent to adding an
excess of metal with every candidate allowed to precipitate, except that the ligands a
precipitating solid would take out of the water stay in it (here the DIC and orthophosphate
are the water's final values, as in the solubility diagrams of Schock and co-workers [3]_).
A point whose dissolved metal would exceed :data:`MAX_DISSOLVED_M` (0.01 mol/L, far beyond
the dilute waters the constants describe: a very soluble solid at low pH) is reported
without a value.

Solver
------
The unknowns are the ln free concentrations of the water's components other than H+ and
the metal and, unless the activities are ideal or the ionic strength is given, the ionic
strength itself (equation I = 1/2 sum z_i^2 c_i). Without the metal, at a fixed ionic
strength, the mass balances are the gradient of a convex function (the tableau's dual, as
in :mod:`acidscape.science.model`) and Newton's method with an Armijo line search on it
converges from any start; that solve starts a curve (and any point where a warm start
fails). With the metal tied to a solid the Jacobian is no longer symmetric (the metal
species hold ligands and depend on them through the solid), and Newton's method on the
mass balances and the ionic strength together, with a backtracking line search on their
scaled squared residual, finishes the job to 1e-10 relative (:data:`RTOL`). Each point of
a grid starts from a quadratic extrapolation of the three before it, so most points take
one Newton step and two evaluations. The solve is specialised to a fixed pH with one metal
solid, a case the general model reaches through its active-set loop and ionic-strength
iteration at several times the cost per point. At one point of every curve the result is
checked against :func:`acidscape.science.model.equilibrium` at that point's ionic strength
with the metal total set to the dissolved value found (the controlling solid must be at
SI 0, every other candidate at SI <= 0, and the species must give the ionic strength back);
the result reports that check as ``model_check``.

Spread of the constants
-----------------------
Where the database records a spread of published values for a constant of the metal
(``log10_K_spread``, kept where sources differ by more than 0.3 log units), the band at each
point is the dissolved metal with every such constant at the end that lowers it (the low
end of every complex and solid) and at the end that raises it (every high end); the
dissolved metal rises with every complex constant and with every Ksp, so these corners
bound all combinations. The band is evaluated at the point's free ligand concentrations
and ionic strength (the metal's own small effect on them is not recomputed).

This is an equilibrium solubility estimate, not a prediction of metal concentrations at a
tap: those also depend on the pipe and scale materials and their age, stagnation time,
particles, flow and sampling, and corrosion scales are often not at equilibrium [3]_.

Functions and classes
---------------------
FixedPHSolver(wm, metal)            the water at a fixed pH, optionally saturated with a metal solid
solubility_curve(parsed, ...)       dissolved metal along a pH, DIC or orthophosphate grid (dict)
with_orthophosphate(parsed, dose_M) the water with an orthophosphate dose added
metal_water(parsed, metal, need)    the water's tableau with the metal (and axis ligands) as components
candidate_solids(wm, metal)         ids of the database solids that hold the metal
constants_report(wm, metal, ...)    the metal's solids and complexes with constants and sources
temperature_notes(wm, ...)          temperature notes of the given complexes and solids, condensed

References
----------
.. [1] F. M. M. Morel, J. G. Hering, Principles and Applications of Aquatic Chemistry,
   Wiley, 1993, ch. 2-3 (tableau) and ch. 5 (solubility with a solid as a constraint).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, 1996, ch. 7.
.. [3] M. R. Schock, I. Wagner, R. J. Oliphant, "Corrosion and solubility of lead in
   drinking water", in Internal Corrosion of Water Distribution Systems, 2nd ed., AWWA
   Research Foundation and DVGW-Technologiezentrum Wasser, 1996, 131-230 (from memory).
"""

from __future__ import annotations

import dataclasses
import math

from ..checks import MAX_TOTAL_M, PH_RANGE, choice
from ..constants import LN10
from ..data import library
from ..errors import ConvergenceError, InputError, UnknownIdError
from ..science import temperature
from ..science.model import equilibrium
from ..science.tableau import IonInput, SystemInput, WaterModel

#: The metals this module treats, and the ion id of each in the library.
METALS = ("lead", "copper")
#: Grid axes.
AXES = ("pH", "DIC", "orthophosphate")
#: Component id of each ligand axis.
AXIS_COMPONENT = {"DIC": "carbonate", "orthophosphate": "phosphate"}
#: Largest number of grid points.
MAX_POINTS = 2001
#: A candidate solid above this saturation index replaces the controlling one.
SI_SWITCH = 1e-10
#: Relative tolerance on each mass balance and on the ionic strength (Newton converges
#: quadratically: the last step usually lands far below it).
RTOL = 1e-10
#: Largest dissolved metal computed [mol/L] (2 g/L of lead, 0.6 g/L of copper): far beyond the
#: dilute waters the constants describe; a point above it is reported without a value.
MAX_DISSOLVED_M = 1e-2
#: Largest Newton step in any ln concentration.
STEP_CAP = 9.0

BASIS = (
    "Equilibrium solubility estimate, not a prediction of {metal} at a tap: the total dissolved {metal} "
    "(every dissolved species that holds it) in equilibrium with the least soluble of the candidate "
    "solids, the solid named at each point. The pH is held; the DIC, orthophosphate and other ions of "
    "the water are the dissolved totals at equilibrium; the solid is an unlimited reservoir; "
    "the acid or base that would set each pH is not added. Tap concentrations also depend on pipe and "
    "scale materials and age, stagnation time, particles, flow and sampling, and corrosion scales are "
    "often not at equilibrium. Constants are recalled from published sources (see constants; most "
    "from memory); where sources disagree by more than 0.3 log units the band shows the spread."
)
BAND_BASIS = (
    "low/high: every constant of the metal with a recorded spread of published values set to the end "
    "that lowers (raises) the dissolved metal, at the point's free ligand concentrations and ionic "
    "strength"
)


def _lse_dot(pairs, x):
    s = 0.0
    for p, a in pairs:
        s += a * x[p]
    return s


def _solve_linear(A: list[list[float]], b: list[float]) -> list[float] | None:
    """Gaussian elimination with partial pivoting (A is n x n, small); None if singular."""
    n = len(b)
    M = [row[:] + [v] for row, v in zip(A, b)]
    for k in range(n):
        piv, big = k, abs(M[k][k])
        for r in range(k + 1, n):
            v = abs(M[r][k])
            if v > big:
                piv, big = r, v
        if big == 0.0 or not math.isfinite(big):
            return None
        if piv != k:
            M[k], M[piv] = M[piv], M[k]
        Mk = M[k]
        inv = 1.0 / Mk[k]
        for r in range(k + 1, n):
            Mr = M[r]
            f = Mr[k] * inv
            if f:
                for c in range(k, n + 1):
                    Mr[c] -= f * Mk[c]
    x = [0.0] * n
    for k in range(n - 1, -1, -1):
        s = M[k][n]
        Mk = M[k]
        for c in range(k + 1, n):
            s -= Mk[c] * x[c]
        x[k] = s / Mk[k]
    return x


@dataclasses.dataclass
class _Layout:
    """Species and solids of the tableau for one set of present components."""

    U: list[int]                 # component indices solved for (not H+, not the metal)
    species: list[int]           # species indices present
    coef: list[tuple]            # per present species: ((position in U, a), ...)
    aH: list[int]
    aM: list[int]
    z2: list[int]
    solids: list[int]            # candidate solid indices present
    bU: dict                     # solid -> ((position in U, b), ...)
    bH: dict
    bM: dict
    eff: dict = dataclasses.field(default_factory=dict)  # solid -> per-species effective coefficients
    lgk: list = dataclasses.field(default_factory=list)    # per present species: (charge, ion size)
    prep: tuple | None = None                               # cached rows for _constants


@dataclasses.dataclass
class _AtI:
    """Constants of a layout at one ionic strength (and their derivatives with respect to it)."""

    I: float
    base: list[float]
    dbase: list[float] | None     # filled on demand by FixedPHSolver._derivatives
    kS: dict
    dkS: dict | None
    lgc: list[float]
    lgs: list[float]
    xH: float
    lgs_key: list[float] = dataclasses.field(default_factory=list)  # log10 gamma per (charge, size) key


@dataclasses.dataclass
class FixedPHState:
    """The water at one fixed pH (see :meth:`FixedPHSolver.solve`)."""

    pH: float
    I: float
    x: list[float]               # ln free concentration per component (-inf if absent; H+ and metal included)
    conc: list[float]            # per tableau species [mol/L] (0 if absent)
    lgc: list[float]             # log10 gamma per component
    lgs: list[float]             # log10 gamma per species
    solid: int | None            # index of the controlling solid (None: no metal solid)
    dissolved_M: float           # total dissolved metal [mol/L] (0 without a metal)
    SI: dict                     # candidate solid index -> saturation index
    iterations: int
    layout_key: tuple = ()
    above_limit: bool = False    # the dissolved metal would exceed MAX_DISSOLVED_M (not solved further)


class FixedPHSolver:
    """A water's tableau at a fixed pH, optionally saturated with the least soluble metal solid.

    Parameters
    ----------
    wm : WaterModel
        The water's tableau (the metal, if any, must be one of its components)
    metal : str, optional
        Component id of the metal whose total is open (set by a solid)
    solids : sequence of str, optional
        Ids of the candidate solids (default: every database solid holding the metal)

    Notes
    -----
    The unknowns are the ln free concentrations of the components other than H+ and the
    metal and, unless the activity model is ideal or the ionic strength is given, the ionic
    strength I itself, with the equation :math:`I = \\frac12 \\sum_i z_i^2 c_i`. Newton's
    method on that square system (the derivative of each log10 gamma with respect to I by a
    central difference) converges quadratically in both, so a point started from its
    neighbours on a grid takes about two evaluations.

    Examples
    --------
    Calcium in a carbonate water at pH 8 (Davies activities), checked against the general model:

    >>> from acidscape.science.tableau import IonInput, SystemInput, WaterModel
    >>> wm = WaterModel([SystemInput("carbonate", "C", ("H2CO3*", "HCO3-", "CO3-2"), (0, -1, -2),
    ...                 (6.352, 10.329), 2e-3)], [IonInput("calcium", "Ca+2", 2, 1e-3)],
    ...                 T=298.15, pKw=13.995, model="davies")
    >>> st = FixedPHSolver(wm).solve(8.0, wm.totals)
    >>> ref = wm.solve(pH=8.0)
    >>> abs(st.conc[wm.ion_species["calcium"]] / ref.conc[wm.ion_species["calcium"]] - 1) < 1e-9
    True
    """

    def __init__(self, wm: WaterModel, metal: str | None = None, solids=None):
        self.wm = wm
        tab = wm.tab
        self.tab = tab
        self.m = len(tab.components)
        self.jM = wm.comp_index[metal] if metal is not None else None
        if metal is not None:
            allowed = candidate_solids(wm, metal) if solids is None else list(solids)
            for sid in allowed:
                if sid not in wm.solid_index:
                    solid = library.get_solid(sid)  # UnknownIdError for an unknown id
                    refs = [library.resolve_ref(r) for r, _ in solid.reactants]
                    if ("ion", metal) not in refs:
                        raise InputError(f"The solid {sid} holds no {metal}; choose {metal} solids.", field="solids")
                    raise InputError(f"The solid {sid} cannot form in this water: it needs "
                                     + ", ".join(r for r, _ in solid.reactants if r not in ("H+", "OH-"))
                                     + ". Add them to the water, or choose another solid.", field="solids")
                if dict(tab.solids[wm.solid_index[sid]].stoich).get(self.jM, 0) <= 0:
                    raise InputError(f"The solid {sid} holds no {metal}; choose {metal} solids.", field="solids")
            self.candidates = [wm.solid_index[s] for s in allowed]
        else:
            self.candidates = []
        self.ideal = wm.gamma_of(1, None, 0.1) == 0.0
        self._layouts: dict[tuple, _Layout] = {}
        self._stoich = [dict(sp.stoich) for sp in tab.species]

    # ------------------------------------------------------------------ structure
    def _layout(self, present: tuple) -> _Layout:
        lay = self._layouts.get(present)
        if lay is not None:
            return lay
        jM = self.jM
        U = [j for j in range(1, self.m) if present[j] and j != jM]
        pos = {j: p for p, j in enumerate(U)}
        species, coef, aH, aM, z2, lgk = [], [], [], [], [], []
        for i, sp in enumerate(self.tab.species):
            if not all(present[j] for j, _ in sp.stoich):
                continue
            st = self._stoich[i]
            species.append(i)
            lgk.append((sp.charge, sp.ion_size_A))
            coef.append(tuple((pos[j], a) for j, a in sp.stoich if j in pos))
            aH.append(st.get(0, 0))
            aM.append(st.get(jM, 0) if jM is not None else 0)
            z2.append(sp.charge * sp.charge)
        solids, bU, bH, bM = [], {}, {}, {}
        for s in self.candidates:
            sd = self.tab.solids[s]
            if all(present[j] for j, _ in sd.stoich):
                st = dict(sd.stoich)
                solids.append(s)
                bU[s] = tuple((pos[j], b) for j, b in sd.stoich if j in pos)
                bH[s] = st.get(0, 0)
                bM[s] = st[jM]
        lay = _Layout(U, species, coef, aH, aM, z2, solids, bU, bH, bM)
        lay.lgk = lgk
        self._layouts[present] = lay
        return lay

    def _effective(self, lay: _Layout, s: int | None):
        """Per species: ((p, a_p + a_M w_p), ...) with w = -b/b_M of solid s (a alone if s is None)."""
        got = lay.eff.get(s)
        if got is not None:
            return got
        if s is None:
            out = list(lay.coef)
        else:
            w = {p: -b / lay.bM[s] for p, b in lay.bU[s]}
            out = []
            for c, am in zip(lay.coef, lay.aM):
                if not am:
                    out.append(c)
                    continue
                d = dict(c)
                for p, v in w.items():
                    d[p] = d.get(p, 0.0) + am * v
                out.append(tuple((p, v) for p, v in d.items() if v != 0.0))
        lay.eff[s] = out
        return out

    # ------------------------------------------------------------------ constants at I
    def _constants(self, lay: _Layout, pH: float, I: float) -> _AtI:
        """ln K' + a_H x_H per present species and each candidate solid's right-hand side at I."""
        tab = self.tab
        prep = lay.prep
        if prep is None:
            comp_keys = [(tab.charges[j], tab.ion_sizes[j]) for j in range(self.m)]
            keys = sorted(set(comp_keys) | set(lay.lgk), key=repr)
            kidx = {k: q for q, k in enumerate(keys)}
            rows = tuple((i, tab.species[i].log10_K, kidx[key], tab.species[i].stoich, ah)
                         for i, ah, key in zip(lay.species, lay.aH, lay.lgk))
            solid_rows = tuple((s, tab.solids[s].log10_Ksp, tab.solids[s].stoich, lay.bH[s]) for s in lay.solids)
            prep = lay.prep = (keys, [kidx[k] for k in comp_keys], rows, solid_rows)
        keys, comp_q, rows, solid_rows = prep
        g = self.wm.gamma_of
        lg = [g(z, a, I) for z, a in keys]
        lgc = [lg[q] for q in comp_q]
        lgs = [0.0] * len(tab.species)
        xH = LN10 * (-pH - lgc[0])
        base = []
        for i, logK, q, stoich, ah in rows:
            lgi = lg[q]
            lgs[i] = lgi
            v = logK - lgi
            for j, a in stoich:
                v += a * lgc[j]
            base.append(LN10 * v + ah * xH)
        kS = {}
        for s, logKsp, stoich, bh in solid_rows:
            v = logKsp
            for j, b in stoich:
                v -= b * lgc[j]
            kS[s] = LN10 * v - bh * xH
        return _AtI(I, base, None, kS, None, lgc, lgs, xH, lg)

    def _derivatives(self, lay: _Layout, k: _AtI) -> None:
        """d(ln K' + a_H x_H)/dI per species and d(right-hand side)/dI per solid, into ``k``.

        d log10 gamma / dI by a forward difference of the activity model (step 1e-6 I; the
        Newton step needs it to a few digits only).
        """
        if k.dbase is not None:
            return
        keys, comp_q, rows, solid_rows = lay.prep
        I = k.I
        if I > 0.0 and not self.ideal:
            g = self.wm.gamma_of
            h = 1e-6 * I
            dlg = [(g(z, a, I + h) - v) / h for (z, a), v in zip(keys, k.lgs_key)]
        else:
            dlg = [0.0] * len(keys)
        dlgc = [dlg[q] for q in comp_q]
        dxH = -LN10 * dlgc[0]
        dbase = []
        for i, logK, q, stoich, ah in rows:
            dv = -dlg[q]
            for j, a in stoich:
                dv += a * dlgc[j]
            dbase.append(LN10 * dv + ah * dxH)
        dkS = {}
        for s, logKsp, stoich, bh in solid_rows:
            dv = 0.0
            for j, b in stoich:
                dv -= b * dlgc[j]
            dkS[s] = LN10 * dv - bh * dxH
        k.dbase, k.dkS = dbase, dkS

    # ------------------------------------------------------------------ evaluation
    def _evaluate(self, lay, k: _AtI, x, s, T, varI: bool, want_F: bool = False):
        """(F, residuals, concentrations, I computed) at (x, k.I); None when an exponent overflows.

        Residuals are the mass balances of the unknown components, then (when the ionic
        strength is an unknown) I computed - I.
        """
        exp = math.exp
        eff = self._effective(lay, s)
        shift = k.kS[s] / lay.bM[s] if s is not None else 0.0
        r = [-t for t in T]
        conc = []
        F = 0.0
        Ic = 0.0
        for b, am, co, ef, z2 in zip(k.base, lay.aM, lay.coef, eff, lay.z2):
            e = b + am * shift if am else b
            for p, a in ef:
                e += a * x[p]
            if e > 700.0:
                return None
            c = exp(e)
            conc.append(c)
            F += c
            Ic += z2 * c
            for p, a in co:
                r[p] += a * c
        Ic *= 0.5
        if want_F:
            F -= sum(t * v for t, v in zip(T, x))
        if varI:
            r.append(Ic - k.I)
        return F, r, conc, Ic

    def _jacobian(self, lay, k: _AtI, conc, s, n: int, varI: bool):
        """Jacobian of the residuals of :meth:`_evaluate` (n mass balances, then I) from its concentrations."""
        eff = self._effective(lay, s)
        N = n + 1 if varI else n
        J = [[0.0] * N for _ in range(N)]
        if varI:
            self._derivatives(lay, k)
            dshift = k.dkS[s] / lay.bM[s] if s is not None else 0.0
            JI = J[n]
            for c, db, am, co, ef, z2 in zip(conc, k.dbase, lay.aM, lay.coef, eff, lay.z2):
                de = db + am * dshift if am else db
                for p, a in co:
                    v = a * c
                    Jp = J[p]
                    for q, aq in ef:
                        Jp[q] += v * aq
                    Jp[n] += v * de
                if z2:
                    w = 0.5 * z2 * c
                    for q, aq in ef:
                        JI[q] += w * aq
                    JI[n] += w * de
            JI[n] -= 1.0
        else:
            for c, co, ef in zip(conc, lay.coef, eff):
                for p, a in co:
                    v = a * c
                    Jp = J[p]
                    for q, aq in ef:
                        Jp[q] += v * aq
        return J

    def _newton(self, lay, T, pH, x, I, s, varI: bool, convex: bool = False):
        """Newton's method from (x, I). ``convex``: I fixed, no solid, Armijo on the dual function.

        Converged when every mass balance (and the ionic strength) is met to :data:`RTOL`
        relative. Returns (x, I, constants at I, evaluation, iterations, converged).
        """
        n = len(T)
        k = self._constants(lay, pH, I)
        ev = self._evaluate(lay, k, x, s, T, varI, convex)
        if ev is None:
            return x, I, k, None, 0, False
        scale = list(T) + ([I] if varI else [])

        def error(e):
            return max((abs(v) / sc for v, sc in zip(e[1], scale)), default=0.0)

        def merit(e):
            try:
                return sum((v / sc) ** 2 for v, sc in zip(e[1], scale))
            except OverflowError:
                return math.inf

        phi = merit(ev)
        for it in range(1, 100):
            F, r = ev[0], ev[1]
            err = error(ev)
            if err <= RTOL:
                return x, I, k, ev, it, True
            J = self._jacobian(lay, k, ev[2], s, n, varI)
            step = _solve_linear(J, [-v for v in r])
            if step is None or not all(math.isfinite(v) for v in step):
                return x, I, k, ev, it, False
            big = max((abs(v) for v in step[:n]), default=0.0)
            t = 1.0
            if big > STEP_CAP:
                t = STEP_CAP / big
            if varI and I + t * step[n] <= 0.1 * I:
                t = min(t, 0.9 * I / abs(step[n]))
            slope = sum(a * b for a, b in zip(r, step)) if convex else 0.0
            while True:
                xn = [a + t * b for a, b in zip(x, step)]
                In = I + t * step[n] if varI else I
                kn = self._constants(lay, pH, In) if varI else k
                evn = self._evaluate(lay, kn, xn, s, T, varI, convex)
                if evn is not None:
                    phin = merit(evn)
                    if convex:
                        ok = evn[0] <= F + 1e-4 * t * slope or (abs(evn[0] - F) <= 1e-14 * (abs(F) + 1.0)
                                                                  and phin < phi)
                    else:
                        ok = phin <= (1.0 - 1e-4 * t) * phi or phin < 1e-28
                    if ok:
                        break
                t *= 0.5
                if t < 1e-10:
                    return x, I, k, ev, it, err < 1e3 * RTOL
            x, I, k, ev, phi = xn, In, kn, evn, phin
        return x, I, k, ev, 99, error(ev) < 1e3 * RTOL

    # ------------------------------------------------------------------ solve
    def solve(self, pH: float, totals, *, I: float | None = None, start: FixedPHState | None = None,
              before: tuple = (), metal: bool = True) -> FixedPHState:
        """The water at ``pH`` with the component ``totals`` [mol/L] (the metal's entry is ignored).

        Parameters
        ----------
        pH : float
            Meter pH held [-]
        totals : list of float
            Total of each tableau component [mol/L]; H+ and the metal entries are not used
        I : float, optional
            Starting ionic strength [mol/L] (held if the water model fixes it)
        start : FixedPHState, optional
            An earlier answer (warm start)
        before : tuple of FixedPHState
            The one or two answers before ``start`` on a uniform grid, latest first: the start is
            extrapolated from them (linearly or quadratically)
        metal : bool
            Saturate with the least soluble candidate solid (default True when the solver
            has a metal)

        Returns
        -------
        FixedPHState
        """
        wm = self.wm
        jM = self.jM
        present = [j == 0 or (j != jM and totals[j] > 0.0) for j in range(self.m)]
        if metal and jM is not None:
            # the metal is open when a candidate solid can form (its other components present)
            present[jM] = any(all(present[j] or j == jM for j, _ in self.tab.solids[t].stoich)
                              for t in self.candidates)
        present = tuple(present)
        use_metal = jM is not None and present[jM]
        lay = self._layout(present)
        with_metal = use_metal and bool(lay.solids)
        T = [float(totals[j]) for j in lay.U]
        varI = not self.ideal and wm.I_fixed is None
        if wm.I_fixed is not None:
            I = wm.I_fixed
        elif I is None:
            I = start.I if start is not None else 0.5 * sum(
                self.tab.charges[j] ** 2 * totals[j] for j in range(1, self.m) if present[j] and j != jM)
        if not I > 0.0:
            I = 1e-7
        starts = []  # (x, I, solid) to try before a cold start
        if start is not None and start.layout_key == present:
            s = start.solid if start.solid in lay.solids else None
            x = [start.x[j] for j in lay.U]
            hist = [h for h in (before or ()) if h.layout_key == present and h.solid == start.solid][:2]
            if hist and len(hist) == len(before or ()):
                # a uniform grid: extrapolate from the points before (linear or quadratic)
                w = (2.0, -1.0) if len(hist) == 1 else (3.0, -3.0, 1.0)
                states = (start,) + tuple(hist)
                xp = [sum(c * st.x[j] for c, st in zip(w, states)) for j in lay.U]
                I_pred = sum(c * st.I for c, st in zip(w, states))
                starts.append((xp, I_pred if varI and 0.5 * start.I < I_pred < 2.0 * start.I else I, s))
            starts.append((x, I, s))
        iters = 0
        result = None
        for x0, I0, s0 in starts:
            if s0 is not None or not with_metal:
                result = self._settle(lay, T, pH, x0, I0, s0, varI, with_metal)
                if result is not None:
                    break
        if result is None:
            x, I, s, its = self._cold_start(lay, T, pH, I, with_metal)
            iters += its
            estimate = None
            if with_metal:
                # the estimate at the metal-free water's ligands: beyond the limit, stop there
                k = self._constants(lay, pH, I)
                ev = self._evaluate(lay, k, x, s, T, False)
                estimate = sum(am * c for am, c in zip(lay.aM, ev[2])) if ev is not None else math.inf
                if not estimate <= MAX_DISSOLVED_M:
                    if ev is None:
                        ev = (0.0, [], [math.inf if am else 0.0 for am in lay.aM], 0.0)
                    result = (x, I, s, k, ev, 0)
            if result is None:
                result = self._settle(lay, T, pH, x, I, s, varI, with_metal)
            if result is None and with_metal:
                # the metal's hold on a scarce ligand can move the answer far from the estimate:
                # start from each other candidate, least soluble first
                order = sorted((t for t in lay.solids if t != s),
                               key=lambda t: (k.kS[t] - _lse_dot(lay.bU[t], x)) / lay.bM[t])
                for t in order:
                    result = self._settle(lay, T, pH, x, I, t, varI, with_metal)
                    if result is not None:
                        break
                if result is None and estimate > 0.1 * MAX_DISSOLVED_M:
                    # no solution found near a metal content already close to the limit: above it
                    ev = (0.0, [], [math.inf if am else 0.0 for am in lay.aM], 0.0)
                    result = (x, I, s, k, ev, 0)
            if result is None:
                what = f"saturated with {self.wm.solid_info[s].id} " if s is not None else ""
                raise ConvergenceError(f"the water {what}at pH {pH:g} did not converge", field=None)
        x, I, s, k, ev, its = result
        iters += its
        conc_on = ev[2]
        conc = [0.0] * len(self.tab.species)
        dissolved = 0.0
        for i, am, c in zip(lay.species, lay.aM, conc_on):
            conc[i] = c
            dissolved += am * c
        above = with_metal and not dissolved <= MAX_DISSOLVED_M
        xfull = [-math.inf] * self.m
        xfull[0] = k.xH
        for p, j in enumerate(lay.U):
            xfull[j] = x[p]
        SI = {}
        if s is not None:
            xfull[jM] = (k.kS[s] - _lse_dot(lay.bU[s], x)) / lay.bM[s]
            for t in lay.solids:
                SI[t] = (_lse_dot(lay.bU[t], x) + lay.bM[t] * xfull[jM] - k.kS[t]) / LN10
        out = FixedPHState(pH=pH, I=I, x=xfull, conc=conc, lgc=k.lgc, lgs=k.lgs, solid=s, dissolved_M=dissolved,
                           SI=SI, iterations=iters, layout_key=present, above_limit=above)
        out._constants = k
        return out

    def _settle(self, lay, T, pH, x, I, s, varI, with_metal):
        """Newton from (x, I) with solid s, moving to a more oversaturated candidate until none is left.

        Returns (x, I, s, constants, evaluation, iterations) or None if Newton fails.
        """
        its_total = 0
        tried: list[int] = []
        for _switch in range(2 * len(lay.solids) + 2):
            x, I, k, ev, its, ok = self._newton(lay, T, pH, x, I, s, varI)
            its_total += its
            if not ok:
                return None
            if not with_metal:
                return x, I, s, k, ev, its_total
            xM = (k.kS[s] - _lse_dot(lay.bU[s], x)) / lay.bM[s]
            worst, si_max = None, SI_SWITCH
            for t in lay.solids:
                if t != s:
                    si = (_lse_dot(lay.bU[t], x) + lay.bM[t] * xM - k.kS[t]) / LN10
                    if si > si_max:
                        worst, si_max = t, si
            if worst is None:
                return x, I, s, k, ev, its_total
            tried.append(s)
            if tried.count(worst) > 1:
                raise ConvergenceError("the choice of the controlling solid cycled", field=None)
            s = worst
        raise ConvergenceError("the choice of the controlling solid did not settle", field=None)

    def _cold_start(self, lay, T, pH, I, with_metal):
        """The water without the metal at a fixed I (convex: converges from any start) and the
        candidate solid that needs the lowest free metal there."""
        key = ("metal-free", id(lay))
        free = self._layouts.get(key)
        if free is None:
            keep = [q for q, am in enumerate(lay.aM) if not am]
            free = _Layout(lay.U, [lay.species[q] for q in keep], [lay.coef[q] for q in keep],
                           [lay.aH[q] for q in keep], [0] * len(keep), [lay.z2[q] for q in keep],
                           [], {}, {}, {})
            free.lgk = [lay.lgk[q] for q in keep]
            self._layouts[key] = free
        x0 = [math.log(t) - 2.0 for t in T]
        x, I, k, ev, its, ok = self._newton(free, T, pH, x0, I, None, False, convex=True)
        if not ok:
            raise ConvergenceError(f"the water at pH {pH:g} did not converge", field=None)
        if not with_metal:
            return x, I, None, its
        kk = self._constants(lay, pH, I)
        s = min(lay.solids, key=lambda t: (kk.kS[t] - _lse_dot(lay.bU[t], x)) / lay.bM[t])
        return x, I, s, its


def candidate_solids(wm: WaterModel, metal: str) -> list[str]:
    """Ids of the database solids that hold ``metal`` (in database order).

    >>> from acidscape.science.tableau import IonInput, WaterModel
    >>> wm = WaterModel([], [IonInput("copper", "Cu+2", 2, 1e-6)], T=298.15, pKw=13.995)
    >>> candidate_solids(wm, "copper")
    ['tenorite', 'copper-hydroxide']
    """
    j = wm.comp_index[metal]
    return [wm.solid_info[s].id for s, sd in enumerate(wm.tab.solids) if dict(sd.stoich).get(j, 0) > 0]


def _reaction_row(entry, kind: str) -> dict:
    src = library.sources().get(entry.K_source)
    return {
        "id": entry.id,
        "kind": kind,
        "name": getattr(entry, "name", entry.formula),
        "formula": entry.formula,
        "reaction": library.reaction_text(entry),
        "log10_K_25C": entry.log10_K_25C,
        "log10_K_printed": entry.log10_K_printed,
        "log10_K_I_M": entry.log10_K_I_M,
        "log10_K_spread": list(entry.log10_K_spread) if entry.log10_K_spread else None,
        "source": src.text if src is not None else None,
        "provenance": entry.provenance,
        "note": entry.note,
    }


def constants_report(wm: WaterModel, metal: str, solids: list[str]) -> list[dict]:
    """The candidate solids and the metal's complexes in this water, with constants and sources."""
    j = wm.comp_index[metal]
    rows = [_reaction_row(wm.solid_info[wm.solid_index[s]], "solid") for s in solids]
    for i, cx in sorted(wm.complex_info.items()):
        if dict(wm.tab.species[i].stoich).get(j, 0):
            rows.append(_reaction_row(cx, "complex"))
    return rows


# --------------------------------------------------------------------------------------
# building the water


def _system_input(system_id: str, total_M: float, T: float, notes: list | None = None) -> SystemInput:
    """A library acid-base system as a tableau input at T (its temperature notes appended to ``notes``)."""
    system = library.get_system(system_id)
    pKa, got = temperature.pKa_at_with_notes(system, T)
    if notes is not None:
        notes.extend(got)
    return SystemInput(key=system.id, name=system.name, species=tuple(s.formula for s in system.species),
                       charges=tuple(s.charge for s in system.species), pKa=tuple(pKa), total_M=total_M,
                       ion_sizes=tuple(s.ion_size_A for s in system.species))


def temperature_notes(wm: WaterModel, species=(), solids=()) -> list[str]:
    """The temperature notes of the given complexes (species indices) and solids, one line per kind.

    >>> from acidscape.science.tableau import IonInput, WaterModel
    >>> wm = WaterModel([], [IonInput("copper", "Cu+2", 2, 1e-6)], T=283.15, pKw=14.53)
    >>> temperature_notes(wm, [i for i, sp in enumerate(wm.tab.species) if sp.name in ("CuOH+", "Cu(OH)2")])
    ['no reaction enthalpy is known for CuOH+, Cu(OH)2: their 25 °C constants are used at 10.0 °C']
    """
    raw = [n for i in species for n in getattr(wm, "species_notes", {}).get(i, [])]
    raw += [n for s in solids for n in getattr(wm, "solid_notes", {}).get(s, [])]
    plain, no_dH = [], {}
    for n in raw:
        name, sep, rest = n.partition(": no reaction enthalpy is known; ")
        if sep and " is used at " in rest:
            no_dH.setdefault(rest.rsplit(" is used at ", 1)[1], []).append(name)
        elif n not in plain:
            plain.append(n)
    for t, names in no_dH.items():
        plain.append(f"no reaction enthalpy is known for {', '.join(dict.fromkeys(names))}: their 25 °C "
                     f"constants are used at {t}")
    return plain


def metal_water(parsed, metal: str, need=()) -> tuple[WaterModel, list[str]]:
    """The WaterModel of a parsed water with ``metal`` as a component and closed to gas.

    Parameters
    ----------
    parsed : object
        The boundary's parsed scenario (``components``, ``ions``, ``T``, ``pKw``, ``model``,
        ``I_fixed``, ``complexes``, ``pH``, ``CO2_partial_pressure_atm``)
    metal : str
        ``"lead"`` or ``"copper"``
    need : tuple of str
        Systems that must be components even at zero total (an axis: carbonate, phosphate)

    Returns
    -------
    (WaterModel, notes)
    """
    if metal not in METALS:
        raise choice("metal", metal, METALS, UnknownIdError)
    notes = []
    systems = list(parsed.components)
    complexes = getattr(parsed, "complexes", True)
    if any(s.fixed_first_M is not None for s in systems):
        wm0 = WaterModel(systems, list(parsed.ions), T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                         complexes=complexes, I_fixed=parsed.I_fixed)
        sol0 = wm0.solve(pH=parsed.pH)
        closed = []
        for s in systems:
            if s.fixed_first_M is not None:
                tot = sol0.totals[wm0.comp_index[s.key]]
                closed.append(dataclasses.replace(s, total_M=tot, fixed_first_M=None))
                notes.append(f"water open to CO2: its {s.key} total at equilibrium ({tot * 1e3:.4g} mmol/L) is "
                             "held as the dissolved total")
            else:
                closed.append(s)
        systems = closed
    keys = {s.key for s in systems}
    for sid in need:
        if sid not in keys:
            systems.append(_system_input(sid, 0.0, parsed.T, notes))
    ion = library.get_ion(metal)
    ions = [i for i in parsed.ions if i.key != ion.id]
    if len(ions) < len(parsed.ions):
        notes.append(f"the water's own {metal} total is replaced by the solubility computed at each point")
    ions.append(IonInput(key=ion.id, name=ion.formula, charge=ion.charge, conc_M=0.0, ion_size_A=ion.ion_size_A))
    wm = WaterModel(systems, ions, T=parsed.T, pKw=parsed.pKw, model=parsed.model, complexes=complexes,
                    I_fixed=parsed.I_fixed)
    return wm, notes


def _water_pH(parsed) -> float:
    """The water's own pH: given, or from its charge balance (model)."""
    if parsed.pH is not None:
        return parsed.pH
    wm = WaterModel(list(parsed.components), list(parsed.ions), T=parsed.T, pKw=parsed.pKw, model=parsed.model,
                    complexes=getattr(parsed, "complexes", True), I_fixed=parsed.I_fixed)
    return wm.solve().pH


def with_orthophosphate(parsed, dose_M: float):
    """A copy of a parsed water with ``dose_M`` of orthophosphate added to its phosphate total.

    Parameters
    ----------
    parsed : object
        The boundary's parsed scenario (read by attribute; ``components``, ``T``)
    dose_M : float
        Orthophosphate added [mol/L] (as total phosphate, whatever chemical carries it)

    Returns
    -------
    (object, list of str)
        The water (a shallow copy; ``parsed`` is unchanged; ``parsed`` itself for a zero dose)
        and notes: what the water held before and what the curve uses

    Examples
    --------
    >>> from types import SimpleNamespace as NS
    >>> water = NS(components=[], T=298.15)
    >>> dosed, notes = with_orthophosphate(water, 3.2e-5)
    >>> [(c.key, c.total_M) for c in dosed.components], water.components
    ([('phosphate', 3.2e-05)], [])
    """
    import copy

    if not (dose_M >= 0.0 and math.isfinite(dose_M)):
        raise InputError(f"the orthophosphate dose must be 0 or more, got {dose_M!r}", field="orthophosphate_dose")
    if dose_M == 0.0:
        return parsed, []
    out = copy.copy(parsed)
    comps = list(parsed.components)
    notes: list[str] = []
    for k, c in enumerate(comps):
        if c.key == "phosphate":
            if c.fixed_first_M is not None:
                raise InputError("the water's phosphate is held by a fixed species; an orthophosphate dose cannot be "
                                 "added to it", field="orthophosphate_dose")
            comps[k] = dataclasses.replace(c, total_M=c.total_M + dose_M)
            notes.append(f"orthophosphate: the water's {c.total_M * 1e3:.4g} mmol/L plus a dose of "
                         f"{dose_M * 1e3:.4g} mmol/L")
            break
    else:
        comps.append(_system_input("phosphate", dose_M, parsed.T, notes))
        notes.append(f"orthophosphate: a dose of {dose_M * 1e3:.4g} mmol/L (the water held none)")
    out.components = comps
    return out, notes


# --------------------------------------------------------------------------------------
# the curve


def _grid(a: float, b: float, n: int) -> list[float]:
    if n == 1:
        return [a]
    step = (b - a) / (n - 1)
    out = [a + k * step for k in range(n)]
    out[-1] = b
    return out


def _band(solver: FixedPHSolver, st: FixedPHState, shifts_species, shifts_solids, sign: int):
    """Dissolved metal with the spread constants at one end, at the state's free ligands (trace)."""
    wm, tab = solver.wm, solver.tab
    lay = solver._layout(st.layout_key)
    if not lay.solids:
        return None, None
    base, kS = st._constants.base, st._constants.kS
    x = [st.x[j] for j in lay.U]
    best = None
    for t in lay.solids:
        d = shifts_solids.get(t)
        k = kS[t] + (LN10 * d[sign] if d else 0.0)
        xM = (k - _lse_dot(lay.bU[t], x)) / lay.bM[t]
        if best is None or xM < best[0]:
            best = (xM, t)
    xM, t = best
    total = 0.0
    metal_pos = getattr(lay, "metal_pos", None)
    if metal_pos is None:
        metal_pos = lay.metal_pos = [k for k, am in enumerate(lay.aM) if am]
    for k in metal_pos:
        am = lay.aM[k]
        d = shifts_species.get(lay.species[k])
        e = base[k] + (LN10 * d[sign] if d else 0.0) + _lse_dot(lay.coef[k], x) + am * xM
        total += am * math.exp(e)
    return total, wm.solid_info[t].id


def _spread_shifts(wm: WaterModel, jM: int):
    """(species index -> (lo - K25, hi - K25)), (solid index -> same) for the metal's constants."""
    sp_shift, sd_shift = {}, {}
    for i, cx in wm.complex_info.items():
        if dict(wm.tab.species[i].stoich).get(jM, 0) and cx.log10_K_spread:
            lo, hi = cx.log10_K_spread
            sp_shift[i] = (lo - cx.log10_K_25C, hi - cx.log10_K_25C)
    for s, sd in enumerate(wm.solid_info):
        if dict(wm.tab.solids[s].stoich).get(jM, 0) and sd.log10_K_spread:
            lo, hi = sd.log10_K_spread
            sd_shift[s] = (lo - sd.log10_K_25C, hi - sd.log10_K_25C)
    return sp_shift, sd_shift


def solubility_curve(parsed, metal: str, axis: str, start: float, stop: float, points: int, *,
                     fixed_pH: float | None = None, solids=None, check: bool = True) -> dict:
    """Dissolved lead or copper in equilibrium with the least soluble candidate solid, along a grid.

    Parameters
    ----------
    parsed : object
        The water (the boundary's parsed scenario; read by attribute)
    metal : str
        ``"lead"`` or ``"copper"``
    axis : str
        ``"pH"`` (at the water's DIC and orthophosphate), ``"DIC"`` or ``"orthophosphate"``
        (at ``fixed_pH``)
    start, stop : float
        Ends of the grid: pH [-], or the carbonate / phosphate total [mol/L]
    points : int
        Number of grid points [-]
    fixed_pH : float, optional
        pH of a DIC or orthophosphate grid [-] (default: the water's pH, given or computed)
    solids : list of str, optional
        Candidate solids (default: every database solid holding the metal)
    check : bool
        Check one point against the general model (default True)

    Returns
    -------
    dict
        ``metal``, ``axis``, ``fixed_pH``, ``points`` (each ``pH``, ``DIC_M``,
        ``orthophosphate_M``, ``dissolved_M``, ``dissolved_ug_per_L``, ``controlling_solid``,
        ``band_ug_per_L`` {low, high}, ``band_controlling_solid`` {low, high},
        ``ionic_strength_M``, ``species`` (main dissolved species and their share),
        ``SI`` (every candidate)), ``candidate_solids``, ``constants``, ``basis``,
        ``band_basis``, ``method``, ``model_check``, ``warnings``

    Examples
    --------
    Copper(II) hydroxide alone in carbonate-free water at pH 7 (ideal activities). By hand
    with the database constants: Cu+2 = 10^(8.67 - 14) = 10^-5.33, CuOH+ = 10^(-7.64 - 5.33 + 7)
    = 10^-5.97, Cu2(OH)2+2 = 10^(-10.43 - 10.66 + 14) = 10^-7.09 (two Cu each), Cu(OH)2 =
    10^(-16.24 - 5.33 + 14) = 10^-7.57; the sum, 5.94e-6 mol/L, is 10^-5.226.

    >>> from types import SimpleNamespace as NS
    >>> water = NS(components=[], ions=[], T=298.15, pKw=13.995, model="ideal", I_fixed=None,
    ...            complexes=True, pH=None, CO2_partial_pressure_atm=None)
    >>> out = solubility_curve(water, "copper", "pH", 7.0, 7.0, 1, solids=["copper-hydroxide"])
    >>> p = out["points"][0]
    >>> p["controlling_solid"], round(math.log10(p["dissolved_M"]), 3)
    ('copper-hydroxide', -5.226)
    """
    if axis not in AXES:
        raise choice("axis", axis, AXES, UnknownIdError)
    if not 1 <= points <= MAX_POINTS:
        raise InputError(f"The number of points must be from 1 to {MAX_POINTS} (you entered {points}).",
                         field="points")
    need = (AXIS_COMPONENT[axis],) if axis in AXIS_COMPONENT else ()
    wm, notes = metal_water(parsed, metal, need)
    warnings = list(getattr(parsed, "warnings", []) or []) + notes
    if getattr(parsed, "precipitate", ()):
        warnings.append("solids named in precipitate are not allowed to form here: only the candidate "
                        f"{metal} solids are considered")
    jM = wm.comp_index[metal]
    cand = candidate_solids(wm, metal) if solids is None else list(dict.fromkeys(solids))
    if not cand:
        raise InputError(f"No solid chosen holds {metal}; choose {metal} solids.", field="solids")
    solver = FixedPHSolver(wm, metal, cand)
    warnings.extend(temperature_notes(
        wm, [i for i, sp in enumerate(wm.tab.species) if sp.kind == "complex" and dict(sp.stoich).get(jM, 0)],
        solver.candidates))
    if axis == "pH":
        for v, f in ((start, "from"), (stop, "to")):
            if not PH_RANGE[0] <= v <= PH_RANGE[1]:
                raise InputError(f"The pH at the {'start' if f == 'from' else 'end'} of the axis must be from "
                                 f"{PH_RANGE[0]:g} to {PH_RANGE[1]:g} (you entered {v:g}).", field=f)
        pH_fixed = None
    else:
        for v, f in ((start, "from"), (stop, "to")):
            if not (v >= 0.0 and math.isfinite(v)) or v > MAX_TOTAL_M:
                raise InputError(f"The total at the {'start' if f == 'from' else 'end'} of the axis must be from 0 "
                                 f"to {MAX_TOTAL_M:g} mol/L.", field=f)
        pH_fixed = _water_pH(parsed) if fixed_pH is None else float(fixed_pH)
        if not PH_RANGE[0] <= pH_fixed <= PH_RANGE[1]:
            raise InputError(f"The pH of the water must be from {PH_RANGE[0]:g} to {PH_RANGE[1]:g} for this axis "
                             f"(it is {pH_fixed:.3g}).", field="fixed_pH")
    grid = _grid(start, stop, points)
    ion = library.get_ion(metal)
    mass = ion.molar_mass_g_per_mol
    sp_shift, sd_shift = _spread_shifts(wm, jM)
    jC = wm.comp_index.get("carbonate")
    jP = wm.comp_index.get("phosphate")
    jAxis = wm.comp_index[AXIS_COMPONENT[axis]] if axis in AXIS_COMPONENT else None
    metal_species = [(i, dict(sp.stoich)[jM], sp.name) for i, sp in enumerate(wm.tab.species)
                     if dict(sp.stoich).get(jM, 0)]
    out_points = []
    states = []
    st = None
    past: list = []
    for v in grid:
        totals = list(wm.totals)
        totals[jM] = 0.0
        pH = v if axis == "pH" else pH_fixed
        if jAxis is not None:
            totals[jAxis] = v
        st = solver.solve(pH, totals, start=past[0] if past else None, before=tuple(past[1:3]))
        past = [st] + past[:2]
        states.append((st, totals))
        row = _point_row(wm, solver, st, totals, jC, jP, mass, metal_species, sp_shift, sd_shift)
        if axis != "pH":
            row["axis_M"] = v
        out_points.append(row)
    above = [p for p in out_points if p["above_limit"]]
    if above:
        warnings.append(f"at {len(above)} point(s) the dissolved {metal} would exceed {MAX_DISSOLVED_M:g} mol/L "
                        f"({MAX_DISSOLVED_M * mass:.3g} g/L), far beyond the dilute waters the constants describe: "
                        "no value there (the solid named is the least soluble at the water's ligands)")
    controlling = {p["controlling_solid"] for p in out_points if p["dissolved_M"] is not None}
    if "chloropyromorphite" in controlling:
        warnings.append("chloropyromorphite, the least soluble lead phosphate of the database, controls where the "
                        "water holds chloride; lead-solubility work for orthophosphate treatment commonly uses "
                        "hydroxypyromorphite (Schock, Wagner & Oliphant 1996, from memory), which gives higher values: "
                        "name the candidate solids to compare")
    if metal == "copper" and controlling & {"tenorite", "malachite", "azurite"}:
        warnings.append("tenorite, malachite and azurite are aged copper scales; copper in new plumbing follows the "
                        "more soluble copper(II) hydroxide: name the candidate solids to compare")
    nobody = [p for p in out_points if p["controlling_solid"] is None]
    if nobody:
        warnings.append(f"at {len(nobody)} point(s) no candidate solid can form (a component it needs is "
                        "absent): no solubility there")
    model_check = None
    valued = [sv for sv in states if sv[0].solid is not None and not sv[0].above_limit]
    if check and valued:
        model_check = _model_check(wm, solver, *valued[len(valued) // 2])
    return {
        "metal": metal,
        "metal_name": ion.name,
        "axis": axis,
        "fixed_pH": pH_fixed,
        "temperature_C": parsed.T - 273.15,
        "activity": parsed.model,
        "points": out_points,
        "candidate_solids": cand,
        "constants": constants_report(wm, metal, cand),
        "basis": BASIS.format(metal=metal),
        "band_basis": BAND_BASIS,
        "method": ("minimum over the candidate solids: the water solved at fixed pH with the metal's free "
                   "concentration set by the least soluble solid (Newton's method on the mass balances), every "
                   "other candidate checked to be at SI <= 0"),
        "model_check": model_check,
        "warnings": warnings,
    }


def _point_row(wm, solver, st, totals, jC, jP, mass, metal_species, sp_shift, sd_shift) -> dict:
    solid = wm.solid_info[st.solid].id if st.solid is not None else None
    diss = st.dissolved_M if st.solid is not None and not st.above_limit else None
    lo = hi = lo_s = hi_s = None
    if diss is not None:
        lo, lo_s = _band(solver, st, sp_shift, sd_shift, 0)
        hi, hi_s = _band(solver, st, sp_shift, sd_shift, 1)
    species = []
    if diss:
        conc = st.conc
        shares = sorted(((am * conc[i] / diss, name) for i, am, name in metal_species if conc[i] > 0),
                        reverse=True)
        species = [{"name": n, "fraction": f} for f, n in shares[:4] if f >= 1e-3]
    return {
        "pH": st.pH,
        "DIC_M": totals[jC] if jC is not None else 0.0,
        "orthophosphate_M": totals[jP] if jP is not None else 0.0,
        "dissolved_M": diss,
        "dissolved_ug_per_L": diss * mass * 1e6 if diss is not None else None,
        "controlling_solid": solid,
        "band_ug_per_L": {"low": lo * mass * 1e6 if lo is not None else None,
                          "high": hi * mass * 1e6 if hi is not None else None},
        "band_controlling_solid": {"low": lo_s, "high": hi_s},
        "ionic_strength_M": st.I,
        "species": species,
        "SI": {wm.solid_info[s].id: v for s, v in st.SI.items()},
        "above_limit": st.above_limit,
    }


def _model_check(wm, solver, st, totals) -> dict | None:
    """The general model with the metal total = the dissolved metal found: SI of each candidate."""
    if st.solid is None:
        return None
    tot = list(totals)
    tot[solver.jM] = st.dissolved_M
    # at the point's ionic strength (one solve); the model's species must give that ionic strength back
    sol = equilibrium(wm.tab, tot, T=wm.T, gamma_of=wm.gamma_of, pH=st.pH, fixed_species={},
                      I_fixed=wm.I_fixed if wm.I_fixed is not None else st.I)
    jM = solver.jM
    held = sum(dict(sp.stoich).get(jM, 0) * c for sp, c in zip(wm.tab.species, sol.conc))
    I_species = 0.5 * sum(sp.charge ** 2 * c for sp, c in zip(wm.tab.species, sol.conc))
    return {
        "pH": st.pH,
        "SI": {wm.solid_info[s].id: sol.SI.get(s) for s in solver.candidates if s in sol.SI},
        "controlling_solid": wm.solid_info[st.solid].id,
        "ionic_strength_M": sol.I,
        "ionic_strength_relative_difference": (0.0 if solver.ideal or wm.I_fixed is not None
                                               else abs(I_species - st.I) / st.I),
        "dissolved_relative_difference": abs(held - st.dissolved_M) / st.dissolved_M,
    }
