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

Speed (the same arithmetic, done once or unrolled)
--------------------------------------------------
Everything that depends only on which species, solids and constraints are in play is found
once and cached with the tableau: the structure of a pattern of present components (which
components are simple, which coupled), and for each pattern of constraints (pH held, fixed
species, active solids) its *skeleton*: the null space N, the map from the constraints'
right-hand sides to x0, and each coupled species' coefficients and Hessian entries over y.
Activity coefficients are computed once per distinct (charge, ion size) and ln K' once per
distinct set of (activity, coefficient) terms. A skeleton used more than a few times has its
evaluation of F, gradient, residual scale and Hessian compiled to straight-line Python, and
the Cholesky factor and solve are compiled per dimension: CPython spends most of a small
sparse evaluation on loop overhead, not arithmetic; so are the eliminated components' ladder
sums, per pattern of protons (and, with the pH held, they are a constant computed once). The
compiled code performs the same operations in the same order as the loops it replaces
(``tests/test_model.py`` checks that the numbers are identical), so the answers do not depend
on it. These caches live on the tableau, which :class:`acidscape.science.tableau.WaterModel`
shares between waters of the same make-up. A ``guess`` (an earlier state, or a measured
water's settled ionic strength) only shortens the iteration; at another given pH each
component's free concentration is first moved with its own protonated forms.

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
        object.__setattr__(self, "_constants", {})
        object.__setattr__(self, "z2", tuple(sp.charge * sp.charge for sp in self.species))
        object.__setattr__(self, "log10_K", tuple(sp.log10_K for sp in self.species))
        object.__setattr__(self, "stoichs", tuple(sp.stoich for sp in self.species))
        # activity coefficients are computed once per distinct (charge, ion size)
        keys: dict = {}
        comp_gkey = tuple(keys.setdefault((z, a), len(keys)) for z, a in zip(self.charges, self.ion_sizes))
        species_gkey = tuple(keys.setdefault((sp.charge, sp.ion_size_A), len(keys)) for sp in self.species)
        object.__setattr__(self, "gamma_keys", tuple(keys))
        terms: dict = {}
        species_shift = tuple(terms.setdefault(tuple((comp_gkey[j], a) for j, a in sp.stoich), len(terms))
                              for sp in self.species)
        object.__setattr__(self, "shift_terms", tuple(terms))
        # per component: the species holding it once and otherwise only H+ (index, protons)
        own: dict = {j: [] for j in range(m)}
        for i, sp in enumerate(self.species):
            st = dict(sp.stoich)
            others = [j for j in st if j != 0]
            if len(others) == 1 and st[others[0]] == 1:
                own[others[0]].append((i, st.get(0, 0)))
        object.__setattr__(self, "own_species", own)
        object.__setattr__(self, "species_shift", species_shift)
        object.__setattr__(self, "comp_gkey", comp_gkey)
        object.__setattr__(self, "species_gkey", species_gkey)


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

    __slots__ = ("n", "d", "L", "diag", "ok", "flat", "code")

    def __init__(self, A: list[list[float]], strict: bool = False, compiled: bool = True):
        n = self.n = len(A)
        self.ok = True
        self.diag = None
        self.flat = None
        if all(not v for i, row in enumerate(A) for k, v in enumerate(row) if k != i):
            if all(row[i] > 0.0 for i, row in enumerate(A)):
                self.diag = [row[i] for i, row in enumerate(A)]
                return
        if compiled and n <= COMPILED_CHOLESKY_MAX:
            # the same loops below, unrolled for this dimension (_compile_cholesky)
            factor, self.code = _compile_cholesky(n)
            self.flat = factor(A, strict)
            if self.flat is None:
                self.ok = False
                if strict:
                    raise ArithmeticError("the matrix is not positive definite")
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
        if self.flat is not None:
            return self.code(self.flat, b)
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


#: Largest dimension whose Cholesky factor is compiled to straight-line code.
COMPILED_CHOLESKY_MAX = 16
#: Compiled factor and solve of a dense Cholesky, by dimension (see :func:`_compile_cholesky`).
_CHOLESKY_CODE: dict = {}


def _compile_cholesky(n: int):
    """Straight-line factor and solve of an n x n Jacobi-scaled Cholesky factor.

    The same operations in the same order as the loops of :class:`Cholesky` (the same
    numbers); the factor returns a flat list ``d_0..d_n-1, L_00, L_10, L_11, ...`` or None for
    a matrix that is not positive semidefinite (a pivot below -1e-8, or below 1e-14 with
    ``strict``).
    """
    hit = _CHOLESKY_CODE.get(n)
    if hit is not None:
        return hit
    names = [f"d{i}" for i in range(n)] + [f"L{i}_{k}" for i in range(n) for k in range(i + 1)]
    F = ["def _factor(A, strict):"]
    F.append("    " + "".join(f"A{i}, " for i in range(n)) + "= A")
    for i in range(n):
        F.append(f"    a = A{i}[{i}]")
        F.append(f"    d{i} = sqrt(a) if a > 0 else 1.0")
    for i in range(n):
        for k in range(i + 1):
            expr = f"A{i}[{k}] / (d{i} * d{k})" + "".join(f" - L{i}_{p} * L{k}_{p}" for p in range(k))
            F.append(f"    s = {expr}")
            if i == k:
                F.append("    if s <= 1e-14:")
                F.append("        if s < -1e-8 or strict:")
                F.append("            return None")
                F.append("        s = 1e-14")
                F.append(f"    L{i}_{i} = sqrt(s)")
            else:
                F.append(f"    L{i}_{k} = s / L{k}_{k}")
    F.append("    return [" + ", ".join(names) + "]")
    S = ["def _solve(f, b):"]
    S.append("    " + "".join(f"{v}, " for v in names) + "= f")
    for i in range(n):
        expr = f"b[{i}] / d{i}" + "".join(f" - L{i}_{p} * y{p}" for p in range(i))
        S.append(f"    y{i} = ({expr}) / L{i}_{i}")
    for i in range(n - 1, -1, -1):
        expr = f"y{i}" + "".join(f" - L{p}_{i} * x{p}" for p in range(i + 1, n))
        S.append(f"    x{i} = ({expr}) / L{i}_{i}")
    S.append("    return [" + ", ".join(f"x{i} / d{i}" for i in range(n)) + "]")
    env = {"sqrt": math.sqrt}
    exec(compile("\n".join(F + S) + "\n", "<acidscape.science.model cholesky>", "exec"), env)  # noqa: S102
    hit = _CHOLESKY_CODE[n] = (env["_factor"], env["_solve"])
    return hit


def _cholesky_solve(H: list[list[float]], b: list[float]) -> list[float] | None:
    """Solve H x = b for symmetric positive definite H; None if H is not."""
    f = Cholesky(H)
    return f.solve(b) if f.ok else None


def _lstsq(rows: list[list[float]], rhs: list[float], k: int) -> list[float]:
    """Least-squares solution of rows @ n = rhs with k unknowns (normal equations)."""
    if k == 1:  # one solid: the same sums and the same division as the factor of a 1 x 1 matrix
        M11 = sum([r[0] * r[0] for r in rows])
        if M11 > 0.0:
            return [sum([r[0] * t for r, t in zip(rows, rhs)]) / M11]
    M = [[sum(r[a] * r[b] for r in rows) for b in range(k)] for a in range(k)]
    v = [sum(r[a] * t for r, t in zip(rows, rhs)) for a in range(k)]
    out = _cholesky_solve(M, v)
    return out if out is not None else [0.0] * k


def _rref_nullspace(C: list[list[float]], n: int, prefer: list[int]):
    """Parametrise {x : C x = d} as x = P d + N y, for any right-hand side d.

    ``prefer`` orders the columns tried as pivots. Returns (P rows as (pivot column,
    coefficients over d), N (n x r), free columns, pivot columns) or None when the rows are
    linearly dependent. The reduction runs on C beside an identity block, so the map from d
    to the particular solution is found once per set of constraints.
    """
    k = len(C)
    A = [list(r) + [1.0 if a == b else 0.0 for b in range(k)] for a, r in enumerate(C)]
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
    P = [(pc, A[r][n:]) for r, pc in enumerate(pivots)]
    N = [[0.0] * len(free) for _ in range(n)]
    for q, fc in enumerate(free):
        N[fc][q] = 1.0
        for r, pc in enumerate(pivots):
            N[pc][q] = -A[r][fc]
    return P, N, free, pivots


class _Skeleton:
    """What a set of affine constraints makes of the coupled problem, whatever their right-hand
    sides: the null space N, the map from the right-hand sides to x0, and every coupled species'
    coefficients over the free coordinates y (with its Hessian entries). Found once per
    structure and constraint pattern; the ionic strength only changes the numbers."""

    __slots__ = ("r", "N", "free", "nH", "P", "pivots", "N_cols", "N_rows", "cs_nz", "cs_abs", "cs_hess",
                 "cs_x0", "cs_x0_nz", "nH_nz", "dependent", "calls", "compiled")

    def __init__(self, nc: int, C: list[list[float]], prefer: list[int], x_coeffs: list[list[float]]):
        self.dependent = False
        self.calls = 0          # evaluations so far (None: not worth compiling)
        self.compiled = None    # the straight-line evaluation, once compiled
        if C:
            res = _rref_nullspace(C, nc, prefer)
            if res is None:
                self.dependent = True
                return
            P, N, free, pivots = res
        else:
            P, N, free, pivots = [], [[1.0 if a == b else 0.0 for b in range(nc)] for a in range(nc)], \
                list(range(nc)), []
        r = len(free)
        self.r, self.N, self.free, self.P, self.pivots = r, N, free, P, pivots
        self.nH = N[0]  # H+ is coupled index 0
        self.nH_nz = [(q, v) for q, v in enumerate(N[0]) if v]
        self.N_cols = [[(k, N[k][q]) for k in range(nc) if N[k][q]] for q in range(r)]
        self.N_rows = [[(q, v) for q, v in enumerate(N[k]) if v] for k in range(nc)]
        pset = set(pivots)
        self.cs_nz, self.cs_abs, self.cs_hess, self.cs_x0 = [], [], [], []
        for a in x_coeffs:
            ay = [sum(a[k] * N[k][q] for k in range(nc) if a[k]) for q in range(r)]
            nz = [(q, aq) for q, aq in enumerate(ay) if aq]
            self.cs_nz.append(nz)
            self.cs_abs.append([(q, abs(aq)) for q, aq in nz])
            # lower-triangle Hessian entries of this species: (flat index q*r+s, a_q a_s), s <= q
            self.cs_hess.append([(q * r + s, aq * as_) for q, aq in nz for s, as_ in nz if s <= q])
            self.cs_x0.append([(k, a[k]) for k in range(nc) if a[k] and k in pset])
        self.cs_x0_nz = [(pos, ax) for pos, ax in enumerate(self.cs_x0) if ax]
        if r == 0 or not self.cs_nz:
            self.calls = None

    def compile(self):
        """The compiled evaluation of this pattern (shared by every skeleton of the same pattern)."""
        key = (self.r, tuple(tuple(nz) for nz in self.cs_nz))
        fn = _COMPILED.get(key)
        if fn is None:
            fn = _compile_evaluator(self.r, self.cs_nz, self.cs_hess)
            if len(_COMPILED) > 512:
                _COMPILED.clear()
            _COMPILED[key] = fn
        self.compiled = fn
        return fn


class _Problem:
    """F on the affine set x = x0 + N y, with simple components eliminated."""

    __slots__ = ("r", "x0", "N", "free", "nH", "nH_nz", "cs_lnK", "cs_nz", "cs_abs", "cs_hess", "ladders", "Tr",
                 "Tr_abs", "T_simple", "const", "sk", "ladder_code", "ladder_K", "ladder_F")

    def __init__(self, sk: _Skeleton, lnK_cpl, ladders, T_simple, T_cpl, d, ladder_code=None):
        # sk: the skeleton of the constraint pattern; lnK_cpl: ln K' of each coupled species;
        # ladders: per simple component a list of (k, lnK'); d: right-hand sides of the constraints;
        # ladder_code: the ladders' sums compiled for their pattern (_compile_ladders), or None
        nc = len(T_cpl)
        x0 = [0.0] * nc
        for pc, coefs in sk.P:
            x0[pc] = sum(c * v for c, v in zip(coefs, d))
        self.sk = sk
        self.r, self.x0, self.N, self.free, self.nH, self.nH_nz = sk.r, x0, sk.N, sk.free, sk.nH, sk.nH_nz
        if sk.P:
            cs_lnK = list(lnK_cpl)
            for pos, ax in sk.cs_x0_nz:
                if len(ax) == 1:
                    k, a = ax[0]
                    cs_lnK[pos] += a * x0[k]
                else:
                    cs_lnK[pos] += sum([a * x0[k] for k, a in ax])
            self.cs_lnK = cs_lnK
        else:
            self.cs_lnK = lnK_cpl
        self.cs_nz, self.cs_abs, self.cs_hess = sk.cs_nz, sk.cs_abs, sk.cs_hess
        self.ladders, self.T_simple = ladders, T_simple
        self.ladder_code = ladder_code
        self.ladder_K = [lnK for lad in ladders for _, lnK in lad] if ladder_code is not None else None
        self.ladder_F = None  # the ladders' constant part of F when x_H is held (see _add_ladders)
        self.Tr = [T_cpl[col[0][0]] * col[0][1] if len(col) == 1 else sum([T_cpl[k] * v for k, v in col])
                   for col in sk.N_cols]
        self.Tr_abs = [abs(t) for t in self.Tr]
        self.const = sum(T_cpl[pc] * x0[pc] for pc in sk.pivots)

    def xH(self, y):
        nz = self.nH_nz
        if len(nz) == 1:
            q, v = nz[0]
            return self.x0[0] + v * y[q]
        return self.x0[0] + sum([v * y[q] for q, v in nz])

    def x_of(self, y):
        """The coupled x at the free coordinates y."""
        return [a + (sum([v * y[q] for q, v in row]) if len(row) != 1 else row[0][1] * y[row[0][0]])
                for a, row in zip(self.x0, self.sk.N_rows)]

    def evaluate(self, y, want_hess=True):
        """F, gradient, Hessian (or None) and per-coordinate residual scale at y."""
        sk = self.sk
        fn = sk.compiled
        if fn is None and sk.calls is not None:
            sk.calls += 1
            if sk.calls >= COMPILE_AFTER:
                fn = sk.compile()
        if fn is not None:
            out = fn(y, self.cs_lnK, self.Tr, self.Tr_abs, self.const, want_hess)
            if out is None:
                return math.inf, None, None, None
            F, g, H, scale = out
        else:
            F, g, H, scale = self._coupled(y, want_hess)
            if F == math.inf:
                return math.inf, None, None, None
        if self.ladders:
            F = self._add_ladders(y, F, g, H, scale)
        return F, g, H, scale

    def _coupled(self, y, want_hess):
        """The coupled species' part of :meth:`evaluate` (the loop :func:`_compile_evaluator` unrolls)."""
        r = self.r
        exp = math.exp
        F = -self.const
        for t, v in zip(self.Tr, y):
            F -= t * v
        g = [-t for t in self.Tr]
        scale = list(self.Tr_abs)
        Hf = [0.0] * (r * r) if want_hess else None
        for lnK, nz, nabs, hs in zip(self.cs_lnK, self.cs_nz, self.cs_abs, self.cs_hess):
            e = lnK
            for q, aq in nz:
                e += aq * y[q]
            if e > 700.0:
                return math.inf, None, None, None
            c = exp(e)
            F += c
            for q, aq in nz:
                g[q] += aq * c
            for q, aq in nabs:
                scale[q] += aq * c
            if want_hess:
                for k, p in hs:
                    Hf[k] += p * c
        H = None
        if want_hess:
            H = [Hf[q * r:(q + 1) * r] for q in range(r)]
            for q in range(r):
                Hq = H[q]
                for s in range(q):
                    H[s][q] = Hq[s]
        return F, g, H, scale

    def _add_ladders(self, y, F, g, H, scale):
        """Add the eliminated simple components' log-sum-exp terms (in place); returns F."""
        nH_nz = self.nH_nz
        if not nH_nz:
            # x_H is held (a given pH): the ladders add the same constant to F at every y
            Fs = self.ladder_F
            if Fs is None:
                Fs = self.ladder_F = self.ladder_sums(self.x0[0])[0]
            return F + Fs
        Fs, m1, m2, sabs = self.ladder_sums(self.xH(y))
        for q, nq in nH_nz:
            g[q] += m1 * nq
            scale[q] += sabs * abs(nq)
            if H is not None:
                Hq = H[q]
                for s, ns in nH_nz:
                    if s < q:
                        v = m2 * nq * ns
                        Hq[s] += v
                        H[s][q] += v
                    elif s == q:
                        Hq[q] += m2 * nq * ns
        return F + Fs

    def ladder_sums(self, xH):
        """(F, first moment, variance, absolute first moment) of the ladders at x_H, each summed
        over the simple components weighted by their totals."""
        if self.ladder_code is not None:
            return self.ladder_code(xH, self.ladder_K, self.T_simple)
        return self._ladder_loops(xH)

    def _ladder_loops(self, xH):
        """:meth:`ladder_sums` by loops (the loops :func:`_compile_ladders` unrolls)."""
        exp = math.exp
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
            S = s1 = s2 = 0.0
            for (k, _), e in zip(lad, es):
                w = exp(e - top)
                S += w
                s1 += k * w
                s2 += k * k * w
            mean = s1 / S
            var = s2 / S - mean * mean
            Fs += T * (top + math.log(S))
            m1 += T * mean
            m2 += T * max(var, 0.0)
            sabs += T * abs(mean)
        return Fs, m1, m2, sabs


#: Compiled ladder sums by pattern (the protons of each simple component's own species).
_LADDER_CODE: dict = {}


def _compile_ladders(pattern: tuple):
    """Straight-line Python for :meth:`_Problem.ladder_sums` of one ladder pattern.

    ``pattern`` holds, per simple component, the protons of each of its species. The same
    operations in the same order as :meth:`_Problem._ladder_loops` (a product with a zero count
    is left out of the moments: adding it changes no number), cached by pattern.
    """
    fn = _LADDER_CODE.get(pattern)
    if fn is not None:
        return fn
    L = ["def _ladders(xH, K, T):", "    m1 = m2 = Fs = sabs = 0.0"]
    p = 0
    for t, ks in enumerate(pattern):
        if len(ks) == 1:
            k = ks[0]
            L.append(f"    Fs += T[{t}] * (K[{p}] + {k} * xH)")
            L.append(f"    m1 += T[{t}] * {k}")
            L.append(f"    sabs += T[{t}] * {abs(k)}")
            p += 1
            continue
        n = len(ks)
        for a, k in enumerate(ks):
            L.append(f"    e{a} = K[{p + a}] + {k} * xH")
        L.append("    top = max(" + ", ".join(f"e{a}" for a in range(n)) + ")")
        for a in range(n):
            L.append(f"    w{a} = exp(e{a} - top)")
        L.append("    S = " + " + ".join(f"w{a}" for a in range(n)))
        s1 = [f"{k} * w{a}" for a, k in enumerate(ks) if k]
        s2 = [f"{k * k} * w{a}" for a, k in enumerate(ks) if k]
        L.append("    mean = (" + (" + ".join(s1) or "0.0") + ") / S")
        L.append("    var = (" + (" + ".join(s2) or "0.0") + ") / S - mean * mean")
        L.append(f"    Fs += T[{t}] * (top + log(S))")
        L.append(f"    m1 += T[{t}] * mean")
        L.append(f"    m2 += T[{t}] * max(var, 0.0)")
        L.append(f"    sabs += T[{t}] * abs(mean)")
        p += n
    L.append("    return Fs, m1, m2, sabs")
    env = {"exp": math.exp, "log": math.log, "max": max, "abs": abs}
    exec(compile("\n".join(L) + "\n", "<acidscape.science.model ladders>", "exec"), env)  # noqa: S102
    if len(_LADDER_CODE) > 256:
        _LADDER_CODE.clear()
    fn = _LADDER_CODE[pattern] = env["_ladders"]
    return fn


#: A constraint pattern's evaluation is compiled to straight-line code after this many calls.
COMPILE_AFTER = 6
#: A structure's ladder sums are compiled to straight-line code after this many ionic-strength solves.
LADDER_COMPILE_AFTER = 3
#: Compiled evaluations by sparsity pattern (r and each coupled species' coefficients over y).
_COMPILED: dict = {}


def _num(a: float) -> str:
    return repr(float(a))


def _compile_evaluator(r: int, cs_nz, cs_hess):
    """Straight-line Python for the coupled species' part of ``_Problem.evaluate``.

    The same sums in the same order as :meth:`_Problem._coupled` (so the same numbers), with
    the loops over species and coefficients unrolled for one sparsity pattern: in CPython the
    loop overhead, not the arithmetic, is most of the cost of a small dense-sparse evaluation.
    The source is built from numbers only and compiled with :func:`compile`; it is cached by
    pattern, so waters of the same shape share it.
    """
    def term(a, name):
        if a == 1.0:
            return f" + {name}"
        if a == -1.0:
            return f" - {name}"
        return f" + {_num(a)} * {name}"

    ns = len(cs_nz)
    L = ["def _evaluate(y, K, Tr, Tr_abs, const, want_hess):"]
    if r:
        L.append("    " + "".join(f"y{q}, " for q in range(r)) + "= y")
    for i, nz in enumerate(cs_nz):
        L.append(f"    e{i} = K[{i}]" + "".join(term(a, f"y{q}") for q, a in nz))
    if ns:
        L.append("    if max(" + ", ".join(f"e{i}" for i in range(ns)) + ", 0.0) > 700.0:")
        L.append("        return None")
    for i in range(ns):
        L.append(f"    c{i} = exp(e{i})")
    L.append("    F = -const" + "".join(f" - Tr[{q}] * y{q}" for q in range(r)) + "".join(f" + c{i}" for i in range(ns)))
    g_terms = [[] for _ in range(r)]
    s_terms = [[] for _ in range(r)]
    for i, nz in enumerate(cs_nz):
        for q, a in nz:
            g_terms[q].append(term(a, f"c{i}"))
            s_terms[q].append(term(abs(a), f"c{i}"))
    L.append("    g = [" + ", ".join(f"-Tr[{q}]" + "".join(g_terms[q]) for q in range(r)) + "]")
    L.append("    scale = [" + ", ".join(f"Tr_abs[{q}]" + "".join(s_terms[q]) for q in range(r)) + "]")
    L.append("    if not want_hess:")
    L.append("        return F, g, None, scale")
    h_terms: dict = {}
    for i, hs in enumerate(cs_hess):
        for k, p in hs:
            h_terms.setdefault(k, []).append((p, i))
    for q in range(r):
        for s in range(q + 1):
            ts = h_terms.get(q * r + s)
            if ts:
                first = ts[0]
                expr = (f"c{first[1]}" if first[0] == 1.0 else f"{_num(first[0])} * c{first[1]}") + \
                    "".join(term(p, f"c{i}") for p, i in ts[1:])
            else:
                expr = "0.0"
            L.append(f"    h{q}_{s} = {expr}")
    rows = []
    for q in range(r):
        rows.append("[" + ", ".join(f"h{max(q, s)}_{min(q, s)}" for s in range(r)) + "]")
    L.append("    return F, g, [" + ", ".join(rows) + "], scale")
    code = compile("\n".join(L) + "\n", "<acidscape.science.model evaluation>", "exec")
    env = {"exp": math.exp, "max": max}
    exec(code, env)  # noqa: S102 - source built above from numbers and fixed names only
    return env["_evaluate"]


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
    isfinite = math.isfinite
    res = _residual(g, scale)
    for it in range(1, max_iter + 1):
        if _converged(g, scale, rtol):
            return y, it, True
        step = _cholesky_solve(H, [-v for v in g])
        if step is None or not all(map(isfinite, step)):
            return y, it, False
        big = max(map(abs, step))
        if big > STEP_CAP:
            step = [s * STEP_CAP / big for s in step]
        slope = sum([a * b for a, b in zip(g, step)])
        if slope >= 0:
            return y, it, False
        t = 1.0
        while True:
            yn = [a + t * b for a, b in zip(y, step)]
            Fn, gn, Hn, sn = prob.evaluate(yn)
            if Fn <= F + 1e-4 * t * slope:
                break
            # near the answer F is flat to rounding: accept a step that shrinks the residual
            if isfinite(Fn) and abs(Fn - F) <= 1e-15 * (abs(F) + 1.0) and _residual(gn, sn) < res:
                break
            t *= 0.5
            if t < 1e-12:
                return y, it, _converged(g, scale, max(rtol, 1e3 * MASS_RTOL))
        res_old = res
        y, F, g, H, scale = yn, Fn, gn, Hn, sn
        res = _residual(g, scale)
        if res > 0.5 * res_old and res <= 1e3 * MASS_RTOL:
            return y, it, True  # rounding, not the method, now limits the residual
    return y, max_iter, _converged(g, scale, rtol)


def _residual(g, scale) -> float:
    """The largest gradient entry relative to its scale (the worst mass balance, relatively)."""
    return max([abs(v) / (s + 1e-300) for v, s in zip(g, scale)])


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
        ``Solution.state`` of an earlier, similar solve (warm start): ``x`` (component index ->
        ln free concentration), ``I`` [mol/L], ``active`` (solid indices); with
        ``I_settled`` true the first solve is already a tight one at ``I``

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
    species_on, solids_on, allowed, simple, coupled, cidx = (structure.species_on, structure.solids_on,
                                                             structure.allowed, structure.simple,
                                                             structure.coupled, structure.cidx)
    ladder_of, cpl_species = structure.ladder_of, structure.cpl_species
    fixed_key = tuple(fixed_species)
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
        if not Imodel_ideal and I > 0.0:
            I = _first_I(tab, totals, open_comp, structure.own_on, pH, gamma_of, I)
    x_state = dict((guess or {}).get("x", {}))  # component index -> ln free conc
    active = [s for s in (guess or {}).get("active", []) if s in allowed]
    total_iters = 0
    I_hist: list[tuple[float, float]] = []

    def solve_at(I, rtol=MASS_RTOL):
        """Solve at ionic strength I with the active-set loop; returns internal state."""
        nonlocal total_iters, active
        lgc, lgs, lnKp = _constants_at(tab, gamma_of, I)
        hc = tab.h_count
        ladders = [[(hc[i], lnKp[i]) for i in ladder_of[j]] for j in simple]
        lnK_cpl = [lnKp[i] for i in cpl_species]
        ladder_code = structure.ladder_code()
        seen = set()
        for _round in range(4 * len(tab.solids) + 8):
            d = []
            if pH is not None:
                d.append(LN10 * (-pH - lgc[0]))
            for i, conc in fixed_species.items():
                d.append(math.log(conc) - lnKp[i] if conc > 0 else -700.0)
            for s in active:
                d.append(LN10 * (tab.solids[s].log10_Ksp - sum(b * lgc[j] for j, b in tab.solids[s].stoich)))
            sk = structure.skeleton(tab, pH is not None, fixed_key, tuple(active))
            if sk.dependent:
                dropped = active.pop()
                warnings.append(f"{tab.solids[dropped].id} was left out: with the other solids present it "
                                "would break the phase rule")
                continue
            prob = _Problem(sk, lnK_cpl, ladders, T_simple, T_cpl, d, ladder_code)
            y = _start(prob, coupled, x_state, totals, pH, lgc, structure.own_on, lnKp)
            y, its, ok = _newton(prob, y, rtol=rtol)
            total_iters += its
            if not ok:
                y, ok = _coordinate_search(prob, y)
                if not ok:
                    raise ConvergenceError("the equilibrium search did not converge", field=None)
            x = prob.x_of(y)
            st = _assemble(tab, structure, totals, x, lnKp, open_comp, pH)
            x_state.update((j, v) for j, v in enumerate(st["ln_free"]) if v > -math.inf)
            # amounts of the active solids from the mass balances they close
            amounts = _amounts(tab, active, st["resid"]() if active else None, coupled, open_comp, pH, totals)
            neg = [(n, s) for s, n in zip(active, amounts) if n < -1e-13 * max(1e-30, max(totals[1:] or [0]))]
            if neg:
                active.remove(min(neg)[1])
                continue
            # saturation of every solid: now when solids may form, else once for the answer
            si = _saturation(tab, st["ln_free"], lgc, solids_on) if allowed else None
            cand = [(si[s], s) for s in allowed if s not in active and si[s] > SI_TOL] if allowed else ()
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
        st["amounts"] = dict(zip(active, _amounts(tab, active, st["resid"]() if active else None, coupled, open_comp,
                                                  pH, totals)))
        st["rtol"] = rtol
        st["SI"] = _saturation(tab, st["ln_free"], lgc, solids_on)
        st["lgc"], st["lgs"] = lgc, lgs
        return st

    z2 = tab.z2

    def I_of(st):
        return 0.5 * sum(a * c for a, c in zip(z2, st["conc"]))

    if I_fixed is None and not Imodel_ideal:
        # Substitution, accelerated by secant steps on h(I) = I_computed(I) - I once two points
        # are known; the inner solves are loose until I has settled, then one tight solve.
        # a warm start whose ionic strength is known to be the answer's ("I_settled", e.g. a
        # measured water closed at its pH) is solved tight at once: one solve when it is settled
        # (the loop goes on as usual when it is not)
        warm = guess is not None and guess.get("I") is not None and bool(guess.get("I_settled"))
        st = solve_at(I, MASS_RTOL if warm else LOOSE_RTOL)
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
    if st["SI"] is None:
        st["SI"] = _saturation(tab, st["ln_free"], lgc, solids_on)
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
    return _Structure(species_on, solids_on, allowed, simple, coupled, cidx, ladder_of, cpl_species, x_coeffs,
                      prefer, tab)


class _Structure:
    """Which species and solids are on, the simple and coupled components, and the skeleton of
    each pattern of constraints met so far (cached with the structure on the tableau)."""

    __slots__ = ("species_on", "solids_on", "allowed", "simple", "coupled", "cidx", "ladder_of", "cpl_species",
                 "x_coeffs", "prefer", "skeletons", "cpl_stoich", "on_stoich", "simple_set", "ladder_pattern",
                 "ladder_uses", "ladder_fn", "own_on")

    def __init__(self, species_on, solids_on, allowed, simple, coupled, cidx, ladder_of, cpl_species, x_coeffs,
                 prefer, tab):
        self.species_on, self.solids_on, self.allowed = species_on, solids_on, allowed
        self.simple, self.coupled, self.cidx, self.ladder_of = simple, coupled, cidx, ladder_of
        self.cpl_species, self.x_coeffs, self.prefer = cpl_species, x_coeffs, prefer
        self.simple_set = set(simple)
        self.skeletons: dict = {}
        self.cpl_stoich = [(i, tab.species[i].stoich) for i in cpl_species]
        self.on_stoich = [(i, tab.species[i].stoich) for i, on in enumerate(species_on) if on]
        # per component: (index, protons) of its own species that are on (see Tableau.own_species)
        self.own_on = {j: [(i, h) for i, h in own if species_on[i]] for j, own in tab.own_species.items()}
        self.ladder_pattern = tuple(tuple(tab.h_count[i] for i in ladder_of[j]) for j in simple)
        # the ladders' sums are compiled once the structure is solved again (as skeletons are)
        self.ladder_uses = 0 if any(len(ks) > 1 for ks in self.ladder_pattern) else None
        self.ladder_fn = None

    def ladder_code(self):
        """The compiled ladder sums of this structure (None until it has been used a few times)."""
        if self.ladder_fn is None and self.ladder_uses is not None:
            self.ladder_uses += 1
            if self.ladder_uses >= LADDER_COMPILE_AFTER:
                self.ladder_fn = _compile_ladders(self.ladder_pattern)
        return self.ladder_fn

    def skeleton(self, tab, pH_given: bool, fixed: tuple, active: tuple) -> _Skeleton:
        """The skeleton for this pattern: pH held or not, fixed species, active solids (in order)."""
        key = (pH_given, fixed, active)
        sk = self.skeletons.get(key)
        if sk is None:
            nc = len(self.coupled)
            C = []
            if pH_given:
                row = [0.0] * nc
                row[0] = 1.0
                C.append(row)
            for i in fixed:
                row = [0.0] * nc
                for j, a in tab.species[i].stoich:
                    row[self.cidx[j]] = float(a)
                C.append(row)
            for s in active:
                row = [0.0] * nc
                for j, b in tab.solids[s].stoich:
                    row[self.cidx[j]] = float(b)
                C.append(row)
            sk = _Skeleton(nc, C, self.prefer, self.x_coeffs)
            if len(self.skeletons) < 256:
                self.skeletons[key] = sk
        return sk


def _constants_at(tab: Tableau, gamma_of, I: float):
    """log10 gamma of each component and species, and ln K' of each species, at ionic strength I.

    One activity coefficient per distinct (charge, ion size); the last few ionic strengths of
    each activity function are remembered on the tableau."""
    cache = tab._constants
    key = (gamma_of, I)
    hit = cache.get(key)
    if hit is not None:
        return hit
    lg = [gamma_of(z, a, I) for z, a in tab.gamma_keys]
    lgc = [lg[k] for k in tab.comp_gkey]
    lgs = [lg[k] for k in tab.species_gkey]
    # sum_j a_ij lg_j is the same for every species with the same (activity key, coefficient) terms
    shift = [sum(a * lg[k] for k, a in terms) for terms in tab.shift_terms]
    lnKp = [LN10 * (logK + shift[t] - lgi) for logK, t, lgi in zip(tab.log10_K, tab.species_shift, lgs)]
    if len(cache) > 16:
        cache.clear()
    out = cache[key] = (lgc, lgs, lnKp)
    return out


def _first_I(tab, totals, open_comp, own_on, pH, gamma_of, I_bare: float) -> float:
    """A first ionic strength for a water solved without a guess [mol/L]: each component spread
    over its own protonated forms at pH 7 (or the given pH), as the cold start spreads it
    (``I_bare``, every component at its own charge, overstates a carbonate water's by half)."""
    lgc, lgs, lnKp = _constants_at(tab, gamma_of, I_bare)
    xH = LN10 * (-(pH if pH is not None else 7.0) - lgc[0])
    z2 = tab.z2
    out = 0.0
    for j in range(1, len(tab.components)):
        t = totals[j]
        if not t > 0.0 or j in open_comp:
            continue
        own = [(lnKp[i] + h * xH, z2[i]) for i, h in own_on[j]]
        if not own:
            out += tab.charges[j] ** 2 * t
            continue
        top = max(e for e, _ in own)
        w = [(math.exp(e - top), z) for e, z in own]
        out += t * sum(a * z for a, z in w) / sum(a for a, _ in w)
    return 0.5 * out if out > 0.0 else I_bare


def _own_lnS(own, lnKp, xH) -> float:
    """ln of the sum of a component's own species (``own``: (index, protons) of each species
    holding it once and otherwise only H+) per unit of its free concentration, at ln[H+] = xH:
    ln sum_k K'_k e^(h_k xH)."""
    if len(own) == 1:
        i, h = own[0]
        return lnKp[i] + h * xH
    if not own:
        return 0.0
    es = [lnKp[i] + h * xH for i, h in own]
    top = max(es)
    exp = math.exp
    return top + math.log(sum([exp(e - top) for e in es]))


def _start(prob: _Problem, coupled, x_state, totals, pH, lgc, own_on, lnKp) -> list[float]:
    """Initial y: the last answer where known; else pH 7 (or the given pH) and each component
    spread over its own protonated forms at that pH, as if it formed no complex.

    When the pH is given and the last answer was at another pH, each known component's free
    concentration is first moved as its own protonated forms would move it (the share held by
    each component's own species kept): a jump of several pH units (an end point, the next
    point of a curve) then starts next to the answer."""
    xH_new = LN10 * (-(pH if pH is not None else 7.0) - lgc[0])
    xH = x_state.get(0, xH_new)
    moved = pH is not None and xH != xH_new
    y = []
    # y is x at the free coordinates (N holds an identity row there)
    for k in prob.free:
        j = coupled[k]
        if j in x_state:
            if moved and j:
                y.append(x_state[j] + _own_lnS(own_on[j], lnKp, xH) - _own_lnS(own_on[j], lnKp, xH_new))
            else:
                y.append(x_state[j])
        elif j == 0:
            y.append(xH)
        else:
            y.append(math.log(max(totals[j], 1e-300)) - _own_lnS(own_on[j], lnKp, xH))
    return y


def _assemble(tab, structure, totals, x, lnKp, open_comp, pH) -> dict:
    """Concentrations of every species, free concentrations and balances at the answer."""
    m = len(tab.components)
    exp = math.exp
    ln_free = [-math.inf] * m
    for k, j in enumerate(structure.coupled):
        ln_free[j] = x[k]
    xH = ln_free[0]
    conc = [0.0] * len(tab.species)
    for i, st in structure.cpl_stoich:
        e = lnKp[i]
        for j, a in st:
            e += a * ln_free[j]
        conc[i] = exp(e)
    hc = tab.h_count
    log = math.log
    for j in structure.simple:
        idx = structure.ladder_of[j]
        es = [lnKp[i] + hc[i] * xH for i in idx]
        top = max(es)
        lnS = top + log(sum([exp(e - top) for e in es]))
        lnT = log(totals[j])
        ln_free[j] = lnT - lnS
        for i, e in zip(idx, es):
            conc[i] = exp(lnT + e - lnS)
    held_memo = []

    def held_of():
        """The amount of each component the species hold (computed once, when asked)."""
        if not held_memo:
            held = [0.0] * m
            for i, st in structure.on_stoich:
                c = conc[i]
                for j, a in st:
                    held[j] += a * c
            held_memo.append(held)
        return held_memo[0]

    def resid():
        """Mass-balance residual of each component (0 for rows the answer sets) [mol/L]."""
        held = held_of()
        out = list(totals)
        for j in range(m):
            if j in open_comp or (j == 0 and pH is not None):
                out[j] = 0.0  # set by the answer, not by a given total
            else:
                out[j] = totals[j] - held[j]
        return out

    def finish(amounts):
        """Totals as used (open and fixed-pH rows filled in) and mass-balance residuals."""
        held = held_of()
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
    stoich = [dict(tab.solids[s].stoich) for s in active]
    for j in coupled:
        if j in open_comp or (j == 0 and pH is not None):
            continue
        w = 1.0 / max(abs(totals[j]), abs(resid[j]), 1e-300)
        rows.append([w * float(st.get(j, 0)) for st in stoich])
        rhs.append(w * resid[j])
    return _lstsq(rows, rhs, len(active))


def _saturation(tab, ln_free, lgc, solids_on) -> dict[int, float]:
    """SI = log10 IAP - log10 Ksp of every solid whose components are present."""
    out = {}
    la = [f / LN10 + g for f, g in zip(ln_free, lgc)]  # log10 activity of each component
    for s, (solid, on) in enumerate(zip(tab.solids, solids_on)):
        if on:
            v = 0
            for j, b in solid.stoich:
                v += b * la[j]
            out[s] = v - solid.log10_Ksp
    return out
