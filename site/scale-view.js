// DOM code of the "Scale and corrosion" job (#job-scale): the calcium carbonate indices of the
// water with their uncertainty ranges, the CCPP at chosen temperatures, the two plots, a dose
// to a target LSI or CCPP with its cautions, and a sequence of chemicals. The inner markup is
// built here at mount (static text only); every number and every core message goes in through
// textContent. No chemistry here: scale.js hands over the core's results.
//
// Stable ids (tests rely on them):
//   #scale-water                 which water the job works on (data-state "stale" while the
//                                water's inputs cannot be used)
//   #scale-temperatures          further temperatures [°C], comma list; .scale-temp-preset
//                                buttons (data-temp) add one; #scale-pco2 CO2 partial pressure
//                                [atm] for the open CCPP (optional)
//   #scale-results               indices block (data-state, aria-busy); data-drawn on #job-scale
//                                counts results drawn (data-indices-drawn, data-dose-drawn,
//                                data-steps-drawn)
//   #scale-verdict               "will deposit / will dissolve" in words (data-tendency)
//   #scale-indices               tbody tr[data-key] (pHs, LSI, RSI, CCPP, pH_after_CCPP,
//                                CCPP_open, pH_after_CCPP_open): td[data-key=value] data-value,
//                                td[data-key=range] data-low/data-high
//   #scale-method                the method (free ions / with ion pairs) beside the numbers
//   #scale-temperature-table     tbody tr[data-temperature]: cells data-key pH, LSI, RSI, CCPP,
//                                pH_after_CCPP with data-value
//   #plot-scale-si #plot-scale-ccpp   the plots (Bokeh sources scale_si_src, scale_ccpp_src)
//   #scale-dose-chemical #scale-dose-target-kind (LSI | CCPP) #scale-dose-target
//   #scale-dose-flow #scale-dose-flow-unit
//   #scale-dose-results          #scale-dose-status (data-status), #scale-dose-mg,
//                                #scale-dose-mmol, #scale-dose-kg-per-d (data-value),
//                                #scale-dose-reached (data-ph, data-lsi, data-ccpp),
//                                #scale-dose-precipitated, #scale-dose-cautions (li)
//   #scale-step-<i>-chemical #scale-step-<i>-kind #scale-step-<i>-value #scale-step-<i>-remove,
//   #scale-step-add; #scale-steps-table (tbody tr[data-step]: data-key cells), #scale-steps-cautions
//   #scale-blend-with (an example water) #scale-blend-f1 #scale-blend-f2 (flow fractions);
//   #scale-blend-table (tbody tr[data-key]: td[data-key] above / other / blend with data-value)
//   #<input-id>-error beside each input; #scale-error, #scale-dose-error, #scale-steps-error, #scale-blend-error

import { fixed, plainNumber, prettyFormula, sciNumber } from "./format.js";
import { FieldMessages, markResults } from "./view.js";
import { FLOW_UNITS } from "./treatment-view.js";
import {
  byId, countDrawn, field, fillList, flowField, fillOptions, isShown, markBusy, mountBody, numberCell, para, readInputs, rowHead,
  showLines, showValue, showWater, signedFixed, writeInput,
} from "./job-view.js";

/** Quick temperatures a user adds with one click [°C] (common practice: what each stands for). */
export const TEMPERATURE_PRESETS = [
  [5, "cold main 5 °C"],
  [60, "hot-water heater 60 °C"],
  [80, "hot-water loop 80 °C"],
  [100, "boiling 100 °C"],
];

/** Kinds of a sequence step: target or given dose, with the words shown. */
export const STEP_KINDS = [
  ["target_pH", "to pH"],
  ["target_LSI", "to LSI"],
  ["target_CCPP", "to CCPP (mg/L as CaCO₃)"],
  ["dose_mg_per_L", "fixed dose (mg/L)"],
];

