"""The general equilibrium model (acidscape.science.model): invariants and textbook cases.

Independent checks of whole waters against a separate scipy solver are in
tests/test_model_reference.py; this file checks the model's own promises on tableaux written
here by hand (constants quoted with their sources).
"""

from __future__ import annotations

import math
import random

import pytest

from acidscape.science.activity import gamma_function
from acidscape.science.model import Solid, Species, Tableau, equilibrium
from reference import solve_ref  # the independent acid-base charge balance (numpy + brentq)

T25 = 298.15
PKW = 13.995  # Bandura & Lvov (2006) at 25 °C (from memory)
PKA_CARB = (6.352, 10.329)  # Plummer & Busenberg (1982) at 25 °C (from memory)
LOGK_CACO3 = 3.224  # CaCO3°: Plummer & Busenberg (1982) at 25 °C (from memory)
LOGK_CAHCO3 = 1.106  # Ca2+ + HCO3- = CaHCO3+: Plummer & Busenberg (1982) (from memory)
LOGKSP_CALCITE = -8.48  # Plummer & Busenberg (1982) at 25 °C (from memory)


def _carbonate_water(complexes=True):
    """H+, CO3-2, Ca+2, Na+, Cl- with the Ca-carbonate pairs and calcite."""
    comps = ("H+", "carbonate", "calcium", "sodium", "chloride")
    species = [
        Species("H+", ((0, 1),), 0.0, 1, 9.0, "water"),
        Species("OH-", ((0, -1),), -PKW, -1, 3.5, "water"),
        Species("CO3-2", ((1, 1),), 0.0, -2, 4.5, "acid-base", "carbonate"),
        Species("HCO3-", ((1, 1), (0, 1)), PKA_CARB[1], -1, 4.5, "acid-base", "carbonate"),
        Species("H2CO3*", ((1, 1), (0, 2)), sum(PKA_CARB), 0, None, "acid-base", "carbonate"),
        Species("Ca+2", ((2, 1),), 0.0, 2, 6.0, "free ion"),
        Species("Na+", ((3, 1),), 0.0, 1, 4.5, "free ion"),
        Species("Cl-", ((4, 1),), 0.0, -1, 3.0, "free ion"),
    ]
    if complexes:
        species += [Species("CaCO3", ((2, 1), (1, 1)), LOGK_CACO3, 0),
                    Species("CaHCO3+", ((2, 1), (1, 1), (0, 1)), LOGK_CAHCO3 + PKA_CARB[1], 1)]
    return Tableau(comps, (1, -2, 2, 1, -1), (9.0, 4.5, 6.0, 4.5, 3.0), tuple(species),
                   (Solid("calcite", ((2, 1), (1, 1)), LOGKSP_CALCITE),))


def _balances_hold(tab, sol, rtol=1e-12):
    """Every mass balance and the charge balance close to rtol of their own scale."""
    held = [0.0] * len(tab.components)
    for sp, c in zip(tab.species, sol.conc):
        for j, a in sp.stoich:
            held[j] += abs(a) * c
    for j in range(1, len(tab.components)):
        assert abs(sol.residuals[j]) <= rtol * max(sol.totals[j], held[j], 1e-300), tab.components[j]
    scale = sum(abs(sp.charge) * c for sp, c in zip(tab.species, sol.conc))
    assert abs(sol.charge_residual) <= rtol * scale


def test_pure_water_is_neutral():
    # pH = pKw / 2 with ideal activities: the definition of neutrality (common practice).
    tab = Tableau(("H+",), (1,), (9.0,), (Species("H+", ((0, 1),), 0.0, 1), Species("OH-", ((0, -1),), -PKW, -1)))
    sol = equilibrium(tab, [0.0], T=T25, gamma_of=gamma_function(T25, "ideal"))
    assert sol.pH == pytest.approx(PKW / 2, abs=1e-12)


