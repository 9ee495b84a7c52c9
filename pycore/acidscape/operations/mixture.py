"""A closed water plus an amount of one chemical, solved by the one equilibrium model at a given pH.

Titration curves and doses ask the same question: how much of a chemical brings a water to
a given pH? Adding ``d`` mol of the chemical per litre of sample (``n_j`` mol of component j
per mol: its strong ions and acid-base systems, :mod:`acidscape.operations.dosing`) gives
the totals

.. math::

    T_j(d) = \\frac{T_{s,j} + d\\,n_j}{1 + d/C_t} \\quad\\text{(titrant of } C_t \\text{ mol/L, dilution)},
    \\qquad T_j(d) = T_{s,j} + d\\,n_j \\quad\\text{(a dose per litre treated, or a gas)}.

At a fixed pH the model gives every concentration, and the mixture is the answer when it
is electroneutral: its charge :math:`R(d) = \\sum_i z_i c_i = T_H + \\sum_{j \\ne H} z_j T_j`
vanishes (:math:`T_H` the proton total the species hold). Without complexes :math:`R` is
linear-fractional in ``d`` at fixed ionic strength, and one Newton step from any start is
de Levie's explicit titrant amount [1]_ [2]_; with complexes it is smooth and monotone, and
Newton's method on

.. math::

    \\frac{dR}{dd} = \\sum_j \\big(g_j + z_j\\big) \\frac{dT_j}{dd}

(``g_j`` the protons held per mole of j added at fixed pH, a Schur complement of the
model's Hessian, :func:`acidscape.operations.probe.derivatives`) converges in two or three
steps, kept inside a bracket (bisection when a step leaves it). The ionic strength is
iterated jointly with ``d`` (each step solves at the last step's ionic strength), unless the
water holds it fixed. With solids allowed to form, secant steps replace the Newton steps
(the derivative would have to follow the active solids).

The slope of a titration curve, :math:`dd/d\\mathrm{pH} = \\ln 10\\,S / (dR/dd)` (``S`` the
same Schur complement for H+: the mixture's buffer intensity over ln 10), locates the
equivalence points.

Classes and functions
---------------------
Mixture(closed, chemical, titrant_M=None, allow=(), aqueous=False)
    ``solve(pH, d)``, ``amount(pH)``, ``slope(sol, d)``, ``charge_per_mol(sol, d)``,
    ``charge_at(pH, d)``, ``root_between(...)``
limit_pH_trace(mix, pH0, upward, end, I)
    the pH a chemical dosed without dilution approaches however much is added

References
----------
.. [1] R. de Levie, "A general simulator for acid-base titrations", J. Chem. Educ. 76 (1999)
   987-991, doi:10.1021/ed076p987 (from memory).
.. [2] R. de Levie, Principles of Quantitative Chemical Analysis, McGraw-Hill, 1997, ch. 6 (from memory).
"""

from __future__ import annotations

import math

from ..checks import PH_RANGE as _PH_RANGE
from ..constants import LN10
from ..data import library
from ..science.activity import VALIDITY_I_M
from ..science.tableau import IonInput, WaterModel
from .probe import Linearization, aqueous_totals, ionic_strength, resolve

#: Largest titrant or chemical amount accepted [mol per litre of sample].
MAX_AMOUNT_M = 5.0
#: Lowest and highest pH a curve or a dose may be asked to reach [-] (the one range, acidscape.checks).
PH_RANGE = _PH_RANGE
#: Relative tolerance on the amount and on the ionic strength at each pH.
AMOUNT_RTOL = 1e-12
I_RTOL = 1e-11
#: A Newton step on (amount, I) this small (relative) is the last one taken.
ACCEPT_STEP = 1e-6
#: Charge left at the answer, relative to the sum of |z| c of the mixture's species.
R_RTOL = 1e-13


