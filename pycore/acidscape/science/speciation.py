"""Alpha fractions of a polyprotic acid system.

For an acid H_nA with dissociation constants K_1..K_n the fraction of the
species that has lost ``i`` protons is

.. math::

    \\alpha_i = \\frac{K_1 \\cdots K_i\\,[H^+]^{n-i}}{\\sum_{k=0}^{n} K_1 \\cdots K_k\\,[H^+]^{n-k}}

(the textbook definition, e.g. Stumm & Morgan [1]_ §3.4). Dividing every term by
:math:`[H^+]^n` and working in log10 gives the stable form used here:

.. math::

    \\log_{10} t_i = i\\,\\mathrm{pH} - \\sum_{j\\le i} \\mathrm{p}K_{a,j}, \\qquad
    \\alpha_i = \\frac{10^{\\log t_i - m}}{\\sum_k 10^{\\log t_k - m}}, \\quad m = \\max_k \\log t_k

(the log-sum-exp trick), which neither overflows nor underflows to a false zero
for any fraction above about 1e-300.

Functions
---------
alpha_fractions(pH, pKa)            fractions of the n+1 species at one pH
log10_alpha_fractions(pH, pKa)      their log10 (finite even when a fraction underflows)
alpha_curve(pH_values, pKa)         fractions over many pH values (plain lists)
mean_charge(pH, pKa, z0)            average charge per mole of the system
mean_protons_released(pH, pKa)      average number of protons released per mole
proton_moments(pH, cum)             mean and variance of protons released (charge, buffer)
generic_species_names(n, z0)        names H_nA .. A for an acid without a library entry

``pH`` here is whatever scale the constants are on: with thermodynamic pKa it
is -log10 a(H+); with conditional ("mixed") constants (:mod:`acidscape.science.model` at an ionic strength)
it is still the meter pH, since the activity coefficients of the acid and base
are folded into the constant.

References
----------
.. [1] W. Stumm, J. J. Morgan, Aquatic Chemistry, 3rd ed., Wiley, New York, 1996.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence

from ..errors import InputError

_LN10 = math.log(10.0)
#: Largest number of dissociation steps accepted (EDTA needs 6; room for more).
MAX_STEPS = 12
#: pH and pKa beyond these bounds are refused as absurd rather than computed.
PH_LIMITS = (-5.0, 20.0)
PKA_LIMITS = (-15.0, 30.0)


def _check_pKa(pKa: Sequence[float], field: str = "pKa") -> tuple[float, ...]:
    try:
        values = tuple(float(v) for v in pKa)
    except (TypeError, ValueError):
        raise InputError("The pKa values must be numbers, such as 4.76 or 2.15; 7.20; 12.35.",
                         field=field) from None
    if not values:
        raise InputError("Enter at least one pKa value, such as 4.76.", field=field)
    if len(values) > MAX_STEPS:
        raise InputError(
            f"{len(values)} pKa values were given; an acid has at most {MAX_STEPS} dissociation steps.",
            field=field,
        )
    for i, v in enumerate(values):
        if not math.isfinite(v) or not PKA_LIMITS[0] <= v <= PKA_LIMITS[1]:
            shown = f"{v:.6g}" if math.isfinite(v) else "too large"
            raise InputError(
                f"pKa value {i + 1} ({shown}) must be from {PKA_LIMITS[0]:g} to {PKA_LIMITS[1]:g}.",
                field=f"{field}[{i}]",
            )
    return values


def _check_pH(pH: float, field: str = "pH") -> float:
    try:
        value = float(pH)
    except (TypeError, ValueError):
        raise InputError("The pH must be a number, such as 7.5.", field=field) from None
    if not math.isfinite(value) or not PH_LIMITS[0] <= value <= PH_LIMITS[1]:
        raise InputError(f"The pH must be from {PH_LIMITS[0]:g} to {PH_LIMITS[1]:g}.", field=field)
    return value


def cumulative_pKa(pKa: Sequence[float]) -> list[float]:
    """Cumulative sums s_i = pKa_1 + ... + pKa_i, with s_0 = 0 (the form every loop here uses).

    >>> cumulative_pKa([2.0, 7.0])
    [0.0, 2.0, 9.0]
    """
    out = [0.0]
    for v in pKa:
        out.append(out[-1] + v)
    return out


def log10_alpha_from_cumulative(pH: float, cum: Sequence[float]) -> list[float]:
    """log10 alpha_i from cumulative pKa sums, unchecked (inner loops; see log10_alpha_fractions)."""
    logs = [i * pH - s for i, s in enumerate(cum)]
    m = max(logs)
    log_sum = m + math.log10(sum(math.exp((x - m) * _LN10) for x in logs))
    return [x - log_sum for x in logs]


def alpha_from_cumulative(pH: float, cum: Sequence[float]) -> list[float]:
    """alpha_i from cumulative pKa sums, unchecked (inner loops; see alpha_fractions)."""
    logs = [i * pH - s for i, s in enumerate(cum)]
    m = max(logs)
    terms = [math.exp((x - m) * _LN10) for x in logs]
    total = sum(terms)
    return [t / total for t in terms]


def log10_alpha_fractions(pH: float, pKa: Sequence[float]) -> list[float]:
    """log10 of each species' fraction, most protonated first.

    Parameters
    ----------
    pH : float
        -log10 of the hydrogen-ion activity [-]
    pKa : sequence of float
        Dissociation constants, step 1 first [-]

    Returns
    -------
    list of float
        log10(alpha_i) for i = 0..n [-]

    Examples
    --------
    Acetic acid (pKa 4.756, Goldberg et al. 2002) one unit above its pKa:

    >>> [round(v, 4) for v in log10_alpha_fractions(5.756, [4.756])]
    [-1.0414, -0.0414]
    """
    pH = _check_pH(pH)
    pKa = _check_pKa(pKa)
    return log10_alpha_from_cumulative(pH, cumulative_pKa(pKa))


def alpha_fractions(pH: float, pKa: Sequence[float]) -> list[float]:
    """Fraction of each species of a polyprotic acid at one pH.

    .. math::

        \\alpha_i = \\frac{K_1 \\cdots K_i\\,[H^+]^{n-i}}{\\sum_k K_1 \\cdots K_k\\,[H^+]^{n-k}}

    Parameters
    ----------
    pH : float
        -log10 of the hydrogen-ion activity [-]
    pKa : sequence of float
        Dissociation constants on the same scale, step 1 first [-]

    Returns
    -------
    list of float
        alpha_0 (most protonated) .. alpha_n; they sum to 1 [-]

    Notes
    -----
    Evaluated with the log-sum-exp form, so pH from -5 to 20 and pKa from -15 to 30
    give finite fractions; a fraction below about 1e-308 underflows to 0.

    Examples
    --------
    Carbonate at pH 8.3 with pKa1 6.35 and pKa2 10.33 (Stumm & Morgan 1996, Table 4.1;
    from memory): bicarbonate dominates.

    >>> [round(a, 4) for a in alpha_fractions(8.3, [6.35, 10.33])]
    [0.011, 0.9799, 0.0091]
    """
    pH = _check_pH(pH)
    pKa = _check_pKa(pKa)
    return alpha_from_cumulative(pH, cumulative_pKa(pKa))


def alpha_curve(pH_values: Iterable[float], pKa: Sequence[float]) -> list[list[float]]:
    """Fractions of every species over many pH values.

    Parameters
    ----------
    pH_values : iterable of float
        pH grid [-]
    pKa : sequence of float
        Dissociation constants, step 1 first [-]

    Returns
    -------
    list of list of float
        ``curve[i][k]`` is alpha_i at ``pH_values[k]`` (one list per species, most
        protonated first) [-]

    Examples
    --------
    >>> curve = alpha_curve([2.0, 7.0, 12.0], [4.756])
    >>> [round(a, 5) for a in curve[1]]
    [0.00175, 0.99433, 1.0]
    """
    pKa = _check_pKa(pKa)
    cum = cumulative_pKa(pKa)
    n1 = len(cum)
    out: list[list[float]] = [[] for _ in range(n1)]
    appends = [lst.append for lst in out]
    exp = math.exp
    for k, pH in enumerate(pH_values):
        pH = _check_pH(pH, f"pH_values[{k}]")
        logs = [i * pH - s for i, s in enumerate(cum)]
        m = max(logs)
        terms = [exp((x - m) * _LN10) for x in logs]
        inv = 1.0 / sum(terms)
        for i in range(n1):
            appends[i](terms[i] * inv)
    return out


def mean_protons_released(pH: float, pKa: Sequence[float]) -> float:
    """Average number of protons released per mole of the system, sum(i alpha_i).

    Parameters
    ----------
    pH : float
        -log10 of the hydrogen-ion activity [-]
    pKa : sequence of float
        Dissociation constants [-]

    Returns
    -------
    float
        Between 0 and n [-]

    Examples
    --------
    At pH = pKa half of a monoprotic acid is dissociated (Henderson-Hasselbalch):

    >>> mean_protons_released(9.25, [9.25])
    0.5
    """
    alphas = alpha_fractions(pH, pKa)
    return sum(i * a for i, a in enumerate(alphas))


def mean_charge(pH: float, pKa: Sequence[float], z0: int) -> float:
    """Average charge per mole of a system whose most protonated form has charge ``z0``.

    Parameters
    ----------
    pH : float
        -log10 of the hydrogen-ion activity [-]
    pKa : sequence of float
        Dissociation constants [-]
    z0 : int
        Charge of the most protonated species [-]

    Returns
    -------
    float
        z0 - sum(i alpha_i) [-]

    Examples
    --------
    Ammonium (z0 = +1, pKa 9.245, Bates & Pinching 1949) at pH 7: nearly all NH4+.

    >>> round(mean_charge(7.0, [9.245], 1), 4)
    0.9943
    """
    return z0 - mean_protons_released(pH, pKa)


def proton_moments(pH: float, cum: Sequence[float]) -> tuple[float, float]:
    r"""Mean and variance of the number of protons released per mole, at one pH.

    .. math::

        \bar{i} = \sum_i i\,\alpha_i, \qquad
        \sigma^2 = \sum_i i^2 \alpha_i - \bar{i}^2 = \frac{1}{\ln 10}\frac{d\bar{i}}{d\mathrm{pH}}

    The mean gives a system's charge (z0 - mean), the variance its buffer intensity
    (ln10 C_T variance) and the slope of the charge balance.

    Parameters
    ----------
    pH : float
        pH on the scale of the constants [-] (not validated: an inner-loop helper)
    cum : sequence of float
        Cumulative pKa sums 0, pKa1, pKa1 + pKa2, ... [-]

    Returns
    -------
    tuple of float
        (mean, variance) [-]

    Examples
    --------
    A monoprotic acid at pH = pKa: half dissociated, variance 1/4 (Van Slyke 1922).

    >>> proton_moments(4.756, [0.0, 4.756])
    (0.5, 0.25)
    """
    exp = math.exp
    if len(cum) == 2:  # monoprotic: alpha1 = 1/(1 + 10^(pKa - pH)), variance alpha0 alpha1
        d = (pH - cum[1]) * _LN10
        if d > 0:
            r = exp(-d)
            a1 = 1.0 / (1.0 + r)
            return a1, r * a1 * a1
        r = exp(d)
        a0 = 1.0 / (1.0 + r)
        return r * a0, r * a0 * a0
    logs = [i * pH - s for i, s in enumerate(cum)]
    m = max(logs)
    tot = mean = sq = 0.0
    for i, x in enumerate(logs):
        t = exp((x - m) * _LN10)
        tot += t
        mean += i * t
        sq += i * i * t
    mean /= tot
    return mean, max(sq / tot - mean * mean, 0.0)


def generic_species_names(n: int, z0: int, base: str = "A") -> list[str]:
    """Names H_nA .. A for a custom acid, with charges written after the formula.

    >>> generic_species_names(2, 0)
    ['H2A', 'HA-', 'A-2']
    >>> generic_species_names(1, 1, "B")
    ['HB+', 'B']
    """
    names = []
    for i in range(n + 1):
        h = n - i
        z = z0 - i
        hpart = "" if h == 0 else ("H" if h == 1 else f"H{h}")
        zpart = "" if z == 0 else (("+" if z > 0 else "-") + (str(abs(z)) if abs(z) > 1 else ""))
        names.append(f"{hpart}{base}{zpart}")
    return names
