"""Probing a solved water with the one equilibrium model: re-solves and exact derivatives.

Every water operation (alkalinity, buffer intensity, curves, titration, dosing, closing a
measured water) asks a solved water (a :class:`acidscape.science.model.Solution` of a
:class:`acidscape.science.tableau.WaterModel`) the same few questions, answered here once:

- the same water at another pH, with other totals, or at a given ionic strength
  (:func:`resolve`, a thin call of :func:`acidscape.science.model.equilibrium`);
- the amount of each component its species hold, :math:`\\sum_i a_{ij} c_i`; for H+ this
  is the proton total :math:`T_H` (protons held relative to the components: [H+] - [OH-]
  plus each acid-base and complex species' protons);
- how :math:`T_H` responds to the pH and to each total when every other mass balance
  is held (:func:`derivatives`).

Derivatives (Schur complement)
------------------------------
At fixed ionic strength the model's free concentrations :math:`x_j = \\ln c_j` minimise a
convex function whose Hessian is :math:`H_{jk} = \\sum_i a_{ij} a_{ik} c_i` (Morel & Hering
[1]_; Smith & Missen [2]_), and every mass balance is
:math:`\\sum_i a_{ij} c_i(x) = T_j`. Holding :math:`x_H` (the pH) and the totals
:math:`T_r` of every other present component and differentiating,

.. math::

    H_{rr}\\,dx_r = dT_r - H_{rH}\\,dx_H, \\qquad
    dT_H = S\\,dx_H + g^T dT_r, \\qquad
    S = H_{HH} - H_{Hr} H_{rr}^{-1} H_{rH}, \\quad g = H_{rr}^{-1} H_{rH},

a Schur complement of the Hessian (:math:`S \\ge 0`: it is again a Gram matrix). With
:math:`x_H = -\\ln 10\\,\\mathrm{pH} - \\ln\\gamma_{H^+}` at fixed ionic strength,
:math:`dT_H/d\\mathrm{pH} = -\\ln 10\\,S`, so the buffer intensity of the closed water is
:math:`\\beta = \\ln 10\\,S` and :math:`g_r` is the protons held per mole of component r
added at fixed pH. For an acid-base-only water :math:`S = [H^+] + [OH^-] + \\sum C_T
\\mathrm{var}_i` and :math:`g_r` is the mean number of protons on system r (Van Slyke's
buffer sum); with complexes the same two numbers include every ion pair.

A component that is absent (total 0) is the limit :math:`T_k \\to 0` of the same formula:
its species are then in the proportions :math:`u_i` their constants give at the current
free concentrations (only species holding it once survive), and

.. math::

    g_k = h_{Hk} - H_{Hr} H_{rr}^{-1} h_{rk}, \\qquad h_{jk} = \\sum_i u_i a_{ij}.

Functions
---------
model_of(parsed, ...)            WaterModel of a parsed scenario (duck-typed boundary input)
resolve(wm, ...)                 the water again at a pH / totals / ionic strength
held(sol, j), held_all(sol)      amount of component j held by the aqueous species [mol/L]
aqueous_totals(sol)              totals of the dissolved water (solids removed, open totals filled)
ionic_strength(sol)              1/2 sum z^2 c of the species [mol/L]
Linearization(sol)               the Hessian at a solution, factorised once: S, g, responses
derivatives(sol, trace=())       S and g above
response(sol, direction)         d(charge)/ds and dI/ds when the totals move along a direction
charge_response(sol, direction)  d(charge)/ds alone

References
----------
.. [1] F. M. M. Morel, J. G. Hering, Principles and Applications of Aquatic Chemistry,
   Wiley, 1993, ch. 2-3.
.. [2] W. R. Smith, R. W. Missen, Chemical Reaction Equilibrium Analysis, Wiley, 1982.
"""

from __future__ import annotations

import math

from ..constants import LN10
from ..science.model import Cholesky, equilibrium
from ..science.tableau import WaterModel