class Mixture:
    """A closed water and one chemical, as one tableau holding every component of both.

    Parameters
    ----------
    closed : acidscape.operations.closure.Closed
        The closed, electroneutral water (its ``wm`` and ``sol``)
    chemical : acidscape.operations.dosing.Chemical
        What is added
    titrant_M : float, optional
        Titrant concentration [mol/L]; None for a dose without dilution (a plant dose per
        litre treated, or a gas)
    allow : tuple of str
        Solids allowed to form or dissolve as the chemical is added
    aqueous : bool
        Start from the water's dissolved totals (solids present in it left out, a filtered
        sample) instead of its totals
    """

    def __init__(self, closed, chemical, *, titrant_M: float | None = None, allow: tuple = (),
                 aqueous: bool = False):
        wm0 = closed.wm
        self.chem = chemical
        self.titrant_M = titrant_M
        systems = list(wm0.systems)
        ions = list(wm0.ions)
        add: dict[str, float] = {}
        for key, n in chemical.systems:
            if key not in wm0.comp_index and all(s.key != key for s in systems):
                systems.append(chemical.components_at(wm0.T)[key])
            add[key] = add.get(key, 0.0) + n
        for iid, n in chemical.ions:
            ion = library.get_ion(iid)
            key = ion.id
            if key not in wm0.comp_index and iid in wm0.comp_index:
                key = iid  # the water names it by the id the chemical uses
            if key not in wm0.comp_index and all(i.key != key for i in ions):
                ions.append(IonInput(key, ion.formula, ion.charge, 0.0, ion.ion_size_A))
            add[key] = add.get(key, 0.0) + n
        self.wm = wm = WaterModel(systems, ions, T=wm0.T, pKw=wm0.pKw, model=wm0.model,
                                  complexes=wm0.complexes, I_fixed=wm0.I_fixed)
        m = len(wm.tab.components)
        base = aqueous_totals(closed.sol) if aqueous else list(wm0.totals)
        self.sample = [0.0] * m
        for key, j0 in wm0.comp_index.items():
            self.sample[wm.comp_index[key]] = base[j0]
        self.per_mol = [0.0] * m
        for key, n in add.items():
            self.per_mol[wm.comp_index[key]] += n
        self.allow = tuple(allow)
        self.I0 = closed.sol.I
        self._stoich = [wm.tab.solids[wm.solid_index[s]].stoich for s in self.allow]
        self._last = None
        self.stopped = None

    # -- totals ------------------------------------------------------------------------
    def totals(self, d: float) -> list[float]:
        """Component totals of the mixture [mol/L] after ``d`` mol of chemical per litre of sample."""
        if self.titrant_M is None:
            return [s + d * n for s, n in zip(self.sample, self.per_mol)]
        f = 1.0 / (1.0 + d / self.titrant_M)
        return [(s + d * n) * f for s, n in zip(self.sample, self.per_mol)]

    def direction(self, d: float) -> dict[int, float]:
        """dT_j/dd of every component at amount ``d`` [mol/mol]."""
        if self.titrant_M is None:
            return {j: n for j, n in enumerate(self.per_mol) if n and j}
        v = d / self.titrant_M
        f = 1.0 / (1.0 + v)
        T = self.totals(d)
        return {j: (n - T[j] / self.titrant_M) * f for j, n in enumerate(self.per_mol) if j and (n or T[j])}

    # -- one state ---------------------------------------------------------------------
    def _allowed(self, T):
        return tuple(s for s, st in zip(self.allow, self._stoich) if all(T[j] > 0.0 for j, _ in st if j))

    def solve(self, pH: float, d: float, *, I: float | None = None, guess: dict | None = None):
        """The mixture at a fixed pH [-] and amount [mol/L of sample], at ionic strength ``I`` (or its own)."""
        T = self.totals(d)
        return resolve(self.wm, pH=pH, totals=T, I=I, allow=self._allowed(T), guess=guess)

    def _lin(self, sol) -> Linearization:
        """The linearisation of a state (the last one is kept: slope and amount share it)."""
        if self._last is None or self._last.sol is not sol:
            self._last = Linearization(sol)
        return self._last

    def charge_per_mol(self, sol, d: float) -> float:
        """dR/dd at fixed pH and ionic strength [eq/mol] (no solids followed)."""
        return self._lin(sol).along(self.direction(d))[0]

    def slope(self, sol, d: float) -> float:
        """dd/dpH along the curve at fixed ionic strength [mol/(L pH)] (no solids followed)."""
        lin = self._lin(sol)
        dR = lin.along(self.direction(d))[0]
        return LN10 * lin.S / dR if dR else math.inf

    # -- the amount at a pH ------------------------------------------------------------
    def amount(self, pH: float, d0: float = 0.0, *, I0: float | None = None, guess: dict | None = None,
               d_max: float = math.inf, sign: float | None = None, exact: bool = False,
               first_branch: bool = True, robust: bool = False):
        """Chemical per litre of sample that brings the mixture to ``pH``, with its ionic strength.

        Safeguarded Newton (secant with solids) on R(d) = 0 from ``d0``; the ionic strength is
        updated from each state. ``sign`` (+1 base, -1 acid) orients R; default from the slope
        at ``d0``. Unless ``exact``, a last Newton step below :data:`ACCEPT_STEP` is taken
        without solving again (the state returned is then the one just before it). With
        ``first_branch`` the search stops where the charge, followed along the self-consistent
        ionic strength, turns back before reaching zero: the pH passes through an extreme as
        the amount grows (the salt added moves the meter pH against the chemical's action),
        and the target lies beyond it; a root further on (where an activity model outside its
        range turns upward) is not looked for. :attr:`stopped` then says why the search ended:
        ``"away"`` (the charge moves away from zero from the start), ``"turn"`` or ``"cap"``
        (``d_max`` reached). With ``robust`` (and whenever solids may form) every state is
        solved in full and the root bracketed (:meth:`_amount_bracketed`): slower, for a single
        amount such as a dose.

        Returns
        -------
        tuple
            (d [mol/L], Solution at d, converged: bool, ionic strength of the mixture at d
            [mol/L]). Not converged: no root with 0 <= d <= d_max (the returned d is where the
            search stopped)
        """
        if self.allow or robust:
            return self._amount_bracketed(pH, d0, guess, d_max, sign, first_branch)
        held_I = self.wm.I_fixed is not None
        I = self.wm.I_fixed if held_I else (I0 if I0 is not None else self.I0)
        gamma_of = None if held_I else self.wm.gamma_of
        d = max(d0, 0.0)
        lo, hi = 0.0, math.inf     # g(lo) < 0 (or lo = 0 untested), g(hi) > 0, at the current I
        hi_turn = math.inf         # a point past the extreme of the pH with g < 0 (first branch)
        prev = None                # (d, g) of the last state at the current I, for secant steps
        state = guess
        # the linearisation of the state we start from (the curve's last point) moves its free
        # concentrations to the new pH and totals: a closer start for the model
        last = self._last
        lin_prev = last if last is not None and guess is not None and last.sol.state is guess \
            and not last.sol.solids else None
        sol = None
        for _ in range(60):
            start = state if lin_prev is None else lin_prev.predict(self.totals(d), pH, I, self.wm.gamma_of)
            sol = self.solve(pH, d, I=I, guess=start)
            state = sol.state
            R = sol.charge_residual
            scale = sum(abs(sp.charge) * c for sp, c in zip(self.wm.tab.species, sol.conc))
            I_new = I if held_I else ionic_strength(sol)
            if sol.solids:
                dR = None
                dI = dR_dI = dI_dI = 0.0
                lin_prev = None
            else:
                lin = lin_prev = self._lin(sol)
                dR, dI = lin.along(self.direction(d))
                dR_dI, dI_dI = (0.0, 0.0) if held_I else lin.with_I(gamma_of)
            if sign is None:
                sign = 1.0 if (dR if dR is not None else 1.0) >= 0.0 else -1.0
            g = sign * R
            I_ok = held_I or abs(I_new - I) <= I_RTOL * max(I_new, 1e-14)
            if abs(R) <= R_RTOL * scale and I_ok:
                return d, sol, True, I
            if abs(I_new - I) > 1e-6 * max(I_new, 1e-14):
                lo, hi, hi_turn, prev = 0.0, math.inf, math.inf, None   # a bracket holds at one I only
            past = False
            if first_branch and dR is not None and g < 0.0 and d > 0.0:
                denom = 1.0 - dI_dI
                dR_eff = dR + (dR_dI * dI / denom if denom and not held_I else 0.0)
                # past the extreme of the pH without reaching the target: the first root, if any,
                # lies between lo and here; when that interval closes there is none
                past = sign * dR_eff <= 0.0
            if past:
                hi_turn = min(hi_turn, d)
                if hi_turn - lo <= 1e-9 * hi_turn:
                    self.stopped = "turn"
                    return d, sol, False, I
            elif g < 0.0:
                lo = d
            elif g > 0.0:
                hi = d
            if hi <= 0.0:
                self.stopped = "away"   # the chemical moves R away from zero from the start
                return d, sol, False, I
            dI_next = 0.0
            newton = False
            newton_ok = not past and dR is not None and sign * dR > 0.0
            if past:
                dn = math.nan
            elif dR is not None and sign * dR > 0.0:
                newton = True
                # Newton on (d, I): R = 0 and I_species(d, I) = I
                F2 = I_new - I
                a11, a12, a21, a22 = dR, dR_dI, dI, dI_dI - 1.0
                det = a11 * a22 - a12 * a21
                if det != 0.0 and not held_I:
                    step_d = (-R * a22 + F2 * a12) / det
                    dI_next = (-F2 * a11 + R * a21) / det
                else:
                    step_d = -R / dR
                dn = d + step_d
            elif prev is not None and g != prev[1]:
                dn = d - g * (d - prev[0]) / (g - prev[1])
            else:
                dn = math.nan
            prev = (d, g)
            top = min(hi, hi_turn)
            if not (lo < dn < top) or not math.isfinite(dn):
                dI_next = 0.0
                newton = False
                d_only = d - R / dR if newton_ok else math.nan
                if lo < d_only < top:
                    # the joint step on (d, I) left the bracket (which holds at this ionic strength
                    # only); the Newton step at this ionic strength stays inside it
                    dn = d_only
                elif math.isfinite(top):
                    dn = 0.5 * (lo + top)
                else:
                    dn = 2.0 * max(d, lo, 1e-12 * max(scale, 1e-12))
            if dn > d_max and not math.isfinite(hi):
                if d >= d_max:
                    self.stopped = "cap"
                    return d, sol, False, I
                dn = d_max
            if I_ok and abs(dn - d) <= AMOUNT_RTOL * max(d, dn) and abs(R) <= 1e3 * R_RTOL * scale:
                return d, sol, True, I   # the next step is below the tolerance: d and its state agree
            if not exact and newton and lo < dn < hi and abs(dn - d) <= ACCEPT_STEP * dn and abs(dI_next) <= ACCEPT_STEP * I:
                # Newton converges quadratically: after a step this small the amount is exact to
                # about ACCEPT_STEP**2; the state returned is the one at d (its I and slope agree
                # with the answer to ACCEPT_STEP)
                return dn, sol, True, I + dI_next
            if not held_I:
                I = I + dI_next if dI_next else max(I_new + dI * (dn - d), 0.0)
            d = dn
        # not settled (a bracket found at one ionic strength can exclude the root at the next):
        # the full solves, each at the mixture's own ionic strength, bracket the root robustly
        self.stopped = None
        return self._amount_bracketed(pH, d0, guess, d_max, sign, first_branch)

    def charge_at(self, pH: float, d: float, guess: dict | None = None):
        """(R [eq/L], charge scale sum |z| c [eq/L], Solution) of the mixture at pH and d, its
        ionic strength and solids settled by the model."""
        sol = self.solve(pH, d, guess=guess)
        scale = sum(abs(sp.charge) * c for sp, c in zip(self.wm.tab.species, sol.conc))
        return sol.charge_residual, scale, sol

    def root_between(self, pH, a, ga, b, gb, sign, guess=None):
        """The amount in (a, b) where R = 0, given sign*R(a) < 0 < sign*R(b): secant steps
        through the two latest points while they stay inside the bracket, else false position
        with the stalled end's value halved (the Illinois method; Dowell & Jarratt, BIT 11
        (1971) 168, from memory), else bisection. Returns (d, Solution, converged)."""
        state = guess
        side = 0
        last = None
        fa, fb = ga, gb
        sol = None
        c = 0.5 * (a + b)
        for _ in range(200):
            c = None
            if last is not None and last[0][1] != last[1][1]:
                (x0, y0), (x1, y1) = last
                c = x1 - y1 * (x1 - x0) / (y1 - y0)
            if c is None or not a < c < b:
                c = b - fb * (b - a) / (fb - fa) if fb != fa else 0.5 * (a + b)
            if not a < c < b:
                c = 0.5 * (a + b)
            Rc, scale, sol = self.charge_at(pH, c, state)
            state = sol.state
            gc = sign * Rc
            last = ((last[1] if last else ((b, gb) if side >= 0 else (a, ga))), (c, gc))
            if abs(Rc) <= R_RTOL * scale or (b - a) <= AMOUNT_RTOL * b:
                return c, sol, True
            if gc < 0.0:
                a, ga, fa = c, gc, gc
                if side == -1:
                    fb *= 0.5
                side = -1
            else:
                b, gb, fb = c, gc, gc
                if side == 1:
                    fa *= 0.5
                side = 1
        return c, sol, False

    def _amount_bracketed(self, pH, d0, guess, d_max, sign, first_branch):
        """The amount from full solves (the model settles the ionic strength and any solids), so
        R(d) is one continuous, piecewise smooth function: bracketed, then closed by
        :meth:`root_between`.

        The bracket is sought upward from ``d0`` by secant steps (the first from the slope
        without solids; later ones at most fourfold). With ``first_branch``, a drop of R before
        it reaches zero means the pH passed an extreme: a golden-section search finds that
        extreme, and the first root lies before it if R there is past zero; otherwise the
        search goes on (the pH may turn again) until the mixture leaves the Davies equation's
        range of ionic strength (:attr:`stopped` = "turn").
        """
        d = max(d0, 0.0)
        R, scale, sol = self.charge_at(pH, d, guess)
        state = sol.state
        if sign is None:
            sign = 1.0
        if abs(R) <= R_RTOL * scale:
            return d, sol, True, sol.I
        a, ga = d, sign * R
        if ga > 0.0:
            if d == 0.0:
                self.stopped = "away"
                return 0.0, sol, False, sol.I
            Ra, scale, sol_a = self.charge_at(pH, 0.0, state)
            if sign * Ra > 0.0:
                self.stopped = "away"
                return 0.0, sol_a, False, sol_a.I
            d, sol, ok = self.root_between(pH, 0.0, sign * Ra, a, ga, sign, state)
            return d, sol, ok, sol.I
        pts = [(a, ga)]
        rising = True
        limit_I = VALIDITY_I_M.get(self.wm.model, math.inf) if self.wm.model == "davies" else math.inf
        for _ in range(200):
            if len(pts) >= 2 and pts[-1][1] != pts[-2][1]:
                slope = (pts[-1][1] - pts[-2][1]) / (pts[-1][0] - pts[-2][0])
            else:
                slope = self._lin(sol).along(self.direction(a))[0] * sign if not sol.solids else 0.0
            step = -ga / slope if slope > 0.0 else math.inf
            step = max(step, 1e-12 * max(scale, 1e-12))
            if len(pts) >= 2 or not math.isfinite(step):
                step = min(step, 3.0 * max(a, 1e-9 * max(scale, 1e-12)))
            nxt = min(a + step, d_max)
            Rn, scale, sol = self.charge_at(pH, nxt, state)
            state = sol.state
            gn = sign * Rn
            if abs(Rn) <= R_RTOL * scale:
                return nxt, sol, True, sol.I
            if gn > 0.0:
                d, sol, ok = self.root_between(pH, a, ga, nxt, gn, sign, state)
                return self._within(d, sol, ok, first_branch, limit_I)
            if first_branch and gn < ga and rising:
                # the charge turned back before reaching zero: the largest value lies between the
                # point before a and nxt; if it passes zero the first root lies before it
                left = pts[-2][0] if len(pts) >= 2 else pts[-1][0]
                peak, gp, sol_p = self._peak(pH, left, nxt, sign, state)
                if gp >= 0.0:
                    lo_pt = max((p for p in pts if p[0] < peak), default=(left, ga))
                    d, sol, ok = self.root_between(pH, lo_pt[0], lo_pt[1], peak, gp, sign, sol_p.state)
                    return self._within(d, sol, ok, first_branch, limit_I)
            if first_branch and sol.I > limit_I:
                # beyond the activity model's range (where the Davies equation turns upward and
                # would invent a crossing) the search stops: the target is not reached before
                self.stopped = "turn"
                return nxt, sol, False, sol.I
            rising = gn >= ga
            pts.append((nxt, gn))
            a, ga = nxt, gn
            if a >= d_max:
                self.stopped = "cap"
                return a, sol, False, sol.I
        self.stopped = "iterations"
        return a, sol, False, sol.I

    def _within(self, d, sol, ok, first_branch, limit_I):
        """A root found beyond the activity model's range is not trusted (see above)."""
        if ok and first_branch and sol.I > limit_I:
            self.stopped = "turn"
            return d, sol, False, sol.I
        return d, sol, ok, sol.I

    def _peak(self, pH, a, b, sign, state):
        """Golden-section search for the largest sign*R on [a, b] (to 1e-9 relative)."""
        g = (math.sqrt(5.0) - 1.0) / 2.0
        c, d = b - g * (b - a), a + g * (b - a)
        Rc, _, sc = self.charge_at(pH, c, state)
        Rd, _, sd = self.charge_at(pH, d, sc.state)
        fc, fd = sign * Rc, sign * Rd
        while b - a > 1e-9 * b:
            if fc > 0.0:
                return c, fc, sc
            if fd > 0.0:
                return d, fd, sd
            if fc > fd:
                b, d, fd, sd = d, c, fc, sc
                c = b - g * (b - a)
                Rc, _, sc = self.charge_at(pH, c, sd.state)
                fc = sign * Rc
            else:
                a, c, fc, sc = c, d, fd, sd
                d = a + g * (b - a)
                Rd, _, sd = self.charge_at(pH, d, sc.state)
                fd = sign * Rd
        return (c, fc, sc) if fc > fd else (d, fd, sd)


def limit_pH_trace(mix: Mixture, pH0: float, upward: bool, end: float, I: float) -> float | None:
    """pH between pH0 and ``end`` where one more mole of the chemical brings no charge, or None.

    The charge a trace of chemical brings at fixed pH (sample totals and ionic strength)
    falls as pH rises, so it changes sign at most once; bisection finds where. This is the
    pH a dose without dilution approaches however much is added.
    """
    def M(p):
        sol = mix.solve(p, 0.0, I=I)
        return mix.charge_per_mol(sol, 0.0)

    m0 = M(pH0)
    if m0 == 0.0 or (M(end) > 0.0) == (m0 > 0.0):
        return None
    a, b = pH0, end
    while abs(b - a) > 1e-9:
        mid = 0.5 * (a + b)
        if (M(mid) > 0.0) == (m0 > 0.0):
            a = mid
        else:
            b = mid
    return 0.5 * (a + b)
