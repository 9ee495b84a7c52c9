// The water the page opens with and the curve grid the water job asks for: read by water.js
// (the first request the page makes) and, at build time, by build_scripts/snapshot.mjs, which
// answers that request once before the Python heap is saved, so the first answer after a boot
// from the snapshot finds its tableau and compiled code in memory. This module imports nothing
// and touches no DOM (Node imports it too).
//
// The starting water is invented (not a real sample): a moderately hard, bicarbonate water of
// 2.5 mmol/L carbonate, 1 mmol/L calcium, 0.3 mmol/L magnesium, 0.6 mmol/L sodium and
// 0.8 mmol/L chloride at 25 °C, so that the headline shows the calcium carbonate indices too.
// Rows as the water editor holds them (texts, as typed).
export const START_WATER = {
  systems: [{ id: "carbonate", total: "2.5", unit: "mmol/L", name: "", pka: "", charge: "0" }],
  ions: [
    { id: "calcium", total: "1", unit: "mmol/L", name: "", charge: "2", mass: "" },
    { id: "magnesium", total: "0.3", unit: "mmol/L", name: "", charge: "2", mass: "" },
    { id: "sodium", total: "0.6", unit: "mmol/L", name: "", charge: "1", mass: "" },
    { id: "chloride", total: "0.8", unit: "mmol/L", name: "", charge: "-1", mass: "" },
  ],
};

// The conditions the water's inputs start with, as the page sends them (index.html's temperature
// field and activity choice), and what water.js puts back when a link's value cannot be used:
// the build's request must be the page's to the letter, since the answer it keeps is found by
// its parameters (tests/e2e/test_boot_snapshot.py compares them).
export const START_CONDITIONS = { temperature_C: 25, activity: "davies" };

// The pH grid of the water's curves (fraction and log-concentration plots).
export const WATER_CURVE = { pH_min: 0, pH_max: 14, points: 281 };
