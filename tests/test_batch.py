"""Batch of CSV samples: each row agrees with acidscape.boundary.api.solve / dose run on its own scenario.

The oracle is the core's single-water entry point (``acidscape.boundary.api.solve``), which the other
test files check against published tables; here we check the CSV reading (delimiters, decimal
commas, BOM, CRLF, quotes), the column mapping and its guess, unit handling, blank cells, row
numbering, error and dose-status reporting, rounding, the template, processes and the command
line around it. Sample values are generated, not taken from any real plant.
"""

from __future__ import annotations

import csv
import io
import json
import math
import random
import subprocess
import sys
from pathlib import Path

import pytest

from acidscape.boundary import api
from acidscape.boundary import dispatch
from acidscape.boundary.batch import (
    DOSE_CAUTION, DOSE_CAUTIONS, batch_chunk, batch_csv, compute_records, detect_dialect, guess_mapping,
    read_header, result_columns, run_rows, species_column, template_csv,
)
from acidscape.data import library
from acidscape.errors import InputError

REPO = Path(__file__).resolve().parents[1]

MAPPING = {
    "id": "Sample",
    "pH": "pH",
    "temperature": {"column": "Temp", "unit": "C"},
    "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"},
    "systems": [{"id": "phosphate", "column": "PO4-P", "unit": "mg/L as P"},
                {"id": "ammonium", "column": "NH4-N", "unit": "mg/L as N"}],
    "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L"}],
}


def generated_csv(n: int, seed: int = 7) -> str:
    rnd = random.Random(seed)
    lines = ["Sample,pH,Temp,Alk,PO4-P,NH4-N,Ca"]
    for i in range(n):
        lines.append(",".join([
            f"S{i:05d}", f"{rnd.uniform(6.0, 9.5):.2f}", f"{rnd.uniform(2, 30):.1f}",
            f"{rnd.uniform(5, 300):.1f}", f"{rnd.uniform(0, 2):.3f}", f"{rnd.uniform(0, 5):.2f}",
            f"{rnd.uniform(0, 80):.1f}",
        ]))
    return "\n".join(lines) + "\n"


def scenario_of(cells: dict) -> dict:
    return {
        "temperature_C": float(cells["Temp"]), "activity": "davies",
        "measured": {"pH": float(cells["pH"]), "alkalinity": {"value": float(cells["Alk"]), "unit": "mg/L as CaCO3"}},
        "systems": [{"id": "phosphate", "total": float(cells["PO4-P"]), "unit": "mg/L as P"},
                    {"id": "ammonium", "total": float(cells["NH4-N"]), "unit": "mg/L as N"}],
        "ions": [{"id": "Ca+2", "total": float(cells["Ca"]), "unit": "mg/L"}],
    }


def conc_of(result: dict) -> dict:
    return {(s.get("system"), s["name"]): s["concentration_M"] for s in result["species"]}


# ------------------------------------------------------------------ rows against api.solve


def test_each_row_equals_solve_of_its_own_scenario():
    text = generated_csv(25)
    out = run_rows(text, MAPPING)
    assert out["errors"] == [] and len(out["rows"]) == 25
    for cells, row in zip(csv.DictReader(io.StringIO(text)), out["rows"]):
        want = api.solve(scenario_of(cells))
        assert row["sample"] == cells["Sample"]
        assert row["pH"] == want["pH"]
        assert row["ionic_strength_M"] == want["ionic_strength_M"]
        assert row["alkalinity_mg_per_L_as_CaCO3"] == want["alkalinity"]["total_mg_per_L_as_CaCO3"]
        split = want["alkalinity"]["split_from_speciation"]
        assert row["bicarbonate_alk_mg_per_L_as_CaCO3"] == split["bicarbonate_mg_per_L_as_CaCO3"]
        assert row["DIC_mg_per_L_as_C"] == want["inferred_from_measurements"]["DIC_mg_per_L_as_C"]
        conc = conc_of(want)
        assert row["phosphate_HPO4_mol_per_L"] == conc[("phosphate", "HPO4-2")]
        assert row["ammonium_NH3_mol_per_L"] == conc[("ammonium", "NH3")]
        # The measured pH is reproduced (the inferred water is electroneutral at it).
        assert row["pH"] == pytest.approx(float(cells["pH"]), abs=1e-6)


