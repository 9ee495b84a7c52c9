"""Dose to target pH: stoichiometry, an independent brentq solve over random waters, plant units, errors."""

import json
import subprocess
import sys

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from acidscape.boundary.api import solve
from acidscape.constants import ATOMIC_WEIGHT as W
from acidscape.errors import InputError, UnknownIdError, UnreachableError
from acidscape.operations.dosing import (
    CAUTIONS,
    FLOW_UNITS,
    chemicals,
    dose_amount,
    dose_to_pH as _dose_to_pH,
    flow_L_per_d,
    get_chemical,
)

import reference_model
from test_titration import HARD, closed, indep_pH


def dose_to_pH(scenario, chemical, target, **kw):
    """The dose of a scenario's water, described by the boundary's solve (as api.dose does)."""
    return _dose_to_pH(closed(scenario), chemical, target, describe=solve, **kw)

MM = "mmol/L"
WATER = {"temperature_C": 15, "systems": [{"id": "carbonate", "total": 2.0, "unit": MM}],
         "ions": [{"id": "Na+", "total": 1.8, "unit": MM}, {"id": "Ca+2", "total": 0.5, "unit": MM},
                  {"id": "Cl-", "total": 1.0, "unit": MM}]}


def test_naoh_neutralises_strong_acid_stoichiometrically():
    # 1 mmol/L HCl needs 1 mmol/L NaOH to reach pH 7 (ideal; stoichiometry, common practice;
    # at 25 °C pKw = 13.995 so [OH-] - [H+] at pH 7 adds 1e-8 mol/L).
    out = dose_to_pH({"activity": "ideal", "ions": [{"id": "Cl-", "total": 1, "unit": MM}], "pH": 3.0}, "NaOH", 7.0)
    assert out["dose_mmol_per_L"] == pytest.approx(1.0, abs=1e-4)
    assert out["dose_mg_per_L"] == pytest.approx(1.0 * (W["Na"] + W["O"] + W["H"]), rel=1e-4)
    assert out["water_after"]["pH"] == pytest.approx(7.0, abs=1e-8)


def test_molar_masses_from_atomic_weights():
    # IUPAC CIAAW 2021 conventional atomic weights (acidscape.constants).
    expected = {"NaOH": W["Na"] + W["O"] + W["H"], "HCl": W["H"] + W["Cl"], "H2SO4": 2 * W["H"] + W["S"] + 4 * W["O"],
                "Ca(OH)2": W["Ca"] + 2 * (W["O"] + W["H"]), "Na2CO3": 2 * W["Na"] + W["C"] + 3 * W["O"],
                "NaHCO3": W["Na"] + W["H"] + W["C"] + 3 * W["O"], "CO2": W["C"] + 2 * W["O"]}
    for cid, mm in expected.items():
        assert chemicals()[cid].molar_mass_g_per_mol == pytest.approx(mm, abs=1e-3)


def test_flow_units():
    # 1 US gallon = 3.785411784 L exactly (NIST SP 811, from memory); MGD = 1e6 gal/d.
    assert flow_L_per_d(1.0, "MGD") == pytest.approx(3785411.784, rel=1e-15)
    assert flow_L_per_d(1.0, "L/s") == 86400.0
    assert flow_L_per_d(1.0, "m3/d") == 1000.0
    assert set(["m3/d", "L/s", "MGD"]) <= set(FLOW_UNITS)


def test_product_feed_arithmetic():
    out = dose_to_pH(WATER, "NaOH", 8.5, strength_pct=50, density_kg_per_L=1.525, flow=1.0, flow_unit="MGD")
    mg = out["dose_mg_per_L"]
    L_per_d = 3785411.784
    assert out["pure_chemical_kg_per_d"] == pytest.approx(mg * L_per_d / 1e6, rel=1e-12)
    prod = out["product"]
    assert prod["product_mg_per_L"] == pytest.approx(2 * mg, rel=1e-12)
    assert prod["feed_kg_per_d"] == pytest.approx(2 * mg * L_per_d / 1e6, rel=1e-12)
    assert prod["feed_L_per_h"] == pytest.approx(prod["feed_kg_per_d"] / 1.525 / 24, rel=1e-12)
    assert prod["feed_gal_per_d"] == pytest.approx(prod["feed_kg_per_d"] / 1.525 / 3.785411784, rel=1e-12)


@pytest.mark.parametrize("chem,target", [("NaOH", 8.8), ("HCl", 6.5), ("H2SO4", 6.0), ("Ca(OH)2", 9.0),
                                         ("Na2CO3", 9.5), ("NaHCO3", 8.0), ("CO2", 6.8)])
