"""Titration curves against textbook examples and an independent scipy solve of each mixture."""

import json
import math
import subprocess
import sys

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from acidscape.science import activity
from acidscape.data import library
from acidscape.science import temperature
from acidscape.science import purewater as water
from acidscape.boundary.api import solve
from acidscape.boundary.scenario import read_scenario
from acidscape.errors import InputError, UnreachableError
from acidscape.operations.closure import close_scenario, read_measured, resolve_measured
from acidscape.operations.titration import titration_curve

import reference_model


def closed(scenario):
    """The closed water of a scenario, read the way the boundary reads it (measured resolved)."""
    if scenario.get("measured") is not None:
        base, m = read_measured(scenario)
        scenario, _ = resolve_measured(base, read_scenario(base), m)
    return close_scenario(scenario, read_scenario(scenario))


def curve(scenario, titrant, **kw):
    return titration_curve(closed(scenario), titrant, **kw)

KA_HARRIS = 1.8e-5  # acetic acid Ka used in the textbook worked example (Harris, from memory)


def acetic(pKa, C=0.1):
    return {"activity": "ideal", "complexes": False,
            "systems": [{"custom": {"name": "acetic", "pKa": [pKa]}, "total": C}]}


def test_weak_acid_strong_base_textbook_example():
    # D. C. Harris, Quantitative Chemical Analysis (W. H. Freeman), titration of 0.1 M acetic acid
    # (Ka 1.8e-5) with 0.1 M NaOH (from memory): equivalence at equal volumes, pH 8.72 there.
    pKa = -math.log10(KA_HARRIS)
    out = curve(acetic(pKa), "NaOH", titrant_M=0.1, sample_mL=50, to_pH=12.0, points=400)
    assert len(out["equivalence_points"]) == 1
    e = out["equivalence_points"][0]
    assert e["titrant_mL"] == pytest.approx(50.0, rel=2e-4)
    assert e["pH"] == pytest.approx(8.72, abs=0.01)
    # Henderson-Hasselbalch: pH = pKa at half equivalence (within the [H+] correction, 0.002 here).
    h = out["half_equivalence_points"][0]
    assert h["titrant_mL"] == pytest.approx(25.0, rel=2e-4)
    assert h["pH"] == pytest.approx(pKa, abs=0.005)


def test_strong_acid_strong_base():
    # 50 mL of 0.1 M HCl with 0.1 M NaOH (textbook): equivalence at 50 mL and pH 7 (at 25 °C,
    # pKw 13.995, IAPWS: pH 6.998); at 25 mL, [H+] = 0.0025 mol / 0.075 L, pH 1.477.
    sc = {"activity": "ideal", "complexes": False, "ions": [{"id": "Cl-", "total": 0.1}], "pH": 1.0}
    out = curve(sc, "NaOH", titrant_M=0.1, sample_mL=50, to_pH=12.0, points=500)
    e = out["equivalence_points"][0]
    assert e["titrant_mL"] == pytest.approx(50.0, rel=1e-6)
    assert e["pH"] == pytest.approx(6.998, abs=0.002)
    pts = out["points"]
    k = next(i for i, p in enumerate(pts) if p["titrant_mL"] >= 25.0)
    a, b = pts[k - 1], pts[k]
    pH25 = a["pH"] + (b["pH"] - a["pH"]) * (25.0 - a["titrant_mL"]) / (b["titrant_mL"] - a["titrant_mL"])
    assert pH25 == pytest.approx(-math.log10(0.0025 / 0.075), abs=2e-3)


def test_phosphoric_acid_two_visible_equivalence_points():
    # 50 mL of 0.01 M H3PO4 with 0.1 M NaOH: end points near 5 and 10 mL (stoichiometry; the third
    # proton, pKa 12.35, gives no break in water; common practice).
    sc = {"activity": "ideal", "systems": [{"id": "phosphate", "total": 0.01}]}
    out = curve(sc, "NaOH", titrant_M=0.1, sample_mL=50, to_pH=11.5, points=600)
    vols = [e["titrant_mL"] for e in out["equivalence_points"] if e["sharpness"] and e["sharpness"] > 2]
    assert vols == pytest.approx([5.0, 10.0], rel=0.03)


