// DOM code of the job "Lead and copper" (section #job-lead). It writes the section's inner
// markup once at mount (a static template: no user text in it), then only sets textContent and
// data-value attributes. No chemistry here: the numbers arrive ready from lead.js.

import { exportNumber, fixed, sciNumber } from "./format.js";
import { FieldMessages, markResults } from "./view.js";
import {
  byId, countDrawn, fillList, listen, markBusy, mountBody, para, readInputs, showLines, showWater, writeInput,
} from "./job-view.js";

/** Input ids of the job, in form order; each has a #<id>-error beside it. */
export const LEAD_INPUTS = ["lead-axis", "lead-from", "lead-to", "lead-dose", "lead-fixed-ph", "lead-lead-solids",
  "lead-copper-solids"];

const TEMPLATE = `
  <p id="lead-water" class="treat-water">Describe the water above; this job works on it.</p>
  <p id="lead-basis" class="hint"><strong>An equilibrium solubility estimate, not a prediction of lead or
    copper at a tap.</strong> Each curve is the dissolved metal in equilibrium with the least soluble of
    its likely solids (named along the curve), at the water's DIC and orthophosphate. Tap concentrations
    also depend on the pipes and their scales, their age, stagnation time, particles, flow and sampling.</p>
  <div class="treat-block" id="lead-block">
    <form id="lead-form" class="inputs" novalidate autocomplete="off">
      <div class="field">
        <label for="lead-axis">Curve against</label>
        <select id="lead-axis" aria-describedby="lead-axis-error">
          <option value="pH" selected>pH, at the water's DIC and PO₄</option>
          <option value="DIC">DIC, at a fixed pH</option>
          <option value="orthophosphate">Orthophosphate, at a fixed pH</option>
        </select>
        <p id="lead-axis-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-from">From <span class="unit" id="lead-from-unit">(pH)</span></label>
        <input id="lead-from" type="text" inputmode="decimal" spellcheck="false" value="6.5"
               aria-describedby="lead-from-error">
        <p id="lead-from-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-to">To <span class="unit" id="lead-to-unit">(pH)</span></label>
        <input id="lead-to" type="text" inputmode="decimal" spellcheck="false" value="10.5"
               aria-describedby="lead-to-error">
        <p id="lead-to-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-dose">Orthophosphate dose <span class="unit">(mg/L as P, added to the water's own)</span></label>
        <input id="lead-dose" type="text" inputmode="decimal" spellcheck="false" value="0"
               aria-describedby="lead-dose-hint lead-dose-error">
        <p id="lead-dose-hint" class="hint">As phosphorus: 1 mg/L as P is about 3.07 mg/L as PO₄.</p>
        <p id="lead-dose-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-fixed-ph">Fixed pH <span class="unit">(DIC and orthophosphate curves; empty: the water's pH)</span></label>
        <input id="lead-fixed-ph" type="text" inputmode="decimal" spellcheck="false" value=""
               aria-describedby="lead-fixed-ph-error">
        <p id="lead-fixed-ph-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-lead-solids">Lead solids considered</label>
        <select id="lead-lead-solids" aria-describedby="lead-lead-solids-error">
          <option value="all" selected>Every lead solid of the database</option>
          <option value="no-chloride">Without chloropyromorphite</option>
        </select>
        <p id="lead-lead-solids-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="lead-copper-solids">Copper solids considered</label>
        <select id="lead-copper-solids" aria-describedby="lead-copper-solids-error">
          <option value="all" selected>All copper solids, aged scales too</option>
          <option value="fresh">Copper(II) hydroxide only (new plumbing)</option>
        </select>
        <p id="lead-copper-solids-error" class="error" aria-live="polite"></p>
      </div>
      <div id="lead-cautions" class="treat-warning" role="note" aria-label="Cautions for orthophosphate and pH adjustment" hidden></div>
      <p id="lead-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="lead-results" data-state="empty">
      <figure class="plot-frame">
        <figcaption>Dissolved lead and copper <span class="unit">(µg/L, log scale; the controlling solid is named
          along each curve, dots mark where it changes; shaded: the spread of published constants)</span></figcaption>
        <div id="plot-lead" class="plot"></div>
      </figure>
    </div>
  </div>
  <div class="results" id="lead-details" data-state="empty">
      <div class="table-wrap" tabindex="0" role="region" aria-label="Dissolved lead and copper at a few points">
        <table id="lead-table">
          <caption id="lead-table-caption">Dissolved lead and copper</caption>
          <thead>
            <tr>
              <th scope="col" id="lead-table-x">pH</th>
              <th scope="col" class="num">Lead <span class="unit">(µg/L)</span></th>
              <th scope="col">Lead solid</th>
              <th scope="col" class="num">Lead, spread of constants <span class="unit">(µg/L)</span></th>
              <th scope="col" class="num">Copper <span class="unit">(µg/L)</span></th>
              <th scope="col">Copper solid</th>
              <th scope="col" class="num">Copper, spread of constants <span class="unit">(µg/L)</span></th>
            </tr>
          </thead>
          <tbody></tbody>
        </table>
      </div>
      <div id="lead-warnings" class="treat-warning" role="status" hidden></div>
      <details id="lead-constants-box">
        <summary>The published constants used <span class="unit">(spread shown where sources differ by more than 0.3 log units)</span></summary>
        <div class="table-wrap" tabindex="0" role="region" aria-label="Constants">
          <table id="lead-constants">
            <thead>
              <tr>
                <th scope="col">Solid or complex</th>
                <th scope="col">Reaction</th>
                <th scope="col" class="num">log₁₀ K <span class="unit">(25 °C)</span></th>
                <th scope="col" class="num">Published spread</th>
                <th scope="col">Source</th>
              </tr>
            </thead>
            <tbody></tbody>
          </table>
        </div>
      </details>
  </div>
`;

