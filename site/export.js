// Getting things out of the page, the part without DOM: the scenario file, CSV text, the
// curves recomputed for CSV, the report's cautions. The DOM side (downloads, the tables and
// plots of the page, PNG, the printed report) is export-view.js. Nothing is uploaded.

import { exportNumber } from "./format.js";
import { JOBS } from "./workbench.js";

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

/** Cautions printed on every report, whatever the page shows. */
export const REPORT_CAUTIONS = [
  "Doses computed here are estimates from an equilibrium model of the water as described; check them by jar test or a measured trial before changing a plant.",
  "Treatment chemicals (acids, caustic soda, lime, carbon dioxide, chlorine) can injure people: handle them under your site's safety procedures, with the protective equipment their safety data sheets require.",
  "Local regulations and the licensed operator in charge decide what is dosed; this report does not replace their judgement.",
];


// -- the report's inputs in words ---------------------------------------------------------------

/** Unit suffixes of state keys (the core's naming: the unit is in the key) -> the unit shown. */
const KEY_UNITS = [
  ["_mg_per_L_as_CaCO3", "mg/L as CaCO₃"], ["_mg_per_L_as_P", "mg/L as P"], ["_uS_per_cm", "µS/cm"],
  ["_kg_per_L", "kg/L"], ["_mg_per_L", "mg/L"], ["_per_L", "per L"], ["_pct", "%"], ["_atm", "atm"], ["_mL", "mL"],
  ["_M", "mol/L"], ["_N", "eq/L"],
  ["_C", "°C"], ["_F", "°F"],
];
/** Words for keys whose plain form reads badly. */
const KEY_WORDS = {
  pH: "pH", pKa: "pKa", to_pH: "to pH", from_pH: "from pH", target_pH: "target pH", fixed_pH: "fixed pH",
  pCO2: "CO₂ partial pressure",
  CO2_partial_pressure_atm: "CO₂ partial pressure", total_M: "total concentration", log_scale: "logarithmic axis",
  plot_system: "system plotted", charge: "charge of the most protonated form",
};

/** "target_pH" -> "Target pH"; "strength_pct" -> "Strength"; with the unit the key carries. */
export function keyWords(key) {
  let unit = "";
  let base = String(key);
  if (!Object.hasOwn(KEY_WORDS, base)) {
    for (const [suffix, u] of KEY_UNITS) {
      if (base.endsWith(suffix) && base.length > suffix.length) {
        unit = u;
        base = base.slice(0, -suffix.length);
        break;
      }
    }
  }
  const words = KEY_WORDS[base] ?? base.replace(/_/g, " ").replace(/([a-z])([A-Z])/g, "$1 $2").toLowerCase()
    .replace(/\bph\b/g, "pH").replace(/\bco2\b/g, "CO₂").replace(/\b(lsi|ccpp|rsi|dic|tds|edta)\b/g, (w) => w.toUpperCase());
  return { label: words.charAt(0).toUpperCase() + words.slice(1), unit };
}

function plain(value) {
  if (value === null || value === undefined || value === "") return null;
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (typeof value === "number") return String(Number(value.toPrecision(6)));
  if (Array.isArray(value)) return value.every((v) => typeof v !== "object" || v === null) ? value.map(plain).join(", ") : null;
  return typeof value === "object" ? null : String(value);
}

/** Rows [label, text] for any object, keys turned into words (for sections without a describer). */
function genericRows(obj, prefix = "") {
  const rows = [];
  for (const [key, value] of Object.entries(obj ?? {})) {
    const { label, unit } = keyWords(key);
    const name = prefix ? `${prefix}, ${label.charAt(0).toLowerCase()}${label.slice(1)}` : label;
    const text = plain(value);
    if (text !== null) rows.push([name, unit ? `${text} ${unit}` : text]);
    else if (Array.isArray(value)) value.forEach((v, i) => rows.push(...genericRows(v, `${name} ${i + 1}`)));
    else if (value && typeof value === "object") rows.push(...genericRows(value, name));
  }
  return rows;
}

