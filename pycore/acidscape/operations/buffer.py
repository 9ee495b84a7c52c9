"""Buffer intensity and buffer capacity of a water.

Buffer intensity is the strong base needed per unit rise of pH,
beta = dC_B/dpH (Van Slyke [1]_). For a set of closed acid-base systems at fixed
ionic strength, differentiating the proton balance gives the analytic sum

.. math::

    \\beta = \\ln 10 \\Big( [H^+] + [OH^-] + \\sum_{systems} C_T\\,
             \\mathrm{var}_i \\Big), \\qquad
    \\mathrm{var}_i = \\sum_i i^2\\alpha_i - \\Big(\\sum_i i\\,\\alpha_i\\Big)^2,

where ``i`` counts the protons a species has released. For a monoprotic acid
var = alpha_0 alpha_1, the familiar ln10 C alpha_0 alpha_1 term, whose largest
value, at pH = pKa, is (ln 10 / 4) C = 0.576 C (Stumm & Morgan [2]_ §3.6,
from memory). The buffer capacity between two pH values, the base needed to
go from one to the other, is the exact difference of the proton levels,

.. math::

    \\Delta C_B = P(\\mathrm{pH}_2) - P(\\mathrm{pH}_1), \\qquad
    P = [OH^-] - [H^+] + \\sum_{systems} C_T \\sum_i i\\,\\alpha_i,

which equals the integral of beta between the two pH values (the proton
condition, Stumm & Morgan [2]_ ch. 4, from memory).

A whole water (ion pairs and complexes included) is handled by the one equilibrium
model: its beta is ln 10 times the Schur complement of the model's Hessian, the exact
response of the proton total to pH with every other mass balance held
(:func:`acidscape.operations.probe.derivatives`; chosen over a numerical derivative,
which would need two extra solves and lose about half the digits), and its capacity
the exact difference of the proton totals of the closed water solved at the two pH.
For an acid-base-only water both reduce to the sums above.

Here pH is the meter pH, -log10 a(H+), at the water's ionic strength held fixed. beta
is therefore *per unit of meter pH at fixed ionic strength*: the small change of I
caused by the base itself is not included (it changes beta by far less than 1 % below
I = 0.1 mol/L).

Functions
---------
buffer_intensity_at(pH, systems, pKw, ...)       beta of systems given by (pKa, total) [eq/(L pH)]
proton_level(pH, systems, pKw, ...)              P(pH) above [eq/L]
buffer_capacity_between(pH1, pH2, systems, ...)  base from pH1 to pH2 [eq/L]
buffer_intensity(wm, sol, pH=None)               beta of a solved water (closed, fixed I, complexes)
buffer_capacity(wm, sol, pH1, pH2)               base from pH1 to pH2 for a solved water
buffer_curve(wm, sol, pH_values)                 beta over many pH values
gamma_function(T, model)                         re-export of acidscape.science.activity.gamma_function

References
----------
.. [1] D. D. Van Slyke, "On the measurement of buffer values and on the relationship of buffer
   value to the dissociation constant of the buffer and the concentration and reaction of the
   buffer solution", J. Biol. Chem. 52 (1922) 525-570 (from memory).
.. [2] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, New York, 1996.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

from ..errors import InputError
from ..science.activity import gamma_function  # noqa: F401  (re-exported: was defined here)
from ..science.speciation import _check_pH, cumulative_pKa
from ..science.speciation import proton_moments as _moments
from .probe import aqueous_totals, derivatives, held, resolve

_LN10 = math.log(10.0)
_exp = math.exp


_cum = cumulative_pKa


def _water(pH: float, pKw: float, lgH: float, lgOH: float) -> tuple[float, float]:
    return 10.0 ** (-pH - lgH), 10.0 ** (pH - pKw - lgOH)


def _check_systems(systems) -> list[tuple[list[float], float]]:
    out = []
    for k, item in enumerate(systems):
        try:
            pKa, total = item
        except (TypeError, ValueError):
            raise InputError(f"Acid-base system {k + 1} needs its pKa values and its total.",
                             field=f"systems[{k}]") from None
        total = float(total)
        if not math.isfinite(total) or total < 0:
            raise InputError(f"The total of acid-base system {k + 1} must be a number, zero or more (mol/L).",
                             field=f"systems[{k}]")
        out.append((_cum(pKa), total))
    return out


def buffer_intensity_at(pH: float, systems: Iterable, pKw: float = 14.0, log10_gamma_H: float = 0.0,
                        log10_gamma_OH: float = 0.0) -> float:
    """Buffer intensity of water plus closed acid-base systems at one pH.

    .. math::

        \\beta = \\ln 10\\,([H^+] + [OH^-] + \\sum C_T\\,\\mathrm{var}_i)

    Parameters
    ----------
    pH : float
        Meter pH, -log10 a(H+) [-]
    systems : iterable of (sequence of float, float)
        Each system's pKa values, on the meter-pH scale (mixed constants at the water's
        ionic strength; thermodynamic ones when activities are ideal) [-], and its total [mol/L]
    pKw : float
        Ion product of water [-]
    log10_gamma_H, log10_gamma_OH : float
        log10 activity coefficients of H+ and OH- [-]

    Returns
    -------
    float
        beta [eq/(L pH)]

    Examples
    --------
    A 0.1 mol/L monoprotic buffer at pH = pKa = 7 holds (ln 10 / 4) C (Van Slyke 1922);
    water adds only ln10 x 2e-7:

    >>> round(buffer_intensity_at(7.0, [([7.0], 0.1)]) / 0.1, 3)
    0.576
    """
    pH = _check_pH(pH)
    H, OH = _water(pH, pKw, log10_gamma_H, log10_gamma_OH)
    total = H + OH
    for cum, c in _check_systems(systems):
        total += c * _moments(pH, cum)[1]
    return _LN10 * total


def proton_level(pH: float, systems: Iterable, pKw: float = 14.0, log10_gamma_H: float = 0.0,
                 log10_gamma_OH: float = 0.0) -> float:
    """Protons released by water and the systems, P = [OH-] - [H+] + sum C_T mean(i).

    Parameters
    ----------
    pH : float
        Meter pH [-]
    systems : iterable of (sequence of float, float)
        (pKa on the meter-pH scale [-], total [mol/L]) per system
    pKw : float
        Ion product of water [-]
    log10_gamma_H, log10_gamma_OH : float
        log10 activity coefficients of H+ and OH- [-]

    Returns
    -------
    float
        P [eq/L]; its pH derivative is beta

    Examples
    --------
    >>> round(proton_level(7.0, []), 12)
    0.0
    """
    pH = _check_pH(pH)
    H, OH = _water(pH, pKw, log10_gamma_H, log10_gamma_OH)
    total = OH - H
    for cum, c in _check_systems(systems):
        total += c * _moments(pH, cum)[0]
    return total


def buffer_capacity_between(pH1: float, pH2: float, systems: Iterable, pKw: float = 14.0,
                            log10_gamma_H: float = 0.0, log10_gamma_OH: float = 0.0) -> float:
    """Strong base that takes a closed water from pH1 to pH2 (negative: strong acid).

    .. math::

        \\Delta C_B = \\int_{pH_1}^{pH_2} \\beta\\, d\\mathrm{pH} = P(pH_2) - P(pH_1)

    Parameters
    ----------
    pH1, pH2 : float
        Start and end meter pH [-]
    systems : iterable of (sequence of float, float)
        (pKa on the meter-pH scale [-], total [mol/L]) per system
    pKw : float
        Ion product of water [-]
    log10_gamma_H, log10_gamma_OH : float
        log10 activity coefficients of H+ and OH- [-]

    Returns
    -------
    float
        Base per litre [eq/L], at fixed totals and ionic strength (dilution neglected)

    Examples
    --------
    Half of a 0.1 mol/L monoprotic acid (pKa 7) is neutralised between pH = pKa and 3 units
    above it, where 0.1 % remains protonated:

    >>> round(buffer_capacity_between(7.0, 10.0, [([7.0], 0.1)]) / 0.1, 2)
    0.5
    """
    systems = list(systems)
    return (proton_level(pH2, systems, pKw, log10_gamma_H, log10_gamma_OH)
            - proton_level(pH1, systems, pKw, log10_gamma_H, log10_gamma_OH))


def _closed(wm, sol):
    """The sample's dissolved totals and its ionic strength (a closed water at fixed I)."""
    return aqueous_totals(sol), sol.I


