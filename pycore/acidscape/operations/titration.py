"""Titration curves by the explicit formulation: the titrant amount as a function of pH.

For a sample of volume V_s titrated with V_t of a titrant holding C_t mol/L of a
chemical, electroneutrality of the mixture, with every concentration diluted
into V_s + V_t, is linear in the volumes:

.. math::

    V_s\\,\\big(S_s + \\textstyle\\sum C_s\\,\\bar z + w\\big)
    + V_t\\,\\big(C_t\\,[S_t + \\textstyle\\sum n\\,\\bar z] + w\\big) = 0,
    \\qquad w = [H^+] - [OH^-],

so at any chosen pH the volume follows without a root search,

.. math::

    V_t = -V_s\\,\\frac{S_s + \\sum C_s \\bar z(\\mathrm{pH}) + w(\\mathrm{pH})}
                       {C_t\\,[S_t + \\sum n\\,\\bar z(\\mathrm{pH})] + w(\\mathrm{pH})}

(de Levie [1]_ [2]_, from memory). ``S`` are strong-ion charges [eq/L], ``C_s``
the sample's system totals, ``n`` the moles of each system and strong ion one
mole of chemical brings (:mod:`acidscape.operations.dosing`), and ``zbar`` each system's
mean charge at that pH. A dose without dilution (a gas such as CO2, or plant
dosing per litre of water) is the same relation without the titrant's water
term: d = -N / (S_t + sum n zbar).

Activity corrections: the mixed constants depend on ionic strength, which
depends on V_t. At each pH the pair (V_t, I) is found by fixed-point
iteration, started from the previous point's I (it converges in a few steps
because I hardly moves the constants). pH is the meter pH, -log10 a(H+).

The curve is computed on an even pH grid from the sample's pH towards
``to_pH``; points are ordered by titrant amount. The slope dV_t/dpH is
analytic (the two buffer intensities); equivalence (inflection) points are its
local minima, refined by golden-section search, each with a ``sharpness``
(how much steeper the curve is there than in the buffer regions either side).
Half-equivalence points lie midway in titrant amount between successive
equivalence points (the first between the start and the first equivalence
point); for a weak monoprotic acid titrated with strong base their pH is close
to pKa (Henderson-Hasselbalch).

Functions and classes
---------------------
Engine                       the explicit charge balance of sample + chemical at one pH
titration_curve(...)         points, equivalence and half-equivalence points (dict)

References
----------
.. [1] R. de Levie, "A general simulator for acid-base titrations", J. Chem. Educ. 76 (1999)
   987-991, doi:10.1021/ed076p987 (from memory).
.. [2] R. de Levie, "Explicit expressions of the general form of the titration curve in terms
   of concentration", J. Chem. Educ. 70 (1993) 209; and R. de Levie, Principles of
   Quantitative Chemical Analysis, McGraw-Hill, 1997, ch. 6 (from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from operator import mul as _mul

from ..science.activity import gamma_function
from ..errors import InputError, UnreachableError
from ..science.solver import ION_SIZE_H, ION_SIZE_OH
from ..science.speciation import cumulative_pKa

_LN10 = math.log(10.0)
_exp = math.exp
#: Relative tolerance of the per-point ionic-strength iteration (1e-8 of I shifts a Davies
#: log10 gamma by less than 1e-9 below I = 0.5 mol/L).
I_RTOL = 1e-8
#: Largest titrant or chemical amount accepted [mol per litre of sample].
MAX_AMOUNT_M = 5.0
#: Default and largest number of curve points.
DEFAULT_POINTS = 400
MAX_POINTS = 5001
#: Sharpness below which a local minimum of dV/dpH is not reported as an equivalence point.
MIN_SHARPNESS = 1.1
#: Lowest and highest pH a curve may be asked to reach [-].
PH_RANGE = (0.0, 14.5)


@dataclass
class _Sys:
    key: str
    charges: tuple
    sizes: tuple
    cum0: list
    sample: float       # total in the sample [mol/L]
    added: float        # moles of the system per mole of chemical

    def __post_init__(self):
        n = len(self.charges)
        self.z0 = self.charges[0]
        self.idx = tuple(range(n))
        self.idx2 = tuple(i * i for i in range(n))
        self.dz2 = tuple(z * z - self.z0 * self.z0 for z in self.charges)


class Engine:
    """Charge balance of a closed sample plus an amount of one chemical, explicit in the amount.

    Parameters
    ----------
    components : list of acidscape.science.solver.Component
        The sample's systems (closed; ``fixed_first_M`` must be None)
    ions : list of acidscape.science.solver.Ion
        The sample's strong ions
    T : float
        Temperature [K]
    pKw : float
        Ion product of water at T [-]
    model : str
        Activity model [-]
    I_fixed : float or None
        Ionic strength held fixed [mol/L] (None: computed per point)
    chemical : acidscape.operations.dosing.Chemical
        What is added
    added_components : dict
        Component for each system the chemical adds that the sample lacks, by key
    titrant_M : float or None
        Concentration of the titrant [mol/L]; None for a dose without dilution
    """

    def __init__(self, components, ions, *, T, pKw, model, I_fixed, chemical, added_components, titrant_M=None):
        self.pKw = pKw
        self.model = model
        self.I_fixed = I_fixed
        self.lg = gamma_function(T, model)
        self.titrant_M = titrant_M
        by_key = {}
        systems = []
        for c in components:
            if c.fixed_first_M is not None:
                raise InputError("the titration engine needs a closed sample", field="gas")
            s = _Sys(c.key, tuple(c.charges), tuple(c.ion_sizes or (None,) * len(c.charges)),
                     _cum(c.pKa), c.total_M, 0.0)
            systems.append(s)
            by_key.setdefault(c.key, s)
        for key, n in chemical.systems:
            s = by_key.get(key)
            if s is None:
                c = added_components[key]
                s = _Sys(c.key, tuple(c.charges), tuple(c.ion_sizes or (None,) * len(c.charges)),
                         _cum(c.pKa), 0.0, 0.0)
                systems.append(s)
                by_key[key] = s
            s.added += n
        self.systems = systems
        self.S_s = sum(i.charge * i.conc_M for i in ions)
        self.J_s = 0.5 * sum(i.charge * i.charge * i.conc_M for i in ions)
        self.sample_ion_sizes = [(i.charge, i.ion_size_A, i.conc_M) for i in ions]
        self.S_t = sum(z * n for z, n in chemical.ion_charges)
        self.J_t = 0.5 * sum(z * z * n for z, n in chemical.ion_charges)

    # -- constants at one ionic strength -------------------------------------------------
    def _at(self, I):
        """log10 gamma of H+ and OH- and each system's cumulative mixed pKa at I.

        cum'_i = cum_i + lg_i - lg_0 (the mixed constants pKa_j + lg_{j+1} - lg_j summed);
        with the Davies equation lg = z^2 h(I), so one h serves every species.
        """
        if self.model == "davies":
            h = self.lg(1, None, I)
            cums = [[c + h * d for c, d in zip(s.cum0, s.dz2)] for s in self.systems]
            return h, h, cums
        lg = self.lg
        cums = []
        for s in self.systems:
            lgs = [lg(z, a, I) for z, a in zip(s.charges, s.sizes)]
            l0 = lgs[0]
            cums.append([c + g - l0 for c, g in zip(s.cum0, lgs)])
        return lg(1, ION_SIZE_H, I), lg(-1, ION_SIZE_OH, I), cums

    def state(self, pH, I):
        """Charge terms at pH and I.

        Returns
        -------
        tuple
            (N, M, bN, bM, Js, Jt, H, OH): sample charge incl. water [eq/L], chemical charge
            per mole [eq/mol], their buffer intensities (ln10 var sums) [eq/(L pH)] and
            [eq/(mol pH)] without water, ionic-strength sums 0.5 sum z^2 c of the sample
            systems [mol/L] and per mole of chemical [mol/mol], and [H+], [OH-] [mol/L]
        """
        lgH, lgOH, cums = self._at(I)
        H = 10.0 ** (-pH - lgH)
        OH = 10.0 ** (pH - self.pKw - lgOH)
        N = self.S_s + H - OH
        M = self.S_t
        bN = bM = 0.0
        Js = Jt = 0.0
        exp = _exp
        for s, cum in zip(self.systems, cums):
            logs = [i * pH - c for i, c in zip(s.idx, cum)]
            m = max(logs)
            terms = [exp((x - m) * _LN10) for x in logs]
            inv = 1.0 / sum(terms)
            ib = sum(map(_mul, s.idx, terms)) * inv
            i2b = sum(map(_mul, s.idx2, terms)) * inv
            z0 = s.z0
            zb = z0 - ib
            z2b = z0 * z0 - 2.0 * z0 * ib + i2b
            var = i2b - ib * ib
            if s.sample:
                N += s.sample * zb
                bN += s.sample * var
                Js += s.sample * z2b
            if s.added:
                M += s.added * zb
                bM += s.added * var
                Jt += s.added * z2b
        return N, M, _LN10 * bN, _LN10 * bM, 0.5 * Js, 0.5 * Jt, H, OH

    def _pass(self, pH, I):
        """One evaluation at a trial I: (d, I of the mixture, dd/dpH, valid)."""
        Ct = self.titrant_M
        N, M, bN, bM, Js, Jt, H, OH = self.state(pH, I)
        w = H - OH
        bw = _LN10 * (H + OH)
        if Ct is None:
            D = M
            dD = -bM
        else:
            D = Ct * M + w
            dD = -(Ct * bM + bw)
        dN = -(bN + bw)
        if D == 0.0:
            return math.inf, I, math.inf, False
        v = -N / D                      # volume ratio Vt/Vs, or the dose itself
        slope = -(dN * D - N * dD) / (D * D)
        if Ct is None:
            d = v
            I_new = self.J_s + Js + d * (self.J_t + Jt) + 0.5 * (H + OH)
        else:
            d = Ct * v
            slope = Ct * slope
            if v <= -1.0:
                return d, I, slope, False
            I_new = (self.J_s + Js + v * Ct * (self.J_t + Jt)) / (1.0 + v) + 0.5 * (H + OH)
        valid = math.isfinite(d) and I_new >= 0.0 and d >= -1e-12 * max(1.0, abs(N))
        return d, I_new, slope, valid

    def amount(self, pH, I_guess, scan: bool = False):
        """Chemical per litre of sample that gives ``pH``, with a consistent ionic strength.

        The pair (amount, I) is found by fixed-point iteration on I; if that does not contract
        (near the pH a chemical approaches, where the amount grows fast with I), or if ``scan``
        is set, the smallest fixed point I = I_mix(I) is bracketed and bisected instead.

        Returns
        -------
        tuple
            (d, I, slope): amount [mol per L of sample], ionic strength of the mixture [mol/L],
            and dd/dpH at fixed I [mol/(L pH)]; ``d`` is infinite when no ionic strength gives
            a finite, non-negative amount (the pH cannot be reached); it may be slightly
            negative at the starting pH (callers check)
        """
        if self.I_fixed is not None or self.model == "ideal":
            I0 = self.I_fixed if self.I_fixed is not None else I_guess
            d, I_new, slope, _ = self._pass(pH, I0)
            return d, (I0 if self.I_fixed is not None else I_new), slope
        if scan:
            return self._amount_bracketed(pH, I_guess)
        I = I_guess
        prev = math.inf
        for it in range(40):
            d, I_new, slope, valid = self._pass(pH, I)
            if not valid:
                break
            step = abs(I_new - I)
            if step <= I_RTOL * I_new + 1e-16:
                return d, I_new, slope
            if it >= 3 and step > 0.5 * prev:
                break
            prev = step
            I = I_new
        return self._amount_bracketed(pH, I_guess)

    def _amount_bracketed(self, pH, I_guess):
        """Smallest fixed point of I = I_mix(I) with a non-negative amount: scan and bisection.

        h(I) = I_mix(I) - I is evaluated on a log-spaced grid of I up to the activity model's
        validity limit (beyond it the Davies equation turns upward and would invent roots);
        where the amount is infinite, h is not used (a negative I_mix from a negative trial amount
        still counts, as h is continuous there). Each change of sign of h
        between finite values brackets a fixed point, refined by bisection; the first (lowest I)
        with a non-negative amount is returned. Near the limit pH of a chemical the pH
        reached can pass through a maximum as the dose grows, so two doses may give the same
        pH: the smaller is returned.
        """
        from ..science.activity import VALIDITY_I_M

        I_top = VALIDITY_I_M.get(self.model, 0.5)

        def h(I):
            d, I_new, slope, _ = self._pass(pH, I)
            return (I_new - I if math.isfinite(d) and math.isfinite(I_new) else math.inf), d, I_new, slope

        grid = [0.0] + [1e-10 * 10.0 ** (k / 10.0) for k in range(0, 200) if 1e-10 * 10.0 ** (k / 10.0) <= I_top]
        grid.append(I_top)
        prev_I, prev_h = grid[0], h(grid[0])[0]
        for I in grid[1:]:
            hI = h(I)[0]
            if math.isfinite(prev_h) and math.isfinite(hI) and (prev_h < 0.0) != (hI < 0.0):
                lo, hi = prev_I, I
                neg_hi = hI < 0.0
                for _ in range(200):
                    mid = 0.5 * (lo + hi)
                    if (h(mid)[0] < 0.0) == neg_hi:
                        hi = mid
                    else:
                        lo = mid
                    if hi - lo <= I_RTOL * hi:
                        break
                _, d, I_new, slope = h(hi)
                if d >= 0.0:
                    return d, I_new, slope
            prev_I, prev_h = I, hI
        return math.inf, I_guess, math.inf

    def direction_term(self, pH, I):
        """Charge the chemical brings per mole at pH (plus the titrant's own water) [eq/mol or eq/L]."""
        N, M, *_ , H, OH = self.state(pH, I)
        if self.titrant_M is None:
            return M
        return self.titrant_M * M + H - OH

    def limit_pH(self, pH0, I, upward: bool, end: float | None = None) -> float | None:
        """pH the chemical approaches without end (where the denominator vanishes), or None.

        The denominator, C_t (S_t + sum n zbar) + [H+] - [OH-] (or S_t + sum n zbar without
        dilution), never rises with pH (each zbar falls, as does [H+] - [OH-]), so it changes
        sign at most once: bisection between pH0 and ``end`` finds that pH.
        """
        if end is None:
            end = PH_RANGE[1] + 3.0 if upward else PH_RANGE[0] - 2.0
        sign0 = self.direction_term(pH0, I) > 0
        if (self.direction_term(end, I) > 0) == sign0:
            return None
        a, b = pH0, end
        while abs(b - a) > 1e-9:
            mid = 0.5 * (a + b)
            if (self.direction_term(mid, I) > 0) == sign0:
                a = mid
            else:
                b = mid
        return 0.5 * (a + b)


_cum = cumulative_pKa


def _golden_min(f, a, b, tol=1e-7):
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


def _co2_saturation_pH(engine, parsed, pH0, I0, to_pH):
    """pH between pH0 and to_pH at which dissolved H2CO3* reaches saturation under 1 atm of CO2.

    None if the curve never gets there. The amount dissolved at each pH follows from the
    explicit formula, so the condition (C_T0 + d(pH)) alpha0(pH) = K_H x 1 atm is solved by
    bisection in pH (it rises monotonically as CO2 is added and the pH falls).
    """
    from .dosing import _a0_carbonate
    from ..science.temperature import log10_KH_CO2

    sat = 10.0 ** log10_KH_CO2(parsed.T)
    C0 = sum(c.total_M for c in parsed.components if c.key == "carbonate")

    def excess(pH):
        d, I, _ = engine.amount(pH, I0)
        return (C0 + d) * _a0_carbonate(engine, pH, I) - sat

    if excess(to_pH) <= 0.0:
        return None
    hi, lo = pH0, to_pH  # excess(hi) < 0 < excess(lo)
    if excess(hi) >= 0.0:
        return pH0
    for _ in range(60):
        mid = 0.5 * (hi + lo)
        if excess(mid) > 0.0:
            lo = mid
        else:
            hi = mid
    return hi


def titration_curve(scenario: dict, titrant: str, *, titrant_M: float | None = 0.1, sample_mL: float = 100.0,
                    to_pH: float | None = None, points: int = DEFAULT_POINTS) -> dict:
    """Titration curve of a water with a titrant, by the explicit (de Levie) formulation.

    Parameters
    ----------
    scenario : dict
        The water (see :mod:`acidscape.boundary.scenario`; ``measured``, ``pH`` and ``gas`` are turned
        into the equivalent closed water by :func:`acidscape.operations.closure.close_scenario`)
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
        crossed), ``warnings``

    Raises
    ------
    UnreachableError
        The titrant moves pH away from ``to_pH``, or ``to_pH`` lies beyond the pH the
        titrant can give

    Examples
    --------
    0.1 mol/L acetic acid (pKa 4.756) with 0.1 mol/L NaOH, ideal activities: the
    half-equivalence pH is pKa (Henderson-Hasselbalch) within the [H+] correction.

    >>> sc = {"activity": "ideal", "systems": [{"id": "acetic", "total": 0.1}]}
    >>> out = titration_curve(sc, "NaOH", titrant_M=0.1, sample_mL=50, to_pH=12, points=200)
    >>> round(out["equivalence_points"][0]["titrant_mL"], 2)
    50.0
    >>> round(out["half_equivalence_points"][0]["pH"], 2)
    4.76
    """
    from .dosing import get_chemical
    from .closure import close_scenario

    if isinstance(points, bool) or not isinstance(points, int) or not 3 <= points <= MAX_POINTS:
        raise InputError(f"points = {points!r} must be a whole number 3..{MAX_POINTS}", field="points")
    sample_mL = _positive(sample_mL, "sample_mL", 1e6)
    chem = get_chemical(titrant, field="titrant")
    volumes = not chem.is_gas
    if volumes:
        if titrant_M is None:
            raise InputError("titrant_M is required for a titrant in solution", field="titrant_M")
        titrant_M = _positive(titrant_M, "titrant_M", 20.0)
    closed = close_scenario(scenario)
    p = closed.parsed
    warnings = list(closed.notes)
    engine = Engine(p.components, p.ions, T=p.T, pKw=p.pKw, model=p.model, I_fixed=p.I_fixed, chemical=chem,
                    added_components=chem.components_at(p.T), titrant_M=titrant_M if volumes else None)
    pH0, I0 = closed.eq.pH, closed.eq.I
    g0 = engine.direction_term(pH0, I0)
    if g0 == 0.0:
        raise UnreachableError(f"{chem.id} does not change this water's pH", field="titrant")
    upward = g0 > 0
    limit = engine.limit_pH(pH0, I0, upward)
    given_to_pH = to_pH is not None
    if to_pH is None:
        to_pH = 11.0 if upward else 3.5
        if limit is not None and ((upward and to_pH > limit - 0.2) or (not upward and to_pH < limit + 0.2)):
            to_pH = limit - 0.2 if upward else limit + 0.2
            warnings.append(f"curve ends at pH {to_pH:.2f}, 0.2 short of the pH {limit:.2f} {chem.id} approaches")
    else:
        to_pH = _number(to_pH, "to_pH", *PH_RANGE)
    kind = "base" if upward else "acid"
    if (to_pH > pH0) != upward or to_pH == pH0:
        raise UnreachableError(
            f"{chem.id} acts as {'a base' if upward else 'an acid'} on this water (pH {pH0:.2f}): it "
            f"{'raises' if upward else 'lowers'} the pH and cannot take it to {to_pH:g}", field="to_pH")
    if limit is not None and ((upward and to_pH >= limit) or (not upward and to_pH <= limit)):
        raise UnreachableError(
            f"pH {to_pH:g} is beyond what {chem.id}{f' at {titrant_M:g} mol/L' if volumes else ''} can give: "
            f"however much is added the pH only approaches {limit:.2f}", field="to_pH")
    if chem.is_gas:
        sat_pH = _co2_saturation_pH(engine, p, pH0, I0, to_pH)
        if sat_pH is not None:
            if given_to_pH:
                raise UnreachableError(
                    f"pH {to_pH:g} is beyond what {chem.id} can give: the water is saturated with CO2 under "
                    f"1 atm at pH {sat_pH:.2f}, and more does not dissolve", field="to_pH")
            to_pH = sat_pH
            warnings.append(f"curve ends at pH {sat_pH:.2f}, where the water holds as much CO2 as 1 atm of pure "
                            "CO2 dissolves")
    Vs = sample_mL
    mm = chem.molar_mass_g_per_mol

    def row(pH, d, I):
        return {"pH": pH, "titrant_mL": (d * Vs / titrant_M) if volumes else None,
                "dose_mmol_per_L": d * 1e3, "dose_mg_per_L": d * mm * 1e3, "ionic_strength_M": I}

    grid = [pH0 + (to_pH - pH0) * k / (points - 1) for k in range(points)]
    grid[-1] = to_pH
    out_pts, slopes, amounts = [], [], []
    hist = []   # ionic strengths of the last three points, for a quadratic extrapolation
    for k, pH in enumerate(grid):
        if k == 0:
            d, I, s = 0.0, I0, engine.amount(pH, I0)[2]
        else:
            if len(hist) == 3:
                guess = 3.0 * hist[2] - 3.0 * hist[1] + hist[0]
            elif len(hist) == 2:
                guess = 2.0 * hist[1] - hist[0]
            else:
                guess = hist[-1]
            if not guess > 0.0:
                guess = hist[-1]
            d, I, s = engine.amount(pH, guess)
        hist = (hist + [I])[-3:]
        if not (d >= 0.0) or d > MAX_AMOUNT_M or not math.isfinite(s):
            raise UnreachableError(
                f"pH {pH:.3g} needs {d:.3g} mol of {chem.id} per litre of sample, outside 0..{MAX_AMOUNT_M:g}",
                field="to_pH")
        out_pts.append(row(pH, d, I))
        slopes.append(abs(s))
        amounts.append(d)
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
        Iref = [out_pts[k]["ionic_strength_M"]]

        def f(pH):
            d_, I_, s_ = engine.amount(pH, Iref[0])
            Iref[0] = I_
            return abs(s_)
        pe = _golden_min(f, min(grid[k - 1], grid[k + 1]), max(grid[k - 1], grid[k + 1]))
        d, Ie, _ = engine.amount(pe, Iref[0])
        r = row(pe, d, Ie)
        r["sharpness"] = sharp if math.isfinite(sharp) else None
        eq_points.append(r)
    half = []
    prev = 0.0
    for e in eq_points:
        target = 0.5 * (prev + e["dose_mmol_per_L"] * 1e-3)
        prev = e["dose_mmol_per_L"] * 1e-3
        ph_h, d_h, I_h = _solve_amount(engine, grid, amounts, out_pts, target)
        half.append(row(ph_h, d_h, I_h))
    fixed = []
    for end in (8.3, 4.5):
        if min(pH0, to_pH) < end < max(pH0, to_pH):
            k = min(range(points), key=lambda i: abs(grid[i] - end))
            d, Ie, _ = engine.amount(end, out_pts[k]["ionic_strength_M"])
            r = row(end, d, Ie)
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
        "method": "explicit titrant amount per pH (de Levie 1999), dilution included"
                  + ("" if volumes else " (none: gas)") + "; ionic strength iterated per point",
        "warnings": warnings,
    }


def _solve_amount(engine, grid, amounts, pts, target):
    """pH where the amount equals ``target``, by bisection inside the grid bracket."""
    k = next((i for i in range(1, len(amounts)) if amounts[i] >= target), len(amounts) - 1)
    a, b = grid[k - 1], grid[k]
    I = pts[k]["ionic_strength_M"]
    d = amounts[k]
    for _ in range(60):
        mid = 0.5 * (a + b)
        d, I, _ = engine.amount(mid, I)
        if d < target:
            a = mid
        else:
            b = mid
        if abs(b - a) < 1e-9:
            break
    return 0.5 * (a + b), d, I


def _number(value, field, lo, hi) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    value = float(value)
    if not lo <= value <= hi:
        raise InputError(f"{field} = {value:g} is outside the accepted range {lo:g}..{hi:g}", field=field)
    return value


def _positive(value, field, hi) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    value = float(value)
    if not 0.0 < value <= hi:
        raise InputError(f"{field} = {value:g} must be above 0 and at most {hi:g}", field=field)
    return value
