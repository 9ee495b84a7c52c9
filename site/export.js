// Getting things out of the page: the scenario as a JSON file, tables and curves as CSV, plots
// as PNG, and the printable report. Everything is made in the browser (Blob + object URL);
// nothing is uploaded. Text from the page or a file only ever goes in through textContent.

/**
 * Offer a Blob as a download.
 *
 * @param {Document} doc  the page
 * @param {Blob} blob  the content
 * @param {string} filename  suggested file name
 */
export function downloadBlob(doc, blob, filename) {
  const url = URL.createObjectURL(blob);
  const a = doc.createElement("a");
  a.href = url;
  a.download = filename;
  a.hidden = true;
  doc.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

/** @returns {string}  local date and time as YYYYMMDD-HHMM, for file names */
export function stamp(date = new Date()) {
  const p = (n) => String(n).padStart(2, "0");
  return `${date.getFullYear()}${p(date.getMonth() + 1)}${p(date.getDate())}-${p(date.getHours())}${p(date.getMinutes())}`;
}

/**
 * The scenario file: the page state, pretty-printed JSON (read back with share.js readStateJson).
 *
 * @param {object} state  from collectState()
 * @returns {Blob}  application/json
 */
export function scenarioBlob(state) {
  return new Blob([JSON.stringify(state, null, 1) + "\n"], { type: "application/json" });
}

/**
 * One CSV cell (RFC 4180 quoting; a leading =, +, - or @ of text is prefixed with ' so a
 * spreadsheet does not run it as a formula).
 *
 * @param {any} value  a number, text or empty
 * @returns {string}  the cell text
 */
export function csvCell(value) {
  if (value === null || value === undefined) return "";
  let text = String(value);
  if (typeof value !== "number" && /^[=+\-@]/.test(text) && !/^[+-]?(\d|\.\d)/.test(text)) text = `'${text}`;
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * @param {any[][]} rows  first row the column names
 * @returns {string}  CSV text
 */
export function toCsv(rows) {
  return rows.map((row) => row.map(csvCell).join(",")).join("\n") + "\n";
}

/**
 * Every visible table of the page, with a name for menus.
 *
 * @param {Document} doc  the page
 * @returns {{name: string, table: HTMLTableElement}[]}
 */
export function pageTables(doc) {
  return [...doc.querySelectorAll("main table")]
    .filter((t) => t.tBodies[0]?.rows.length && t.getClientRects().length)
    .map((table, i) => ({
      name: (table.caption?.textContent || table.id || `table ${i + 1}`).trim().replace(/\s+/g, " "),
      table,
    }));
}

/**
 * A table as CSV rows: header cells as shown, body cells at full precision when the cell
 * carries data-value (the raw number), else as shown.
 *
 * @param {HTMLTableElement} table  a table of the page
 * @returns {string[][]}  rows of cell texts
 */
export function tableRows(table) {
  const text = (el) => el.textContent.trim().replace(/\s+/g, " ");
  const rows = [];
  const head = table.tHead?.rows[table.tHead.rows.length - 1];
  if (head) rows.push([...head.cells].map(text));
  for (const body of table.tBodies) {
    for (const tr of body.rows) {
      rows.push([...tr.cells].map((c) => (c.dataset.value !== undefined && c.dataset.value !== "" ? c.dataset.value : text(c))));
    }
  }
  return rows;
}

/** Canvases inside an element, looking through open shadow roots (BokehJS draws in them). */
function canvasesIn(root) {
  const found = [];
  const walk = (node) => {
    if (node instanceof HTMLCanvasElement) found.push(node);
    if (node.shadowRoot) walk(node.shadowRoot);
    for (const child of node.children || []) walk(child);
  };
  walk(root);
  return found.filter((c) => c.width > 0 && c.height > 0 && c.getClientRects().length);
}

/**
 * Every plot host of the page (elements with class "plot"), named by its figure caption.
 *
 * @param {Document} doc  the page
 * @returns {{name: string, host: Element}[]}
 */
export function pagePlots(doc) {
  return [...doc.querySelectorAll("main .plot")]
    .filter((host) => host.getClientRects().length && canvasesIn(host).length)
    .map((host) => ({
      name: (host.closest("figure")?.querySelector("figcaption")?.textContent || host.id).trim().replace(/\s+/g, " "),
      host,
    }));
}

/**
 * A plot as a PNG: its canvas layers drawn, in order, onto one white canvas at their places.
 *
 * @param {Element} host  the plot's host element
 * @returns {Promise<Blob>}  image/png
 */
export function plotPng(host) {
  const layers = canvasesIn(host);
  if (!layers.length) return Promise.reject(new Error("this plot has not been drawn yet"));
  const box = host.getBoundingClientRect();
  const scale = layers[0].width / Math.max(1, layers[0].getBoundingClientRect().width);
  const out = document.createElement("canvas");
  out.width = Math.round(box.width * scale);
  out.height = Math.round(box.height * scale);
  const ctx = out.getContext("2d");
  ctx.fillStyle = "#ffffff";
  ctx.fillRect(0, 0, out.width, out.height);
  for (const layer of layers) {
    const r = layer.getBoundingClientRect();
    ctx.drawImage(layer, (r.left - box.left) * scale, (r.top - box.top) * scale, r.width * scale, r.height * scale);
  }
  return new Promise((resolve, reject) =>
    out.toBlob((blob) => (blob ? resolve(blob) : reject(new Error("the browser could not make a PNG"))), "image/png"),
  );
}

/**
 * Curves of the current scenario as long-format CSV rows (curve, x name, x, series, value),
 * recomputed by the core from the state, so the numbers are those the plots show.
 *
 * @param {{call: Function}} py  the core
 * @param {object} state  from collectState()
 * @returns {Promise<any[][]>}  rows, first the column names
 */
export async function curveRows(py, state) {
  const rows = [["curve", "x_name", "x", "series", "value"]];
  const d = state.distribution;
  if (d) {
    const params = { total_M: d.total_M, pH: d.pH };
    if (d.acid && d.acid !== "custom") params.system = d.acid;
    else Object.assign(params, { pKa: d.pKa, charge_most_protonated: d.charge });
    try {
      const out = await py.call("distribution", params);
      out.species.forEach((sp, j) => {
        out.curve.pH.forEach((x, k) => rows.push(["fraction of one acid", "pH", x, sp.name, out.curve.fractions[j][k]]));
      });
    } catch {
      /* the section shows its own error; its curve is left out */
    }
  }
  const sc = state.water?.scenario;
  if (sc && typeof sc === "object") {
    try {
      const out = await py.call("water", { ...sc, curve: { points: 281 } });
      const c = out.curves;
      for (const sys of c.systems) {
        sys.species.forEach((name, j) => {
          c.pH.forEach((x, k) => rows.push([`water fraction (${sys.id})`, "pH", x, name, sys.fractions[j][k]]));
        });
      }
      for (const line of c.log_concentration) {
        c.pH.forEach((x, k) => rows.push(["water log10 concentration (mol/L)", "pH", x, line.name, line.values[k]]));
      }
    } catch {
      /* as above */
    }
    const t = state.treatment?.titration;
    if (t && typeof t.titrant === "string") {
      try {
        const out = await py.call("titrate", {
          scenario: sc, titrant: t.titrant, titrant_M: t.titrant_M, sample_mL: t.sample_mL, to_pH: t.to_pH,
        });
        for (const point of out.points || []) {
          const volume = point.titrant_mL !== null && point.titrant_mL !== undefined;
          rows.push([`titration with ${t.titrant}`, volume ? "titrant_mL" : "dose_mmol_per_L",
            volume ? point.titrant_mL : point.dose_mmol_per_L, "pH", point.pH]);
        }
      } catch {
        /* as above */
      }
    }
  }
  return rows;
}

function el(doc, tag, text, className) {
  const node = doc.createElement(tag);
  if (text !== undefined) node.textContent = text;
  if (className) node.className = className;
  return node;
}

function flatten(value, path, out) {
  if (value !== null && typeof value === "object") {
    const entries = Array.isArray(value) ? value.map((v, i) => [`[${i}]`, v]) : Object.entries(value);
    for (const [k, v] of entries) flatten(v, Array.isArray(value) ? `${path}${k}` : path ? `${path}.${k}` : k, out);
  } else {
    out.push([path, value === null ? "—" : String(value)]);
  }
  return out;
}

/** Cautions printed on every report, whatever the page shows. */
export const REPORT_CAUTIONS = [
  "Doses computed here are estimates from an equilibrium model of the water as described; check them by jar test or a measured trial before changing a plant.",
  "Treatment chemicals (acids, caustic soda, lime, carbon dioxide, chlorine) can injure people: handle them under your site's safety procedures, with the protective equipment their safety data sheets require.",
  "Local regulations and the licensed operator in charge decide what is dosed; this report does not replace their judgement.",
];

/**
 * Fill the hidden report block with everything a printout needs (it is shown only in print).
 *
 * @param {Document} doc  the page
 * @param {HTMLElement} report  the #report element
 * @param {{state: object, link: string, versions: object, manifest: object|null,
 *          notes?: string[]}} info  inputs, the link, versions and the build manifest
 */
export function fillReport(doc, report, { state, link, versions, manifest }) {
  const parts = [];
  parts.push(el(doc, "h2", "Acidscape report"));
  const meta = el(doc, "dl", undefined, "report-meta");
  const v = { ...(manifest?.versions || {}), ...(versions || {}) };
  const wheel = manifest?.wheel && manifest?.files?.[manifest.wheel];
  const metaRows = [
    ["Printed", new Date().toLocaleString()],
    ["Tool version", `Acidscape ${v.acidscape ?? "?"} (Python ${v.python ?? "?"} on Pyodide ${v.pyodide ?? "?"})`],
    ["Constants version", manifest?.constants?.sha256
      ? `cited data tables and constants, sha256 ${manifest.constants.sha256.slice(0, 16)}`
      : wheel ? `core package with its cited data tables, sha256 ${wheel.slice(0, 16)} (${manifest.wheel})` : "unknown (no build manifest)"],
    ["Scenario link", link],
  ];
  for (const [k, text] of metaRows) meta.append(el(doc, "dt", k), el(doc, "dd", text));
  parts.push(meta);

  parts.push(el(doc, "h3", "Inputs"));
  for (const [section, value] of Object.entries(state)) {
    if (section === "v") continue;
    const table = el(doc, "table", undefined, "report-inputs");
    table.append(el(doc, "caption", section));
    const body = el(doc, "tbody");
    for (const [path, text] of flatten(value, "", [])) {
      const tr = el(doc, "tr");
      tr.append(el(doc, "th", path), el(doc, "td", text));
      body.append(tr);
    }
    table.append(body);
    parts.push(table);
  }

  parts.push(el(doc, "h3", "Results and calculation trail"));
  for (const summary of doc.querySelectorAll("main .water-summary, main [data-report-summary]")) {
    const copy = summary.cloneNode(true);
    for (const node of copy.querySelectorAll("[id]")) node.removeAttribute("id");
    parts.push(copy);
  }
  for (const { name, table } of pageTables(doc)) {
    if (report.contains(table)) continue;
    const copy = table.cloneNode(true);
    copy.removeAttribute("id");
    for (const node of copy.querySelectorAll("[id]")) node.removeAttribute("id");
    if (!copy.caption) copy.createCaption().textContent = name;
    parts.push(copy);
  }

  parts.push(el(doc, "h3", "Cautions"));
  const cautions = el(doc, "ul", undefined, "report-cautions");
  const onPage = [...doc.querySelectorAll("main .cautions li, main .caution, main [data-caution]")]
    .map((n) => n.textContent.trim().replace(/\s+/g, " "))
    .filter(Boolean);
  for (const text of [...new Set(onPage), ...REPORT_CAUTIONS]) cautions.append(el(doc, "li", text));
  parts.push(cautions);
  report.replaceChildren(...parts);
  report.dataset.filled = new Date().toISOString();
}