def buffer_intensity(wm, sol, pH: float | None = None) -> float:
    """Buffer intensity of a solved water, closed, at its ionic strength, complexes included.

    .. math::

        \\beta = \\ln 10\\, S, \\qquad S = H_{HH} - H_{Hr} H_{rr}^{-1} H_{rH}

    the Schur complement of the model's Hessian (:func:`acidscape.operations.probe.derivatives`):
    the proton total's response to pH with every other mass balance held. For an acid-base
    water it is the analytic sum of :func:`buffer_intensity_at`.

    Parameters
    ----------
    wm : acidscape.science.tableau.WaterModel
        The water's tableau
    sol : acidscape.science.model.Solution
        Its solution
    pH : float, optional
        Meter pH [-]; default the water's own pH (else the closed water is solved again
        at that pH, at the same totals and ionic strength)

    Returns
    -------
    float
        beta [eq/(L pH)], per unit meter pH at the water's ionic strength

    Notes
    -----
    A water open to CO2 is treated as the closed sample at its current carbonate total
    (as in a lab beaker); an open water is buffered more strongly. Solids present are left
    out (the dissolved water).

    Examples
    --------
    0.1 mol/L of a monoprotic acid at pH = pKa = 7 (ideal): (ln 10 / 4) C plus water's share.

    >>> from acidscape.science.tableau import SystemInput, WaterModel
    >>> wm = WaterModel([SystemInput("a", "acid", ("HA", "A-"), (0, -1), (7.0,), 0.1)], [], T=298.15,
    ...                 pKw=14.0, model="ideal", complexes=False)
    >>> round(buffer_intensity(wm, wm.solve(pH=7.0)) / 0.1, 3)
    0.576
    """
    if pH is not None and pH != sol.pH:
        T, I = _closed(wm, sol)
        sol = resolve(wm, pH=_check_pH(pH), totals=T, I=I, closed=True, guess=sol.state)
    S, _ = derivatives(sol)
    return _LN10 * S


def buffer_curve(wm, sol, pH_values: Iterable[float]) -> list[float]:
    """Buffer intensity [eq/(L pH)] of a solved water at each pH in ``pH_values`` (closed, fixed I).

    Each pH is solved by the model at the water's dissolved totals and ionic strength, warm
    started from the one before.
    """
    T, I = _closed(wm, sol)
    out = []
    state = sol.state
    for p in pH_values:
        at = resolve(wm, pH=_check_pH(p), totals=T, I=I, closed=True, guess=state)
        state = at.state
        out.append(_LN10 * derivatives(at)[0])
    return out


def buffer_capacity(wm, sol, pH1: float, pH2: float) -> float:
    """Strong base [eq/L] that takes a solved water from pH1 to pH2 (negative: acid).

    The exact difference of the proton totals at the two pH values, at the water's dissolved
    totals and ionic strength: C_B = T_H(pH1) - T_H(pH2), the integral of beta between them.
    """
    T, I = _closed(wm, sol)
    a = resolve(wm, pH=_check_pH(pH1), totals=T, I=I, closed=True, guess=sol.state)
    b = resolve(wm, pH=_check_pH(pH2), totals=T, I=I, closed=True, guess=a.state)
    return held(a) - held(b)
