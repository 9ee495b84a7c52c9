"""The charge balance of a water and the pH at which it closes.

A water holds acid-base systems (each a total concentration spread over its
protonation states), strong ions and water's own H+ and OH-. Electroneutrality,

.. math::

    f(\\mathrm{pH}) = [H^+] - [OH^-] + \\sum_{ions} z_j c_j
        + \\sum_{systems} C_T \\sum_i z_i\\,\\alpha_i(\\mathrm{pH}) = 0,

fixes the pH. With pH = -log10 a(H+) (the meter's pH), each step's
thermodynamic constant becomes a *mixed* constant for the concentration ratio,

.. math::

    \\mathrm{p}K'_{a} = \\mathrm{p}K_a + \\log_{10}\\gamma_{base} - \\log_{10}\\gamma_{acid},
    \\qquad [H^+] = a_{H^+}/\\gamma_{H^+}, \\qquad [OH^-] = K_w / (a_{H^+}\\gamma_{OH^-}),

(Stumm & Morgan [1]_ §3.5, from memory). At fixed ionic strength ``f`` falls
strictly as pH rises (every alpha-weighted charge and [H+] - [OH-] do), so one
root lies in any bracket where ``f`` changes sign. The root is found by Newton
steps on the analytic derivative, kept inside a shrinking bracket and replaced
by bisection whenever a step leaves it (a safeguarded Newton method, [2]_): it
cannot diverge. Ionic strength, when not given, is iterated to self-consistency
around that solve.

An open system holds the neutral species of one system (H2CO3*) at a fixed
concentration (from a gas partial pressure), and its total follows the pH.

Functions and classes
---------------------
Component, Ion                 inputs of :func:`equilibrate`
equilibrate(...) -> Equilibrium  the pH (or given pH), ionic strength and every concentration

Being retired: every water operation now runs on the one equilibrium model
(:mod:`acidscape.science.model`); this module stays only until its last callers (the
acid-base view in :mod:`acidscape.boundary.api` and the comparison in ``tests/test_model.py``)
are gone.

References
----------
.. [1] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, 1996.
.. [2] W. H. Press, S. A. Teukolsky, W. T. Vetterling, B. P. Flannery, Numerical Recipes,
   3rd ed., Cambridge University Press, 2007, §9.4 (rtsafe).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .activity import gamma_function
from ..errors import ConvergenceError
from .speciation import alpha_from_cumulative, cumulative_pKa, proton_moments
from .tableau import ION_SIZE_H, ION_SIZE_OH, IonInput, SystemInput

_LN10 = math.log(10.0)
#: Bracket of the pH search: wide enough for pH -1..15 with every allowed total.
PH_BRACKET = (-4.0, 19.0)
#: Convergence tolerance on pH [-] and relative tolerance on ionic strength.
PH_TOL = 1e-10
I_RTOL = 1e-10



# The inputs are shared with the general model (acidscape.science.tableau).
Component = SystemInput
Ion = IonInput


@dataclass
class SystemState:
    """One component at the solution."""

    component: Component
    total_M: float
    pKa_mixed: tuple[float, ...]
    fractions: list[float]
    log10_gammas: list[float]


@dataclass
class Equilibrium:
    """Result of :func:`equilibrate`."""

    pH: float
    I: float
    pKw: float
    T: float
    model: str
    H_M: float
    OH_M: float
    log10_gamma_H: float
    log10_gamma_OH: float
    systems: list[SystemState]
    ions: list[tuple[Ion, float]]  # (ion, log10 gamma)
    residual_eq_per_L: float
    iterations: int
    pH_was_given: bool
    warnings: list[str] = field(default_factory=list)


class _Gamma:
    """Cache of log10 gamma by (charge, ion size) at one ionic strength.

    ``lg`` is :func:`acidscape.science.activity.gamma_function` at the water's T and model.
    """

    __slots__ = ("I", "lg", "cache")

    def __init__(self, I: float, lg):
        self.I, self.lg, self.cache = I, lg, {}

    def __call__(self, z: int, a: float | None) -> float:
        if z == 0:
            return 0.0
        key = (z, a)
        v = self.cache.get(key)
        if v is None:
            v = self.lg(z, a, self.I)
            self.cache[key] = v
        return v


def _mixed_constants(comp: Component, gamma: _Gamma) -> tuple[list[float], list[float]]:
    sizes = comp.ion_sizes or (None,) * len(comp.charges)
    lg = [gamma(z, a) for z, a in zip(comp.charges, sizes)]
    pKm = [pk + lg[j + 1] - lg[j] for j, pk in enumerate(comp.pKa)]
    return pKm, lg


def _system_charge(pH: float, cum: list[float], z0: int, total: float, fixed_first: float | None):
    """Charge [eq/L] of one system at pH and its derivative d/dpH, in one pass.

    With z_i = z0 - i, the mean charge is z0 - <i> and d<i>/dpH = ln10 var(i).
    """
    exp = math.exp
    if fixed_first is not None:
        base = -cum[0]
        s = si = si2 = 0.0
        for i, c in enumerate(cum):
            t = exp((i * pH - c - base) * _LN10)
            s += t
            si += i * t
            si2 += i * i * t
        # concentrations relative to the fixed species: c_i = fixed * t_i
        return fixed_first * (z0 * s - si), -fixed_first * si2 * _LN10 + fixed_first * z0 * si * _LN10
    mean, var = proton_moments(pH, cum)
    return total * (z0 - mean), -total * _LN10 * var


def _balance(pH, prepared, strong_charge, lgH, lgOH, pKw):
    """f(pH) and df/dpH for the prepared systems."""
    H = math.exp((-pH - lgH) * _LN10)
    OH = math.exp((pH - pKw - lgOH) * _LN10)
    f = H - OH + strong_charge
    df = -_LN10 * (H + OH)
    for cum, z0, total, fixed in prepared:
        q, dq = _system_charge(pH, cum, z0, total, fixed)
        f += q
        df += dq
    return f, df


def _check_bracket(prepared, strong_charge, lgH, lgOH, pKw) -> None:
    lo, hi = PH_BRACKET
    flo, _ = _balance(lo, prepared, strong_charge, lgH, lgOH, pKw)
    fhi, _ = _balance(hi, prepared, strong_charge, lgH, lgOH, pKw)
    if not (flo > 0 > fhi):
        raise ConvergenceError(
            f"the charge balance does not change sign between pH {lo:g} and {hi:g} "
            f"(f = {flo:.3g} and {fhi:.3g} eq/L): the composition is outside what the solver accepts",
            field="systems",
        )


def _solve_pH(prepared, strong_charge, lgH, lgOH, pKw, guess: float) -> tuple[float, int]:
    """Safeguarded Newton in the bracket PH_BRACKET (f(lo) > 0 > f(hi), checked by the caller)."""
    lo, hi = PH_BRACKET
    x = min(max(guess, lo), hi)
    for it in range(1, 300):
        f, df = _balance(x, prepared, strong_charge, lgH, lgOH, pKw)
        if f == 0.0:
            return x, it
        if f > 0:
            lo = x
        else:
            hi = x
        if df < 0:
            step = f / df
            if abs(step) < PH_TOL:
                return x - step, it
            xn = x - step
            if not lo < xn < hi:
                xn = 0.5 * (lo + hi)
        else:
            xn = 0.5 * (lo + hi)
        if (hi - lo) < PH_TOL:
            return xn, it
        x = xn
    raise ConvergenceError("the pH search did not converge in 300 steps", field=None)


def _alphas(pH: float, cum: list[float], fixed_first: float | None, total: float) -> tuple[list[float], float]:
    """Fractions at pH and the system total (which follows pH in an open system)."""
    alphas = alpha_from_cumulative(pH, cum)
    if fixed_first is not None:
        total = fixed_first / alphas[0] if alphas[0] > 0 else math.inf
    return alphas, total


def equilibrate(
    components: list[Component],
    ions: list[Ion],
    *,
    T: float,
    pKw: float,
    model: str = "davies",
    I_fixed: float | None = None,
    pH: float | None = None,
    pH_guess: float = 7.0,
    max_outer: int = 100,
) -> Equilibrium:
    """Solve the charge balance (or speciate at a given pH) with consistent activities.

    Parameters
    ----------
    components : list of Component
        Acid-base systems; their ``pKa`` are thermodynamic at ``T``
    ions : list of Ion
        Strong ions
    T : float
        Temperature [K]
    pKw : float
        Ion product of water at ``T`` [-]
    model : str
        Activity model, one of :data:`acidscape.science.activity.MODELS`
    I_fixed : float, optional
        Ionic strength held fixed [mol/L]; if None it is computed from the composition
    pH : float, optional
        If given, speciate at this pH [-] instead of solving for it
    pH_guess : float
        Starting point of the search [-]

    Returns
    -------
    Equilibrium
        pH, ionic strength, concentrations, activity coefficients and the charge-balance
        residual [eq/L] at the answer
    """
    gamma_of = gamma_function(T, model)
    strong_charge = sum(ion.charge * ion.conc_M for ion in ions)
    strong_I = 0.5 * sum(ion.charge**2 * ion.conc_M for ion in ions)
    I = I_fixed if I_fixed is not None else strong_I
    x = pH if pH is not None else pH_guess
    total_iters = 0
    checked = False
    for outer in range(max_outer):
        gamma = _Gamma(I, gamma_of)
        lgH = gamma(1, ION_SIZE_H)
        lgOH = gamma(-1, ION_SIZE_OH)
        prepared = []
        mixed = []
        for comp in components:
            pKm, lg = _mixed_constants(comp, gamma)
            cum = cumulative_pKa(pKm)
            prepared.append((cum, comp.charges[0], comp.total_M, comp.fixed_first_M))
            mixed.append((pKm, lg))
        if pH is None:
            if not checked:
                _check_bracket(prepared, strong_charge, lgH, lgOH, pKw)
                checked = True
            x, its = _solve_pH(prepared, strong_charge, lgH, lgOH, pKw, x)
            total_iters += its
        H = math.exp((-x - lgH) * _LN10)
        OH = math.exp((x - pKw - lgOH) * _LN10)
        states = []
        I_sys = 0.0
        f = H - OH + strong_charge
        for comp, (cum, z0, total, fixed), (pKm, lg) in zip(components, prepared, mixed):
            alphas, tot = _alphas(x, cum, fixed, total)
            states.append(SystemState(comp, tot, tuple(pKm), alphas, lg))
            I_sys += tot * sum(z * z * a for z, a in zip(comp.charges, alphas))
            f += tot * sum(z * a for z, a in zip(comp.charges, alphas))
        I_new = 0.5 * (H + OH) + 0.5 * I_sys + strong_I
        if I_fixed is not None:
            break
        if model == "ideal" or abs(I_new - I) <= I_RTOL * max(I_new, 1e-14):
            # The state above was computed with gammas at I; I_new differs from I by at most
            # I_RTOL relative, so the reported I is I_new (ideal: gammas do not depend on I).
            I = I_new
            break
        I = I_new
    else:
        raise ConvergenceError(
            f"ionic strength did not settle in {max_outer} iterations (last {I:.6g} mol/L)", field=None
        )
    ion_states = [(ion, gamma(ion.charge, ion.ion_size_A)) for ion in ions]
    return Equilibrium(
        pH=x, I=I, pKw=pKw, T=T, model=model, H_M=H, OH_M=OH, log10_gamma_H=lgH, log10_gamma_OH=lgOH,
        systems=states, ions=ion_states, residual_eq_per_L=f, iterations=total_iters,
        pH_was_given=pH is not None,
    )
