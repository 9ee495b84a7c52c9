// Unit tests of site/parse.js (no DOM): decimal commas, digit groups, °F and K, lists.
// Run: node --test tests/js/   (tests/test_js_units.py runs it under pytest).
import { test } from "node:test";
import assert from "node:assert/strict";
import {
  normalizeNumberText, parseNumber, parseNumberList, parsePH, parseTemperature, phRange, setLimits, stateNumber,
} from "../../site/parse.js";

test("a decimal comma reads like a decimal point", () => {
  assert.equal(parseNumber("12,5", "x").value, 12.5);
  assert.equal(parseNumber(" 0,002 ", "x").value, 0.002);
  assert.equal(parseNumber("1,5e-3", "x").value, 1.5e-3);
  assert.equal(parseNumber("−3,25", "x").value, -3.25); // typographic minus
  assert.equal(parseNumber("12.5", "x").value, 12.5);
});

test("digit groups are read, a lone comma group is a decimal comma", () => {
  assert.equal(normalizeNumberText("1,234.5"), "1234.5");
  assert.equal(normalizeNumberText("1.234,5"), "1234.5");
  assert.equal(normalizeNumberText("1,234,567"), "1234567");
  assert.equal(normalizeNumberText("18 000"), "18000");
  assert.equal(normalizeNumberText("18\u202f000,5"), "18000.5");
  assert.equal(normalizeNumberText("1,234"), "1.234");
});

test("text that is not a number is refused with the text in the message", () => {
  for (const bad of ["seven", "1,2,3.4.5", "12,5,", "1..2", "e5", "--1"]) {
    const r = parseNumber(bad, "a pH");
    assert.ok(r.error, bad);
    assert.match(r.error, /is not a number; enter a pH\./);
    assert.equal(r.raw, bad);
  }
  assert.deepEqual(parseNumber("", "a pH", { optional: true }), { value: null });
  assert.equal(parseNumber("", "a pH").error, "Enter a pH.");
  assert.match(parseNumber("1e999", "x").error, /too large/);
});

test("temperatures in °C, °F and K (exact unit definitions)", () => {
  assert.equal(parseTemperature("25", "t").value, 25);
  assert.equal(parseTemperature("25 °C", "t").value, 25);
  // 77 °F = 25 °C and 32 °F = 0 °C: (F - 32) * 5/9, the definition of the Fahrenheit scale
  assert.equal(parseTemperature("77 °F", "t").value, 25);
  assert.equal(parseTemperature("77F", "t").value, 25);
  assert.equal(parseTemperature("32 f", "t").value, 0);
  assert.ok(Math.abs(parseTemperature("59,9 °F", "t").value - 15.5) < 1e-12);
  assert.ok(Math.abs(parseTemperature("298.15 K", "t").value - 25) < 1e-9); // 0 °C = 273.15 K (SI)
  assert.equal(parseTemperature("77 °F", "t").unit, "F");
  assert.match(parseTemperature("warm", "a temperature").error, /not a temperature/);
  assert.match(parseTemperature("25 °X", "a temperature").error, /not a temperature/);
});

test("lists: '; ' or ', ' separate values, decimal commas inside", () => {
  assert.deepEqual(parseNumberList("2.15, 7.20, 12.35").value, [2.15, 7.2, 12.35]);
  assert.deepEqual(parseNumberList("2,15; 7,20; 12,35").value, [2.15, 7.2, 12.35]);
  assert.deepEqual(parseNumberList("2,15, 7,20").value, [2.15, 7.2]);
  assert.deepEqual(parseNumberList("4.2,8.9").value, [4.2, 8.9]);
  assert.deepEqual(parseNumberList("4,76").value, [4.76]);
  assert.deepEqual(parseNumberList("1,2,3").value, [1, 2, 3]);
  assert.match(parseNumberList("4.76, abc").error, /"abc" \(value 2\) is not a number/);
  assert.match(parseNumberList("4.76;; 5").error, /Value 2 of the list is empty/);
  assert.match(parseNumberList("").error, /Enter at least one/);
});

test("state numbers: the number when the text reads as one, else the text", () => {
  assert.equal(stateNumber("12,5"), 12.5);
  assert.equal(stateNumber(""), null);
  assert.equal(stateNumber("abc"), "abc");
});

test("pH fields: decimal commas, and the one range the core gives (no copy of it here)", () => {
  setLimits(null);
  assert.equal(phRange(), null);
  // before the core has said its range, only the number is read (the core checks the range)
  assert.equal(parsePH("20", "The target pH").value, 20);
  setLimits({ pH: [0, 14], total_M: 5 });
  assert.deepEqual(phRange(), [0, 14]);
  assert.equal(parsePH("8,5", "The target pH").value, 8.5);
  assert.equal(parsePH(" 7.25 ", "The target pH").value, 7.25);
  assert.equal(parsePH("0", "The target pH").value, 0);
  assert.equal(parsePH("14", "The target pH").value, 14);
  assert.deepEqual(parsePH("", "The end pH", { optional: true }), { value: null });
  const high = parsePH("20", "The target pH");
  assert.equal(high.error, "The target pH must be from 0 to 14 (you entered 20).");
  assert.match(parsePH("−0,5", "The measured pH").error, /^The measured pH must be from 0 to 14 \(you entered -0,5\)\.$/);
  assert.match(parsePH("seven", "The target pH").error, /"seven" is not a number; enter the target pH \(from 0 to 14\)\./);
  assert.match(parsePH("", "The target pH").error, /^Enter the target pH \(from 0 to 14\)\.$/);
  assert.match(parsePH("1e999", "The target pH").error, /too large; enter the target pH/);
  // a malformed catalogue leaves the range to the core
  setLimits({ pH: ["a", 3] });
  assert.equal(phRange(), null);
  setLimits(null);
});