def model_of(parsed, *, systems=None, ions=None, complexes=None) -> WaterModel:
    """The :class:`WaterModel` of a parsed water (the boundary's ``Parsed``, read by attribute).

    Parameters
    ----------
    parsed : object
        With ``components`` (SystemInput list), ``ions`` (IonInput list), ``T`` [K], ``pKw`` [-],
        ``model`` [-], ``I_fixed`` [mol/L] or None and ``complexes`` (bool, default True)
    systems, ions : list, optional
        Replace the parsed systems or ions (a closed or dosed water)
    complexes : bool, optional
        Replace the parsed choice of complexes
    """
    return WaterModel(list(parsed.components if systems is None else systems),
                      list(parsed.ions if ions is None else ions), T=parsed.T, pKw=parsed.pKw,
                      model=parsed.model,
                      complexes=getattr(parsed, "complexes", True) if complexes is None else complexes,
                      I_fixed=parsed.I_fixed)


def resolve(wm: WaterModel, *, pH: float | None = None, totals=None, I: float | None = None,
            closed: bool = False, allow: tuple = (), guess: dict | None = None):
    """The water of ``wm`` solved again (see :func:`acidscape.science.model.equilibrium`).

    Parameters
    ----------
    wm : WaterModel
        The water's tableau
    pH : float, optional
        Hold this meter pH [-]; otherwise the charge balance sets it
    totals : list of float, optional
        Component totals [mol/L] (default ``wm.totals``)
    I : float, optional
        Hold this ionic strength [mol/L] (default: the water's own choice, ``wm.I_fixed``)
    closed : bool
        Drop the water's fixed species (a water open to CO2 becomes the closed sample; its
        carbonate total must then be in ``totals``)
    allow : tuple of str
        Ids of solids allowed to precipitate or dissolve
    guess : dict, optional
        ``Solution.state`` of a similar solve (warm start)
    """
    return equilibrium(wm.tab, list(wm.totals if totals is None else totals), T=wm.T, gamma_of=wm.gamma_of,
                       pH=pH, fixed_species={} if closed else wm.fixed_species,
                       allow_solids=tuple(wm.solid_index[s] for s in allow),
                       I_fixed=wm.I_fixed if I is None else I, guess=guess)


def held_all(sol) -> list[float]:
    """Amount of every component held by the aqueous species, sum_i a_ij c_i [mol/L]."""
    out = [0.0] * len(sol.tableau.components)
    for sp, c in zip(sol.tableau.species, sol.conc):
        if c:
            for j, a in sp.stoich:
                out[j] += a * c
    return out


def held(sol, j: int = 0) -> float:
    """Amount of component ``j`` held by the aqueous species [mol/L]; j = 0 gives T_H."""
    if j == 0:  # each species' protons, found once per tableau (the same terms in the same order)
        return math.fsum([aH * c for (aH, _), c in zip(_structure(sol.tableau), sol.conc) if c])
    return math.fsum(dict(sp.stoich).get(j, 0) * c for sp, c in zip(sol.tableau.species, sol.conc) if c)


def aqueous_totals(sol) -> list[float]:
    """Totals of the dissolved water [mol/L]: what its species hold (solids left out).

    For a water open to a gas this is the closed sample at its equilibrium total; entry 0
    (H+) is the proton total the species hold.
    """
    out = held_all(sol)
    return [max(v, 0.0) if j else v for j, v in enumerate(out)]


def ionic_strength(sol) -> float:
    """Ionic strength computed from the species, 1/2 sum z^2 c [mol/L] (whatever I was held)."""
    return 0.5 * math.fsum(sp.charge * sp.charge * c for sp, c in zip(sol.tableau.species, sol.conc) if c)


#: Amount [mol/L] below which a component counts as absent in the linearisation.
TRACE_M = 1e-200


def _Cholesky(A: list[list[float]]):
    """The model's Cholesky factor of a Hessian, strict: a singular one raises ArithmeticError."""
    for i, row in enumerate(A):
        if not row[i] > 0.0:
            # a Gram matrix of present components is positive definite; guard anyway
            raise ArithmeticError("singular Hessian in the linearisation of the water")
    try:
        return Cholesky(A, strict=True)
    except ArithmeticError:
        raise ArithmeticError("singular Hessian in the linearisation of the water") from None


#: Per tableau (by identity): each species' proton coefficient and its other (component, coef) pairs.
_STRUCTURE: dict[int, tuple] = {}


