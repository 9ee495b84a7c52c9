// Job "Lead and copper": dissolved lead and copper in equilibrium with their least soluble
// solids, against pH (at the water's DIC and orthophosphate) or against DIC or orthophosphate
// at a fixed pH, with an orthophosphate dose added to the water's own. The water comes from the
// water section's handle ({scenario(), onSolved(cb), onStale(cb)}), as for treatment.js; the job
// computes only while it is shown (workbench.js) and through one section.js computation.

import { CoreError } from "./py.js";
import { parseNumber, phRange, stateNumber } from "./parse.js";
import { notifyInputChange, registerSection } from "./state.js";
import { fixed } from "./format.js";
import { followWater } from "./job.js";
import { computation } from "./section.js";
import { isJobShown, onJobShown } from "./workbench.js";

const DEBOUNCE_MS = 160;
/** Points of each curve (the core's speed target is a 200-point lead curve). */
export const LEAD_POINTS = 201;
/** Each axis: default range, the unit sent to the core, the words shown. */
export const LEAD_AXES = {
  pH: { from: "6.5", to: "10.5", unit: null, words: "pH", digits: 2 },
  DIC: { from: "1", to: "100", unit: "mg/L as C", words: "mg/L as C", digits: 1 },
  orthophosphate: { from: "0", to: "3", unit: "mg/L as P", words: "mg/L as P", digits: 2 },
};
const METAL_LABEL = { lead: "Lead", copper: "Copper" };
/** Candidate solids of each choice (ids of the core's solids database; null: every solid holding the metal). */
export const SOLID_SETS = {
  lead: { all: null, "no-chloride": ["cerussite", "hydrocerussite", "hydroxypyromorphite", "anglesite", "litharge"] },
  copper: { all: null, fresh: ["copper-hydroxide"] },
};
/** Rows of the table: this many points spread evenly along the curve. */
const TABLE_ROWS = 9;

// Core error fields -> input ids.
const FIELDS = { from: "lead-from", to: "lead-to", fixed_pH: "lead-fixed-ph", orthophosphate_dose: "lead-dose",
  axis: "lead-axis" };
const LABEL = { from: "From", to: "To", fixed_pH: "Fixed pH", orthophosphate_dose: "Orthophosphate dose" };

/**
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./lead-view.js").LeadView} deps.view  its DOM
 * @param {object} deps.plot  from embedMetalSolubilityPlot
 * @param {{scenario: () => object|null, onSolved: Function, onStale?: Function}} deps.water  the water's handle
 * @returns {{refresh: () => Promise<void>}}
 */
