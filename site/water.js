// Section "Equilibrium of a whole water": turns the composition editor into a core scenario,
// asks the core (method "water") for the equilibrium and its curves, and draws them. When an
// input is bad, the message goes beside it and the last good result stays on screen, marked as
// belonging to the last valid inputs (never shown as current).
//
// mountWater({py, view, plots, palette, systems, ions, co2MolarMass})
//   -> {refresh, scenario, onSolved, onStale}
//   refresh()      recompute now; resolves true when a result was drawn
//   scenario()     the last scenario the core solved (a deep copy), or null before the first
//   onSolved(cb)   cb(scenario, result) after every successful solve; returns an unsubscribe
//   onStale(cb)    cb(note, lastResult) whenever the inputs on screen stop matching the result
// State (state.js, name "water"): {scenario: <core scenario>, display: {unit, plot_system}}.

import { CoreError } from "./py.js";
import { notifyInputChange, registerSection } from "./state.js";
import { fixed, prettyFormula, unitLabel } from "./format.js";
import { parseInteger, parseNumber, parseNumberList, parseTemperature } from "./parse.js";
import { computation, holdPending } from "./section.js";
import { ION_WORDS } from "./share.js";
import { START_CONDITIONS, START_WATER, WATER_CURVE } from "./water-start.js";

const LOG_SPAN = 14; // decades shown on the log-concentration axis
const CURVE = WATER_CURVE;
// Units of the species table (molar, mass of the species, or mass as each system's basis) and
// their scales (mol/L or g/L -> shown unit): the core's catalogue (catalogues.js).
import { DISPLAY_UNITS, MASS_SCALE, MOLAR_SCALE } from "./catalogues.js";
export { DISPLAY_UNITS };

// The starting water (invented) lives in water-start.js: the build answers its request before
// saving the Python snapshot (build_scripts/snapshot.mjs).
const EXAMPLE = START_WATER;

// What a condition input goes back to when a link, file or example holds a value that cannot
// be used (see reset()).
// input id -> [readConditions key, default text, what happens then, the input's name]
const CONDITION_DEFAULTS = {
  "water-temperature": ["temperature", String(START_CONDITIONS.temperature_C), `${START_CONDITIONS.temperature_C} °C is used`, "temperature"],
  "water-fixed-ph": ["fixedPH", "", "the pH is solved for", "pH to speciate at"],
  "water-pco2": ["pco2", "", "the water is treated as closed to air", "CO₂ partial pressure"],
  "water-istrength-value": ["iValue", "", "the ionic strength is worked out from the composition", "ionic strength"],
};

// Core scenario paths of the condition inputs -> input ids and the words the page uses.
const CONDITION_FIELDS = {
  temperature_C: ["water-temperature", "Temperature"],
  activity: ["water-activity", "Activity model"],
  ionic_strength_M: ["water-istrength-value", "Ionic strength"],
  tds_mg_per_L: ["water-istrength-value", "Total dissolved solids"],
  conductance_uS_per_cm: ["water-istrength-value", "Specific conductance"],
  pH: ["water-fixed-ph", "pH"],
  gas: ["water-pco2", "CO₂ partial pressure"],
  "gas.CO2_partial_pressure_atm": ["water-pco2", "CO₂ partial pressure"],
  measured: ["water-measured-ph", "Measurements"],
  "measured.pH": ["water-measured-ph", "Measured pH"],
  "measured.alkalinity": ["water-alk-value", "Alkalinity"],
  "measured.alkalinity.value": ["water-alk-value", "Alkalinity"],
  "measured.alkalinity.unit": ["water-alk-value", "Alkalinity unit"],
};

const ROW_FIELDS = {
  "": ["id", null],
  id: ["id", "System"],
  total: ["total", "Total"],
  unit: ["unit", "Unit"],
  custom: ["name", null],
  "custom.name": ["name", "Name"],
  "custom.pKa": ["pka", "pKa values"],
  "custom.charge_most_protonated": ["charge", "Charge"],
  "custom.charge": ["charge", "Charge"],
  "custom.molar_mass_g_per_mol": ["mass", "Molar mass"],
};

const clean = (text) => String(text ?? "").trim();

/**
 * Start a core message with the page's word for its field instead of the scenario path.
 *
 * @param {string} message  from the core, e.g. "systems[1].total = -1 is below ..."
 * @param {string} label  e.g. "Total"
 * @returns {string}  e.g. "Total = -1 is below ..."
 */
