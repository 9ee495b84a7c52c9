// Job "scale": will the water lay down calcium carbonate scale or dissolve it, and what
// conditions it. Four blocks work on the water section's water (its handle: scenario(),
// onSolved(cb), onStale(cb)), each a section.js computation (latest-only requests):
//   indices   solve with the uncertainty ranges, the extra temperatures and the open CCPP
//             (api.solve's "calcium_carbonate" block)
//   curves    saturation index against pH and CCPP against temperature, with bands
//             (api.scale_curves)
//   dose      a dose to a target LSI or CCPP with what precipitates and the cautions (api.dose)
//   steps     several chemicals in sequence, the water after each (api.treat)
//   blend     the water above blended with an example water by flow fraction (api.blend)
// The job computes only while it is shown (workbench.js); a water solved meanwhile is
// computed when the job is next shown, and the plots are laid out again then.
// Links, files and reports carry the job's inputs (state key "scale", see registerSection
// below); a value a link holds that cannot be used goes back to its default and is named.

import { CoreError } from "./py.js";
import { fixed } from "./format.js";
import { staleWaterNote } from "./job.js";
import { cleanNumberText, parseNumber, parseTemperatureList as readTemperatures, stateNumber } from "./parse.js";
import { notifyInputChange, registerSection } from "./state.js";
import { FLOW_UNITS } from "./treatment-view.js";
import { STEP_KINDS } from "./scale-view.js";
import { computation } from "./section.js";
import { isJobShown, onJobShown } from "./workbench.js";
import { relayoutPlots } from "./plot.js";
import { loadPresets } from "./presets.js";

/** A signed number with fixed decimals ("+0.35", "−1.20", "0.00"; "—" when missing). */
function signedFixed(x, d) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  const r = Number(x.toFixed(d));
  return (r > 0 ? "+" : "") + fixed(r === 0 ? 0 : x, d);
}

const DEBOUNCE_MS = 150;
const JOB = "scale";
/** Temperature grid of the CCPP curve [°C]: 5 to 100 in steps of 5. */
const CURVE_T = { from_C: 5, to_C: 100, points: 20 };
const MAX_TEMPERATURES = 8;
/** Chemicals offered first (the conditioning chemicals of the trade); any other follows. */
const CONDITIONING = ["NaOH", "Ca(OH)2", "Na2CO3", "CO2", "NaHCO3", "H2SO4", "HCl"];
const DEFAULT_STEPS = [
  { chemical: "Ca(OH)2", kind: "target_pH", value: "9.5" },
  { chemical: "CO2", kind: "target_LSI", value: "0" },
];
/** The blend's flow fractions the page starts with (scale-view.js), and goes back to. */
const DEFAULT_FRACTIONS = ["0.7", "0.3"];

// What an input goes back to when a link, file or example holds a value that cannot be used:
// input id -> [default text, what happens then, the input's name in words].
const DEFAULTS = {
  "scale-temperatures": ["", "no further temperatures are used", "CCPP temperatures"],
  "scale-pco2": ["", "the CCPP open to CO₂ is left out", "CO₂ partial pressure of the open CCPP"],
  "scale-dose-target": ["0", "0 is used instead", "dose target"],
  "scale-dose-flow": ["", "it was left empty", "plant flow of the dose"],
};

/**
 * Read a list of temperatures [°C] with the page's one number reader (site/parse.js): separated
 * by "; ", ", " or spaces ("60, 100" is two temperatures), each in °C, °F or K, decimal commas
 * allowed ("12,5; 140 °F"), within the core's temperature range.
 *
 * @param {string} text
 * @returns {{value?: number[], error?: string}}
 */
export function parseTemperatureList(text) {
  const read = readTemperatures(text, "a temperature, e.g. 60 (°C) or 140 °F; separate several with \"; \"");
  if (read.error) return { error: read.error };
  const out = read.value;
  if (out.length > MAX_TEMPERATURES) return { error: `At most ${MAX_TEMPERATURES} temperatures; ${out.length} were given.` };
  return { value: out };
}

function sign(x, d) {
  return signedFixed(x, d);
}