test("every number form a user types reads the same as the plain number", () => {
  for (const [typed, plain] of [["12,5", 12.5], ["12.5", 12.5], [" 12,50 ", 12.5], ["1 234,5", 1234.5],
    ["1.234,5", 1234.5], ["1,234.5", 1234.5], ["0,1", 0.1], [",5", 0.5], ["−12,5", -12.5], ["1,25e1", 12.5]]) {
    assert.equal(parseNumber(typed, "x").value, plain, typed);
    assert.equal(stateNumber(typed), plain, typed);
  }
  // °F with a decimal comma: 54,5 °F = (54.5 - 32) x 5/9 = 12.5 °C (definition of the Fahrenheit scale)
  assert.ok(Math.abs(parseTemperature("54,5 °F", "t").value - 12.5) < 1e-12);
  assert.ok(Math.abs(parseTemperature("54,5°F", "t").value - 12.5) < 1e-12);
  assert.ok(Math.abs(parseTemperature("54.5 deg F", "t").value - 12.5) < 1e-12);
  assert.equal(parseTemperature("12,5", "t").value, 12.5);
  assert.equal(parseTemperature("12,5 °C", "t").value, 12.5);
  assert.ok(Math.abs(parseTemperature("285,65 K", "t").value - 12.5) < 1e-9); // 0 °C = 273.15 K (SI)
});

test("inputs named in words from their path, with the core's words or without them", async () => {
  const { fieldWords, setFieldWords } = await import("../../site/parse.js");
  setFieldWords(null);
  assert.equal(fieldWords("water.scenario.temperature_C"), "the temperature");
  assert.equal(fieldWords("treatment.dose.density_kg_per_L"), "the density");
  // a few of the core's words (acidscape.checks.LABELS), in the catalogue's shape
  setFieldWords({
    "temperature_C": ["the temperature", "°C"], "density_kg_per_L": ["the density of the product", "kg/L"],
    "systems[]": ["acid-base system {0}", ""], "total": ["the amount", ""], "measured.pH": ["the measured pH", ""],
  });
  assert.equal(fieldWords("water.scenario.systems[1].total"), "the amount in acid-base system 2");
  assert.equal(fieldWords("treatment.dose.density_kg_per_L"), "the density of the product");
  assert.equal(fieldWords("water.scenario.measured.pH"), "the measured pH");
  for (const path of ["water.scenario.systems[1].total", "treatment.dose.density_kg_per_L", "x.brand_new_mg_per_L"]) {
    assert.doesNotMatch(fieldWords(path), /_|\[\d+\]|\.\w/, path);
  }
  setFieldWords(null);
});

test("temperature lists: ';', ', ' or spaces between them, °F and K, decimal commas", async () => {
  const { parseTemperatureList, setLimits } = await import("../../site/parse.js");
  setLimits(null);
  assert.deepEqual(parseTemperatureList("60; 100").value, [60, 100]);
  assert.deepEqual(parseTemperatureList("60, 100").value, [60, 100]);
  assert.deepEqual(parseTemperatureList("60 100").value, [60, 100]);
  assert.deepEqual(parseTemperatureList("").value, []);
  // 140 °F = 60 °C and 212 °F = 100 °C: (F - 32) x 5/9, the definition of the Fahrenheit scale
  const f = parseTemperatureList("140 °F; 212 °F").value;
  assert.ok(Math.abs(f[0] - 60) < 1e-12 && Math.abs(f[1] - 100) < 1e-12, String(f));
  const g = parseTemperatureList("140F 212F").value;
  assert.ok(Math.abs(g[0] - 60) < 1e-12 && Math.abs(g[1] - 100) < 1e-12, String(g));
  assert.deepEqual(parseTemperatureList("12,5; 60,5").value, [12.5, 60.5]);
  assert.deepEqual(parseTemperatureList("12,5").value, [12.5]);
  assert.ok(Math.abs(parseTemperatureList("333,15 K").value[0] - 60) < 1e-9); // 0 °C = 273.15 K (SI)
  assert.match(parseTemperatureList("60; warm").error, /"warm" is not a temperature/);
  setLimits({ pH: [0, 14], temperature_C: [0, 100] });
  assert.equal(parseTemperatureList("60; 300").error, "Each temperature must be from 0 to 100 °C (you entered 300).");
  assert.match(parseTemperatureList("250 °F").error, /from 0 to 100 °C \(you entered 250 °F\)/);
  setLimits(null);
});
