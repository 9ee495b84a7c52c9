// Job "softening": lime and soda ash softening of the water section's water to equilibrium
// with calcite and brucite, the sludge, recarbonation, and the textbook estimate beside it
// (api.soften). One section.js computation; it computes only while the job is shown
// (workbench.js), and catches up when it is next shown.

import { CoreError } from "./py.js";
import { fixed } from "./format.js";
import { staleWaterNote } from "./job.js";
import { parseNumber } from "./parse.js";
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
  view.bindChange((id) => block.schedule(view.isChoice(id) ? 0 : DEBOUNCE_MS));

  const initial = water.scenario?.();
  if (initial) current.scenario = initial;
  view.setWater("Describe the water above; this job works on it.");
  return { refresh };
}
