// DOM of #batch-section: the CSV input, the column mapping, progress, bad rows, cautions and the
// results table. Cell text and file contents go in through textContent and option labels only.
//
// Besides the ids written in index.html, the view adds (when the page lacks them) and tests use:
//   #batch-template         button: download a CSV template (accepted columns + invented example)
//   #batch-col-cond #batch-cond-unit   conductivity column and unit (µS/cm, mS/cm)
//   #batch-col-tds          TDS column (mg/L)
//   #batch-digits           significant digits of the download (3..6, or "0" = full precision)
//   #batch-guess-notes      what the guessed mapping assumed (li per note)
//   #batch-cautions         the dose cautions, shown when the batch doses a chemical
//   #batch-total-<i>-column / -id / -unit   one totals row (filled from the guess or by hand)

import { prettyFormula, sciNumber } from "./format.js";
import { parsePH } from "./parse.js";

function byId(doc, id) {
  const el = doc.getElementById(id);
  if (!el) throw new Error(`the page lacks #${id}`);
  return el;
}

const IDS = [
  "batch-file", "batch-text", "batch-read", "batch-columns-note", "batch-mapping", "batch-col-id", "batch-mode",
  "batch-col-ph", "batch-col-temp", "batch-temp-unit", "batch-col-alk", "batch-alk-unit", "batch-activity",
  "batch-totals", "batch-add-total", "batch-dose-chemical", "batch-dose-target", "batch-run", "batch-stop",
  "batch-progress", "batch-progress-text", "batch-error", "batch-errors", "batch-download", "batch-table",
];
const ADDED = ["batch-template", "batch-col-cond", "batch-cond-unit", "batch-col-tds", "batch-digits",
  "batch-guess-notes", "batch-cautions"];
const COLUMN_SELECTS = ["batch-col-id", "batch-col-ph", "batch-col-temp", "batch-col-alk", "batch-col-cond", "batch-col-tds"];
/** Rows of the results table drawn on the page (the download has every row). */
export const SHOWN_ROWS = 200;
/** Digits offered for the download; "0" writes every number in full. */
export const DIGIT_CHOICES = [["3", "3"], ["4", "4"], ["5", "5"], ["6", "6"], ["0", "all (full precision)"]];
/** Blank temperature cells are read at this temperature; the page says so beside the field. */
export const BLANK_TEMPERATURE_C = 25;

/** The batch section's DOM. */
export class BatchView {
  /**
   * @param {Document} doc
   * @param {{defaultDigits?: number}} [options]
   */
  constructor(doc, { defaultDigits = 4 } = {}) {
    this.doc = doc;
    this.el = Object.fromEntries(IDS.map((id) => [id, byId(doc, id)]));
    this.addControls(defaultDigits);
    for (const id of ADDED) this.el[id] = byId(doc, id);
    this.columns = [];
    this.library = [];
    this.dialect = {};
  }

  option(value, text) {
    const o = this.doc.createElement("option");
    o.value = value;
    o.textContent = text;
    return o;
  }

  field(id, label, control, hint) {
    const wrap = this.doc.createElement("div");
    wrap.className = "field";
    const l = this.doc.createElement("label");
    l.htmlFor = id;
    l.textContent = label;
    wrap.append(l, control);
    if (hint) {
      const p = this.doc.createElement("p");
      p.className = "hint";
      p.textContent = hint;
      wrap.append(p);
    }
    return wrap;
  }

  select(id, options = []) {
    const s = this.doc.createElement("select");
    s.id = id;
    s.append(...options.map(([v, t]) => this.option(v, t)));
    return s;
  }

