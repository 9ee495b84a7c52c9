// Job "Hardness titration": the water's calcium and magnesium titrated with EDTA at a buffered
// pH (pM against titrant volume, end points, total hardness as CaCO3), and the conditional
// formation constants against pH that show why the lab buffers at pH 10. Two section.js
// computations on the water section's water; they compute only while the job is shown.

import { CoreError } from "./py.js";
import { parseNumber, parsePH, phRange, stateNumber } from "./parse.js";
import { notifyInputChange, registerSection } from "./state.js";
import { fixed } from "./format.js";
import { followWater } from "./job.js";
import { computation } from "./section.js";
import { isJobShown, onJobShown } from "./workbench.js";

const DEBOUNCE_MS = 160;
/** The conditional-constant curve's pH range and points. */
export const CONDITIONAL_RANGE = { pH_from: 6, pH_to: 13, points: 71 };
const METAL_LABEL = { calcium: "Calcium", magnesium: "Magnesium" };
const HARDNESS_METALS = ["calcium", "magnesium"];

// Core error fields -> input ids; "scenario" is the water's own problem (no calcium or magnesium).
const FIELDS = { sample_mL: "hardness-sample", titrant_M: "hardness-edta", fixed_pH: "hardness-ph",
  scenario: "hardness-water" };
const LABEL = { sample_mL: "Sample volume", titrant_M: "EDTA concentration", fixed_pH: "Buffered pH" };

/**
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./hardness-view.js").HardnessView} deps.view  its DOM
 * @param {{titration: object, conditional: object}} deps.plots  from embedEdtaTitrationPlot and
 *        embedConditionalConstantPlot
 * @param {{scenario: () => object|null, onSolved: Function, onStale?: Function}} deps.water  the water's handle
 * @returns {{refresh: () => Promise<void>}}
 */
