// Section "Many samples at once": reads a CSV (pasted or from a file), asks the core for its
// columns and a guessed mapping, and streams the samples to Python in chunks
// (acidscape.boundary.batch.batch_chunk), so a file of 10,000 lines never blocks the page: the
// progress bar moves and the first rows of the table appear as chunks come back. Each request is
// sized from the worker's measured time per sample so that it takes about TARGET_MS: short on the
// page's own worker, which answers the other sections between requests.
//
// A file of HELPER_MIN_ROWS lines or more also starts extra Python workers (one per further
// core, at most MAX_HELPERS) as soon as its columns are read; chunks then go to whichever worker
// is free and are put back in input order. The downloaded CSV is the header plus the core's own
// CSV lines of every chunk, so it is what acidscape.boundary.batch.batch_csv gives with the same
// digits, whichever worker computed a chunk.

import { downloadBlob, stamp } from "./export.js";
import { startPython } from "./py.js";
import { SHOWN_ROWS } from "./batch-view.js";

/** Samples in a worker's first request; later requests are sized from its measured speed. */
export const FIRST_CHUNK_ROWS = 2;
/** Fewest and most samples per request. */
export const CHUNK_LIMITS = [1, 2000];
/** Time a request should take [ms]: short on the page's own worker, which also answers the
 *  other sections between requests, longer on the extra workers. */
export const TARGET_MS = { shared: 250, helper: 1000 };

/**
 * Samples for a worker's next request, from its time per sample so far.
 *
 * @param {number|null} msPerRow  measured time per sample [ms], null before the first reply
 * @param {number} targetMs  time a request should take [ms]
 * @returns {number}
 */
export function chunkSize(msPerRow, targetMs) {
  if (!(msPerRow > 0)) return FIRST_CHUNK_ROWS;
  return Math.max(CHUNK_LIMITS[0], Math.min(CHUNK_LIMITS[1], Math.round(targetMs / msPerRow)));
}
/** Largest CSV accepted [characters] (about 20 MB). */
export const MAX_CSV_CHARS = 20_000_000;
/** A file with at least this many sample lines gets extra workers (each is one more Python). */
export const HELPER_MIN_ROWS = 1000;
/** At most this many extra workers. */
export const MAX_HELPERS = 3;

/**
 * Extra workers worth starting on this device: one per core beyond the first, at most MAX_HELPERS.
 *
 * @param {number} [cores]  logical cores (navigator.hardwareConcurrency)
 * @returns {number}
 */
export function helperCount(cores = globalThis.navigator?.hardwareConcurrency || 1) {
  return Math.max(0, Math.min(MAX_HELPERS, Math.floor(cores) - 1));
}

/**
 * Split CSV text into records (one per sample line), keeping quoted line breaks inside their
 * record, as Python's csv module reads it. The header is returned apart; a final empty line
 * is dropped, inner blank lines are kept so row numbers stay those of the file.
 *
 * @param {string} text  the whole CSV
 * @returns {{header: string, records: string[]}}
 */
export function splitRecords(text) {
  const records = [];
  let start = 0;
  let quoted = false;
  const src = text.replace(/^\ufeff/, "");
  for (let i = 0; i < src.length; i += 1) {
    const ch = src[i];
    if (ch === '"') quoted = !quoted;
    else if (!quoted && (ch === "\n" || ch === "\r")) {
      records.push(src.slice(start, i));
      if (ch === "\r" && src[i + 1] === "\n") i += 1;
      start = i + 1;
    }
  }
  if (start < src.length) records.push(src.slice(start));
  const header = records.shift() ?? "";
  return { header, records };
}