const ACTIVITY_WORDS = {
  ideal: "ideal (activities equal concentrations)", davies: "Davies equation",
  "extended-debye-huckel": "extended Debye–Hückel (Kielland ion sizes)",
};

const capital = (s) => String(s).charAt(0).toUpperCase() + String(s).slice(1);

/** A target or dose of the scale job (a dose or a sequence step) in words with its unit. */
const SCALE_TARGETS = [
  ["target_pH", (v) => `to pH ${v}`],
  ["target_LSI", (v) => `to an LSI of ${v}`],
  ["target_CCPP", (v) => `to a CCPP of ${v} mg/L as CaCO₃`],
  ["dose_mg_per_L", (v) => `a fixed dose of ${v} mg/L`],
];
/** Recarbonation targets of the softening job in words with their units. */
const RECARBONATION = [
  ["target_LSI", (v) => `with CO₂ to an LSI of ${v}`],
  ["target_CCPP", (v) => `with CO₂ to a CCPP of ${v} mg/L as CaCO₃`],
  ["target_pH", (v) => `with CO₂ to pH ${v}`],
];

/**
 * The report's inputs in words, one group per section of the state.
 *
 * @param {object} state  from collectState()
 * @param {(kind: string, id: string) => string|null} [nameOf]  the page's words for an id
 *        ("system", "ion", "chemical", "product", "flow-unit", "acid", "axis", "dose-chemical",
 *        "example": an example water), null if unknown
 * @returns {{title: string, rows: [string, string][]}[]}
 */
