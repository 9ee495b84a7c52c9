// Section "Many samples at once": reads a CSV (pasted or from a file), asks the core for its
// columns, and streams the samples to the worker in chunks (acidscape.boundary.batch.batch_chunk), so a
// file of 10,000 lines never blocks the page: between chunks the progress bar moves and the
// first rows of the table appear. The downloaded CSV is the header plus the core's own CSV
// lines of every chunk, so it is byte for byte what acidscape.boundary.batch.batch_csv gives.

import { downloadBlob, stamp } from "./export.js";

/** Samples sent to the worker per request. */
export const CHUNK_ROWS = 250;
/** Largest CSV accepted [characters] (about 20 MB). */
export const MAX_CSV_CHARS = 20_000_000;

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
 * @param {{call: Function}} deps.py  the core
 * @param {import("./batch-view.js").BatchView} deps.view  its DOM
 * @param {{id: string, name: string, units: string[]}[]} deps.systems  library systems
 * @param {{id: string, name: string, units: string[]}[]} deps.ions  library strong ions
 * @param {{id: string, name: string}[]} deps.chemicals  dosing chemicals
 * @returns {{run: () => Promise<void>}}
 */
export function mountBatch({ py, view, systems, ions, chemicals }) {
  view.setLibrary(
    [
      ...(systems || []).map((s) => ({ id: s.id, name: s.name, units: s.units || ["mmol/L"], kind: "system" })),
      ...(ions || []).map((s) => ({ id: s.id, name: `${s.name} (${s.formula ?? s.id})`, units: s.units || ["mmol/L"], kind: "ion" })),
    ],
    chemicals || [],
  );
  let stopRequested = false;
  let resultCsv = null;

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
      view.setColumns(info.columns, records.filter((r) => r.trim()).length, info.guess);
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
    view.clearResults();
    view.setRunning(true);
    stopRequested = false;
    resultCsv = null;
    const pieces = [];
    let columns = null;
    let bad = 0;
    let done = 0;
    const t0 = performance.now();
    view.progress(0, records.length);
    try {
      for (let i = 0; i < records.length; i += CHUNK_ROWS) {
        if (stopRequested) break;
        const slice = records.slice(i, i + CHUNK_ROWS);
        const out = await py.call("batch_chunk", { csv: `${header}\n${slice.join("\n")}`, mapping, row_offset: i });
        if (!columns) {
          columns = out.columns;
          view.setHeader(columns);
        }
        pieces.push(out.csv);
        view.addRows(columns, out.rows);
        view.addErrors(out.errors);
        bad += out.errors.length;
        done = Math.min(records.length, i + slice.length);
        view.progress(done, records.length);
        await new Promise((resolve) => setTimeout(resolve, 0)); // let the page paint between chunks
      }
      const seconds = (performance.now() - t0) / 1000;
      if (columns) {
        resultCsv = `${columns.map(pyCsvCell).join(",")}\n${pieces.join("")}`;
        view.setDownload(true);
      }
      const rate = done / Math.max(seconds, 1e-3);
      view.finished(
        `${stopRequested ? "Stopped after" : "Done:"} ${done.toLocaleString("en")} of ${records.length.toLocaleString("en")} lines in ${seconds.toFixed(1)} s ` +
          `(${Math.round(rate).toLocaleString("en")} per second); ${bad ? `${bad} row${bad === 1 ? "" : "s"} could not be calculated (listed below)` : "every row calculated"}.`,
      );
      view.el["batch-progress"].dataset.done = String(done);
      view.el["batch-progress"].dataset.seconds = seconds.toFixed(3);
      view.el["batch-progress"].dataset.state = stopRequested ? "stopped" : "finished";
    } catch (error) {
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
  return { run, readColumns };
}
