"""Buffer intensity and capacity against Van Slyke's maximum, mpmath derivatives and scipy quadrature."""

import math

import mpmath
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from scipy.optimize import minimize_scalar

from acidscape.science import activity
from acidscape.boundary.api import solve
from acidscape.operations.buffer import buffer_capacity_between, buffer_intensity_at, gamma_function

LN10 = math.log(10.0)


def test_monoprotic_maximum_is_0576_C_at_pKa():
    # Van Slyke, J. Biol. Chem. 52 (1922) 525; Stumm & Morgan, Aquatic Chemistry (1996) §3.6
    # (from memory): beta_max = (ln 10 / 4) C = 0.5756 C at pH = pKa.
    C, pKa = 0.05, 7.3
    system_only = lambda pH: buffer_intensity_at(pH, [([pKa], C)], pKw=14.0) - LN10 * (10**-pH + 10**(pH - 14))
    res = minimize_scalar(lambda p: -system_only(p), bounds=(5, 9.5), method="bounded", options={"xatol": 1e-9})
    assert res.x == pytest.approx(pKa, abs=1e-4)
    assert -res.fun / C == pytest.approx(LN10 / 4, rel=1e-9)
    assert round(LN10 / 4, 3) == 0.576


def _P_mpmath(pH, systems, pKw):
    """Independent proton level with mpmath alphas from the textbook definition (Stumm & Morgan §3.4)."""
    h = mpmath.mpf(10) ** (-pH)
    total = mpmath.mpf(10) ** (pH - pKw) - h
    for pKa, C in systems:
        K = [mpmath.mpf(10) ** (-k) for k in pKa]
        n = len(K)
        terms = []
        prod = mpmath.mpf(1)
        for i in range(n + 1):
            if i:
                prod *= K[i - 1]
            terms.append(prod * h ** (n - i))
        s = sum(terms)
        total += C * sum(i * t for i, t in enumerate(terms)) / s
    return total


pka_lists = st.lists(st.floats(1.0, 13.0), min_size=1, max_size=4).map(sorted)
systems_st = st.lists(st.tuples(pka_lists, st.floats(1e-5, 0.1)), min_size=1, max_size=4)


@settings(max_examples=60, deadline=None)
@given(systems=systems_st, pH=st.floats(2.0, 12.0))
def test_beta_is_the_pH_derivative_of_the_proton_level(systems, pH):
    # beta = dC_B/dpH: numerical derivative of an independent mpmath proton level.
    mpmath.mp.dps = 40
    ref = mpmath.diff(lambda x: _P_mpmath(x, systems, 14.0), mpmath.mpf(pH))
    assert buffer_intensity_at(pH, systems, 14.0) == pytest.approx(float(ref), rel=1e-9)


@settings(max_examples=40, deadline=None)
@given(systems=systems_st, a=st.floats(2.0, 12.0), b=st.floats(2.0, 12.0))
def test_capacity_is_the_integral_of_beta(systems, a, b):
    # Exact charge difference vs scipy quadrature of beta (Stumm & Morgan ch. 4: dC_B = beta dpH).
    integral, err = quad(lambda p: buffer_intensity_at(p, systems, 14.0), a, b, limit=200, epsabs=1e-15)
    assert buffer_capacity_between(a, b, systems, 14.0) == pytest.approx(integral, rel=1e-7, abs=1e-13)


def test_pure_water_beta():
    # Pure water at pH 7 (pKw 14): beta = ln10 ([H+] + [OH-]) = 4.605e-7 (closed form).
    assert buffer_intensity_at(7.0, [], 14.0) == pytest.approx(LN10 * 2e-7, rel=1e-12)


@settings(max_examples=200, deadline=None)
@given(z=st.integers(-4, 4), I=st.floats(0.0, 0.7), t=st.floats(0.0, 100.0),
       model=st.sampled_from(activity.MODELS), a=st.one_of(st.none(), st.floats(2.0, 11.0)))
def test_fast_gamma_equals_activity_module(z, I, t, model, a):
    T = 273.15 + t
    assert gamma_function(T, model)(z, a, I) == pytest.approx(activity.log10_gamma(z, I, T, model, a),
                                                                rel=1e-13, abs=1e-15)


def test_solve_reports_beta_of_a_bicarbonate_water():
    # 2 mmol/L NaHCO3, ideal: beta from the closed-form carbonate sum (Stumm & Morgan §3.6),
    # C ln10 (a0 a1 + 4 a0 a2 + a1 a2) + ln10([H+] + [OH-]), with the library pKa.
    out = solve({"activity": "ideal", "complexes": False, "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
                 "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]})
    pK1, pK2 = out["systems"][0]["pKa"]
    h = 10 ** -out["pH"]
    K1, K2 = 10**-pK1, 10**-pK2
    D = h * h + K1 * h + K1 * K2
    a0, a1, a2 = h * h / D, K1 * h / D, K1 * K2 / D
    var = a1 + 4 * a2 - (a1 + 2 * a2) ** 2
    assert var == pytest.approx(a0 * a1 + 4 * a0 * a2 + a1 * a2, rel=1e-9)
    expected = LN10 * (2e-3 * var + h + 10 ** (out["pH"] - out["pKw"]))
    assert out["buffer_intensity_eq_per_L_per_pH"] == pytest.approx(expected, rel=1e-9)
