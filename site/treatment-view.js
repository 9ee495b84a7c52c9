// DOM code of the "treatment" section (titration, buffer intensity, dose to a target pH).
// Elements are looked up once; text goes in through textContent only, so core messages and
// user text are always escaped. No chemistry here: numbers arrive ready from treatment.js.

import { exportNumber, fixed, plainNumber, prettyFormula, sciNumber } from "./format.js";
import { FieldMessages, markResults } from "./view.js";
import {
  byId, countDrawn, fillList, markBusy, para, rowHead, showLines, showValue, showWater, writeInput,
} from "./job-view.js";

/** Input ids of each block, in form order; each has a #<id>-error beside it. */
export const TITRATION_INPUTS = ["titrant-select", "titrant-conc", "titrant-conc-unit", "sample-volume", "titration-end-ph", "titration-axis"];
export const BUFFER_INPUTS = ["capacity-from-ph", "capacity-to-ph", "buffer-log"];
export const DOSE_INPUTS = ["dose-chemical", "dose-product", "dose-target-ph", "dose-strength", "dose-density", "dose-flow", "dose-flow-unit"];

/** Plant flow units the core accepts, with the words shown: the core's catalogue (catalogues.js). */
import { FLOW_UNITS } from "./catalogues.js";
export { FLOW_UNITS };

/** A number for a results cell: about four significant figures, "—" when missing. */
function short(value, digits = 4) {
  return sciNumber(value, digits);
}