export function describeInputs(state, nameOf = () => null) {
  const name = (kind, id) => nameOf(kind, id) ?? capital(id);
  const groups = [];
  const num = (v) => (typeof v === "number" ? String(Number(v.toPrecision(6))) : v === null || v === undefined ? null : String(v));
  const push = (rows, label, value, unit = "") => {
    const text = num(value);
    if (text !== null && text !== "") rows.push([label, unit ? `${text} ${unit}` : text]);
  };
  for (const [section, value] of Object.entries(state ?? {})) {
    if (section === "v" || !value || typeof value !== "object") continue;
    if (section === "water" && value.scenario && typeof value.scenario === "object") {
      const s = value.scenario;
      const rows = [];
      push(rows, "Temperature", s.temperature_C, "°C");
      if (s.activity) rows.push(["Activity model", ACTIVITY_WORDS[s.activity] ?? String(s.activity)]);
      const m = s.measured;
      if (m && typeof m === "object") {
        push(rows, "Measured pH", m.pH);
        const a = m.alkalinity;
        if (a && typeof a === "object") push(rows, "Total alkalinity", a.value, a.unit ?? "");
        else push(rows, "Total alkalinity", a, "mg/L as CaCO₃");
      }
      push(rows, "pH (given)", s.pH);
      push(rows, "Ionic strength (given)", s.ionic_strength_M, "mol/L");
      push(rows, "Total dissolved solids", s.tds_mg_per_L, "mg/L");
      push(rows, "Specific conductance", s.conductance_uS_per_cm, "µS/cm at 25 °C");
      push(rows, "Open to CO₂ at a partial pressure of", s.gas?.CO2_partial_pressure_atm, "atm");
      for (const [list, kind] of [[s.systems, "system"], [s.ions, "ion"]]) {
        for (const item of Array.isArray(list) ? list : []) {
          if (!item || typeof item !== "object") continue;
          const label = item.custom ? `${item.custom.name ?? "Own " + kind}${Array.isArray(item.custom.pKa) ? ` (pKa ${item.custom.pKa.join(", ")})` : ""}` : name(kind, item.id);
          push(rows, label, item.total, item.unit ?? "mol/L");
        }
      }
      if (typeof s.complexes === "boolean") rows.push(["Ion pairs and complexes", s.complexes ? "included" : "left out"]);
      if (Array.isArray(s.precipitate) && s.precipitate.length) rows.push(["Solids allowed to form", s.precipitate.join(", ")]);
      const known = new Set(["temperature_C", "activity", "measured", "pH", "ionic_strength_M", "tds_mg_per_L",
        "conductance_uS_per_cm", "gas", "systems", "ions", "complexes", "precipitate"]);
      rows.push(...genericRows(Object.fromEntries(Object.entries(s).filter(([k]) => !known.has(k)))));
      groups.push({ title: "The water", rows });
    } else if (section === "treatment") {
      const t = value.titration ?? {};
      const d = value.dose ?? {};
      const b = value.buffer ?? {};
      const titration = [];
      if (t.titrant) titration.push(["Titrant", name("chemical", t.titrant)]);
      if (t.titrant_N !== undefined && t.titrant_N !== null) push(titration, "Titrant normality", t.titrant_N, "eq/L");
      else push(titration, "Titrant concentration", t.titrant_M, "mol/L");
      push(titration, "Sample volume", t.sample_mL, "mL");
      titration.push(["Titrated to", t.to_pH === null || t.to_pH === undefined ? "automatic end (pH 3.5 with an acid, 11 with a base)" : `pH ${num(t.to_pH)}`]);
      if (t.axis) titration.push(["Amount shown as", t.axis === "dose" ? "dose, mg/L of pure chemical" : "titrant volume, mL"]);
      const dose = [];
      if (d.chemical) dose.push(["Chemical", name("chemical", d.chemical)]);
      if (d.product) dose.push(["Product", name("product", d.product)]);
      push(dose, "Target pH", d.target_pH);
      push(dose, "Product strength", d.strength_pct, "% w/w");
      push(dose, "Product density", d.density_kg_per_L, "kg/L");
      if (d.flow !== null && d.flow !== undefined) push(dose, "Plant flow", d.flow, name("flow-unit", d.flow_unit ?? ""));
      const buffer = [];
      if (b.from_pH !== null && b.from_pH !== undefined && b.to_pH !== null && b.to_pH !== undefined) {
        buffer.push(["Buffer capacity between", `pH ${num(b.from_pH)} and pH ${num(b.to_pH)}`]);
      }
      if (typeof b.log_scale === "boolean") buffer.push(["Buffer intensity axis", b.log_scale ? "logarithmic" : "linear"]);
      groups.push({ title: "Titration", rows: titration }, { title: "Dose to a target pH", rows: dose });
      if (buffer.length) groups.push({ title: "Buffer intensity", rows: buffer });
    } else if (section === "scale") {
      groups.push(...scaleGroups(value, name, num, push));
    } else if (section === "softening") {
      groups.push(softeningGroup(value, name, num, push));
    } else if (section === "workbench") {
      const job = JOBS.find((j) => j.name === value.job);
      if (job) groups.push({ title: "Job in view", rows: [["Job", `${job.label} (${job.title.charAt(0).toLowerCase()}${job.title.slice(1)})`]] });
    } else if (section === "distribution") {
      const rows = [];
      if (value.acid && value.acid !== "custom") rows.push(["Acid", name("acid", value.acid)]);
      else if (Array.isArray(value.pKa)) rows.push(["Acid", `own acid, pKa ${value.pKa.join(", ")}, charge of the most protonated form ${num(value.charge)}`]);
      push(rows, "Total concentration", value.total_M, "mol/L");
      push(rows, "pH of the species table", value.pH);
      groups.push({ title: "One-acid explorer", rows });
    } else {
      groups.push({ title: capital(keyWords(section).label), rows: genericRows(value) });
    }
  }
  const order = (g) => (g.title === "The water" ? 0 : g.title === "Job in view" ? 1 : g.title === "One-acid explorer" ? 3 : 2);
  return groups.filter((g) => g.rows.length).sort((a, b) => order(a) - order(b));
}