def _structure(tab):
    """(tableau, [(aH, ((j, a), ...)) per species]) for a tableau, computed once."""
    hit = _STRUCTURE.get(id(tab))
    if hit is not None and hit[0] is tab:
        return hit[1]
    rows = []
    for sp in tab.species:
        aH = 0
        rest = []
        for j, a in sp.stoich:
            if j == 0:
                aH = a
            else:
                rest.append((j, a))
        rows.append((aH, tuple(rest)))
    if len(_STRUCTURE) > 64:
        _STRUCTURE.clear()
    _STRUCTURE[id(tab)] = (tab, rows)
    return rows


#: Per tableau (by identity) and set of present components: each species' (position, coefficient) pairs.
_INDICES: dict = {}


def _indices(tab, rows, present: tuple, pos: dict) -> list:
    """Each species' (position in the present components, coefficient) pairs, found once per
    tableau and set of present components."""
    key = (id(tab), present)
    hit = _INDICES.get(key)
    if hit is not None and hit[0] is tab:
        return hit[1]
    out = [[(pos[j], a) for j, a in rest if j in pos] for _, rest in rows]
    if len(_INDICES) > 256:
        _INDICES.clear()
    _INDICES[key] = (tab, out)
    return out


class Linearization:
    """The model's Hessian at a solution, over the present components, factorised once.

    ``H_rr`` (present components other than H+) is factorised; every query below is a solve
    with that factor. Concentrations and activity coefficients are those of ``sol``; solids
    and fixed species are treated as absent / closed (the dissolved water at fixed totals).
    """

    def __init__(self, sol):
        self.sol = sol
        tab = sol.tableau
        m = len(tab.components)
        rows = _structure(tab)
        conc = sol.conc
        # a component held below TRACE_M is treated as absent (its trace formula is the exact
        # limit, and its Hessian row would underflow)
        amount = [0.0] * m
        for (aH, rest), c in zip(rows, conc):
            if c:
                for j, a in rest:
                    amount[j] += a * a * c
        free_ln = sol.free_ln
        present = [j for j in range(1, m) if amount[j] > TRACE_M and free_ln[j] > -math.inf]
        self.pos = pos = {j: k for k, j in enumerate(present)}
        self.present = present
        n = self.n = len(present)
        H = [[0.0] * n for _ in range(n)]
        hH = [0.0] * n
        HH = 0.0
        live = []
        species = tab.species
        idx_of = _indices(tab, rows, tuple(present), pos)
        for i, c in enumerate(conc):
            if not c:
                continue
            aH = rows[i][0]
            idx = idx_of[i]
            live.append((i, species[i], c, idx, aH))
            if aH:
                HH += c * aH * aH
            for p, a in idx:
                ca = c * a
                row = H[p]
                for q, b in idx:
                    row[q] += ca * b
                if aH:
                    hH[p] += ca * aH
        self.live, self.hH, self.HH = live, hH, HH
        self.chol = _Cholesky(H) if n else None
        self._g = None
        self._along = None

    def _solve(self, b):
        return self.chol.solve(b) if self.n else []

    @property
    def g_vector(self) -> list[float]:
        """H_rr^-1 h_rH: protons held per mole of each present component added (fixed pH)."""
        if self._g is None:
            self._g = self._solve(self.hH)
        return self._g

    @property
    def S(self) -> float:
        """Schur complement H_HH - h_Hr H_rr^-1 h_rH [mol/L]; buffer intensity = ln10 S."""
        return self.HH - math.fsum(a * b for a, b in zip(self.hH, self.g_vector))

    def _trace_species(self, k: int):
        """Species of absent component k holding it once, with their shares at the current state."""
        sol = self.sol
        tab = sol.tableau
        pos = self.pos
        logs = []
        for i, sp in enumerate(tab.species):
            st = dict(sp.stoich)
            if st.get(k) != 1 or any(j not in (0, k) and j not in pos for j in st):
                continue
            lw = sp.log10_K - sol.log10_gamma[i] + sum(
                a * (sol.free_ln[j] / LN10 + sol.log10_gamma_comp[j]) for j, a in sp.stoich if j != k)
            logs.append((lw, i, st))
        if not logs:
            return []
        top = max(lw for lw, _, _ in logs)
        w = [(10.0 ** (lw - top), i, st) for lw, i, st in logs]
        tot = sum(x for x, _, _ in w)
        return [(x / tot, i, st) for x, i, st in w]

    def g(self, trace: tuple[int, ...] = ()) -> dict[int, float]:
        """g_j for every present component and each absent one in ``trace`` [mol/mol]."""
        out = {j: v for j, v in zip(self.present, self.g_vector)}
        for k in trace:
            if k in self.pos:
                continue
            h = [0.0] * self.n
            hk = 0.0
            for u, _, st in self._trace_species(k):
                for j, a in st.items():
                    if j == 0:
                        hk += a * u
                    elif j in self.pos:
                        h[self.pos[j]] += a * u
            y = self._solve(h)
            out[k] = hk - math.fsum(a * b for a, b in zip(self.hH, y))
        return out

    def along(self, direction: dict[int, float]) -> tuple[float, float]:
        """d(charge)/ds and d(I_species)/ds when the totals move by ``direction`` x ds (fixed pH, I)."""
        if self._along is not None and self._along[0] == direction:
            return self._along[1]
        out = self._along_new(direction)
        self._along = (dict(direction), out)
        return out

    def _along_new(self, direction):
        tab = self.sol.tableau
        pos = self.pos
        rhs = [0.0] * self.n
        new_species = []
        for k, v in direction.items():
            if not v or k == 0:
                continue
            if k in pos:
                rhs[pos[k]] += v
                continue
            for u, i, st in self._trace_species(k):
                new_species.append((i, u * v))
                for j, a in st.items():
                    if j in pos:
                        rhs[pos[j]] -= a * u * v
        dx = self._solve(rhs)
        dT_H = dI = 0.0
        for i, sp, c, idx, aH in self.live:
            t = 0
            for p, a in idx:
                t += a * dx[p]
            dc = c * t
            dT_H += aH * dc
            dI += sp.charge * sp.charge * dc
        for i, u in new_species:
            sp = tab.species[i]
            dT_H += dict(sp.stoich).get(0, 0) * u
            dI += sp.charge * sp.charge * u
        z = tab.charges
        return dT_H + math.fsum(v * z[j] for j, v in direction.items() if j), 0.5 * dI

    def predict(self, totals, pH: float, I: float, gamma_of) -> dict:
        """A warm start for the same water at other totals and another meter pH [-] (at ionic
        strength ``I`` [mol/L]): the state's free concentrations moved to first order.

        At fixed ionic strength :math:`H_{rr}\\,dx_r = dT_r - h_{rH}\\,dx_H` (see the module
        notes); the activity coefficients of the new ionic strength enter only through
        :math:`x_H`. The model's Newton iteration then starts a step or two closer to the answer
        (its result does not depend on the start). Returns a ``Solution.state``-like dict.
        """
        sol = self.sol
        state = sol.state
        x = dict(state.get("x", {}))
        xH_new = LN10 * (-pH - gamma_of(1, sol.tableau.ion_sizes[0], I))
        dxH = xH_new - sol.free_ln[0]
        if self.n:
            old = sol.totals
            rhs = [totals[j] - old[j] - h * dxH for j, h in zip(self.present, self.hH)]
            dx = self._solve(rhs)
            for j, v in zip(self.present, dx):
                if j in x and -1.0 < v < 1.0:
                    x[j] += v
        x[0] = xH_new
        return {"x": x, "I": I, "active": list(state.get("active", []))}

    def with_I(self, gamma_of) -> tuple[float, float]:
        """d(charge)/dI [eq/mol] and d(I_species)/dI [-] at fixed totals and meter pH.

        Each conditional constant moves by d ln K'_i = ln10 (sum_j a_ij dlg_j - dlg_i) and the
        free H+ by -ln10 dlg_H+ (the meter pH is held); dlg/dI by a central difference of
        ``gamma_of`` (smooth in I > 0).
        """
        sol = self.sol
        tab = sol.tableau
        I = sol.I
        if I <= 0.0:
            return 0.0, 0.0
        h = 1e-6 * I
        # one derivative per distinct (charge, ion size), one sum per distinct set of terms
        # (the tableau's own grouping, acidscape.science.model.Tableau)
        dk = [(gamma_of(z, a, I + h) - gamma_of(z, a, I - h)) / (2.0 * h) if z else 0.0 for z, a in tab.gamma_keys]
        dshift = [sum(a * dk[k] for k, a in terms) for terms in tab.shift_terms]
        sg, ss = tab.species_gkey, tab.species_shift
        dxH = -LN10 * dk[tab.comp_gkey[0]]
        rhs = [0.0] * self.n
        es = []
        for i, sp, c, idx, aH in self.live:
            e = LN10 * (dshift[ss[i]] - dk[sg[i]]) + aH * dxH
            es.append(e)
            for p, a in idx:
                rhs[p] -= a * c * e
        dx = self._solve(rhs)
        dR = dI = 0.0
        for (i, sp, c, idx, aH), e in zip(self.live, es):
            t = 0
            for p, a in idx:
                t += a * dx[p]
            dc = c * (e + t)
            z = sp.charge
            dR += z * dc
            dI += z * z * dc
        return dR, 0.5 * dI


