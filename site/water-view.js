// DOM code of the "Equilibrium of a whole water" section (#water-section): the composition
// rows, the condition inputs, the messages beside them and the results. No chemistry here and
// no calls to the core; water.js decides what to show. Text goes in through textContent only.

import { embedSpeciesPlot } from "./plot.js";
import { exportNumber, fixed, prettyFormula, sciNumber, unitLabel } from "./format.js";
import { FieldMessages, markBusy, markResults } from "./view.js";

export { unitLabel };

function byId(doc, id) {
  const el = doc.getElementById(id);
  if (!el) throw new Error(`the page lacks #${id}`);
  return el;
}

/** Ids of the fixed (non-row) inputs, keyed by the name water.js uses for them. */
export const CONDITION_INPUTS = {
  temperature: "water-temperature",
  activity: "water-activity",
  iMode: "water-istrength-mode",
  iValue: "water-istrength-value",
  fixedPH: "water-fixed-ph",
  pco2: "water-pco2",
  measuredPH: "water-measured-ph",
  alkValue: "water-alk-value",
};

const I_VALUE_LABEL = {
  given: "Ionic strength (mol/L)",
  tds: "Total dissolved solids (mg/L)",
  conductance: "Specific conductance (µS/cm at 25 °C)",
};

/**
 * Embed the section's two plots (call once, after the page's other plots).
 *
 * @returns {Promise<{fraction: object, logc: object}>}  SpeciesPlot handles from plot.js
 */
export async function embedWaterPlots() {
  const fraction = await embedSpeciesPlot("fraction", "plot-water-fraction");
  const logc = await embedSpeciesPlot("logc", "plot-water-logc");
  return { fraction, logc };
}

