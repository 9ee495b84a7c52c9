// All DOM code of the page. Elements are looked up once; text goes in through textContent
// (never innerHTML), so user text and core messages are always escaped.

import { fixed, prettyFormula, sciNumber } from "./format.js";

// A results block is marked busy (aria-busy, which dims it: style.css) only when its answer
// takes longer than this: an edit answered within a few frames changes nothing on screen but
// its figures, so the frame after the keystroke stays cheap and the answer is drawn sooner.
const BUSY_AFTER_MS = 250;
const busyTimers = new WeakMap();

/**
 * aria-busy on a results block: "true" once a computation has run for BUSY_AFTER_MS, "false"
 * as soon as it ends.
 *
 * @param {Element} el  the results block
 * @param {boolean} busy  a computation is running
 */
export function markBusy(el, busy) {
  clearTimeout(busyTimers.get(el));
  busyTimers.delete(el);
  if (busy) {
    busyTimers.set(el, setTimeout(() => {
      busyTimers.delete(el);
      el.setAttribute("aria-busy", "true");
    }, BUSY_AFTER_MS));
  } else if (el.getAttribute("aria-busy") !== "false") {
    el.setAttribute("aria-busy", "false");
  }
}

function byId(doc, id) {
  const el = doc.getElementById(id);
  if (!el) throw new Error(`the page lacks #${id}`);
  return el;
}

/**
 * The one way the page shows messages about inputs: the text beside each input goes in its
 * #<input id>-error element (aria-invalid on the input), a message about the request as a whole
 * in the block's own error element. Used by every section's view.
 */
export class FieldMessages {
  /**
   * @param {Document} doc  the page
   * @param {Element} scope  the block whose .error elements this object owns
   * @param {string} blockId  id of the block's own error element (e.g. "water-error")
   */
  constructor(doc, scope, blockId) {
    this.doc = doc;
    this.scope = scope;
    this.blockId = blockId;
  }

  /**
   * Show one message beside each named input and clear every other message of the block.
   *
   * @param {Record<string, string>} messages  input id -> message; "block" (or the block's
   *        own id) for the block; a message for an input that is not on the page goes there too
   */
  show(messages) {
    const block = [messages.block, messages[this.blockId]];
    const placed = new Set(["block", this.blockId]);
    for (const p of this.scope.querySelectorAll(".error[id$='-error']")) {
      if (p.id === this.blockId) continue;
      const id = p.id.slice(0, -"-error".length);
      const message = messages[id] || "";
      if (message) placed.add(id);
      p.textContent = message;
      const input = this.doc.getElementById(id);
      if (input && input !== p) {
        if (message) input.setAttribute("aria-invalid", "true");
        else input.removeAttribute("aria-invalid");
      }
    }
    for (const [id, message] of Object.entries(messages)) if (!placed.has(id)) block.push(message);
    const own = this.doc.getElementById(this.blockId);
    if (own) own.textContent = block.filter(Boolean).join(" ");
  }
}

/**
 * Say whether a block of results belongs to the inputs on screen: "current" (nothing shown),
 * "stale" (dimmed, with a note naming why and which inputs the figures belong to) or "empty".
 *
 * @param {HTMLElement} results  the block's results element
 * @param {"current"|"stale"|"empty"} state
 * @param {string} [note]  for "stale": e.g. "Not updated: the temperature cannot be used. ..."
 */
export function markResults(results, state, note = "") {
  results.dataset.state = state;
  results.classList.toggle("stale", state === "stale");
  let box = results.querySelector(":scope > .stale-note");
  if (!box) {
    box = results.ownerDocument.createElement("p");
    box.className = "stale-note";
    box.setAttribute("role", "status");
    results.prepend(box);
  }
  box.textContent = state === "stale" ? note : "";
  box.hidden = state !== "stale";
}

/** Boot progress, busy state and fatal errors in #status; page-wide markers on <body>. */
export class StatusView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.root = byId(doc, "status");
    this.text = byId(doc, "status-text");
    this.bar = byId(doc, "boot-progress");
    this.drawn = 0;
  }

  /** @param {{fraction: number, text: string}} step  a boot step from the worker */
  progress(step) {
    this.root.dataset.state = "booting";
    this.text.textContent = step.text;
    this.bar.value = Math.max(0, Math.min(1, step.fraction));
    this.bar.textContent = `${Math.round(step.fraction * 100)}%`;
  }

  /** @param {string} text  what is ready (shown quietly) */
  ready(text) {
    this.root.dataset.state = "ready";
    this.text.textContent = text;
  }

  /** @param {string} message  why the page cannot work; shown prominently */
  fatal(message) {
    this.root.dataset.state = "fatal";
    this.root.setAttribute("role", "alert");
    const reason = /[.!?]$/.test(message) ? message : `${message}.`;
    this.text.textContent = `The calculator could not start: ${reason} Try reloading; if it keeps failing, this browser may lack WebAssembly or module workers.`;
  }

  /** Count one drawn result of the species section on body[data-drawn]. */
  markDrawn() {
    this.drawn += 1;
    this.doc.body.dataset.drawn = String(this.drawn);
  }

  /** The page shows the scenario it was opened with (link, example or defaults): body[data-ready]. */
  pageReady() {
    this.doc.body.dataset.ready = "true";
  }

  /** @param {number} count  computations scheduled or running (body[data-pending]; 0 = settled) */
  setPending(count) {
    this.doc.body.dataset.pending = String(count);
  }
}

