"""Alpha fractions against a printed table, an mpmath computation and properties."""

import math

import mpmath
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from acidscape.errors import InputError
from acidscape.science.speciation import (
    alpha_curve,
    alpha_fractions,
    log10_alpha_fractions,
    mean_charge,
)

# --- Published table -------------------------------------------------------------
# D. C. Harris, Quantitative Chemical Analysis, 7th ed. (W. H. Freeman, 2007), Table 12-1:
# fraction of EDTA as Y4- at 25 °C and ionic strength 0.10 M, computed there from the
# conditional pK values pK1..pK6 = 0.0, 1.5, 2.00, 2.69, 6.16, 10.24 (same book, §12-2).
# Both the table and the constants are from memory.
HARRIS_EDTA_PKA = [0.0, 1.5, 2.00, 2.69, 6.16, 10.24]
HARRIS_ALPHA_Y4 = {
    2: 3.3e-14, 3: 2.6e-11, 4: 3.8e-9, 5: 3.7e-7, 6: 2.3e-5, 7: 5.0e-4,
    8: 5.6e-3, 9: 5.4e-2, 10: 0.36, 11: 0.85, 12: 0.98, 13: 1.00, 14: 1.00,
}


@pytest.mark.parametrize("pH", sorted(HARRIS_ALPHA_Y4))
def test_edta_alpha_y4_matches_printed_table(pH):
    expected = HARRIS_ALPHA_Y4[pH]
    got = alpha_fractions(pH, HARRIS_EDTA_PKA)[-1]
    # The table prints two significant figures: half a unit in the last digit is <= 5 %.
    assert got == pytest.approx(expected, rel=0.05)


# --- Independent high-precision reference ----------------------------------------
mpmath.mp.dps = 60


def _alpha_mpmath(pH, pKa):
    """Direct evaluation of the textbook definition with 60-digit arithmetic (mpmath)."""
    h = mpmath.power(10, -mpmath.mpf(pH))
    n = len(pKa)
    terms = []
    prod = mpmath.mpf(1)
    for i in range(n + 1):
        if i > 0:
            prod *= mpmath.power(10, -mpmath.mpf(pKa[i - 1]))
        terms.append(prod * h ** (n - i))
    d = mpmath.fsum(terms)
    return [t / d for t in terms]


pka_lists = st.lists(st.floats(-3, 15, allow_nan=False), min_size=1, max_size=8).map(sorted)


@settings(max_examples=300, deadline=None)
@given(pH=st.floats(-2, 16), pKa=pka_lists)
def test_alpha_matches_mpmath(pH, pKa):
    ours = alpha_fractions(pH, pKa)
    ref = _alpha_mpmath(pH, pKa)
    for a, r in zip(ours, ref):
        r = float(r)
        if r > 1e-300:
            assert a > 0, "a true value above 1e-300 must not underflow to zero"
            assert a == pytest.approx(r, rel=1e-12, abs=0)
        else:
            assert a <= 1e-300


@settings(max_examples=200, deadline=None)
@given(pH=st.floats(-2, 16), pKa=pka_lists)
def test_log_alpha_matches_mpmath(pH, pKa):
    ours = log10_alpha_fractions(pH, pKa)
    ref = _alpha_mpmath(pH, pKa)
    for a, r in zip(ours, ref):
        assert a == pytest.approx(float(mpmath.log10(r)), abs=1e-10)


# --- Properties ----------------------------------------------------------------------
@settings(max_examples=300, deadline=None)
@given(pH=st.floats(-2, 16), pKa=pka_lists)
def test_fractions_sum_to_one_and_bounded(pH, pKa):
    alphas = alpha_fractions(pH, pKa)
    assert len(alphas) == len(pKa) + 1
    assert math.fsum(alphas) == pytest.approx(1.0, abs=1e-12)
    assert all(0.0 <= a <= 1.0 for a in alphas)


@settings(max_examples=200, deadline=None)
@given(
    first=st.floats(-2, 4),
    gaps=st.lists(st.floats(3.0, 5.0), min_size=0, max_size=3),
    step=st.integers(0, 4),
)
def test_adjacent_species_cross_at_pKa(first, gaps, step):
    # Henderson-Hasselbalch: at pH = pKa_j, [H_(n-j+1)A] = [H_(n-j)A] when the constants are
    # well separated (common practice); here exactly, since the ratio of adjacent terms is
    # 10^(pH - pKa_j) whatever the other constants.
    pKa = [first]
    for g in gaps:
        pKa.append(pKa[-1] + g)
    j = step % len(pKa)
    alphas = alpha_fractions(pKa[j], pKa)
    assert alphas[j] == pytest.approx(alphas[j + 1], rel=1e-12)


def test_curve_equals_pointwise():
    pKa = [0.0, 1.5, 2.0, 2.69, 6.13, 10.37, 12.0, 14.5]
    grid = [-2 + 0.37 * k for k in range(50)]
    curve = alpha_curve(grid, pKa)
    assert len(curve) == 9
    for k, pH in enumerate(grid):
        point = alpha_fractions(pH, pKa)
        assert [c[k] for c in curve] == pytest.approx(point, rel=1e-14, abs=1e-300)


def test_mean_charge_of_phosphate_at_pKa2():
    # At pH = pKa2 of phosphoric acid, H2PO4- and HPO4 2- are equal and H3PO4, PO4 3- are
    # negligible, so the mean charge is -1.5 (Henderson-Hasselbalch; common practice).
    assert mean_charge(7.198, [2.148, 7.198, 12.35], 0) == pytest.approx(-1.5, abs=1e-4)


@pytest.mark.parametrize(
    "pKa, field",
    [([], "pKa"), (list(range(50)), "pKa"), ([1.0, float("nan")], "pKa[1]"), (["x"], "pKa"), ([99.0], "pKa[0]")],
)
def test_bad_pKa_is_refused_naming_the_field(pKa, field):
    with pytest.raises(InputError) as info:
        alpha_fractions(7.0, pKa)
    assert info.value.field == field


def test_bad_pH_is_refused():
    with pytest.raises(InputError, match="The pH must be a number"):
        alpha_fractions("seven", [4.0])
    with pytest.raises(InputError, match="must be from -5 to 20"):
        alpha_fractions(1e9, [4.0])