def derivatives(sol, trace: tuple[int, ...] = ()) -> tuple[float, dict[int, float]]:
    """Response of the proton total to pH and to each total, other mass balances held.

    Parameters
    ----------
    sol : Solution
        A solved water (its concentrations and activity coefficients are used as they are;
        solids and fixed species are treated as absent / closed)
    trace : tuple of int
        Absent components (total 0) whose trace response is wanted as well

    Returns
    -------
    tuple of (float, dict)
        ``S`` [mol/L] (buffer intensity = ln10 S [eq/(L pH)]) and ``g`` [mol/mol]: for each
        present component other than H+, and each component in ``trace``, the protons held
        per mole added at fixed pH and ionic strength

    Examples
    --------
    Pure water: S = [H+] + [OH-] (the water's own buffer intensity over ln 10).

    >>> from acidscape.science.model import Species, Tableau, equilibrium
    >>> from acidscape.science.activity import gamma_function
    >>> tab = Tableau(("H+",), (1,), (9.0,), (Species("H+", ((0, 1),), 0.0, 1, kind="water"),
    ...               Species("OH-", ((0, -1),), -14.0, -1, kind="water")))
    >>> sol = equilibrium(tab, [0.0], T=298.15, gamma_of=gamma_function(298.15, "ideal"), pH=7.0)
    >>> S, g = derivatives(sol)
    >>> round(S / 2e-7, 12), g
    (1.0, {})
    """
    lin = Linearization(sol)
    return lin.S, lin.g(trace)


