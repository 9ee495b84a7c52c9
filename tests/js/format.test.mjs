// Unit tests of site/format.js (no DOM): plant quantities, CSV numbers, units, formulas.
import { test } from "node:test";
import assert from "node:assert/strict";
import { exportNumber, plainNumber, prettyFormula, sciNumber, unitLabel } from "../../site/format.js";

test("plant quantities are plain grouped numbers, never powers of ten", () => {
  assert.equal(plainNumber(2314.2), "2,314");
  assert.equal(plainNumber(1234567.8), "1,235,000");
  assert.equal(plainNumber(18.25), "18.25");
  assert.equal(plainNumber(0.012345), "0.01235");
  assert.equal(plainNumber(-2314.2), "−2,314");
  assert.equal(plainNumber(0), "0");
  assert.equal(plainNumber(null), "—");
  for (const v of [1e-6, 3.3e4, 9.99e8]) assert.doesNotMatch(plainNumber(v), /×|e/);
});

test("CSV numbers keep seven significant figures and drop float noise", () => {
  assert.equal(exportNumber(7.400000000000008), "7.4");
  assert.equal(exportNumber(0.0012345678), "0.001234568");
  assert.equal(exportNumber(123456789), "123456800");
  assert.equal(exportNumber(null), "");
  assert.equal(exportNumber(Number.NaN), "");
});

test("units and formulas as shown", () => {
  assert.equal(unitLabel("ug/L"), "µg/L");
  assert.equal(unitLabel("umol/L"), "µmol/L");
  assert.equal(unitLabel("mg/L as Cl2"), "mg/L as Cl₂");
  assert.equal(unitLabel("mg/L", "PO4"), "mg/L of PO₄");
  assert.equal(prettyFormula("HPO4-2"), "HPO₄²⁻");
  assert.equal(sciNumber(2.5e-5), "2.50 × 10⁻⁵");
});