/** The verdict in words, and how sure it is. */
function verdictOf(cc) {
  const unc = cc.uncertainty || {};
  const [lo, hi] = unc.LSI_range || [null, null];
  const ccpp = cc.CCPP_mg_per_L_as_CaCO3;
  let text;
  if (cc.tendency === "deposit") {
    text = `This water will deposit calcium carbonate (scale): LSI ${sign(cc.LSI, 2)}` +
      (Number.isFinite(ccpp) ? `; up to ${fixed(ccpp, 1)} mg/L as CaCO₃ can precipitate (CCPP).` : ".");
  } else if (cc.tendency === "dissolve") {
    text = `This water will dissolve calcium carbonate (it attacks cement and lays down no protective scale): ` +
      `LSI ${sign(cc.LSI, 2)}` + (Number.isFinite(ccpp) ? `; it would dissolve ${fixed(-ccpp, 1)} mg/L as CaCO₃.` : ".");
  } else {
    text = `This water is at saturation with calcium carbonate (LSI ${sign(cc.LSI, 2)}): it neither deposits nor dissolves much.`;
  }
  if (Number.isFinite(lo) && Number.isFinite(hi) && lo < 0 && hi > 0) {
    text += ` The LSI's range (${sign(lo, 2)} to ${sign(hi, 2)}) includes zero: within the usual measurement uncertainty the sign is not certain.`;
  }
  return text;
}

/**
 * Mount the job.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./scale-view.js").ScaleView} deps.view  its DOM
 * @param {{saturation: object, ccpp: object}} deps.plots  from plot.js embedScalePlots
 * @param {{scenario: () => object|null, onSolved: Function, onStale?: Function}} deps.water  the water handle
 * @param {{id: string, name: string}[]} deps.chemicals  from the core's "chemicals" method
 * @returns {{refresh: () => Promise<void>}}
 */