/** A CSV cell as Python's csv.writer (QUOTE_MINIMAL) writes it. */
function pyCsvCell(text) {
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * Mount the section.
 *
 * @param {object} deps
 * @param {{call: Function}} deps.py  the core (the page's shared worker)
 * @param {import("./batch-view.js").BatchView} deps.view  its DOM
 * @param {{id: string, name: string, units: string[]}[]} deps.systems  library systems
 * @param {{id: string, name: string, units: string[]}[]} deps.ions  library strong ions
 * @param {{id: string, name: string}[]} deps.chemicals  dosing chemicals
 * @param {() => {ready: Promise<object>, call: Function, terminate: Function}} [deps.startHelper]
 *        starts one more Python worker (default: py.js startPython)
 * @returns {{run: () => Promise<void>, readColumns: () => Promise<boolean>}}
 */
export function mountBatch({ py, view, systems, ions, chemicals, startHelper = () => startPython() }) {
  view.setLibrary(
    [
      ...(systems || []).map((s) => ({ id: s.id, name: s.name, units: s.units || ["mmol/L"], kind: "system" })),
      ...(ions || []).map((s) => ({ id: s.id, name: `${s.name} (${s.formula ?? s.id})`, units: s.units || ["mmol/L"], kind: "ion" })),
    ],
    chemicals || [],
  );
  let stopRequested = false;
  let resultCsv = null;
  /** @type {{py: object, ready: boolean, failed: boolean}[]} */
  const helpers = [];
  let joinRun = null; // while a batch runs: adds a lane for a helper that has just become ready

  function warmHelpers(sampleLines) {
    if (sampleLines < HELPER_MIN_ROWS) return;
    const want = helperCount();
    while (helpers.length < want) {
      const entry = { py: startHelper(), ready: false, failed: false };
      helpers.push(entry);
      entry.py.ready.then(
        () => {
          entry.ready = true;
          view.setHelpers(helpers.filter((h) => h.ready && !h.failed).length);
          if (joinRun) joinRun(entry);
        },
        () => {
          entry.failed = true;
        },
      );
    }
  }

  async function readColumns() {
    const text = view.el["batch-text"].value;
    view.clearResults();
    resultCsv = null;
    view.setDownload(false);
    if (!text.trim()) {
      view.error("Paste CSV text or choose a file first.");
      return false;
    }
    const { header, records } = splitRecords(text);
    try {
      const info = await py.call("batch_chunk", { csv: `${header}\n${records.slice(0, 5).join("\n")}`, header_only: true });
      const lines = records.filter((r) => r.trim()).length;
      view.setColumns(info.columns, lines, info.guess);
      warmHelpers(lines);
      return true;
    } catch (error) {
      view.error(`The CSV could not be read: ${error?.message || error}`);
      return false;
    }
  }

  async function run() {
    const { mapping, problems } = view.readMapping();
    if (problems.length) {
      view.error(problems.join(" "));
      return;
    }
    const text = view.el["batch-text"].value;
    if (text.length > MAX_CSV_CHARS) {
      view.error(`The CSV holds ${text.length.toLocaleString("en")} characters; at most ${MAX_CSV_CHARS.toLocaleString("en")} are accepted.`);
      return;
    }
    const { header, records } = splitRecords(text);
    const digits = view.digits();
    delete view.el["batch-progress"].dataset.state;
    view.clearResults();
    view.setRunning(true);
    stopRequested = false;
    resultCsv = null;
    const results = new Map(); // first line index of a request -> its reply
    const retry = []; // [from, to) line ranges of a helper that died
    const pieces = [];
    let nextLine = 0;
    let renderedTo = 0;
    let columns = null;
    let bad = 0;
    let failure = null;
    let workersUsed = 0;
    const t0 = performance.now();
    view.progress(0, records.length);

    const request = (from, to) => ({
      csv: `${header}\n${records.slice(from, to).join("\n")}`,
      mapping,
      row_offset: from,
      digits,
      max_rows: from < SHOWN_ROWS ? to - from : 0, // later requests only feed the download
    });
    const flush = () => {
      while (results.has(renderedTo)) {
        const { out, to } = results.get(renderedTo);
        results.delete(renderedTo);
        if (!columns) {
          columns = out.columns;
          view.setHeader(out.column_info || out.columns.map((name) => ({ name })));
          view.showCautions(out.cautions || null);
        }
        pieces.push(out.csv);
        view.addRows(columns, out.rows);
        view.addErrors(out.errors);
        bad += out.errors.length;
        renderedTo = to;
      }
      view.progress(renderedTo, records.length);
    };
    const lane = async (worker, isHelper) => {
      workersUsed += 1;
      let msPerRow = null;
      const target = isHelper ? TARGET_MS.helper : TARGET_MS.shared;
      while (!stopRequested && !failure && (retry.length || nextLine < records.length)) {
        let from;
        let to;
        if (retry.length) [from, to] = retry.pop();
        else {
          from = nextLine;
          to = Math.min(records.length, from + chunkSize(msPerRow, target));
          nextLine = to;
        }
        const started = performance.now();
        try {
          results.set(from, { out: await worker.call("batch_chunk", request(from, to)), to });
        } catch (error) {
          if (isHelper && error?.type === "BootError") {
            retry.push([from, to]); // a helper that died: another worker takes its lines
            return;
          }
          failure = failure || error;
          return;
        }
        const ms = (performance.now() - started) / Math.max(1, to - from);
        msPerRow = msPerRow === null ? ms : 0.5 * (msPerRow + ms);
        flush();
      }
    };
    const lanes = [lane(py, false)];
    for (const h of helpers) if (h.ready && !h.failed) lanes.push(lane(h.py, true));
    joinRun = (h) => lanes.push(lane(h.py, true));
    try {
      for (let seen = 0; seen < lanes.length; ) {
        seen = lanes.length;
        await Promise.all(lanes);
        // lines of a helper that died after the page's own worker had finished
        if (seen === lanes.length && retry.length && !failure && !stopRequested) lanes.push(lane(py, false));
      }
      joinRun = null;
      if (failure) throw failure;
      const seconds = (performance.now() - t0) / 1000;
      if (columns) {
        resultCsv = `${columns.map(pyCsvCell).join(",")}\n${pieces.join("")}`;
        view.setDownload(true);
      }
      const done = renderedTo;
      const rate = done / Math.max(seconds, 1e-3);
      view.finished(
        `${stopRequested ? "Stopped after" : "Done:"} ${done.toLocaleString("en")} of ${records.length.toLocaleString("en")} lines in ${seconds.toFixed(1)} s ` +
          `(${Math.round(rate).toLocaleString("en")} per second${workersUsed > 1 ? `, ${workersUsed} workers` : ""}); ` +
          `${bad ? `${bad} row${bad === 1 ? "" : "s"} could not be calculated (listed below)` : "every row calculated"}.`,
      );
      const bar = view.el["batch-progress"];
      bar.dataset.done = String(done);
      bar.dataset.seconds = seconds.toFixed(3);
      bar.dataset.workers = String(workersUsed);
      bar.dataset.state = stopRequested ? "stopped" : "finished";
    } catch (error) {
      joinRun = null;
      view.error(`The batch stopped: ${error?.message || error}`);
      view.el["batch-progress"].dataset.state = "failed";
    } finally {
      view.setRunning(false);
    }
  }

  view.el["batch-file"].addEventListener("change", async () => {
    const file = view.el["batch-file"].files?.[0];
    if (!file) return;
    if (file.size > MAX_CSV_CHARS) {
      view.error(`"${file.name}" is too large (${Math.round(file.size / 1e6)} MB; at most 20 MB).`);
      return;
    }
    view.el["batch-text"].value = await file.text();
    await readColumns();
  });
  view.el["batch-read"].addEventListener("click", readColumns);
  view.el["batch-add-total"].addEventListener("click", () => view.addTotalRow().col.focus());
  view.el["batch-run"].addEventListener("click", run);
  view.el["batch-stop"].addEventListener("click", () => {
    stopRequested = true;
  });
  view.el["batch-download"].addEventListener("click", () => {
    if (resultCsv) downloadBlob(view.doc, new Blob([resultCsv], { type: "text/csv" }), `acidscape-batch-${stamp()}.csv`);
  });
  view.el["batch-template"].addEventListener("click", async () => {
    try {
      const out = await py.call("batch_chunk", { template: true });
      downloadBlob(view.doc, new Blob([out.csv], { type: "text/csv" }), "acidscape-batch-template.csv");
    } catch (error) {
      view.error(`The template could not be made: ${error?.message || error}`);
    }
  });
  return { run, readColumns };
}