  /** Controls this version of the section needs beyond index.html's (made only if missing). */
  addControls(defaultDigits) {
    const doc = this.doc;
    if (!doc.getElementById("batch-template")) {
      const b = doc.createElement("button");
      b.type = "button";
      b.id = "batch-template";
      b.textContent = "Download a template";
      b.title = "A CSV with the column names Acidscape recognises (with units) and one invented example row";
      this.el["batch-read"].after(b);
    }
    const grid = this.el["batch-activity"].closest(".share-grid") || this.el["batch-mapping"];
    if (!doc.getElementById("batch-col-cond")) {
      const inline = doc.createElement("div");
      inline.className = "share-inline";
      const unitLabel = doc.createElement("label");
      unitLabel.className = "visually-hidden";
      unitLabel.htmlFor = "batch-cond-unit";
      unitLabel.textContent = "Conductivity unit";
      inline.append(this.select("batch-col-cond"), unitLabel,
        this.select("batch-cond-unit", [["uS/cm", "µS/cm"], ["mS/cm", "mS/cm"]]));
      const f = this.field("batch-col-cond", "Conductivity (25 °C)", inline, "Sets the ionic strength (Russell's estimate).");
      f.querySelector("label").htmlFor = "batch-col-cond";
      grid.append(f);
    }
    if (!doc.getElementById("batch-col-tds")) {
      grid.append(this.field("batch-col-tds", "Total dissolved solids (mg/L)", this.select("batch-col-tds"),
        "Used for rows without a conductivity."));
    }
    if (!doc.getElementById("batch-digits")) {
      const s = this.select("batch-digits", DIGIT_CHOICES);
      s.value = String(defaultDigits);
      grid.append(this.field("batch-digits", "Significant digits in the download", s,
        "pH to 3 decimals, temperatures to 2."));
    }
    if (!doc.getElementById("batch-guess-notes")) {
      const ul = doc.createElement("ul");
      ul.id = "batch-guess-notes";
      ul.className = "hint";
      ul.setAttribute("aria-label", "What the column guess assumed");
      const legend = this.el["batch-mapping"].querySelector("legend");
      if (legend) legend.after(ul);
      else this.el["batch-mapping"].prepend(ul);
    }
    if (!doc.getElementById("batch-cautions")) {
      const aside = doc.createElement("aside");
      aside.id = "batch-cautions";
      aside.className = "cautions";
      aside.hidden = true;
      const h = doc.createElement("h4");
      h.textContent = "Before you change a chemical feed";
      aside.append(h, doc.createElement("ul"));
      this.el["batch-errors"].after(aside);
    }
  }

  /**
   * @param {{id: string, name: string, units: string[], kind: "system"|"ion"}[]} items  what a
   *        totals column may hold
   * @param {{id: string, name: string}[]} chemicals  for the optional dose
   */
  setLibrary(items, chemicals) {
    this.library = items;
    const dose = this.el["batch-dose-chemical"];
    dose.replaceChildren(this.option("", "No dose"), ...chemicals.map((c) => this.option(c.id, `${c.id} — ${c.name}`)));
  }

  /**
   * Offer the CSV's columns in every column menu and preselect the guessed mapping.
   *
   * @param {string[]} columns  column names from the header line
   * @param {number} rows  sample lines
   * @param {object} guess  a mapping from the core (batch.read_header), with notes
   */
  setColumns(columns, rows, guess) {
    this.columns = columns;
    for (const id of COLUMN_SELECTS) {
      this.el[id].replaceChildren(this.option("", "— not in the file —"), ...columns.map((c) => this.option(c, c)));
    }
    this.el["batch-col-id"].value = guess.id ?? "";
    this.el["batch-col-ph"].value = guess.pH ?? "";
    this.el["batch-col-temp"].value = guess.temperature?.column ?? "";
    this.el["batch-temp-unit"].value = guess.temperature?.unit ?? "C";
    this.el["batch-col-alk"].value = guess.alkalinity?.column ?? "";
    this.el["batch-alk-unit"].value = guess.alkalinity?.unit ?? "mg/L as CaCO3";
    this.el["batch-col-cond"].value = guess.conductivity?.column ?? "";
    this.el["batch-cond-unit"].value = guess.conductivity?.unit ?? "uS/cm";
    this.el["batch-col-tds"].value = guess.tds?.column ?? "";
    this.dialect = { delimiter: guess.delimiter, decimal: guess.decimal };
    this.el["batch-totals"].replaceChildren();
    for (const [kind, list] of [["system", guess.systems], ["ion", guess.ions]]) {
      for (const e of list || []) this.addTotalRow({ kind, id: e.id, column: e.column, unit: e.unit });
    }
    const notes = this.el["batch-guess-notes"];
    notes.replaceChildren(...(guess.notes || []).map((n) => {
      const li = this.doc.createElement("li");
      li.textContent = n;
      return li;
    }));
    this.el["batch-mapping"].hidden = false;
    const sep = { ";": "semicolons", "\t": "tabs", ",": "commas" }[guess.delimiter] || "commas";
    this.el["batch-columns-note"].textContent =
      `${columns.length} columns, ${rows.toLocaleString("en")} sample lines.` +
      (guess.delimiter ? ` Separated by ${sep}, decimal ${guess.decimal === "," ? "commas" : "points"}.` : "");
    this.el["batch-run"].disabled = false;
  }

