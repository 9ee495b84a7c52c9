"""Batch of CSV samples: each row agrees with acidscape.boundary.api.solve / dose run on its own scenario.

The oracle is the core's single-water entry point (``acidscape.boundary.api.solve``), which the other
test files check against published tables; here we check the CSV reading, the column mapping,
unit handling, row numbering and error reporting around it. Sample values are generated, not
taken from any real plant.
"""

from __future__ import annotations

import csv
import io
import random

import pytest

from acidscape.boundary import api
from acidscape.boundary.batch import batch_chunk, batch_csv, read_header, run_rows
from acidscape.errors import InputError

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
        conc = {(s["system"], s["name"]): s["concentration_M"] for s in want["species"]}
        assert row["phosphate:HPO4-2_M"] == conc[("phosphate", "HPO4-2")]
        assert row["ammonium:NH3_M"] == conc[("ammonium", "NH3")]
        # The measured pH is reproduced (the inferred water is electroneutral at it).
        assert row["pH"] == pytest.approx(float(cells["pH"]), abs=1e-6)


def test_alkalinity_reported_back_is_the_lab_value():
    # Fixed end point pH 4.5 total alkalinity (Standard Methods 2320 B, common practice): the
    # water inferred from pH + alkalinity must titrate back to the number the lab wrote down.
    out = run_rows(generated_csv(10, seed=3), MAPPING)
    for cells, row in zip(csv.DictReader(io.StringIO(generated_csv(10, seed=3))), out["rows"]):
        assert row["alkalinity_mg_per_L_as_CaCO3"] == pytest.approx(float(cells["Alk"]), rel=1e-9)


def test_fahrenheit_and_blank_temperature():
    # 59 °F = 15 °C and 77 °F = 25 °C (the Fahrenheit definition, common practice).
    text = "id,pH,T\na,7,59\nb,7,77\nc,7,\n"
    m = {"id": "id", "pH": "pH", "temperature": {"column": "T", "unit": "F", "default_C": 10}}
    rows = run_rows(text, m)["rows"]
    assert [r["temperature_C"] for r in rows] == pytest.approx([15.0, 25.0, 10.0], abs=1e-12)


def test_speciation_at_measured_pH_and_equilibrium_modes():
    text = "id,pH,CT\na,8.1,2\n"
    systems = [{"id": "carbonate", "column": "CT", "unit": "mmol/L"}]
    fixed = run_rows(text, {"pH": "pH", "systems": systems})["rows"][0]
    want = api.solve({"temperature_C": 25.0, "activity": "davies", "pH": 8.1,
                      "systems": [{"id": "carbonate", "total": 2.0, "unit": "mmol/L"}]})
    assert fixed["pH"] == want["pH"] == 8.1
    assert fixed["carbonate:HCO3-_M"] == [s for s in want["species"] if s["name"] == "HCO3-"][0]["concentration_M"]
    # DIC in mg/L as C from the carbonate total: 2 mmol/L x 12.011 g/mol (IUPAC atomic weight).
    assert fixed["DIC_mg_per_L_as_C"] == pytest.approx(24.022, rel=1e-12)
    eq = run_rows(text, {"mode": "equilibrium", "systems": systems})["rows"][0]
    want_eq = api.solve({"temperature_C": 25.0, "activity": "davies",
                         "systems": [{"id": "carbonate", "total": 2.0, "unit": "mmol/L"}]})
    assert eq["pH"] == want_eq["pH"] and eq["pH_measured"] is None


def test_dose_columns_equal_api_dose():
    text = generated_csv(4, seed=11)
    mapping = {**MAPPING, "dose": {"chemical": "NaOH", "target_pH": 9.6}}
    out = run_rows(text, mapping)
    for cells, row in zip(csv.DictReader(io.StringIO(text)), out["rows"]):
        d = api.dose({"scenario": scenario_of(cells), "chemical": "NaOH", "target_pH": 9.6})
        assert row["dose_NaOH_mg_per_L"] == d["dose_mg_per_L"]
        assert row["pH_after_dose"] == pytest.approx(9.6, abs=1e-6)


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
    assert bad[3] == ("nopH", "pH is empty")
    assert bad[5][0] == "dl" and "'<0.01' is not a number" in bad[5][1]
    assert bad[6][0] == "hot" and "temperature_C" in bad[6][1] and "100" in bad[6][1]
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
                           "row_offset": i}) for i in range(0, 30, 7)]
    assert "".join(p["csv"] for p in sliced) == whole["csv"]
    full = batch_csv(text, MAPPING)
    parsed = list(csv.DictReader(io.StringIO(full)))
    assert len(parsed) == 30
    assert [float(r["pH"]) for r in parsed] == [r["pH"] for r in whole["rows"]]  # repr round-trips


def test_header_guess_and_delimiters():
    h = read_header("Sample ID;pH;Temperature (°F);Alkalinity meq/L\nA;7;50;2\n")
    assert h["delimiter"] == ";" and h["rows"] == 1
    g = h["guess"]
    assert g["id"] == "Sample ID" and g["pH"] == "pH"
    assert g["temperature"] == {"column": "Temperature (°F)", "unit": "F"}
    assert g["alkalinity"] == {"column": "Alkalinity meq/L", "unit": "meq/L"}
    tab = run_rows("id\tpH\nx\t7.5\n", {"id": "id", "pH": "pH", "delimiter": "\t"})
    assert tab["rows"][0]["pH"] == 7.5


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
    ],
)
def test_bad_mapping_is_an_input_error_naming_the_field(text, mapping, field, words):
    with pytest.raises(InputError) as err:
        run_rows(text, mapping)
    assert err.value.field == field and words in err.value.message


def test_api_handle_reports_errors_as_json():
    import json

    reply = json.loads(api.handle("batch_chunk", json.dumps({"csv": "pH\n7\n", "mapping": {"pH": "nope"}})))
    assert reply["ok"] is False and reply["error"]["field"] == "mapping.pH"
    ok = json.loads(api.handle("batch_chunk", json.dumps({"csv": "pH\n7\n", "header_only": True})))
    assert ok["result"]["columns"] == ["pH"]
