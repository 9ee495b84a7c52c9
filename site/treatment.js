// Section "treatment": what to do with the user's water. Three blocks share that water:
//   titration   pH against titrant volume (lab) or dose (plant), end points marked and tabled;
//   buffer      buffer intensity against pH, its value at the water's pH, capacity between two pH;
//   dose        the dose of a chemical to a target pH, product feed at the plant's flow,
//               the water before and after.
// The water comes from the "water" section's handle: {scenario(), onSolved(cb), onStale(cb)};
// every successful solve of the water recomputes all three blocks, and while the water's
// inputs cannot be used every block says its figures belong to the last valid water. Each block
// is a section.js computation (latest-only requests, one way of showing messages).

import { CoreError } from "./py.js";
import { notifyInputChange, registerSection } from "./state.js";
import { fixed, prettyFormula, sciNumber } from "./format.js";
import { FLOW_UNITS } from "./treatment-view.js";
import { parseNumber, stateNumber } from "./parse.js";
import { computation } from "./section.js";
import { totalAlkalinity } from "./water.js";
import { isJobShown, onJobShown } from "./workbench.js";
import { staleWaterNote } from "./job.js";

/** The workbench job each block belongs to: a block computes only while its job is shown. */
const JOB_OF = { titration: "titrate", buffer: "titrate", dose: "treat" };
/** Blocks that have drawn a result at least once (so a deferred one has figures to mark). */
const drawnBlocks = new Set();
const BUFFER_RANGE = { pH_min: 2, pH_max: 12, points: 241 };

// Core error fields -> input ids, per block.
const TITRATION_FIELDS = {
  titrant: "titrant-select",
  titrant_M: "titrant-conc",
  sample_mL: "sample-volume",
  to_pH: "titration-end-ph",
};
const DOSE_FIELDS = {
  chemical: "dose-chemical",
  target_pH: "dose-target-ph",
  strength_pct: "dose-strength",
  density_kg_per_L: "dose-density",
  flow: "dose-flow",
  flow_unit: "dose-flow-unit",
};
const BUFFER_FIELDS = { "capacity.from_pH": "capacity-from-ph", "capacity.to_pH": "capacity-to-ph" };

// Core field names -> the words beside the inputs, so messages start with the label a user sees.
const FIELD_LABEL = {
  titrant_M: "Titrant concentration",
  sample_mL: "Sample volume",
  to_pH: "End pH",
  target_pH: "Target pH",
  strength_pct: "Product strength",
  density_kg_per_L: "Product density",
  flow: "Plant flow",
  flow_unit: "Flow unit",
  "capacity.from_pH": "From pH",
  "capacity.to_pH": "To pH",
};

// Input ids -> the words beside them, for notes about dropped values.
const FIELD_LABEL_BY_INPUT = {
  "titrant-conc": "titrant concentration", "sample-volume": "sample volume", "titration-end-ph": "end pH",
  "dose-target-ph": "target pH", "dose-strength": "product strength", "dose-density": "product density",
  "dose-flow": "plant flow", "capacity-from-ph": "buffer capacity from pH", "capacity-to-ph": "buffer capacity to pH",
};

function readable(message, field) {
  const label = FIELD_LABEL[field];
  return label && message.startsWith(field) ? label + message.slice(field.length) : message;
}

// What an input goes back to when a link, file or example holds a value the page cannot use.
const DEFAULTS = {
  "titrant-conc": "0.02", "sample-volume": "100", "titration-end-ph": "", "dose-target-ph": "8",
  "dose-strength": "", "dose-density": "", "dose-flow": "", "capacity-from-ph": "", "capacity-to-ph": "",
};

/**
 * Mount the section.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./treatment-view.js").TreatmentView} deps.view  its DOM
 * @param {{titration: object, buffer: object}} deps.plots  from embedTitrationPlot / embedBufferPlot
 * @param {{scenario: () => object|null, onSolved: (cb: (scenario: object, result: object) => void) => void}} deps.water
 *        the water section's handle
 * @param {{id: string, name: string, example_strength_pct?: number, example_density_kg_per_L?: number,
 *          example_source?: string, note?: string}[]} deps.chemicals  from the core's "chemicals" method
 * @param {{id: string, name: string, species: {charge: number}[]}[]|null} deps.systems  library systems
 * @returns {{refresh: () => Promise<void>}}
 */