def test_rows_sharing_a_tableau_equal_solve_of_their_own_scenarios():
    # Rows alike in make-up and temperature share one tableau (batch._row_model); each must still
    # give exactly what api.solve gives for its own scenario: other totals, a blank total (another
    # make-up), a conductivity (ionic strength from it) and another temperature in between.
    from acidscape.boundary import batch

    batch._MODELS.clear()
    text = ("id,pH,T,Alk,Ca,Mg,EC\n"
            "a,7.4,12,120,40,8,\nb,8.1,12,60,15,2,\nc,7.9,12,200,,5,\nd,7.6,12,90,30,4,450\n"
            "e,7.0,20,150,60,12,\nf,8.4,12,40,5,1,\ng,7.6,12,90,30,4,\n")
    m = {"id": "id", "pH": "pH", "temperature": {"column": "T", "unit": "C"},
         "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}, "conductivity": {"column": "EC", "unit": "uS/cm"},
         "ions": [{"id": "calcium", "column": "Ca", "unit": "mg/L"}, {"id": "magnesium", "column": "Mg", "unit": "mg/L"}]}
    out = run_rows(text, m)
    assert out["errors"] == []
    # make-ups: Ca, Mg and a negative balancing ion at 12 °C (a, d, g) or 20 °C (e), a positive
    # one (b, f), Mg only (c): the closure's balancing ion takes the sign the water needs
    assert len(batch._MODELS) == 4
    for cells, row in zip(csv.DictReader(io.StringIO(text)), out["rows"]):
        sc = {"temperature_C": float(cells["T"]), "activity": "davies",
              "measured": {"pH": float(cells["pH"]), "alkalinity": {"value": float(cells["Alk"]),
                                                                    "unit": "mg/L as CaCO3"}},
              "ions": [{"id": k, "total": float(cells[c]), "unit": "mg/L"}
                       for k, c in (("calcium", "Ca"), ("magnesium", "Mg")) if cells[c]]}
        if cells["EC"]:
            sc["conductance_uS_per_cm"] = float(cells["EC"])
        want = api.solve(sc)
        for key, got in (("pH", row["pH"]), ("ionic_strength_M", row["ionic_strength_M"])):
            assert got == want[key], (cells["id"], key)
        assert row["alkalinity_mg_per_L_as_CaCO3"] == want["alkalinity"]["total_mg_per_L_as_CaCO3"]
        assert row["carbonate_alk_mg_per_L_as_CaCO3"] == \
            want["alkalinity"]["split_from_speciation"]["carbonate_mg_per_L_as_CaCO3"]
    # d (ionic strength from its conductivity) and g (from its composition) differ only there
    d, g = out["rows"][3], out["rows"][6]
    assert d["ionic_strength_M"] != g["ionic_strength_M"]


def test_alkalinity_reported_back_is_the_lab_value():
    # Fixed end point pH 4.5 total alkalinity (Standard Methods 2320 B, common practice): the
    # water inferred from pH + alkalinity must titrate back to the number the lab wrote down.
    text = generated_csv(10, seed=3)
    out = run_rows(text, MAPPING)
    for cells, row in zip(csv.DictReader(io.StringIO(text)), out["rows"]):
        assert row["alkalinity_mg_per_L_as_CaCO3"] == pytest.approx(float(cells["Alk"]), rel=1e-9)


def test_fahrenheit_and_blank_temperature():
    # 59 °F = 15 °C and 77 °F = 25 °C (the Fahrenheit definition, common practice).
    text = "id,pH,T\na,7,59\nb,7,77\nc,7,\n"
    m = {"id": "id", "pH": "pH", "temperature": {"column": "T", "unit": "F", "default_C": 10}}
    rows = run_rows(text, m)["rows"]
    assert [r["temperature_C"] for r in rows] == pytest.approx([15.0, 25.0, 10.0], abs=1e-12)
    # Without a default a blank temperature is that row's error, not a silent 25 °C.
    out = run_rows(text, {"id": "id", "pH": "pH", "temperature": {"column": "T", "unit": "F"}})
    assert [(e["row"], e["message"][:22]) for e in out["errors"]] == [(4, "Temperature is missing")]
    # No temperature column at all: every row at default_C (25 °C when not given).
    assert run_rows("pH\n7\n", {"pH": "pH"})["rows"][0]["temperature_C"] == 25.0


def test_speciation_at_measured_pH_and_equilibrium_modes():
    text = "id,pH,CT\na,8.1,2\n"
    systems = [{"id": "carbonate", "column": "CT", "unit": "mmol/L"}]
    fixed = run_rows(text, {"pH": "pH", "systems": systems})["rows"][0]
    want = api.solve({"temperature_C": 25.0, "activity": "davies", "pH": 8.1,
                      "systems": [{"id": "carbonate", "total": 2.0, "unit": "mmol/L"}]})
    assert fixed["pH"] == want["pH"] == 8.1
    assert fixed["carbonate_HCO3_mol_per_L"] == conc_of(want)[("carbonate", "HCO3-")]
    # DIC in mg/L as C from the carbonate total: 2 mmol/L x 12.011 g/mol (IUPAC atomic weight).
    assert fixed["DIC_mg_per_L_as_C"] == pytest.approx(24.022, rel=1e-12)
    eq = run_rows(text, {"mode": "equilibrium", "systems": systems})["rows"][0]
    want_eq = api.solve({"temperature_C": 25.0, "activity": "davies",
                         "systems": [{"id": "carbonate", "total": 2.0, "unit": "mmol/L"}]})
    assert eq["pH"] == want_eq["pH"] and eq["pH_measured"] is None