export class LeadView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "job-lead");
    // the whole width of the section's grid; static markup written here, no user text
    mountBody(this.section, "job-body", TEMPLATE, { gridColumn: "1 / -1" });
    this.inputs = Object.fromEntries(LEAD_INPUTS.map((id) => [id, byId(doc, id)]));
    this.messages = new FieldMessages(doc, byId(doc, "lead-form"), "lead-error");
    this.waterLine = byId(doc, "lead-water");
    this.results = byId(doc, "lead-results");
    this.details = byId(doc, "lead-details");
    this.table = byId(doc, "lead-table");
    this.tableX = byId(doc, "lead-table-x");
    this.caption = byId(doc, "lead-table-caption");
    this.warnings = byId(doc, "lead-warnings");
    this.cautions = byId(doc, "lead-cautions");
    this.constants = byId(doc, "lead-constants");
    this.units = [byId(doc, "lead-from-unit"), byId(doc, "lead-to-unit")];
    byId(doc, "lead-form").addEventListener("submit", (event) => event.preventDefault());
  }

  /** @returns {Record<string, string>} raw text of every input, by id */
  read() {
    return readInputs(this.inputs);
  }

  /** @returns {boolean} false when a select has no such option */
  write(id, value) {
    return writeInput(this.inputs[id], value);
  }

  /**
   * @param {string} axis  "pH", "DIC" or "orthophosphate"
   * @param {string} unit  words for the unit of the range ends
   */
  setAxis(axis, unit) {
    for (const el of this.units) el.textContent = `(${unit})`;
    this.inputs["lead-fixed-ph"].disabled = axis === "pH";
    this.inputs["lead-dose"].disabled = axis === "orthophosphate"; // the axis is the total itself
  }

  /** @param {Record<string, string>} messages  input id (or "block") -> message */
  showErrors(messages) {
    this.messages.show(messages);
  }

  setBusy(flag) {
    markBusy(this.results, flag);
    markBusy(this.details, flag);
  }

  /** @param {"current"|"stale"|"empty"} state @param {string} [note] */
  setResultState(state, note) {
    markResults(this.results, state, note);
    markResults(this.details, state, note);
  }

  /** Count one drawn result on the section (data-lead-drawn). */
  markDrawn() {
    countDrawn(this.section, "leadDrawn");
  }

  setWater(text, stale = false) {
    showWater(this.waterLine, text, stale);
  }

  para(text) {
    return para(this.doc, text);
  }

  /** @param {string[]} lines  the core's warnings */
  setWarnings(lines) {
    showLines(this.warnings, lines);
  }

  /** @param {string[]} lines  cautions that travel with a dose ([] hides them) */
  setCautions(lines) {
    const head = this.doc.createElement("p");
    head.className = "caution-head";
    head.textContent = "Before changing orthophosphate or pH-adjustment feeds:";
    const list = this.doc.createElement("ul");
    fillList(list, lines);
    this.cautions.replaceChildren(...(lines.length ? [head, list] : []));
    this.cautions.hidden = lines.length === 0;
  }

  cell(text, value, key) {
    const td = this.doc.createElement("td");
    td.dataset.key = key;
    if (typeof value === "number" || value === null) {
      td.className = "num";
      td.dataset.value = value === null ? "" : String(value);
      td.dataset.export = exportNumber(value);
    }
    td.textContent = text;
    return td;
  }

  /**
   * @param {string} xLabel  header of the first column (e.g. "pH", "DIC (mg/L as C)")
   * @param {string} caption  what the table shows
   * @param {{x: number, lead: object|null, copper: object|null}[]} rows  each metal: {ug, solid, low, high}
   */
  renderTable(xLabel, caption, rows) {
    this.tableX.textContent = xLabel;
    this.caption.textContent = caption;
    const body = this.table.tBodies[0];
    const ug = (v) => (v === null || v === undefined ? "—" : sciNumber(v, 3));
    const spread = (m) => (m && m.low !== null && m.high !== null ? `${ug(m.low)}–${ug(m.high)}` : "—");
    body.replaceChildren(...rows.map((row) => {
      const tr = this.doc.createElement("tr");
      const th = this.doc.createElement("th");
      th.scope = "row";
      th.dataset.value = String(row.x);
      th.textContent = fixed(row.x, row.digits ?? 2);
      tr.append(th);
      for (const metal of ["lead", "copper"]) {
        const m = row[metal];
        tr.append(
          this.cell(ug(m?.ug), m?.ug ?? null, `${metal}_ug_per_L`),
          this.cell(m?.solid ?? "—", undefined, `${metal}_solid`),
          this.cell(spread(m), null, `${metal}_band`),
        );
        tr.lastChild.dataset.low = m?.low ?? "";
        tr.lastChild.dataset.high = m?.high ?? "";
      }
      return tr;
    }));
  }

  /** Remove every figure (no result for the inputs on screen). */
  clear() {
    this.table.tBodies[0].replaceChildren();
    this.setWarnings([]);
  }

  /**
   * @param {{name: string, kind: string, reaction: string, logK: number, spread: number[]|null,
   *          source: string, provenance: string, metal: string}[]} rows
   */
  renderConstants(rows) {
    const body = this.constants.tBodies[0];
    body.replaceChildren(...rows.map((r) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.id = r.id;
      tr.dataset.spread = r.spread ? "true" : "false";
      const th = this.doc.createElement("th");
      th.scope = "row";
      th.textContent = `${r.name} (${r.metal}, ${r.kind})`;
      const spread = r.spread ? `${fixed(r.spread[0], 2)} to ${fixed(r.spread[1], 2)}` : "—";
      tr.append(th, this.cell(r.reaction, undefined, "reaction"), this.cell(fixed(r.logK, 2), r.logK, "log10_K"),
        this.cell(spread, null, "spread"), this.cell(`${r.source ?? "—"}${r.provenance ? ` (${r.provenance})` : ""}`,
          undefined, "source"));
      return tr;
    }));
  }

  /** @param {(id: string) => void} handler  an input changed */
  bindChange(handler) {
    listen(this.inputs, handler);
  }

  isChoice(id) {
    return this.inputs[id].tagName === "SELECT";
  }
}
