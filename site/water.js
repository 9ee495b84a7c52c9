// Section "Equilibrium of a whole water": turns the composition editor into a core scenario,
// asks the core (method "water") for the equilibrium and its curves, and draws them. Keeps the
// last good result on screen when an input is bad, with the message beside that input.
//
// mountWater({py, view, plots, palette, systems, ions}) -> {refresh, scenario, onSolved}
//   refresh()      recompute now; resolves true when a result was drawn
//   scenario()     the last scenario the core solved (a deep copy), or null before the first
//   onSolved(cb)   cb(scenario, result) after every successful solve; returns an unsubscribe
// State (state.js, name "water"): {scenario: <core scenario>, display: {unit, plot_system}}.

import { CoreError } from "./py.js";
import { notifyInputChange, registerSection } from "./state.js";
import { unitLabel } from "./water-view.js";
import { prettyFormula } from "./format.js";
import { INTEGER, NUMBER, cleanNumberText, parseNumber } from "./parse.js";

const DEBOUNCE_MS = 120;
const LOG_SPAN = 14; // decades shown on the log-concentration axis
const CURVE = { pH_min: 0, pH_max: 14, points: 281 };
const DISPLAY_UNITS = ["mol/L", "mmol/L", "mg/L"];
const CUSTOM_SYSTEM_UNITS = ["mol/L", "mmol/L", "umol/L"];

