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