/** Inputs, rows, messages and results of #water-section. */
export class WaterView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.section = byId(doc, "water-section");
    this.form = byId(doc, "water-form");
    this.systemsHost = byId(doc, "water-systems");
    this.ionsHost = byId(doc, "water-ions");
    this.inputs = Object.fromEntries(Object.entries(CONDITION_INPUTS).map(([k, id]) => [k, byId(doc, id)]));
    this.alkUnit = byId(doc, "water-alk-unit");
    this.measured = byId(doc, "water-measured");
    this.measuredFields = byId(doc, "water-measured-fields");
    this.iValueField = byId(doc, "water-istrength-value-field");
    this.iValueLabel = byId(doc, "water-istrength-value-label");
    this.formError = byId(doc, "water-error");
    this.results = byId(doc, "water-results");
    this.displayUnit = byId(doc, "water-display-unit");
    this.plotSystem = byId(doc, "water-plot-system");
    this.speciesTable = byId(doc, "water-species-table");
    this.componentsTable = byId(doc, "water-components-table");
    this.saturationTable = byId(doc, "water-saturation-table");
    this.complexes = byId(doc, "water-complexes");
    /** Solids the user lets form (ids), kept across redraws of the saturation table. */
    this.precipitate = new Set();
    this.trailTable = byId(doc, "water-trail-table");
    this.systemOptions = [];
    this.ionOptions = [];
    this.drawn = 0;
    this.messages = new FieldMessages(doc, this.section, "water-error");
    this.form.addEventListener("submit", (event) => event.preventDefault());
  }

  /** @param {"system"|"ion"} kind @param {number} i  put the keyboard focus on row i's list */
  focusRow(kind, i) {
    this.doc.getElementById(`water-${kind}-${i}-id`)?.focus();
  }

  /**
   * @param {"current"|"stale"|"empty"} state  whether the results match the inputs on screen
   * @param {string} [note]  why not, for "stale"/"empty"
   */
  setResultState(state, note) {
    markResults(this.results, state, note);
  }

  /**
   * @param {{id: string, name: string}[]} systems  library acid-base systems
   * @param {{id: string, name: string, formula: string}[]} ions  library strong ions
   */
  setLibrary(systems, ions) {
    this.systemOptions = systems.map((s) => [s.id, s.name]);
    this.ionOptions = ions.map((s) => [s.id, `${s.name} (${prettyFormula(s.formula)})`]);
  }

  // -- rows ----------------------------------------------------------------------------------

  field(idBase, labelText, control, hintText = null) {
    const wrap = this.doc.createElement("div");
    wrap.className = "field";
    const label = this.doc.createElement("label");
    label.htmlFor = control.id;
    label.textContent = labelText;
    if (hintText) {
      const unit = this.doc.createElement("span");
      unit.className = "unit";
      unit.textContent = ` ${hintText}`;
      label.append(unit);
    }
    wrap.append(label, control, this.errorLine(control.id));
    control.setAttribute("aria-describedby", `${control.id}-error`);
    return wrap;
  }

  errorLine(id) {
    const p = this.doc.createElement("p");
    p.id = `${id}-error`;
    p.className = "error";
    p.setAttribute("aria-live", "polite");
    return p;
  }

  textInput(id, value, mode = "decimal") {
    const input = this.doc.createElement("input");
    input.id = id;
    input.type = "text";
    input.inputMode = mode;
    input.spellcheck = false;
    input.value = value ?? "";
    return input;
  }

  select(id, options, value, customLabel) {
    const select = this.doc.createElement("select");
    select.id = id;
    const group = this.doc.createElement("optgroup");
    group.label = "Library";
    for (const [v, text] of options) {
      const option = this.doc.createElement("option");
      option.value = v;
      option.textContent = text;
      group.append(option);
    }
    const custom = this.doc.createElement("option");
    custom.value = "custom";
    custom.textContent = customLabel;
    select.append(group, custom);
    select.value = value;
    return select;
  }

  /**
   * Rebuild one list of rows; ids follow the position (#water-system-0-total, ...).
   *
   * @param {"system"|"ion"} kind
   * @param {object[]} rows  raw text of each row: {id, total, unit, name, pka, charge, mass}
   * @param {(kind: string, i: number, row: object) => {units: [string, string][], note?: string}} unitsFor
   *        the unit options [value, label] of a row
   */
  setRows(kind, rows, unitsFor) {
    const host = kind === "system" ? this.systemsHost : this.ionsHost;
    const nodes = rows.map((row, i) => this.buildRow(kind, i, row, unitsFor(kind, i, row)));
    host.replaceChildren(...nodes);
    if (!rows.length) {
      const empty = this.doc.createElement("p");
      empty.className = "hint";
      empty.textContent = kind === "system" ? "No acid-base system yet." : "No strong ion yet.";
      host.append(empty);
    }
  }

  buildRow(kind, i, row, { units, note }) {
    const base = `water-${kind}-${i}`;
    const isSystem = kind === "system";
    const div = this.doc.createElement("div");
    div.className = "water-row";
    div.id = base;
    div.dataset.kind = kind;
    div.dataset.index = String(i);

    const head = this.doc.createElement("div");
    head.className = "water-row-head";
    const idSelect = this.select(
      `${base}-id`,
      isSystem ? this.systemOptions : this.ionOptions,
      row.id,
      isSystem ? "Your own acid" : "Your own ion",
    );
    const remove = this.doc.createElement("button");
    remove.type = "button";
    remove.className = "water-remove";
    remove.id = `${base}-remove`;
    remove.dataset.action = "remove";
    remove.textContent = "Remove";
    remove.setAttribute("aria-label", `Remove ${isSystem ? "system" : "ion"} ${i + 1}`);
    const idField = this.field(base, isSystem ? `System ${i + 1}` : `Ion ${i + 1}`, idSelect);
    head.append(idField, remove);
    div.append(head);

    const custom = this.doc.createElement("div");
    custom.className = "water-custom";
    custom.id = `${base}-custom`;
    custom.hidden = row.id !== "custom";
    custom.append(this.field(base, "Name", this.textInput(`${base}-name`, row.name, "text")));
    if (isSystem) {
      custom.append(
        this.field(base, "pKa values", this.textInput(`${base}-pka`, row.pka), "(25 °C, comma separated, step 1 first)"),
        this.field(base, "Charge of the most protonated form", this.textInput(`${base}-charge`, row.charge, "numeric"), "(e.g. 0)"),
      );
    } else {
      custom.append(
        this.field(base, "Charge", this.textInput(`${base}-charge`, row.charge, "numeric"), "(e.g. 1 or −2)"),
        this.field(base, "Molar mass", this.textInput(`${base}-mass`, row.mass), "(g/mol, optional; needed for mg/L)"),
      );
    }
    div.append(custom);

    const amount = this.doc.createElement("div");
    amount.className = "field";
    const label = this.doc.createElement("label");
    label.htmlFor = `${base}-total`;
    label.textContent = isSystem ? "Total" : "Concentration";
    const pair = this.doc.createElement("div");
    pair.className = "water-pair";
    const total = this.textInput(`${base}-total`, row.total);
    total.setAttribute("aria-describedby", `${base}-total-error ${base}-unit-error`);
    const unit = this.doc.createElement("select");
    unit.id = `${base}-unit`;
    unit.setAttribute("aria-label", `Unit of ${isSystem ? "system" : "ion"} ${i + 1}`);
    pair.append(total, unit);
    amount.append(label, pair, this.errorLine(`${base}-total`), this.errorLine(`${base}-unit`));
    const hint = this.doc.createElement("p");
    hint.className = "hint";
    hint.id = `${base}-note`;
    hint.textContent = note || "";
    hint.hidden = !note;
    amount.append(hint);
    div.append(amount);
    this.fillUnits(unit, units, row.unit);
    if (note) total.disabled = true;
    return div;
  }

  fillUnits(select, units, wanted) {
    select.replaceChildren(
      ...units.map(([value, text]) => {
        const option = this.doc.createElement("option");
        option.value = value;
        option.textContent = text;
        return option;
      }),
    );
    const values = units.map(([v]) => v);
    if (values.includes(wanted)) {
      select.value = wanted;
    } else if (wanted) {
      // Keep a unit that does not fit visible, so the message beside it makes sense.
      const option = this.doc.createElement("option");
      option.value = wanted;
      option.textContent = `${wanted} (does not fit)`;
      select.append(option);
      select.value = wanted;
    } else {
      select.value = values.includes("mmol/L") ? "mmol/L" : values[0];
    }
  }

  /**
   * Update one row after its system/ion or molar mass changed.
   *
   * @param {"system"|"ion"} kind
   * @param {number} i  row position
   * @param {{units: [string, string][], note?: string}} info  unit options and a note
   * @param {boolean} isCustom  show the "your own" fields
   */
  updateRow(kind, i, { units, note }, isCustom) {
    const base = `water-${kind}-${i}`;
    byId(this.doc, `${base}-custom`).hidden = !isCustom;
    const unit = byId(this.doc, `${base}-unit`);
    const current = unit.value;
    const values = units.map(([v]) => v);
    this.fillUnits(unit, units, values.includes(current) ? current : null);
    const hint = byId(this.doc, `${base}-note`);
    hint.textContent = note || "";
    hint.hidden = !note;
    byId(this.doc, `${base}-total`).disabled = Boolean(note);
  }

  /** @returns {{systems: object[], ions: object[]}} raw text of every row */
  readRows() {
    const read = (kind, host) =>
      [...host.querySelectorAll(":scope > .water-row")].map((div, i) => {
        const base = `water-${kind}-${i}`;
        const value = (suffix) => this.doc.getElementById(`${base}-${suffix}`)?.value ?? "";
        return kind === "system"
          ? { id: value("id"), total: value("total"), unit: value("unit"), name: value("name"), pka: value("pka"), charge: value("charge") }
          : { id: value("id"), total: value("total"), unit: value("unit"), name: value("name"), charge: value("charge"), mass: value("mass") };
      });
    return { systems: read("system", this.systemsHost), ions: read("ion", this.ionsHost) };
  }

  // -- conditions ----------------------------------------------------------------------------

  /** @returns {object} raw text of the condition inputs plus the display choices */
  readConditions() {
    const out = Object.fromEntries(Object.entries(this.inputs).map(([k, el]) => [k, el.value]));
    out.measured = this.measured.checked;
    out.complexes = this.complexes.checked;
    out.precipitate = [...this.precipitate];
    out.alkUnit = this.alkUnit.value;
    out.displayUnit = this.displayUnit.value;
    out.plotSystem = this.plotSystem.value;
    return out;
  }

  /** @param {object} values  some of the keys readConditions returns */
  setConditions(values) {
    for (const [k, el] of Object.entries(this.inputs)) if (values[k] !== undefined) el.value = values[k];
    if (values.measured !== undefined) this.measured.checked = Boolean(values.measured);
    if (values.complexes !== undefined) this.complexes.checked = Boolean(values.complexes);
    if (values.precipitate !== undefined) this.precipitate = new Set(values.precipitate);
    if (values.alkUnit !== undefined) this.alkUnit.value = values.alkUnit;
    if (values.displayUnit !== undefined) this.displayUnit.value = values.displayUnit;
    this.syncConditionFields();
  }

  /** Show the fields that the current choices need. */
  syncConditionFields() {
    const mode = this.inputs.iMode.value;
    this.iValueField.hidden = mode === "composition";
    this.iValueLabel.textContent = I_VALUE_LABEL[mode] || "Value";
    this.measuredFields.hidden = !this.measured.checked;
  }

  // -- messages ------------------------------------------------------------------------------

  /**
   * Show one message beside each named input and clear every other message of the section.
   *
   * @param {Record<string, string>} messages  input id (or "water-error") -> message
   */
  showErrors(messages) {
    this.messages.show(messages);
  }

  /** @param {boolean} busy  a computation is running */
  setBusy(busy) {
    markBusy(this.results, busy);
  }

  /**
   * @param {(what: string, detail: {kind?: string, index?: number, id?: string}) => void} handler
   *        "add-system", "add-ion", "remove", "row-id" (a row's system/ion changed), "row-mass",
   *        "mode" (ionic strength or measured switch), "display-unit", "plot-system", "value"
   */
  bind(handler) {
    byId(this.doc, "water-add-system").addEventListener("click", () => handler("add-system", {}));
    byId(this.doc, "water-add-ion").addEventListener("click", () => handler("add-ion", {}));
    const rowOf = (el) => {
      const row = el.closest(".water-row");
      return row ? { kind: row.dataset.kind, index: Number(row.dataset.index), id: el.id } : null;
    };
    this.form.addEventListener("click", (event) => {
      const button = event.target.closest("button[data-action='remove']");
      if (button) handler("remove", rowOf(button));
    });
    this.form.addEventListener("change", (event) => {
      const el = event.target;
      const row = rowOf(el);
      if (row && el.id.endsWith("-id")) handler("row-id", row);
      else if (row && el.id.endsWith("-unit")) handler("value", row);
      else if (el === this.measured || el === this.inputs.iMode) {
        this.syncConditionFields();
        handler("mode", { id: el.id });
      } else if (el.tagName === "SELECT" || el === this.complexes) handler("value", { id: el.id });
    });
    this.form.addEventListener("input", (event) => {
      const el = event.target;
      if (el.tagName !== "INPUT" || el.type === "checkbox") return;
      const row = rowOf(el);
      handler(row && el.id.endsWith("-mass") ? "row-mass" : "value", row || { id: el.id });
    });
    this.displayUnit.addEventListener("change", () => handler("display-unit", {}));
    this.saturationTable.addEventListener("change", (event) => {
      const box = event.target.closest("input.water-precipitate");
      if (!box) return;
      if (box.checked) this.precipitate.add(box.dataset.solid);
      else this.precipitate.delete(box.dataset.solid);
      handler("value", { id: "water-precipitate" });
    });
    this.plotSystem.addEventListener("change", () => {
      this.nameFractionPlot();
      handler("plot-system", {});
    });
  }

  // -- results -------------------------------------------------------------------------------

  setNumber(id, text, value, exported) {
    const el = byId(this.doc, id);
    el.textContent = text;
    el.dataset.value = value === null || value === undefined ? "" : String(value);
    if (exported !== undefined) el.dataset.export = exported;
  }

  /**
   * Draw the summary, warnings, species table and trail of one solved water.
   *
   * @param {object} result  the core's solve result
   * @param {{unit: string, activityUnit: string, rows: object[], pHLabel: string,
   *          alkalinity: {mg_per_L_as_CaCO3: number|null, meq_per_L: number|null, end_pH: number}}} display
   *        the species rows in the shown unit (water.js works them out) and the summary words
   * @param {string[]} palette  line colours, in plot order
   * @param {Map<string, string>} names  system key -> name shown in the tables
   */
  renderResult(result, display, palette, names) {
    byId(this.doc, "water-ph-label").textContent = display.pHLabel;
    this.setNumber("water-ph", fixed(result.pH, 2), result.pH);
    this.setNumber("water-ionic-strength", `${sciNumber(result.ionic_strength_M, 3)} mol/L`, result.ionic_strength_M);
    byId(this.doc, "water-ionic-strength-source").textContent = `(${result.ionic_strength_source})`;
    this.setNumber("water-pkw", fixed(result.pKw, 3), result.pKw);
    this.setNumber("water-temperature-shown", `${fixed(result.temperature_C, 1)} °C`, result.temperature_C);
    const alk = display.alkalinity;
    this.setNumber(
      "water-alk-total",
      `${fixed(alk.mg_per_L_as_CaCO3, 1)} mg/L as CaCO₃ · ${fixed(alk.meq_per_L, 3)} meq/L`,
      alk.mg_per_L_as_CaCO3,
    );
    const a = result.alkalinity || {};
    this.setNumber(
      "water-alk-p",
      `${fixed(a.phenolphthalein_mg_per_L_as_CaCO3, 1)} mg/L as CaCO₃ · ${fixed(a.phenolphthalein_meq_per_L, 3)} meq/L`,
      a.phenolphthalein_mg_per_L_as_CaCO3,
    );
    const beta = result.buffer_intensity_eq_per_L_per_pH;
    this.setNumber("water-buffer", `${sciNumber(beta * 1e3, 3)} mmol/L per pH unit`, beta);

    const inferred = byId(this.doc, "water-inferred");
    const info = result.inferred_from_measurements;
    inferred.hidden = !info;
    inferred.textContent = info
      ? `From the measurements: carbonate total ${sciNumber(info.DIC_M * 1e3, 4)} mmol/L ` +
        `(${fixed(info.DIC_mg_per_L_as_C, 2)} mg/L as C); unlisted strong ions carry ` +
        `${sciNumber(info.balancing_ion_eq_per_L * 1e3, 3)} meq/L.`
      : "";

    const warnings = byId(this.doc, "water-warnings");
    warnings.replaceChildren(
      ...(result.warnings || []).map((w) => {
        const li = this.doc.createElement("li");
        li.textContent = w.charAt(0).toUpperCase() + w.slice(1);
        return li;
      }),
    );

    this.renderSpecies(display, palette);
    this.renderComponents(result);
    this.renderSaturation(result);
    this.renderTrail(result, names);
  }

  /** @param {object} result  the core's solve result (its ``components`` rows) */
  renderComponents(result) {
    const pct = (part, total) => (total > 0 ? (100 * part) / total : null);
    const rows = (result.components || []).filter((c) => c.total_M > 0).map((c) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.component = c.id;
      tr.dataset.totalM = String(c.total_M);
      tr.dataset.freeFraction = String(c.free_fraction ?? "");
      const name = this.doc.createElement("th");
      name.scope = "row";
      name.textContent = c.name;
      const free = pct(c.free_M, c.total_M);
      const bound = pct(c.complexed_M, c.total_M);
      const solid = pct(c.precipitated_M, c.total_M);
      tr.append(
        name,
        this.cell(sciNumber(c.total_M * 1e3, 4), c.total_M, "total_M", "num", exportNumber(c.total_M * 1e3)),
        this.cell(free === null ? "—" : fixed(free, 1), free, "free_percent", "num", exportNumber(free)),
        this.cell(bound === null ? "—" : fixed(bound, 1), bound, "complexed_percent", "num", exportNumber(bound)),
        this.cell(solid === null ? "—" : fixed(solid, 1), solid, "precipitated_percent", "num", exportNumber(solid)),
      );
      return tr;
    });
    this.componentsTable.tBodies[0].replaceChildren(...rows);
  }

  /** @param {object} result  the core's solve result (``saturation`` and ``precipitated``) */
  renderSaturation(result) {
    const formed = new Map((result.precipitated || []).map((p) => [p.id, p]));
    const rows = (result.saturation || []).map((s) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.solid = s.id;
      tr.dataset.si = String(s.SI);
      const name = this.doc.createElement("th");
      name.scope = "row";
      name.append(`${s.name} `);
      const f = this.doc.createElement("span");
      f.className = "unit";
      f.textContent = prettyFormula(s.formula);
      name.append(f);
      const state = formed.has(s.id) ? "present, saturated" : s.SI > 0.05 ? "oversaturated" : s.SI < -0.05 ? "undersaturated" : "near saturation";
      const box = this.doc.createElement("input");
      box.type = "checkbox";
      box.className = "water-precipitate";
      box.dataset.solid = s.id;
      box.checked = this.precipitate.has(s.id);
      box.setAttribute("aria-label", `Let ${s.name} form or dissolve to saturation`);
      const boxCell = this.doc.createElement("td");
      boxCell.append(box);
      tr.append(
        name,
        this.cell(fixed(s.SI, 2), s.SI, "SI", "num", exportNumber(s.SI)),
        this.cell(fixed(s.log_IAP, 2), s.log_IAP, "log_IAP", "num", exportNumber(s.log_IAP)),
        this.cell(fixed(s.log_Ksp, 2), s.log_Ksp, "log_Ksp", "num", exportNumber(s.log_Ksp)),
        this.cell(state, null, "state", ""),
        boxCell,
      );
      return tr;
    });
    this.saturationTable.tBodies[0].replaceChildren(...rows);
    const note = byId(this.doc, "water-precipitated");
    const list = [...formed.values()];
    note.hidden = list.length === 0;
    note.textContent = list.length
      ? "Formed at equilibrium: " + list.map((p) => `${p.id} ${sciNumber(p.mg_per_L, 4)} mg/L`).join(", ") + "."
      : "";
  }

  renderSpecies({ unit, activityUnit, rows }, palette) {
    const words = {
      "mg/L": "mg/L of the species", "ug/L": "µg/L of the species", "mg/L as basis": "mg/L as in the row",
    };
    byId(this.doc, "water-conc-unit").textContent = `(${words[unit] ?? unitLabel(unit)})`;
    this.speciesTable.dataset.exportName = `Species at equilibrium (${words[unit] ?? unitLabel(unit)})`;
    byId(this.doc, "water-activity-unit").textContent = `(${unitLabel(activityUnit)})`;
    const out = rows.map((r) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.species = r.name;
      tr.dataset.system = r.system ?? "";
      tr.dataset.concentrationM = String(r.concentration_M);
      const name = this.doc.createElement("th");
      name.scope = "row";
      if (r.slot !== null) {
        const swatch = this.doc.createElement("span");
        swatch.className = "swatch";
        swatch.style.background = palette[r.slot % palette.length];
        swatch.setAttribute("aria-hidden", "true");
        name.append(swatch);
      }
      name.append(prettyFormula(r.name));
      const conc = this.cell(sciNumber(r.shown, 4), r.shown, "concentration", "num", exportNumber(r.shown));
      if (r.as) {
        const as = this.doc.createElement("span");
        as.className = "unit as-basis";
        as.textContent = `as ${prettyFormula(r.as)}`;
        conc.append(as);
        conc.dataset.as = r.as;
      }
      if (r.shown === null) conc.title = "No molar mass is known for this ion, so it has no mass concentration.";
      tr.append(
        name,
        this.cell(r.systemName, null, "system", "col-system"),
        this.cell(r.charge > 0 ? `+${r.charge}` : fixed(r.charge, 0), r.charge, "charge", "num col-charge"),
        conc,
        this.cell(sciNumber(r.activityShown, 4), r.activity_M, "activity_M", "num", exportNumber(r.activityShown)),
        this.cell(fixed(r.gamma, 4), r.gamma, "activity_coefficient", "num", exportNumber(r.gamma)),
        this.cell(r.percent === null ? "—" : fixed(r.percent, 2), r.percent, "percent", "num", exportNumber(r.percent)),
      );
      return tr;
    });
    this.speciesTable.tBodies[0].replaceChildren(...out);
  }

  renderTrail(result, names) {
    let positive = 0;
    let negative = 0;
    let sum = 0;
    const rows = result.trail.map((t) => {
      const q = t.charge_eq_per_L;
      if (q > 0) positive += q;
      else negative += q;
      sum += q;
      const tr = this.doc.createElement("tr");
      tr.dataset.term = t.term;
      const name = this.doc.createElement("th");
      name.scope = "row";
      name.textContent = prettyFormula(t.term);
      if (t.system) {
        const sys = this.doc.createElement("span");
        sys.className = "unit";
        sys.textContent = ` (${names.get(t.system) ?? t.system})`;
        name.append(sys);
      }
      tr.append(
        name,
        this.cell(t.charge > 0 ? `+${t.charge}` : fixed(t.charge, 0), t.charge, "charge", "num col-charge"),
        this.cell(sciNumber(t.concentration_M * 1e3, 4), t.concentration_M, "concentration_M", "num",
          exportNumber(t.concentration_M * 1e3)),
        this.cell(sciNumber(q * 1e3, 4), q, "charge_eq_per_L", "num", exportNumber(q * 1e3)),
      );
      return tr;
    });
    this.trailTable.tBodies[0].replaceChildren(...rows);
    this.setNumber("water-trail-positive", sciNumber(positive * 1e3, 6), positive, exportNumber(positive * 1e3));
    this.setNumber("water-trail-negative", sciNumber(negative * 1e3, 6), negative, exportNumber(negative * 1e3));
    const residual = result.charge_balance_residual_eq_per_L;
    this.setNumber("water-trail-residual", sciNumber(residual * 1e3, 3), residual, exportNumber(residual * 1e3));
    byId(this.doc, "water-trail-residual").dataset.sum = String(sum);
    byId(this.doc, "water-trail-note").textContent = result.pH_was_given
      ? "At a given pH nothing forces the charges to balance: the sum is the charge the listed " +
        "ions leave unbalanced (an unlisted ion would carry it in the real water)."
      : "The pH shown is the one at which the charges carried by all these ions add up to zero: " +
        "each ion's concentration depends on the pH, and the pH is moved until positive and " +
        "negative charge balance (the sum left over is rounding).";
  }

  /**
   * @param {string} text  shown
   * @param {number|null} value  raw number (data-value; SI units as the core gives them)
   * @param {string} key  data-key
   * @param {string} className
   * @param {string} [exported]  the number in the column's own unit, for CSV (data-export)
   */
  cell(text, value, key, className, exported) {
    const td = this.doc.createElement("td");
    td.className = className;
    td.dataset.key = key;
    td.dataset.value = value === null || value === undefined ? "" : String(value);
    if (exported !== undefined) td.dataset.export = exported;
    td.textContent = text;
    return td;
  }

  /**
   * @param {{name: string}[]} systems  curve systems, in order
   * @param {number} chosen  index to select
   */
  setPlotSystems(systems, chosen) {
    this.plotSystem.replaceChildren(
      ...systems.map((s, i) => {
        const option = this.doc.createElement("option");
        option.value = String(i);
        option.textContent = s.name;
        return option;
      }),
    );
    this.plotSystem.disabled = systems.length === 0;
    if (systems.length) this.plotSystem.value = String(Math.min(chosen, systems.length - 1));
    this.nameFractionPlot();
  }

  /** Name the fraction plot for the export menu after the system it shows. */
  nameFractionPlot() {
    const chosen = this.plotSystem.selectedOptions[0]?.textContent;
    byId(this.doc, "plot-water-fraction").dataset.exportName = chosen
      ? `Fraction of each form of ${chosen}` : "Fraction of each form (no acid–base system in the water)";
  }

  /** Count one drawn result on #water-section[data-drawn]. */
  markDrawn() {
    this.drawn += 1;
    this.section.dataset.drawn = String(this.drawn);
  }
}