# ------------------------------------------------------------------------ reading the CSV


def semicolon_form(text: str) -> str:
    """The same samples as a spreadsheet in a decimal-comma locale writes them: ';', '12,5',
    a byte-order mark, CRLF line ends and a quoted ID holding the delimiter."""
    rows = list(csv.reader(io.StringIO(text)))
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=";", lineterminator="\r\n", quoting=csv.QUOTE_MINIMAL)
    w.writerow(rows[0])
    for r in rows[1:]:
        w.writerow([f"{r[0]}; east"] + [c.replace(".", ",") for c in r[1:]])
    return "\ufeff" + buf.getvalue()


def test_semicolon_decimal_comma_bom_crlf_quotes_read_like_the_plain_file():
    plain = generated_csv(12, seed=21)
    local = semicolon_form(plain)
    assert detect_dialect(local) == (";", ",")
    a, b = run_rows(plain, MAPPING), run_rows(local, MAPPING)
    assert b["errors"] == [] and b["delimiter"] == ";" and b["decimal"] == ","
    for ra, rb in zip(a["rows"], b["rows"]):
        assert rb["sample"] == ra["sample"] + "; east"
        assert {k: v for k, v in rb.items() if k != "sample"} == {k: v for k, v in ra.items() if k != "sample"}
    h = read_header(local)
    assert h["columns"][0] == "Sample" and h["rows"] == 12 and h["guess"]["decimal"] == ","


def test_tab_and_quoted_line_break():
    text = 'id\tpH\tnote\r\n"two\nlines"\t7,25\tx\r\nb\t8.5\t\r\n'
    out = run_rows(text, {"id": "id", "pH": "pH"})
    assert out["delimiter"] == "\t" and out["decimal"] == ","
    assert [(r["row"], r["sample"], r["pH_measured"]) for r in out["rows"]] == [(2, "two\nlines", 7.25), (3, "b", 8.5)]


def test_decimal_comma_in_a_comma_file_only_when_the_mapping_says_so():
    text = 'id,pH\na,"7,5"\n'
    out = run_rows(text, {"id": "id", "pH": "pH"})
    assert out["errors"][0]["message"].startswith("pH '7,5' is not a number (a decimal comma")
    ok = run_rows(text, {"id": "id", "pH": "pH", "decimal": ","})
    assert ok["errors"] == [] and ok["rows"][0]["pH"] == 7.5


def test_thousands_separators_and_detection_limits_are_errors_not_guesses():
    text = "id;pH;Alk\na;7,5;1.234,5\nb;7,5;<5\nc;7,5;1_000\n"
    out = run_rows(text, {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}})
    msg = {e["sample"]: e["message"] for e in out["errors"]}
    assert "thousands separators" in msg["a"] and "'<5' is not a number" in msg["b"] and "detection limit" in msg["b"]
    assert "'1_000'" in msg["c"]


# --------------------------------------------------------------------------- blank cells


def test_missing_alkalinity_is_that_rows_error_never_a_zero():
    text = "id,pH,Alk\na,7.5,100\nb,7.5,\nc,7.5,   \nd,7.5\n"
    m = {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}}
    out = run_rows(text, m)
    said = "Alkalinity is missing: without it the carbonate cannot be worked out (a blank cell is not read as 0)"
    assert [(e["row"], e["sample"], e["message"]) for e in out["errors"]] == [(3, "b", said), (4, "c", said),
                                                                               (5, "d", said)]
    assert out["rows"][0]["alkalinity_mg_per_L_as_CaCO3"] == pytest.approx(100.0, rel=1e-9)
    assert all("pH" not in r for r in out["rows"][1:])  # nothing computed for the bad rows
    nopH = run_rows("id,pH\na,\n", {"id": "id", "pH": "pH"})
    assert nopH["errors"] == [{"row": 2, "sample": "a", "message": "pH is missing"}]