/** The versions line in the footer. */
export class AboutView {
  /** @param {Document} doc */
  constructor(doc) {
    this.el = byId(doc, "about");
  }

  /** @param {Record<string, string>} versions  e.g. {acidscape, pyodide, python, bokeh} */
  render(versions) {
    const v = versions || {};
    const parts = [`Acidscape ${v.acidscape ?? "?"}`];
    if (v.python || v.pyodide) parts.push(`Python ${v.python ?? "?"} on Pyodide ${v.pyodide ?? "?"}`);
    if (v.bokeh) parts.push(`plots by BokehJS ${v.bokeh}`);
    this.el.textContent = parts.join(" · ");
  }
}

const INPUT_IDS = ["acid-select", "pka-input", "charge-input", "total-input", "ph-input"];

/** Inputs, messages, table and busy state of the species-distribution section. */
export class DistributionView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.form = byId(doc, "distribution-form");
    this.inputs = Object.fromEntries(INPUT_IDS.map((id) => [id, byId(doc, id)]));
    this.table = byId(doc, "species-table");
    this.caption = byId(doc, "species-caption");
    this.results = byId(doc, "distribution-results");
    this.messages = new FieldMessages(doc, this.form, "distribution-error");
    this.form.addEventListener("submit", (event) => event.preventDefault());
  }

  /**
   * Offer the library acids (plus "your own values", which is always there).
   *
   * @param {{id: string, name: string}[]} systems  in library order
   */
  setAcidOptions(systems) {
    const select = this.inputs["acid-select"];
    const custom = select.querySelector('option[value="custom"]');
    const group = this.doc.createElement("optgroup");
    group.label = "Library (25 °C)";
    for (const system of systems) {
      const option = this.doc.createElement("option");
      option.value = system.id;
      option.textContent = system.name;
      group.append(option);
    }
    select.replaceChildren(group, custom);
  }

  /** @returns {{acid: string, pka: string, charge: string, total: string, ph: string}} raw text */
  read() {
    const i = this.inputs;
    return {
      acid: i["acid-select"].value,
      pka: i["pka-input"].value,
      charge: i["charge-input"].value,
      total: i["total-input"].value,
      ph: i["ph-input"].value,
    };
  }

  /**
   * @param {string} acid  the option to select
   * @param {{pka?: string, charge?: string}} [fields]  text to put in the pKa and charge inputs
   */
  setAcid(acid, fields = {}) {
    this.inputs["acid-select"].value = acid;
    if (fields.pka !== undefined) this.inputs["pka-input"].value = fields.pka;
    if (fields.charge !== undefined) this.inputs["charge-input"].value = fields.charge;
  }

  /**
   * Show one message beside each named input and clear the others.
   *
   * @param {Record<string, string>} messages  input id (or "form") -> message
   */
  showErrors(messages) {
    this.messages.show(messages);
  }

  /**
   * @param {"current"|"stale"|"empty"} state  whether the table and plots match the inputs
   * @param {string} [note]  why not, for "stale"
   */
  setResultState(state, note) {
    markResults(this.results, state, note);
  }

  /** @param {string} id  input id @param {string} text  put this text in it */
  write(id, text) {
    this.inputs[id].value = text;
  }

  /** @param {boolean} busy  a computation is running */
  setBusy(busy) {
    markBusy(this.results, busy);
  }

  /**
   * @param {(what: "acid"|"values"|"other") => void} handler  called when an input changes:
   *        "acid" for the select, "values" for the pKa/charge inputs, "other" for the rest
   */
  bindChange(handler) {
    this.inputs["acid-select"].addEventListener("change", () => handler("acid"));
    for (const id of ["pka-input", "charge-input"]) {
      this.inputs[id].addEventListener("input", () => handler("values"));
    }
    for (const id of ["total-input", "ph-input"]) {
      this.inputs[id].addEventListener("input", () => handler("other"));
    }
  }

  /**
   * Fill the species table.
   *
   * @param {string} acidName  shown in the caption
   * @param {{pH: number, rows: {name: string, charge: number, fraction: number,
   *          concentration_M: number, log10_concentration_M: number|null}[]}} table  from the core
   * @param {string[]} palette  colour of each species, in order
   */
  renderTable(acidName, table, palette) {
    this.caption.textContent = `${acidName} at pH ${fixed(table.pH, 2)}`;
    const body = this.table.tBodies[0];
    const rows = table.rows.map((row, i) => {
      const tr = this.doc.createElement("tr");
      tr.dataset.species = row.name;
      const name = this.doc.createElement("th");
      name.scope = "row";
      const swatch = this.doc.createElement("span");
      swatch.className = "swatch";
      swatch.style.background = palette[i % palette.length];
      swatch.setAttribute("aria-hidden", "true");
      name.append(swatch, prettyFormula(row.name));
      tr.append(
        name,
        this.cell(row.charge > 0 ? `+${row.charge}` : fixed(row.charge, 0), row.charge, "charge"),
        this.cell(sciNumber(row.fraction, 3), row.fraction, "fraction"),
        this.cell(sciNumber(row.concentration_M, 3), row.concentration_M, "concentration_M"),
        this.cell(fixed(row.log10_concentration_M, 2), row.log10_concentration_M, "log10_concentration_M"),
      );
      return tr;
    });
    body.replaceChildren(...rows);
  }

  cell(text, value, key) {
    const td = this.doc.createElement("td");
    td.className = `num col-${key}`;
    td.dataset.key = key;
    td.dataset.value = value === null || value === undefined ? "" : String(value);
    td.textContent = text;
    return td;
  }
}
