"""One equilibrium model for a water: components, aqueous species and solids.

The water is written as a component-species tableau (Morel & Hering [1]_ ch. 2-3,
Stumm & Morgan [2]_). Components j are H+, the fully deprotonated base of every
acid-base system, and every free metal or strong ion. Every species i is a product
of components with a formation constant at the water's temperature (I = 0):

.. math::

    \\ln c_i = \\ln K_i + \\sum_j a_{ij} (\\ln c_j + \\ln\\gamma_j) - \\ln\\gamma_i,

and every component obeys its mass balance :math:`T_j = \\sum_i a_{ij} c_i + \\sum_s b_{sj} n_s`
(``n_s`` moles of solid per litre). The H+ row is the proton balance; when the pH is free it
is the charge balance in disguise: species charges are sums of component charges, so
electroneutrality is :math:`T_H = -\\sum_{j \\ne H} z_j T_j`.

Method
------
At fixed ionic strength the mass balances are the gradient of the convex function

.. math::

    F(x) = \\sum_i c_i(x) - \\sum_j T_j x_j, \\qquad x_j = \\ln c_j,

whose Hessian :math:`\\sum_i c_i a_i a_i^T` is a Gram matrix (the dual of Gibbs-energy
minimisation, Smith & Missen [3]_). Its unique minimum is the equilibrium. This module

1. eliminates every *simple* component (one whose species hold it once and otherwise only
   protons: each acid-base ladder, each non-reacting ion) in closed form: its part of ``F``
   minimised over its own variable is :math:`T_j \\ln S_j(x_H)` with
   :math:`S_j = \\sum_k K'_k e^{k x_H}`, a convex log-sum-exp whose derivatives are the proton
   moments (so a plain acid-base water is a one-unknown problem, as in the old charge balance);
2. writes every fixed quantity as an affine constraint on ``x`` — a given pH, a species held at
   a fixed concentration (CO2 from a gas), a solid at equilibrium (:math:`\\sum_j b_{sj}
   (x_j + \\ln\\gamma_j) = \\ln K_{sp}`) — and minimises ``F`` on that affine set
   (``x = x_0 + N y``); the Lagrange multipliers of the solid constraints are the amounts of
   solid (Bethke [4]_ ch. 4);
3. minimises by Newton's method with a step cap and an Armijo backtracking line search on
   ``F``, which converges from any start for a convex function bounded below [5]_; if it
   ever stalls, a cyclic one-coordinate search (each partial derivative is monotone in its
   own coordinate, bracketed and bisected) takes over: it cannot diverge;
4. iterates the ionic strength to self-consistency around the solve (plain substitution,
   then a bracketed bisection on ``I_computed(I) - I`` if substitution does not settle);
5. chooses which allowed solids are present by an active-set loop: add the most
   oversaturated allowed solid, drop any whose amount turns negative, repeat (at most as
   many solids as components: the phase rule).

Functions and classes
---------------------
Tableau(...)                  components, species and solids with constants at T
equilibrium(tableau, ...)     -> Solution: concentrations, pH, I, solids, SI, residuals

References
----------
.. [1] F. M. M. Morel, J. G. Hering, Principles and Applications of Aquatic Chemistry,
   Wiley, 1993, ch. 2-3 (tableau; Newton in log concentrations).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, 1996.
.. [3] W. R. Smith, R. W. Missen, Chemical Reaction Equilibrium Analysis, Wiley, 1982.
.. [4] C. M. Bethke, Geochemical and Biogeochemical Reaction Modeling, 2nd ed., Cambridge
   University Press, 2008, ch. 4 (solids as constraints; the phase rule).
.. [5] S. Boyd, L. Vandenberghe, Convex Optimization, Cambridge University Press, 2004,
   §9.5 (Newton's method with backtracking line search).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..constants import LN10
from ..errors import ConvergenceError, InputError

#: Relative tolerance on every mass balance at the answer (1e-12 is accepted where rounding stops Newton).
MASS_RTOL = 1e-15
#: Tolerance of the inner solves while the ionic strength is still moving.
LOOSE_RTOL = 1e-9
#: Relative tolerance on the ionic strength fixed point.
I_RTOL = 1e-11
#: Largest Newton step in any log-concentration [ln units] (about 4 decades).
STEP_CAP = 9.0
#: A solid counts as oversaturated above this saturation index.
SI_TOL = 1e-9


@dataclass(frozen=True)
class Species:
    """One aqueous species of the tableau.

    ``stoich`` maps component index -> coefficient; ``log10_K`` is its formation constant
    from the components at the water's temperature and I = 0.
    """

    name: str
    stoich: tuple[tuple[int, int], ...]
    log10_K: float
    charge: int
    ion_size_A: float | None = None
    kind: str = "complex"  # "acid-base" | "free ion" | "complex" | "water"
    system: str | None = None


@dataclass(frozen=True)
class Solid:
    """A solid: dissolution ``solid = sum b_j component_j`` with ``log10_Ksp`` at T."""

    id: str
    stoich: tuple[tuple[int, int], ...]
    log10_Ksp: float


@dataclass(frozen=True)
class Tableau:
    """Components (index 0 is H+), species and solids of one water at one temperature."""

    components: tuple[str, ...]
    charges: tuple[int, ...]
    ion_sizes: tuple[float | None, ...]
    species: tuple[Species, ...]
    solids: tuple[Solid, ...] = ()

    def __post_init__(self):
        if not self.components or self.components[0] != "H+":
            raise ValueError("component 0 must be H+")
        m = len(self.components)
        for sp in self.species:
            if sp.charge != sum(a * self.charges[j] for j, a in sp.stoich):
                raise ValueError(f"species {sp.name}: charge {sp.charge} is not the sum of its components'")
            if any(not 0 <= j < m for j, _ in sp.stoich):
                raise ValueError(f"species {sp.name} names a component out of range")
        for s in self.solids:
            if sum(b * self.charges[j] for j, b in s.stoich) != 0:
                raise ValueError(f"solid {s.id} is not neutral")
        # derived once: protons per species, and the solve's structure per pattern of inputs
        object.__setattr__(self, "h_count", tuple(dict(sp.stoich).get(0, 0) for sp in self.species))
        object.__setattr__(self, "_structures", {})


@dataclass
class Solution:
    """The equilibrium of a tableau."""

    tableau: Tableau
    pH: float
    I: float
    conc: list[float]            # per species [mol/L]
    log10_gamma: list[float]     # per species
    log10_gamma_comp: list[float]  # per component
    free_ln: list[float]         # ln free concentration per component (-inf when absent)
    totals: list[float]          # per component, as used [mol/L] (open-system totals filled in)
    solids: dict[int, float]     # solid index -> mol/L present
    SI: dict[int, float]         # solid index -> saturation index (every solid whose components are present)
    log10_IAP: dict[int, float]
    residuals: list[float]       # per component [mol/L]
    charge_residual: float       # [eq/L]
    iterations: int
    warnings: list[str] = field(default_factory=list)
    state: dict = field(default_factory=dict, repr=False)  # warm start for a next solve


# --------------------------------------------------------------------------------------
# small dense linear algebra (standard library only)


class Cholesky:
    """Jacobi-scaled Cholesky factor of a small symmetric positive (semi)definite matrix.

    Factor once, then :meth:`solve` for as many right-hand sides as needed. A diagonal matrix
    (components that share no species) is kept as its diagonal. A pivot that rounding has
    made slightly negative is raised to a tiny positive value; a clearly negative one means
    the matrix is not positive semidefinite: ``ok`` is False then (``strict`` raises
    ArithmeticError instead).
    """

    __slots__ = ("n", "d", "L", "diag", "ok")

    def __init__(self, A: list[list[float]], strict: bool = False):
        n = self.n = len(A)
        self.ok = True
        self.diag = None
        if all(not v for i, row in enumerate(A) for k, v in enumerate(row) if k != i):
            if all(row[i] > 0.0 for i, row in enumerate(A)):
                self.diag = [row[i] for i, row in enumerate(A)]
                return
        d = self.d = [math.sqrt(A[i][i]) if A[i][i] > 0 else 1.0 for i in range(n)]
        L = self.L = [[0.0] * n for _ in range(n)]
        for i in range(n):
            Ai, Li = A[i], L[i]
            for k in range(i + 1):
                Lk = L[k]
                s = Ai[k] / (d[i] * d[k])
                for p in range(k):
                    s -= Li[p] * Lk[p]
                if i == k:
                    if s <= 1e-14:
                        if s < -1e-8 or strict:
                            self.ok = False
                            if strict:
                                raise ArithmeticError("the matrix is not positive definite")
                            return
                        s = 1e-14
                    Li[i] = math.sqrt(s)
                else:
                    Li[k] = s / Lk[k]

    def solve(self, b: list[float]) -> list[float]:
        """x with A x = b."""
        if self.diag is not None:
            return [bi / di for bi, di in zip(b, self.diag)]
        n, d, L = self.n, self.d, self.L
        y = [0.0] * n
        for i in range(n):
            s = b[i] / d[i]
            Li = L[i]
            for p in range(i):
                s -= Li[p] * y[p]
            y[i] = s / Li[i]
        x = [0.0] * n
        for i in range(n - 1, -1, -1):
            s = y[i]
            for p in range(i + 1, n):
                s -= L[p][i] * x[p]
            x[i] = s / L[i][i]
        return [x[i] / d[i] for i in range(n)]


def _cholesky_solve(H: list[list[float]], b: list[float]) -> list[float] | None:
    """Solve H x = b for symmetric positive definite H; None if H is not."""
    f = Cholesky(H)
    return f.solve(b) if f.ok else None


def _lstsq(rows: list[list[float]], rhs: list[float], k: int) -> list[float]:
    """Least-squares solution of rows @ n = rhs with k unknowns (normal equations)."""
    M = [[sum(r[a] * r[b] for r in rows) for b in range(k)] for a in range(k)]
    v = [sum(r[a] * t for r, t in zip(rows, rhs)) for a in range(k)]
    out = _cholesky_solve(M, v)
    return out if out is not None else [0.0] * k


def _rref_nullspace(C: list[list[float]], d: list[float], n: int, prefer: list[int]):
    """Parametrise {x : C x = d} as x = x0 + N y.

    ``prefer`` orders the columns tried as pivots. Returns (x0, N (n x r), free columns,
    pivot columns) or None when the rows are linearly dependent.
    """
    A = [list(r) + [v] for r, v in zip(C, d)]
    pivots = []
    row = 0
    for col in prefer:
        if row == len(A):
            break
        best = max(range(row, len(A)), key=lambda r: abs(A[r][col]), default=None)
        if best is None or abs(A[best][col]) < 1e-12:
            continue
        A[row], A[best] = A[best], A[row]
        p = A[row][col]
        A[row] = [v / p for v in A[row]]
        for r in range(len(A)):
            if r != row and A[r][col] != 0.0:
                f = A[r][col]
                A[r] = [a - f * b for a, b in zip(A[r], A[row])]
        pivots.append(col)
        row += 1
    if row < len(A):
        return None
    free = [c for c in range(n) if c not in pivots]
    x0 = [0.0] * n
    for r, pc in enumerate(pivots):
        x0[pc] = A[r][n]
    N = [[0.0] * len(free) for _ in range(n)]
    for k, fc in enumerate(free):
        N[fc][k] = 1.0
        for r, pc in enumerate(pivots):
            N[pc][k] = -A[r][fc]
    return x0, N, free, pivots


# --------------------------------------------------------------------------------------
# the problem at one ionic strength and one set of constraints


class _Problem:
    """F on the affine set x = x0 + N y, with simple components eliminated."""

    __slots__ = ("r", "x0", "N", "free", "nH", "cs_lnK", "cs_a", "cs_nz", "ladders", "Tr", "T_simple",
                 "coupled", "cpl_species", "const")

    def __init__(self, coupled, cpl_species, lnKp, x_coeffs, ladders, T_simple, T_cpl, C, d, prefer):
        # coupled: component indices in the reduced x (0 = H+ first); x_coeffs[i]: dense coefficient
        # vector over coupled for coupled species i; ladders: per simple component a list of (k, lnK')
        nc = len(coupled)
        res = _rref_nullspace(C, d, nc, prefer) if C else ([0.0] * nc, [[1.0 if a == b else 0.0 for b in range(nc)]
                                                                          for a in range(nc)], list(range(nc)), [])
        if res is None:
            raise _Dependent()
        x0, N, free, _ = res
        r = len(free)
        self.r, self.x0, self.N, self.free = r, x0, N, free
        self.nH = N[0]  # H+ is coupled index 0
        self.coupled, self.cpl_species = coupled, cpl_species
        cs_lnK, cs_a = [], []
        for i, a in zip(cpl_species, x_coeffs):
            base = lnKp[i] + sum(ak * xk for ak, xk in zip(a, x0) if ak)
            cs_lnK.append(base)
            cs_a.append([sum(a[k] * N[k][q] for k in range(nc) if a[k]) for q in range(r)])
        self.cs_lnK, self.cs_a = cs_lnK, cs_a
        self.cs_nz = [[(q, aq) for q, aq in enumerate(a) if aq] for a in cs_a]
        self.ladders, self.T_simple = ladders, T_simple
        self.Tr = [sum(T_cpl[k] * N[k][q] for k in range(nc)) for q in range(r)]
        self.const = sum(T_cpl[k] * x0[k] for k in range(nc))

    def xH(self, y):
        return self.x0[0] + sum(a * b for a, b in zip(self.nH, y))

    def evaluate(self, y, want_hess=True):
        """F, gradient, Hessian (or None) and per-coordinate residual scale at y."""
        r = self.r
        exp = math.exp
        F = -self.const - sum(t * v for t, v in zip(self.Tr, y))
        g = [-t for t in self.Tr]
        scale = [abs(t) for t in self.Tr]
        H = [[0.0] * r for _ in range(r)] if want_hess else None
        for lnK, nz in zip(self.cs_lnK, self.cs_nz):
            e = lnK
            for q, aq in nz:
                e += aq * y[q]
            if e > 700.0:
                return math.inf, None, None, None
            c = exp(e)
            F += c
            for q, aq in nz:
                v = aq * c
                g[q] += v
                scale[q] += abs(v)
                if want_hess:
                    Hq = H[q]
                    for s, as_ in nz:
                        if s <= q:
                            Hq[s] += v * as_
        if self.ladders:
            xH = self.xH(y)
            m1 = m2 = Fs = sabs = 0.0
            for T, lad in zip(self.T_simple, self.ladders):
                if len(lad) == 1:
                    k, lnK = lad[0]
                    Fs += T * (lnK + k * xH)
                    m1 += T * k
                    sabs += T * abs(k)
                    continue
                es = [lnK + k * xH for k, lnK in lad]
                top = max(es)
                w = [exp(e - top) for e in es]
                S = sum(w)
                mean = sum(k * wi for (k, _), wi in zip(lad, w)) / S
                var = sum(k * k * wi for (k, _), wi in zip(lad, w)) / S - mean * mean
                Fs += T * (top + math.log(S))
                m1 += T * mean
                m2 += T * max(var, 0.0)
                sabs += T * abs(mean)
            F += Fs
            for q in range(r):
                nq = self.nH[q]
                if nq:
                    g[q] += m1 * nq
                    scale[q] += sabs * abs(nq)
                    if want_hess:
                        Hq = H[q]
                        for s in range(q + 1):
                            if self.nH[s]:
                                Hq[s] += m2 * nq * self.nH[s]
        if want_hess:
            for q in range(r):
                for s in range(q):
                    H[s][q] = H[q][s]
        return F, g, H, scale


class _Dependent(Exception):
    """The constraints are linearly dependent (a solid that the phase rule excludes)."""


def _converged(g, scale, rtol: float = MASS_RTOL) -> bool:
    return all(abs(gq) <= rtol * sq + 1e-300 for gq, sq in zip(g, scale))


def _newton(prob: _Problem, y: list[float], max_iter: int = 200,
            rtol: float = MASS_RTOL) -> tuple[list[float], int, bool]:
    """Damped Newton with Armijo backtracking on F. Returns (y, iterations, converged)."""
    r = prob.r
    if r == 0:
        return y, 0, True
    F, g, H, scale = prob.evaluate(y)
    if not math.isfinite(F):
        return y, 0, False
    for it in range(1, max_iter + 1):
        if _converged(g, scale, rtol):
            return y, it, True
        step = _cholesky_solve(H, [-v for v in g])
        if step is None or not all(math.isfinite(s) for s in step):
            return y, it, False
        big = max(abs(s) for s in step)
        if big > STEP_CAP:
            step = [s * STEP_CAP / big for s in step]
        slope = sum(a * b for a, b in zip(g, step))
        if slope >= 0:
            return y, it, False
        t = 1.0
        while True:
            yn = [a + t * b for a, b in zip(y, step)]
            Fn, gn, Hn, sn = prob.evaluate(yn)
            if Fn <= F + 1e-4 * t * slope:
                break
            # near the answer F is flat to rounding: accept a step that shrinks the residual
            if math.isfinite(Fn) and abs(Fn - F) <= 1e-15 * (abs(F) + 1.0) and \
                    max(abs(v) / (s + 1e-300) for v, s in zip(gn, sn)) < max(abs(v) / (s + 1e-300) for v, s in zip(g, scale)):
                break
            t *= 0.5
            if t < 1e-12:
                return y, it, _converged(g, scale, max(rtol, 1e3 * MASS_RTOL))
        res_old = max(abs(v) / (s + 1e-300) for v, s in zip(g, scale))
        y, F, g, H, scale = yn, Fn, gn, Hn, sn
        res = max(abs(v) / (s + 1e-300) for v, s in zip(g, scale))
        if res > 0.5 * res_old and res <= 1e3 * MASS_RTOL:
            return y, it, True  # rounding, not the method, now limits the residual
    return y, max_iter, _converged(g, scale, rtol)


def _coordinate_search(prob: _Problem, y: list[float], sweeps: int = 400) -> tuple[list[float], bool]:
    """Fallback: cyclic exact minimisation along each coordinate (bracket + bisection).

    Each partial derivative of the convex F is non-decreasing along its own coordinate,
    so every one-dimensional search is a bracketed root and cannot diverge.
    """
    y = list(y)
    for _ in range(sweeps):
        for q in range(prob.r):
            def dq(v):
                yy = y[:]
                yy[q] = v
                F, g, _, _ = prob.evaluate(yy, want_hess=False)
                return g[q] if g is not None else math.inf
            lo, hi = y[q] - 1.0, y[q] + 1.0
            while dq(lo) > 0 and lo > -1e4:
                lo -= 2 * (hi - lo)
            while dq(hi) < 0 and hi < 1e4:
                hi += 2 * (hi - lo)
            for _ in range(200):
                mid = 0.5 * (lo + hi)
                if dq(mid) > 0:
                    hi = mid
                else:
                    lo = mid
                if hi - lo < 1e-15 * max(1.0, abs(mid)):
                    break
            y[q] = 0.5 * (lo + hi)
        _, g, _, scale = prob.evaluate(y, want_hess=False)
        if g is not None and _converged(g, [s * 10 for s in scale]):
            return y, True
    return y, False


# --------------------------------------------------------------------------------------
# the public solve


def equilibrium(
    tab: Tableau,
    totals: list[float],
    *,
    T: float,
    gamma_of,
    pH: float | None = None,
    fixed_species: dict[int, float] | None = None,
    allow_solids: tuple[int, ...] = (),
    I_fixed: float | None = None,
    guess: dict | None = None,
) -> Solution:
    """Equilibrium of a tableau with its totals.

    Parameters
    ----------
    tab : Tableau
        Components, species (constants at ``T``, I = 0) and solids
    totals : list of float
        Total of each component [mol/L]; the H+ entry is ignored when the pH is free (the
        charge balance sets it) or given
    T : float
        Temperature [K] (for the record; constants are already at T)
    gamma_of : callable
        ``lg(z, ion_size_A, I) -> log10 gamma`` (:func:`acidscape.science.activity.gamma_function`)
    pH : float, optional
        Hold pH = -log10 a(H+) at this value [-] instead of closing the charge balance
    fixed_species : dict, optional
        Species index -> concentration held fixed [mol/L] (a gas in equilibrium: H2CO3*). The
        totals of its non-H component then follow (it must be neutral and hold one other component)
    allow_solids : tuple of int
        Indices of solids allowed to precipitate or dissolve to equilibrium
    I_fixed : float, optional
        Ionic strength held fixed [mol/L]
    guess : dict, optional
        ``Solution.state`` of an earlier, similar solve (warm start)

    Returns
    -------
    Solution

    Examples
    --------
    Pure water at 25 °C (pKw 13.995, ideal activities): pH 6.998.

    >>> tab = Tableau(("H+",), (1,), (9.0,), (Species("H+", ((0, 1),), 0.0, 1, kind="water"),
    ...               Species("OH-", ((0, -1),), -13.995, -1, kind="water")))
    >>> from acidscape.science.activity import gamma_function
    >>> round(equilibrium(tab, [0.0], T=298.15, gamma_of=gamma_function(298.15, "ideal")).pH, 4)
    6.9975
    """
    m = len(tab.components)
    fixed_species = dict(fixed_species or {})
    totals = [float(t) for t in totals]
    if len(totals) != m:
        raise ValueError("one total per component")
    for j in range(1, m):
        if not (totals[j] >= 0.0) or not math.isfinite(totals[j]):
            raise InputError(f"total of {tab.components[j]} must be a finite, non-negative concentration",
                             field=None)
    # components whose total follows a fixed species (open system)
    open_comp = set()
    for i in fixed_species:
        sp = tab.species[i]
        others = [j for j, a in sp.stoich if j != 0]
        if sp.charge != 0 or len(others) != 1:
            raise ValueError(f"fixed species {sp.name} must be neutral and hold one component besides H+")
        open_comp.add(others[0])
    # absent components: total zero (and not opened); their species and solids drop out
    present = tuple(j == 0 or totals[j] > 0.0 or j in open_comp for j in range(m))
    key = (present, frozenset(open_comp), tuple(allow_solids))
    structure = tab._structures.get(key)
    if structure is None:
        structure = _structure(tab, present, open_comp, allow_solids)
        if len(tab._structures) < 256:
            tab._structures[key] = structure
    species_on, solids_on, allowed, simple, coupled, cidx, ladder_of, cpl_species, x_coeffs, prefer = structure
    # charge balance: T_H = -sum z_j T_j (open components contribute nothing, see module notes)
    if pH is None:
        totals[0] = -sum(tab.charges[j] * totals[j] for j in range(1, m) if j not in open_comp)
    warnings: list[str] = []
    T_cpl = [totals[j] if j not in open_comp else 0.0 for j in coupled]
    if pH is not None:
        T_cpl[0] = 0.0
    T_simple = [totals[j] for j in simple]

    Imodel_ideal = gamma_of(1, None, 0.1) == 0.0
    strong_I = 0.0
    I = I_fixed if I_fixed is not None else (guess or {}).get("I", None)
    if I is None:
        I = 0.5 * sum(tab.charges[j] ** 2 * totals[j] for j in range(1, m) if j not in open_comp)
    x_state = dict((guess or {}).get("x", {}))  # component index -> ln free conc
    active = [s for s in (guess or {}).get("active", []) if s in allowed]
    total_iters = 0
    I_hist: list[tuple[float, float]] = []

    def solve_at(I, rtol=MASS_RTOL):
        """Solve at ionic strength I with the active-set loop; returns internal state."""
        nonlocal total_iters, active
        lgc = [gamma_of(tab.charges[j], tab.ion_sizes[j], I) for j in range(m)]
        lgs = [gamma_of(sp.charge, sp.ion_size_A, I) for sp in tab.species]
        lnKp = [LN10 * (sp.log10_K + sum(a * lgc[j] for j, a in sp.stoich) - lgs[i])
                for i, sp in enumerate(tab.species)]
        hc = tab.h_count
        ladders = [[(hc[i], lnKp[i]) for i in ladder_of[j]] for j in simple]
        seen = set()
        for _round in range(4 * len(tab.solids) + 8):
            C, d = [], []
            if pH is not None:
                row = [0.0] * len(coupled)
                row[0] = 1.0
                C.append(row)
                d.append(LN10 * (-pH - lgc[0]))
            for i, conc in fixed_species.items():
                row = [0.0] * len(coupled)
                for j, a in tab.species[i].stoich:
                    row[cidx[j]] = float(a)
                C.append(row)
                d.append(math.log(conc) - lnKp[i] if conc > 0 else -700.0)
            for s in active:
                row = [0.0] * len(coupled)
                for j, b in tab.solids[s].stoich:
                    row[cidx[j]] = float(b)
                C.append(row)
                d.append(LN10 * (tab.solids[s].log10_Ksp - sum(b * lgc[j] for j, b in tab.solids[s].stoich)))
            try:
                prob = _Problem(coupled, cpl_species, lnKp, x_coeffs, ladders, T_simple, T_cpl, C, d, prefer)
            except _Dependent:
                dropped = active.pop()
                warnings.append(f"{tab.solids[dropped].id} was left out: with the other solids present it "
                                "would break the phase rule")
                continue
            y = _start(prob, coupled, x_state, totals, pH, lgc, tab, species_on, lnKp)
            y, its, ok = _newton(prob, y, rtol=rtol)
            total_iters += its
            if not ok:
                y, ok = _coordinate_search(prob, y)
                if not ok:
                    raise ConvergenceError("the equilibrium search did not converge", field=None)
            x = [a + sum(n * v for n, v in zip(row, y)) for a, row in zip(prob.x0, prob.N)]
            st = _assemble(tab, totals, coupled, x, simple, ladder_of, lnKp, lgc, lgs, species_on, open_comp, pH)
            x_state.update((j, v) for j, v in enumerate(st["ln_free"]) if v > -math.inf)
            # amounts of the active solids from the mass balances they close
            amounts = _amounts(tab, active, st["resid"], coupled, open_comp, pH, totals)
            neg = [(n, s) for s, n in zip(active, amounts) if n < -1e-13 * max(1e-30, max(totals[1:] or [0]))]
            if neg:
                active.remove(min(neg)[1])
                continue
            si = _saturation(tab, st["ln_free"], lgc, solids_on)
            cand = [(si[s], s) for s in allowed if s not in active and si[s] > SI_TOL]
            if cand:
                best = max(cand)[1]
                key = (tuple(sorted(active)), best)
                if key in seen:
                    warnings.append("the choice of solids cycled; the last consistent set is reported")
                    break
                seen.add(key)
                active.append(best)
                continue
            st["amounts"] = dict(zip(active, amounts))
            st["rtol"] = rtol
            st["SI"] = si
            st["lgc"], st["lgs"] = lgc, lgs
            return st
        st["amounts"] = dict(zip(active, _amounts(tab, active, st["resid"], coupled, open_comp, pH, totals)))
        st["rtol"] = rtol
        st["SI"] = _saturation(tab, st["ln_free"], lgc, solids_on)
        st["lgc"], st["lgs"] = lgc, lgs
        return st

    def I_of(st):
        return 0.5 * sum(sp.charge ** 2 * c for sp, c in zip(tab.species, st["conc"]))

    if I_fixed is None and not Imodel_ideal:
        # Substitution, accelerated by secant steps on h(I) = I_computed(I) - I once two points
        # are known; the inner solves are loose until I has settled, then one tight solve.
        st = solve_at(I, LOOSE_RTOL)
        settled = False
        prev = None
        for _ in range(60):
            I_new = I_of(st)
            h = I_new - I
            I_hist.append((I, I_new))
            if abs(h) <= I_RTOL * max(I_new, 1e-14):
                settled = True
                break
            nxt = I_new
            if prev is not None and h != prev[1]:
                sec = I - h * (I - prev[0]) / (h - prev[1])
                if 0.5 * min(I, I_new) <= sec <= 2.0 * max(I, I_new):
                    nxt = sec
            prev = (I, h)
            I = nxt
            # loose inner solves while I moves; tight ones once it has nearly settled
            st = solve_at(I, LOOSE_RTOL if abs(h) > 1e-7 * max(I_new, 1e-14) else MASS_RTOL)
        if not settled:
            # bracketed bisection on h(I) = I_computed(I) - I
            lo, hi = 0.0, max(max(a, b) for a, b in I_hist) * 2 + 1e-12
            st_lo = solve_at(lo, LOOSE_RTOL)
            h_lo = I_of(st_lo) - lo
            for _ in range(200):
                mid = 0.5 * (lo + hi)
                st = solve_at(mid, LOOSE_RTOL)
                h = I_of(st) - mid
                if (h > 0) == (h_lo > 0):
                    lo, h_lo = mid, h
                else:
                    hi = mid
                if hi - lo <= I_RTOL * max(hi, 1e-14):
                    break
            I = 0.5 * (lo + hi)
            st = solve_at(I)
        elif st["rtol"] != MASS_RTOL:
            st = solve_at(I)
    else:
        st = solve_at(I)
        if I_fixed is None:
            I = I_of(st)

    conc = st["conc"]
    lgc, lgs = st["lgc"], st["lgs"]
    pH_out = -(st["ln_free"][0] / LN10 + lgc[0])
    log10_IAP = {s: v + tab.solids[s].log10_Ksp for s, v in st["SI"].items()}
    charge_res = sum(sp.charge * c for sp, c in zip(tab.species, conc))
    used_totals, residuals = st["finish"](st["amounts"])
    return Solution(
        tableau=tab, pH=pH_out, I=I, conc=conc, log10_gamma=lgs, log10_gamma_comp=lgc,
        free_ln=st["ln_free"], totals=used_totals, solids=st["amounts"], SI=st["SI"], log10_IAP=log10_IAP,
        residuals=residuals, charge_residual=charge_res,
        iterations=total_iters, warnings=warnings,
        state={"x": dict(x_state), "I": I, "active": list(st["amounts"])},
    )


def _structure(tab: Tableau, present, open_comp, allow_solids):
    """Which species and solids are on, which components are simple, and the coupled problem's shape."""
    m = len(tab.components)
    species_on = [all(present[j] for j, _ in sp.stoich) for sp in tab.species]
    solids_on = [all(present[j] for j, _ in s.stoich) for s in tab.solids]
    for s in allow_solids:
        if not solids_on[s]:
            raise InputError(f"{tab.solids[s].id} cannot form: the water holds none of "
                             + ", ".join(tab.components[j] for j, _ in tab.solids[s].stoich if not present[j]),
                             field="precipitate")
    allowed = [s for s in allow_solids if solids_on[s]]
    in_constraint = set(open_comp)
    for s in allowed:
        in_constraint.update(j for j, _ in tab.solids[s].stoich if j != 0)
    # a component is simple when every species holding it holds it once and otherwise only H+
    not_simple = set(in_constraint)
    for sp, on in zip(tab.species, species_on):
        if not on:
            continue
        comps = [j for j, _ in sp.stoich if j != 0]
        if len(comps) > 1 or any(a != 1 for j, a in sp.stoich if j != 0):
            not_simple.update(comps)
    simple = [j for j in range(1, m) if present[j] and j not in not_simple]
    simple_set = set(simple)
    coupled = [j for j in range(m) if present[j] and j not in simple_set]  # H+ first
    cidx = {j: k for k, j in enumerate(coupled)}
    ladder_of = {j: [] for j in simple}
    cpl_species = []
    for i, (sp, on) in enumerate(zip(tab.species, species_on)):
        if not on:
            continue
        owner = next((j for j, _ in sp.stoich if j in simple_set), None)
        if owner is not None:
            ladder_of[owner].append(i)
        else:
            cpl_species.append(i)
    x_coeffs = []
    for i in cpl_species:
        v = [0.0] * len(coupled)
        for j, a in tab.species[i].stoich:
            v[cidx[j]] = float(a)
        x_coeffs.append(v)
    # pivot preference: open components, then other non-H, H+ last
    prefer = [cidx[j] for j in coupled if j in open_comp] + \
             [cidx[j] for j in coupled if j not in open_comp and j != 0] + [0]
    return species_on, solids_on, allowed, simple, coupled, cidx, ladder_of, cpl_species, x_coeffs, prefer