@pytest.mark.parametrize("model", ["ideal", "davies", "extended-debye-huckel"])
def test_complexes_off_reproduces_the_acid_base_charge_balance(model):
    # The acid-base-only water through the model equals an independent brentq charge balance
    # (tests/reference.py: numpy product-form alphas, I nested in each evaluation).
    rng = random.Random(8)
    for _ in range(25):
        ct, ca, na, cl = (10 ** rng.uniform(-6, -1.5) for _ in range(4))
        tab = _carbonate_water(complexes=False)
        sol = equilibrium(tab, [0, ct, ca, na, cl], T=T25, gamma_of=gamma_function(T25, model))
        pH, I = solve_ref([(ct, PKA_CARB, (0, -1, -2), (None, 4.5, 4.5))],
                          [(ca, 2, 6.0), (na, 1, 4.5), (cl, -1, 3.0)], T25, PKW, model)
        assert sol.pH == pytest.approx(pH, abs=1e-9)
        assert sol.I == pytest.approx(I, rel=1e-8)
        _balances_hold(tab, sol)


def test_ion_pairs_lower_free_calcium_and_ionic_strength():
    # With CaCO3° and CaHCO3+ some calcium is bound, so free Ca and I fall (Stumm & Morgan §6).
    tot = [0, 5e-3, 2e-3, 1e-3, 0.0]
    lg = gamma_function(T25, "davies")
    off = equilibrium(_carbonate_water(False), tot, T=T25, gamma_of=lg)
    on = equilibrium(_carbonate_water(True), tot, T=T25, gamma_of=lg)
    assert math.exp(on.free_ln[2]) < 0.98 * math.exp(off.free_ln[2])
    assert on.I < off.I
    _balances_hold(_carbonate_water(True), on)


def test_calcite_precipitates_to_saturation_and_balances_close():
    tab = _carbonate_water()
    lg = gamma_function(T25, "davies")
    tot = [0, 4e-3, 3e-3, 2e-3, 0.0]
    free = equilibrium(tab, tot, T=T25, gamma_of=lg)
    assert free.SI[0] > 0.3  # oversaturated when calcite may not form
    sol = equilibrium(tab, tot, T=T25, gamma_of=lg, allow_solids=(0,))
    assert sol.SI[0] == pytest.approx(0.0, abs=1e-10)
    assert sol.solids[0] > 0
    _balances_hold(tab, sol)
    # every mole of calcite takes one Ca and one carbonate out of solution
    ca_dissolved = sum(c * dict(sp.stoich).get(2, 0) for sp, c in zip(tab.species, sol.conc))
    assert ca_dissolved + sol.solids[0] == pytest.approx(3e-3, rel=1e-12)


def test_undersaturated_solid_stays_dissolved():
    tab = _carbonate_water()
    sol = equilibrium(tab, [0, 1e-4, 1e-4, 0, 0], T=T25, gamma_of=gamma_function(T25, "davies"), allow_solids=(0,))
    assert sol.solids == {}
    assert sol.SI[0] < 0


def test_fixed_pH_holds_the_meter_reading():
    tab = _carbonate_water()
    sol = equilibrium(tab, [0, 2e-3, 1e-3, 0, 0], T=T25, gamma_of=gamma_function(T25, "davies"), pH=9.5,
                      allow_solids=(0,))
    assert sol.pH == pytest.approx(9.5, abs=1e-12)
    assert sol.SI[0] == pytest.approx(0.0, abs=1e-10)


def test_open_to_CO2_calcite_water_matches_the_textbook_pH():
    # Calcite in equilibrium with air (pCO2 = 10^-3.5 atm) at 25 °C settles near pH 8.3
    # (Stumm & Morgan 1996, §4.6, from memory: 8.3 with ion activity corrections).
    tab = _carbonate_water()
    KH = 10 ** -1.468  # CO2 Henry constant at 25 °C, Plummer & Busenberg (1982) (from memory)
    h2co3 = KH * 10 ** -3.5
    sol = equilibrium(tab, [0, 0, 5e-3, 0, 0], T=T25, gamma_of=gamma_function(T25, "davies"),
                      fixed_species={4: h2co3}, allow_solids=(0,))
    assert sol.SI[0] == pytest.approx(0.0, abs=1e-10)
    assert 8.2 < sol.pH < 8.4
    _balances_hold(tab, sol)


