// Reading numbers the user typed: shared by every section. No DOM, no chemistry.

/** A decimal number as typed in a field (exponent allowed). */
export const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
/** A whole number as typed in a field. */
export const INTEGER = /^[+-]?\d+$/;

/**
 * @param {unknown} text  what the user typed
 * @returns {string}  trimmed, with a typographic minus (U+2212) read as "-"
 */
export function cleanNumberText(text) {
  return String(text ?? "").trim().replace(/\u2212/g, "-");
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
  if (!NUMBER.test(t)) return { error: `"${t}" is not a number; enter ${what}.`, raw: t };
  return { value: Number(t) };
}