def _start(prob: _Problem, coupled, x_state, totals, pH, lgc, tab, species_on, lnKp) -> list[float]:
    """Initial y: the last answer where known; else pH 7 (or the given pH) and each component
    spread over its own protonated forms at that pH, as if it formed no complex."""
    xH = x_state.get(0, LN10 * (-(pH if pH is not None else 7.0) - lgc[0]))
    x_guess = []
    for k, j in enumerate(coupled):
        if j in x_state:
            x_guess.append(x_state[j])
        elif j == 0:
            x_guess.append(xH)
        else:
            es = [lnKp[i] + dict(sp.stoich).get(0, 0) * xH for i, sp in enumerate(tab.species)
                  if species_on[i] and dict(sp.stoich).get(j) == 1 and all(c in (0, j) for c, _ in sp.stoich)]
            top = max(es) if es else 0.0
            lnS = top + math.log(sum(math.exp(e - top) for e in es)) if es else 0.0
            x_guess.append(math.log(max(totals[j], 1e-300)) - lnS)
    # y is x at the free coordinates (N holds an identity row there)
    return [x_guess[k] for k in prob.free]


def _assemble(tab, totals, coupled, x, simple, ladder_of, lnKp, lgc, lgs, species_on, open_comp, pH) -> dict:
    """Concentrations of every species, free concentrations and balances at the answer."""
    m = len(tab.components)
    ln_free = [-math.inf] * m
    for k, j in enumerate(coupled):
        ln_free[j] = x[k]
    xH = ln_free[0]
    conc = [0.0] * len(tab.species)
    for i, sp in enumerate(tab.species):
        if species_on[i] and all(j not in simple for j, _ in sp.stoich):
            conc[i] = math.exp(lnKp[i] + sum(a * ln_free[j] for j, a in sp.stoich))
    for j in simple:
        idx = ladder_of[j]
        es = [lnKp[i] + tab.h_count[i] * xH for i in idx]
        top = max(es)
        lnS = top + math.log(sum(math.exp(e - top) for e in es))
        ln_free[j] = math.log(totals[j]) - lnS
        for i, e in zip(idx, es):
            conc[i] = math.exp(math.log(totals[j]) + e - lnS)
    held = [0.0] * m
    for sp, c in zip(tab.species, conc):
        for j, a in sp.stoich:
            held[j] += a * c
    resid = list(totals)
    for j in range(m):
        if j in open_comp or (j == 0 and pH is not None):
            resid[j] = 0.0  # set by the answer, not by a given total
        else:
            resid[j] = totals[j] - held[j]

    def finish(amounts):
        """Totals as used (open and fixed-pH rows filled in) and mass-balance residuals."""
        in_solid = [0.0] * m
        for s, n in amounts.items():
            for j, b in tab.solids[s].stoich:
                in_solid[j] += b * n
        tot = list(totals)
        for j in open_comp:
            tot[j] = held[j] + in_solid[j]
        if pH is not None:
            tot[0] = held[0] + in_solid[0]
        elif open_comp:
            tot[0] = -sum(tab.charges[j] * tot[j] for j in range(1, m))
        return tot, [t - h - s for t, h, s in zip(tot, held, in_solid)]

    return {"conc": conc, "ln_free": ln_free, "resid": resid, "finish": finish}


def _amounts(tab, active, resid, coupled, open_comp, pH, totals) -> list[float]:
    """Moles of each active solid per litre: least squares over the balanced components,
    each balance weighted by its own size so that a trace metal closes as well as a major ion."""
    if not active:
        return []
    rows, rhs = [], []
    for j in coupled:
        if j in open_comp or (j == 0 and pH is not None):
            continue
        w = 1.0 / max(abs(totals[j]), abs(resid[j]), 1e-300)
        rows.append([w * float(dict(tab.solids[s].stoich).get(j, 0)) for s in active])
        rhs.append(w * resid[j])
    return _lstsq(rows, rhs, len(active))


def _saturation(tab, ln_free, lgc, solids_on) -> dict[int, float]:
    """SI = log10 IAP - log10 Ksp of every solid whose components are present."""
    out = {}
    for s, (solid, on) in enumerate(zip(tab.solids, solids_on)):
        if on:
            out[s] = sum(b * (ln_free[j] / LN10 + lgc[j]) for j, b in solid.stoich) - solid.log10_Ksp
    return out
