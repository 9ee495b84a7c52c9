// Job "softening": lime and soda ash softening of the water section's water to equilibrium
// with calcite and brucite, the sludge, recarbonation, and the textbook estimate beside it
// (api.soften). One section.js computation; it computes only while the job is shown
// (workbench.js), and catches up when it is next shown. Links, files and reports carry its
// inputs (state key "softening", the api.soften parameter names; see registerSection below).

import { CoreError } from "./py.js";
import { fixed } from "./format.js";
import { staleWaterNote } from "./job.js";
import { parseNumber, stateNumber } from "./parse.js";
import { notifyInputChange, registerSection } from "./state.js";
import { FLOW_UNITS } from "./treatment-view.js";
import { computation } from "./section.js";
import { isJobShown, onJobShown } from "./workbench.js";

const JOB = "softening";
const DEBOUNCE_MS = 150;

/** Core fields -> input ids. */
const FIELDS = {
  softening_pH: "soften-ph", lime_mg_per_L: "soften-lime", soda_ash_mg_per_L: "soften-soda",
  target_hardness_mg_per_L_as_CaCO3: "soften-target-hardness", excess_lime_meq_per_L: "soften-excess",
  flow: "soften-flow", flow_unit: "soften-flow-unit", first_stage_pH: "soften-ph",
  "recarbonation.target_LSI": "soften-recarb-value", "recarbonation.target_CCPP": "soften-recarb-value",
  "recarbonation.target_pH": "soften-recarb-value", recarbonation: "soften-recarb-value",
};

/** The number inputs as they travel in a link (state key -> input id, the input in words). */
const STATE_NUMBERS = [
  ["softening_pH", "soften-ph", "softening pH"],
  ["lime_mg_per_L", "soften-lime", "lime dose"],
  ["soda_ash_mg_per_L", "soften-soda", "soda ash dose"],
  ["target_hardness_mg_per_L_as_CaCO3", "soften-target-hardness", "target hardness"],
  ["excess_lime_meq_per_L", "soften-excess", "excess lime"],
  ["flow", "soften-flow", "plant flow"],
];
/** Recarbonation targets (the kinds offered by softening-view.js, "none" aside). */
const RECARB_KINDS = ["LSI", "CCPP", "pH"];
/** What the recarbonation goes back to when a link's target cannot be used (the page's start). */
const RECARB_DEFAULT = { kind: "LSI", value: "0" };

/**
 * Read the inputs into the parameters of api.soften (without the scenario).
 *
 * @param {Record<string, string>} raw  the view's raw inputs
 * @returns {{params: object, errors: Record<string, string>}}
 */
export function readSoftening(raw) {
  const errors = {};
  const params = { remove_magnesium: raw["soften-mode"] === "magnesium" };
  const optional = [
    ["soften-ph", "softening_pH", "a softening pH, e.g. 10.3, or leave it empty", 7, 13],
    ["soften-lime", "lime_mg_per_L", "a lime dose in mg/L as Ca(OH)₂, or leave it empty", 0, 5000],
    ["soften-soda", "soda_ash_mg_per_L", "a soda ash dose in mg/L, or leave it empty", 0, 5000],
    ["soften-target-hardness", "target_hardness_mg_per_L_as_CaCO3", "a total hardness in mg/L as CaCO₃, or leave it empty", 0, 5000],
    ["soften-excess", "excess_lime_meq_per_L", "an excess lime in meq/L, or leave it empty", 0, 20],
    ["soften-flow", "flow", "the plant flow, or leave it empty", 0, Infinity],
  ];
  for (const [id, key, what, lo, hi] of optional) {
    const v = parseNumber(raw[id], what, { optional: true });
    if (v.error) errors[id] = v.error;
    else if (v.value !== null && (v.value < lo || v.value > hi || (key === "flow" && v.value === 0))) {
      errors[id] = key === "flow" ? "The plant flow must be above 0, or leave it empty."
        : `${v.value} is outside ${lo} to ${hi}; enter ${what}.`;
    } else if (v.value !== null) params[key] = v.value;
  }
  if (params.softening_pH !== undefined && params.lime_mg_per_L !== undefined) {
    errors["soften-lime"] = "Give a softening pH or a lime dose, not both.";
  }
  if (params.soda_ash_mg_per_L !== undefined && params.target_hardness_mg_per_L_as_CaCO3 !== undefined) {
    errors["soften-target-hardness"] = "Give a soda ash dose or a target hardness, not both.";
  }
  if (params.flow !== undefined) params.flow_unit = raw["soften-flow-unit"];
  const kind = raw["soften-recarb-kind"];
  if (kind === "none") params.recarbonation = null;
  else {
    const what = kind === "pH" ? "a pH, e.g. 8.5" : kind === "LSI" ? "an LSI, e.g. 0" : "a CCPP in mg/L as CaCO₃, e.g. 4";
    const v = parseNumber(raw["soften-recarb-value"], what);
    if (v.error) errors["soften-recarb-value"] = v.error;
    else params.recarbonation = { [`target_${kind}`]: v.value };
  }
  return { params, errors };
}