def test_blank_totals_omit_zero_or_error_as_the_mapping_says():
    text = "id,pH,Ca\na,7.5,\n"
    base = {"id": "id", "pH": "pH", "activity": "ideal"}
    omit = run_rows(text, {**base, "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L"}]})
    want = api.solve({"temperature_C": 25.0, "activity": "ideal", "pH": 7.5})
    assert omit["errors"] == [] and omit["rows"][0]["ionic_strength_M"] == want["ionic_strength_M"]
    zero = run_rows(text, {**base, "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L", "blank": "zero"}]})
    want0 = api.solve({"temperature_C": 25.0, "activity": "ideal", "pH": 7.5,
                       "ions": [{"id": "Ca+2", "total": 0.0, "unit": "mol/L"}]})
    assert zero["errors"] == [] and zero["rows"][0]["ionic_strength_M"] == want0["ionic_strength_M"]
    err = run_rows(text, {**base, "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L", "blank": "error"}]})
    assert err["errors"][0]["message"] == "Calcium is missing"


def test_conductivity_and_tds_set_the_ionic_strength():
    # 1 mS/cm = 1000 uS/cm (SI prefixes, common practice).
    text = "id,pH,EC,TDS\na,7.5,0.5,\nb,7.5,,300\nc,7.5,0.5,300\nd,7.5,,\n"
    m = {"id": "id", "pH": "pH", "conductivity": {"column": "EC", "unit": "mS/cm"}, "tds": {"column": "TDS"}}
    rows = {r["sample"]: r for r in run_rows(text, m)["rows"]}
    base = {"temperature_C": 25.0, "activity": "davies", "pH": 7.5}
    assert rows["a"]["ionic_strength_M"] == api.solve({**base, "conductance_uS_per_cm": 500.0})["ionic_strength_M"]
    assert rows["b"]["ionic_strength_M"] == api.solve({**base, "tds_mg_per_L": 300.0})["ionic_strength_M"]
    assert rows["c"]["ionic_strength_M"] == rows["a"]["ionic_strength_M"]  # conductivity first
    assert rows["d"]["ionic_strength_M"] == api.solve(base)["ionic_strength_M"]


# ------------------------------------------------------------------ ions, units, columns


def test_word_and_formula_ion_ids_and_ug_per_L_give_the_same_rows():
    text = "id,pH,Alk,Ca,Ca_ug\na,7.8,120,40,40000\n"
    m = {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}}
    by_formula = run_rows(text, {**m, "ions": [{"id": "Ca+2", "column": "Ca", "unit": "mg/L"}]})["rows"][0]
    by_word = run_rows(text, {**m, "ions": [{"id": "calcium", "column": "Ca", "unit": "mg/L"}]})["rows"][0]
    by_ug = run_rows(text, {**m, "ions": [{"id": "calcium", "column": "Ca_ug", "unit": "ug/L"}]})["rows"][0]
    assert by_word == by_formula
    # 1 ug = 1e-3 mg (SI prefixes): the same water to round-off.
    assert by_ug["ionic_strength_M"] == pytest.approx(by_formula["ionic_strength_M"], rel=1e-12)


def test_result_columns_are_words_without_charge_spelling():
    cols = result_columns(["pH", "CT", "B"], {"pH": "pH", "systems": [
        {"id": "carbonate", "column": "CT", "unit": "mmol/L"}, {"id": "boric", "column": "B", "unit": "mg/L as B"}],
        "dose": {"chemical": "NaOH", "target_pH": 9}})
    names = [c["name"] for c in cols]
    assert "carbonate_CO3_mol_per_L" in names and "carbonate_H2CO3_mol_per_L" in names
    assert "boric_BOH4_mol_per_L" in names and "dose_status" in names and "dose_cautions" in names
    assert not any(ch in n for n in names for ch in ":+*()") and len(set(names)) == len(names)
    hco3 = next(c for c in cols if c["name"] == "carbonate_HCO3_mol_per_L")
    assert hco3 == {"name": "carbonate_HCO3_mol_per_L", "kind": "quantity", "system": "carbonate",
                    "formula": "HCO3-", "unit": "mol/L"}
    # Every species of every library system gets a distinct name.
    for sid, system in library.systems().items():
        spec = [species_column(sid, sp.formula) for sp in system.species]
        assert len(set(spec)) == len(spec), sid