  /**
   * Add one "column -> system or ion, unit" row to the totals list.
   *
   * @param {{kind: "system"|"ion", id: string, column: string, unit: string}} [preset]  a guessed row
   */
  addTotalRow(preset) {
    const i = this.el["batch-totals"].children.length;
    const row = this.doc.createElement("div");
    row.className = "batch-total-row";
    const make = (id, label) => {
      const input = this.doc.createElement("select");
      input.id = id;
      row.append(this.field(id, label, input));
      return input;
    };
    const col = make(`batch-total-${i}-column`, "Column");
    col.append(this.option("", "— choose —"), ...this.columns.map((c) => this.option(c, c)));
    const what = make(`batch-total-${i}-id`, "Holds the total of");
    for (const kind of ["system", "ion"]) {
      const group = this.doc.createElement("optgroup");
      group.label = kind === "system" ? "Acid–base systems" : "Strong ions";
      group.append(...this.library.filter((x) => x.kind === kind).map((x) => this.option(`${kind}:${x.id}`, x.name)));
      what.append(group);
    }
    const unit = make(`batch-total-${i}-unit`, "Unit");
    const fillUnits = (wanted) => {
      const [kind, id] = what.value.split(":");
      const item = this.library.find((x) => x.kind === kind && x.id === id);
      const units = [...(item?.units || [])];
      if (wanted && !units.includes(wanted)) units.push(wanted); // e.g. ug/L, which the core reads
      const keep = wanted || unit.value;
      unit.replaceChildren(...units.map((u) => this.option(u, u)));
      if (units.includes(keep)) unit.value = keep;
      else if (units.includes("mg/L")) unit.value = "mg/L";
    };
    what.addEventListener("change", () => fillUnits());
    if (preset) {
      col.value = preset.column;
      what.value = `${preset.kind}:${preset.id}`;
    }
    fillUnits(preset?.unit);
    this.el["batch-totals"].append(row);
    return { col, what, unit };
  }

  /** @returns {number}  significant digits of the download (0: full precision) */
  digits() {
    return Number(this.el["batch-digits"].value);
  }

  /**
   * @returns {{mapping: object, problems: string[]}}  the mapping as the core reads it, and
   *          what is missing for it
   */
  readMapping() {
    const v = (id) => this.el[id].value;
    const mapping = { mode: v("batch-mode"), activity: v("batch-activity"), systems: [], ions: [] };
    const problems = [];
    if (v("batch-col-id")) mapping.id = v("batch-col-id");
    if (v("batch-col-ph")) mapping.pH = v("batch-col-ph");
    if (v("batch-col-temp")) {
      mapping.temperature = { column: v("batch-col-temp"), unit: v("batch-temp-unit"), default_C: BLANK_TEMPERATURE_C };
    }
    if (v("batch-col-alk")) mapping.alkalinity = { column: v("batch-col-alk"), unit: v("batch-alk-unit") };
    if (v("batch-col-cond")) mapping.conductivity = { column: v("batch-col-cond"), unit: v("batch-cond-unit") };
    if (v("batch-col-tds")) mapping.tds = { column: v("batch-col-tds"), unit: "mg/L" };
    if (this.dialect.delimiter) mapping.delimiter = this.dialect.delimiter;
    if (this.dialect.decimal) mapping.decimal = this.dialect.decimal;
    for (const row of this.el["batch-totals"].children) {
      const [col, what, unit] = row.querySelectorAll("select");
      if (!col.value) continue;
      const [kind, id] = what.value.split(":");
      (kind === "ion" ? mapping.ions : mapping.systems).push({ id, column: col.value, unit: unit.value });
    }
    if (mapping.mode === "measured" && !mapping.pH) problems.push("Choose the pH column, or calculate the equilibrium pH instead.");
    const chem = v("batch-dose-chemical");
    if (chem) {
      // the one number parser (decimal commas) and the core's one pH range (site/parse.js)
      const target = parsePH(v("batch-dose-target"), "The target pH of the dose");
      if (target.error) problems.push(target.error);
      else mapping.dose = { chemical: chem, target_pH: target.value };
    }
    return { mapping, problems };
  }

