"""Alkalinity: Standard Methods 2320 conventions, stoichiometry and an independent scipy titration."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from acidscape.data import library
from acidscape.operations.alkalinity import (
    MG_CACO3_PER_MEQ,
    meq_to_mg_as_CaCO3,
    mg_as_CaCO3_to_meq,
    sm2320_split,
)
from acidscape.boundary.api import solve
from acidscape.errors import InputError

import reference_model

MM = "mmol/L"


def test_50_04_mg_CaCO3_per_meq():
    # Standard Methods 2320 B: alkalinity as CaCO3 = meq/L x 50.04 (half of CaCO3, 100.09 g/mol).
    assert round(MG_CACO3_PER_MEQ, 2) == 50.04
    assert meq_to_mg_as_CaCO3(2.0) == pytest.approx(100.09, abs=0.005)
    assert mg_as_CaCO3_to_meq(meq_to_mg_as_CaCO3(1.234)) == pytest.approx(1.234, rel=1e-15)


@pytest.mark.parametrize("P,T,expected", [
    # Standard Methods 2320 B relationship table (from memory): (OH, CO3, HCO3).
    (0.0, 100.0, (0.0, 0.0, 100.0)),
    (20.0, 100.0, (0.0, 40.0, 60.0)),
    (50.0, 100.0, (0.0, 100.0, 0.0)),
    (70.0, 100.0, (40.0, 60.0, 0.0)),
    (100.0, 100.0, (100.0, 0.0, 0.0)),
])
def test_sm2320_relationship_table(P, T, expected):
    got = sm2320_split(P, T)
    assert (got["hydroxide"], got["carbonate"], got["bicarbonate"]) == pytest.approx(expected)


def test_sm2320_table_refuses_P_above_T():
    with pytest.raises(InputError, match="cannot exceed the total alkalinity"):
        sm2320_split(60.0, 50.0)


def test_soda_ash_solution_stoichiometry():
    # 1 mmol/L Na2CO3: total alkalinity (to H2CO3*) 2 meq/L, phenolphthalein (to HCO3-) 1 meq/L
    # (stoichiometry, common practice; Stumm & Morgan ch. 4 reference levels).
    out = solve({"systems": [{"id": "carbonate", "total": 1, "unit": MM}],
                 "ions": [{"id": "Na+", "total": 2, "unit": MM}]})
    eqp = out["alkalinity"]["equivalence_point"]
    assert eqp["total_meq_per_L"] == pytest.approx(2.0, rel=1e-9)
    assert eqp["phenolphthalein_meq_per_L"] == pytest.approx(1.0, rel=1e-9)
    # The fixed end points differ from the equivalence values only by the small species
    # remaining at pH 4.5 and 8.3: within 2 %.
    assert out["alkalinity"]["total_meq_per_L"] == pytest.approx(2.0, rel=0.02)
    assert out["alkalinity"]["phenolphthalein_meq_per_L"] == pytest.approx(1.0, rel=0.02)
    # The exact split adds up to the carbonate alkalinity: [OH-] + 2[CO3-2] + [HCO3-] - [H+].
    sp = out["alkalinity"]["split_from_speciation"]
    H = out["water_ions"][0]["concentration_M"] * 1e3
    assert sp["hydroxide_meq_per_L"] + sp["carbonate_meq_per_L"] + sp["bicarbonate_meq_per_L"] - H == \
        pytest.approx(2.0, rel=1e-9)


def test_bicarbonate_solution_is_at_its_phenolphthalein_equivalence_point():
    # NaHCO3 alone: phenolphthalein (carbonate) alkalinity [CO3-2] + [OH-] - [H2CO3*] - [H+] = 0
    # by the proton condition of HCO3- (Stumm & Morgan ch. 4), so the P equivalence pH is its own pH.
    out = solve({"systems": [{"id": "carbonate", "total": 5, "unit": MM}],
                 "ions": [{"id": "Na+", "total": 5, "unit": MM}]})
    eqp = out["alkalinity"]["equivalence_point"]
    assert abs(eqp["phenolphthalein_meq_per_L"]) < 1e-9
    assert eqp["phenolphthalein_equivalence_pH"] == pytest.approx(out["pH"], abs=1e-7)
    # pH below 8.3: SM 2320 B reports P = 0 and the table puts all of T in bicarbonate.
    assert out["pH"] < 8.3
    assert out["alkalinity"]["phenolphthalein_mg_per_L_as_CaCO3"] == 0.0
    tbl = out["alkalinity"]["split_from_P_and_T"]
    assert tbl["bicarbonate_mg_per_L_as_CaCO3"] == out["alkalinity"]["total_mg_per_L_as_CaCO3"]


@pytest.mark.parametrize("alk_mg,sm_end_pH", [(30, 4.9), (150, 4.6), (500, 4.3)])
def test_equivalence_pH_near_the_standard_end_points(alk_mg, sm_end_pH):
    # Standard Methods 2320 B suggests end points pH 4.9, 4.6, 4.3 for total alkalinities of
    # 30, 150, 500 mg/L as CaCO3 (from memory). A bicarbonate water's H2CO3* equivalence pH
    # (no CO2 loss, no dilution) lies within 0.25 of them and falls as alkalinity rises.
    c = alk_mg / MG_CACO3_PER_MEQ
    out = solve({"systems": [{"id": "carbonate", "total": c, "unit": MM}],
                 "ions": [{"id": "Na+", "total": c, "unit": MM}]})
    assert out["alkalinity"]["equivalence_point"]["total_equivalence_pH"] == pytest.approx(sm_end_pH, abs=0.25)


def _closed_pH(systems, strong_charge, pKw=13.995):
    """Independent ideal charge balance solved by scipy brentq (textbook alpha definitions)."""
    def f(pH):
        h = 10.0**-pH
        total = h - 10.0 ** (pH - pKw) + strong_charge
        for pKa, charges, C in systems:
            K = [10.0**-k for k in pKa]
            n = len(K)
            terms, prod = [], 1.0
            for i in range(n + 1):
                if i:
                    prod *= K[i - 1]
                terms.append(prod * h ** (n - i))
            s = sum(terms)
            total += C * sum(z * t for z, t in zip(charges, terms)) / s
        return total
    return brentq(f, -1.0, 15.0, xtol=1e-14, rtol=1e-14)


water_systems = st.fixed_dictionaries({
    "carbonate": st.floats(0.05, 5.0), "phosphate": st.floats(0.0, 0.5), "ammonium": st.floats(0.0, 1.0),
    "boric": st.floats(0.0, 0.5), "silicic": st.floats(0.0, 1.0), "acetic": st.floats(0.0, 0.5),
})


@settings(max_examples=60, deadline=None)
@given(totals=water_systems, na=st.floats(0.0, 6.0), cl=st.floats(0.0, 3.0))
def test_alkalinities_against_an_independent_acid_titration(totals, na, cl):
    # Fixed-end-point alkalinity = HCl per litre that brings the water to pH 4.5 (SM 2320 B), found
    # here by brentq on an independent charge balance (ideal, no dilution). The equivalence total
    # equals the conservative sum: strong charge + sum C_T z(reference species) (Stumm & Morgan ch. 4).
    sc = {"activity": "ideal", "complexes": False,
          "systems": [{"id": k, "total": v, "unit": MM} for k, v in totals.items()],
          "ions": [{"id": "Na+", "total": na, "unit": MM}, {"id": "Cl-", "total": cl, "unit": MM}]}
    out = solve(sc)
    pKw = out["pKw"]
    syss = []
    conservative = (na - cl) * 1e-3
    for s in out["systems"]:
        sy = library.get_system(s["id"])
        charges = [sp.charge for sp in sy.species]
        syss.append((s["pKa"], charges, s["total_M"]))
        r = sum(1 for v in s["pKa"] if v < 4.5)
        conservative += s["total_M"] * charges[r]
    assert out["alkalinity"]["equivalence_point"]["total_meq_per_L"] == pytest.approx(
        conservative * 1e3, rel=1e-8, abs=1e-9)
    pH0 = _closed_pH(syss, (na - cl) * 1e-3, pKw)
    assert out["pH"] == pytest.approx(pH0, abs=1e-8)
    for end, key in ((4.5, "total"), (8.3, "phenolphthalein")):
        if pH0 <= end:
            continue
        acid = brentq(lambda a: _closed_pH(syss, (na - cl) * 1e-3 - a, pKw) - end, 0.0, 0.05, xtol=1e-15)
        assert out["alkalinity"]["fixed_end_point"][f"{key}_meq_per_L"] == pytest.approx(acid * 1e3, rel=1e-6,
                                                                                          abs=1e-8)


def test_non_carbonate_contributions_are_listed():
    # Ammonia and borate count as bases relative to NH4+ and B(OH)3 (Stumm & Morgan ch. 4).
    out = solve({"activity": "ideal", "pH": 9.5,
                 "systems": [{"id": "carbonate", "total": 1, "unit": MM}, {"id": "ammonium", "total": 1, "unit": MM},
                             {"id": "boric", "total": 1, "unit": MM}]})
    contrib = {c["source"]: c for c in out["alkalinity"]["contributions"]}
    assert contrib["ammonium"]["reference_species"] == "NH4+"
    assert contrib["boric"]["reference_species"] == "B(OH)3"
    nh3 = next(r for r in out["species"] if r["name"] == "NH3")["concentration_M"]
    assert contrib["ammonium"]["meq_per_L"] == pytest.approx(nh3 * 1e3, rel=1e-12)
    total = sum(c["meq_per_L"] for c in out["alkalinity"]["contributions"])
    assert total == pytest.approx(out["alkalinity"]["equivalence_point"]["total_meq_per_L"], rel=1e-12)
    assert math.isfinite(out["alkalinity"]["acidity"]["mineral_meq_per_L"])


# --- Complexes: every ion pair counts the protons of its components' reference species -----------

HARD = {"temperature_C": 18, "activity": "davies",
        "systems": [{"id": "carbonate", "total": 4.0, "unit": MM}, {"id": "sulfate", "total": 1.0, "unit": MM}],
        "ions": [{"id": "calcium", "total": 2.0, "unit": MM}, {"id": "magnesium", "total": 1.0, "unit": MM},
                 {"id": "sodium", "total": 2.0, "unit": MM}, {"id": "chloride", "total": 2.0, "unit": MM}]}


def test_hard_water_alkalinity_with_ion_pairs_against_the_reference_solver():
    out = solve(HARD)
    alk = out["alkalinity"]
    # The equivalence-point total alkalinity is conservative (Stumm & Morgan ch. 4): the strong
    # ions' charge plus each system's total times the charge of its reference species
    # (carbonate: H2CO3*, 0; sulfate: SO4-2, -2), whatever the ion pairs.
    conservative = (2 * 2.0 + 2 * 1.0 + 2.0 - 2.0 - 2 * 1.0) * 1e-3
    assert alk["equivalence_point"]["total_meq_per_L"] == pytest.approx(conservative * 1e3, rel=1e-10)
    # The same from the independent reference's species (tests/reference_model.py): each species
    # counts the protons its components' reference species hold beyond its own (H2CO3* holds 2
    # over CO3-2; CaCO3° counts 2, CaHCO3+ 1, MgOH+ 1, CaSO4° 0).
    ref = reference_model.solve(HARD)
    r = {"carbonate": 2, "sulfate": 0}
    total = 0.0
    for name, c in ref["species"].items():
        holds = ref["species_holds"][name]
        total += c * (sum(a * r.get(j, 0) for j, a in holds.items() if j != "H+") - holds.get("H+", 0))
    assert alk["equivalence_point"]["total_meq_per_L"] == pytest.approx(total * 1e3, rel=1e-8)
    # Fixed end point: the strong acid that takes the sample to pH 4.5 at its ionic strength is
    # the charge the reference leaves at pH 4.5 (the strong anion added carries it).
    at_45 = reference_model.solve(dict(HARD, pH=4.5, ionic_strength_M=out["ionic_strength_M"]))
    assert alk["fixed_end_point"]["total_meq_per_L"] == pytest.approx(at_45["charge_balance_eq_per_L"] * 1e3,
                                                                       rel=1e-8)
    # The complexes' share is listed, and every share adds up to the total.
    contrib = {c["source"]: c for c in alk["contributions"]}
    assert contrib["complexes"]["meq_per_L"] > 0
    assert {s["name"] for s in contrib["complexes"]["species"]} >= {"CaHCO3+", "CaCO3"}
    assert sum(c["meq_per_L"] for c in alk["contributions"]) == pytest.approx(
        alk["equivalence_point"]["total_meq_per_L"], rel=1e-12)


def test_without_complexes_the_report_is_the_acid_base_one():
    # Invariant of the one-model change: with complexes off the fixed-end-point alkalinity is the
    # acid an independent brentq titration needs (as above), and the equivalence pH is where that
    # acid-base alkalinity vanishes, to 1e-9 pH.
    sc = dict(HARD, complexes=False, activity="ideal")
    out = solve(sc)
    pKw = out["pKw"]
    syss = []
    for s in out["systems"]:
        sy = library.get_system(s["id"])
        syss.append((s["pKa"], [sp.charge for sp in sy.species], s["total_M"]))
    strong = (2 * 2.0 + 2 * 1.0 + 2.0 - 2.0) * 1e-3
    assert out["pH"] == pytest.approx(_closed_pH(syss, strong, pKw), abs=1e-9)
    acid = brentq(lambda a: _closed_pH(syss, strong - a, pKw) - 4.5, 0.0, 0.05, xtol=1e-16)
    assert out["alkalinity"]["fixed_end_point"]["total_meq_per_L"] == pytest.approx(acid * 1e3, rel=1e-9)
    eq_pH = out["alkalinity"]["equivalence_point"]["total_equivalence_pH"]
    acid_eq = out["alkalinity"]["equivalence_point"]["total_meq_per_L"] * 1e-3
    assert _closed_pH(syss, strong - acid_eq, pKw) == pytest.approx(eq_pH, abs=1e-9)