export class TreatmentView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "treatment-section");
    const all = [...TITRATION_INPUTS, ...BUFFER_INPUTS, ...DOSE_INPUTS];
    this.inputs = Object.fromEntries(all.map((id) => [id, byId(doc, id)]));
    this.messages = {
      titration: new FieldMessages(doc, byId(doc, "titration-form"), "titration-error"),
      buffer: new FieldMessages(doc, byId(doc, "buffer-form"), "buffer-error"),
      dose: new FieldMessages(doc, byId(doc, "dose-form"), "dose-error"),
    };
    this.waterLine = byId(doc, "treatment-water");
    this.titrationWarning = byId(doc, "titration-warning");
    this.titrantHint = byId(doc, "titrant-select-hint");
    this.concHint = byId(doc, "titrant-conc-hint");
    this.endPoints = byId(doc, "titration-endpoints");
    this.productSource = byId(doc, "dose-product-source");
    this.productSourceText = byId(doc, "dose-product-source-text");
    this.bufferPlotHost = byId(doc, "plot-buffer");
    this.equivalenceTable = byId(doc, "equivalence-table");
    this.bufferAtPH = byId(doc, "buffer-at-ph");
    this.capacity = byId(doc, "buffer-capacity");
    this.doseOut = {
      mmol: byId(doc, "dose-result-mmol"),
      mg: byId(doc, "dose-result-mg"),
      meq: byId(doc, "dose-result-meq"),
      pureKg: byId(doc, "dose-pure-kg-per-d"),
      productMg: byId(doc, "dose-product-mg"),
      kg: byId(doc, "dose-feed-kg-per-d"),
      Lh: byId(doc, "dose-feed-L-per-h"),
      gal: byId(doc, "dose-feed-gal-per-d"),
    };
    this.doseWarnings = byId(doc, "dose-warnings");
    this.doseHint = byId(doc, "dose-chemical-hint");
    this.beforeAfter = byId(doc, "dose-before-after");
    this.results = {
      titration: byId(doc, "titration-results"),
      buffer: byId(doc, "buffer-results"),
      dose: byId(doc, "dose-results"),
    };
    for (const form of this.section.querySelectorAll("form")) {
      form.addEventListener("submit", (event) => event.preventDefault());
    }
    const unit = this.inputs["dose-flow-unit"];
    unit.replaceChildren(
      ...FLOW_UNITS.map(([value, text]) => {
        const option = doc.createElement("option");
        option.value = value;
        option.textContent = text;
        return option;
      }),
    );
  }

  /**
   * Fill the chemical and titrant lists.
   *
   * @param {{id: string, name: string}[]} chemicals  from the core's "chemicals" method
   * @param {{id: string, name: string}[]} libraryTitrants  library systems that can be added
   */
  setChemicals(chemicals, libraryTitrants) {
    const option = (value, text) => {
      const o = this.doc.createElement("option");
      o.value = value;
      o.textContent = text;
      return o;
    };
    const common = (label) => {
      const group = this.doc.createElement("optgroup");
      group.label = label;
      group.append(...chemicals.map((c) => option(c.id, `${prettyFormula(c.id)}: ${c.name}`)));
      return group;
    };
    const titrants = [common("Treatment chemicals")];
    if (libraryTitrants.length) {
      const group = this.doc.createElement("optgroup");
      group.label = "Library acid or base (added in its neutral form)";
      group.append(...libraryTitrants.map((s) => option(s.id, s.name)));
      titrants.push(group);
    }
    this.inputs["titrant-select"].replaceChildren(...titrants);
    this.inputs["dose-chemical"].replaceChildren(common("Treatment chemicals"));
  }

  /** @returns {Record<string, string>} raw text of every input, by id (a checkbox: "true" or "false") */
  read() {
    return Object.fromEntries(Object.entries(this.inputs).map(([id, el]) => [id, el.type === "checkbox" ? String(el.checked) : el.value]));
  }

  /**
   * Offer the products of one chemical as presets (the first option is "type your own").
   *
   * @param {{id: string, name: string, strength_pct: number, density_kg_per_L: number}[]} products
   */
  setProducts(products) {
    const select = this.inputs["dose-product"];
    const keep = select.value;
    const first = select.options[0];
    select.replaceChildren(first, ...products.map((p) => {
      const o = this.doc.createElement("option");
      o.value = p.id;
      o.textContent = `${p.name} (${fixed(p.density_kg_per_L, 3)} kg/L)`;
      return o;
    }));
    select.value = products.some((p) => p.id === keep) ? keep : "";
    select.disabled = products.length === 0;
  }

  /** @param {string|null} text  where the chosen product's figures come from (null hides the line) */
  setProductSource(text) {
    this.productSourceText.textContent = text ?? "";
    this.productSource.hidden = !text;
  }

  /** @param {string} text  what the titrant concentration means (molarity, normality) */
  setConcentrationHint(text) {
    this.concHint.textContent = text;
  }

  /** @param {boolean} log  the buffer plot's β axis is logarithmic (data-log on its host) */
  markBufferLog(log) {
    this.bufferPlotHost.dataset.log = String(log);
  }

  /** @param {string[]} lines  one sentence per end point ("pH 4.5 end point: 12.3 mL → ...") */
  renderEndPoints(lines) {
    fillList(this.endPoints, lines);
  }

  /**
   * @param {string} id  input id
   * @param {string} value  text or option value
   * @returns {boolean}  false when a select has no such option
   */
  write(id, value) {
    const el = this.inputs[id];
    if (el.type === "checkbox") {
      if (!["true", "false"].includes(String(value))) return false;
      el.checked = String(value) === "true";
      return true;
    }
    return writeInput(el, value);
  }

  /**
   * Show messages beside the inputs of one block and clear the others of that block.
   *
   * @param {"titration"|"buffer"|"dose"} block
   * @param {Record<string, string>} messages  input id (or "block") -> message
   */
  showErrors(block, messages) {
    this.messages[block].show(messages);
  }

  /** @param {"titration"|"buffer"|"dose"} block @param {boolean} busy */
  setBusy(block, busy) {
    markBusy(this.results[block], busy);
  }

  /**
   * @param {"titration"|"buffer"|"dose"} block
   * @param {"current"|"stale"|"empty"} state  whether its figures match the inputs on screen
   * @param {string} [note]  why not, for "stale"
   */
  setResultState(block, state, note) {
    markResults(this.results[block], state, note);
  }

  /** @param {boolean} gas  the titrant is a gas: its concentration, volume and axis do not apply */
  setGasTitrant(gas) {
    for (const id of ["titrant-conc", "titrant-conc-unit", "sample-volume", "titration-axis"]) this.inputs[id].disabled = gas;
  }

  /** @param {string} id  input id @returns {boolean}  a drop-down (changes take effect at once) */
  isChoice(id) {
    return this.inputs[id].tagName === "SELECT" || this.inputs[id].type === "checkbox";
  }

  /** Count one drawn result of a block on the section element (data-<block>-drawn). */
  markDrawn(block) {
    countDrawn(this.section, `${block}Drawn`);
  }

  /**
   * @param {string} text  which water the section works on
   * @param {boolean} [stale]  the water above cannot be used now: say so prominently
   */
  setWater(text, stale = false) {
    showWater(this.waterLine, text, stale);
  }

  /** @param {string} text  hint under the titrant list */
  setTitrantHint(text) {
    this.titrantHint.textContent = text;
  }

  /** @param {string} text  hint under the dose chemical */
  setDoseHint(text) {
    this.doseHint.textContent = text;
  }

  /** @param {string[]} lines  warnings about the titration ("" or [] hides the line) */
  setTitrationWarning(lines) {
    showLines(this.titrationWarning, lines);
  }

  para(text) {
    return para(this.doc, text);
  }

  /**
   * @param {{kind: string, pH: number, mL: number|null, mmol: number, mg: number, caco3: number|null}[]} rows
   * @param {string} caption
   */
  renderEquivalence(rows, caption) {
    this.equivalenceTable.caption.textContent = caption;
    const body = this.equivalenceTable.tBodies[0];
    if (!rows.length) {
      const tr = this.doc.createElement("tr");
      const td = this.doc.createElement("td");
      td.colSpan = 6;
      td.className = "empty";
      td.textContent = "No end point within this curve.";
      tr.append(td);
      body.replaceChildren(tr);
      return;
    }
    body.replaceChildren(
      ...rows.map((row) => {
        const tr = this.doc.createElement("tr");
        tr.dataset.kind = row.key;
        const name = this.doc.createElement("th");
        name.scope = "row";
        name.textContent = row.kind;
        tr.append(
          name,
          this.cell(fixed(row.pH, 2), row.pH, "pH"),
          this.cell(row.mL === null ? "—" : short(row.mL), row.mL, "titrant_mL"),
          this.cell(short(row.mmol), row.mmol, "dose_mmol_per_L"),
          this.cell(short(row.mg), row.mg, "dose_mg_per_L"),
          this.cell(row.caco3 === null ? "—" : fixed(row.caco3, 1), row.caco3, "as_CaCO3_mg_per_L"),
        );
        return tr;
      }),
    );
  }

  /** Remove the equivalence rows (no curve). */
  clearEquivalence() {
    this.equivalenceTable.tBodies[0].replaceChildren();
    this.endPoints.replaceChildren();
  }

  /**
   * @param {number|null} betaEq  buffer intensity at the water's pH [eq/(L pH)], null to clear
   * @param {number|null} pH  the water's pH [-]
   */
  setBufferAtPH(betaEq, pH) {
    this.value(this.bufferAtPH, betaEq, betaEq === null ? "—" : `${short(betaEq * 1e3, 3)} mmol/L per pH unit at pH ${fixed(pH, 2)}`);
  }

  /** @param {{from_pH: number, to_pH: number, base_meq_per_L: number, as_CaCO3_mg_per_L: number}|null} cap */
  setCapacity(cap) {
    if (!cap) {
      this.capacity.textContent = "";
      this.capacity.dataset.value = "";
      return;
    }
    const acid = cap.base_meq_per_L < 0;
    const amount = Math.abs(cap.base_meq_per_L);
    this.capacity.dataset.value = String(cap.base_meq_per_L);
    this.capacity.textContent =
      `From pH ${fixed(cap.from_pH, 2)} to ${fixed(cap.to_pH, 2)} this water takes ${short(amount, 3)} meq/L of ` +
      `${acid ? "strong acid" : "strong base"} (${short(Math.abs(cap.as_CaCO3_mg_per_L), 3)} mg/L as CaCO₃).`;
  }

  /**
   * Show a dose result, or clear it (null) so that no stale number stays beside an error.
   *
   * @param {object|null} r  the core's dose result
   */
  renderDose(r) {
    const o = this.doseOut;
    const p = r?.product ?? {};
    this.value(o.mmol, r?.dose_mmol_per_L ?? null, `${short(r?.dose_mmol_per_L)} mmol/L`);
    this.value(o.mg, r?.dose_mg_per_L ?? null, `${short(r?.dose_mg_per_L)} mg/L`);
    this.value(o.meq, r?.dose_meq_per_L ?? null, `${short(r?.dose_meq_per_L)} meq/L`);
    // Without a result every figure is a dash; with one, say what is missing for the empty ones.
    const missing = (text) => (r ? text : "—");
    // Plant quantities as plain grouped numbers (2,314 kg/d), never in powers of ten.
    this.value(o.pureKg, r?.pure_chemical_kg_per_d ?? null, `${plainNumber(r?.pure_chemical_kg_per_d)} kg/d`,
      missing("give the plant flow"));
    this.value(o.productMg, p.product_mg_per_L ?? null, `${plainNumber(p.product_mg_per_L)} mg/L of product`,
      missing("give the product strength"));
    this.value(o.kg, p.feed_kg_per_d ?? null, `${plainNumber(p.feed_kg_per_d)} kg/d`,
      missing("give the product strength and the plant flow"));
    this.value(o.Lh, p.feed_L_per_h ?? null, `${plainNumber(p.feed_L_per_h)} L/h`, missing("L/h needs the density"));
    this.value(o.gal, p.feed_gal_per_d ?? null, `${plainNumber(p.feed_gal_per_d)} gal/d`, missing("gal/d needs the density"));
    this.doseWarnings.replaceChildren(...(r?.warnings ?? []).map((w) => this.para(w)));
    this.doseWarnings.hidden = !(r?.warnings ?? []).length;
    this.renderBeforeAfter(r?.change ?? null);
  }

  /** @param {object|null} change  the core's before/after/change of each quantity */
  renderBeforeAfter(change) {
    const body = this.beforeAfter.tBodies[0];
    if (!change) {
      body.replaceChildren();
      return;
    }
    // [key, label, unit, display, number in the unit shown (for CSV)]
    const same = (v) => v;
    const rows = [
      ["pH", "pH", "", (v) => fixed(v, 2), same],
      ["total_alkalinity_mg_per_L_as_CaCO3", "Total alkalinity, to pH 4.5", "mg/L as CaCO₃", (v) => fixed(v, 1), same],
      ["total_alkalinity_meq_per_L", "Total alkalinity, to pH 4.5", "meq/L", (v) => fixed(v, 3), same],
      ["DIC_mmol_per_L", "Dissolved inorganic carbon", "mmol/L", (v) => fixed(v, 3), same],
      ["CO2_mg_per_L", "Free CO₂ (H₂CO₃*)", "mg/L as CO₂", (v) => short(v, 3), same],
      ["ionic_strength_M", "Ionic strength", "mmol/L", (v) => fixed(v * 1e3, 3), (v) => v * 1e3],
    ];
    body.replaceChildren(
      ...rows
        .filter(([key]) => change[key])
        .map(([key, label, unit, fmt, inUnit]) => {
          const c = change[key];
          const tr = this.doc.createElement("tr");
          tr.dataset.key = key;
          const th = rowHead(this.doc, label, unit);
          const sign = (v) => (v > 0 ? `+${fmt(v)}` : fmt(v));
          tr.append(th,
            this.cell(fmt(c.before), c.before, "before", exportNumber(inUnit(c.before))),
            this.cell(fmt(c.after), c.after, "after", exportNumber(inUnit(c.after))),
            this.cell(sign(c.change), c.change, "change", exportNumber(inUnit(c.change))));
          return tr;
        }),
    );
  }

  value(el, number, text, empty = "—") {
    el.classList.toggle("missing", !showValue(el, number, text, empty));
  }

  /**
   * @param {string} text  shown
   * @param {number|null} value  raw number (data-value)
   * @param {string} key  data-key
   * @param {string} [exported]  the number in the column's unit, for CSV (data-export)
   */
  cell(text, value, key, exported) {
    const td = this.doc.createElement("td");
    td.className = "num";
    td.dataset.key = key;
    td.dataset.value = value === null || value === undefined ? "" : String(value);
    td.dataset.export = exported ?? exportNumber(typeof value === "number" ? value : null);
    td.textContent = text;
    return td;
  }

  /**
   * @param {(block: "titration"|"buffer"|"dose", id: string) => void} handler  an input changed
   */
  bindChange(handler) {
    const blocks = [["titration", TITRATION_INPUTS], ["buffer", BUFFER_INPUTS], ["dose", DOSE_INPUTS]];
    for (const [block, ids] of blocks) {
      for (const id of ids) {
        const el = this.inputs[id];
        el.addEventListener(el.tagName === "SELECT" || el.type === "checkbox" ? "change" : "input", () => handler(block, id));
      }
    }
  }
}
