// DOM code of the job "Hardness titration" (section #job-hardness). It writes the section's
// inner markup once at mount (a static template: no user text in it), then only sets textContent
// and data-value attributes. No chemistry here: the numbers arrive ready from hardness.js.

import { exportNumber, fixed } from "./format.js";
import { FieldMessages, markResults } from "./view.js";
import { byId, countDrawn, markBusy, mountBody, para, readInputs, showLines, showValue, showWater } from "./job-view.js";

/** Input ids of the job, in form order; each has a #<id>-error beside it. */
export const HARDNESS_INPUTS = ["hardness-sample", "hardness-edta", "hardness-ph"];

const TEMPLATE = `
  <div class="treat-block" id="hardness-block">
    <form id="hardness-form" class="inputs" novalidate autocomplete="off">
      <div class="field">
        <p class="label-like">The water's calcium and magnesium</p>
        <p id="hardness-water" class="treat-water" data-state="current">Describe the water above; its calcium and magnesium are titrated.</p>
        <p id="hardness-water-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="hardness-sample">Sample volume <span class="unit">(mL)</span></label>
        <input id="hardness-sample" type="text" inputmode="decimal" spellcheck="false" value="50"
               aria-describedby="hardness-sample-error">
        <p id="hardness-sample-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="hardness-edta">EDTA titrant <span class="unit">(mol/L)</span></label>
        <input id="hardness-edta" type="text" inputmode="decimal" spellcheck="false" value="0.01"
               aria-describedby="hardness-edta-error">
        <p id="hardness-edta-error" class="error" aria-live="polite"></p>
      </div>
      <div class="field">
        <label for="hardness-ph">Buffered pH <span class="unit">(the standard method buffers at 10)</span></label>
        <input id="hardness-ph" type="text" inputmode="decimal" spellcheck="false" value="10"
               aria-describedby="hardness-ph-error">
        <p id="hardness-ph-error" class="error" aria-live="polite"></p>
      </div>
      <p id="hardness-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="hardness-results" data-state="empty">
      <p class="treat-figure">Total hardness from the end point: <strong id="hardness-total" data-value="">—</strong></p>
      <p class="treat-figure">Calcium hardness from a calcium end point: <strong id="hardness-calcium" data-value="">—</strong></p>
      <p class="treat-figure">From the water's composition, for comparison: <strong id="hardness-composition" data-value="">—</strong></p>
      <figure class="plot-frame">
        <figcaption>pM of calcium and magnesium as EDTA goes in <span class="unit">(pM = −log₁₀ of the free
          metal in mol/L; diamonds mark the end points)</span></figcaption>
        <div id="plot-edta" class="plot"></div>
      </figure>
      <div class="table-wrap" tabindex="0" role="region" aria-label="End points">
        <table id="hardness-endpoints">
          <caption id="hardness-endpoints-caption">End points</caption>
          <thead>
            <tr>
              <th scope="col">Metal</th>
              <th scope="col" class="num">End point <span class="unit">(mL)</span></th>
              <th scope="col" class="num">Stoichiometric <span class="unit">(mL)</span></th>
              <th scope="col" class="num">pM there</th>
              <th scope="col" class="num">log₁₀ K′</th>
            </tr>
          </thead>
          <tbody></tbody>
        </table>
      </div>
      <div id="hardness-warnings" class="treat-warning" role="status" hidden></div>
    </div>
  </div>
  <div class="treat-block" id="hardness-conditional-block">
    <h3>Why the lab buffers at pH 10</h3>
    <p class="hint">The conditional constant K′ = K<sub>MY</sub> α<sub>Y⁴⁻</sub> α<sub>M</sub> is how strongly EDTA
      holds each metal at a given pH: EDTA is protonated at low pH, and the metals form hydroxo complexes at high
      pH. Both calcium and magnesium are titrated sharply only where both curves are high; at pH 10 magnesium just
      clears the line while most waters do not yet precipitate magnesium hydroxide.</p>
    <div class="results" id="hardness-conditional-results" data-state="empty">
      <figure class="plot-frame">
        <figcaption>Conditional formation constants against pH <span class="unit">(dashed line: the buffered pH;
          dotted: log₁₀ K′ = 8)</span></figcaption>
        <div id="plot-edta-conditional" class="plot"></div>
      </figure>
      <p id="hardness-conditional-basis" class="hint"></p>
    </div>
  </div>
`;