export function mountHardness({ py, view, plots, water }) {
  let owed = true;
  const drawn = { titration: false, conditional: false };
  // The water above (job.js): each solve computed here; while it cannot be used, what is drawn is marked.
  const current = followWater({ py, water, view, job: "hardness", what: "figures", describe, run,
    stale: (note) => {
      for (const [name, b] of [["titration", titration], ["conditional", conditional]]) {
        b.cancel();
        if (drawn[name]) view.setResultState(name, "stale", note);
      }
    } });

  /** The water's calcium and magnesium totals [mol/L] as the core solved them. */
  function hardnessIons(result) {
    const out = {};
    for (const ion of result?.ions || []) if (HARDNESS_METALS.includes(ion.id)) out[ion.id] = ion.total_M;
    return out;
  }

  function readTitration() {
    const raw = view.read();
    const errors = {};
    const vol = parseNumber(raw["hardness-sample"], "the sample volume in mL, e.g. 50");
    if (vol.error) errors["hardness-sample"] = vol.error;
    else if (!(vol.value > 0)) errors["hardness-sample"] = "The sample volume must be more than 0 mL.";
    const conc = parseNumber(raw["hardness-edta"], "the EDTA concentration in mol/L, e.g. 0.01");
    if (conc.error) errors["hardness-edta"] = conc.error;
    else if (!(conc.value > 0)) errors["hardness-edta"] = "The EDTA concentration must be more than 0 mol/L.";
    const pH = parsePH(raw["hardness-ph"], "The buffered pH"); // the core's one pH range (site/parse.js)
    if (pH.error) errors["hardness-ph"] = `${pH.error} The standard method uses 10.`;
    if (current.result) {
      const ions = hardnessIons(current.result);
      if (!(ions.calcium > 0) && !(ions.magnesium > 0)) {
        errors["hardness-water"] = "The water above holds neither calcium nor magnesium: add them to its ions to " +
          "titrate its hardness.";
      }
    }
    if (Object.keys(errors).length || !current.scenario) return { params: null, errors };
    return {
      params: { scenario: current.scenario, titrant: "EDTA", titrant_M: conc.value, sample_mL: vol.value,
        fixed_pH: pH.value },
      errors,
    };
  }

  function explain(error) {
    if (!(error instanceof CoreError)) return { block: String(error?.message || error) };
    const id = FIELDS[error.field];
    const label = LABEL[error.field];
    const text = label && error.message.startsWith(error.field) ? label + error.message.slice(error.field.length) : error.message;
    if (id) return { [id]: text.charAt(0).toUpperCase() + text.slice(1) };
    return { block: `Hardness: the water above could not be used${error.field ? ` (${error.field})` : ""}: ${text}` };
  }

  function settledState(block) {
    if (current.note) view.setResultState(block, "stale", current.note);
    else view.setResultState(block, "current");
  }

  function renderTitration(r) {
    view.showErrors({});
    const mL = r.points.map((p) => p.titrant_mL);
    const present = HARDNESS_METALS.filter((m) => r.points.some((p) => Number.isFinite(p.pM[m])));
    const lines = present.map((m) => ({ metal: m, label: METAL_LABEL[m], pM: r.points.map((p) => p.pM[m]) }));
    const eps = r.end_points.filter((e) => e.titrant_mL !== null && HARDNESS_METALS.includes(e.metal));
    plots.titration.setCurves(mL, lines,
      eps.map((e) => ({ x: e.titrant_mL, y: e.pM, label: `${METAL_LABEL[e.metal]} end point` })));
    const logK = new Map(r.conditional_constants.map((c) => [c.metal, c.log10_K_conditional]));
    const rows = r.end_points.map((e) => ({
      metal: e.metal, name: METAL_LABEL[e.metal] ?? e.metal.charAt(0).toUpperCase() + e.metal.slice(1), mL: e.titrant_mL, stoich: e.stoichiometric_mL,
      pM: e.pM, logK: logK.get(e.metal) ?? null, sharp: e.sharp,
    }));
    view.renderEndPoints(`End points: ${Number(r.sample_mL.toPrecision(6))} mL of sample, ` +
      `${Number(r.titrant_M.toPrecision(4))} mol/L EDTA, buffered at pH ${fixed(r.fixed_pH, 2)}`, rows);
    // Calcium hardness only where the curve itself shows a separate calcium end point before magnesium's.
    const ca = r.end_points.find((e) => e.metal === "calcium");
    const mg = r.end_points.find((e) => e.metal === "magnesium");
    const separate = ca?.sharp && ca.titrant_mL !== null && (!mg || mg.stoichiometric_mL > ca.stoichiometric_mL);
    const caHardness = separate && r.total_hardness_mg_per_L_as_CaCO3 !== null && mg?.titrant_mL
      ? r.total_hardness_mg_per_L_as_CaCO3 * (ca.titrant_mL / mg.titrant_mL)
      : (separate && !mg ? r.total_hardness_mg_per_L_as_CaCO3 : null);
    view.setHardness(r.total_hardness_mg_per_L_as_CaCO3, caHardness, r.hardness_from_composition_mg_per_L_as_CaCO3,
      `no separate calcium end point at pH ${fixed(r.fixed_pH, 1)}: calcium and magnesium are titrated together`);
    view.setWarnings([...r.warnings]);
    drawn.titration = true;
    settledState("titration");
    view.markDrawn("titration");
  }

  const titration = computation({
    read: readTitration,
    call: (params) => py.call("titrate", params),
    render: renderTitration,
    explain,
    show(messages) {
      view.showErrors(messages);
      drawn.titration = false;
      plots.titration.setCurves([], [], []);
      view.clear();
      view.setResultState("titration", "empty");
    },
    busy: (flag) => view.setBusy(flag),
  });

  const conditional = computation({
    read() {
      if (!current.scenario) return { params: null, errors: {} };
      return { params: { scenario: current.scenario, metals: HARDNESS_METALS, ...CONDITIONAL_RANGE }, errors: {} };
    },
    call: (params) => py.call("conditional_constants", params),
    render(r) {
      const pH = parseNumber(view.read()["hardness-ph"], "").value;
      plots.conditional.setCurves(r.pH, r.metals.map((m) => ({
        metal: m.id, label: METAL_LABEL[m.id] ?? m.id, logK: m.log10_K_conditional,
      })), Number.isFinite(pH) ? pH : 10);
      const printed = r.metals.map((m) => `${m.complex} log₁₀ K ${fixed(m.log10_Kf_printed, 2)} at I = ${m.log10_Kf_printed_I_M} mol/L`);
      const sources = [...new Set(r.metals.map((m) => `${m.source ?? "—"}${m.provenance ? ` (${m.provenance})` : ""}`))];
      view.setConditionalBasis(`${r.basis}. Printed constants: ${printed.join("; ")} (${sources.join("; ")}).`);
      drawn.conditional = true;
      settledState("conditional");
      view.markDrawn("conditional");
    },
    show(messages) {
      // the titration owns the messages beside the fields; this plot says why it is empty
      view.setConditionalBasis(`No curve: ${Object.values(messages)[0]}`);
      drawn.conditional = false;
      plots.conditional.setCurves([], [], 10);
      view.setResultState("conditional", "empty");
    },
  });

  function run(delay = 0, blocks = [titration, conditional]) {
    if (!isJobShown("hardness")) {
      owed = true;
      return;
    }
    owed = false;
    for (const b of blocks) {
      if (delay) b.schedule(delay);
      else b.run();
    }
  }

  function describe(result) {
    if (!result) return "Describe the water above; its calcium and magnesium are titrated.";
    const ions = hardnessIons(result);
    const mmol = (v) => (v > 0 ? `${Number((v * 1e3).toPrecision(4))} mmol/L` : "none");
    return `From the water above: calcium ${mmol(ions.calcium ?? 0)}, magnesium ${mmol(ions.magnesium ?? 0)}, ` +
      `${fixed(result.temperature_C, 1)} °C.`;
  }

  view.bindChange((id) => {
    notifyInputChange("hardness");
    // the buffered pH moves the conditional plot's marker only (its curves do not depend on it)
    if (id === "hardness-ph") {
      const pH = parseNumber(view.read()["hardness-ph"], "").value;
      const r = phRange();
      if (Number.isFinite(pH) && (!r || (pH >= r[0] && pH <= r[1])) && drawn.conditional) plots.conditional.setMarker(pH);
    }
    run(DEBOUNCE_MS, [titration]);
  });
  onJobShown("hardness", () => {
    if (owed) run();
  });

  async function refresh() {
    if (isJobShown("hardness")) await Promise.all([titration.run(), conditional.run()]);
    else owed = true;
  }

  // Links, examples, saved files and reports carry the job's inputs (state key "hardness").
  registerSection("hardness", {
    get() {
      const raw = view.read();
      return { sample_mL: stateNumber(raw["hardness-sample"]), titrant_M: stateNumber(raw["hardness-edta"]),
        fixed_pH: stateNumber(raw["hardness-ph"]) };
    },
    set(obj) {
      if (!obj || typeof obj !== "object") return ["hardness: not an object; ignored"];
      for (const [key, id] of [["sample_mL", "hardness-sample"], ["titrant_M", "hardness-edta"], ["fixed_pH", "hardness-ph"]]) {
        if (obj[key] !== undefined) view.write(id, obj[key] === null ? "" : String(obj[key]));
      }
      return [];
    },
    refresh,
  });

  return { refresh };
}