// The starting water is invented (not a real sample): a soft, slightly buffered water of
// 2 mmol/L carbonate with 2 mmol/L sodium and 0.2 mmol/L chloride, at 25 °C.
const EXAMPLE = {
  systems: [{ id: "carbonate", total: "2", unit: "mmol/L", name: "", pka: "", charge: "0" }],
  ions: [
    { id: "Na+", total: "2", unit: "mmol/L", name: "", charge: "1", mass: "" },
    { id: "Cl-", total: "0.2", unit: "mmol/L", name: "", charge: "-1", mass: "" },
  ],
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

const clean = cleanNumberText;

function parseInteger(text, what) {
  const t = clean(text);
  if (!t) return { error: `Enter ${what}.` };
  if (!INTEGER.test(t)) return { error: `"${t}" is not a whole number; enter ${what}.`, raw: t };
  return { value: Number(t) };
}

function parsePkaList(text) {
  const t = clean(text);
  if (!t) return { error: "Enter at least one pKa value, e.g. 4.76 (separate several with commas)." };
  const values = [];
  for (const [i, part] of t.split(",").map(clean).entries()) {
    if (!part) return { error: `Value ${i + 1} of the list is empty; separate pKa values with single commas.`, raw: t };
    if (!NUMBER.test(part)) return { error: `"${part}" (value ${i + 1}) is not a number.`, raw: t };
    values.push(Number(part));
  }
  return { value: values };
}

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
 * Mount the section.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./water-view.js").WaterView} deps.view  its DOM
 * @param {{fraction: object, logc: object}} deps.plots  from embedWaterPlots()
 * @param {string[]} deps.palette  line colours (plots.json)
 * @param {object[]} deps.systems  library systems (core "systems" method)
 * @param {object[]} deps.ions  library strong ions
 * @returns {{refresh: () => Promise<boolean>, scenario: () => object|null,
 *            onSolved: (cb: (scenario: object, result: object) => void) => () => void}}
 */
export function mountWater({ py, view, plots, palette, systems, ions }) {
  const library = new Map((systems || []).map((s) => [s.id, s]));
  const ionLibrary = new Map((ions || []).map((s) => [s.id, s]));
  const solvedListeners = new Set();
  let lastScenario = null;
  let last = null; // {result, curves}
  let latest = 0;
  let timer = null;

  view.setLibrary([...library.values()], [...ionLibrary.values()]);

  // -- rows and their units -------------------------------------------------------------------

  function unitsFor(kind, i, row) {
    const measured = view.readConditions().measured;
    if (kind === "system") {
      const system = library.get(row.id);
      const units = system ? system.units : CUSTOM_SYSTEM_UNITS;
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
      units = ["mol/L", "mmol/L", "umol/L", ...(mass.value ? ["mg/L"] : []), "meq/L"];
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
    scenario.temperature_C = take("water-temperature", parseNumber(c.temperature, "a temperature in °C, e.g. 25"));
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
          pKa: take(`${base}-pka`, parsePkaList(row.pka)),
          charge_most_protonated: take(`${base}-charge`, parseInteger(row.charge, "the charge of the most protonated form, e.g. 0")),
        };
      } else {
        entry.id = row.id;
      }
      entry.total = take(`${base}-total`, parseNumber(row.total, "the total, e.g. 1 (empty rows are not allowed; remove the row instead)"));
      entry.unit = row.unit;
      const allowed = row.id === "custom" ? CUSTOM_SYSTEM_UNITS : library.get(row.id)?.units;
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
    if (!last) return;
    const { curves, result } = last;
    const index = Number(view.readConditions().plotSystem) || 0;
    const system = curves.systems[index];
    if (!system) {
      plots.fraction.setLines(curves.pH, [], []);
      return;
    }
    plots.fraction.setLines(curves.pH, system.species.map(prettyFormula), system.fractions);
    plots.fraction.setMarker(result.pH);
  }

  function drawLogc() {
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

  function drawTable() {
    if (!last) return;
    view.renderResult(last.result, { unit: view.readConditions().displayUnit }, palette, systemNames(last.result));
  }

  function draw(out) {
    const previous = last;
    last = out;
    const chosen = Number(view.readConditions().plotSystem) || 0;
    const sameSystems =
      previous && previous.curves.systems.map((s) => s.id).join() === out.curves.systems.map((s) => s.id).join();
    view.setPlotSystems(out.curves.systems, sameSystems ? chosen : 0);
    drawTable();
    drawFraction();
    drawLogc();
    view.markDrawn();
  }

  // -- compute ------------------------------------------------------------------------------

  async function refresh() {
    const { scenario, errors, systemRow } = collect();
    const seq = ++latest;
    if (Object.keys(errors).length) {
      view.showErrors(errors); // the last good result stays on screen
      return false;
    }
    view.setBusy(true);
    try {
      const t0 = performance.now();
      const out = await py.call("water", { ...scenario, curve: CURVE });
      if (seq !== latest) return false; // a newer request is on its way
      const t1 = performance.now();
      view.showErrors({});
      draw(out);
      // Timings for build_scripts/bench.py: the core round trip, then the table and plots.
      performance.measure("water:core", { start: t0, end: t1 });
      performance.measure("water:draw", { start: t1, end: performance.now() });
      lastScenario = JSON.parse(JSON.stringify(scenario));
      for (const cb of solvedListeners) {
        try {
          cb(JSON.parse(JSON.stringify(scenario)), out.result);
        } catch (error) {
          console.warn("a listener of the water section failed:", error);
        }
      }
      return true;
    } catch (error) {
      if (seq !== latest) return false;
      if (!(error instanceof CoreError)) throw error;
      const [id, word] = placeOf(error.field, systemRow);
      view.showErrors({ [id]: readable(error.message, word) });
      return false;
    } finally {
      if (seq === latest) view.setBusy(false);
    }
  }

  function schedule(delay = DEBOUNCE_MS) {
    clearTimeout(timer);
    timer = setTimeout(refresh, delay);
  }

  view.bind((what, detail) => {
    const rows = view.readRows();
    if (what === "add-system") {
      const used = new Set(rows.systems.map((r) => r.id));
      const next = [...library.keys()].find((id) => !used.has(id)) ?? "custom";
      rows.systems.push({ id: next, total: "0.1", unit: "mmol/L", name: "", pka: "", charge: "0" });
      setRows(rows);
      document.getElementById(`water-system-${rows.systems.length - 1}-id`)?.focus();
    } else if (what === "add-ion") {
      const used = new Set(rows.ions.map((r) => r.id));
      const next = [...ionLibrary.keys()].find((id) => !used.has(id)) ?? "custom";
      rows.ions.push({ id: next, total: "0.1", unit: "mmol/L", name: "", charge: "1", mass: "" });
      setRows(rows);
      document.getElementById(`water-ion-${rows.ions.length - 1}-id`)?.focus();
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
    schedule(what === "value" ? DEBOUNCE_MS : 0);
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
    if (!sc || typeof sc !== "object") return ["water: no scenario given; the composition was left as it was"];
    const text = (v) => (v === null || v === undefined ? "" : String(v));
    const systemsIn = Array.isArray(sc.systems) ? sc.systems : [];
    const ionsIn = Array.isArray(sc.ions) ? sc.ions : [];
    const rows = {
      systems: systemsIn
        .filter((e, i) => {
          const ok = e && (e.custom || library.has(e.id));
          if (!ok) messages.push(`water: system ${i + 1} (${JSON.stringify(e?.id ?? e)}) is not in the library and was left out`);
          return ok;
        })
        .map((e) => rowFromEntry(e, "system")),
      ions: ionsIn
        .filter((e, i) => {
          const ok = e && (e.custom || ionLibrary.has(e.id));
          if (!ok) messages.push(`water: ion ${i + 1} (${JSON.stringify(e?.id ?? e)}) is not in the library and was left out`);
          return ok;
        })
        .map((e) => rowFromEntry(e, "ion")),
    };
    const iMode = sc.ionic_strength_M != null ? "given" : sc.tds_mg_per_L != null ? "tds" : sc.conductance_uS_per_cm != null ? "conductance" : "composition";
    const m = sc.measured;
    const activity = ["ideal", "davies", "extended-debye-huckel"].includes(sc.activity ?? "davies") ? sc.activity ?? "davies" : "davies";
    if (sc.activity && activity !== sc.activity) messages.push(`water: activity model ${JSON.stringify(sc.activity)} is unknown; Davies is used`);
    const unit = obj.display?.unit;
    view.setConditions({
      temperature: text(sc.temperature_C ?? 25),
      activity,
      iMode,
      iValue: text(sc.ionic_strength_M ?? sc.tds_mg_per_L ?? sc.conductance_uS_per_cm),
      fixedPH: text(sc.pH),
      pco2: text(sc.gas?.CO2_partial_pressure_atm),
      measured: Boolean(m),
      measuredPH: m ? text(m.pH) : undefined,
      alkValue: m ? text(m.alkalinity?.value) : undefined,
      alkUnit: m && ["mg/L as CaCO3", "meq/L"].includes(m.alkalinity?.unit) ? m.alkalinity.unit : undefined,
      displayUnit: DISPLAY_UNITS.includes(unit) ? unit : undefined,
    });
    setRows(rows);
    return messages;
  }

  registerSection("water", { get, set, refresh });
  setRows(EXAMPLE);
  view.syncConditionFields();

  return {
    refresh,
    scenario: () => (lastScenario ? JSON.parse(JSON.stringify(lastScenario)) : null),
    onSolved(cb) {
      solvedListeners.add(cb);
      return () => solvedListeners.delete(cb);
    },
  };
}
