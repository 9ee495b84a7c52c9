// The DOM side of getting things out of the page: downloads, the tables and plots the page
// shows (named for menus), a plot as PNG and the printed report. The pure part is export.js.
// Text from the page or a file only ever goes in through textContent.

import { REPORT_CAUTIONS, describeInputs } from "./export.js";

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

/**
 * The name of a table or plot for menus and files: its data-export-name, else the text of its
 * caption without the words of any control inside it (a drop-down shows its chosen option).
 *
 * @param {Element} el  the table or the plot host
 * @param {Element|null} caption  its caption or figcaption
 * @param {string} fallback  when there is neither
 * @returns {string}
 */
export function exportName(el, caption, fallback) {
  if (el.dataset.exportName) return el.dataset.exportName;
  if (!caption) return fallback;
  const copy = caption.cloneNode(true);
  for (const select of copy.querySelectorAll("select")) {
    const chosen = select.selectedOptions?.[0]?.textContent ?? "";
    select.replaceWith(caption.ownerDocument.createTextNode(` ${chosen} `));
  }
  for (const control of copy.querySelectorAll("input, button, textarea")) control.remove();
  return (copy.textContent || fallback).trim().replace(/\s+/g, " ");
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
    .map((table, i) => ({ name: exportName(table, table.caption, table.id || `table ${i + 1}`), table }));
}

/**
 * A table as CSV rows: header cells as shown (with their units), body cells as the number in
 * that unit when the cell carries data-export (seven significant figures), else as shown.
 * (data-value holds the raw SI number for tests; it is never written under a unit header.)
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
      rows.push([...tr.cells].map((c) => (c.dataset.export !== undefined ? c.dataset.export : text(c))));
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
    .map((host) => ({ name: exportName(host, host.closest("figure")?.querySelector("figcaption") ?? null, host.id), host }));
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

function el(doc, tag, text, className) {
  const node = doc.createElement(tag);
  if (text !== undefined) node.textContent = text;
  if (className) node.className = className;
  return node;
}

/** Every canvas inside an element (through open shadow roots), drawn or not on screen. */
function allCanvases(root) {
  const found = [];
  const walk = (node) => {
    if (node instanceof HTMLCanvasElement) found.push(node);
    if (node.shadowRoot) walk(node.shadowRoot);
    for (const child of node.children || []) walk(child);
  };
  walk(root);
  return found.filter((c) => c.width > 0 && c.height > 0);
}

/**
 * A plot as a PNG data URL for the report: its canvas layers on white, or null when it has
 * not been drawn or is not on screen (a job put away has no height, and Bokeh leaves its
 * legend without text there).
 *
 * @param {Element} host  the plot's host element
 * @returns {string|null}
 */
export function plotDataUrl(host) {
  const layers = allCanvases(host);
  if (!layers.length) return null;
  const box = host.getBoundingClientRect();
  const shown = !host.closest(".job-off, [inert], [hidden]") &&
    (typeof host.checkVisibility !== "function" || host.checkVisibility({ visibilityProperty: true, opacityProperty: true }));
  const onScreen = shown && box.width > 0 && box.height > 0 && layers[0].getBoundingClientRect().width > 0;
  if (!onScreen) return null;
  const scale = layers[0].width / layers[0].getBoundingClientRect().width;
  const out = host.ownerDocument.createElement("canvas");
  out.width = Math.round(box.width * scale);
  out.height = Math.round(box.height * scale);
  if (!out.width || !out.height) return null;
  const ctx = out.getContext("2d");
  ctx.fillStyle = "#ffffff";
  ctx.fillRect(0, 0, out.width, out.height);
  for (const layer of layers) {
    const r = layer.getBoundingClientRect();
    if (!r.width || !r.height) continue;
    ctx.drawImage(layer, (r.left - box.left) * scale, (r.top - box.top) * scale, r.width * scale, r.height * scale);
  }
  return out.toDataURL("image/png");
}

/** The page's words for an id in one of its drop-downs (e.g. a chemical's option text). */
function namer(doc) {
  const SELECTS = {
    system: "water-system-0-id", ion: "water-ion-0-id", chemical: "titrant-select", product: "dose-product",
    "flow-unit": "dose-flow-unit", acid: "acid-select", "dose-chemical": "scale-dose-chemical", example: "scale-blend-with",
  };
  return (kind, id) => {
    const select = doc.getElementById(SELECTS[kind] ?? "");
    const option = select ? [...select.options].find((o) => o.value === id) : null;
    return option ? option.textContent.trim() : null;
  };
}

/** The heading of a block of results: its own, or the one of the block or section around it. */
function resultsTitle(results) {
  const own = results.querySelector("h2, h3");
  if (own) return own.textContent.trim();
  const block = results.closest(".treat-block, section, .panel");
  return block?.querySelector("h3, h2")?.textContent.trim() || results.id;
}

/**
 * Fill the hidden report block with everything a printout needs (it is shown only in print):
 * date and versions, the short link, the inputs in words, every block of results that belongs
 * to the inputs on screen (its figures with their units, its tables, its plots as images), and
 * the cautions.
 *
 * @param {Document} doc  the page
 * @param {HTMLElement} report  the #report element
 * @param {{state: object, link: string, versions: object, manifest: object|null}} info
 *        inputs, the link, versions and the build manifest
 * @returns {Promise<void>}
 */