def test_warm_start_gives_the_same_answer():
    tab = _carbonate_water()
    lg = gamma_function(T25, "davies")
    a = equilibrium(tab, [0, 3e-3, 1e-3, 1e-3, 1e-3], T=T25, gamma_of=lg)
    b = equilibrium(tab, [0, 3e-3, 1e-3, 1e-3, 1e-3], T=T25, gamma_of=lg, guess=a.state)
    assert b.pH == pytest.approx(a.pH, abs=1e-12)
    assert b.iterations <= a.iterations


@pytest.mark.sweep
def test_never_fails_over_a_wide_range():
    # Totals 1e-10..1 mol/L, any pH the totals give, solids on or off: always an answer.
    rng = random.Random(2026)
    tab = _carbonate_water()
    for _ in range(300):
        tot = [0] + [10 ** rng.uniform(-10, 0) for _ in range(4)]
        allow = (0,) if rng.random() < 0.5 else ()
        model = rng.choice(["ideal", "davies"])
        pH = rng.uniform(1, 13) if rng.random() < 0.3 else None
        sol = equilibrium(tab, tot, T=T25, gamma_of=gamma_function(T25, model), allow_solids=allow, pH=pH)
        if pH is None:
            _balances_hold(tab, sol, rtol=1e-10)
        if allow:
            assert sol.SI[0] <= 1e-9


@pytest.mark.parametrize("pH", [10.0, 6.0])
def test_free_calcium_in_a_CaY_solution_by_the_conditional_constant(pH):
    # Harris, Quantitative Chemical Analysis, EDTA chapter (from memory): the free Ca2+ of a
    # CaY2- solution follows from the conditional constant K'f = alpha_Y4- Kf, with
    # x^2 / (C - x) = 1/K'f. Computed here with the printed NIST SRD 46 constants at I = 0.1 M
    # (EDTA pKa 0.0, 1.5, 2.00, 2.69, 6.13, 10.37; log Kf(CaY2-) 10.65; from memory) and [H+] from
    # the meter pH through the Davies gamma of H+ at I = 0.1 (the concentration constants'
    # scale). The model holds the same water at I = 0.1 M; its only extra species is CaOH+
    # (log *K -12.78, Nordstrom et al. 1990), which moves free Ca by under 0.1 % at pH 10.
    import math as _m

    from acidscape import solve
    from acidscape.science.activity import debye_huckel_A

    C = 0.010
    I = 0.1
    s = _m.sqrt(I)
    lg_H = -debye_huckel_A(T25) * (s / (1 + s) - 0.3 * I)  # Davies, z = 1
    h = 10 ** (-pH - lg_H)
    pKa = [0.0, 1.5, 2.00, 2.69, 6.13, 10.37]
    terms = [h ** (6 - i) * 10 ** (-sum(pKa[:i])) for i in range(7)]
    alpha_Y = terms[6] / sum(terms)
    Kf_cond = alpha_Y * 10 ** 10.65
    # x^2 / (C - x) = 1/K'f  ->  x = (-b + sqrt(b^2 + 4 b C)) / 2 with b = 1/K'f
    b = 1.0 / Kf_cond
    x = (-b + _m.sqrt(b * b + 4 * b * C)) / 2
    out = solve({"activity": "davies", "ionic_strength_M": I, "pH": pH,
                 "systems": [{"id": "edta", "total": C}], "ions": [{"id": "calcium", "total": C}]})
    free_ca = next(r["concentration_M"] for r in out["species"] if r["kind"] == "free ion" and "Ca" in r["name"])
    assert _m.log10(free_ca) == pytest.approx(_m.log10(x), abs=0.002)
    # the EDTA lab's point: at pH 6 far more calcium is free than at pH 10
    if pH == 6.0:
        assert free_ca > 1e-4
    else:
        assert free_ca < 1e-5