@pytest.mark.parametrize("header, where, entry", [
    ("Ca (mg/L)", "ions", ("calcium", "mg/L")),
    ("Calcium hardness (mg/L as CaCO3)", "ions", ("calcium", "mg/L as CaCO3")),
    ("Mg mg/L", "ions", ("magnesium", "mg/L")),
    ("Na (meq/L)", "ions", ("sodium", "meq/L")),
    ("K (ppm)", "ions", ("potassium", "mg/L")),
    ("Chloride_mgL", "ions", ("chloride", "mg/L")),
    ("SO4 (mmol/L)", "ions", ("sulfate", "mmol/L")),
    ("NO3-N mg/L", "ions", ("nitrate", "mg/L as N")),
    ("Nitrate (mg/L as NO3)", "ions", ("nitrate", "mg/L")),
    ("PO4-P (mg/L)", "systems", ("phosphate", "mg/L as P")),
    ("Orthophosphate as P", "systems", ("phosphate", "mg/L as P")),
    ("NH3-N", "systems", ("ammonium", "mg/L as N")),
    ("Free chlorine (mg/L)", "systems", ("hypochlorous", "mg/L as Cl2")),
    ("Silica (mg/L as SiO2)", "systems", ("silicic", "mg/L")),
])
def test_guess_reads_names_and_units_of_totals(header, where, entry):
    g = guess_mapping(["Sample", header])
    word, unit = entry
    want_id = word if where == "systems" else next(  # ion ids: word or formula, as the library has them
        key for key, ion in library.ions().items() if key == word or ion.name.lower() == word)
    assert g[where] == [{"id": want_id, "column": header, "unit": unit}]
    assert g["id"] == "Sample"


@pytest.mark.parametrize("header, key, value", [
    ("pH (lab)", "pH", "pH (lab)"),
    ("Temperature (°F)", "temperature", {"column": "Temperature (°F)", "unit": "F"}),
    ("Temp_C", "temperature", {"column": "Temp_C", "unit": "C"}),
    ("Alk_mgL_CaCO3", "alkalinity", {"column": "Alk_mgL_CaCO3", "unit": "mg/L as CaCO3"}),
    ("Total alkalinity (meq/L)", "alkalinity", {"column": "Total alkalinity (meq/L)", "unit": "meq/L"}),
    ("EC (uS/cm)", "conductivity", {"column": "EC (uS/cm)", "unit": "uS/cm"}),
    ("Specific conductance mS/cm", "conductivity", {"column": "Specific conductance mS/cm", "unit": "mS/cm"}),
    ("Total dissolved solids (mg/L)", "tds", {"column": "Total dissolved solids (mg/L)", "unit": "mg/L"}),
])
def test_guess_reads_measurements(header, key, value):
    assert guess_mapping([header])[key] == value


def test_guess_leaves_out_what_it_cannot_read_and_says_why():
    g = guess_mapping(["Sample date", "Total chlorine", "Total hardness", "Ammonia (mg/L as NH3)", "Phosphate"])
    assert g["systems"][0]["column"] == "Phosphate" and len(g["systems"]) == 1
    assert set(g["unmapped"]) == {"Sample date", "Total chlorine", "Total hardness", "Ammonia (mg/L as NH3)"}
    assert any("as P" in n for n in g["notes"]) and any("NH3" in n for n in g["notes"])


def test_template_maps_every_column_and_its_example_row_computes():
    text = template_csv()
    header, example = list(csv.reader(io.StringIO(text)))
    assert "invented" in example[0] and len(header) == len(example)
    g = read_header(text)["guess"]
    assert g["unmapped"] == [] and g["notes"] == []
    mapped = {g["id"], g["pH"], g["temperature"]["column"], g["alkalinity"]["column"], g["conductivity"]["column"],
              g["tds"]["column"]} | {e["column"] for e in g["systems"] + g["ions"]}
    assert mapped == set(header)
    out = run_rows(text, {k: v for k, v in g.items() if k not in ("notes", "unmapped")})
    assert out["errors"] == [] and out["rows"][0]["sample"] == example[0]
    # The semicolon template writes decimal commas and reads back to the same numbers.
    local = template_csv(";")
    plain = {k: v for k, v in g.items() if k not in ("notes", "unmapped", "delimiter", "decimal")}
    assert "0,05" in local and run_rows(local, plain)["rows"] == out["rows"]
    assert batch_chunk({"template": True})["csv"] == text


# ---------------------------------------------------------------------------------- dose