export function mountLead({ py, view, plot, water }) {
  let owed = true; // a computation was put off while the job was hidden
  let drawn = false;
  // The water above (job.js): each solve computed here; while it cannot be used, what is drawn is marked.
  const current = followWater({ py, water, view, job: "lead", what: "curves", describe, run,
    stale: (note) => {
      block.cancel();
      if (drawn) view.setResultState("stale", note);
    } });

  function read() {
    const raw = view.read();
    const axis = raw["lead-axis"];
    const spec = LEAD_AXES[axis];
    const errors = {};
    const what = axis === "pH" ? "a pH, e.g. 6.5" : `a value in ${spec.words}`;
    const from = parseNumber(raw["lead-from"], what);
    const to = parseNumber(raw["lead-to"], what);
    if (from.error) errors["lead-from"] = from.error;
    if (to.error) errors["lead-to"] = to.error;
    // the core's one pH range (site/parse.js); until the core has said it, the core checks
    const range = phRange();
    const inPH = (v) => !range || (v >= range[0] && v <= range[1]);
    const phWords = range ? `The pH must be from ${range[0]} to ${range[1]}.` : "";
    if (!from.error && !to.error) {
      if (axis === "pH") {
        if (!inPH(from.value)) errors["lead-from"] = phWords;
        if (!inPH(to.value)) errors["lead-to"] = phWords;
      } else {
        if (from.value < 0) errors["lead-from"] = `Enter 0 ${spec.words} or more.`;
        if (to.value < 0) errors["lead-to"] = `Enter 0 ${spec.words} or more.`;
      }
      if (!errors["lead-from"] && !errors["lead-to"] && !(to.value > from.value)) {
        errors["lead-to"] = "The end of the range must be above its start.";
      }
    }
    // on an orthophosphate axis the axis is the total orthophosphate: no dose is added
    const dose = axis === "orthophosphate" ? { value: null }
      : parseNumber(raw["lead-dose"], "the orthophosphate dose in mg/L as P, e.g. 1 (0 for none)");
    if (dose.error) errors["lead-dose"] = dose.error;
    else if (dose.value !== null && dose.value < 0) errors["lead-dose"] = "The dose cannot be negative (0 for none).";
    let fixedPH = null;
    if (axis !== "pH") {
      const f = parseNumber(raw["lead-fixed-ph"], "a pH, or leave it empty for the water's pH", { optional: true });
      if (f.error) errors["lead-fixed-ph"] = f.error;
      else if (f.value !== null && !inPH(f.value)) errors["lead-fixed-ph"] = phWords;
      else fixedPH = f.value;
    }
    if (Object.keys(errors).length || !current.scenario) return { params: null, errors };
    const params = {
      scenario: current.scenario, axis, from: from.value, to: to.value, points: LEAD_POINTS,
    };
    if (dose.value !== null) {
      params.orthophosphate_dose = dose.value;
      params.orthophosphate_dose_unit = "mg/L as P";
    }
    if (spec.unit) params.unit = spec.unit;
    const solids = {};
    for (const metal of ["lead", "copper"]) {
      const set = SOLID_SETS[metal][raw[`lead-${metal}-solids`]];
      if (set) solids[metal] = set;
    }
    if (Object.keys(solids).length) params.solids = solids;
    if (fixedPH !== null) params.fixed_pH = fixedPH;
    return { params, errors };
  }

  function explain(error) {
    if (!(error instanceof CoreError)) return { block: String(error?.message || error) };
    const id = FIELDS[error.field];
    const label = LABEL[error.field];
    const text = label && error.message.startsWith(error.field) ? label + error.message.slice(error.field.length) : error.message;
    if (id) return { [id]: text };
    const about = error.field && error.field !== "scenario" ? ` (${error.field})` : "";
    return { block: `Lead and copper: the water above could not be used${about}: ${text}` };
  }

  /** The water's value on the axis, in the axis unit, from the core's own conversion (x / axis_M). */
  function markerAt(result, axis) {
    if (axis === "pH") return current.result?.pH ?? null;
    const system = axis === "DIC" ? "carbonate" : "phosphate";
    const own = (current.result?.systems || []).find((s) => s.id === system)?.total_M ?? 0;
    const ref = result.points.find((p) => p.axis_M > 0);
    if (!ref) return null;
    return (own * ref.x) / ref.axis_M;
  }

  function render([lead, copper], params) {
    view.showErrors({});
    const spec = LEAD_AXES[params.axis];
    const names = new Map();
    for (const r of [lead, copper]) for (const c of r.constants) names.set(c.id, c.name);
    const nameOf = (id) => (id ? names.get(id) ?? id : null);
    const series = [lead, copper].map((r) => ({
      metal: r.metal,
      label: METAL_LABEL[r.metal],
      points: r.points.map((p) => ({
        x: p.x, y: p.dissolved_ug_per_L, solid: nameOf(p.controlling_solid),
        low: p.band_ug_per_L?.low ?? null, high: p.band_ug_per_L?.high ?? null,
      })),
    }));
    const axisLabel = params.axis === "pH" ? "pH" : `${params.axis === "DIC" ? "DIC" : "orthophosphate"} (${spec.words})`;
    plot.setCurves(series, axisLabel, markerAt(lead, params.axis));
    const n = lead.points.length;
    const picks = [...new Set(Array.from({ length: Math.min(TABLE_ROWS, n) },
      (_, k) => Math.round((k * (n - 1)) / Math.max(1, Math.min(TABLE_ROWS, n) - 1))))];
    const metalRow = (p) => ({
      ug: p.dissolved_ug_per_L, solid: nameOf(p.controlling_solid),
      low: p.band_ug_per_L?.low ?? null, high: p.band_ug_per_L?.high ?? null,
    });
    const rows = picks.map((i) => ({ x: lead.points[i].x, digits: spec.digits, lead: metalRow(lead.points[i]),
      copper: metalRow(copper.points[i]) }));
    const at = params.axis === "pH" ? "at the water's DIC and orthophosphate" : `at pH ${fixed(lead.fixed_pH, 2)}`;
    view.renderTable(axisLabel, `Dissolved lead and copper ${at} (${fixed(lead.temperature_C, 1)} °C)`, rows);
    const constants = [lead, copper].flatMap((r) => r.constants.map((c) => ({
      id: c.id, name: c.name, kind: c.kind, reaction: c.reaction, logK: c.log10_K_25C, spread: c.log10_K_spread,
      source: c.source, provenance: c.provenance, metal: METAL_LABEL[r.metal].toLowerCase(),
    })));
    view.renderConstants(constants);
    const warnings = [...new Set([...lead.warnings, ...copper.warnings])];
    view.setWarnings(warnings);
    view.setCautions(lead.cautions ?? []);
    drawn = true;
    if (current.note) view.setResultState("stale", current.note);
    else view.setResultState("current");
    view.markDrawn();
  }

  const block = computation({
    read,
    call: ({ solids = {}, ...params }) => Promise.all(["lead", "copper"].map((metal) => py.call("solubility",
      solids[metal] ? { ...params, metal, solids: solids[metal] } : { ...params, metal }))),
    render,
    explain,
    show(messages) {
      view.showErrors(messages);
      // no figure beside a question that cannot be answered as asked
      drawn = false;
      plot.setCurves([], view.read()["lead-axis"] === "pH" ? "pH" : "", null);
      view.clear();
      view.setResultState("empty");
    },
    busy: (flag) => view.setBusy(flag),
  });

  function run(delay = 0) {
    if (!isJobShown("lead")) {
      owed = true;
      return;
    }
    owed = false;
    if (delay) block.schedule(delay);
    else block.run();
  }

  function describe(result) {
    if (!result) return "Describe the water above; this job works on it.";
    const sys = (id) => (result.systems || []).find((s) => s.id === id)?.total_M ?? 0;
    const mmol = (v) => (v > 0 ? `${Number((v * 1e3).toPrecision(4))} mmol/L` : "none");
    return `Working on the water above: pH ${fixed(result.pH, 2)}, DIC ${mmol(sys("carbonate"))}, ` +
      `orthophosphate ${mmol(sys("phosphate"))} before any dose, ${fixed(result.temperature_C, 1)} °C.`;
  }

  view.bindChange((id) => {
    notifyInputChange("lead");
    if (id === "lead-axis") {
      const spec = LEAD_AXES[view.read()["lead-axis"]];
      view.write("lead-from", spec.from);
      view.write("lead-to", spec.to);
      view.setAxis(view.read()["lead-axis"], spec.words);
    }
    run(view.isChoice(id) ? 0 : DEBOUNCE_MS);
  });
  onJobShown("lead", () => {
    if (owed) run();
  });

  async function refresh() {
    if (isJobShown("lead")) await block.run();
    else owed = true;
  }

  // Links, examples, saved files and reports carry the job's inputs (state key "lead").
  registerSection("lead", {
    get() {
      const raw = view.read();
      return {
        axis: raw["lead-axis"], from: stateNumber(raw["lead-from"]), to: stateNumber(raw["lead-to"]),
        orthophosphate_dose_mg_per_L_as_P: stateNumber(raw["lead-dose"]), fixed_pH: stateNumber(raw["lead-fixed-ph"]),
        lead_solids: raw["lead-lead-solids"], copper_solids: raw["lead-copper-solids"],
      };
    },
    set(obj) {
      const messages = [];
      if (!obj || typeof obj !== "object") return ["lead: not an object; ignored"];
      const put = (id, value, name) => {
        if (value === undefined) return;
        const text = value === null ? "" : String(value);
        if (!view.write(id, text)) messages.push(`lead: ${name} ${JSON.stringify(value)} is not offered here; kept ${view.read()[id]}`);
      };
      put("lead-axis", obj.axis, "axis");
      const spec = LEAD_AXES[view.read()["lead-axis"]];
      view.setAxis(view.read()["lead-axis"], spec.words);
      put("lead-from", obj.from === undefined ? spec.from : obj.from, "from");
      put("lead-to", obj.to === undefined ? spec.to : obj.to, "to");
      put("lead-dose", obj.orthophosphate_dose_mg_per_L_as_P, "orthophosphate dose");
      put("lead-fixed-ph", obj.fixed_pH, "fixed pH");
      put("lead-lead-solids", obj.lead_solids, "lead solids");
      put("lead-copper-solids", obj.copper_solids, "copper solids");
      return messages;
    },
    refresh,
  });

  view.setAxis("pH", LEAD_AXES.pH.words);
  return { refresh };
}
