// DOM of #batch-section: the CSV input, the column mapping, progress, bad rows and the results
// table. Cell text and file contents go in through textContent and option labels only.

import { prettyFormula, sciNumber } from "./format.js";

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
const COLUMN_SELECTS = ["batch-col-id", "batch-col-ph", "batch-col-temp", "batch-col-alk"];
/** Rows of the results table drawn on the page (the download has every row). */
export const SHOWN_ROWS = 200;

/** The batch section's DOM. */
export class BatchView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.el = Object.fromEntries(IDS.map((id) => [id, byId(doc, id)]));
    this.columns = [];
    this.library = [];
    this.totalCount = 0;
  }

  option(value, text) {
    const o = this.doc.createElement("option");
    o.value = value;
    o.textContent = text;
    return o;
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
   * @param {object} guess  a mapping from the core (batch.read_header)
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
    this.el["batch-totals"].replaceChildren();
    this.el["batch-mapping"].hidden = false;
    this.el["batch-columns-note"].textContent = `${columns.length} columns, ${rows.toLocaleString("en")} sample lines.`;
    this.el["batch-run"].disabled = false;
  }

  /** Add one "column -> system or ion, unit" row to the totals list. */
  addTotalRow() {
    const i = this.el["batch-totals"].children.length;
    const row = this.doc.createElement("div");
    row.className = "batch-total-row";
    const make = (tag, id, label) => {
      const l = this.doc.createElement("label");
      l.htmlFor = id;
      l.textContent = label;
      const input = this.doc.createElement(tag);
      input.id = id;
      const wrap = this.doc.createElement("div");
      wrap.className = "field";
      wrap.append(l, input);
      row.append(wrap);
      return input;
    };
    const col = make("select", `batch-total-${i}-column`, "Column");
    col.append(this.option("", "— choose —"), ...this.columns.map((c) => this.option(c, c)));
    const what = make("select", `batch-total-${i}-id`, "Holds the total of");
    for (const kind of ["system", "ion"]) {
      const group = this.doc.createElement("optgroup");
      group.label = kind === "system" ? "Acid–base systems" : "Strong ions";
      group.append(...this.library.filter((x) => x.kind === kind).map((x) => this.option(`${kind}:${x.id}`, x.name)));
      what.append(group);
    }
    const unit = make("select", `batch-total-${i}-unit`, "Unit");
    const fillUnits = () => {
      const [kind, id] = what.value.split(":");
      const item = this.library.find((x) => x.kind === kind && x.id === id);
      const keep = unit.value;
      unit.replaceChildren(...(item?.units || []).map((u) => this.option(u, u)));
      if ((item?.units || []).includes(keep)) unit.value = keep;
      else if ((item?.units || []).includes("mg/L")) unit.value = "mg/L";
    };
    what.addEventListener("change", fillUnits);
    fillUnits();
    this.el["batch-totals"].append(row);
    return { col, what, unit };
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
    if (v("batch-col-temp")) mapping.temperature = { column: v("batch-col-temp"), unit: v("batch-temp-unit") };
    if (v("batch-col-alk")) mapping.alkalinity = { column: v("batch-col-alk"), unit: v("batch-alk-unit") };
    for (const row of this.el["batch-totals"].children) {
      const [col, what, unit] = row.querySelectorAll("select");
      if (!col.value) continue;
      const [kind, id] = what.value.split(":");
      (kind === "ion" ? mapping.ions : mapping.systems).push({ id, column: col.value, unit: unit.value });
    }
    if (mapping.mode === "measured" && !mapping.pH) problems.push("Choose the pH column, or calculate the equilibrium pH instead.");
    const chem = v("batch-dose-chemical");
    if (chem) {
      const target = Number(String(v("batch-dose-target")).trim().replace(/\u2212/g, "-"));
      if (!String(v("batch-dose-target")).trim() || !Number.isFinite(target) || target < 0 || target > 14) {
        problems.push("Enter a target pH between 0 and 14 for the dose.");
      } else {
        mapping.dose = { chemical: chem, target_pH: target };
      }
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
    this.error("");
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

  /** @param {string[]} columns  result column names (core names with their units) */
  setHeader(columns) {
    const tr = this.doc.createElement("tr");
    for (const c of columns) {
      const th = this.doc.createElement("th");
      th.scope = "col";
      const [system, rest] = c.includes(":") ? c.split(":") : [null, c];
      th.textContent = system ? `${prettyFormula(rest.replace(/_M$/, ""))} (mol/L)` : c.replace(/_/g, " ");
      if (system) th.title = system;
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
