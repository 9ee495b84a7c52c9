"""Product presets (data/products.csv) and the end-point alkalinity of a titration.

Densities are spot-checked against the printed tables they cite (values recalled from the
tables, so "from memory"); the lime slurry density is recomputed from the solid's density and
the density of water from IAPWS-95 (the ``iapws`` reference library).
"""

import json

import pytest
from iapws import IAPWS95

from acidscape.boundary import api
from acidscape.boundary.dispatch import handle
from acidscape.data import library
from acidscape.operations.dosing import chemicals

PRODUCTS = {p["id"]: p for p in api.products()["products"]}


def test_every_product_names_a_known_chemical_and_a_cited_source():
    refs = library.sources()
    for p in PRODUCTS.values():
        assert p["chemical"] in chemicals()
        assert p["source_key"] in refs and p["source"] == refs[p["source_key"]].text
        assert "from memory" in p["provenance"]  # every density here was recalled, and says so
        assert p["name"] and "source" not in p["name"].lower()  # the source is not in the label


@pytest.mark.parametrize("pid, density, tol, where", [
    # CRC Handbook 97th ed., section 5, "Concentrative properties of aqueous solutions", 20 °C (from memory)
    ("naoh-50", 1.5253, 0.001, "CRC NaOH table, 50 %"),
    ("hcl-32", 1.1593, 0.001, "CRC HCl table, 32 %"),
    ("h2so4-98", 1.8361, 0.001, "CRC H2SO4 table, 98 %"),
    ("na2co3-10", 1.1029, 0.001, "CRC Na2CO3 table, 10 %"),
    ("h3po4-75", 1.579, 0.002, "CRC H3PO4 table, 75 %"),
    # interpolations between two printed rows, each recomputed here from those rows
    ("naoh-25", 1.2629 + (1.3064 - 1.2629) * (25 - 24) / (28 - 24), 0.001, "CRC NaOH table, 24 % and 28 %"),
    ("h2so4-93", (1.8240 + 1.8312) / 2, 0.001, "CRC H2SO4 table, 92 % and 94 %"),
])
def test_densities_against_the_printed_tables(pid, density, tol, where):
    assert PRODUCTS[pid]["density_kg_per_L"] == pytest.approx(density, abs=tol), where


def test_lime_slurry_density_from_the_solid_and_water_densities():
    # Ca(OH)2 solid 2.24 g/cm3 (CRC section 4, from memory); water at 20 °C from IAPWS-95.
    water = IAPWS95(T=293.15, P=0.101325).rho / 1000.0
    w = PRODUCTS["lime-10"]["strength_pct"] / 100.0
    assert PRODUCTS["lime-10"]["density_kg_per_L"] == pytest.approx(1.0 / ((1 - w) / water + w / 2.24), abs=0.001)


def test_the_page_gets_the_catalogue_through_its_entry():
    out = json.loads(handle("products", "{}"))
    assert out["ok"] and {p["id"] for p in out["result"]["products"]} == set(PRODUCTS)
    # the presets the page offers, by chemical (a trade expectation: the usual strengths)
    have = {(p["chemical"], p["strength_pct"]) for p in PRODUCTS.values()}
    for pair in [("NaOH", 50), ("NaOH", 25), ("H2SO4", 93), ("HCl", 32), ("NaOCl", 12.5), ("H3PO4", 75),
                 ("Na2CO3", 10), ("Ca(OH)2", 10)]:
        assert pair in have


def test_a_bad_product_row_names_the_file_and_line(tmp_path, monkeypatch):
    bad = tmp_path / "products.csv"
    bad.write_text("id,chemical,name,strength_pct,density_kg_per_L,temperature_C,source,provenance,note\n"
                   "x,NaOH,X,50,1.5,20,NOPE,from memory,\n")
    monkeypatch.setattr(api, "_product_rows", api._product_rows.__wrapped__)
    import importlib.resources as res

    class Dir:
        def __truediv__(self, name):
            return bad if name == "products.csv" else self
    monkeypatch.setattr(res, "files", lambda pkg: Dir())
    with pytest.raises(library.LibraryDataError, match="(?i)products.csv line 2: source 'NOPE'"):
        api.products()


def test_end_point_alkalinity_is_standard_methods_2320_formula():
    # Standard Methods 2320 B: alkalinity [mg/L as CaCO3] = A [mL] x N [eq/L] x 50 000 / sample [mL].
    # 1 mmol/L NaHCO3 (about 50 mg/L as CaCO3), titrated with 0.02 N HCl in 100 mL.
    scenario = {"activity": "ideal", "systems": [{"id": "carbonate", "total": 1e-3}],
                "ions": [{"id": "sodium", "total": 1e-3}]}
    out = api.titrate({"scenario": scenario, "titrant": "HCl", "titrant_M": 0.02, "sample_mL": 100, "to_pH": 4.0})
    assert out["titrant"]["normality_eq_per_L"] == pytest.approx(0.02)
    ends = {round(p["pH"], 1): p for p in out["fixed_end_points"]}
    total = ends[4.5]
    assert total["measures"] == "alkalinity"
    assert total["as_CaCO3_mg_per_L"] == pytest.approx(total["titrant_mL"] * 0.02 * 50044 / 100, rel=1e-3)
    # the pH 4.5 end point overshoots the bicarbonate by the free H+ at pH 4.5 (3.2e-5 mol/L): ~51.6 mg/L
    assert 50.0 < total["as_CaCO3_mg_per_L"] < 52.5
    # H2SO4 brings two equivalents per mole: half the molarity gives the same alkalinity
    out2 = api.titrate({"scenario": scenario, "titrant": "H2SO4", "titrant_M": 0.01, "sample_mL": 100, "to_pH": 4.0})
    t2 = {round(p["pH"], 1): p for p in out2["fixed_end_points"]}[4.5]
    assert out2["titrant"]["normality_eq_per_L"] == pytest.approx(0.02)
    assert t2["as_CaCO3_mg_per_L"] == pytest.approx(total["as_CaCO3_mg_per_L"], rel=2e-3)


def test_a_base_titration_measures_acidity():
    scenario = {"activity": "ideal", "systems": [{"id": "carbonate", "total": 1e-3}], "pH": 5.0}
    out = api.titrate({"scenario": scenario, "titrant": "NaOH", "titrant_M": 0.02, "sample_mL": 100, "to_pH": 9})
    p = next(p for p in out["fixed_end_points"] if abs(p["pH"] - 8.3) < 1e-9)
    assert p["measures"] == "acidity"
    assert p["as_CaCO3_mg_per_L"] == pytest.approx(p["titrant_mL"] * 0.02 * 50044 / 100, rel=1e-3)