def response(sol, direction: dict[int, float], gamma_of=None) -> tuple[float, ...]:
    """First-order change of charge and ionic strength along a direction of the totals (and with I).

    At fixed pH and ionic strength the free concentrations of the present components other
    than H+ follow :math:`H_{rr}\\,dx_r = dT_r - h_{rk}\\,dT_k` (``k`` absent components, whose
    species appear in the proportions of :func:`derivatives`), so every species moves by
    :math:`dc_i = c_i \\sum_r a_{ir} dx_r` (plus ``u_i dT_k`` for the new ones). With
    ``gamma_of`` the same is done for a change of the ionic strength at fixed totals and pH
    (:meth:`Linearization.with_I`).

    Parameters
    ----------
    sol : Solution
        A solved water
    direction : dict
        Component index -> dT_j/ds [mol/L per unit s]
    gamma_of : callable, optional
        The water's ``lg(z, ion_size_A, I)``; if given, the derivatives with respect to I too

    Returns
    -------
    tuple of float
        d(charge)/ds [eq/L per unit s] and d(I_species)/ds [mol/L per unit s]
        (I_species = 1/2 sum z^2 c); with ``gamma_of`` also d(charge)/dI [eq/mol] and
        d(I_species)/dI [-] at fixed totals
    """
    lin = Linearization(sol)
    out = lin.along(direction)
    return out if gamma_of is None else out + lin.with_I(gamma_of)


def charge_response(sol, direction: dict[int, float], g: dict[int, float] | None = None) -> float:
    """d(charge)/ds at fixed pH and ionic strength when totals move by ``direction`` x ds [eq/L per unit s]."""
    if g is None:
        return Linearization(sol).along(direction)[0]
    z = sol.tableau.charges
    return math.fsum(v * (g.get(j, 0.0) + z[j]) for j, v in direction.items() if v and j)
