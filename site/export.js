// Getting things out of the page, the part without DOM: the scenario file, CSV text, the
// curves recomputed for CSV, the report's cautions. The DOM side (downloads, the tables and
// plots of the page, PNG, the printed report) is export-view.js. Nothing is uploaded.

import { exportNumber } from "./format.js";

// batch.js downloads through this module; the DOM code itself lives in the view module.
export { downloadBlob } from "./export-view.js";

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
        out.curve.pH.forEach((x, k) => rows.push(["fraction of one acid", "pH", exportNumber(x), sp.name, exportNumber(out.curve.fractions[j][k])]));
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
          c.pH.forEach((x, k) => rows.push([`water fraction (${sys.id})`, "pH", exportNumber(x), name, exportNumber(sys.fractions[j][k])]));
        });
      }
      for (const line of c.log_concentration) {
        c.pH.forEach((x, k) => rows.push(["water log10 concentration (mol/L)", "pH", exportNumber(x), line.name, exportNumber(line.values[k])]));
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
            exportNumber(volume ? point.titrant_mL : point.dose_mmol_per_L), "pH", exportNumber(point.pH)]);
        }
      } catch {
        /* as above */
      }
    }
  }
  return rows;
}

export function flatten(value, path, out) {
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

