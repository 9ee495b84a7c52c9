// Unit tests of site/catalogues.js (no DOM): the page's unit tables are filled from the core's
// catalogue (acidscape.boundary.catalogues), asked of the core itself (the venv's Python), so the
// checks follow the core rather than a copy of it.
// Run: node --test tests/js/   (tests/test_js_units.py runs it under pytest).
import { test } from "node:test";
import assert from "node:assert/strict";
import { execFileSync } from "node:child_process";
import { existsSync } from "node:fs";
import {
  DISPLAY_UNITS, FLOW_UNITS, MASS_SCALE, MOLAR_SCALE, catalogues, choices, molarMass, setCatalogues,
} from "../../site/catalogues.js";

// The core's own answer (the venv's Python), so these tests follow the core, not a copy of it.
const python = existsSync(".venv/bin/python") ? ".venv/bin/python" : "python3";
const core = JSON.parse(execFileSync(python, ["-c",
  "from acidscape.boundary.dispatch import handle; print(handle('catalogues', '{}'))"],
  { encoding: "utf8", env: { ...process.env, PYTHONPATH: "pycore" } })).result;

test("before the core answers, the tables are empty and nothing is invented", () => {
  assert.equal(catalogues(), null);
  assert.deepEqual(DISPLAY_UNITS, []);
  assert.deepEqual(FLOW_UNITS, []);
  assert.equal(molarMass("CO2"), null);
});

test("the tables are filled in place from the core's catalogue", () => {
  setCatalogues(core);
  assert.deepEqual(DISPLAY_UNITS, core.display_units.map((u) => u.value));
  assert.deepEqual(FLOW_UNITS, core.flow_units.map((u) => [u.value, u.label]));
  // SI prefixes (BIPM SI Brochure 2019): shown per mol/L is 1, 1e3, 1e6; per g/L 1e3, 1e6
  assert.deepEqual(MOLAR_SCALE, { "mol/L": 1, "mmol/L": 1000, "umol/L": 1000000 });
  assert.deepEqual(MASS_SCALE, { "mg/L": 1000, "ug/L": 1000000, "mg/L as basis": 1000 });
  assert.equal(molarMass("CO2"), core.molar_masses_g_per_mol.CO2);
  assert.equal(molarMass("no-such-chemical"), null);
});

test("choices give the core's words and defaults", () => {
  setCatalogues(core);
  const activity = choices("activity_models");
  assert.deepEqual(activity.options, core.activity_models.map((m) => [m.value, m.label]));
  assert.equal(activity.preferred, core.default_activity);
  assert.equal(choices("display_units").preferred, core.default_display_unit);
  assert.equal(choices("temperature_units").preferred, core.temperature_units[0].value);
});

test("a second catalogue replaces the first (no stale unit is left)", () => {
  setCatalogues({ ...core, display_units: core.display_units.filter((u) => u.value !== "umol/L") });
  assert.ok(!DISPLAY_UNITS.includes("umol/L"));
  assert.ok(!("umol/L" in MOLAR_SCALE));
  setCatalogues(core);
  assert.ok("umol/L" in MOLAR_SCALE);
});