function readable(message, label) {
  let text = String(message);
  const row = /^(systems|ions)\[\d+\](\.[\w.]+)?(:?)\s*/.exec(text);
  if (row) {
    const rest = text.slice(row[0].length);
    text = label ? `${label}${row[3]} ${rest}` : rest;
  } else {
    for (const [path, [, word]] of Object.entries(CONDITION_FIELDS)) {
      if (text.startsWith(`${path} `) || text.startsWith(`${path}:`)) {
        text = word + text.slice(path.length);
        break;
      }
    }
  }
  text = text.replace(/; known: .*$/, "; choose one from the list");
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/**
 * Resolve an ion id from a link, file or example against the core's library: the id itself,
 * the word for an old formula id ("Ca+2" -> "calcium") or the formula for a word, the formula
 * or the name. So links of either kind open whichever ids the core uses.
 *
 * @param {string} id  as stored
 * @param {Map<string, object>} library  the core's ions by id
 * @returns {string|null}  the library id, or null when there is none
 */
export function resolveIonId(id, library) {
  if (typeof id !== "string") return null;
  if (library.has(id)) return id;
  const word = ION_WORDS[id];
  if (word && library.has(word)) return word;
  const formula = Object.keys(ION_WORDS).find((f) => ION_WORDS[f] === id);
  if (formula && library.has(formula)) return formula;
  const lower = id.toLowerCase();
  for (const [key, ion] of library) {
    if (ion.formula === id || String(ion.name).toLowerCase() === lower) return key;
  }
  return null;
}

/**
 * Mount the section.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./water-view.js").WaterView} deps.view  its DOM
 * @param {{fraction: object, logc: object}|Promise<{fraction: object, logc: object}>} deps.plots
 *        from embedWaterPlots(), or its promise: the first request need not wait for the plots
 *        (the headline draws none); the curves, the answer's second part, are drawn once they are in
 * @param {string[]} deps.palette  line colours (plots.json)
 * @param {object[]} deps.systems  library systems (core "systems" method)
 * @param {object[]} deps.ions  library strong ions
 * @param {number|null} deps.co2MolarMass  g/mol of CO2 (core "chemicals"): H2CO3* in mg/L is
 *        shown as CO2, as the dose table shows free CO2
 * @returns {{refresh: () => Promise<boolean>, scenario: () => object|null,
 *            onSolved: (cb: (scenario: object, result: object) => void) => () => void,
 *            onStale: (cb: (note: string, result: object|null) => void) => () => void}}
 */
export function mountWater({ py, view, plots, palette, systems, ions, co2MolarMass = null }) {
  const library = new Map((systems || []).map((s) => [s.id, s]));
  const ionLibrary = new Map((ions || []).map((s) => [s.id, s]));
  const everyUnit = new Set([...library.values(), ...ionLibrary.values()].flatMap((s) => s.units || []));
  const micro = everyUnit.has("ug/L") ? ["ug/L"] : []; // offered once the core reads it
  const customSystemUnits = ["mol/L", "mmol/L", "umol/L", ...micro];
  const solvedListeners = new Set();
  const staleListeners = new Set();
  let lastScenario = null;
  let last = null; // {result, curves, scenario}
  let plotsIn = !(plots instanceof Promise);
  const plotsReady = Promise.resolve(plots).then((p) => {
    plots = p;
    plotsIn = true;
  });
  plotsReady.catch(() => {}); // a failure to embed them is the caller's to report
  let wantedPlotSystem = null; // from a link, applied at the next draw

  view.setLibrary([...library.values()], [...ionLibrary.values()]);

  // -- rows and their units -------------------------------------------------------------------

  function unitsFor(kind, i, row) {
    const measured = view.readConditions().measured;
    if (kind === "system") {
      const system = library.get(row.id);
      const units = system ? system.units : customSystemUnits;
      const note =
        measured && row.id === "carbonate"
          ? "Left out: the carbonate total comes from the measured pH and alkalinity below."
          : "";
      return { units: units.map((u) => [u, unitLabel(u, system?.mass_basis)]), note };
    }
    const ion = ionLibrary.get(row.id);
    let units;
    if (ion) units = ion.units;
    else {
      const mass = parseNumber(row.mass, "", { optional: true });
      units = ["mol/L", "mmol/L", "umol/L", ...(mass.value ? ["mg/L", ...micro] : []), "meq/L"];
    }
    return { units: units.map((u) => [u, unitLabel(u)]) };
  }

  function setRows(rows) {
    view.setRows("system", rows.systems, unitsFor);
    view.setRows("ion", rows.ions, unitsFor);
  }

  function refreshRowNotes() {
    const rows = view.readRows();
    rows.systems.forEach((row, i) => view.updateRow("system", i, unitsFor("system", i, row), row.id === "custom"));
  }

  // -- inputs -> scenario -------------------------------------------------------------------

  /**
   * Read the inputs into a scenario.
   *
   * @returns {{scenario: object, errors: Record<string, string>, systemRow: number[]}}
   *          errors keyed by input id; systemRow[k] = editor row of scenario.systems[k]
   */
  function collect() {
    const rows = view.readRows();
    const c = view.readConditions();
    const errors = {};
    const take = (id, parsed) => {
      if (parsed.error) errors[id] = parsed.error;
      return parsed.error ? parsed.raw ?? null : parsed.value;
    };
    const scenario = {};
    scenario.temperature_C = take("water-temperature", parseTemperature(c.temperature, "a temperature, e.g. 25 (°C) or 77 °F"));
    scenario.activity = c.activity;
    const iWhat = { given: "the ionic strength in mol/L", tds: "the TDS in mg/L", conductance: "the conductance in µS/cm" };
    const iKey = { given: "ionic_strength_M", tds: "tds_mg_per_L", conductance: "conductance_uS_per_cm" };
    if (iKey[c.iMode]) scenario[iKey[c.iMode]] = take("water-istrength-value", parseNumber(c.iValue, iWhat[c.iMode]));

    const systemRow = [];
    scenario.systems = [];
    rows.systems.forEach((row, i) => {
      const base = `water-system-${i}`;
      if (c.measured && row.id === "carbonate") return; // inferred from the measurements
      const entry = {};
      if (row.id === "custom") {
        const name = clean(row.name);
        if (!name) errors[`${base}-name`] = "Enter a name for this acid, e.g. “my acid”.";
        entry.custom = {
          name,
          pKa: take(`${base}-pka`, parseNumberList(row.pka, "pKa value")),
          charge_most_protonated: take(`${base}-charge`, parseInteger(row.charge, "the charge of the most protonated form, e.g. 0")),
        };
      } else {
        entry.id = row.id;
      }
      entry.total = take(`${base}-total`, parseNumber(row.total, "the total, e.g. 1 (empty rows are not allowed; remove the row instead)"));
      entry.unit = row.unit;
      const allowed = row.id === "custom" ? customSystemUnits : library.get(row.id)?.units;
      if (allowed && !allowed.includes(row.unit)) { // an unknown system is the core's to explain
        errors[`${base}-unit`] = `The unit ${row.unit} does not fit this system; choose one of ${allowed.map((u) => unitLabel(u)).join(", ")}.`;
      }
      systemRow.push(i);
      scenario.systems.push(entry);
    });

    scenario.ions = rows.ions.map((row, i) => {
      const base = `water-ion-${i}`;
      const entry = {};
      if (row.id === "custom") {
        const name = clean(row.name);
        if (!name) errors[`${base}-name`] = "Enter a name for this ion.";
        const mass = take(`${base}-mass`, parseNumber(row.mass, "a molar mass in g/mol", { optional: true }));
        entry.custom = { name, charge: take(`${base}-charge`, parseInteger(row.charge, "the charge, e.g. 1 or -2")) };
        if (mass !== null) entry.custom.molar_mass_g_per_mol = mass;
      } else {
        entry.id = row.id;
      }
      entry.total = take(`${base}-total`, parseNumber(row.total, "the concentration, e.g. 1 (empty rows are not allowed; remove the row instead)"));
      entry.unit = row.unit;
      const allowed = unitsFor("ion", i, row).units.map(([u]) => u);
      if ((row.id === "custom" || ionLibrary.has(row.id)) && !allowed.includes(row.unit)) {
        errors[`${base}-unit`] = `The unit ${row.unit} does not fit this ion; choose one of ${allowed.map((u) => unitLabel(u)).join(", ")}.`;
      }
      return entry;
    });

    const fixedPH = take("water-fixed-ph", parseNumber(c.fixedPH, "a pH, or leave it empty", { optional: true }));
    if (fixedPH !== null) scenario.pH = fixedPH;
    const pco2 = take("water-pco2", parseNumber(c.pco2, "a partial pressure in atm, or leave it empty", { optional: true }));
    if (pco2 !== null) scenario.gas = { CO2_partial_pressure_atm: pco2 };
    if (!c.complexes) scenario.complexes = false;
    if (c.precipitate.length) scenario.precipitate = c.precipitate;
    if (c.measured) {
      scenario.measured = {
        pH: take("water-measured-ph", parseNumber(c.measuredPH, "the measured pH, e.g. 7.8")),
        alkalinity: { value: take("water-alk-value", parseNumber(c.alkValue, "the alkalinity, e.g. 120")), unit: c.alkUnit },
      };
    }
    return { scenario, errors, systemRow };
  }

  /**
   * Where a core error belongs: the input id and the word to start its message with.
   *
   * @param {string|null} field  scenario path from the core, e.g. "systems[1].total"
   * @param {number[]} systemRow  editor row of each scenario system
   */
  function placeOf(field, systemRow) {
    if (!field) return ["water-error", null];
    const m = /^(systems|ions)\[(\d+)\](?:\.(.*))?$/.exec(field);
    if (m) {
      const k = Number(m[2]);
      const row = m[1] === "systems" ? systemRow[k] : k;
      const [suffix, word] = ROW_FIELDS[m[3] ?? ""] ?? ["total", null];
      if (row === undefined) return ["water-error", null];
      return [`water-${m[1] === "systems" ? "system" : "ion"}-${row}-${suffix}`, word];
    }
    const hit = CONDITION_FIELDS[field];
    return hit ? [hit[0], hit[1]] : ["water-error", null];
  }

  // -- drawing ------------------------------------------------------------------------------

  function systemNames(result) {
    return new Map(result.systems.map((s) => [s.id, s.name]));
  }

  function drawFraction() {
    if (!last?.curves) return;
    const { curves, result } = last;
    const index = Number(view.readConditions().plotSystem) || 0;
    const system = curves.systems[index];
    if (!system) {
      plots.fraction.setLines(curves.pH, [], []);
      plots.fraction.setMarker(result.pH);
      return;
    }
    plots.fraction.setLines(curves.pH, system.species.map(prettyFormula), system.fractions);
    plots.fraction.setMarker(result.pH);
  }

  function drawLogc() {
    if (!last?.curves) return;
    const { curves, result } = last;
    const names = systemNames(result);
    const formulas = curves.log_concentration.map((line) => prettyFormula(line.name));
    const seen = new Map();
    for (const f of formulas) seen.set(f, (seen.get(f) || 0) + 1);
    // Two systems may share a formula (e.g. two acids of your own): name the system then.
    const labels = curves.log_concentration.map((line, i) =>
      seen.get(formulas[i]) > 1 ? `${formulas[i]} (${names.get(line.system) ?? line.system})` : formulas[i],
    );
    const ys = curves.log_concentration.map((line) => line.values.map((v) => (v === null ? Number.NaN : v)));
    plots.logc.setLines(curves.pH, labels, ys);
    plots.logc.setMarker(result.pH);
    const totals = result.systems.map((s) => s.total_M).filter((t) => t > 0);
    const ionTotals = result.ions.map((s) => s.concentration_M).filter((t) => t > 0);
    const biggest = Math.max(1e-3, ...totals, ...ionTotals);
    const top = Math.ceil(Math.log10(biggest) + 0.8);
    plots.logc.setYRange(top - LOG_SPAN, top);
  }

  /**
   * The species table in the chosen unit: every number the view shows, worked out here.
   * Works with results that list strong ions apart (result.ions) and with results whose
   * species hold every kind ("acid-base", "free ion", "complex").
   *
   * @param {object} result  the core's solve result
   * @param {object} curves  the core's curves (the colour slot of a row is its line's index)
   * @param {object[]} scenarioIons  the scenario's ion entries (custom molar masses)
   * @param {string} unit  one of DISPLAY_UNITS
   */
  function speciesRows(result, curves, scenarioIons, unit) {
    const names = systemNames(result);
    const molar = unit in MOLAR_SCALE;
    const activityUnit = unit === "mol/L" || unit === "umol/L" ? unit : "mmol/L";
    const activityScale = MOLAR_SCALE[activityUnit];
    const lineIndex = new Map((curves?.log_concentration || []).map((l, i) => [`${l.system ?? ""}|${l.name}`, i]));
    // [shown value, what it is "as" (or "")] for a concentration c [mol/L] of a species
    const inUnit = (c, massOf, asOf) => {
      if (molar) return [c * MOLAR_SCALE[unit], ""];
      if (unit === "mg/L as basis" && asOf) return [c * asOf.g * 1e3, asOf.formula];
      return massOf ? [c * massOf.g * MASS_SCALE[unit], massOf.as] : [null, ""];
    };
    const customMass = (id) => {
      const k = /^custom-ion-(\d+)$/.exec(String(id));
      return k ? scenarioIons?.[Number(k[1])]?.custom?.molar_mass_g_per_mol ?? null : null;
    };
    const componentName = (id) => library.get(id)?.name ?? ionLibrary.get(id)?.name ?? names.get(id) ?? id;
    const rows = [];
    const row = (s, system, systemName, massOf, asOf, percent, slot) => {
      const [shown, as] = inUnit(s.concentration_M, massOf, asOf);
      rows.push({
        name: s.name, system, systemName, charge: s.charge, concentration_M: s.concentration_M, shown, as,
        activity_M: s.activity_M, activityShown: s.activity_M * activityScale, gamma: s.activity_coefficient,
        percent, slot,
      });
    };
    let next = 2; // results without curve systems: H+, OH-, then every species in order
    const slotOf = (name, system) => lineIndex.get(`${system ?? ""}|${name}`) ?? (lineIndex.size ? null : next++);
    const ionsAmongSpecies = result.species.some((s) => s.kind === "free ion");
    for (const s of result.species) {
      const kind = s.kind ?? "acid-base";
      if (kind === "acid-base") {
        const system = library.get(s.system);
        // Free CO2 is reported as CO2 in mass units (H2CO3* counts CO2(aq) + H2CO3 together).
        const asCO2 = s.name === "H2CO3*" && co2MolarMass;
        const massOf = asCO2 ? { g: co2MolarMass, as: "CO2" } : s.molar_mass_g_per_mol ? { g: s.molar_mass_g_per_mol, as: "" } : null;
        const asOf = system?.as_formula ? { g: system.as_g_per_mol, formula: system.as_formula } : null;
        row(s, s.system, names.get(s.system) ?? s.system, massOf, asOf, s.fraction * 100, slotOf(s.name, s.system));
      } else if (kind === "free ion") {
        const id = Object.keys(s.holds || {})[0];
        const lib = ionLibrary.get(id);
        const mass = s.molar_mass_g_per_mol ?? lib?.molar_mass_g_per_mol ?? customMass(id);
        const asOf = lib?.as_formula ? { g: lib.as_g_per_mol, formula: lib.as_formula } : null;
        row(s, "strong ion", lib?.name ?? "strong ion", mass ? { g: mass, as: "" } : null, asOf, null, slotOf(s.name, s.system));
      } else {
        const of = Object.keys(s.holds || {}).map(componentName).join(" + ");
        const mass = s.molar_mass_g_per_mol;
        row(s, kind, of ? `${kind} of ${of}` : kind, mass ? { g: mass, as: "" } : null, null, null, slotOf(s.name, s.system));
      }
    }
    if (!ionsAmongSpecies) {
      result.ions.forEach((ion) => {
        const lib = ionLibrary.get(ion.id);
        const mass = lib?.molar_mass_g_per_mol ?? customMass(ion.id);
        const asOf = lib?.as_formula ? { g: lib.as_g_per_mol, formula: lib.as_formula } : null;
        row({ ...ion, name: lib ? lib.formula : ion.name }, "strong ion", lib ? lib.name : "strong ion",
          mass ? { g: mass, as: "" } : null, asOf, null, null);
      });
    }
    // H+ and OH- (the molar masses of H and O+H: IUPAC 2021 standard atomic weights, abridged)
    const waterMass = { "H+": 1.008, "OH-": 17.007 };
    result.water_ions.forEach((w, k) => {
      row(w, "water", "water", { g: waterMass[w.name], as: "" }, null, null, lineIndex.get(`water|${w.name}`) ?? lineIndex.get(`|${w.name}`) ?? k);
    });
    return { rows, activityUnit };
  }

  function drawTable() {
    if (!last) return;
    const unit = view.readConditions().displayUnit;
    const { rows, activityUnit } = speciesRows(last.result, last.curves, last.scenario.ions, unit);
    const summary = {
      pHLabel: last.result.inferred_from_measurements ? "pH (measured)" : last.result.pH_was_given ? "pH (given)" : "Equilibrium pH",
      alkalinity: totalAlkalinity(last.result),
    };
    view.renderResult(last.result, { unit, activityUnit, rows, ...summary }, palette, systemNames(last.result));
  }

  /** The headline and tables of a solved water (its curves follow in drawCurves). */
  function draw(result, scenario) {
    // The curves of the water before stay until this water's arrive (the table's colour
    // slots come from them while the systems are the same).
    const keep = last?.curves && sameSystems(last.curves, result) ? last.curves : null;
    last = { result, curves: keep, scenario };
    drawTable();
  }

  function sameSystems(curves, result) {
    return curves.systems.map((s) => s.id).join() === result.systems.map((s) => s.id).join();
  }

  /** The curves of the water drawn last (the second part of its answer). */
  function drawCurves(curves) {
    if (!last) return;
    const previous = last.curves;
    last = { ...last, curves };
    const chosen = Number(view.readConditions().plotSystem) || 0;
    const same = previous && previous.systems.map((s) => s.id).join() === curves.systems.map((s) => s.id).join();
    view.setPlotSystems(curves.systems, wantedPlotSystem ?? (same ? chosen : 0));
    wantedPlotSystem = null;
    // The table's colour slots come from the curves' lines: draw it again when they changed.
    const lines = (c) => (c?.log_concentration || []).map((l) => `${l.system}|${l.name}`).join();
    if (lines(previous) !== lines(curves)) drawTable();
    drawFraction();
    drawLogc();
    view.markDrawn();
  }

  // -- compute ------------------------------------------------------------------------------

  let placing = { systemRow: [] };

  function staleNote(kind) {
    const why = kind === "invalid"
      ? "an input of the water cannot be used (see the message beside it)"
      : "the core could not use this water (see the message above)";
    return last
      ? `Not updated: ${why}. The figures below belong to the last valid water (pH ${fixed(last.result.pH, 2)}, ${fixed(last.result.temperature_C, 1)} °C).`
      : `Nothing to show yet: ${why}.`;
  }

  // The newest solve the listeners have not been told of: {scenario, result, release}. Told
  // after the frame that shows its headline (afterFrame), or at once when something needs the
  // jobs up to date first (a stale mark, the end of refresh() or settle()).
  let solved = null;

  function tellSolved() {
    const note = solved;
    if (!note) return;
    solved = null;
    const t = performance.now();
    try {
      for (const cb of solvedListeners) {
        try {
          cb(JSON.parse(JSON.stringify(note.scenario)), note.result);
        } catch (error) {
          console.error("a listener of the water section failed:", error);
        }
      }
    } finally {
      note.release();
      performance.measure("water:listeners", { start: t, end: performance.now() }); // bench.py
    }
  }

  const block = computation({
    read() {
      const { scenario, errors, systemRow } = collect();
      placing = { systemRow };
      return { params: scenario, errors };
    },
    // One request per edit, answered in parts (dispatch.stages "water_view"): the solved water
    // (headline, tables) first, its curves after; curves of an edit overtaken by a newer one
    // are not computed.
    stream: (scenario, onPart) => {
      const t0 = performance.now();
      const sent = py.stream("water_view", { ...scenario, curve: CURVE }, (part, index) => {
        performance.measure(index ? "water:core-curves" : "water:core", { start: t0, end: performance.now() });
        if (!index || plotsIn) onPart(part);
        else plotsReady.then(() => onPart(part)); // the curves wait for the plots (first load only)
      });
      // the stream is over once its parts are handed on (after the plots, on the first load)
      return plotsIn ? sent : sent.then((end) => plotsReady.then(() => end));
    },
    render(out, scenario) {
      const t1 = performance.now();
      view.showErrors({});
      draw(out.result, scenario);
      view.setResultState("current");
      // Timings for build_scripts/bench.py: the headline and tables, then the plots.
      performance.measure("water:draw-headline", { start: t1, end: performance.now() });
      performance.mark("water:headline");
      lastScenario = JSON.parse(JSON.stringify(scenario));
      // The jobs that follow the water are told after the frame that shows this headline: their
      // work (and the layout some of them read) does not hold up its paint.
      solved?.release();
      solved = { scenario, result: out.result, release: holdPending() };
      afterFrame(tellSolved);
    },
    more(out) {
      const t1 = performance.now();
      // The equivalence-point pH values of the alkalinity come with the curves (the headline
      // goes without these two searches of the model).
      const equivalence = last?.result?.alkalinity?.equivalence_point;
      if (equivalence && out.alkalinity_equivalence_pH) Object.assign(equivalence, out.alkalinity_equivalence_pH);
      drawCurves(out.curves);
      performance.measure("water:draw", { start: t1, end: performance.now() });
    },
    explain(error) {
      if (!(error instanceof CoreError)) return { "water-error": String(error?.message || error) };
      const [id, word] = placeOf(error.field, placing.systemRow);
      return { [id]: readable(error.message, word) };
    },
    show(messages, kind) {
      view.showErrors(messages);
      const note = staleNote(kind);
      view.setResultState(last ? "stale" : "empty", note);
      tellSolved(); // a solve not yet told comes before the news that it is stale
      for (const cb of staleListeners) cb(note, last?.result ?? null);
    },
    busy: (flag) => view.setBusy(flag),
  });

  async function refresh() {
    const outcome = await block.run();
    tellSolved();
    return outcome === "drawn";
  }

  view.bind((what, detail) => {
    const rows = view.readRows();
    if (what === "add-system") {
      const used = new Set(rows.systems.map((r) => r.id));
      const next = [...library.keys()].find((id) => !used.has(id)) ?? "custom";
      rows.systems.push({ id: next, total: "0.1", unit: "mmol/L", name: "", pka: "", charge: "0" });
      setRows(rows);
      view.focusRow("system", rows.systems.length - 1);
    } else if (what === "add-ion") {
      const used = new Set(rows.ions.map((r) => r.id));
      const next = [...ionLibrary.keys()].find((id) => !used.has(id)) ?? "custom";
      rows.ions.push({ id: next, total: "0.1", unit: "mmol/L", name: "", charge: "1", mass: "" });
      setRows(rows);
      view.focusRow("ion", rows.ions.length - 1);
    } else if (what === "remove") {
      const list = detail.kind === "system" ? rows.systems : rows.ions;
      list.splice(detail.index, 1);
      setRows(rows);
    } else if (what === "row-id" || what === "row-mass") {
      const list = detail.kind === "system" ? rows.systems : rows.ions;
      const row = list[detail.index];
      view.updateRow(detail.kind, detail.index, unitsFor(detail.kind, detail.index, row), row.id === "custom");
    } else if (what === "mode") {
      refreshRowNotes();
    } else if (what === "display-unit") {
      drawTable();
      notifyInputChange("water");
      return;
    } else if (what === "plot-system") {
      drawFraction();
      notifyInputChange("water");
      return;
    }
    notifyInputChange("water");
    block.schedule(); // as soon as this event is handled: no fixed delay
  });

  // -- state (share links, presets, saved files) -------------------------------------------

  function rowFromEntry(entry, kind) {
    const text = (v) => (v === null || v === undefined ? "" : String(v));
    const c = entry?.custom;
    if (kind === "system") {
      return c
        ? { id: "custom", total: text(entry.total), unit: entry.unit || "mol/L", name: text(c.name), pka: Array.isArray(c.pKa) ? c.pKa.join(", ") : text(c.pKa), charge: text(c.charge_most_protonated ?? 0) }
        : { id: entry.id, total: text(entry.total), unit: entry.unit || "mol/L", name: "", pka: "", charge: "0" };
    }
    return c
      ? { id: "custom", total: text(entry.total), unit: entry.unit || "mol/L", name: text(c.name), charge: text(c.charge), mass: text(c.molar_mass_g_per_mol) }
      : { id: entry.id, total: text(entry.total), unit: entry.unit || "mol/L", name: "", charge: "", mass: "" };
  }

  function get() {
    const c = view.readConditions();
    return {
      scenario: collect().scenario,
      display: { unit: c.displayUnit, plot_system: Number(c.plotSystem) || 0 },
    };
  }

  function set(obj) {
    const messages = [];
    const sc = obj?.scenario;
    if (!sc || typeof sc !== "object" || Array.isArray(sc)) return ["water: no scenario given; the composition was left as it was"];
    const text = (v) => (v === null || v === undefined ? "" : typeof v === "object" ? JSON.stringify(v) : String(v));
    const systemsIn = Array.isArray(sc.systems) ? sc.systems : [];
    const ionsIn = Array.isArray(sc.ions) ? sc.ions : [];
    const rows = {
      systems: systemsIn
        .filter((e, i) => {
          const ok = e && typeof e === "object" && (e.custom || library.has(e.id));
          if (!ok) messages.push(`water: system ${i + 1} (${JSON.stringify(e?.id ?? e)}) is not in the library and was left out`);
          return ok;
        })
        .map((e) => rowFromEntry(e, "system")),
      ions: ionsIn
        .map((e) => (e && typeof e === "object" && !e.custom ? { ...e, id: resolveIonId(e.id, ionLibrary) ?? e.id } : e))
        .filter((e, i) => {
          const ok = e && typeof e === "object" && (e.custom || ionLibrary.has(e.id));
          if (!ok) messages.push(`water: ion ${i + 1} (${JSON.stringify(ionsIn[i]?.id ?? e)}) is not in the library and was left out`);
          return ok;
        })
        .map((e) => rowFromEntry(e, "ion")),
    };
    const iMode = sc.ionic_strength_M != null ? "given" : sc.tds_mg_per_L != null ? "tds" : sc.conductance_uS_per_cm != null ? "conductance" : "composition";
    const m = sc.measured && typeof sc.measured === "object" ? sc.measured : null;
    const wantedActivity = sc.activity ?? START_CONDITIONS.activity;
    const activity = ["ideal", "davies", "extended-debye-huckel"].includes(wantedActivity) ? wantedActivity : START_CONDITIONS.activity;
    if (sc.activity && activity !== sc.activity) messages.push(`water: activity model ${JSON.stringify(sc.activity).slice(0, 40)} is unknown; Davies is used`);
    const unit = obj.display?.unit;
    if (unit !== undefined && !DISPLAY_UNITS.includes(unit)) messages.push(`water: display unit ${JSON.stringify(unit).slice(0, 40)} is not offered; kept ${view.readConditions().displayUnit}`);
    const alkUnit = m?.alkalinity?.unit;
    if (m && !["mg/L as CaCO3", "meq/L"].includes(alkUnit)) messages.push(`water: alkalinity unit ${JSON.stringify(alkUnit ?? null).slice(0, 40)} is not offered; mg/L as CaCO3 is used`);
    view.setConditions({
      temperature: text(sc.temperature_C ?? START_CONDITIONS.temperature_C),
      activity,
      iMode,
      iValue: text(sc.ionic_strength_M ?? sc.tds_mg_per_L ?? sc.conductance_uS_per_cm),
      fixedPH: text(sc.pH),
      pco2: text(sc.gas?.CO2_partial_pressure_atm),
      measured: Boolean(m),
      complexes: sc.complexes !== false,
      precipitate: Array.isArray(sc.precipitate) ? sc.precipitate.filter((p) => typeof p === "string").slice(0, 20) : [],
      measuredPH: m ? text(m.pH) : undefined,
      alkValue: m ? text(m.alkalinity?.value) : undefined,
      alkUnit: m ? (["mg/L as CaCO3", "meq/L"].includes(alkUnit) ? alkUnit : "mg/L as CaCO3") : undefined,
      displayUnit: DISPLAY_UNITS.includes(unit) ? unit : undefined,
    });
    wantedPlotSystem = Number.isInteger(obj.display?.plot_system) && obj.display.plot_system >= 0 ? obj.display.plot_system : null;
    setRows(rows);
    return messages;
  }

  /** Put the inputs named in `problems` back to usable values (see section.js settle). */
  function reset(problems) {
    const notes = [];
    const c = view.readConditions();
    const rows = view.readRows();
    const dropRows = { system: new Set(), ion: new Set() };
    for (const [id, message] of Object.entries(problems)) {
      const why = message.replace(/\.$/, "");
      const row = /^water-(system|ion)-(\d+)-/.exec(id);
      if (row) {
        dropRows[row[1]].add(Number(row[2]));
        continue;
      }
      if (CONDITION_DEFAULTS[id]) {
        const [key, value, words, label] = CONDITION_DEFAULTS[id];
        if (c[key] === value) continue;
        view.setConditions({ [key]: value, ...(id === "water-istrength-value" ? { iMode: "composition" } : {}) });
        notes.push(`water: ${label} "${String(c[key]).slice(0, 40)}" could not be used (${why}); ${words} instead`);
      } else if ((id === "water-measured-ph" || id === "water-alk-value") && c.measured) {
        view.setConditions({ measured: false });
        refreshRowNotes();
        notes.push(`water: the measurements (pH "${String(c.measuredPH).slice(0, 20)}", alkalinity "${String(c.alkValue).slice(0, 20)}") could not be used (${why}); they were left out`);
      } else if (id === "water-activity" && c.activity !== START_CONDITIONS.activity) {
        view.setConditions({ activity: START_CONDITIONS.activity });
        notes.push(`water: activity model could not be used (${why}); Davies is used instead`);
      }
    }
    for (const kind of ["system", "ion"]) {
      const list = kind === "system" ? rows.systems : rows.ions;
      for (const index of [...dropRows[kind]].sort((a, b) => b - a)) {
        const r = list[index];
        if (!r) continue;
        const what = r.id === "custom" ? `“${r.name}”` : (kind === "system" ? library.get(r.id)?.name : ionLibrary.get(r.id)?.name) ?? r.id;
        const amount = String(r.total).trim() ? `${String(r.total).slice(0, 20)} ${unitLabel(r.unit)}` : "no amount";
        notes.push(`water: ${kind} ${index + 1} (${what}, ${amount}) could not be used ` +
          `(${problems[Object.keys(problems).find((k) => k.startsWith(`water-${kind}-${index}-`))]
            .replace(/ \(empty rows are not allowed; remove the row instead\)/, "").replace(/\.$/, "")}); it was left out`);
        list.splice(index, 1);
      }
    }
    if (dropRows.system.size || dropRows.ion.size) setRows(rows);
    return notes;
  }

  async function settle() {
    const notes = await block.settle(reset);
    tellSolved();
    return notes;
  }

  registerSection("water", { get, set, refresh, settle });
  setRows({
    systems: EXAMPLE.systems,
    ions: EXAMPLE.ions.map((r) => ({ ...r, id: resolveIonId(r.id, ionLibrary) ?? r.id })).filter((r) => ionLibrary.has(r.id)),
  });
  view.syncConditionFields();

  return {
    refresh,
    scenario: () => (lastScenario ? JSON.parse(JSON.stringify(lastScenario)) : null),
    onSolved(cb) {
      solvedListeners.add(cb);
      return () => solvedListeners.delete(cb);
    },
    onStale(cb) {
      staleListeners.add(cb);
      return () => staleListeners.delete(cb);
    },
  };
}

/**
 * Call fn once, in a task after the next frame is drawn (so what was written before it is on
 * screen first); after 100 ms at the latest, as no frame comes while the page is hidden. Marks
 * "water:headline-frame" at that frame (build_scripts/bench.py: the headline on screen).
 *
 * @param {() => void} fn
 */
function afterFrame(fn) {
  let done = false;
  const go = () => {
    if (!done) {
      done = true;
      fn();
    }
  };
  const timer = setTimeout(go, 100);
  requestAnimationFrame(() => {
    performance.mark("water:headline-frame");
    clearTimeout(timer);
    setTimeout(go, 0);
  });
}

/**
 * The page's one total alkalinity of a solved water: to the fixed end point pH 4.5 (Standard
 * Methods 2320 B), as a lab titration reports it and as the measured-alkalinity input takes it.
 * Read from the core's alkalinity report.
 *
 * @param {object} result  a core solve result (or a dose result's water_before / water_after)
 * @returns {{mg_per_L_as_CaCO3: number|null, meq_per_L: number|null, end_pH: number}}
 */
export function totalAlkalinity(result) {
  const a = result?.alkalinity || {};
  const f = a.fixed_end_point || {};
  return {
    mg_per_L_as_CaCO3: f.total_mg_per_L_as_CaCO3 ?? a.total_mg_per_L_as_CaCO3 ?? null,
    meq_per_L: f.total_meq_per_L ?? a.total_meq_per_L ?? null,
    end_pH: f.total_end_point_pH ?? 4.5,
  };
}
