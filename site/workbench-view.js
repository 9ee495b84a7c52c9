// DOM of the workbench (site/workbench.js holds which job is shown): the job switcher, the
// links between jobs, the sections each job shows, the water's headline figures and the
// phone's fold of the water inputs.
//
//   body[data-job]            the job in view; the sections of the others carry .job-off + inert
//   #job-tab-<job>            the switcher's buttons (aria-current="true" on the shown one)
//   [data-job] buttons        anywhere on the page: bring that job into view; a link (not a
//                             switcher tab) also moves the focus to the job's heading
//   #headline-lsi #headline-ccpp   the calcium carbonate indices of the water (rows hidden when
//                             the water has no calcium or carbonate)
//   #water-details            the water job's tables and plots; marked stale with #water-results

import { JOBS, isJob, onJobChange, showJob, shownJob } from "./workbench.js";
import { markResults } from "./view.js";

/**
 * The elements each job shows; every other element of this list is hidden. A job may show a
 * part of a shared section (titration and dosing share #treatment-section).
 */
export const JOB_ELEMENTS = Object.freeze({
  water: ["job-water"],
  treat: ["treatment-section", "dose-block"],
  titrate: ["treatment-section", "titration-block", "buffer-block"],
  scale: ["job-scale"],
  softening: ["job-softening"],
  lead: ["job-lead"],
  hardness: ["job-hardness"],
  batch: ["batch-section"],
  explorer: ["section-distribution"],
});

const EVERY_ELEMENT = [...new Set(Object.values(JOB_ELEMENTS).flat())];

/** The switcher, the job sections and the links between jobs. */
export class WorkbenchView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.tabs = new Map(JOBS.map((job) => [job.name, doc.getElementById(`job-tab-${job.name}`)]));
    this.show(shownJob());
    onJobChange((name) => this.show(name));
    doc.addEventListener("click", (event) => {
      const button = event.target.closest?.("[data-job]:not(body)"); // body[data-job] names the job in view
      if (!button || !isJob(button.dataset.job)) return;
      event.preventDefault(); // an anchor's hash would be read as a scenario link
      const name = button.dataset.job;
      showJob(name);
      if (!button.classList.contains("job-tab")) this.focusJob(name);
    });
  }

  /**
   * Show the sections of job `name` and put the others away; mark the switcher. A job put away
   * keeps its width (style.css .job-off: no height, invisible, inert), so plots embedded in it
   * are drawn at the width they will have when it is shown.
   */
  show(name) {
    const wanted = new Set(JOB_ELEMENTS[name] || []);
    for (const id of EVERY_ELEMENT) {
      const el = this.doc.getElementById(id);
      if (!el) continue;
      const off = !wanted.has(id);
      el.classList.toggle("job-off", off);
      el.inert = off;
    }
    for (const [job, tab] of this.tabs) {
      if (!tab) continue;
      if (job === name) tab.setAttribute("aria-current", "true");
      else tab.removeAttribute("aria-current");
    }
    this.doc.body.dataset.job = name;
  }

  /** Move the focus (and the view) to the heading of job `name`'s first shown block. */
  focusJob(name) {
    const sectionId = JOB_ELEMENTS[name]?.[0];
    const section = sectionId && this.doc.getElementById(sectionId);
    if (!section) return;
    const heading = section.querySelector("h2") || section;
    if (!heading.hasAttribute("tabindex")) heading.setAttribute("tabindex", "-1");
    heading.focus({ preventScroll: true });
    heading.scrollIntoView({ block: "start" });
  }
}

function signed(value, digits) {
  const text = Math.abs(value).toFixed(digits);
  if (Number(text) === 0) return (0).toFixed(digits);
  return `${value < 0 ? "−" : "+"}${text}`;
}

const TENDENCY = {
  deposit: "tends to deposit calcium carbonate",
  dissolve: "tends to dissolve calcium carbonate",
  balanced: "near balance",
};

/**
 * The water's headline beside its pH and alkalinity: the Langelier index and the CCPP from the
 * water's own solve (result.calcium_carbonate); the rows are hidden when the water has none.
 */
export class HeadlineView {
  /** @param {Document} doc */
  constructor(doc) {
    this.lsiRow = doc.getElementById("headline-lsi-row");
    this.lsi = doc.getElementById("headline-lsi");
    this.ccppRow = doc.getElementById("headline-ccpp-row");
    this.ccpp = doc.getElementById("headline-ccpp");
  }

