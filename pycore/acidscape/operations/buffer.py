"""Buffer intensity and buffer capacity of a water, and the fast charge terms they share.

Buffer intensity is the strong base needed per unit rise of pH,
beta = dC_B/dpH (Van Slyke [1]_). For a closed water at fixed ionic strength,
differentiating the charge balance of :mod:`acidscape.science.solver` gives the
analytic sum

.. math::

    \\beta = \\ln 10 \\Big( [H^+] + [OH^-] + \\sum_{systems} C_T\\,
             \\mathrm{var}_i \\Big), \\qquad
    \\mathrm{var}_i = \\sum_i i^2\\alpha_i - \\Big(\\sum_i i\\,\\alpha_i\\Big)^2,

where ``i`` counts the protons a species has released. For a monoprotic acid
var = alpha_0 alpha_1, the familiar ln10 C alpha_0 alpha_1 term, whose largest
value, at pH = pKa, is (ln 10 / 4) C = 0.576 C (Stumm & Morgan [2]_ §3.6,
from memory). The buffer capacity between two pH values, the base needed to
go from one to the other, is the exact difference of the charge terms,

.. math::

    \\Delta C_B = P(\\mathrm{pH}_2) - P(\\mathrm{pH}_1), \\qquad
    P = [OH^-] - [H^+] + \\sum_{systems} C_T \\sum_i i\\,\\alpha_i,

which equals the integral of beta between the two pH values (the proton
condition, Stumm & Morgan [2]_ ch. 4, from memory).

Here pH is the meter pH, -log10 a(H+); the pKa values are the mixed
(conditional) constants at the water's ionic strength. beta is therefore *per
unit of meter pH at fixed ionic strength*: the small change of I caused by
the base itself is not included (it changes beta by far less than 1 % below
I = 0.1 mol/L).

Functions
---------
buffer_intensity_at(pH, systems, pKw, ...)       beta of systems given by (pKa, total) [eq/(L pH)]
proton_level(pH, systems, pKw, ...)              P(pH) above [eq/L]
buffer_capacity_between(pH1, pH2, systems, ...)  base from pH1 to pH2 [eq/L]
buffer_intensity(eq, pH=None)                    beta of a solved water (closed, fixed I)
buffer_capacity(eq, pH1, pH2)                    the same from a solved water
buffer_curve(eq, pH_values)                      beta over many pH values
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

from ..science.activity import gamma_function  # noqa: F401  (re-exported: was defined here)
from ..errors import InputError
from ..science.speciation import _check_pH
from ..science.speciation import cumulative_pKa
from ..science.speciation import proton_moments as _moments

_LN10 = math.log(10.0)
_exp = math.exp


_cum = cumulative_pKa  # alkalinity.py imports it under this name


def _water(pH: float, pKw: float, lgH: float, lgOH: float) -> tuple[float, float]:
    return 10.0 ** (-pH - lgH), 10.0 ** (pH - pKw - lgOH)


def _check_systems(systems) -> list[tuple[list[float], float]]:
    out = []
    for k, item in enumerate(systems):
        try:
            pKa, total = item
        except (TypeError, ValueError):
            raise InputError(f"systems[{k}] must be a (pKa list, total_M) pair, got {item!r}",
                             field=f"systems[{k}]") from None
        total = float(total)
        if not math.isfinite(total) or total < 0:
            raise InputError(f"systems[{k}] total = {total!r} mol/L must be finite and >= 0",
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


def _eq_systems(eq) -> list[tuple[tuple[float, ...], float]]:
    return [(st.pKa_mixed, st.total_M) for st in eq.systems]


def buffer_intensity(eq, pH: float | None = None) -> float:
    """Buffer intensity of a solved water (:class:`acidscape.science.solver.Equilibrium`).

    Parameters
    ----------
    eq : Equilibrium
        A solved water; its mixed constants and totals are used as a closed water
    pH : float, optional
        Meter pH [-]; default the water's own pH

    Returns
    -------
    float
        beta [eq/(L pH)], per unit meter pH at the water's ionic strength

    Notes
    -----
    A water open to CO2 is treated as the closed sample at its current carbonate total
    (as in a lab beaker); an open water is buffered more strongly.
    """
    return buffer_intensity_at(eq.pH if pH is None else pH, _eq_systems(eq), eq.pKw,
                               eq.log10_gamma_H, eq.log10_gamma_OH)


def buffer_capacity(eq, pH1: float, pH2: float) -> float:
    """Strong base [eq/L] that takes a solved water from pH1 to pH2 (fixed totals and I)."""
    return buffer_capacity_between(pH1, pH2, _eq_systems(eq), eq.pKw, eq.log10_gamma_H, eq.log10_gamma_OH)


def buffer_curve(eq, pH_values: Iterable[float]) -> list[float]:
    """Buffer intensity [eq/(L pH)] of a solved water at each pH in ``pH_values``."""
    systems = _eq_systems(eq)
    return [buffer_intensity_at(p, systems, eq.pKw, eq.log10_gamma_H, eq.log10_gamma_OH) for p in pH_values]