def test_dose_columns_equal_api_dose_and_carry_the_cautions():
    text = generated_csv(6, seed=11)
    mapping = {**MAPPING, "dose": {"chemical": "NaOH", "target_pH": 9.6}}
    out = run_rows(text, mapping)
    assert out["cautions"] == list(DOSE_CAUTIONS)
    dosed = 0
    for cells, row in zip(csv.DictReader(io.StringIO(text)), out["rows"]):
        if float(cells["pH"]) >= 9.6:
            assert row["dose_status"] == "no dose needed"
            continue
        d = api.dose({"scenario": scenario_of(cells), "chemical": "NaOH", "target_pH": 9.6})
        assert row["dose_NaOH_mg_per_L"] == d["dose_mg_per_L"]
        assert row["pH_after_dose"] == pytest.approx(9.6, abs=1e-6)
        assert row["dose_status"] == "dosed" and row["dose_cautions"] == DOSE_CAUTION
        dosed += 1
    assert dosed >= 3
    for words in ("PPE", "jar", "overfeed", "licensed operators"):
        assert words in DOSE_CAUTION
    # A water given by its pH and totals (closed with a balancing ion) and one whose pH is its
    # equilibrium: the same dose as api.dose of the row's scenario.
    text = "id,pH,CT,Ca\na,6.9,2,30\n"
    systems = [{"id": "carbonate", "column": "CT", "unit": "mmol/L"}]
    ions = [{"id": "calcium", "column": "Ca", "unit": "mg/L"}]
    for mode, extra in (("measured", {"pH": 6.9}), ("equilibrium", {})):
        row = run_rows(text, {"pH": "pH", "mode": mode, "systems": systems, "ions": ions,
                              "dose": {"chemical": "NaOH", "target_pH": 9.6}})["rows"][0]
        sc = {"temperature_C": 25.0, "activity": "davies", **extra,
              "systems": [{"id": "carbonate", "total": 2e-3, "unit": "mol/L"}],
              "ions": [{"id": "calcium", "total": 30.0, "unit": "mg/L"}]}
        d = api.dose({"scenario": sc, "chemical": "NaOH", "target_pH": 9.6})
        assert row["dose_status"] == "dosed" and row["dose_NaOH_mg_per_L"] == pytest.approx(d["dose_mg_per_L"],
                                                                                             rel=1e-12), mode


def test_rows_past_the_target_need_no_dose_and_are_no_error():
    text = "id,pH,Alk\nlow,7.0,100\nhigh,9.0,100\nat,8.0,100\n"
    m = {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}}
    base = run_rows(text, {**m, "dose": {"chemical": "NaOH", "target_pH": 8.0}})
    st = {r["sample"]: r for r in base["rows"]}
    assert base["errors"] == []
    assert st["low"]["dose_status"] == "dosed" and st["low"]["dose_NaOH_mg_per_L"] > 0
    for s in ("high", "at"):
        assert st[s]["dose_status"] == "no dose needed" and st[s]["dose_NaOH_mg_per_L"] == 0.0
        assert st[s]["pH_after_dose"] == st[s]["pH"] and st[s]["dose_cautions"] == ""
    acid = {r["sample"]: r for r in run_rows(text, {**m, "dose": {"chemical": "HCl", "target_pH": 7.5}})["rows"]}
    assert acid["low"]["dose_status"] == "no dose needed" and acid["high"]["dose_status"] == "dosed"
    # CO2 adds no alkalinity: it lowers the pH, so a water below the target needs none.
    co2 = {r["sample"]: r for r in run_rows(text, {**m, "dose": {"chemical": "CO2", "target_pH": 7.5}})["rows"]}
    assert co2["low"]["dose_status"] == "no dose needed" and co2["high"]["dose_status"] == "dosed"


def test_a_target_beyond_the_chemical_is_not_reachable_and_an_error():
    # NaHCO3 stops raising the pH near (pKa1 + pKa2)/2 = 8.3 (carbonate system, common practice).
    text = "id,pH,Alk\na,7.0,100\n"
    m = {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"},
         "dose": {"chemical": "NaHCO3", "target_pH": 10.0}}
    out = run_rows(text, m)
    row = out["rows"][0]
    assert row["dose_status"] == "not reachable" and row["error"].startswith("Dose: ")
    assert out["errors"] == [{"row": 2, "sample": "a", "message": row["error"]}]
    assert row["pH"] == pytest.approx(7.0, abs=1e-6)  # the water itself is still reported


# ------------------------------------------------------------------------ errors and rows


def test_bad_rows_are_reported_by_spreadsheet_row_and_the_rest_compute():
    text = ("Sample,pH,Temp,Alk,PO4-P,NH4-N,Ca\n"
            "ok1,7.2,15,100,0.1,0.2,20\n"
            "nopH,,15,100,0.1,0.2,20\n"
            "\n"                                   # a blank line: skipped, still counted
            "dl,7.0,15,100,<0.01,0.2,20\n"
            "hot,7.0,140,100,0.1,0.2,20\n"
            "ok2,8.0,15,120,0.1,0.2,20\n")
    out = run_rows(text, MAPPING)
    bad = {e["row"]: (e["sample"], e["message"]) for e in out["errors"]}
    assert set(bad) == {3, 5, 6}
    assert bad[3] == ("nopH", "pH is missing")
    assert bad[5][0] == "dl" and "'<0.01' is not a number" in bad[5][1]
    # the scenario's own message for the temperature (its wording is the scenario reader's)
    assert bad[6][0] == "hot" and "temperature" in bad[6][1].lower() and "100" in bad[6][1]
    good = [r for r in out["rows"] if not r["error"]]
    assert [(r["row"], r["sample"]) for r in good] == [(2, "ok1"), (7, "ok2")]


