"""Hardness by EDTA titration (acidscape.operations.hardness) against the textbook treatment.

Checks:

* the textbook's own method (Harris, Quantitative Chemical Analysis, chapter "EDTA Titrations",
  section on EDTA titration curves; 7th ed. 2007, from memory) is written here and first
  reproduces the book's worked example -- 50.0 mL of 0.0400 M Ca2+ buffered at pH 10.00
  titrated with 0.0800 M EDTA, K'f = alpha_Y4- Kf = (0.30)(10^10.65) = 1.34e10, equivalence at
  25.0 mL; pCa = 1.54 at 5.0 mL, 5.85 at 25.0 mL, 8.73 at 26.0 mL (the printed values, from
  memory; editions with alpha_Y4- = 0.36, from pKa6 = 10.24, give 5.89 and 8.81);
* the model against that method with its own conditional constant (computed here from the
  printed constants, not by the core) to 0.005 pCa, and against the book's printed numbers to
  0.1 pCa (the model's pH is the meter pH, -log a(H+); the book's alpha_Y4- = 0.30 reads pH 10 as
  [H+] = 1e-10, which at I = 0.1 mol/L is a(H+) = 7.8e-11: alpha_Y4- 0.25, 0.08 pCa after the
  equivalence point);
* the conditional constant of CaY2- at pH 10 against log Kf + log alpha_Y4-(pH) + log alpha_Ca(pH)
  computed here;
* the total hardness of a calcium and magnesium water against the Standard Methods factors
  2.497 (Ca) and 4.118 (Mg) mg CaCO3 per mg (Standard Methods 2340 B; from memory).
The test waters are inputs chosen for the checks, not reference data.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest

from acidscape.boundary import api
from acidscape.boundary import dispatch
from acidscape.errors import InputError

#: Printed EDTA constants at 25 °C, I = 0.1 mol/L: pKa1..pKa6 (pKa1 at I = 1.0) and log Kf of
#: CaY2- and MgY2- (NIST SRD 46, Smith, Martell & Motekaitis 2004; the values Harris tabulates;
#: from memory).
PKA_EDTA = (0.0, 1.5, 2.00, 2.69, 6.13, 10.37)
LOG_KF = {"calcium": 10.65, "magnesium": 8.79}
#: Hydrolysis *K of Ca+2 + H2O = CaOH+ + H+ and of Mg+2, I = 0 (Nordstrom et al. 1990 compilation,
#: from memory).
LOG_STAR_K_OH = {"calcium": -12.78, "magnesium": -11.44}
#: Davies A at 25 °C (Davies 1962; 0.5085 is common practice, from memory; the core computes A(T)
#: from CODATA constants, which differs in the fourth digit).
A_DAVIES = 0.5085


def davies(z, I):
    s = math.sqrt(I)
    return -A_DAVIES * z * z * (s / (1 + s) - 0.3 * I)


def textbook_conditional(metal, pH, I=0.1):
    """(log Kf, log alpha_Y4-, log alpha_M, log K') with concentration constants at I (textbook method)."""
    H = 10 ** -pH / 10 ** davies(1, I)  # [H+] from the meter pH
    terms, cum = [1.0], 0.0
    for pKa in reversed(PKA_EDTA):  # [HpY]/[Y] = [H+]^p / (Ka6 ... Ka(7-p))
        cum += pKa
        terms.append(10 ** cum * H ** len(terms))
    alpha_Y = 1.0 / sum(terms)
    # [MOH+]/[M] = *K g(M) / (g(MOH) a(H+))
    ratio = 10 ** LOG_STAR_K_OH[metal] * 10 ** (davies(2, I) - davies(1, I)) / 10 ** -pH
    alpha_M = 1.0 / (1.0 + ratio)
    logK = LOG_KF[metal]
    return logK, math.log10(alpha_Y), math.log10(alpha_M), logK + math.log10(alpha_Y) + math.log10(alpha_M)


def textbook_pM(V, C_M=0.0400, V_M=50.0, C_Y=0.0800, Kc=None):
    """pM by the textbook's three regions (Harris): excess metal; the CaY dissociation
    x^2/(F - x) = 1/K'; excess EDTA [M] = [MY]/(K' [EDTA])."""
    Ve = C_M * V_M / C_Y
    if V < Ve:
        return -math.log10((Ve - V) / Ve * C_M * V_M / (V_M + V))
    F = C_M * V_M / (V_M + V)
    if V == Ve:
        x = (-1 / Kc + math.sqrt(1 / Kc ** 2 + 4 * F / Kc)) / 2
        return -math.log10(x)
    Y = (V - Ve) * C_Y / (V_M + V)
    return -math.log10(F / (Kc * Y))


HARRIS_SAMPLE = {"activity": "davies", "ionic_strength_M": 0.1,
                 "ions": [{"id": "calcium", "total": 0.0400, "unit": "mol/L"},
                          {"id": "chloride", "total": 0.0800, "unit": "mol/L"}]}


def titrate(scenario, **kw):
    return api.titrate(dict({"scenario": scenario, "titrant": "EDTA"}, **kw))


def test_textbook_method_reproduces_the_printed_example():
    Kc = 0.30 * 10 ** 10.65  # Harris: K'f = alpha_Y4- Kf = 1.34e10
    assert Kc == pytest.approx(1.34e10, rel=2e-3)
    assert textbook_pM(5.0, Kc=Kc) == pytest.approx(1.54, abs=0.005)
    assert textbook_pM(25.0, Kc=Kc) == pytest.approx(5.85, abs=0.005)
    assert textbook_pM(26.0, Kc=Kc) == pytest.approx(8.73, abs=0.005)


def test_calcium_curve_against_the_textbook_method():
    out = titrate(HARRIS_SAMPLE, titrant_M=0.0800, sample_mL=50.0, fixed_pH=10.0, points=401, to_mL=40.0)
    by_V = {round(p["titrant_mL"], 6): p for p in out["points"]}
    logK, log_aY, log_aCa, logKc = textbook_conditional("calcium", 10.0)
    for V, printed in ((5.0, 1.54), (25.0, 5.85), (26.0, 8.73)):
        p = by_V[V]
        assert p["pH"] == 10.0 and p["pM"]["magnesium"] is None
        # the same method with the conditional constant of the model's conventions (computed here)
        assert p["pM"]["calcium"] == pytest.approx(textbook_pM(V, Kc=10 ** logKc), abs=0.005)
        # the book's printed values (alpha_Y4- = 0.30 read at [H+] = 1e-10)
        assert p["pM"]["calcium"] == pytest.approx(printed, abs=0.1)
    ep = out["end_points"]
    assert [e["metal"] for e in ep] == ["calcium"] and ep[0]["sharp"]
    assert ep[0]["titrant_mL"] == pytest.approx(25.0, rel=1e-5)
    # 0.0400 M Ca = 4003.5 mg/L as CaCO3 (100.09 g/mol, IUPAC 2021 atomic weights)
    assert out["total_hardness_mg_per_L_as_CaCO3"] == pytest.approx(0.0400 * 100.0869e3, rel=1e-5)
    chk = out["model_check"]
    assert abs(chk["difference"]) < 1e-8  # the fixed-pH solve against acidscape.science.model


def test_conditional_constant_of_CaY_at_pH_10():
    out = api.conditional_constants({"scenario": {"ionic_strength_M": 0.1}, "metals": ["calcium", "magnesium"],
                                     "pH_from": 10.0, "pH_to": 10.0, "points": 1})
    for row in out["metals"]:
        logK, log_aY, log_aM, logKc = textbook_conditional(row["id"], 10.0)
        assert row["log10_Kf_printed"] == LOG_KF[row["id"]] and row["log10_Kf_printed_I_M"] == 0.1
        assert row["log10_Kf"][0] == pytest.approx(logK, abs=0.003)
        assert row["log10_alpha_Y4"][0] == pytest.approx(log_aY, abs=0.002)
        assert row["log10_alpha_M"][0] == pytest.approx(log_aM, abs=1e-4)
        assert row["log10_K_conditional"][0] == pytest.approx(
            row["log10_Kf"][0] + row["log10_alpha_Y4"][0] + row["log10_alpha_M"][0], abs=1e-12)
        assert row["log10_K_conditional"][0] == pytest.approx(logKc, abs=0.004)
    ca = out["metals"][0]
    assert ca["log10_alpha_Y4"][0] == pytest.approx(math.log10(0.25), abs=0.01)


def test_conditional_constants_against_pH_show_why_the_buffer_is_pH_10():
    out = api.conditional_constants({"pH_from": 6.0, "pH_to": 13.0, "points": 71})
    pH = out["pH"]
    mg = next(r for r in out["metals"] if r["id"] == "magnesium")["log10_K_conditional"]
    ca = next(r for r in out["metals"] if r["id"] == "calcium")["log10_K_conditional"]
    k10 = pH.index(min(pH, key=lambda v: abs(v - 10.0)))
    assert all(a > b for a, b in zip(ca, mg))                      # calcium is titrated first
    assert all(b > a for a, b in zip(mg[:k10], mg[1:k10 + 1]))     # rising up to pH 10
    assert mg[k10] > 8.0 > mg[pH.index(min(pH, key=lambda v: abs(v - 8.0)))] + 1.5
    top = pH[mg.index(max(mg))]
    assert 10.5 < top < 12.5  # MgOH+ takes magnesium above ~pH 11.5


def test_total_hardness_against_standard_methods_factors():
    # 40.0 mg/L Ca and 12.0 mg/L Mg: 2.497 x 40.0 + 4.118 x 12.0 = 149.30 mg/L as CaCO3
    sc = {"ionic_strength_M": 0.1, "ions": [{"id": "calcium", "total": 40.0, "unit": "mg/L"},
                                            {"id": "magnesium", "total": 12.0, "unit": "mg/L"},
                                            {"id": "chloride", "total": 3.0, "unit": "mmol/L"}]}
    out = titrate(sc, titrant_M=0.01, sample_mL=50.0, fixed_pH=10.0)
    expected = 2.497 * 40.0 + 4.118 * 12.0
    assert out["total_hardness_mg_per_L_as_CaCO3"] == pytest.approx(expected, rel=2e-4)
    assert out["hardness_from_composition_mg_per_L_as_CaCO3"] == pytest.approx(expected, rel=2e-4)
    mg = next(e for e in out["end_points"] if e["metal"] == "magnesium")
    assert mg["sharp"] and mg["titrant_mL"] == pytest.approx(mg["stoichiometric_mL"], rel=1e-4)
    # magnesium titrated last: its stoichiometric volume is that of calcium plus magnesium
    ca = next(e for e in out["end_points"] if e["metal"] == "calcium")
    assert ca["stoichiometric_mL"] < mg["stoichiometric_mL"]
    # at pH 7 magnesium's conditional constant (about 10^5) gives no sharp end point
    low = titrate(sc, titrant_M=0.01, sample_mL=50.0, fixed_pH=7.0)
    assert low["total_hardness_mg_per_L_as_CaCO3"] is None
    assert any("no sharp end point" in w for w in low["warnings"])


def test_side_reactions_of_the_water_lower_the_conditional_constant():
    # sulfate pairs (CaSO4, MgSO4) in the water: alpha_M < 1 beyond the hydroxo complex
    plain = api.conditional_constants({"scenario": {"ionic_strength_M": 0.1}, "pH_from": 10, "pH_to": 10, "points": 1})
    sulf = api.conditional_constants({"scenario": {"ionic_strength_M": 0.1,
                                                   "ions": [{"id": "sulfate", "total": 20, "unit": "mmol/L"}]},
                                      "pH_from": 10, "pH_to": 10, "points": 1})
    for a, b in zip(plain["metals"], sulf["metals"]):
        assert b["log10_alpha_M"][0] < a["log10_alpha_M"][0] - 0.1


def test_cli_contract(tmp_path):
    sample = tmp_path / "sample.json"
    sample.write_text(json.dumps({"ionic_strength_M": 0.1, "ions": [
        {"id": "calcium", "total": 60, "unit": "mg/L"}, {"id": "magnesium", "total": 20, "unit": "mg/L"},
        {"id": "chloride", "total": 5, "unit": "mmol/L"}]}))
    proc = subprocess.run([sys.executable, "-m", "acidscape", "titrate", str(sample), "--titrant", "EDTA",
                           "--titrant-M", "0.01", "--sample-mL", "50", "--fixed-pH", "10"],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    out = json.loads(proc.stdout)
    assert out["points"] and all(set(p["pM"]) == {"calcium", "magnesium"} and "pH" in p and "titrant_mL" in p
                                 for p in out["points"])
    assert all(p["pH"] == 10.0 for p in out["points"])
    assert isinstance(out["end_points"], list) and out["end_points"]
    expected = 2.497 * 60 + 4.118 * 20
    assert out["total_hardness_mg_per_L_as_CaCO3"] == pytest.approx(expected, rel=2e-4)
    # a fixed pH with an acid-base titrant is refused, naming the field
    proc = subprocess.run([sys.executable, "-m", "acidscape", "titrate", str(sample), "--titrant", "NaOH",
                           "--fixed-pH", "10"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 2 and "[titrant]" in proc.stderr


def test_errors_and_defaults():
    with pytest.raises(InputError) as e:
        titrate({"ions": [{"id": "sodium", "total": 1e-3}]}, titrant_M=0.01, sample_mL=50)
    assert e.value.field == "scenario"
    out = titrate({"ions": [{"id": "calcium", "total": 1e-3}]}, points=101)
    assert out["fixed_pH"] == 10.0 and out["titrant_M"] == 0.01 and out["sample_mL"] == 50.0
    assert any("pH 10 assumed" in w for w in out["warnings"])
    reply = json.loads(dispatch.handle("conditional_constants", json.dumps({"metals": ["strontium"]})))
    assert reply["ok"] is False and reply["error"]["field"] == "metals"
    reply = json.loads(dispatch.handle("conditional_constants", json.dumps({"metals": ["copper"], "points": 3})))
    assert reply["ok"] and reply["result"]["metals"][0]["complex"] == "CuEDTA-2"