  /** @param {object} result  the core's solve result of the water */
  render(result) {
    const cc = result?.calcium_carbonate;
    const lsi = Number.isFinite(cc?.LSI) ? cc.LSI : null;
    const ccpp = Number.isFinite(cc?.CCPP_mg_per_L_as_CaCO3) ? cc.CCPP_mg_per_L_as_CaCO3 : null;
    if (this.lsi) {
      this.lsiRow.hidden = lsi === null;
      this.lsi.dataset.value = lsi === null ? "" : String(lsi);
      this.lsi.textContent = lsi === null ? "—" : signed(lsi, 2);
      const word = TENDENCY[cc?.tendency];
      this.lsi.title = word ? word : "";
      if (word && lsi !== null) {
        const hint = this.lsi.ownerDocument.createElement("span");
        hint.className = "unit headline-word";
        hint.textContent = ` ${word}`;
        this.lsi.append(hint);
      }
    }
    if (this.ccpp) {
      this.ccppRow.hidden = ccpp === null;
      this.ccpp.dataset.value = ccpp === null ? "" : String(ccpp);
      this.ccpp.textContent = ccpp === null ? "—" : signed(ccpp, 1);
    }
  }
}

/**
 * The water job's tables and plots (#water-details) carry the same current/stale mark as the
 * headline (#water-results, marked by the water's view), with the same note.
 */
export function mirrorWaterState(doc) {
  const source = doc.getElementById("water-results");
  const target = doc.getElementById("water-details");
  if (!source || !target) return;
  const copy = () => {
    const state = source.dataset.state || "current";
    const note = source.querySelector(":scope > .stale-note")?.textContent || "";
    if (target.dataset.state !== state || (state === "stale" && target.querySelector(":scope > .stale-note")?.textContent !== note)) {
      markResults(target, state, note);
    }
    const busy = source.getAttribute("aria-busy");
    if (busy === null) target.removeAttribute("aria-busy");
    else target.setAttribute("aria-busy", busy);
  };
  new MutationObserver(copy).observe(source, {
    attributes: true, attributeFilter: ["data-state", "aria-busy"], subtree: false,
  });
  // the note's text can change while the state stays "stale"
  new MutationObserver(copy).observe(source, { childList: true, characterData: true, subtree: true });
  copy();
}

/** The fold of the water inputs (used on narrow screens; the button is hidden on wide ones). */
export class WaterInputsFold {
  /** @param {Document} doc */
  constructor(doc) {
    this.section = doc.getElementById("water-section");
    this.button = doc.getElementById("water-inputs-toggle");
    if (!this.section || !this.button) return;
    this.button.addEventListener("click", () => this.set(this.button.getAttribute("aria-expanded") !== "true"));
  }

  /** @param {boolean} open */
  set(open) {
    this.button.setAttribute("aria-expanded", open ? "true" : "false");
    this.button.textContent = open ? "Hide inputs" : "Show inputs";
    this.section.classList.toggle("inputs-folded", !open);
  }
}

function headLabels(table) {
  const row = table.tHead?.rows[table.tHead.rows.length - 1];
  const labels = [];
  if (!row) return labels;
  for (const th of row.cells) {
    const text = th.textContent.replace(/\s+/g, " ").trim();
    for (let k = 0; k < th.colSpan; k += 1) labels.push(text);
  }
  return labels;
}

function labelTable(table) {
  const labels = headLabels(table);
  if (!labels.length) return;
  for (const section of [...table.tBodies, table.tFoot].filter(Boolean)) {
    for (const row of section.rows) {
      let column = 0;
      for (const cell of row.cells) {
        const label = cell.tagName === "TD" ? labels[column + cell.colSpan - 1] : "";
        if (label && cell.dataset.label !== label) cell.dataset.label = label;
        column += cell.colSpan;
      }
    }
  }
}

/**
 * Give every body cell of the page's tables a data-label naming its column (the column head's
 * text), kept up as the views redraw rows or rename units. On a phone the rows stack and each
 * cell shows its label (style.css), so no table scrolls sideways.
 *
 * @param {Element} root  the element whose tables are labelled (main)
 */
export function labelTableCells(root) {
  let queued = false;
  const tables = new Set();
  const flush = () => {
    queued = false;
    // the batch preview keeps its own scroll region (its rows never stack): not labelled
    for (const table of tables) if (!table.closest(".batch-table-wrap")) labelTable(table);
    tables.clear();
  };
  const note = (node) => {
    const el = node?.nodeType === 1 ? node : node?.parentElement;
    const table = el?.closest?.("table");
    if (table) tables.add(table);
    else if (el?.querySelectorAll) for (const t of el.querySelectorAll("table")) tables.add(t);
  };
  new MutationObserver((records) => {
    for (const record of records) {
      note(record.target);
      for (const node of record.addedNodes) note(node);
    }
    if (tables.size && !queued) {
      queued = true;
      queueMicrotask(flush);
    }
  }).observe(root, { childList: true, subtree: true, characterData: true });
  for (const table of root.querySelectorAll("table")) tables.add(table);
  flush();
}