def test_water_after_and_alkalinity_change(chem, target):
    # The water after (solved by the core's independent Newton solver) sits at the target, and the
    # total alkalinity changes by dose x the chemical's equivalents (alkalinity is conservative,
    # Stumm & Morgan ch. 4): NaOH +1, HCl -1, H2SO4 -2, Ca(OH)2 +2, Na2CO3 +2, NaHCO3 +1, CO2 0.
    eqs = {"NaOH": 1, "HCl": -1, "H2SO4": -2, "Ca(OH)2": 2, "Na2CO3": 2, "NaHCO3": 1, "CO2": 0}
    out = dose_to_pH(WATER, chem, target)
    assert out["water_after"]["pH"] == pytest.approx(target, abs=1e-7)
    ch = out["change"]["equivalence_alkalinity_meq_per_L"]["change"]
    assert ch == pytest.approx(eqs[chem] * out["dose_mmol_per_L"], abs=1e-9)
    # the total alkalinity shown is the one a lab titrates to pH 4.5, as in every solve result
    after = out["change"]["total_alkalinity_mg_per_L_as_CaCO3"]["after"]
    assert after == pytest.approx(out["water_after"]["alkalinity"]["total_mg_per_L_as_CaCO3"], rel=1e-6)
    dic = out["change"]["DIC_mmol_per_L"]["change"]
    adds_c = chem in ("Na2CO3", "NaHCO3", "CO2")
    assert dic == pytest.approx(out["dose_mmol_per_L"] if adds_c else 0.0, abs=1e-12)


chem_ids = st.sampled_from(["NaOH", "HCl", "H2SO4", "Ca(OH)2", "Na2CO3", "NaHCO3", "CO2", "acetic", "ammonium"])


@settings(max_examples=200, deadline=None)
@given(carb=st.floats(0.0, 5.0), nh4=st.floats(0.0, 1.0), po4=st.floats(0.0, 0.3), boric=st.floats(0.0, 0.5),
       na=st.floats(0.0, 6.0), ca=st.floats(0.0, 2.0), cl=st.floats(0.0, 4.0), t=st.floats(2.0, 40.0),
       model=st.sampled_from(["ideal", "davies", "extended-debye-huckel"]), chem=chem_ids,
       log_d=st.floats(-5.0, -2.5))
def test_dose_inverts_an_independent_charge_balance(carb, nh4, po4, boric, na, ca, cl, t, model, chem, log_d):
    # Add a known dose, solve the water after with scipy brentq (independent charge balance with
    # activities, tests/test_titration.indep_pH), then ask for the dose that reaches that pH.
    sc = {"temperature_C": t, "activity": model, "complexes": False,
          "systems": [{"id": "carbonate", "total": carb, "unit": MM}, {"id": "ammonium", "total": nh4, "unit": MM},
                      {"id": "phosphate", "total": po4, "unit": MM}, {"id": "boric", "total": boric, "unit": MM}],
          "ions": [{"id": "Na+", "total": na, "unit": MM}, {"id": "Ca+2", "total": ca, "unit": MM},
                   {"id": "Cl-", "total": cl, "unit": MM}]}
    d = 10.0**log_d
    c = get_chemical(chem)
    systems = {"carbonate": carb * 1e-3, "ammonium": nh4 * 1e-3, "phosphate": po4 * 1e-3, "boric": boric * 1e-3}
    ions = [(1, na * 1e-3, 4.5), (2, ca * 1e-3, 6.0), (-1, cl * 1e-3, 3.0)]
    sizes = {"sodium": 4.5, "chloride": 3.0, "calcium": 6.0}  # Kielland (1937), as in ions.csv
    for iid, n in c.ions:
        z = dict(zip([i for i, _ in c.ions], [z for z, _ in c.ion_charges]))[iid]
        ions.append((z, n * d, sizes[iid]))
    for sid, n in c.systems:
        systems[sid] = systems.get(sid, 0.0) + n * d
    T = 273.15 + t
    water = closed(sc)
    pH_after = indep_pH(list(systems.items()), ions, T, model)
    if abs(pH_after - water.sol.pH) < 1e-4:
        return  # the dose barely moves this pH; the inverse is ill-conditioned there
    got, _ = dose_amount(water, c, pH_after)
    # Near a chemical's limit pH the pH can pass through a maximum as the dose grows (activities),
    # so two doses may give the same pH: the smaller one is returned. Either way the independent
    # solve of the water after the returned dose must land on the target.
    assert got <= d * (1 + 2e-5)
    if got < d * (1 - 2e-5):
        sys2 = dict(systems)
        ions2 = [x for x in ions[:3]]
        for iid, n in c.ions:
            z = dict(zip([i for i, _ in c.ions], [z for z, _ in c.ion_charges]))[iid]
            ions2.append((z, n * got, sizes[iid]))
        for sid, n in c.systems:
            sys2[sid] = sys2[sid] - n * d + n * got
        assert indep_pH(list(sys2.items()), ions2, T, model) == pytest.approx(pH_after, abs=1e-7)
    else:
        assert got == pytest.approx(d, rel=2e-5)