const INDEX_ROWS = [
  ["LSI", "Langelier saturation index, LSI", "", 2, true],
  ["pHs", "pHs (pH of saturation)", "", 2, false],
  ["RSI", "Ryznar stability index, RSI", "", 2, false],
  ["CCPP", "CCPP, closed", "mg/L as CaCO₃", 1, true],
  ["pH_after_CCPP", "pH after the CCPP, closed", "", 2, false],
  ["CCPP_open", "CCPP, open to CO₂", "mg/L as CaCO₃", 1, true],
  ["pH_after_CCPP_open", "pH after the CCPP, open", "", 2, false],
];

const MARKUP = `
  <p id="scale-water" class="treat-water" data-state="current"></p>
  <div class="treat-block" id="scale-block">
    <h3>Will the water lay down scale or dissolve it?</h3>
    <form id="scale-form" class="inputs" novalidate autocomplete="off">
      ${field("scale-temperatures", "CCPP also at", "°C, comma list, up to 8",
        { hint: "The same closed water heated or cooled: a heater or a boiler scales where the main does not." })}
      <div class="scale-presets" role="group" aria-label="Add a temperature">
        ${TEMPERATURE_PRESETS.map(([t, text]) => `<button type="button" class="scale-temp-preset" data-temp="${t}">${text}</button>`).join("")}
      </div>
      ${field("scale-pco2", "Open to CO₂ at", "atm, optional",
        { hint: "Also the CCPP of the water open to this CO₂ partial pressure (air about 0.00042)." })}
      <p id="scale-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="scale-results" data-state="empty">
      <p id="scale-verdict" class="treat-figure scale-verdict" data-tendency=""></p>
      <div class="table-wrap" tabindex="0" role="region" aria-label="Calcium carbonate indices">
        <table id="scale-indices">
          <caption>Calcium carbonate indices <span class="unit">(range: usual measurement uncertainty and the constants' spread)</span></caption>
          <thead><tr><th scope="col">Index</th><th scope="col" class="num">Value</th><th scope="col" class="num">Range</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <p id="scale-method" class="hint"></p>
      <details class="hint"><summary>How these are computed, and the sources</summary><p id="scale-method-detail"></p></details>
      <div class="table-wrap" tabindex="0" role="region" aria-label="Indices at other temperatures">
        <table id="scale-temperature-table">
          <caption>The same closed water at other temperatures</caption>
          <thead><tr><th scope="col">°C</th><th scope="col" class="num">pH</th><th scope="col" class="num">LSI</th>
            <th scope="col" class="num">RSI</th><th scope="col" class="num">CCPP <span class="unit">(mg/L as CaCO₃)</span></th>
            <th scope="col" class="num">pH after</th><th scope="col">Tendency</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <ul id="scale-notes" class="hint"></ul>
      <figure class="plot-frame">
        <figcaption>Saturation index of calcite against pH <span class="unit">(calcium and DIC kept; shaded: the uncertainty band; diamond: the water)</span></figcaption>
        <div id="plot-scale-si" class="plot"></div>
      </figure>
      <figure class="plot-frame">
        <figcaption>CCPP against temperature <span class="unit">(mg/L as CaCO₃, closed water; shaded: the uncertainty band; diamonds: the chosen temperatures)</span></figcaption>
        <div id="plot-scale-ccpp" class="plot"></div>
      </figure>
      <details class="hint"><summary>What the curves and bands hold</summary><p id="scale-band-note"></p></details>
    </div>
  </div>
  <div class="treat-block" id="scale-dose-block">
    <h3>Condition to a target LSI or CCPP</h3>
    <form id="scale-dose-form" class="inputs" novalidate autocomplete="off">
      ${field("scale-dose-chemical", "Chemical", "", { select: true })}
      ${field("scale-dose-target-kind", "Target", "", { select: true })}
      ${field("scale-dose-target", "Target value", "LSI, or CCPP in mg/L as CaCO₃", { value: "0" })}
      ${flowField("scale-dose-flow")}
      <p id="scale-dose-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="scale-dose-results" data-state="empty">
      <p id="scale-dose-status" class="treat-figure" data-status=""></p>
      <dl class="dose-figures">
        <div><dt>Dose as pure chemical</dt>
          <dd><strong id="scale-dose-mg" data-value="">—</strong> · <span id="scale-dose-mmol" data-value="">—</span></dd></div>
        <div><dt>At the plant flow</dt><dd><span id="scale-dose-kg-per-d" data-value="">—</span></dd></div>
        <div><dt>The water after</dt><dd id="scale-dose-reached" data-ph="" data-lsi="" data-ccpp="">—</dd></div>
        <div><dt>What precipitates</dt><dd id="scale-dose-precipitated">—</dd></div>
      </dl>
      <div id="scale-dose-warnings" class="treat-warning" role="status" hidden></div>
      <aside class="cautions" aria-labelledby="scale-dose-cautions-title">
        <h4 id="scale-dose-cautions-title">Before you change a chemical feed to this dose</h4>
        <ul id="scale-dose-cautions"><li>Caustics, lime and acids burn skin and eyes; CO₂ can suffocate in enclosed spaces. Confirm any dose with a jar or bench test; guard against overfeed; local codes and licensed operators decide.</li></ul>
      </aside>
    </div>
  </div>
  <div class="treat-block" id="scale-steps-block">
    <h3>Several chemicals in sequence</h3>
    <form id="scale-steps-form" class="inputs" novalidate autocomplete="off">
      <p class="hint">Each step doses one chemical to a target (or a fixed dose) on the water the step before left.</p>
      <div id="scale-steps" class="scale-steps"></div>
      <button type="button" id="scale-step-add">Add a step</button>
      <p id="scale-steps-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="scale-steps-results" data-state="empty">
      <div class="table-wrap" tabindex="0" role="region" aria-label="The water after each step">
        <table id="scale-steps-table">
          <caption>The water after each step</caption>
          <thead><tr><th scope="col">Step</th><th scope="col" class="num">Dose <span class="unit">(mg/L)</span></th>
            <th scope="col" class="num">pH</th><th scope="col" class="num">LSI</th>
            <th scope="col" class="num">CCPP <span class="unit">(mg/L as CaCO₃)</span></th>
            <th scope="col" class="num">Alkalinity <span class="unit">(mg/L as CaCO₃)</span></th>
            <th scope="col" class="num">Hardness <span class="unit">(mg/L as CaCO₃)</span></th>
            <th scope="col">Note</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <aside class="cautions" aria-labelledby="scale-steps-cautions-title">
        <h4 id="scale-steps-cautions-title">Before you dose these chemicals in sequence</h4>
        <ul id="scale-steps-cautions"><li>Confirm any dose with a jar or bench test; guard against overfeed; local codes and licensed operators decide.</li></ul>
      </aside>
    </div>
  </div>
  <div class="treat-block" id="scale-blend-block">
    <h3>Blend with another water</h3>
    <form id="scale-blend-form" class="inputs" novalidate autocomplete="off">
      ${field("scale-blend-with", "The other water", "an example water", { select: true })}
      ${field("scale-blend-f1", "Flow fraction of the water above", "0 to 1", { value: "0.7" })}
      ${field("scale-blend-f2", "Flow fraction of the other water", "0 to 1; the two add up to 1", { value: "0.3" })}
      <p id="scale-blend-error" class="error" aria-live="polite"></p>
    </form>
    <div class="results" id="scale-blend-results" data-state="empty">
      <div class="table-wrap" tabindex="0" role="region" aria-label="The blend">
        <table id="scale-blend-table">
          <caption>The two waters and their blend <span class="unit">(component totals mixed by flow; the blend's pH from its own equilibrium)</span></caption>
          <thead><tr><th scope="col">Quantity</th><th scope="col" class="num">Water above</th><th scope="col" class="num">Other water</th><th scope="col" class="num">Blend</th></tr></thead>
          <tbody></tbody>
        </table>
      </div>
      <div id="scale-blend-warnings" class="treat-warning" role="status" hidden></div>
    </div>
  </div>`;