def test_chunks_concatenate_to_the_whole_run():
    text = generated_csv(30, seed=5)
    whole = run_rows(text, MAPPING)
    pieces = [batch_chunk({"csv": text, "mapping": MAPPING, "start": i, "stop": i + 7}) for i in range(0, 30, 7)]
    assert "".join(p["csv"] for p in pieces) == whole["csv"]
    # The page sends slices (header + its own lines) with row_offset instead of the whole text.
    lines = text.splitlines()
    sliced = [batch_chunk({"csv": "\n".join([lines[0]] + lines[1 + i:1 + i + 7]), "mapping": MAPPING,
                           "row_offset": i, "max_rows": 2}) for i in range(0, 30, 7)]
    assert "".join(p["csv"] for p in sliced) == whole["csv"]
    assert all(len(p["rows"]) == 2 for p in sliced)
    full = batch_csv(text, MAPPING, digits=None)
    parsed = list(csv.DictReader(io.StringIO(full)))
    assert len(parsed) == 30
    assert [float(r["pH"]) for r in parsed] == [r["pH"] for r in whole["rows"]]  # repr round-trips


def test_compute_records_takes_dataframe_cells():
    # Numbers and NaN (a blank cell as a dataframe holds it) as well as text.
    out = compute_records(["id", "pH", "Alk"], [("a", 7.5, 100.0), ("b", 7.5, math.nan), ("c", "7,5", "100")],
                          {"id": "id", "pH": "pH", "alkalinity": {"column": "Alk", "unit": "mg/L as CaCO3"}},
                          row_numbers=[10, 11, 12], decimal=",")
    assert [e["row"] for e in out["errors"]] == [11]
    a, c = out["rows"][0], out["rows"][2]
    assert {k: v for k, v in a.items() if k not in ("row", "sample")} == \
        {k: v for k, v in c.items() if k not in ("row", "sample")}


# ----------------------------------------------------------------------------- rounding


def test_rounding_by_column_kind():
    text = generated_csv(5, seed=9)
    whole = run_rows(text, MAPPING)
    rounded = list(csv.DictReader(io.StringIO(batch_csv(text, MAPPING))))  # default: 4 significant digits
    full = list(csv.DictReader(io.StringIO(batch_csv(text, MAPPING, digits=0))))
    six = list(csv.DictReader(io.StringIO(batch_csv(text, MAPPING, digits={"quantity": 6, "pH": 2}))))
    for row, r4, rf, r6 in zip(whole["rows"], rounded, full, six):
        assert float(rf["ionic_strength_M"]) == row["ionic_strength_M"]
        assert r4["ionic_strength_M"] == repr(float(f"{row['ionic_strength_M']:.4g}"))
        assert float(r4["phosphate_H2PO4_mol_per_L"]) == float(f"{row['phosphate_H2PO4_mol_per_L']:.4g}")
        assert float(r6["DIC_mg_per_L_as_C"]) == float(f"{row['DIC_mg_per_L_as_C']:.6g}")
        assert float(r4["pH"]) == round(row["pH"], 3) and float(r6["pH"]) == round(row["pH"], 2)
        assert float(r4["temperature_C"]) == round(row["temperature_C"], 2)
        assert r6["temperature_C"] == repr(row["temperature_C"]).removesuffix(".0") or \
            float(r6["temperature_C"]) == row["temperature_C"]  # kinds not named stay in full
        assert r4["row"] == rf["row"] and r4["sample"] == rf["sample"]
    with pytest.raises(InputError) as err:
        batch_csv(text, MAPPING, digits=40)
    assert err.value.field == "digits"


# ---------------------------------------------------------------- processes, command line


def test_processes_give_the_same_text_in_input_order():
    text = generated_csv(120, seed=13).replace("S00007,", "S00007bad,x", 1)
    one = batch_csv(text, MAPPING, jobs=1)
    assert batch_csv(text, MAPPING, jobs=2) == one
    assert [r[1] for r in csv.reader(io.StringIO(one))][1:] == [f"S{i:05d}" if i != 7 else "S00007bad"
                                                                 for i in range(120)]


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "acidscape", "batch", *args], cwd=cwd, capture_output=True,
                          text=True, timeout=300)