def test_unreachable_targets():
    # NaHCO3 cannot raise pH beyond about (pKa1 + pKa2)/2 = 8.3 (its own equivalence pH).
    # (acid-base only: with the water's calcium, CaHCO3+ and CaCO3° move that pH a little)
    acid_base = dict(WATER, complexes=False)
    with pytest.raises(UnreachableError, match="only approaches 8\\.[34]") as e:
        dose_to_pH(acid_base, "NaHCO3", 8.6)
    assert e.value.field == "target_pH"
    # Just below that limit, the salt the dose adds lowers the limit itself (activities): refused.
    with pytest.raises(UnreachableError, match="the more salt it adds"):
        dose_to_pH(acid_base, "NaHCO3", 8.3)
    with pytest.raises(UnreachableError, match="acts as an acid.*lowers"):
        dose_to_pH(WATER, "HCl", 9.0)
    with pytest.raises(UnreachableError, match="acts as a base.*raises"):
        dose_to_pH(WATER, "Ca(OH)2", 6.0)
    # CO2: below some pH the H2CO3* needed exceeds its solubility under 1 atm CO2 (K_H, PB82).
    with pytest.raises(UnreachableError, match="1 atm"):
        dose_to_pH(WATER, "CO2", 4.2)
    with pytest.raises(UnreachableError, match="more than the 5 mol/L"):
        dose_to_pH({"activity": "ideal", "temperature_C": 60}, "NaOH", 14.0)  # pKw 13.0 at 60 °C


@pytest.mark.parametrize("kwargs,field", [
    ({"flow": -5.0, "flow_unit": "m3/d"}, "flow"),
    ({"strength_pct": 120.0}, "strength_pct"),
    ({"strength_pct": 0.0}, "strength_pct"),
    ({"density_kg_per_L": -1.0}, "density_kg_per_L"),
    ({"flow": 10.0}, "flow_unit"),
])
def test_bad_plant_input(kwargs, field):
    with pytest.raises(InputError) as e:
        dose_to_pH(WATER, "NaOH", 8.5, **kwargs)
    assert e.value.field == field
    # the message names the input in words, not by its key
    words = {"flow": "plant flow", "strength_pct": "strength of the product",
             "density_kg_per_L": "density of the product", "flow_unit": "flow unit"}[field]
    assert words in e.value.message and ("_" not in field or field not in e.value.message)


def test_unknown_chemical_and_unit():
    with pytest.raises(UnknownIdError, match="is not offered"):
        dose_to_pH(WATER, "KOH", 8.5)
    with pytest.raises(UnknownIdError, match="flow unit “cfs” is not offered") as e:
        dose_to_pH(WATER, "NaOH", 8.5, flow=1.0, flow_unit="cfs")


def run_cli(*args):
    return subprocess.run([sys.executable, "-m", "acidscape", *args], capture_output=True, text=True, timeout=60)


def test_cli_dose_contract(tmp_path):
    f = tmp_path / "w.json"
    f.write_text(json.dumps(WATER))
    r = run_cli("dose", str(f), "--chemical", "NaOH", "--target-pH", "8.5", "--strength-pct", "50",
                "--density-kg-per-L", "1.525", "--flow", "2", "--flow-unit", "MGD")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert {"dose_mmol_per_L", "dose_mg_per_L", "product", "water_after", "cautions"} <= set(out)
    assert out["cautions"] == list(CAUTIONS)
    assert {"feed_kg_per_d", "feed_L_per_h", "feed_gal_per_d"} <= set(out["product"])
    assert out["water_after"]["pH"] == pytest.approx(8.5, abs=1e-7)
    assert {"total_meq_per_L", "total_mg_per_L_as_CaCO3", "phenolphthalein_mg_per_L_as_CaCO3"} <= \
        set(out["water_after"]["alkalinity"])


@pytest.mark.parametrize("args,field,words", [
    (["--chemical", "NaOH", "--target-pH", "8.5", "--flow", "-1", "--flow-unit", "m3/d"], "flow", "from 0 to"),
    (["--chemical", "NaOH", "--target-pH", "8.5", "--strength-pct", "150"], "strength_pct", "150"),
    (["--chemical", "HCl", "--target-pH", "9.5"], "target_pH", "acid"),
    (["--chemical", "CO2", "--target-pH", "4.0"], "target_pH", "1 atm"),
])
def test_cli_dose_bad_input(tmp_path, args, field, words):
    f = tmp_path / "w.json"
    f.write_text(json.dumps(WATER))
    r = run_cli("dose", str(f), *args)
    assert r.returncode == 2
    assert f"error [{field}]" in r.stderr and words in r.stderr
    assert r.stdout == ""