export async function fillReport(doc, report, { state, link, versions, manifest }) {
  const parts = [];
  const now = new Date();
  parts.push(el(doc, "h2", "Acidscape report"));
  parts.push(el(doc, "p", "Acid–base calculation of a water, computed in the browser from the inputs below.", "report-lead"));
  const meta = el(doc, "dl", undefined, "report-meta");
  const v = { ...(manifest?.versions || {}), ...(versions || {}) };
  const wheel = manifest?.wheel && manifest?.files?.[manifest.wheel];
  const metaRows = [
    ["Printed", `${now.toLocaleString()} (${now.toISOString().slice(0, 16).replace("T", " ")} UTC)`],
    ["Tool version", `Acidscape ${v.acidscape ?? "?"} (Python ${v.python ?? "?"} on Pyodide ${v.pyodide ?? "?"}, BokehJS ${v.bokeh ?? v.bokehjs ?? "?"})`],
    ["Constants version", manifest?.constants?.sha256
      ? `cited data tables and constants, sha256 ${manifest.constants.sha256.slice(0, 16)}`
      : wheel ? `core package with its cited data tables, sha256 ${wheel.slice(0, 16)} (${manifest.wheel})` : "unknown (no build manifest)"],
    ["Scenario link", link],
  ];
  for (const [k, text] of metaRows) {
    const dd = el(doc, "dd", text);
    if (k === "Scenario link") dd.className = "report-link";
    meta.append(el(doc, "dt", k), dd);
  }
  parts.push(meta);

  parts.push(el(doc, "h3", "Inputs"));
  for (const group of describeInputs(state, namer(doc))) {
    const table = el(doc, "table", undefined, "report-inputs");
    table.append(el(doc, "caption", group.title));
    const body = el(doc, "tbody");
    for (const [label, text] of group.rows) {
      const tr = el(doc, "tr");
      const th = el(doc, "th", label);
      th.scope = "row";
      tr.append(th, el(doc, "td", text));
      body.append(tr);
    }
    table.append(body);
    parts.push(table);
  }

  parts.push(el(doc, "h3", "Results"));
  const leftOut = [];
  for (const results of doc.querySelectorAll("main .results")) {
    if (report.contains(results)) continue;
    const title = resultsTitle(results);
    if (results.dataset.state !== "current") {
      if (results.dataset.state === "stale") leftOut.push(title);
      continue;
    }
    const block = el(doc, "section", undefined, "report-block");
    block.append(el(doc, "h4", title));
    const copy = results.cloneNode(true);
    const hosts = [...results.querySelectorAll(".plot")];
    [...copy.querySelectorAll(".plot")].forEach((clone, i) => {
      const url = plotDataUrl(hosts[i]);
      const figure = clone.closest("figure");
      if (!url) {
        const drawn = allCanvases(hosts[i]).length > 0;
        const name = figure?.querySelector("figcaption")?.firstChild?.textContent?.trim() || "A plot";
        const note = drawn ? el(doc, "p", `${name}: plot left out, its job is not in view (show that job, then print).`, "report-note") : null;
        if (note) (figure && copy.contains(figure) ? figure : clone).replaceWith(note);
        else (figure && copy.contains(figure) ? figure : clone).remove();
        return;
      }
      const img = el(doc, "img", undefined, "report-plot");
      img.src = url;
      img.alt = figure?.querySelector("figcaption")?.textContent.trim().replace(/\s+/g, " ") || "plot";
      clone.replaceWith(img);
    });
    for (const node of copy.querySelectorAll("input, select, button, textarea, form, .visually-hidden, [hidden], .stale-note, .cautions")) node.remove();
    for (const node of [copy, ...copy.querySelectorAll("[id]")]) node.removeAttribute("id");
    for (const node of copy.querySelectorAll("[aria-live], [role='status'], [role='region'], [tabindex]")) {
      node.removeAttribute("aria-live");
      node.removeAttribute("role");
      node.removeAttribute("tabindex");
    }
    copy.removeAttribute("aria-live");
    if (!copy.textContent.trim() && !copy.querySelector("img")) continue;
    block.append(copy);
    parts.push(block);
  }
  if (leftOut.length) {
    parts.push(el(doc, "p", `Left out, because their figures belong to earlier inputs: ${leftOut.join("; ")}.`, "report-note"));
  }

  parts.push(el(doc, "h3", "Cautions"));
  const cautions = el(doc, "ul", undefined, "report-cautions");
  const onPage = [...doc.querySelectorAll("main .cautions li, main .caution, main [data-caution]")]
    .map((n) => n.textContent.trim().replace(/\s+/g, " "))
    .filter(Boolean);
  for (const text of [...new Set(onPage), ...REPORT_CAUTIONS]) cautions.append(el(doc, "li", text));
  parts.push(cautions);
  report.replaceChildren(...parts);
  report.dataset.filled = now.toISOString();
}