@pytest.mark.parametrize("pH, solids", [(None, ()), (8.3, ()), (8.3, (0,))])
def test_compiled_evaluation_is_the_same_arithmetic_as_the_loop(pH, solids):
    # The model compiles a constraint pattern's evaluation to straight-line code once it is
    # used often (model._compile_evaluator); it must give the very same numbers as the loop
    # it replaces, at every state Newton's method visits, and the same answer.
    import acidscape.science.model as model

    tab = _carbonate_water()
    totals = [0.0, 4e-3, 3e-3, 2e-3, 2e-3]  # an invented hard water [mol/L]
    lg = gamma_function(T25, "davies")
    seen = []
    real = model._newton

    def spy(prob, y, **kw):
        seen.append((prob, list(y)))
        return real(prob, y, **kw)

    model._newton = spy
    try:
        sols = [equilibrium(tab, totals, T=T25, gamma_of=lg, pH=pH, allow_solids=solids) for _ in range(3)]
    finally:
        model._newton = real
    assert seen and any(prob.sk.compiled is not None for prob, _ in seen)
    for prob, y in seen:
        fn = prob.sk.compiled or prob.sk.compile()
        for want_hess in (True, False):
            assert fn(y, prob.cs_lnK, prob.Tr, prob.Tr_abs, prob.const, want_hess) == \
                prob._coupled(y, want_hess)
    assert sols[0].pH == sols[-1].pH and sols[0].conc == sols[-1].conc
    assert bool(sols[0].solids) == bool(solids)


def test_compiled_cholesky_is_the_same_arithmetic_as_the_loops():
    # model.Cholesky factors small matrices with straight-line code (model._compile_cholesky);
    # it must give the very numbers of its own loops, and refuse the same matrices.
    from acidscape.science.model import Cholesky

    rnd = random.Random(7)
    for n in range(1, 11):
        B = [[rnd.uniform(-1, 1) * 10 ** rnd.uniform(-6, 0) for _ in range(n)] for _ in range(n + 2)]
        A = [[sum(r[i] * r[j] for r in B) for j in range(n)] for i in range(n)]
        b = [rnd.uniform(-1, 1) for _ in range(n)]
        fast, loops = Cholesky(A), Cholesky(A, compiled=False)
        assert fast.ok and loops.ok
        assert fast.solve(b) == loops.solve(b)
        x = fast.solve(b)
        for i in range(n):  # and it solves the system (residual to rounding)
            assert abs(sum(A[i][j] * x[j] for j in range(n)) - b[i]) <= 1e-8 * (1 + abs(b[i])) * max(
                1.0, max(abs(v) for v in x) * max(abs(v) for v in A[i]))
    indefinite = [[1.0, 2.0], [2.0, 1.0]]  # eigenvalues 3 and -1
    assert not Cholesky(indefinite).ok and not Cholesky(indefinite, compiled=False).ok
    with pytest.raises(ArithmeticError):
        Cholesky(indefinite, strict=True)


def _six_system_water():
    # an invented water with six acid-base systems, sodium, calcium and chloride [mmol/L]
    return {"temperature_C": 18, "activity": "davies",
            "systems": [{"id": "carbonate", "total": 2}, {"id": "phosphate", "total": 0.05},
                        {"id": "ammonium", "total": 0.1}, {"id": "silicic", "total": 0.2},
                        {"id": "boric", "total": 0.03}, {"id": "hypochlorous", "total": 0.01}],
            "ions": [{"id": "Na+", "total": 1.5}, {"id": "Ca+2", "total": 0.5}, {"id": "Cl-", "total": 0.8}]}


