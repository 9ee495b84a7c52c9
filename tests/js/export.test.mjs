// Unit tests of site/export.js (no DOM): CSV cells and the report's inputs in words.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { csvCell, describeInputs, keyWords } from "../../site/export.js";

const PRESETS = JSON.parse(readFileSync(new URL("../../site/presets.json", import.meta.url), "utf8")).presets;

test("state keys become words with the unit they carry", () => {
  assert.deepEqual(keyWords("temperature_C"), { label: "Temperature", unit: "°C" });
  assert.deepEqual(keyWords("target_pH"), { label: "Target pH", unit: "" });
  assert.deepEqual(keyWords("density_kg_per_L"), { label: "Density", unit: "kg/L" });
  assert.deepEqual(keyWords("alkalinity_mg_per_L_as_CaCO3"), { label: "Alkalinity", unit: "mg/L as CaCO₃" });
  assert.deepEqual(keyWords("target_LSI"), { label: "Target LSI", unit: "" });
});

test("the report's inputs are words and units, never key paths", () => {
  const state = structuredClone(PRESETS.find((p) => p.id === "upland-reservoir").state);
  state.treatment = {
    titration: { titrant: "H2SO4", titrant_M: null, titrant_N: 0.02, sample_mL: 100, to_pH: null, axis: "volume" },
    dose: { chemical: "NaOH", product: "naoh-50", target_pH: 8, strength_pct: 50, density_kg_per_L: 1.525, flow: 2.5, flow_unit: "MGD" },
    buffer: { from_pH: 7, to_pH: 4.5, log_scale: true },
  };
  state.scale = { target_LSI: 0.2, steps: [{ chemical: "NaOH", dose_mg_per_L: 3 }] };
  const names = { "chemical:NaOH": "NaOH: Sodium hydroxide", "product:naoh-50": "Caustic soda solution 50 %", "flow-unit:MGD": "MGD (million US gal/d)" };
  const groups = describeInputs(state, (kind, id) => names[`${kind}:${id}`] ?? null);
  const rows = Object.fromEntries(groups.flatMap((g) => g.rows.map(([k, v]) => [`${g.title}/${k}`, v])));
  assert.equal(groups[0].title, "The water");
  assert.equal(rows["The water/Temperature"], "7 °C");
  assert.equal(rows["The water/Total alkalinity"], "12 mg/L as CaCO3");
  assert.equal(rows["The water/Measured pH"], "6.6");
  assert.equal(rows["The water/Calcium"], "3.5 mg/L");
  assert.equal(rows["The water/Activity model"], "Davies equation");
  assert.equal(rows["Titration/Titrant normality"], "0.02 eq/L");
  assert.equal(rows["Dose to a target pH/Product"], "Caustic soda solution 50 %");
  assert.equal(rows["Dose to a target pH/Plant flow"], "2.5 MGD (million US gal/d)");
  assert.equal(rows["Buffer intensity/Buffer capacity between"], "pH 7 and pH 4.5");
  assert.equal(rows["Scale/Target LSI"], "0.2");
  assert.equal(rows["Scale/Steps 1, dose"], "3 mg/L");
  for (const [key, value] of Object.entries(rows)) {
    assert.doesNotMatch(key + value, /temperature_C|measured\.|_kg_per_L|_pct|scenario\./, key);
  }
});

test("CSV cells are quoted and guarded against formulas", () => {
  assert.equal(csvCell('a,"b"'), '"a,""b"""');
  assert.equal(csvCell("=1+1"), "'=1+1");
  assert.equal(csvCell(-3.5), "-3.5");
});
