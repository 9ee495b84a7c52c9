// Reading numbers the user typed: shared by every section. No DOM, no chemistry.
//
// Accepted everywhere a number is typed:
//   "12.5", "12,5" (decimal comma), "1 234,5" / "1,234.5" / "1.234,5" (digit groups),
//   "−3" (typographic minus), "1e-3", "1,5e-3".
// Temperatures also take a unit after the number: "59 °F", "59F", "15 °C", "288.15 K".
// Lists (pKa values) are separated by ";" or by ", " (comma and space); "4.2,8.9" (no spaces,
// decimal points) is a list too, and "4,76" alone is one number with a decimal comma.

// Limits of the inputs (the pH range...) come from the core, which owns them (acidscape.checks,
// sent with the "systems" catalogue): main.js hands them over once with setLimits(). Until then no
// range is checked here, and the core's own message (beside the field) says what is allowed.
let limits = null;

/**
 * Take the core's input limits (the "limits" of the "systems" catalogue).
 *
 * @param {{pH?: [number, number], total_M?: number, flow_L_per_d?: number}|null|undefined} fromCore
 */
export function setLimits(fromCore) {
  const pH = fromCore?.pH;
  limits = Array.isArray(pH) && pH.length === 2 && pH.every(Number.isFinite) ? { ...fromCore, pH: [...pH] } : null;
}

// The words of each input, also from the core (acidscape.checks.LABELS: key -> [words, unit], keys
// with list positions written "[]" and "{0}" for the 1-based position), so a note about a value
// of a link or a file names it as the page does ("the amount in acid-base system 2").
let labels = null;

/**
 * Take the core's words for each input (the "labels" of the "systems" catalogue).
 *
 * @param {Record<string, [string, string]>|null|undefined} fromCore
 */
export function setFieldWords(fromCore) {
  labels = fromCore && typeof fromCore === "object" ? fromCore : null;
}

function labelOf(tail) {
  const positions = [...tail.matchAll(/\[(\d+)\]/g)].map((m) => Number(m[1]) + 1);
  const entry = labels?.[tail.replace(/\[\d+\]/g, "[]")];
  if (Array.isArray(entry) && typeof entry[0] === "string") {
    return entry[0].replace(/\{(\d+)\}/g, (_, n) => String(positions[Number(n)] ?? ""));
  }
  const item = /^(.*\[\d+\])\.(.+)$/.exec(tail); // "steps[1].target_pH": the key in the list item
  if (item) {
    const inner = labelOf(item[2]);
    const outer = labelOf(item[1]);
    if (inner && outer) return `${inner} in ${outer}`;
  }
  return null;
}

/**
 * An input named in words, from its path in a state, link or file.
 *
 * @param {string} path  e.g. "water.scenario.systems[1].total", "treatment.dose.density_kg_per_L"
 * @returns {string}  e.g. "the amount in acid-base system 2", "the density of the product"
 *
 * @example fieldWords("water.scenario.temperature_C") === "the temperature"  // with the core's words
 */
export function fieldWords(path) {
  const parts = String(path ?? "").split(".");
  for (let k = 0; k < parts.length; k += 1) {
    const words = labelOf(parts.slice(k).join("."));
    if (words) return words;
  }
  // no word from the core (yet): the last key without its unit suffix and underscores
  const last = (parts[parts.length - 1] ?? "").replace(/\[\d+\]/g, "")
    .replace(/_(C|K|M|mL|pct|atm|mg_per_L.*|meq_per_L|kg_per_L|g_per_mol|uS_per_cm|L_per_d)$/, "").replace(/_/g, " ").trim();
  return last ? `the ${last}` : "a value";
}

/** @returns {[number, number]|null}  the one pH range of every pH field, once the core has said it */
export function phRange() {
  return limits ? [...limits.pH] : null;
}

/** A plain decimal number with a point (exponent allowed): the form every number ends up in. */
export const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
/** A whole number as typed in a field. */
export const INTEGER = /^[+-]?\d+$/;