export function mountTreatment({ py, view, plots, water, chemicals, systems }) {
  const chemById = new Map(chemicals.map((c) => [c.id, c]));
  const libraryTitrants = (systems || []).filter((s) => (s.species || []).some((sp) => sp.charge === 0));
  view.setChemicals(chemicals, libraryTitrants);
  // An alkalinity titration with strong acid is the everyday lab case; NaOH is the usual dose.
  if (chemById.has("HCl")) view.write("titrant-select", "HCl");
  if (chemById.has("NaOH")) view.write("dose-chemical", "NaOH");
  let current = { scenario: null, result: null };
  let waterNote = ""; // set while the water's inputs cannot be used
  let lastTitration = null;
  let products = null; // the core's product presets (data/products.csv), once they arrive
  let pendingProduct = null; // a product named by a link before the presets arrived

  // -- inputs ------------------------------------------------------------------------------
  function collectTitration() {
    const raw = view.read();
    const errors = {};
    const params = { titrant: raw["titrant-select"] };
    const gas = params.titrant === "CO2";
    const normal = raw["titrant-conc-unit"] === "N";
    const conc = parseNumber(raw["titrant-conc"], normal
      ? "the titrant normality in eq/L, e.g. 0.02" : "the titrant concentration in mol/L, e.g. 0.02");
    if (conc.error) errors["titrant-conc"] = conc.error;
    else if (!normal) params.titrant_M = conc.value;
    else if (equivalents(params.titrant)) params.titrant_M = conc.value / equivalents(params.titrant);
    else errors["titrant-conc-unit"] = "This titrant has no known equivalents per mole: give its concentration in mol/L.";
    const vol = parseNumber(raw["sample-volume"], "the sample volume in mL, e.g. 100");
    if (vol.error) errors["sample-volume"] = vol.error;
    else params.sample_mL = vol.value;
    const end = parseNumber(raw["titration-end-ph"], "an end pH, or leave it empty", { optional: true });
    if (end.error) errors["titration-end-ph"] = end.error;
    else if (end.value !== null) params.to_pH = end.value;
    if (gas) delete params.titrant_M; // a gas has no titrant volume; the core ignores it anyway
    return { params: current.scenario ? { scenario: current.scenario, ...params } : null, errors };
  }

  function collectDose() {
    const raw = view.read();
    const errors = {};
    const params = { chemical: raw["dose-chemical"] };
    const target = parseNumber(raw["dose-target-ph"], "the target pH, e.g. 8");
    if (target.error) errors["dose-target-ph"] = target.error;
    else params.target_pH = target.value;
    const opt = [
      ["dose-strength", "strength_pct", "the product strength in % w/w, e.g. 50, or leave it empty"],
      ["dose-density", "density_kg_per_L", "the product density in kg/L, e.g. 1.5, or leave it empty"],
      ["dose-flow", "flow", "the plant flow, or leave it empty"],
    ];
    for (const [id, key, what] of opt) {
      const v = parseNumber(raw[id], what, { optional: true });
      if (v.error) errors[id] = v.error;
      else if (v.value !== null) params[key] = v.value;
    }
    if (params.flow !== undefined) params.flow_unit = raw["dose-flow-unit"];
    if (params.density_kg_per_L !== undefined && params.strength_pct === undefined && !errors["dose-strength"]) {
      errors["dose-strength"] = "Give the product strength too: the density alone does not set the feed.";
    }
    return { params: current.scenario ? { scenario: current.scenario, ...params } : null, errors };
  }

  function collectCapacity() {
    const raw = view.read();
    const a = parseNumber(raw["capacity-from-ph"], "a pH, or leave both empty", { optional: true });
    const b = parseNumber(raw["capacity-to-ph"], "a pH, or leave both empty", { optional: true });
    const errors = {};
    if (a.error) errors["capacity-from-ph"] = a.error;
    if (b.error) errors["capacity-to-ph"] = b.error;
    if (!a.error && !b.error && (a.value === null) !== (b.value === null)) {
      errors[a.value === null ? "capacity-from-ph" : "capacity-to-ph"] = "Give both pH values (or neither).";
    }
    const params = current.scenario ? { scenario: current.scenario, ...BUFFER_RANGE } : null;
    if (params && a.value !== null && b.value !== null && !a.error && !b.error) {
      params.capacity = { from_pH: a.value, to_pH: b.value };
    }
    return { params, errors };
  }

  function coreMessage(error, fields, block) {
    if (!(error instanceof CoreError)) return { block: String(error?.message || error) };
    const id = fields[error.field];
    const text = readable(error.message, error.field);
    if (id) return { [id]: text };
    // Anything else concerns the water itself (e.g. "scenario" or "systems[0].total").
    const about = error.field && error.field !== "scenario" ? ` (${error.field})` : "";
    return { block: `${block}: the water above could not be used${about}: ${text}` };
  }

  /** Mark a block current, or stale while the water above cannot be used. */
  function settled(block) {
    drawnBlocks.add(block);
    if (waterNote) view.setResultState(block, "stale", waterNote);
    else view.setResultState(block, "current");
  }

  // -- titration ---------------------------------------------------------------------------
  function drawTitration(result) {
    // The axis is read now, not when the request left, so a quick axis change is honoured.
    const volumes = result.volumes_apply && view.read()["titration-axis"] === "volume";
    const xOf = (p) => (volumes ? p.titrant_mL : p.dose_mg_per_L);
    const pts = result.points;
    const id = prettyFormula(result.titrant.id);
    const label = volumes
      ? `${id} added (mL)`
      : `${id} dose (mg/L as pure ${id})`;
    const marks = [];
    result.equivalence_points.forEach((p, i) => marks.push({ x: xOf(p), pH: p.pH, label: `equivalence ${i + 1}` }));
    result.half_equivalence_points.forEach((p, i) => marks.push({ x: xOf(p), pH: p.pH, label: `half-equivalence ${i + 1}` }));
    plots.titration.setCurve(pts.map(xOf), pts.map((p) => p.pH), marks, label, volumes ? "mL" : `mg/L of ${id}`);
    const rows = [
      ...result.equivalence_points.map((p, i) => ({ key: "equivalence", kind: `Equivalence ${i + 1}`, p })),
      ...result.half_equivalence_points.map((p, i) => ({ key: "half-equivalence", kind: `Half-equivalence ${i + 1}`, p })),
      ...result.fixed_end_points.map((p) => ({
        key: "fixed", kind: `pH ${fixed(p.pH, 1)} (${p.name})`, p,
      })),
    ].map(({ key, kind, p }) => ({
      key, kind, pH: p.pH, mL: result.volumes_apply ? p.titrant_mL : null, mmol: p.dose_mmol_per_L, mg: p.dose_mg_per_L,
      caco3: Number.isFinite(p.as_CaCO3_mg_per_L) ? p.as_CaCO3_mg_per_L : null,
    }));
    rows.sort((a, b) => a.mmol - b.mmol);
    const normality = result.titrant.normality_eq_per_L;
    const strength = result.volumes_apply
      ? `, ${Number(result.titrant.concentration_M.toPrecision(4))} mol/L` +
        (Number.isFinite(normality) && normality > 0 ? ` (${Number(normality.toPrecision(4))} eq/L)` : "") +
        ` into ${Number(result.sample_mL.toPrecision(6))} mL of sample`
      : "";
    view.renderEndPoints(endPointLines(result));
    view.renderEquivalence(rows, `End points: ${result.titrant.name}${strength}, pH ${fixed(result.initial_pH, 2)} to ${fixed(result.to_pH, 2)}`);
    view.setTitrationWarning([...result.warnings]);
    view.markDrawn("titration");
  }

  function titrantHint(chem, id) {
    if (id === "CO2") return "A gas: the concentration and sample volume do not apply; the curve is against dose.";
    if (chem?.note) return chem.note.charAt(0).toUpperCase() + chem.note.slice(1) + ".";
    if (!chem) return "Added as its neutral form; its concentration is in mol/L.";
    return "";
  }

  /** Equivalents per mole of a titrant (|alkalinity change per mole|, from the core's catalogue); 0 if unknown. */
  function equivalents(id) {
    return Math.abs(chemById.get(id)?.alkalinity_eq_per_mol ?? 0);
  }

  function concentrationHint(id, raw) {
    const eq = equivalents(id);
    if (id === "CO2" || !eq) return "";
    const v = Number(String(raw["titrant-conc"]).replace(",", "."));
    const per = `${eq} eq per mol`;
    if (!Number.isFinite(v) || v <= 0) return `Normality = molarity × ${per}.`;
    const other = raw["titrant-conc-unit"] === "N"
      ? `${Number((v / eq).toPrecision(4))} mol/L` : `${Number((v * eq).toPrecision(4))} eq/L (N)`;
    return `That is ${other} of ${prettyFormula(id)} (${per}).`;
  }

  /** One sentence per end point: where it is and what it measures, in mg/L as CaCO3. */
  function endPointLines(result) {
    const amount = (p) => (result.volumes_apply
      ? `${sciNumber(p.titrant_mL, 4)} mL`
      : `${sciNumber(p.dose_mg_per_L, 4)} mg/L of ${prettyFormula(result.titrant.id)}`);
    const acid = result.titrant.alkalinity_eq_per_mol < 0;
    const what = (p) => {
      if (Math.abs(p.pH - 4.5) < 1e-9) return acid ? "total alkalinity" : "mineral acidity (to pH 4.5)";
      if (Math.abs(p.pH - 8.3) < 1e-9) return acid ? "phenolphthalein alkalinity" : "total acidity (to pH 8.3)";
      return acid ? "alkalinity to this point" : "acidity to this point";
    };
    const caco3 = (p) => (Number.isFinite(p.as_CaCO3_mg_per_L)
      ? ` → ${what(p)} ${fixed(p.as_CaCO3_mg_per_L, 1)} mg/L as CaCO₃` : "");
    return [
      ...result.fixed_end_points.map((p) => ({ p, text: `pH ${fixed(p.pH, 1)} end point: ${amount(p)}${caco3(p)}` })),
      ...result.equivalence_points.map((p, i) => ({
        p, text: `Equivalence point ${i + 1} (pH ${fixed(p.pH, 2)}): ${amount(p)}${caco3(p)}`,
      })),
    ].sort((a, b) => a.p.dose_mmol_per_L - b.p.dose_mmol_per_L).map((x) => x.text);
  }

  const titration = computation({
    read() {
      const id = view.read()["titrant-select"];
      view.setTitrantHint(titrantHint(chemById.get(id), id));
      view.setConcentrationHint(concentrationHint(id, view.read()));
      return collectTitration();
    },
    call: (params) => py.call("titrate", params),
    active: () => isJobShown(JOB_OF.titration),
    render(result) {
      view.showErrors("titration", {});
      lastTitration = result;
      drawTitration(result);
      settled("titration");
    },
    explain: (error) => coreMessage(error, TITRATION_FIELDS, "Titration"),
    show(messages, kind) {
      view.showErrors("titration", messages);
      if (kind === "invalid") {
        view.setResultState("titration", lastTitration ? "stale" : "empty",
          "Not updated: an input of the titration cannot be used. The curve and table are for the last valid inputs.");
        return;
      }
      // The curve no longer answers the question asked: remove it rather than leave it standing.
      lastTitration = null;
      plots.titration.setCurve([], [], [], "titrant added");
      view.clearEquivalence();
      view.setResultState("titration", "empty");
      view.setTitrationWarning([`No curve: ${Object.values(messages)[0]}`]);
    },
    busy: (flag) => view.setBusy("titration", flag),
  });

  // -- buffer ------------------------------------------------------------------------------
  let bufferShown = false;
  const buffer = computation({
    read: collectCapacity,
    call: (params) => py.call("buffer", params),
    active: () => isJobShown(JOB_OF.buffer),
    render(r) {
      view.showErrors("buffer", {});
      plots.buffer.setCurve(r.pH, r.beta_mmol_per_L_per_pH, r.water_pH);
      applyBufferScale();
      view.setBufferAtPH(r.beta_at_water_pH_eq_per_L_per_pH, r.water_pH);
      view.setCapacity(r.capacity);
      bufferShown = true;
      settled("buffer");
      view.markDrawn("buffer");
    },
    explain: (error) => coreMessage(error, BUFFER_FIELDS, "Buffer intensity"),
    show(messages) {
      view.showErrors("buffer", messages);
      view.setCapacity(null);
      view.setResultState("buffer", bufferShown ? "stale" : "empty",
        "Not updated: the pH pair cannot be used. The curve is for the last valid inputs.");
    },
    busy: (flag) => view.setBusy("buffer", flag),
  });

  function applyBufferScale() {
    const log = view.read()["buffer-log"] === "true";
    plots.buffer.setLog?.(log);
    view.markBufferLog(log);
  }

  // -- dose --------------------------------------------------------------------------------
  function doseHint(id) {
    const c = chemById.get(id);
    return c?.note ? c.note.charAt(0).toUpperCase() + c.note.slice(1) + "." : "";
  }

  // -- product presets (the core's catalogue, data/products.csv) ---------------------------
  function productsOf(chemical) {
    return (products || []).filter((p) => p.chemical === chemical);
  }

  function productSource(p) {
    if (!p) return null;
    const note = p.note ? ` ${p.note.charAt(0).toUpperCase() + p.note.slice(1)}.` : "";
    return `${p.name}: ${p.strength_pct} % w/w, ${p.density_kg_per_L} kg/L at ${p.temperature_C} °C. ` +
      `Density: ${p.provenance}. Source: ${p.source}${note} Check both figures against the certificate ` +
      "or safety data sheet of the product you actually use.";
  }

  /** Offer the chosen chemical's products; keep the chosen one if it still fits. */
  function showProducts() {
    const raw = view.read();
    view.setProducts(productsOf(raw["dose-chemical"]));
    const chosen = (products || []).find((p) => p.id === view.read()["dose-product"]);
    view.setProductSource(productSource(chosen));
  }

  /** A product was chosen: fill in its strength and density. */
  function useProduct(id) {
    const p = (products || []).find((q) => q.id === id);
    if (p) {
      view.write("dose-strength", String(p.strength_pct));
      view.write("dose-density", String(p.density_kg_per_L));
    }
    view.setProductSource(productSource(p));
  }

  /** Strength or density typed by hand: the figures are no longer the preset's. */
  function checkProduct() {
    const raw = view.read();
    const p = (products || []).find((q) => q.id === raw["dose-product"]);
    if (p && (Number(raw["dose-strength"]) !== p.strength_pct || Number(raw["dose-density"]) !== p.density_kg_per_L)) {
      view.write("dose-product", "");
      view.setProductSource(null);
    }
  }

  py.call("products").then((r) => {
    products = r.products || [];
    const raw = view.read();
    showProducts();
    if (pendingProduct && productsOf(raw["dose-chemical"]).some((p) => p.id === pendingProduct)) {
      view.write("dose-product", pendingProduct);
      view.setProductSource(productSource(products.find((p) => p.id === pendingProduct)));
    }
    pendingProduct = null;
  }).catch(() => {
    products = []; // no presets: the fields are typed by hand as before
    showProducts();
  });

  /** The before/after table with the page's one total alkalinity (to pH 4.5) in it. */
  function withPageAlkalinity(r) {
    const change = { ...(r.change || {}) };
    const before = totalAlkalinity(r.water_before);
    const after = totalAlkalinity(r.water_after);
    for (const [key, field] of [["total_alkalinity_mg_per_L_as_CaCO3", "mg_per_L_as_CaCO3"], ["total_alkalinity_meq_per_L", "meq_per_L"]]) {
      if (Number.isFinite(before[field]) && Number.isFinite(after[field])) {
        change[key] = { before: before[field], after: after[field], change: after[field] - before[field] };
      } else {
        delete change[key]; // the core's other definition is not shown under the same name
      }
    }
    return { ...r, change };
  }

  const dose = computation({
    read() {
      view.setDoseHint(doseHint(view.read()["dose-chemical"]));
      return collectDose();
    },
    call: (params) => py.call("dose", params),
    active: () => isJobShown(JOB_OF.dose),
    render(r) {
      view.showErrors("dose", {});
      view.renderDose(withPageAlkalinity(r));
      settled("dose");
      view.markDrawn("dose");
    },
    explain: (error) => coreMessage(error, DOSE_FIELDS, "Dose"),
    show(messages) {
      view.showErrors("dose", messages);
      view.renderDose(null); // no number beside a question that is not complete
      view.setResultState("dose", "empty");
    },
    busy: (flag) => view.setBusy("dose", flag),
  });

  // -- wiring ------------------------------------------------------------------------------
  const blocks = { titration, buffer, dose };

  function describeWater(result) {
    if (!result) return "Describe the water above; this section works on it.";
    const alk = totalAlkalinity(result);
    const alkText = Number.isFinite(alk.mg_per_L_as_CaCO3)
      ? `, total alkalinity (to pH ${fixed(alk.end_pH, 1)}) ${fixed(alk.mg_per_L_as_CaCO3, 1)} mg/L as CaCO₃` : "";
    return `Working on the water above: pH ${fixed(result.pH, 2)}${alkText}, ` +
      `${fixed(result.temperature_C, 1)} °C.`;
  }

  // A block whose job is hidden asks nothing (one request per edit of the water while the
  // water is the job in view); its figures say they are for an earlier water until it is shown.
  const DEFERRED_NOTE = "Not updated yet: these figures are for an earlier water; they are worked out when this job is shown.";

  async function refresh() {
    await Promise.all(Object.entries(blocks).map(async ([name, block]) => {
      if ((await block.run()) === "deferred" && drawnBlocks.has(name)) view.setResultState(name, "stale", DEFERRED_NOTE);
    }));
  }

  for (const job of new Set(Object.values(JOB_OF))) {
    onJobShown(job, () => {
      for (const [name, block] of Object.entries(blocks)) if (JOB_OF[name] === job) block.resume();
    });
  }

  water.onSolved((scenario, result) => {
    current = { scenario, result };
    waterNote = "";
    view.setWater(describeWater(result), false);
    refresh();
  });

  water.onStale?.((note, result) => {
    waterNote = staleWaterNote(result, "figures", true);
    view.setWater(waterNote, true);
    for (const name of Object.keys(blocks)) {
      blocks[name].cancel(); // an answer for the old water must not be drawn as current
      view.setResultState(name, "stale", waterNote);
    }
  });

  view.bindChange((block, id) => {
    if (id === "titrant-select") view.setGasTitrant(view.read()["titrant-select"] === "CO2");
    if (id === "dose-chemical") showProducts();
    if (id === "dose-product") useProduct(view.read()["dose-product"]);
    if (id === "dose-strength" || id === "dose-density") checkProduct();
    notifyInputChange("treatment");
    if (id === "buffer-log") {
      applyBufferScale(); // same curve, other axis: no need to ask the core again
      return;
    }
    if (id === "titration-axis" && lastTitration) {
      drawTitration(lastTitration); // same curve, other unit: no need to ask the core again
      return;
    }
    blocks[block].schedule(); // as soon as this event is handled, for choices and typing alike
  });

  /** Put the inputs named in `problems` back to their defaults (see section.js settle). */
  function reset(problems) {
    const notes = [];
    const raw = view.read();
    for (const [id, message] of Object.entries(problems)) {
      if (!(id in DEFAULTS) || raw[id] === DEFAULTS[id]) continue;
      view.write(id, DEFAULTS[id]);
      notes.push(`treatment: ${FIELD_LABEL_BY_INPUT[id] ?? id} "${String(raw[id]).slice(0, 40)}" could not be used ` +
        `(${message.replace(/\.$/, "")}); ${DEFAULTS[id] ? DEFAULTS[id] + " is used" : "it was left empty"} instead`);
    }
    return notes;
  }

  // A link, file or example that gave this section's inputs (set() below) has the dose and
  // buffer inputs checked by the core when it is opened, even with their job hidden, so what is
  // dropped is named at once (two quick requests). The titration (the slow one) is checked
  // when its job is shown; a value the core refuses is then explained beside its field.
  let opened = false;
  const CHECKED_ON_OPENING = new Set(["dose", "buffer"]);

  async function settle() {
    const notes = [];
    const force = opened;
    opened = false;
    for (const [name, block] of Object.entries(blocks)) {
      notes.push(...(await block.settle(reset, { force: force && CHECKED_ON_OPENING.has(name) })));
    }
    return notes;
  }

  registerSection("treatment", {
    get() {
      const raw = view.read();
      return {
        titration: {
          titrant: raw["titrant-select"],
          // typed as molarity: titrant_M; typed as normality: titrant_N (and titrant_M null)
          titrant_M: raw["titrant-conc-unit"] === "N" ? null : stateNumber(raw["titrant-conc"]),
          ...(raw["titrant-conc-unit"] === "N" ? { titrant_N: stateNumber(raw["titrant-conc"]) } : {}),
          sample_mL: stateNumber(raw["sample-volume"]),
          to_pH: stateNumber(raw["titration-end-ph"]),
          axis: raw["titration-axis"],
        },
        dose: {
          chemical: raw["dose-chemical"],
          product: raw["dose-product"] || null,
          target_pH: stateNumber(raw["dose-target-ph"]),
          strength_pct: stateNumber(raw["dose-strength"]),
          density_kg_per_L: stateNumber(raw["dose-density"]),
          flow: stateNumber(raw["dose-flow"]),
          flow_unit: raw["dose-flow-unit"],
        },
        buffer: {
          from_pH: stateNumber(raw["capacity-from-ph"]),
          to_pH: stateNumber(raw["capacity-to-ph"]),
          log_scale: raw["buffer-log"] === "true",
        },
      };
    },
    set(obj) {
      const messages = [];
      if (!obj || typeof obj !== "object") return ["treatment: not an object; ignored"];
      opened = true;
      const put = (id, value, name) => {
        if (value === undefined) return;
        const text = value === null ? "" : String(value);
        if (!view.write(id, text)) messages.push(`treatment: ${name} ${JSON.stringify(value)} is not offered here; kept ${view.read()[id]}`);
      };
      const t = obj.titration || {};
      put("titrant-select", t.titrant, "titrant");
      if (t.titrant_N !== undefined && t.titrant_N !== null) {
        put("titrant-conc-unit", "N", "concentration unit");
        put("titrant-conc", t.titrant_N, "titrant normality");
      } else {
        if (t.titrant_M !== undefined) put("titrant-conc-unit", "M", "concentration unit");
        put("titrant-conc", t.titrant_M, "titrant concentration");
      }
      put("sample-volume", t.sample_mL, "sample volume");
      put("titration-end-ph", t.to_pH, "end pH");
      put("titration-axis", t.axis, "axis");
      const d = obj.dose || {};
      put("dose-chemical", d.chemical, "chemical");
      if (d.chemical !== undefined || d.product !== undefined) showProducts();
      if (d.product === null || d.product === "") view.write("dose-product", "");
      else if (typeof d.product === "string") {
        if (products === null) pendingProduct = d.product; // the presets have not arrived yet
        else put("dose-product", d.product, "product");
      }
      view.setProductSource(productSource((products || []).find((p) => p.id === view.read()["dose-product"])));
      put("dose-target-ph", d.target_pH, "target pH");
      put("dose-strength", d.strength_pct, "strength");
      put("dose-density", d.density_kg_per_L, "density");
      put("dose-flow", d.flow, "flow");
      if (d.flow_unit !== undefined && !FLOW_UNITS.some(([u]) => u === d.flow_unit)) {
        messages.push(`treatment: flow unit ${JSON.stringify(d.flow_unit)} is not known; kept ${view.read()["dose-flow-unit"]}`);
      } else {
        put("dose-flow-unit", d.flow_unit, "flow unit");
      }
      const b = obj.buffer || {};
      put("capacity-from-ph", b.from_pH, "buffer capacity from pH");
      put("capacity-to-ph", b.to_pH, "buffer capacity to pH");
      if (typeof b.log_scale === "boolean") put("buffer-log", String(b.log_scale), "logarithmic axis");
      applyBufferScale();
      view.setGasTitrant(view.read()["titrant-select"] === "CO2");
      return messages;
    },
    refresh,
    settle,
  });

  const initial = water.scenario?.();
  if (initial) current.scenario = initial;
  view.setWater(describeWater(null));
  return { refresh };
}