def test_command_line_batch(tmp_path):
    text = generated_csv(40, seed=17).replace("S00003,", "S00003,,", 1).replace(",,", ",", 1)
    lines = text.splitlines()
    lines[4] = lines[4].split(",", 1)[0] + ",," + ",".join(lines[4].split(",")[2:])  # S00003: blank pH
    text = "\n".join(lines) + "\n"
    (tmp_path / "in.csv").write_text(semicolon_form(text), encoding="utf-8")
    (tmp_path / "map.json").write_text(json.dumps(MAPPING))
    one = _cli("in.csv", "--mapping", "map.json", "--out", "one.csv", cwd=tmp_path)
    assert one.returncode == 0, one.stderr
    assert "40 samples" in one.stderr and "rows 5" in one.stderr and "row 5 (S00003; east): pH is missing" in one.stderr
    two = _cli("in.csv", "--mapping", "map.json", "--jobs", "2", "--out", "two.csv", cwd=tmp_path)
    assert two.returncode == 0, two.stderr
    assert (tmp_path / "two.csv").read_bytes() == (tmp_path / "one.csv").read_bytes()
    every = _cli("in.csv", "--mapping", "map.json", "--jobs", "--out", "every.csv", cwd=tmp_path)  # one per core
    assert every.returncode == 0, every.stderr
    assert (tmp_path / "every.csv").read_bytes() == (tmp_path / "one.csv").read_bytes()
    want = batch_csv(semicolon_form(text), MAPPING)
    assert (tmp_path / "one.csv").read_text(encoding="utf-8") == want
    full = _cli("in.csv", "--mapping", "map.json", "--digits", "0", cwd=tmp_path)
    assert full.stdout == batch_csv(semicolon_form(text), MAPPING, digits=0)
    bad = _cli("in.csv", "--mapping", "nope.json", cwd=tmp_path)
    assert bad.returncode == 2 and bad.stderr.lower().startswith("error [--mapping]: cannot read")
    (tmp_path / "bad.json").write_text(json.dumps({"pH": "PH"}))
    bad = _cli("in.csv", "--mapping", "bad.json", cwd=tmp_path)
    assert bad.returncode == 2 and "error [mapping.pH]" in bad.stderr
    tpl = _cli("--template", cwd=tmp_path)
    assert tpl.returncode == 0 and tpl.stdout == template_csv()


# ------------------------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    "text, mapping, field, words",
    [
        ("", {"pH": "pH"}, "csv", "empty"),
        ("pH\n7\n", {"pH": "PH"}, "mapping.pH", "no column 'PH'"),
        ("pH\n7\n", {}, "mapping.pH", "name the pH column"),
        ("pH\n7\n", {"pH": "pH", "systems": [{"id": "unobtainium", "column": "pH"}]}, "mapping.systems[0].id",
         "not in the library"),
        ("pH\n7\n", {"pH": "pH", "systems": [{"id": "carbonate", "column": "pH", "unit": "furlongs"}]},
         "mapping.systems[0].unit", "does not fit carbonate"),
        ("pH\n7\n", {"pH": "pH", "alkalinity": {"column": "pH", "unit": "ppm"}}, "mapping.alkalinity.unit",
         "must be one of"),
        ("pH\n7\n", {"pH": "pH", "mode": "guess"}, "mapping.mode", "must be one of"),
        ("pH\n7\n", {"pH": "pH", "alkalnity": {}}, "mapping.alkalnity", "unknown key"),
        ("pH\n7\n", {"pH": "pH", "decimal": ";"}, "mapping.decimal", "decimal must be"),
        ("pH\n7\n", {"pH": "pH", "ions": [{"id": "Ca+2", "column": "pH", "blank": "maybe"}]},
         "mapping.ions[0].blank", "must be one of"),
        ("pH\n7\n", {"pH": "pH", "conductivity": {"column": "pH", "unit": "S/m"}}, "mapping.conductivity.unit",
         "must be one of"),
    ],
)
def test_bad_mapping_is_an_input_error_naming_the_field(text, mapping, field, words):
    with pytest.raises(InputError) as err:
        run_rows(text, mapping)
    assert err.value.field == field and words.lower() in err.value.message.lower()


def test_api_handle_reports_errors_as_json():
    reply = json.loads(dispatch.handle("batch_chunk", json.dumps({"csv": "pH\n7\n", "mapping": {"pH": "nope"}})))
    assert reply["ok"] is False and reply["error"]["field"] == "mapping.pH"
    ok = json.loads(dispatch.handle("batch_chunk", json.dumps({"csv": "pH\n7\n", "header_only": True})))
    assert ok["result"]["columns"] == ["pH"]
