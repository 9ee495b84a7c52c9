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
  // the scale and softening jobs' inputs as site/scale.js and softening.js write them
  state.scale = {
    ccpp_temperatures_C: [5, 60], CO2_partial_pressure_atm: 0.00042,
    dose: { chemical: "Ca(OH)2", target_CCPP: 4, flow: 9500, flow_unit: "m3/d" },
    steps: [{ chemical: "NaOH", dose_mg_per_L: 3 }, { chemical: "CO2", target_LSI: 0.2 }],
    blend: { other: "hard-well-scale", fractions: [0.6, 0.4] },
  };
  state.softening = {
    remove_magnesium: true, softening_pH: null, lime_mg_per_L: 180, soda_ash_mg_per_L: null,
    target_hardness_mg_per_L_as_CaCO3: 90, excess_lime_meq_per_L: null, flow: 25000, flow_unit: "m3/d",
    recarbonation: { target_pH: 8.6 },
  };
  state.workbench = { job: "scale" };
  const names = { "chemical:NaOH": "NaOH: Sodium hydroxide", "product:naoh-50": "Caustic soda solution 50 %", "flow-unit:MGD": "MGD (million US gal/d)",
    "flow-unit:m3/d": "m³/d", "dose-chemical:Ca(OH)2": "Ca(OH)₂: calcium hydroxide", "dose-chemical:NaOH": "NaOH: sodium hydroxide",
    "dose-chemical:CO2": "CO₂: carbon dioxide", "example:hard-well-scale": "Hard well water" };
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
  assert.equal(groups[1].title, "Job in view");
  assert.equal(rows["Job in view/Job"], "Scale and corrosion (calcium carbonate: scaling or corrosive)");
  const scale = "Scale and corrosion: ";
  assert.equal(rows[`${scale}calcium carbonate indices/CCPP also at`], "5, 60 °C");
  assert.equal(rows[`${scale}calcium carbonate indices/CCPP also open to CO₂ at a partial pressure of`], "0.00042 atm");
  assert.equal(rows[`${scale}condition to a target LSI or CCPP/Chemical`], "Ca(OH)₂: calcium hydroxide");
  assert.equal(rows[`${scale}condition to a target LSI or CCPP/Target`], "a CCPP of 4 mg/L as CaCO₃");
  assert.equal(rows[`${scale}condition to a target LSI or CCPP/Plant flow`], "9500 m³/d");
  assert.equal(rows[`${scale}chemicals in sequence/Step 1`], "NaOH: sodium hydroxide, a fixed dose of 3 mg/L");
  assert.equal(rows[`${scale}chemicals in sequence/Step 2`], "CO₂: carbon dioxide, to an LSI of 0.2");
  assert.equal(rows[`${scale}blend with another water/The other water`], "Hard well water");
  assert.equal(rows[`${scale}blend with another water/Flow fractions`], "0.6 of the water above, 0.4 of the other water");
  assert.equal(rows["Softening/Remove"], "calcium and magnesium");
  assert.equal(rows["Softening/Lime dose"], "180 mg/L as Ca(OH)₂");
  assert.equal(rows["Softening/Soda ash to a total hardness of"], "90 mg/L as CaCO₃");
  assert.equal(rows["Softening/Plant flow"], "25000 m³/d");
  assert.equal(rows["Softening/Recarbonation"], "with CO₂ to pH 8.6");
  assert.equal(rows["Softening/Softening pH"], undefined); // a lime dose given: no pH
  state.softening.lime_mg_per_L = null;
  const noLime = describeInputs(state).find((g) => g.title === "Softening").rows;
  assert.deepEqual(noLime.find(([k]) => k === "Softening pH"), ["Softening pH", "not given: the usual 11.0 with magnesium removal"]);
  for (const [key, value] of Object.entries(rows)) {
    assert.doesNotMatch(key + value, /temperature_C|measured\.|_kg_per_L|_pct|scenario\.|_mg_per_L|_atm|target_|null|undefined/, key);
  }
});

test("CSV cells are quoted and guarded against formulas", () => {
  assert.equal(csvCell('a,"b"'), '"a,""b"""');
  assert.equal(csvCell("=1+1"), "'=1+1");
  assert.equal(csvCell(-3.5), "-3.5");
});
