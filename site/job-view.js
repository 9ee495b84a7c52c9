// DOM helpers the job views share (scale-view, softening-view, lead-view, hardness-view,
// treatment-view): looking up elements, the markup of a field with its error line, filling
// drop-downs, lists and warning boxes, number cells and row headers with data-* for tests and
// exports, the busy / drawn / water-line marks. Text goes in through textContent only. No
// chemistry and no job's ids here: each view passes its own elements.

import { fixed } from "./format.js";
import { markBusy } from "./view.js";

/** The element with this id; a missing one is a broken page, said at once. */
export function byId(doc, id) {
  const el = doc.getElementById(id);
  if (!el) throw new Error(`the page lacks #${id}`);
  return el;
}

/** A signed number with fixed decimals ("+0.35", "−1.20", "0.00"; "—" when missing). */
export function signedFixed(x, d) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  const r = Number(x.toFixed(d));
  return (r > 0 ? "+" : "") + fixed(r === 0 ? 0 : x, d);
}

/** Static markup of one input (or select) with its label, unit, hint and #<id>-error line. */
export function field(id, label, unit, { value = "", hint = "", select = false, inputmode = "decimal" } = {}) {
  const control = select
    ? `<select id="${id}" aria-describedby="${id}-error"></select>`
    : `<input id="${id}" type="text" inputmode="${inputmode}" spellcheck="false" value="${value}" aria-describedby="${id}-error">`;
  return `<div class="field">
      <label for="${id}">${label}${unit ? ` <span class="unit">(${unit})</span>` : ""}</label>
      ${control}
      ${hint ? `<p class="hint">${hint}</p>` : ""}
      <p id="${id}-error" class="error" aria-live="polite"></p>
    </div>`;
}

/** Static markup of the optional plant flow #<id> with its unit drop-down #<id>-unit (and their error lines). */
export function flowField(id) {
  return `<div class="field treat-flow">
        <label for="${id}">Plant flow <span class="unit">(optional)</span></label>
        <input id="${id}" type="text" inputmode="decimal" spellcheck="false" value="" aria-describedby="${id}-error">
        <label for="${id}-unit" class="visually-hidden">Flow unit</label>
        <select id="${id}-unit" aria-describedby="${id}-unit-error"></select>
        <p id="${id}-error" class="error" aria-live="polite"></p>
        <p id="${id}-unit-error" class="error" aria-live="polite"></p>
      </div>`;
}

/**
 * Append a job's body (static markup only, no user or core text) to its section.
 *
 * @param {HTMLElement} section  the job's <section>
 * @param {string} className  classes of the body
 * @param {string} markup  static markup
 * @param {object} style  inline style of the body (its place in the section's grid)
 */
export function mountBody(section, className, markup, style) {
  const box = section.ownerDocument.createElement("div");
  box.className = className;
  Object.assign(box.style, style);
  box.innerHTML = markup;
  section.append(box);
  return box;
}

/** Replace a select's options with [value, text] pairs. */
export function fillOptions(select, pairs) {
  select.replaceChildren(...pairs.map(([value, text]) => {
    const o = select.ownerDocument.createElement("option");
    o.value = value;
    o.textContent = text;
    return o;
  }));
}

/** @returns {Record<string, string>} raw text of every input, by id */
export function readInputs(inputs) {
  return Object.fromEntries(Object.entries(inputs).map(([id, el]) => [id, el.value]));
}

/** Set an input's text or a select's option. @returns {boolean} false when a select has no such option */
export function writeInput(el, value) {
  if (el.tagName === "SELECT" && ![...el.options].some((o) => o.value === value)) return false;
  el.value = value;
  return true;
}

/** Call handler(id) when an input changes (a select or checkbox on change, text as typed). */
export function listen(inputs, handler) {
  for (const [id, el] of Object.entries(inputs)) {
    el.addEventListener(el.tagName === "SELECT" || el.type === "checkbox" ? "change" : "input", () => handler(id));
  }
}

/** aria-busy on a results block, after a short delay (view.js). */
export { markBusy };

/** Count one drawn result in the section's data-* (key in camelCase, e.g. "leadDrawn"). */
export function countDrawn(section, key) {
  section.dataset[key] = String(Number(section.dataset[key] || 0) + 1);
}

/** The line that says which water a job works on (data-state "stale" when it cannot be used). */
export function showWater(el, text, stale = false) {
  el.textContent = text;
  el.dataset.state = stale ? "stale" : "current";
}

/** @returns {boolean} whether a job's section is laid out (visible) now */
export function isShown(section) {
  // a job put away by the workbench keeps its box (visibility: hidden, inert): not visible
  return section.getClientRects().length > 0 && !section.hidden && !section.closest("[inert]");
}

/** A new element holding text (a paragraph by default). */
export function para(doc, text, tag = "p") {
  const p = doc.createElement(tag);
  p.textContent = text;
  return p;
}

/** Fill a box with one paragraph per line; an empty list hides it. */
export function showLines(box, lines) {
  box.replaceChildren(...lines.map((line) => para(box.ownerDocument, line)));
  box.hidden = lines.length === 0;
}

/** Fill a list (the cautions that travel with a dose) with one item per line. */
export function fillList(list, lines) {
  list.replaceChildren(...lines.map((line) => para(list.ownerDocument, line, "li")));
}

/** A figure with its raw number in data-value; `empty` stands where there is no finite number. */
export function showValue(el, number, text, empty = "—") {
  const has = number !== null && number !== undefined && Number.isFinite(number);
  el.dataset.value = has ? String(number) : "";
  el.textContent = has ? text : empty;
  return has;
}

/** A table cell with data-key and data-value (empty unless a finite number); "td" cells are numeric. */
export function numberCell(doc, text, value, key, tag = "td") {
  const td = doc.createElement(tag);
  if (tag === "td") td.className = "num";
  td.dataset.key = key;
  td.dataset.value = value === null || value === undefined || !Number.isFinite(value) ? "" : String(value);
  td.textContent = text;
  return td;
}

/** A row's header cell: the label, then its unit in a span "(unit)" when there is one. */
export function rowHead(doc, label, unit = "") {
  const th = doc.createElement("th");
  th.scope = "row";
  th.append(label);
  if (unit) {
    const u = doc.createElement("span");
    u.className = "unit";
    u.textContent = ` (${unit})`;
    th.append(u);
  }
  return th;
}
