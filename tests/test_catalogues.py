"""The core's catalogues for the page (acidscape.boundary.catalogues) agree with the tables the
core computes with: data/units.py conversions, operations/dosing.FLOW_UNITS, the activity models,
the chemicals' molar masses.

Outside references: the SI prefixes (milli = 1e-3, micro = 1e-6; BIPM SI Brochure, 9th ed.
2019), the US gallon = 3.785411784 L exactly (NIST SP 811, from memory), and the molar mass of
CO2 from the IUPAC 2021 standard atomic weights (C 12.011, O 15.999).
"""

from __future__ import annotations

import json
import math

import pytest

from acidscape.boundary.catalogues import catalogues
from acidscape.boundary.dispatch import handle
from acidscape.data import library, units
from acidscape.operations.dosing import FLOW_UNITS, chemicals, flow_L_per_d
from acidscape.science.activity import MODELS


@pytest.fixture(scope="module")
def cat():
    reply = json.loads(handle("catalogues", "{}"))
    assert reply["ok"]
    return reply["result"]


def test_handle_answers_the_same_catalogue_as_the_module(cat):
    assert cat == catalogues()


def test_molar_display_units_are_the_SI_prefixes(cat):
    # BIPM SI Brochure (2019): milli 1e-3, micro 1e-6
    molar = {u["value"]: u["mol_per_L"] for u in cat["display_units"] if u["kind"] == "molar"}
    assert molar == {"mol/L": 1.0, "mmol/L": 1e-3, "umol/L": 1e-6}


@pytest.mark.parametrize("unit", ["mol/L", "mmol/L", "umol/L", "mg/L", "ug/L"])
def test_display_scales_agree_with_units_py_for_every_library_system(cat, unit):
    """A species amount c [mol/L] shown in ``unit`` with the catalogue's factor equals
    units.from_molar for every system of the library that has a mass basis."""
    entry = next(u for u in cat["display_units"] if u["value"] == unit)
    c = 2.5e-4
    for system in library.systems().values():
        if unit.startswith(("mg", "ug")) and not system.mass_basis_g_per_mol:
            continue
        expected = units.from_molar(c, unit, system)
        if entry["kind"] == "molar":
            shown = c / entry["mol_per_L"]
        else:
            shown = c * system.mass_basis_g_per_mol / entry["g_per_L"]
        assert math.isclose(shown, expected, rel_tol=1e-14), (system.id, unit)


def test_mass_as_basis_scale_agrees_with_units_py(cat):
    entry = next(u for u in cat["display_units"] if u["value"] == "mg/L as basis")
    c = 7.1e-5
    checked = 0
    for system in library.systems().values():
        if not (system.as_formula and system.as_g_per_mol):
            continue
        expected = units.from_molar(c, f"mg/L as {system.as_formula}", system)
        assert math.isclose(c * system.as_g_per_mol / entry["g_per_L"], expected, rel_tol=1e-14), system.id
        checked += 1
    assert checked >= 3  # N, P, C... bases of the library


def test_flow_units_are_the_dosing_tables_factors(cat):
    listed = {u["value"]: u["L_per_d"] for u in cat["flow_units"]}
    assert listed == FLOW_UNITS
    for unit, factor in listed.items():
        assert flow_L_per_d(1.0, unit) == factor
    # NIST SP 811 (from memory): 1 US gal = 3.785411784 L; MGD = 1e6 gal/d
    assert math.isclose(listed["MGD"], 3.785411784e6, rel_tol=1e-15)
    assert math.isclose(listed["m3/h"], 24 * 1000.0, rel_tol=1e-15)


def test_activity_models_are_the_cores_and_the_default_is_a_scenarios(cat):
    assert [m["value"] for m in cat["activity_models"]] == list(MODELS)
    assert all(m["label"] for m in cat["activity_models"])
    assert cat["default_activity"] in MODELS
    assert cat["default_display_unit"] in [u["value"] for u in cat["display_units"]]


def test_molar_masses_are_the_chemicals_and_CO2_matches_IUPAC(cat):
    masses = cat["molar_masses_g_per_mol"]
    assert masses == {c.id: c.molar_mass_g_per_mol for c in chemicals().values()}
    # IUPAC 2021 standard atomic weights: C 12.011, O 15.999 -> CO2 44.009 g/mol
    assert math.isclose(masses["CO2"], 12.011 + 2 * 15.999, abs_tol=0.01)


def test_the_catalogue_cannot_be_changed_by_a_caller():
    first = catalogues()
    first["flow_units"].clear()
    assert catalogues()["flow_units"]