# --- Cautions, complexes and precipitation --------------------------------------------------------

def test_cautions_travel_with_every_dose():
    # Dosing output always carries the cautions (common practice of chemical handling in water
    # treatment): protective equipment, a jar or bench test, overfeed, local rules and operators.
    out = dose_to_pH(WATER, "NaOH", 8.5)
    assert out["cautions"] == list(CAUTIONS)
    text = " ".join(out["cautions"]).lower()
    for words in ("burn skin and eyes", "jar or bench test", "overfeed", "licensed operators"):
        assert words in text


@pytest.mark.parametrize("sc,chem,target", [
    ({"temperature_C": 8, "activity": "davies", "complexes": False,
      "systems": [{"id": "carbonate", "total": 1.5, "unit": MM}, {"id": "phosphate", "total": 0.05, "unit": MM}],
      "ions": [{"id": "Na+", "total": 1.3, "unit": MM}, {"id": "Cl-", "total": 0.4, "unit": MM}]}, "NaOH", 9.1),
    ({"activity": "extended-debye-huckel", "complexes": False,
      "systems": [{"id": "carbonate", "total": 3.0, "unit": MM}],
      "ions": [{"id": "Na+", "total": 3.2, "unit": MM}]}, "H2SO4", 6.3),
])
def test_without_complexes_the_dose_is_the_acid_base_answer(sc, chem, target):
    # Invariant of the one-model change: with complexes off the water after the dose, solved
    # independently by brentq (indep_pH), sits at the target to 1e-9 pH.
    d = dose_to_pH(sc, chem, target)["dose_mmol_per_L"] * 1e-3
    systems = {e["id"]: e["total"] * 1e-3 for e in sc["systems"]}
    ions = [(1, sc["ions"][0]["total"] * 1e-3, 4.5)] + [(-1, e["total"] * 1e-3, 3.0) for e in sc["ions"][1:]]
    if chem == "NaOH":
        ions.append((1, d, 4.5))
    else:
        systems["sulfate"] = d
    T = 273.15 + sc.get("temperature_C", 25)
    assert indep_pH(list(systems.items()), ions, T, sc["activity"]) == pytest.approx(target, abs=1e-9)


def test_dose_with_complexes_inverts_the_reference_solver():
    # A hard water with its ion pairs plus 0.5 mmol/L NaOH, solved by the independent scipy
    # reference (tests/reference_model.py); the dose back to that pH is 0.5 mmol/L.
    after = dict(HARD, ions=[dict(e, total=e["total"] + (0.5 if e["id"] == "sodium" else 0.0)) for e in HARD["ions"]])
    pH = reference_model.solve(after)["pH"]
    got, _ = dose_amount(closed(HARD), get_chemical("NaOH"), pH)
    assert got == pytest.approx(0.5e-3, rel=1e-8)


def test_lime_with_calcite_forming_against_the_reference_solver():
    # Lime softening: Ca(OH)2 to pH 10 with calcite allowed to form. The water after, with the
    # same dose and calcite allowed, solved by the independent reference, sits at pH 10 with the
    # same calcite; CaCO3 molar mass 100.087 g/mol (IUPAC 2021 atomic weights).
    out = dose_to_pH(HARD, "Ca(OH)2", 10.0, precipitate=["calcite"])
    ref = reference_model.solve(out["scenario_after"])
    assert ref["pH"] == pytest.approx(10.0, abs=1e-8)
    (solid,) = out["precipitated"]
    assert solid["id"] == "calcite"
    assert solid["mol_per_L"] == pytest.approx(ref["precipitated"]["calcite"], rel=1e-7)
    assert solid["mg_per_L"] == pytest.approx(solid["mol_per_L"] * 100.087e3, rel=1e-4)
    assert out["water_after"]["pH"] == pytest.approx(10.0, abs=1e-7)
    # the same target without calcite forming needs another dose, reported beside it
    plain = dose_to_pH(HARD, "Ca(OH)2", 10.0)
    assert out["precipitation"]["dose_without_precipitation_mmol_per_L"] == pytest.approx(
        plain["dose_mmol_per_L"], rel=1e-9)
    assert out["dose_mmol_per_L"] != pytest.approx(plain["dose_mmol_per_L"], rel=1e-3)
    # without calcite allowed the water after is oversaturated: the warning gives its SI
    si = reference_model.solve(plain["scenario_after"])["saturation"]["calcite"]
    assert si > 0
    assert any("calcite" in w and f"SI {si:+.2f}" in w for w in plain["warnings"]), plain["warnings"]


def test_precipitate_names_a_known_solid():
    with pytest.raises(UnknownIdError) as e:
        dose_to_pH(HARD, "Ca(OH)2", 10.0, precipitate=["unobtainite"])
    assert e.value.field == "precipitate"