def test_compiled_ladder_sums_are_the_same_arithmetic_as_the_loops():
    # The components eliminated in closed form (each acid-base ladder, each inert ion) are summed
    # by straight-line code once a structure is solved again (model._compile_ladders); it must
    # give the very numbers of the loops it replaces at every state Newton's method visits.
    import acidscape.science.model as model
    from acidscape.boundary.api import solve

    seen = []
    real = model._newton

    def spy(prob, y, **kw):
        seen.append((prob, list(y)))
        return real(prob, y, **kw)

    model._newton = spy
    try:
        for _ in range(3):
            solve(_six_system_water())
    finally:
        model._newton = real
    compiled = [(prob, y) for prob, y in seen if prob.ladder_code is not None]
    assert compiled and any(prob.nH_nz for prob, _ in compiled)
    for prob, y in compiled:
        for xH in (prob.xH(y), prob.xH(y) - 5.0, prob.xH(y) + 5.0):
            assert prob.ladder_code(xH, prob.ladder_K, prob.T_simple) == prob._ladder_loops(xH)


def test_a_water_of_a_known_make_up_shares_its_tableau_and_answers_as_a_fresh_one():
    # Waters that differ only in their amounts share one tableau (science.tableau._SHARED);
    # the answer must be that of a model built afresh, and any change of make-up (a constant,
    # the temperature, the activity model, complexes) must give a tableau of its own.
    import acidscape.science.tableau as tableau
    from acidscape.boundary.api import read_water, water_model

    def parsed(**edits):
        return read_water({**_six_system_water(), **edits})[0]

    first = water_model(parsed())
    other = parsed(ions=[{"id": "Na+", "total": 2.5}, {"id": "Ca+2", "total": 0.2}, {"id": "Cl-", "total": 0.8}])
    shared = water_model(other)
    assert shared.tab is first.tab and shared.totals != first.totals
    saved = dict(tableau._SHARED)
    tableau._SHARED.clear()
    try:
        fresh = water_model(other)
    finally:
        tableau._SHARED.clear()
        tableau._SHARED.update(saved)
    assert fresh.tab is not first.tab
    assert fresh.totals == shared.totals and fresh.fixed_species == shared.fixed_species
    a, b = shared.solve(), fresh.solve()
    assert a.pH == pytest.approx(b.pH, abs=1e-12)
    assert all(x == pytest.approx(y, rel=1e-11, abs=1e-30) for x, y in zip(a.conc, b.conc))
    for edits in ({"temperature_C": 25}, {"activity": "ideal"}, {"complexes": False},
                  {"systems": [{"id": "carbonate", "total": 2}]}):
        assert water_model(parsed(**edits)).tab is not first.tab, edits
    # what one water does to its own model (its amounts; a tableau of shifted constants, as the
    # calcium carbonate indices' uncertainty does) stays with it
    import dataclasses

    ksp = [s.log10_Ksp for s in first.tab.solids]
    first.totals[1] *= 2.0
    first.tab = dataclasses.replace(first.tab, solids=tuple(dataclasses.replace(s, log10_Ksp=s.log10_Ksp + 0.5)
                                                            for s in first.tab.solids))
    again = water_model(parsed())
    assert [s.log10_Ksp for s in again.tab.solids] == ksp and again.tab is shared.tab
    assert again.totals[1] == pytest.approx(first.totals[1] / 2.0, rel=1e-15)


def test_a_warm_start_at_another_given_pH_gives_the_same_answer():
    # The state of a water at one pH starting the same water at another given pH (an alkalinity
    # end point, the next point of a curve; the start moves each component with its own
    # protonated forms): the answer is the cold start's.
    tab = _carbonate_water()
    lg = gamma_function(T25, "davies")
    totals = [0, 3e-3, 1e-3, 1e-3, 1e-3]
    for start, pH in ((8.3, 4.5), (4.5, 8.3), (8.3, 3.0), (6.0, 10.5), (8.3, 12.0), (8.30, 8.35)):
        before = equilibrium(tab, totals, T=T25, gamma_of=lg, pH=start)
        cold = equilibrium(tab, totals, T=T25, gamma_of=lg, pH=pH, I_fixed=before.I)
        warm = equilibrium(tab, totals, T=T25, gamma_of=lg, pH=pH, I_fixed=before.I, guess=before.state)
        assert all(x == pytest.approx(y, rel=1e-12, abs=1e-30) for x, y in zip(warm.conc, cold.conc)), (start, pH)