/**
 * Mount the job.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./softening-view.js").SofteningView} deps.view  its DOM
 * @param {{scenario: () => object|null, onSolved: Function, onStale?: Function}} deps.water  the water handle
 * @returns {{refresh: () => Promise<void>}}
 */
export function mountSoftening({ py, view, water }) {
  let current = { scenario: null };
  let waterNote = "";
  let dirty = true;
  const shown = () => isJobShown(JOB) || view.isVisible();

  const block = computation({
    read() {
      const { params, errors } = readSoftening(view.read());
      if (Object.keys(errors).length) return { params: null, errors };
      if (!current.scenario) return { params: null };
      return { params: { scenario: current.scenario, ...params } };
    },
    call: (params) => py.call("soften", params),
    render(r) {
      view.showErrors({});
      if (!waterNote) view.setWater(`Working on the water above: pH ${fixed(r.water_before.pH, 2)}, ${fixed(r.water_before.temperature_C, 1)} °C.`);
      view.render(r);
      if (waterNote) view.setResultState("stale", waterNote);
      else view.setResultState("current");
      view.markDrawn();
    },
    explain(error) {
      if (!(error instanceof CoreError)) return { block: String(error?.message || error) };
      const id = FIELDS[error.field];
      if (id) return { [id]: error.message };
      const about = error.field && error.field !== "scenario" ? ` (${error.field})` : "";
      return { block: `Softening: the water above could not be used${about}: ${error.message}` };
    },
    show(messages) {
      view.showErrors(messages);
      view.render(null); // no number beside a question that cannot be answered
      view.setResultState("empty");
    },
    busy: (flag) => view.setBusy(flag),
    active: shown, // a link settled while the job is put away is computed when it is shown
  });

  async function refresh() {
    if (!shown()) {
      dirty = true;
      return;
    }
    dirty = false;
    await block.run();
  }

  water.onSolved((scenario, result) => {
    current = { scenario };
    waterNote = "";
    view.setWater(`Working on the water above: pH ${fixed(result.pH, 2)}, ${fixed(result.temperature_C, 1)} °C.`);
    refresh();
  });
  water.onStale?.((note, result) => {
    waterNote = staleWaterNote(result, "figures");
    view.setWater(waterNote, true);
    block.cancel();
    view.setResultState("stale", waterNote);
  });
  onJobShown(JOB, () => {
    if (dirty) refresh();
  });
  view.bindChange((id) => {
    notifyInputChange(JOB);
    block.schedule(view.isChoice(id) ? 0 : DEBOUNCE_MS);
  });

  // -- links, files and reports (state key "softening"): api.soften's own parameter names ----
  // {remove_magnesium, softening_pH, lime_mg_per_L, soda_ash_mg_per_L,
  //  target_hardness_mg_per_L_as_CaCO3, excess_lime_meq_per_L, flow, flow_unit,
  //  recarbonation: {target_LSI | target_CCPP | target_pH} or null (none)}; empty inputs are null,
  //  a number that does not read as one travels as its text (the page then names it as dropped).
  const text = (v) => (v === null || v === undefined ? "" : typeof v === "object" ? JSON.stringify(v) : String(v));
  const quoted = (v) => `"${text(v).slice(0, 40)}"`;
  let opened = false;

  function get() {
    const raw = view.read();
    const kind = raw["soften-recarb-kind"];
    return {
      remove_magnesium: raw["soften-mode"] === "magnesium",
      ...Object.fromEntries(STATE_NUMBERS.map(([key, id]) => [key, stateNumber(raw[id])])),
      flow_unit: raw["soften-flow-unit"],
      recarbonation: kind === "none" ? null : { [`target_${kind}`]: stateNumber(raw["soften-recarb-value"]) },
    };
  }

  function set(obj) {
    if (!obj || typeof obj !== "object" || Array.isArray(obj)) return ["Softening: not a group of inputs; ignored"];
    const notes = [];
    if (typeof obj.remove_magnesium === "boolean") view.write("soften-mode", obj.remove_magnesium ? "magnesium" : "calcium");
    else if (obj.remove_magnesium !== undefined) {
      notes.push(`Softening: what to remove (${quoted(obj.remove_magnesium)}) is not yes or no; kept ${view.read()["soften-mode"]} only`);
    }
    for (const [key, id] of STATE_NUMBERS) if (obj[key] !== undefined) view.write(id, text(obj[key]));
    if (obj.flow_unit !== undefined) {
      if (!FLOW_UNITS.some(([u]) => u === obj.flow_unit)) notes.push(`Softening: flow unit ${quoted(obj.flow_unit)} is not known; kept ${view.read()["soften-flow-unit"]}`);
      else view.write("soften-flow-unit", obj.flow_unit);
    }
    const r = obj.recarbonation;
    if (r === null) view.write("soften-recarb-kind", "none");
    else if (r && typeof r === "object" && !Array.isArray(r) && RECARB_KINDS.some((k) => r[`target_${k}`] !== undefined)) {
      const kind = RECARB_KINDS.find((k) => r[`target_${k}`] !== undefined);
      view.write("soften-recarb-kind", kind);
      view.write("soften-recarb-value", text(r[`target_${kind}`]));
    } else if (r !== undefined) {
      notes.push(`Softening: the recarbonation ${quoted(r)} names no target LSI, CCPP or pH; kept ${view.read()["soften-recarb-kind"]} ${view.read()["soften-recarb-value"]}`);
    }
    opened = true;
    dirty = true; // computed when the job is shown (or at once when it is)
    return notes;
  }

  /** Put the inputs named in `problems` back to their defaults (see section.js settle). */
  function reset(problems) {
    const notes = [];
    const raw = view.read();
    for (const [id, message] of Object.entries(problems)) {
      const why = String(message).replace(/\.$/, "");
      const number = STATE_NUMBERS.find(([, input]) => input === id);
      if (number && raw[id] !== "") {
        view.write(id, "");
        notes.push(`Softening: ${number[2]} ${quoted(raw[id])} could not be used (${why}); it was left empty`);
      } else if (id === "soften-recarb-value" && (raw["soften-recarb-kind"] !== RECARB_DEFAULT.kind || raw[id] !== RECARB_DEFAULT.value)) {
        view.write("soften-recarb-kind", RECARB_DEFAULT.kind);
        view.write(id, RECARB_DEFAULT.value);
        notes.push(`Softening: recarbonation to ${raw["soften-recarb-kind"] === "pH" ? "a pH" : `a ${raw["soften-recarb-kind"]}`} of ` +
          `${quoted(raw[id])} could not be used (${why}); to an LSI of 0 instead`);
      }
    }
    return notes;
  }

  async function settle() {
    if (!opened) return [];
    opened = false;
    // the inputs are checked (and, while the job is shown, computed); what cannot be used goes
    // back to its default and is named
    return block.settle(reset);
  }

  registerSection(JOB, { get, set, settle, refresh });

  const initial = water.scenario?.();
  if (initial) current.scenario = initial;
  view.setWater("Describe the water above; this job works on it.");
  return { refresh };
}