/** The first of `kinds` ([key, words]) that `obj` holds, in words; null when none. */
function targetWords(obj, kinds, num) {
  for (const [key, words] of kinds) {
    if (obj && Object.hasOwn(obj, key)) return words(num(obj[key]) ?? "(none)");
  }
  return null;
}

/** The scale job's inputs (site/scale.js, state key "scale") in words with their units. */
function scaleGroups(value, name, num, push) {
  const chemical = (id) => name("dose-chemical", id);
  const indices = [];
  const temps = value.ccpp_temperatures_C;
  if (Array.isArray(temps) && temps.length) indices.push(["CCPP also at", `${temps.map(num).join(", ")} °C`]);
  else if (typeof temps === "string" && temps) indices.push(["CCPP also at", `“${temps}” (not read as temperatures)`]);
  push(indices, "CCPP also open to CO₂ at a partial pressure of", value.CO2_partial_pressure_atm, "atm");
  const d = value.dose && typeof value.dose === "object" ? value.dose : {};
  const dose = [];
  if (d.chemical) dose.push(["Chemical", chemical(d.chemical)]);
  const target = targetWords(d, SCALE_TARGETS, num);
  if (target) dose.push(["Target", target.replace(/^to /, "")]);
  if (d.flow !== null && d.flow !== undefined) push(dose, "Plant flow", d.flow, name("flow-unit", d.flow_unit ?? ""));
  const steps = (Array.isArray(value.steps) ? value.steps : []).filter((s) => s && typeof s === "object")
    .map((s, i) => [`Step ${i + 1}`, [chemical(s.chemical ?? ""), targetWords(s, SCALE_TARGETS, num)].filter(Boolean).join(", ")]);
  const b = value.blend && typeof value.blend === "object" ? value.blend : {};
  const blend = [];
  if (b.other) blend.push(["The other water", name("example", b.other)]);
  if (Array.isArray(b.fractions) && b.fractions.length === 2) {
    blend.push(["Flow fractions", `${num(b.fractions[0]) ?? "—"} of the water above, ${num(b.fractions[1]) ?? "—"} of the other water`]);
  }
  return [
    { title: "Scale and corrosion: calcium carbonate indices", rows: indices },
    { title: "Scale and corrosion: condition to a target LSI or CCPP", rows: dose },
    { title: "Scale and corrosion: chemicals in sequence", rows: steps },
    { title: "Scale and corrosion: blend with another water", rows: blend },
  ];
}

/** The softening job's inputs (site/softening.js, state key "softening") in words with their units. */
function softeningGroup(value, name, num, push) {
  const rows = [];
  if (typeof value.remove_magnesium === "boolean") rows.push(["Remove", value.remove_magnesium ? "calcium and magnesium" : "calcium only"]);
  push(rows, "Softening pH", value.softening_pH);
  push(rows, "Lime dose", value.lime_mg_per_L, "mg/L as Ca(OH)₂");
  if (value.softening_pH == null && value.lime_mg_per_L == null) {
    // the core's defaults (operations/softening.py SOFTENING_PH_CALCIUM, SOFTENING_PH_MAGNESIUM)
    rows.push(["Softening pH", `not given: the usual ${value.remove_magnesium ? "11.0 with magnesium removal" : "10.3 for calcium removal"}`]);
  }
  push(rows, "Soda ash dose", value.soda_ash_mg_per_L, "mg/L as Na₂CO₃");
  push(rows, "Soda ash to a total hardness of", value.target_hardness_mg_per_L_as_CaCO3, "mg/L as CaCO₃");
  push(rows, "Excess lime of the textbook estimate", value.excess_lime_meq_per_L, "meq/L");
  if (value.flow !== null && value.flow !== undefined) push(rows, "Plant flow", value.flow, name("flow-unit", value.flow_unit ?? ""));
  if (value.recarbonation === null) rows.push(["Recarbonation", "none"]);
  else {
    const words = targetWords(value.recarbonation, RECARBONATION, num);
    if (words) rows.push(["Recarbonation", words]);
  }
  return { title: "Softening", rows };
}