const BLEND_INPUTS = ["scale-blend-with", "scale-blend-f1", "scale-blend-f2"];
const DOSE_INPUTS = ["scale-dose-chemical", "scale-dose-target-kind", "scale-dose-target", "scale-dose-flow", "scale-dose-flow-unit"];
const INDEX_INPUTS = ["scale-temperatures", "scale-pco2"];

export class ScaleView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "job-scale");
    // the whole width of the section's grid (its first row is the heading); static markup only
    mountBody(this.section, "job-body scale-body", MARKUP,
      { gridColumn: "1 / -1", display: "grid", gap: "0.9rem", minWidth: "0" });
    this.inputs = Object.fromEntries([...INDEX_INPUTS, ...DOSE_INPUTS, ...BLEND_INPUTS].map((id) => [id, byId(doc, id)]));
    this.messages = {
      indices: new FieldMessages(doc, byId(doc, "scale-form"), "scale-error"),
      dose: new FieldMessages(doc, byId(doc, "scale-dose-form"), "scale-dose-error"),
      steps: new FieldMessages(doc, byId(doc, "scale-steps-form"), "scale-steps-error"),
      blend: new FieldMessages(doc, byId(doc, "scale-blend-form"), "scale-blend-error"),
    };
    this.results = {
      indices: byId(doc, "scale-results"),
      dose: byId(doc, "scale-dose-results"),
      steps: byId(doc, "scale-steps-results"),
      blend: byId(doc, "scale-blend-results"),
    };
    this.stepsBox = byId(doc, "scale-steps");
    this.stepCount = 0;
    for (const form of this.section.querySelectorAll("form")) form.addEventListener("submit", (e) => e.preventDefault());
    this.fill(this.inputs["scale-dose-flow-unit"], FLOW_UNITS);
    this.fill(this.inputs["scale-dose-target-kind"], [["LSI", "LSI"], ["CCPP", "CCPP (mg/L as CaCO₃)"]]);
    this.chemicals = [];
  }

  fill(select, pairs) {
    fillOptions(select, pairs);
  }

  /** @param {{id: string, name: string}[]} chemicals  the dosing chemicals (core "chemicals") */
  setChemicals(chemicals) {
    this.chemicals = chemicals.map((c) => [c.id, `${prettyFormula(c.id)}: ${c.name}`]);
    this.fill(this.inputs["scale-dose-chemical"], this.chemicals);
    for (let i = 0; i < this.stepCount; i += 1) {
      const el = this.doc.getElementById(`scale-step-${i}-chemical`);
      const keep = el.value;
      this.fill(el, this.chemicals);
      if (keep) el.value = keep;
    }
  }

  /** @returns {Record<string, string>} raw text of the job's fixed inputs */
  read() {
    return readInputs(this.inputs);
  }

  /** @returns {{chemical: string, kind: string, value: string}[]} the sequence's rows */
  readSteps() {
    const rows = [];
    for (let i = 0; i < this.stepCount; i += 1) {
      rows.push({
        chemical: byId(this.doc, `scale-step-${i}-chemical`).value,
        kind: byId(this.doc, `scale-step-${i}-kind`).value,
        value: byId(this.doc, `scale-step-${i}-value`).value,
      });
    }
    return rows;
  }

  /** @param {{chemical: string, kind: string, value: string}[]} rows  replace the sequence */
  setSteps(rows) {
    this.stepsBox.replaceChildren();
    this.stepCount = 0;
    for (const row of rows) this.addStep(row);
  }

  /** Append a step row. */
  addStep(row = { chemical: "", kind: "target_pH", value: "" }) {
    const i = this.stepCount;
    this.stepCount += 1;
    const box = this.doc.createElement("div");
    box.className = "water-row scale-step";
    box.dataset.step = String(i);
    box.innerHTML = `
      <div class="field"><label for="scale-step-${i}-chemical">Step ${i + 1}: chemical</label>
        <select id="scale-step-${i}-chemical" aria-describedby="scale-step-${i}-chemical-error"></select>
        <p id="scale-step-${i}-chemical-error" class="error" aria-live="polite"></p></div>
      <div class="field"><label for="scale-step-${i}-kind">Target or dose</label>
        <select id="scale-step-${i}-kind" aria-describedby="scale-step-${i}-kind-error"></select>
        <p id="scale-step-${i}-kind-error" class="error" aria-live="polite"></p></div>
      <div class="field"><label for="scale-step-${i}-value">Value</label>
        <input id="scale-step-${i}-value" type="text" inputmode="decimal" spellcheck="false" aria-describedby="scale-step-${i}-value-error">
        <p id="scale-step-${i}-value-error" class="error" aria-live="polite"></p></div>
      <button type="button" id="scale-step-${i}-remove" class="water-remove">Remove step ${i + 1}</button>`;
    this.stepsBox.append(box);
    const chem = byId(this.doc, `scale-step-${i}-chemical`);
    this.fill(chem, this.chemicals);
    if (row.chemical) chem.value = row.chemical;
    const kind = byId(this.doc, `scale-step-${i}-kind`);
    this.fill(kind, STEP_KINDS);
    kind.value = STEP_KINDS.some(([k]) => k === row.kind) ? row.kind : "target_pH";
    byId(this.doc, `scale-step-${i}-value`).value = row.value ?? "";
    for (const id of [`scale-step-${i}-chemical`, `scale-step-${i}-kind`, `scale-step-${i}-value`]) {
      const el = byId(this.doc, id);
      el.addEventListener(el.tagName === "SELECT" ? "change" : "input", () => this.onStepChange?.(id));
    }
    byId(this.doc, `scale-step-${i}-remove`).addEventListener("click", () => this.onStepRemove?.(i));
    return i;
  }

  /**
   * @param {string} id  input id
   * @param {string} value  text or option value
   * @returns {boolean}  false when a select has no such option
   */
  write(id, value) {
    const el = this.inputs[id] ?? this.doc.getElementById(id);
    return el ? writeInput(el, value) : false;
  }

  /** @param {"indices"|"dose"|"steps"} block @param {Record<string, string>} messages */
  showErrors(block, messages) {
    this.messages[block].show(messages);
  }

  /** @param {"indices"|"dose"|"steps"} block @param {boolean} busy */
  setBusy(block, busy) {
    markBusy(this.results[block], busy);
  }

  /** @param {"indices"|"dose"|"steps"} block @param {"current"|"stale"|"empty"} state @param {string} [note] */
  setResultState(block, state, note) {
    markResults(this.results[block], state, note);
  }

  /** Count one drawn result of a block (data-<block>-drawn on #job-scale). */
  markDrawn(block) {
    countDrawn(this.section, `${block}Drawn`);
  }

  /** @param {string} text @param {boolean} [stale] */
  setWater(text, stale = false) {
    showWater(byId(this.doc, "scale-water"), text, stale);
  }

  para(text, tag = "p") {
    return para(this.doc, text, tag);
  }

  cell(text, value, key, tag = "td") {
    return numberCell(this.doc, text, value, key, tag);
  }

  /**
   * Show the indices block, or clear it (null) so that no stale number stands beside an error.
   *
   * @param {object|null} cc  the core's calcium_carbonate block (with uncertainty), or null
   * @param {{verdict: string, tendency: string, methodShort: string, method: string, notes: string[],
   *          ranges: object}} [words]
   */
  renderIndices(cc, words = null) {
    const body = byId(this.doc, "scale-indices").tBodies[0];
    const verdict = byId(this.doc, "scale-verdict");
    verdict.textContent = words?.verdict ?? "";
    verdict.dataset.tendency = words?.tendency ?? "";
    byId(this.doc, "scale-method").textContent = words?.methodShort ?? "";
    byId(this.doc, "scale-method-detail").textContent = words?.method ?? "";
    byId(this.doc, "scale-notes").replaceChildren(...(words?.notes ?? []).map((n) => this.para(n, "li")));
    const temps = byId(this.doc, "scale-temperature-table").tBodies[0];
    if (!cc) {
      body.replaceChildren();
      temps.replaceChildren();
      return;
    }
    const values = {
      LSI: cc.LSI, pHs: cc.pHs, RSI: cc.RSI, CCPP: cc.CCPP_mg_per_L_as_CaCO3, pH_after_CCPP: cc.pH_after_CCPP,
      CCPP_open: cc.CCPP_open_mg_per_L_as_CaCO3, pH_after_CCPP_open: cc.pH_after_CCPP_open,
    };
    const ranges = words?.ranges ?? {};
    const rows = [];
    for (const [key, label, unit, digits, signed] of INDEX_ROWS) {
      if (!(key in values) || values[key] === undefined) continue;
      const v = values[key];
      const tr = this.doc.createElement("tr");
      tr.dataset.key = key;
      const th = rowHead(this.doc, label, unit);
      const fmt = (x) => (signed && x > 0 ? "+" : "") + fixed(x, digits);
      const range = ranges[key];
      const rangeCell = this.cell(range ? `${fmt(range[0])} to ${fmt(range[1])}` : "—", null, "range");
      rangeCell.dataset.low = range ? String(range[0]) : "";
      rangeCell.dataset.high = range ? String(range[1]) : "";
      tr.append(th, this.cell(v === null ? "not computed" : fmt(v), v, "value"), rangeCell);
      rows.push(tr);
    }
    body.replaceChildren(...rows);
    temps.replaceChildren(...(cc.at_temperatures || []).map((row) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.temperature = String(row.temperature_C);
      const th = this.doc.createElement("th");
      th.scope = "row";
      th.textContent = fixed(row.temperature_C, 1);
      const signed = (x, d) => signedFixed(x, d);
      tr.append(th,
        this.cell(fixed(row.pH, 2), row.pH, "pH"),
        this.cell(signed(row.LSI, 2), row.LSI, "LSI"),
        this.cell(fixed(row.RSI, 2), row.RSI, "RSI"),
        this.cell(signed(row.CCPP_mg_per_L_as_CaCO3, 1), row.CCPP_mg_per_L_as_CaCO3, "CCPP"),
        this.cell(fixed(row.pH_after_CCPP, 2), row.pH_after_CCPP, "pH_after_CCPP"));
      const t = this.doc.createElement("td");
      t.dataset.key = "tendency";
      t.textContent = row.tendency === "deposit" ? "deposits" : row.tendency === "dissolve" ? "dissolves" : (row.tendency ?? "—");
      tr.append(t);
      return tr;
    }));
  }

  /** @param {string} text  what the plots' bands hold */
  setBandNote(text) {
    byId(this.doc, "scale-band-note").textContent = text;
  }

  value(id, number, text, empty = "—") {
    showValue(byId(this.doc, id), number, text, empty);
  }

  /**
   * Show a dose to a target index, or clear it (null).
   *
   * @param {object|null} r  the core's dose result
   */
  renderDose(r) {
    const status = byId(this.doc, "scale-dose-status");
    status.textContent = r?.message ? r.message.charAt(0).toUpperCase() + r.message.slice(1) + "." : "";
    status.dataset.status = r?.status ?? "";
    this.value("scale-dose-mg", r?.dose_mg_per_L, `${sciNumber(r?.dose_mg_per_L, 4)} mg/L of ${prettyFormula(r?.chemical?.id ?? "")}`);
    this.value("scale-dose-mmol", r?.dose_mmol_per_L, `${sciNumber(r?.dose_mmol_per_L, 4)} mmol/L`);
    this.value("scale-dose-kg-per-d", r?.pure_chemical_kg_per_d, `${plainNumber(r?.pure_chemical_kg_per_d)} kg/d`,
      r ? "give the plant flow" : "—");
    const reached = byId(this.doc, "scale-dose-reached");
    const w = r?.reached;
    reached.dataset.ph = w ? String(w.pH) : "";
    reached.dataset.lsi = w ? String(w.LSI ?? "") : "";
    reached.dataset.ccpp = w ? String(w.CCPP_mg_per_L_as_CaCO3 ?? "") : "";
    const sign = (x, d) => signedFixed(x, d);
    reached.textContent = w
      ? `pH ${fixed(w.pH, 2)}, LSI ${sign(w.LSI, 2)}, CCPP ${sign(w.CCPP_mg_per_L_as_CaCO3, 1)} mg/L as CaCO₃`
      : "—";
    const formed = r?.precipitation?.formed ?? [];
    byId(this.doc, "scale-dose-precipitated").textContent = !r ? "—" : formed.length
      ? formed.map((s) => `${s.name} (${prettyFormula(s.formula)}) ${sciNumber(s.mg_per_L, 3)} mg/L` +
        (Number.isFinite(s.kg_per_d) ? `, ${plainNumber(s.kg_per_d)} kg/d` : "")).join("; ")
      : `nothing (allowed to form: ${(r.precipitation?.allowed ?? []).join(", ") || "none"})`;
    showLines(byId(this.doc, "scale-dose-warnings"), r?.warnings ?? []);
    if (r?.cautions?.length) this.setCautions("scale-dose-cautions", r.cautions);
  }

  /** @param {string} id  the list @param {string[]} lines  the core's cautions */
  setCautions(id, lines) {
    fillList(byId(this.doc, id), lines);
  }

  /**
   * Show a sequence's steps, or clear them (null).
   *
   * @param {object|null} r  the core's treat result
   */
  renderSteps(r) {
    const body = byId(this.doc, "scale-steps-table").tBodies[0];
    if (!r) {
      body.replaceChildren();
      return;
    }
    const sign = (x, d) => signedFixed(x, d);
    const rows = [];
    const start = r.water_before;
    const first = this.doc.createElement("tr");
    first.dataset.step = "0";
    first.append(this.cell("Raw water", null, "name", "th"), this.cell("—", null, "dose"),
      this.cell(fixed(start.pH, 2), start.pH, "pH"), this.cell(sign(start.LSI, 2), start.LSI, "LSI"),
      this.cell(sign(start.CCPP_mg_per_L_as_CaCO3, 1), start.CCPP_mg_per_L_as_CaCO3, "CCPP"),
      this.cell(fixed(start.total_alkalinity_mg_per_L_as_CaCO3, 1), start.total_alkalinity_mg_per_L_as_CaCO3, "alkalinity"),
      this.cell(fixed(start.total_hardness_mg_per_L_as_CaCO3, 1), start.total_hardness_mg_per_L_as_CaCO3, "hardness"),
      this.para("", "td"));
    rows.push(first);
    for (const s of r.steps) {
      const a = s.water_after;
      const tr = this.doc.createElement("tr");
      tr.dataset.step = String(s.step);
      tr.dataset.status = s.status ?? "";
      const formed = (s.precipitation?.formed ?? []).map((f) => `${f.name} ${sciNumber(f.mg_per_L, 3)} mg/L`);
      const note = [s.message, ...formed.map((f) => `precipitates ${f}`), ...(s.warnings ?? [])].filter(Boolean).join("; ");
      tr.append(this.cell(`${s.step}. ${prettyFormula(s.chemical.id)}`, null, "name", "th"),
        this.cell(sciNumber(s.dose_mg_per_L, 4), s.dose_mg_per_L, "dose"),
        this.cell(fixed(a.pH, 2), a.pH, "pH"), this.cell(sign(a.LSI, 2), a.LSI, "LSI"),
        this.cell(sign(a.CCPP_mg_per_L_as_CaCO3, 1), a.CCPP_mg_per_L_as_CaCO3, "CCPP"),
        this.cell(fixed(a.total_alkalinity_mg_per_L_as_CaCO3, 1), a.total_alkalinity_mg_per_L_as_CaCO3, "alkalinity"),
        this.cell(fixed(a.total_hardness_mg_per_L_as_CaCO3, 1), a.total_hardness_mg_per_L_as_CaCO3, "hardness"),
        this.para(note, "td"));
      rows.push(tr);
    }
    body.replaceChildren(...rows);
    if (r.cautions?.length) this.setCautions("scale-steps-cautions", r.cautions);
  }

  /** @param {{id: string, title: string}[]} waters  the example waters offered for a blend */
  setBlendWaters(waters) {
    this.fill(this.inputs["scale-blend-with"], waters.map((w) => [w.id, w.title]));
  }

  /**
   * Show a blend, or clear it (null).
   *
   * @param {object|null} r  the core's blend result
   */
  renderBlend(r) {
    const body = byId(this.doc, "scale-blend-table").tBodies[0];
    showLines(byId(this.doc, "scale-blend-warnings"), r?.warnings ?? []);
    if (!r) {
      body.replaceChildren();
      return;
    }
    const quantities = [
      ["fraction", "Flow fraction", "", (v) => fixed(v, 3)],
      ["temperature_C", "Temperature", "°C", (v) => fixed(v, 1)],
      ["pH", "pH", "", (v) => fixed(v, 2)],
      ["total_alkalinity_mg_per_L_as_CaCO3", "Total alkalinity", "mg/L as CaCO₃", (v) => fixed(v, 1)],
      ["total_hardness_mg_per_L_as_CaCO3", "Total hardness", "mg/L as CaCO₃", (v) => fixed(v, 1)],
      ["calcium_mg_per_L", "Calcium", "mg/L", (v) => fixed(v, 1)],
      ["LSI", "LSI", "", (v) => signedFixed(v, 2)],
      ["CCPP_mg_per_L_as_CaCO3", "CCPP", "mg/L as CaCO₃", (v) => signedFixed(v, 1)],
    ];
    const cols = [["above", { ...r.waters[0], fraction: r.fractions[0] }], ["other", { ...r.waters[1], fraction: r.fractions[1] }],
      ["blend", { ...r.blend, fraction: 1 }]];
    body.replaceChildren(...quantities.map(([k, label, unit, fmt]) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.key = k;
      tr.append(rowHead(this.doc, label, unit), ...cols.map(([key, w]) => this.cell(fmt(w[k]), w[k], key)));
      return tr;
    }));
  }

  /**
   * @param {(block: "indices"|"dose"|"steps"|"blend", id: string) => void} onChange  an input changed
   * @param {(temperature: number) => void} onPreset  a temperature button was pressed
   * @param {() => void} onAddStep
   * @param {(i: number) => void} onRemoveStep
   */
  bind(onChange, onPreset, onAddStep, onRemoveStep) {
    for (const id of INDEX_INPUTS) this.inputs[id].addEventListener("input", () => onChange("indices", id));
    for (const id of DOSE_INPUTS) {
      const el = this.inputs[id];
      el.addEventListener(el.tagName === "SELECT" ? "change" : "input", () => onChange("dose", id));
    }
    for (const id of BLEND_INPUTS) {
      const el = this.inputs[id];
      el.addEventListener(el.tagName === "SELECT" ? "change" : "input", () => onChange("blend", id));
    }
    for (const button of this.section.querySelectorAll(".scale-temp-preset")) {
      button.addEventListener("click", () => onPreset(Number(button.dataset.temp)));
    }
    byId(this.doc, "scale-step-add").addEventListener("click", onAddStep);
    this.onStepChange = (id) => onChange("steps", id);
    this.onStepRemove = onRemoveStep;
  }

  /** @param {string} id @returns {boolean}  a drop-down (changes take effect at once) */
  isChoice(id) {
    return (this.inputs[id] ?? this.doc.getElementById(id))?.tagName === "SELECT";
  }

  /** @returns {boolean} whether the section is laid out (visible) now */
  isVisible() {
    return isShown(this.section);
  }
}