def test_points_ordered_by_amount_and_contract_keys():
    sc = {"systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
          "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]}
    out = curve(sc, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.5, points=120)
    doses = [p["dose_mmol_per_L"] for p in out["points"]]
    assert doses == sorted(doses)
    for p in out["points"] + out["equivalence_points"]:
        assert {"pH", "titrant_mL", "dose_mmol_per_L"} <= set(p)
    # The carbonate end point: about 2 mmol/L HCl (the alkalinity, SM 2320 B), i.e. 10 mL of 0.02 M.
    assert out["equivalence_points"][0]["titrant_mL"] == pytest.approx(10.0, rel=0.02)


def test_CO2_titration_has_no_volumes():
    sc = {"systems": [{"id": "carbonate", "total": 1, "unit": "mmol/L"}], "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]}
    out = curve(sc, "CO2", to_pH=7.0, points=50)
    assert out["volumes_apply"] is False
    assert all(p["titrant_mL"] is None for p in out["points"])
    # 1 mmol/L of CO2 turns the carbonate of 1 mmol/L Na2CO3 into bicarbonate (stoichiometry);
    # the curve passes the phenolphthalein end point close to that dose.
    fe = next(p for p in out["fixed_end_points"] if p["pH"] == 8.3)
    assert fe["dose_mmol_per_L"] == pytest.approx(1.0, rel=0.03)


def test_wrong_direction_and_beyond_reach():
    sc = {"systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}], "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]}
    with pytest.raises(UnreachableError, match="acts as an acid.*lowers the pH") as exc:
        curve(sc, "HCl", to_pH=10.0)
    assert exc.value.field == "to_pH"
    # 0.01 M NaOH can only approach pH 14 + log10(0.01) = 12 (the titrant's own pH).
    with pytest.raises(UnreachableError, match="only approaches 1[12]\\.9"):
        curve(sc, "NaOH", titrant_M=0.01, to_pH=12.5)
    with pytest.raises(InputError) as exc:
        curve(sc, "NaOH", titrant_M=-1.0)
    assert exc.value.field == "titrant_M"


# --- Independent check: each point's mixture solved by brentq ----------------------------------

def indep_pH(systems, ions, T, model, I0=1e-3):
    """pH of a mixture from the textbook charge balance with activities, brentq + fixed-point I.

    systems: [(system id, total M)], ions: [(charge, conc M, ion size)]. H+ and OH- take ion sizes
    9 and 3.5 Å (Kielland 1937, from memory) in the extended Debye-Hückel model.
    """
    pKw = water.pKw(T)
    data = []
    for sid, C in systems:
        sy = library.get_system(sid)
        data.append(([sp.charge for sp in sy.species], [sp.ion_size_A for sp in sy.species],
                     temperature.pKa_at(sy, T), C))
    I = I0
    for _ in range(200):
        g = lambda z, a: 10.0 ** activity.log10_gamma(z, I, T, model, a)  # noqa: E731

        def conc(pH):
            aH = 10.0**-pH
            out = []
            for charges, sizes, pKa, C in data:
                # c_{j+1}/c_j = K_j g_j / (aH g_{j+1})
                rel = [1.0]
                for j, pk in enumerate(pKa):
                    rel.append(rel[-1] * 10.0**-pk * g(charges[j], sizes[j]) / (aH * g(charges[j + 1], sizes[j + 1])))
                s = sum(rel)
                out.append([(z, C * r / s) for z, r in zip(charges, rel)])
            return aH / g(1, 9.0), 10.0**-pKw / aH / g(-1, 3.5), out

        def f(pH):
            H, OH, sp = conc(pH)
            return H - OH + sum(z * c for z, c, _ in ions) + sum(z * c for s in sp for z, c in s)
        pH = brentq(f, -1.0, 15.0, xtol=1e-13)
        H, OH, sp = conc(pH)
        I_new = 0.5 * (H + OH + sum(z * z * c for z, c, _ in ions) + sum(z * z * c for s in sp for z, c in s))
        if model == "ideal" or abs(I_new - I) < 1e-13:
            return pH
        I = I_new
    raise AssertionError("no convergence")


@settings(max_examples=40, deadline=None)
@given(carb=st.floats(0.2, 5.0), nh4=st.floats(0.0, 1.0), po4=st.floats(0.0, 0.5), extra=st.floats(0.0, 0.5),
       t=st.floats(5.0, 35.0), model=st.sampled_from(["ideal", "davies", "extended-debye-huckel"]),
       titrant=st.sampled_from(["HCl", "NaOH", "H2SO4", "Na2CO3"]), frac=st.floats(0.05, 0.95))
def test_curve_points_solve_independently(carb, nh4, po4, extra, t, model, titrant, frac):
    # de Levie's explicit V(pH) must agree with a root solve of the diluted mixture at that V.
    MM = "mmol/L"
    na = carb * (1.0 + extra) + 2.0 * po4
    sc = {"temperature_C": t, "activity": model, "complexes": False,
          "systems": [{"id": "carbonate", "total": carb, "unit": MM}, {"id": "ammonium", "total": nh4, "unit": MM},
                      {"id": "phosphate", "total": po4, "unit": MM}],
          "ions": [{"id": "Na+", "total": na, "unit": MM}]}
    Ct, Vs = 0.05, 100.0
    up = titrant in ("NaOH", "Na2CO3")
    pH0 = solve(sc)["pH"]
    to_pH = min(pH0 + 1.0, 11.0) if up else max(pH0 - 3.0, 3.5)
    out = curve(sc, titrant, titrant_M=Ct, sample_mL=Vs, to_pH=to_pH, points=60)
    p = out["points"][int(frac * 59)]
    Vt = p["titrant_mL"]
    dil_s, dil_t = Vs / (Vs + Vt), Vt / (Vs + Vt)
    T = 273.15 + t
    systems = [("carbonate", carb * 1e-3 * dil_s), ("ammonium", nh4 * 1e-3 * dil_s), ("phosphate", po4 * 1e-3 * dil_s)]
    ions = [(1, na * 1e-3 * dil_s, 4.5)]
    add = Ct * dil_t
    if titrant == "HCl":
        ions.append((-1, add, 3.0))
    elif titrant == "NaOH":
        ions.append((1, add, 4.5))
    elif titrant == "H2SO4":
        systems.append(("sulfate", add))
    else:
        ions.append((1, 2 * add, 4.5))
        systems[0] = ("carbonate", systems[0][1] + add)
    assert indep_pH(systems, ions, T, model) == pytest.approx(p["pH"], abs=2e-6)


# --- CLI ---------------------------------------------------------------------------------------

def run_cli(*args):
    return subprocess.run([sys.executable, "-m", "acidscape", *args], capture_output=True, text=True, timeout=60)


def test_cli_titrate_contract(tmp_path):
    f = tmp_path / "w.json"
    f.write_text(json.dumps({"measured": {"pH": 7.8, "alkalinity": {"value": 150, "unit": "mg/L as CaCO3"}}}))
    r = run_cli("titrate", str(f), "--titrant", "H2SO4", "--titrant-M", "0.01", "--sample-mL", "100",
                "--to-pH", "4.0", "--points", "80")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert len(out["points"]) == 80
    for p in out["points"] + out["equivalence_points"]:
        assert {"pH", "titrant_mL", "dose_mmol_per_L"} <= set(p)
    # 150 mg/L as CaCO3 = 3.0 meq/L; 0.02 N acid for 100 mL: about 15 mL to the end point.
    assert out["equivalence_points"][0]["titrant_mL"] == pytest.approx(15.0, rel=0.03)


def test_cli_titrate_bad_input(tmp_path):
    f = tmp_path / "w.json"
    f.write_text(json.dumps({"systems": [{"id": "carbonate", "total": 1, "unit": "mmol/L"}]}))
    r = run_cli("titrate", str(f), "--titrant", "HCl", "--to-pH", "9")
    assert r.returncode == 2
    assert "error [to_pH]" in r.stderr and "acid" in r.stderr
    r = run_cli("titrate", str(f), "--titrant", "KOH")
    assert r.returncode == 2 and "error [titrant]" in r.stderr and "is not offered" in r.stderr


def test_co2_curve_stops_at_saturation_under_one_atmosphere():
    # A bicarbonate water sparged with pure CO2 reaches at most [H2CO3*] = K_H x 1 atm
    # (Henry's law; K_H 10^-1.468 mol/(L atm) at 25 °C, Plummer & Busenberg 1982, from memory);
    # Henderson-Hasselbalch then gives pH = pKa1 + log10([HCO3-]/[H2CO3*]) (common practice).
    sc = {"activity": "ideal", "complexes": False, "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
          "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]}
    out = curve(sc, "CO2", points=30)
    expected = 6.352 + math.log10(2e-3 / 10**-1.468)
    assert out["to_pH"] == pytest.approx(expected, abs=0.01)
    assert any("1 atm" in w for w in out["warnings"])
    with pytest.raises(UnreachableError, match="saturated with CO₂"):
        curve(sc, "CO2", points=30, to_pH=4.0)


# --- The model's titration: complexes off reproduces the acid-base answers; complexes on --------

@pytest.mark.parametrize("sc,titrant,kw", [
    ({"temperature_C": 12, "activity": "davies", "complexes": False,
      "systems": [{"id": "carbonate", "total": 2.5, "unit": "mmol/L"}, {"id": "phosphate", "total": 0.1, "unit": "mmol/L"},
                  {"id": "ammonium", "total": 0.3, "unit": "mmol/L"}],
      "ions": [{"id": "Na+", "total": 2.9, "unit": "mmol/L"}]}, "HCl", {"titrant_M": 0.02, "to_pH": 3.5}),
    ({"temperature_C": 30, "activity": "extended-debye-huckel", "complexes": False,
      "systems": [{"id": "carbonate", "total": 1.0, "unit": "mmol/L"}],
      "ions": [{"id": "Na+", "total": 1.2, "unit": "mmol/L"}]}, "NaOH", {"titrant_M": 0.05, "to_pH": 11.0}),
    ({"activity": "ideal", "complexes": False, "systems": [{"id": "carbonate", "total": 3.0, "unit": "mmol/L"}],
      "ions": [{"id": "Na+", "total": 3.0, "unit": "mmol/L"}]}, "H2SO4", {"titrant_M": 0.01, "to_pH": 4.0}),
])
def test_without_complexes_every_point_is_the_acid_base_answer(sc, titrant, kw):
    # Invariant of the one-model change: with complexes off each point (its pH and the titrant
    # volume) is the charge-balance answer of the diluted mixture, found here independently by
    # brentq (indep_pH above), to 1e-9 pH, equivalence points included.
    out = curve(sc, titrant, sample_mL=100, points=60, **kw)
    T = 273.15 + sc.get("temperature_C", 25)
    for p in out["points"][::3] + out["equivalence_points"] + out["half_equivalence_points"]:
        Vt = p["titrant_mL"]
        f = 100.0 / (100.0 + Vt)
        add = kw["titrant_M"] * Vt / (100.0 + Vt)
        systems = [(e["id"], e["total"] * 1e-3 * f) for e in sc["systems"]]
        ions = [(1, sc["ions"][0]["total"] * 1e-3 * f, 4.5)]
        if titrant == "HCl":
            ions.append((-1, add, 3.0))
        elif titrant == "NaOH":
            ions.append((1, add, 4.5))
        else:
            systems.append(("sulfate", add))
        assert indep_pH(systems, ions, T, sc["activity"]) == pytest.approx(p["pH"], abs=1e-9)


HARD = {"temperature_C": 18, "activity": "davies",
        "systems": [{"id": "carbonate", "total": 4.0, "unit": "mmol/L"}, {"id": "sulfate", "total": 1.0, "unit": "mmol/L"}],
        "ions": [{"id": "calcium", "total": 2.0, "unit": "mmol/L"}, {"id": "magnesium", "total": 1.0, "unit": "mmol/L"},
                 {"id": "sodium", "total": 2.0, "unit": "mmol/L"}, {"id": "chloride", "total": 2.0, "unit": "mmol/L"}]}


def test_hard_water_curve_with_complexes_against_the_reference_solver():
    # Ion pairs on (CaHCO3+, CaCO3°, CaSO4°, MgHCO3+ ...): each point's mixture, diluted by the
    # titrant, solved by the independent scipy reference (tests/reference_model.py) lands on the
    # point's pH.
    out = curve(HARD, "HCl", titrant_M=0.02, sample_mL=100, to_pH=4.0, points=41)
    assert out["equivalence_points"], "the carbonate end point is found"
    for p in out["points"][::5] + out["equivalence_points"]:
        Vt = p["titrant_mL"]
        f = 100.0 / (100.0 + Vt)
        sc = {"temperature_C": 18, "activity": "davies",
              "systems": [dict(e, total=e["total"] * f) for e in HARD["systems"]],
              "ions": [dict(e, total=e["total"] * f + (0.02e3 * Vt / (100.0 + Vt) if e["id"] == "chloride" else 0.0))
                       for e in HARD["ions"]]}
        assert reference_model.solve(sc)["pH"] == pytest.approx(p["pH"], abs=1e-8)
    # with complexes the carbonate end point needs the same acid (alkalinity is conservative)
    no = curve(dict(HARD, complexes=False), "HCl", titrant_M=0.02, sample_mL=100, to_pH=4.0, points=41)
    assert out["equivalence_points"][0]["titrant_mL"] == pytest.approx(no["equivalence_points"][0]["titrant_mL"],
                                                                      rel=0.02)