export function mountScale({ py, view, plots, water, chemicals }) {
  const order = (c) => {
    const k = CONDITIONING.indexOf(c.id);
    return k < 0 ? CONDITIONING.length : k;
  };
  const offered = [...chemicals].sort((a, b) => order(a) - order(b));
  const known = new Set(offered.map((c) => c.id));
  view.setChemicals(offered);
  const defaultSteps = DEFAULT_STEPS.filter((s) => known.has(s.chemical));
  view.setSteps(defaultSteps);
  if (known.has("NaOH")) view.write("scale-dose-chemical", "NaOH");
  let current = { scenario: null, result: null };
  let waterNote = "";
  let dirty = true; // the water changed while the job was hidden
  let lastIndices = null;
  let lastCurves = null;

  const shown = () => isJobShown(JOB) || view.isVisible();

  // -- indices and curves ---------------------------------------------------------------------
  function readIndexInputs() {
    const raw = view.read();
    const errors = {};
    const temps = parseTemperatureList(raw["scale-temperatures"]);
    if (temps.error) errors["scale-temperatures"] = temps.error;
    const p = parseNumber(raw["scale-pco2"], "a CO₂ partial pressure in atm, e.g. 0.00042, or leave it empty", { optional: true });
    if (p.error) errors["scale-pco2"] = p.error;
    else if (p.value !== null && !(p.value > 0 && p.value <= 10)) {
      errors["scale-pco2"] = "The CO₂ partial pressure must be above 0 and at most 10 atm (air holds about 0.00042).";
    }
    return { temps: temps.value ?? [], pCO2: p.value ?? null, errors };
  }

  function missingMessage(result) {
    const has = (id) => (result?.ions ?? []).some((i) => i.id === id && i.total_M > 0);
    const hasC = (result?.systems ?? []).some((s) => s.id === "carbonate" && s.total_M > 0);
    const missing = [!has("calcium") && "calcium", !hasC && "alkalinity (carbonate)"].filter(Boolean);
    return `The calcium carbonate indices need calcium and alkalinity: the water above has no ${missing.join(" and no ") || "calcium carbonate data"}. Add them to the water to see the LSI, RSI and CCPP.`;
  }

  function drawCcppPlot() {
    if (!lastCurves) return;
    const c = lastCurves.ccpp_against_temperature;
    const marks = (lastIndices?.at_temperatures ?? []).map((row, i) => ({
      t: row.temperature_C, ccpp: row.CCPP_mg_per_L_as_CaCO3,
      label: i === 0 ? "the water as it is" : `${fixed(row.temperature_C, 0)} °C`,
    }));
    plots.ccpp.setCurve(c.temperature_C, c.CCPP_mg_per_L_as_CaCO3, c.CCPP_low ?? [], c.CCPP_high ?? [], marks);
  }

  const indices = computation({
    read() {
      const { temps, pCO2, errors } = readIndexInputs();
      if (Object.keys(errors).length) return { params: null, errors };
      if (!current.scenario) return { params: null };
      const scenario = { ...current.scenario, uncertainty: true, ccpp_temperatures_C: temps };
      if (pCO2 !== null) scenario.ccpp_open_CO2_partial_pressure_atm = pCO2;
      return { params: scenario };
    },
    call: (scenario) => py.call("solve", scenario),
    render(result) {
      const cc = result.calcium_carbonate;
      if (!cc) {
        lastIndices = null;
        view.showErrors("indices", { block: missingMessage(result) });
        view.renderIndices(null);
        view.setResultState("indices", "empty");
        return;
      }
      view.showErrors("indices", {});
      if (!waterNote) view.setWater(`Working on the water above: pH ${fixed(result.pH, 2)}, ${fixed(result.temperature_C, 1)} °C.`);
      lastIndices = cc;
      const u = cc.uncertainty || {};
      const ranges = {
        LSI: u.LSI_range, pHs: u.pHs_range, RSI: u.RSI_range, CCPP: u.CCPP_range_mg_per_L_as_CaCO3,
        CCPP_open: u.CCPP_open_range_mg_per_L_as_CaCO3,
      };
      const classic = cc.classic ? ` Classic form (total calcium and total alkalinity, no ion pairs): LSI ${sign(cc.classic.LSI, 2)}, pHs ${fixed(cc.classic.pHs, 2)}.` : "";
      const dominant = u.dominant?.LSI ? ` The input that moves the LSI most: ${u.dominant.LSI}.` : "";
      view.renderIndices(cc, {
        verdict: verdictOf(cc),
        tendency: cc.tendency,
        methodShort: `Method: ${cc.method_id}${cc.method_id === "with ion pairs" ? " (free-ion activities of the equilibrium model)" : ""}, ` +
          `Standard Methods 2330 B and C, at ${fixed(cc.temperature_C, 1)} °C and pH ${fixed(cc.pH, 2)}.${classic}`,
        method: `${cc.method}.` +
          ` CCPP: ${cc.CCPP_method}.${dominant} Ranges: ${u.method ?? "not computed"}.`,
        notes: [...(cc.notes ?? []), ...(cc.at_temperatures ?? []).flatMap((r) => (r.notes ?? []).map((n) => `${fixed(r.temperature_C, 0)} °C: ${n}`))],
        ranges,
      });
      drawCcppPlot();
      settled("indices");
      view.markDrawn("indices");
    },
    explain: (error) => coreMessage(error, { ccpp_open_CO2_partial_pressure_atm: "scale-pco2", ccpp_temperatures_C: "scale-temperatures" }, "Indices"),
    show(messages, kind) {
      view.showErrors("indices", messages);
      lastIndices = null;
      view.renderIndices(null); // no number beside a question that cannot be answered
      view.setResultState("indices", "empty");
      if (kind === "failed") view.setBandNote("");
    },
    busy: (flag) => view.setBusy("indices", flag),
    active: shown, // a link settled while the job is put away is computed when it is shown
  });

  const curves = computation({
    read: () => ({ params: current.scenario ? { scenario: current.scenario, temperature: CURVE_T } : null }),
    call: (params) => py.call("scale_curves", params),
    render(r) {
      lastCurves = r;
      const s = r.saturation_against_pH;
      plots.saturation.setCurve(s.pH, s.LSI, s.LSI_low ?? [], s.LSI_high ?? [],
        { pH: s.water.pH, LSI: s.water.LSI, label: "the water" });
      drawCcppPlot();
      view.setBandNote(`Saturation index plot: ${s.method}; ${s.band ?? ""}. CCPP plot: ${r.ccpp_against_temperature.method}; ` +
        `${r.ccpp_against_temperature.band ?? ""}.` + [...(s.notes ?? []), ...(r.ccpp_against_temperature.notes ?? [])].map((n) => ` ${n}.`).join(""));
      view.markDrawn("curves");
    },
    explain: (error) => ({ block: error instanceof CoreError ? error.message : String(error?.message || error) }),
    show() {
      lastCurves = null;
      plots.saturation.setCurve([], [], [], [], null);
      plots.ccpp.setCurve([], [], [], [], []);
      view.setBandNote("");
    },
    busy: () => {},
  });

  // -- dose to a target LSI or CCPP -------------------------------------------------------------
  const DOSE_FIELDS = {
    chemical: "scale-dose-chemical", target_LSI: "scale-dose-target", target_CCPP: "scale-dose-target",
    flow: "scale-dose-flow", flow_unit: "scale-dose-flow-unit",
  };
  const dose = computation({
    read() {
      const raw = view.read();
      const errors = {};
      const kind = raw["scale-dose-target-kind"];
      const target = parseNumber(raw["scale-dose-target"], kind === "LSI" ? "the target LSI, e.g. 0" : "the target CCPP in mg/L as CaCO₃, e.g. 4");
      if (target.error) errors["scale-dose-target"] = target.error;
      const flow = parseNumber(raw["scale-dose-flow"], "the plant flow, or leave it empty", { optional: true });
      if (flow.error) errors["scale-dose-flow"] = flow.error;
      else if (flow.value !== null && !(flow.value > 0)) errors["scale-dose-flow"] = "The plant flow must be above 0, or leave it empty.";
      if (Object.keys(errors).length) return { params: null, errors };
      if (!current.scenario) return { params: null };
      const params = { scenario: current.scenario, chemical: raw["scale-dose-chemical"], [`target_${kind}`]: target.value };
      if (flow.value !== null) Object.assign(params, { flow: flow.value, flow_unit: raw["scale-dose-flow-unit"] });
      return { params };
    },
    call: (params) => py.call("dose", params),
    render(r) {
      view.showErrors("dose", {});
      view.renderDose(r);
      settled("dose");
      view.markDrawn("dose");
    },
    explain: (error) => coreMessage(error, DOSE_FIELDS, "Dose"),
    show(messages) {
      view.showErrors("dose", messages);
      view.renderDose(null);
      view.setResultState("dose", "empty");
    },
    busy: (flag) => view.setBusy("dose", flag),
    active: shown, // a link settled while the job is put away is computed when it is shown
  });

  // -- several chemicals in sequence ------------------------------------------------------------
  const steps = computation({
    read() {
      const rows = view.readSteps();
      const errors = {};
      if (!rows.length) errors["scale-steps"] = "Add at least one step.";
      const out = rows.map((row, i) => {
        const what = row.kind === "dose_mg_per_L" ? "a dose in mg/L, e.g. 10" : row.kind === "target_pH" ? "a target pH, e.g. 8.5"
          : row.kind === "target_LSI" ? "a target LSI, e.g. 0" : "a target CCPP in mg/L as CaCO₃, e.g. 4";
        const v = parseNumber(row.value, what);
        if (v.error) errors[`scale-step-${i}-value`] = v.error;
        else if (row.kind === "dose_mg_per_L" && v.value < 0) errors[`scale-step-${i}-value`] = "A dose cannot be negative.";
        return { chemical: row.chemical, [row.kind]: v.value };
      });
      if (Object.keys(errors).length) return { params: null, errors };
      if (!current.scenario) return { params: null };
      return { params: { scenario: current.scenario, steps: out } };
    },
    call: (params) => py.call("treat", params),
    render(r) {
      view.showErrors("steps", {});
      view.renderSteps(r);
      settled("steps");
      view.markDrawn("steps");
    },
    explain(error) {
      if (error instanceof CoreError) {
        const m = /^steps\[(\d+)\]\.(\w+)/.exec(error.field ?? "");
        if (m) {
          const part = m[2] === "chemical" ? "chemical" : "value";
          return { [`scale-step-${m[1]}-${part}`]: error.message };
        }
      }
      return coreMessage(error, {}, "Sequence");
    },
    show(messages) {
      view.showErrors("steps", messages);
      view.renderSteps(null);
      view.setResultState("steps", "empty");
    },
    busy: (flag) => view.setBusy("steps", flag),
    active: shown, // a link settled while the job is put away is computed when it is shown
  });

  // -- blend with another water --------------------------------------------------------------
  let blendWaters = new Map(); // example id -> its water scenario
  let blendTitles = new Map(); // example id -> its title
  let blendLoaded = false;
  let pendingBlend = null; // the other water a link named before the example waters arrived
  const blendReady = loadPresets("./presets.json").then((presets) => {
    const waters = presets.filter((p) => p.state?.water?.scenario);
    blendWaters = new Map(waters.map((p) => [p.id, p.state.water.scenario]));
    blendTitles = new Map(waters.map((p) => [p.id, p.title]));
    view.setBlendWaters(waters.map((p) => ({ id: p.id, title: p.title })));
    blendLoaded = true;
    if (pendingBlend !== null && blendWaters.has(pendingBlend)) {
      view.write("scale-blend-with", pendingBlend);
      pendingBlend = null;
    }
    if (shown()) blend.schedule(0);
  });
  const blend = computation({
    read() {
      const raw = view.read();
      const errors = {};
      const fractions = [];
      for (const id of ["scale-blend-f1", "scale-blend-f2"]) {
        const v = parseNumber(raw[id], "a flow fraction between 0 and 1, e.g. 0.3");
        if (v.error) errors[id] = v.error;
        else if (v.value < 0 || v.value > 1) errors[id] = `${v.value} is not a flow fraction; enter a number between 0 and 1.`;
        else fractions.push(v.value);
      }
      if (fractions.length === 2 && Math.abs(fractions[0] + fractions[1] - 1) > 1e-6) {
        errors["scale-blend-f2"] = `The fractions add up to ${Number((fractions[0] + fractions[1]).toPrecision(6))}; they must add up to 1 (e.g. ${fixed(1 - fractions[0], 3)} here).`;
      }
      const other = blendWaters.get(raw["scale-blend-with"]);
      if (Object.keys(errors).length) return { params: null, errors };
      if (!current.scenario || !other) return { params: null };
      return { params: { waters: [current.scenario, other], fractions, names: ["the water above", raw["scale-blend-with"]] } };
    },
    call: (params) => py.call("blend", params),
    render(r) {
      view.showErrors("blend", {});
      view.renderBlend(r);
      settled("blend");
      view.markDrawn("blend");
    },
    explain(error) {
      if (error instanceof CoreError) {
        if (error.field === "fractions") return { "scale-blend-f2": error.message };
        if (/^fractions\[0\]/.test(error.field ?? "")) return { "scale-blend-f1": error.message };
        if (/^fractions\[1\]/.test(error.field ?? "")) return { "scale-blend-f2": error.message };
        if (/^waters\[1\]/.test(error.field ?? "")) return { "scale-blend-with": error.message };
      }
      return coreMessage(error, {}, "Blend");
    },
    show(messages) {
      view.showErrors("blend", messages);
      view.renderBlend(null);
      view.setResultState("blend", "empty");
    },
    busy: (flag) => view.setBusy("blend", flag),
    active: shown, // a link settled while the job is put away is computed when it is shown
  });

  function coreMessage(error, fields, block) {
    if (!(error instanceof CoreError)) return { block: String(error?.message || error) };
    const id = fields[error.field];
    if (id) return { [id]: error.message.replace(/^target_(LSI|CCPP)/i, "Target $1") };
    const about = error.field && error.field !== "scenario" ? ` (${error.field})` : "";
    return { block: `${block}: the water above could not be used${about}: ${error.message}` };
  }

  function settled(block) {
    if (waterNote) view.setResultState(block, "stale", waterNote);
    else view.setResultState(block, "current");
  }

  const blocks = { indices, curves, dose, steps, blend };

  async function refresh() {
    if (!shown()) {
      dirty = true;
      return;
    }
    dirty = false;
    await Promise.all([indices.run(), dose.run(), steps.run(), blend.run(), curves.run()]);
  }

  water.onSolved((scenario, result) => {
    current = { scenario, result };
    waterNote = "";
    view.setWater(`Working on the water above: pH ${fixed(result.pH, 2)}, ${fixed(result.temperature_C, 1)} °C.`, false);
    refresh();
  });

  water.onStale?.((note, result) => {
    waterNote = staleWaterNote(result, "figures", true);
    view.setWater(waterNote, true);
    for (const [name, block] of Object.entries(blocks)) {
      block.cancel();
      if (name !== "curves") view.setResultState(name, "stale", waterNote);
    }
  });

  onJobShown(JOB, () => {
    relayoutPlots();
    if (dirty) refresh();
  });

  view.bind(
    (block, id) => {
      const blockOf = { indices, dose, steps, blend };
      notifyInputChange(JOB);
      blockOf[block].schedule(view.isChoice(id) ? 0 : DEBOUNCE_MS);
    },
    (t) => {
      const now = view.read()["scale-temperatures"];
      const list = parseTemperatureList(now).value ?? [];
      if (!list.includes(t)) view.write("scale-temperatures", [...list, t].join(", "));
      notifyInputChange(JOB);
      indices.schedule(0);
    },
    () => {
      view.addStep({ chemical: "CO2", kind: "target_LSI", value: "0" });
      notifyInputChange(JOB);
      steps.schedule(0);
    },
    (i) => {
      const rows = view.readSteps();
      rows.splice(i, 1);
      view.setSteps(rows);
      notifyInputChange(JOB);
      steps.schedule(0);
    },
  );

  // -- links, files and reports (state key "scale") ------------------------------------------
  // {ccpp_temperatures_C: [°C, ...], CO2_partial_pressure_atm: the open CCPP's (null: none),
  //  dose: {chemical, target_LSI | target_CCPP, flow, flow_unit},
  //  steps: [{chemical, target_pH | target_LSI | target_CCPP | dose_mg_per_L}, ...],
  //  blend: {other: an example water's id, fractions: [the water above's, the other's]}}
  // A number that does not read as one travels as its text (the page then names it as dropped).
  const text = (v) => (v === null || v === undefined ? "" : typeof v === "object" ? JSON.stringify(v) : String(v));
  const quoted = (v) => `"${text(v).slice(0, 40)}"`;
  const chemicalName = (id) => offered.find((c) => c.id === id)?.name ?? id;
  const stepWords = (row) => `${chemicalName(row.chemical)}, ${(STEP_KINDS.find(([k]) => k === row.kind) ?? [null, row.kind])[1]} ${text(row.value).slice(0, 20)}`.trim();
  let opened = false;
  const notExample = (id) => `Scale and corrosion: the water to blend with ${quoted(id)} is not an example of this page; ` +
    `kept “${blendTitles.get(view.read()["scale-blend-with"]) ?? "none"}”`;

  function get() {
    const raw = view.read();
    const temps = parseTemperatureList(raw["scale-temperatures"]);
    const kind = raw["scale-dose-target-kind"];
    return {
      ccpp_temperatures_C: temps.error ? cleanNumberText(raw["scale-temperatures"]) : temps.value,
      CO2_partial_pressure_atm: stateNumber(raw["scale-pco2"]),
      dose: {
        chemical: raw["scale-dose-chemical"], [`target_${kind}`]: stateNumber(raw["scale-dose-target"]),
        flow: stateNumber(raw["scale-dose-flow"]), flow_unit: raw["scale-dose-flow-unit"],
      },
      steps: view.readSteps().map((row) => ({ chemical: row.chemical, [row.kind]: stateNumber(row.value) })),
      blend: {
        other: pendingBlend ?? (raw["scale-blend-with"] || null),
        fractions: [stateNumber(raw["scale-blend-f1"]), stateNumber(raw["scale-blend-f2"])],
      },
    };
  }

  function set(obj) {
    if (!obj || typeof obj !== "object" || Array.isArray(obj)) return ["Scale and corrosion: not a group of inputs; ignored"];
    const notes = [];
    const put = (id, value, name) => {
      if (value === undefined) return;
      if (!view.write(id, text(value))) notes.push(`Scale and corrosion: ${name} ${quoted(value)} is not offered here; kept ${view.read()[id]}`);
    };
    const temps = obj.ccpp_temperatures_C;
    if (temps !== undefined) view.write("scale-temperatures", Array.isArray(temps) ? temps.map(text).join(", ") : text(temps));
    put("scale-pco2", obj.CO2_partial_pressure_atm, "CO₂ partial pressure");
    const d = obj.dose;
    if (d && typeof d === "object" && !Array.isArray(d)) {
      if (d.chemical !== undefined && !known.has(d.chemical)) {
        notes.push(`Scale and corrosion: the dose's chemical ${quoted(d.chemical)} is not offered here; kept ${view.read()["scale-dose-chemical"]}`);
      } else put("scale-dose-chemical", d.chemical, "chemical");
      const kind = ["LSI", "CCPP"].find((k) => d[`target_${k}`] !== undefined);
      if (kind) {
        view.write("scale-dose-target-kind", kind);
        put("scale-dose-target", d[`target_${kind}`], "dose target");
      }
      put("scale-dose-flow", d.flow, "plant flow");
      if (d.flow_unit !== undefined && !FLOW_UNITS.some(([u]) => u === d.flow_unit)) {
        notes.push(`Scale and corrosion: flow unit ${quoted(d.flow_unit)} is not known; kept ${view.read()["scale-dose-flow-unit"]}`);
      } else put("scale-dose-flow-unit", d.flow_unit, "flow unit");
    } else if (d !== undefined) notes.push("Scale and corrosion: the dose is not a group of inputs; it was left as it was");
    if (Array.isArray(obj.steps)) {
      const rows = [];
      obj.steps.forEach((step, i) => {
        const kind = step && typeof step === "object" ? STEP_KINDS.map(([k]) => k).find((k) => step[k] !== undefined) : undefined;
        if (!kind) notes.push(`Scale and corrosion: step ${i + 1} names no target or dose; it was left out`);
        else if (!known.has(step.chemical)) notes.push(`Scale and corrosion: step ${i + 1}'s chemical ${quoted(step.chemical)} is not offered here; the step was left out`);
        else rows.push({ chemical: step.chemical, kind, value: text(step[kind]) });
      });
      view.setSteps(rows);
    } else if (obj.steps !== undefined) notes.push("Scale and corrosion: the steps are not a list; they were left as they were");
    const b = obj.blend;
    if (b && typeof b === "object" && !Array.isArray(b)) {
      if (typeof b.other === "string" && b.other) {
        if (!blendLoaded) pendingBlend = b.other; // checked when the example waters have arrived (settle)
        else if (!view.write("scale-blend-with", b.other)) notes.push(notExample(b.other));
      }
      if (Array.isArray(b.fractions)) {
        put("scale-blend-f1", b.fractions[0], "flow fraction");
        put("scale-blend-f2", b.fractions[1], "flow fraction");
      }
    }
    opened = true;
    dirty = true; // computed when the job is shown (or at once when it is)
    return notes;
  }

  /** Put the inputs named in `problems` back to their defaults (see section.js settle). */
  function reset(problems) {
    const notes = [];
    const raw = view.read();
    const why = (id) => String(problems[id]).replace(/\.$/, "");
    const rows = view.readSteps();
    const drop = new Set();
    for (const id of Object.keys(problems)) {
      const step = /^scale-step-(\d+)-/.exec(id);
      if (step) {
        const i = Number(step[1]);
        if (rows[i] && !drop.has(i)) {
          drop.add(i);
          notes.push(`Scale and corrosion: step ${i + 1} (${stepWords(rows[i])}) could not be used (${why(id)}); it was left out`);
        }
      } else if (id === "scale-steps" && !rows.length && defaultSteps.length) {
        view.setSteps(defaultSteps);
        notes.push(`Scale and corrosion: no step of the sequence could be used; the default steps are used instead`);
      } else if (id === "scale-blend-f1" || id === "scale-blend-f2") {
        const now = [raw["scale-blend-f1"], raw["scale-blend-f2"]];
        if (now[0] === DEFAULT_FRACTIONS[0] && now[1] === DEFAULT_FRACTIONS[1]) continue;
        view.write("scale-blend-f1", DEFAULT_FRACTIONS[0]);
        view.write("scale-blend-f2", DEFAULT_FRACTIONS[1]);
        raw["scale-blend-f1"] = DEFAULT_FRACTIONS[0];
        raw["scale-blend-f2"] = DEFAULT_FRACTIONS[1];
        notes.push(`Scale and corrosion: blend flow fractions ${quoted(now[0])} and ${quoted(now[1])} could not be used ` +
          `(${why(id)}); ${DEFAULT_FRACTIONS.join(" and ")} are used instead`);
      } else if (DEFAULTS[id] && raw[id] !== DEFAULTS[id][0]) {
        const [value, words, name] = DEFAULTS[id];
        view.write(id, value);
        notes.push(`Scale and corrosion: ${name} ${quoted(raw[id])} could not be used (${why(id)}); ${words}`);
      }
    }
    if (drop.size) view.setSteps(rows.filter((_, i) => !drop.has(i)));
    return notes;
  }

  async function settle() {
    const notes = [];
    if (!opened) return notes;
    opened = false;
    await blendReady;
    if (pendingBlend !== null) {
      const wanted = pendingBlend;
      pendingBlend = null;
      if (!view.write("scale-blend-with", wanted)) notes.push(notExample(wanted));
    }
    // each block checks its inputs (and, while the job is shown, asks the core); what cannot be
    // used goes back to its default and is named
    for (const block of [indices, dose, steps, blend]) notes.push(...(await block.settle(reset)));
    return notes;
  }

  registerSection(JOB, { get, set, settle, refresh });

  const initial = water.scenario?.();
  if (initial) current.scenario = initial;
  view.setWater("Describe the water above; this job works on it.");
  return { refresh };
}
