// Pure text helpers shared by the view and the plots: no DOM, no chemistry.

const SUB = { 0: "₀", 1: "₁", 2: "₂", 3: "₃", 4: "₄", 5: "₅", 6: "₆", 7: "₇", 8: "₈", 9: "₉" };
const SUP = { 0: "⁰", 1: "¹", 2: "²", 3: "³", 4: "⁴", 5: "⁵", 6: "⁶", 7: "⁷", 8: "⁸", 9: "⁹", "+": "⁺", "-": "⁻" };

/**
 * Write a formula the way the core spells it ("HPO4-2", "NH4+", "H2CO3*") with Unicode
 * subscripts and a superscript charge ("HPO₄²⁻", "NH₄⁺", "H₂CO₃*").
 *
 * @param {string} formula  plain-text formula, charge as a trailing "+", "-", "+n" or "-n"
 * @returns {string}  display text
 */
export function prettyFormula(formula) {
  const text = String(formula);
  const match = /^(.*?)([+-])(\d*)$/.exec(text);
  const body = match ? match[1] : text;
  const charge = match ? (match[3] && match[3] !== "1" ? match[3] : "") + match[2] : "";
  const subscripted = body.replace(/([A-Za-z)\]])(\d+)/g, (_, head, digits) =>
    head + [...digits].map((d) => SUB[d]).join(""),
  );
  return subscripted + [...charge].map((c) => SUP[c]).join("");
}

/**
 * A number in a short scientific form, e.g. 1.23 × 10⁻⁵; plain decimals between 0.001 and 1000.
 *
 * @param {number} value  any finite number [any unit]
 * @param {number} [digits]  significant digits
 * @returns {string}  display text ("—" for a missing value)
 */
export function sciNumber(value, digits = 3) {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-3 && magnitude < 1e3) return Number(value.toPrecision(digits)).toString().replace("-", "−");
  const [mantissa, exponent] = value.toExponential(digits - 1).split("e");
  const power = [...String(Number(exponent))].map((c) => SUP[c] ?? c).join("");
  return `${mantissa.replace("-", "−")} × 10${power}`;
}

/**
 * @param {number|null} value  number to show with fixed decimals
 * @param {number} decimals  digits after the point
 * @returns {string}  display text ("—" for a missing value)
 */
export function fixed(value, decimals) {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  return value.toFixed(decimals).replace("-", "−");
}

/**
 * A plant quantity (feed, flow, kg/d) as a plain number with digit groups and about four
 * significant figures, never in powers of ten: 2314.2 -> "2,314", 0.01234 -> "0.01234".
 *
 * @param {number|null} value  the quantity [any unit]
 * @param {number} [digits]  significant figures kept
 * @returns {string}  display text ("—" for a missing value)
 */
export function plainNumber(value, digits = 4) {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  if (value === 0) return "0";
  const magnitude = Math.floor(Math.log10(Math.abs(value)));
  const decimals = Math.max(0, Math.min(12, digits - 1 - magnitude));
  const rounded = Number(value.toPrecision(digits));
  return rounded
    .toLocaleString("en-US", { minimumFractionDigits: 0, maximumFractionDigits: decimals, useGrouping: true })
    .replace("-", "−");
}

/**
 * A number for a CSV file: in the column's own unit, to seven significant figures (more than
 * any input carries), without the float noise of the last digits (7.400000000000008 -> 7.4).
 *
 * @param {number|null} value  the number in the unit its column header names
 * @returns {string}  "" for a missing value
 */
export function exportNumber(value) {
  if (value === null || value === undefined || !Number.isFinite(value)) return "";
  return String(Number(value.toPrecision(7)));
}

/**
 * Text shown for a core unit string.
 *
 * @param {string} unit  e.g. "umol/L", "ug/L", "mg/L", "mg/L as N"
 * @param {string|null} massBasis  formula the plain "mg/L" of a system refers to (e.g. "PO4")
 * @returns {string}  display text
 */
export function unitLabel(unit, massBasis = null) {
  const u = String(unit);
  if (u === "umol/L") return "µmol/L";
  if (u === "ug/L") return massBasis ? `µg/L of ${prettyFormula(massBasis)}` : "µg/L";
  if (u === "mg/L" && massBasis) return `mg/L of ${prettyFormula(massBasis)}`;
  if (u.startsWith("mg/L as ")) return `mg/L as ${prettyFormula(u.slice(8))}`;
  if (u.startsWith("ug/L as ")) return `µg/L as ${prettyFormula(u.slice(8))}`;
  return u;
}