  /** @param {boolean} running  a batch is being computed */
  setRunning(running) {
    this.el["batch-run"].disabled = running;
    this.el["batch-stop"].disabled = !running;
    this.el["batch-read"].disabled = running;
    if (running) this.el["batch-download"].disabled = true;
  }

  /** @param {number} done @param {number} total  samples so far and in all */
  progress(done, total) {
    const bar = this.el["batch-progress"];
    bar.max = Math.max(1, total);
    bar.value = done;
    bar.textContent = `${done} of ${total}`;
    this.el["batch-progress-text"].textContent = `${done.toLocaleString("en")} of ${total.toLocaleString("en")} samples`;
  }

  /** @param {number} n  extra Python workers ready to share a batch */
  setHelpers(n) {
    this.el["batch-progress"].dataset.helpers = String(n);
  }

  /** @param {string} text  the final status line */
  finished(text) {
    this.el["batch-progress-text"].textContent = text;
  }

  /** @param {string} message  a problem with the batch as a whole ("" clears) */
  error(message) {
    this.el["batch-error"].textContent = message;
  }

  clearResults() {
    this.el["batch-errors"].replaceChildren();
    this.el["batch-table"].tHead.replaceChildren();
    this.el["batch-table"].tBodies[0].replaceChildren();
    this.showCautions(null);
    this.error("");
  }

  /** @param {string[]|null} cautions  the dose cautions from the core, or null to hide them */
  showCautions(cautions) {
    const aside = this.el["batch-cautions"];
    aside.hidden = !cautions?.length;
    aside.querySelector("ul").replaceChildren(...(cautions || []).map((t) => {
      const li = this.doc.createElement("li");
      li.textContent = t;
      return li;
    }));
  }

  /** @param {{row: number, sample: string, message: string}[]} errors  bad rows to list */
  addErrors(errors) {
    const list = this.el["batch-errors"];
    for (const e of errors) {
      if (list.children.length >= 500) break;
      const li = this.doc.createElement("li");
      li.dataset.row = String(e.row);
      li.textContent = `Row ${e.row}${e.sample ? ` (${e.sample})` : ""}: ${e.message}`;
      list.append(li);
    }
  }

  /**
   * @param {{name: string, kind: string, formula?: string, system?: string, unit?: string}[]} info
   *        result columns from the core (species columns carry their formula and system)
   */
  setHeader(info) {
    const tr = this.doc.createElement("tr");
    for (const c of info) {
      const th = this.doc.createElement("th");
      th.scope = "col";
      th.dataset.key = c.name;
      th.textContent = c.formula ? `${prettyFormula(c.formula)} (${c.unit})` : c.name.replace(/_/g, " ");
      if (c.system) th.title = `${c.system}: ${c.name}`;
      tr.append(th);
    }
    this.el["batch-table"].tHead.replaceChildren(tr);
  }

  /**
   * Append result rows to the table until SHOWN_ROWS are shown.
   *
   * @param {string[]} columns  column order
   * @param {object[]} rows  from the core
   */
  addRows(columns, rows) {
    const body = this.el["batch-table"].tBodies[0];
    for (const r of rows) {
      if (body.rows.length >= SHOWN_ROWS) return;
      const tr = this.doc.createElement("tr");
      if (r.error) tr.className = "batch-bad";
      for (const c of columns) {
        const td = this.doc.createElement("td");
        const value = r[c];
        td.dataset.key = c;
        td.dataset.value = value === null || value === undefined ? "" : String(value);
        td.textContent = typeof value === "number" ? (Number.isInteger(value) ? String(value) : sciNumber(value, 4)) : (value ?? "");
        if (typeof value === "number") td.className = "num";
        if (c === "dose_cautions" && value) td.textContent = "see the cautions above";
        tr.append(td);
      }
      body.append(tr);
    }
  }

  /** @param {boolean} ready  a result CSV can be downloaded */
  setDownload(ready) {
    this.el["batch-download"].disabled = !ready;
  }
}