// 1,234.5 or 1,234,567 (a lone "1,234" is a decimal comma: 1.234)
const GROUPED_POINT = /^[+-]?\d{1,3}((,\d{3}){2,}(\.\d*)?|(,\d{3})+\.\d*)$/;
// 1.234,5 or 1.234.567
const GROUPED_COMMA = /^[+-]?\d{1,3}((\.\d{3}){2,}(,\d*)?|(\.\d{3})+,\d*)$/;
const SPACES = /[\s\u00a0\u202f\u2009']/g; // spaces, no-break and thin spaces, apostrophes as digit groups

/**
 * @param {unknown} text  what the user typed
 * @returns {string}  trimmed, with a typographic minus (U+2212) read as "-"
 */
export function cleanNumberText(text) {
  return String(text ?? "").trim().replace(/\u2212/g, "-");
}

/**
 * The typed text of one number in the plain form NUMBER accepts, or null.
 *
 * @param {string} text  cleaned text (cleanNumberText)
 * @returns {string|null}  e.g. "12,5" -> "12.5", "1 234,5" -> "1234.5"; null when not a number
 *
 * @example normalizeNumberText("1,5e-3") === "1.5e-3"
 */
export function normalizeNumberText(text) {
  let t = String(text).replace(SPACES, (m, offset, whole) =>
    // a space only counts as a digit-group separator between digits
    /\d/.test(whole[offset - 1] ?? "") && /\d/.test(whole[offset + 1] ?? "") ? "" : m);
  if (NUMBER.test(t)) return t;
  if (GROUPED_POINT.test(t)) t = t.replace(/,/g, "");
  else if (GROUPED_COMMA.test(t)) t = t.replace(/\./g, "").replace(",", ".");
  else if (/^[^.]*,[^.,]*$/.test(t)) t = t.replace(",", "."); // one decimal comma, no point
  return NUMBER.test(t) ? t : null;
}

/**
 * Parse a number field.
 *
 * @param {unknown} text  what the user typed
 * @param {string} what  how to name the value in a message, e.g. "a pH, e.g. 7"
 * @param {{optional?: boolean}} [opts]  an empty optional field gives value null
 * @returns {{value?: number|null, error?: string, raw?: string}}  raw: the text that failed
 */
export function parseNumber(text, what, { optional = false } = {}) {
  const t = cleanNumberText(text);
  if (!t) return optional ? { value: null } : { error: `Enter ${what}.` };
  const plain = normalizeNumberText(t);
  if (plain === null) return { error: `"${t}" is not a number; enter ${what}.`, raw: t };
  const value = Number(plain);
  if (!Number.isFinite(value)) return { error: `"${t}" is too large; enter ${what}.`, raw: t };
  return { value };
}

/**
 * Parse a whole-number field (a charge).
 *
 * @param {unknown} text  what the user typed
 * @param {string} what  how to name the value in a message
 * @returns {{value?: number, error?: string, raw?: string}}
 */
export function parseInteger(text, what) {
  const t = cleanNumberText(text);
  if (!t) return { error: `Enter ${what}.` };
  if (!INTEGER.test(t)) return { error: `"${t}" is not a whole number; enter ${what}.`, raw: t };
  return { value: Number(t) };
}

/** Temperature units a temperature field accepts after the number, to °C. */
const TEMPERATURE_UNITS = [
  [/^(°|º|deg\s*)?c$/i, (v) => v],
  [/^(°|º|deg\s*)?f$/i, (v) => ((v - 32) * 5) / 9], // degree Fahrenheit, exact definition
  [/^k$/i, (v) => v - 273.15], // kelvin: 0 °C = 273.15 K exactly (SI)
];

/**
 * Parse a temperature typed in °C (default), °F or K.
 *
 * @param {unknown} text  e.g. "25", "77 °F", "77F", "298.15 K", "12,5"
 * @param {string} what  how to name the value in a message
 * @returns {{value?: number, error?: string, raw?: string, unit?: "C"|"F"|"K"}}  value in °C
 *
 * @example parseTemperature("77 °F", "a temperature").value === 25
 */
export function parseTemperature(text, what) {
  const t = cleanNumberText(text);
  if (!t) return { error: `Enter ${what}.` };
  const m = /^(.*?)\s*((?:°|º|deg\s*)?[cfk])$/i.exec(t);
  const number = m ? m[1] : t;
  const suffix = m ? m[2] : "C";
  const rule = TEMPERATURE_UNITS.find(([re]) => re.test(suffix));
  const parsed = parseNumber(number, what);
  if (parsed.error || !rule) return { error: `"${t}" is not a temperature; enter ${what}.`, raw: t };
  const unit = suffix.replace(/^(°|º|deg\s*)/i, "").toUpperCase();
  return { value: rule[1](parsed.value), unit };
}

/**
 * Parse a list of numbers (pKa values).
 *
 * @param {unknown} text  e.g. "2.15, 7.20, 12.35", "2,15; 7,20", "4.2,8.9", "4,76"
 * @param {string} what  how to name a value in a message, e.g. "pKa value"
 * @returns {{value?: number[], error?: string, raw?: string}}
 */
export function parseNumberList(text, what = "value") {
  const t = cleanNumberText(text);
  if (!t) return { error: `Enter at least one ${what}, e.g. 4.76 (separate several with "; " or ", ").` };
  let parts;
  if (t.includes(";")) parts = t.split(";");
  else if (/,\s/.test(t)) parts = t.split(/,\s+/);
  else if (t.includes(".") || normalizeNumberText(t) === null) parts = t.split(",");
  else parts = [t]; // "4,76": one number with a decimal comma
  const values = [];
  for (const [i, raw] of parts.map((p) => p.trim()).entries()) {
    if (!raw) return { error: `Value ${i + 1} of the list is empty; separate ${what}s with "; " or ", ".`, raw: t };
    const plain = normalizeNumberText(raw);
    if (plain === null) return { error: `"${raw}" (value ${i + 1}) is not a number.`, raw: t };
    values.push(Number(plain));
  }
  return { value: values };
}

/**
 * The number a state object holds for a text field: the number, null when blank, else the text
 * as typed (so a half-typed field still travels as typed).
 *
 * @param {unknown} text  the field's text
 * @returns {number|string|null}
 */
export function stateNumber(text) {
  const t = cleanNumberText(text);
  if (!t) return null;
  const plain = normalizeNumberText(t);
  return plain === null ? t : Number(plain);
}

/**
 * Parse a pH field: a number (decimal comma allowed) within the core's one pH range.
 *
 * @param {unknown} text  what the user typed, e.g. "8,5"
 * @param {string} label  the field in words at the start of a sentence, e.g. "The target pH"
 * @param {{optional?: boolean}} [opts]  an empty optional field gives value null
 * @returns {{value?: number|null, error?: string, raw?: string}}
 *
 * @example parsePH("8,5", "The target pH").value === 8.5
 */
export function parsePH(text, label, { optional = false } = {}) {
  const range = phRange();
  const span = range ? ` (from ${range[0]} to ${range[1]})` : "";
  const what = `${label.charAt(0).toLowerCase()}${label.slice(1)}${span}`;
  const parsed = parseNumber(text, what, { optional });
  if (parsed.error || parsed.value === null || !range) return parsed;
  if (parsed.value < range[0] || parsed.value > range[1]) {
    return { error: `${label} must be from ${range[0]} to ${range[1]} (you entered ${cleanNumberText(text)}).`,
      raw: cleanNumberText(text) };
  }
  return parsed;
}

/**
 * Parse a list of temperatures, each in °C (default), °F or K, with decimal commas allowed.
 * Separate them with ";", with ", " (comma and space) or with spaces: "60; 100", "60, 100",
 * "140 °F 212 °F", "12,5; 60". A lone comma between digits is a decimal comma ("12,5" is one
 * temperature), as everywhere else on the page. Each is checked against the core's temperature
 * range once the core has said it (setLimits).
 *
 * @param {unknown} text  what the user typed
 * @param {string} what  how to name a value in a message, e.g. "a temperature, e.g. 60"
 * @returns {{value?: number[], error?: string, raw?: string}}  values in °C (empty text: [])
 *
 * @example parseTemperatureList("140 °F; 100").value  // [60, 100]
 */
export function parseTemperatureList(text, what = "a temperature, e.g. 60 (°C) or 140 °F") {
  const t = cleanNumberText(text);
  if (!t) return { value: [] };
  let parts;
  if (t.includes(";")) parts = t.split(";");
  else if (/,\s/.test(t)) parts = t.split(/,\s+/);
  else parts = [t];
  const out = [];
  const range = Array.isArray(limits?.temperature_C) ? limits.temperature_C : null;
  for (const part of parts.flatMap((p) => p.trim().split(/\s+(?=[+-]?\d)/))) {
    if (!part) return { error: `A temperature of the list is empty; separate them with "; ".`, raw: t };
    const read = parseTemperature(part, what);
    if (read.error) return { ...read, raw: t };
    if (range && (read.value < range[0] || read.value > range[1])) {
      return { error: `Each temperature must be from ${range[0]} to ${range[1]} °C (you entered ${part}).`, raw: t };
    }
    out.push(read.value);
  }
  return { value: out };
}