export class HardnessView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "job-hardness");
    // the whole width of the section's grid; static markup written here, no user text
    mountBody(this.section, "job-body", TEMPLATE, { gridColumn: "1 / -1" });
    this.inputs = Object.fromEntries(HARDNESS_INPUTS.map((id) => [id, byId(doc, id)]));
    this.messages = new FieldMessages(doc, byId(doc, "hardness-form"), "hardness-error");
    this.waterLine = byId(doc, "hardness-water");
    this.results = byId(doc, "hardness-results");
    this.conditionalResults = byId(doc, "hardness-conditional-results");
    this.conditionalBasis = byId(doc, "hardness-conditional-basis");
    this.total = byId(doc, "hardness-total");
    this.calcium = byId(doc, "hardness-calcium");
    this.composition = byId(doc, "hardness-composition");
    this.table = byId(doc, "hardness-endpoints");
    this.caption = byId(doc, "hardness-endpoints-caption");
    this.warnings = byId(doc, "hardness-warnings");
    byId(doc, "hardness-form").addEventListener("submit", (event) => event.preventDefault());
  }

  /** @returns {Record<string, string>} raw text of every input, by id */
  read() {
    return readInputs(this.inputs);
  }

  write(id, value) {
    this.inputs[id].value = value;
    return true;
  }

  /** @param {Record<string, string>} messages  input id (or "block") -> message */
  showErrors(messages) {
    this.messages.show(messages);
  }

  setBusy(flag) {
    markBusy(this.results, flag);
  }

  /** @param {"titration"|"conditional"} block @param {"current"|"stale"|"empty"} state @param {string} [note] */
  setResultState(block, state, note) {
    markResults(block === "titration" ? this.results : this.conditionalResults, state, note);
  }

  /** Count one drawn result of a block on the section (data-titration-drawn, data-conditional-drawn). */
  markDrawn(block) {
    countDrawn(this.section, `${block}Drawn`);
  }

  setWater(text, stale = false) {
    showWater(this.waterLine, text, stale);
  }

  value(el, number, text) {
    showValue(el, number, text, text); // the text stands whether or not there is a number
  }

  /**
   * @param {number|null} total  total hardness [mg/L as CaCO3] (null: none)
   * @param {number|null} calcium  calcium hardness [mg/L as CaCO3] (null: no separate end point)
   * @param {number|null} composition  from the water's composition [mg/L as CaCO3]
   * @param {string} [calciumNote]  why there is no calcium figure
   */
  setHardness(total, calcium, composition, calciumNote = "—") {
    const mg = (v) => `${fixed(v, 1)} mg/L as CaCO₃`;
    this.value(this.total, total, total === null ? "—" : mg(total));
    this.value(this.calcium, calcium, calcium === null ? calciumNote : mg(calcium));
    this.value(this.composition, composition, composition === null ? "—" : mg(composition));
  }

  para(text) {
    return para(this.doc, text);
  }

  setWarnings(lines) {
    showLines(this.warnings, lines);
  }

  cell(text, value, key) {
    const td = this.doc.createElement("td");
    td.className = "num";
    td.dataset.key = key;
    td.dataset.value = value === null || value === undefined ? "" : String(value);
    td.dataset.export = exportNumber(value ?? null);
    td.textContent = text;
    return td;
  }

  /**
   * @param {string} caption
   * @param {{metal: string, name: string, mL: number|null, stoich: number, pM: number|null, logK: number|null,
   *          sharp: boolean}[]} rows
   */
  renderEndPoints(caption, rows) {
    this.caption.textContent = caption;
    this.table.tBodies[0].replaceChildren(...rows.map((r) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.metal = r.metal;
      tr.dataset.sharp = r.sharp ? "true" : "false";
      const th = this.doc.createElement("th");
      th.scope = "row";
      th.textContent = r.name;
      tr.append(th,
        this.cell(r.mL === null ? "no sharp end point" : fixed(r.mL, 3), r.mL, "titrant_mL"),
        this.cell(fixed(r.stoich, 3), r.stoich, "stoichiometric_mL"),
        this.cell(r.pM === null ? "—" : fixed(r.pM, 2), r.pM, "pM"),
        this.cell(r.logK === null ? "—" : fixed(r.logK, 2), r.logK, "log10_K_conditional"));
      return tr;
    }));
  }

  /** Remove every figure of the titration (no result for the inputs on screen). */
  clear() {
    this.setHardness(null, null, null);
    this.table.tBodies[0].replaceChildren();
    this.setWarnings([]);
  }

  /** @param {string} text  basis of the conditional constants */
  setConditionalBasis(text) {
    this.conditionalBasis.textContent = text;
  }

  /** @param {(id: string) => void} handler  an input changed */
  bindChange(handler) {
    for (const [id, el] of Object.entries(this.inputs)) el.addEventListener("input", () => handler(id));
  }
}
