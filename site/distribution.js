// Section "Species of one acid across pH": reads the form, asks the core for the distribution,
// draws the plots and the table. Keeps the last good result on screen when an input is bad.
// It is the workbench's job "explorer": while hidden it asks the core nothing (not at boot
// either) and computes when shown; a link, file or example that gives its inputs has them
// checked by the core when it is opened, so what is dropped is named at once.
// Other sections (water equilibrium, titration, dosing...) follow the same shape: a
// mount<Name>({py, view, plots, status, ...}) function returning {refresh}.

import { CoreError } from "./py.js";
import { fixed, prettyFormula } from "./format.js";
import { parseInteger, parseNumber, parseNumberList } from "./parse.js";
import { notifyInputChange, registerSection } from "./state.js";
import { computation } from "./section.js";
import { isJobShown, onJobShown } from "./workbench.js";

const JOB = "explorer";

// What an input goes back to when a link or file holds a value the page cannot use.
const DEFAULTS = { "pka-input": "2.15, 7.20, 12.35", "charge-input": "0", "total-input": "0.001", "ph-input": "7" };
const INPUT_WORD = {
  "pka-input": "pKa values", "charge-input": "charge", "total-input": "total concentration", "ph-input": "pH",
};
const LOG_SPAN = 12; // decades shown on the log-concentration axis

// Core error fields -> ids of the inputs they concern.
const FIELD_INPUT = {
  system: "acid-select",
  pKa: "pka-input",
  charge_most_protonated: "charge-input",
  total_M: "total-input",
  pH: "ph-input",
};

// Core error fields -> the words the page uses for them, to start a message with.
const FIELD_LABEL = {
  total_M: "Total concentration",
  charge_most_protonated: "Charge",
  pH: "pH",
};

function readable(message, field) {
  const label = FIELD_LABEL[field];
  return label && message.startsWith(field) ? label + message.slice(field.length) : message;
}

function inputForField(field) {
  if (!field) return "block";
  const base = String(field).replace(/\[\d+\]$/, "");
  return FIELD_INPUT[base] || "block";
}

function parsePkaList(text) {
  return parseNumberList(text, "pKa value");
}

function parseCharge(text) {
  const parsed = parseInteger(text, "the charge of the most protonated form, e.g. 0 or 1");
  return parsed.raw ? { ...parsed, error: `"${parsed.raw}" is not a whole number; a charge is e.g. -1, 0 or 1.` } : parsed;
}

/**
 * Mount the section.
 *
 * @param {object} deps
 * @param {{call: (method: string, params?: object) => Promise<any>}} deps.py  the core
 * @param {import("./view.js").DistributionView} deps.view  its DOM
 * @param {{palette: string[], fraction: object, logc: object, setLogRange: Function}} deps.plots
 * @param {import("./view.js").StatusView} deps.status  page status
 * @param {{id: string, name: string, species: {charge: number}[], pKa_25C: number[]}[]|null} deps.systems
 *        library acids, or null when the core offers none
 * @returns {{refresh: () => Promise<boolean>}}  refresh resolves true when a result was drawn
 */
export function mountDistribution({ py, view, plots, status, systems }) {
  const library = new Map((systems || []).map((s) => [s.id, s]));
  let shownFor = null; // the parameters of the result on screen

  if (library.size) {
    view.setAcidOptions([...library.values()]);
    const first = [...library.keys()].find((id) => id.startsWith("phosph")) ?? [...library.keys()][0];
    fillFromLibrary(first);
  }

  function fillFromLibrary(id) {
    const system = library.get(id);
    if (!system) return;
    const pKa = system.pKa_25C ?? system.pKa ?? [];
    view.setAcid(id, { pka: pKa.join(", "), charge: String(system.species?.[0]?.charge ?? 0) });
  }

  function collect() {
    const raw = view.read();
    const errors = {};
    const params = {};
    if (raw.acid !== "custom" && library.has(raw.acid)) {
      params.system = raw.acid;
    } else {
      const pKa = parsePkaList(raw.pka);
      if (pKa.error) errors["pka-input"] = pKa.error;
      else params.pKa = pKa.value;
      const charge = parseCharge(raw.charge);
      if (charge.error) errors["charge-input"] = charge.error;
      else params.charge_most_protonated = charge.value;
    }
    const total = parseNumber(raw.total, "the total concentration in mol/L, e.g. 0.001");
    if (total.error) errors["total-input"] = total.error;
    else params.total_M = total.value;
    const pH = parseNumber(raw.ph, "a pH, e.g. 7");
    if (pH.error) errors["ph-input"] = pH.error;
    else params.pH = pH.value;
    return { params, errors };
  }

  function draw(result) {
    const labels = result.species.map((s) => prettyFormula(s.name));
    const total = result.total_M;
    const logc = result.curve.fractions.map((row) =>
      row.map((f) => (f > 0 && total > 0 ? Math.log10(total * f) : Number.NaN)),
    );
    plots.fraction.setLines(result.curve.pH, labels, result.curve.fractions);
    plots.logc.setLines(result.curve.pH, labels, logc);
    plots.fraction.setMarker(result.table.pH);
    plots.logc.setMarker(result.table.pH);
    if (total > 0) {
      const top = Math.ceil(Math.log10(total) + 0.8);
      plots.setLogRange(top - LOG_SPAN, top);
    }
    view.renderTable(result.name, result.table, plots.palette);
    status.markDrawn();
  }

  function staleNote(kind) {
    if (!shownFor) return "";
    const what = shownFor.system ? library.get(shownFor.system)?.name ?? shownFor.system : `pKa ${shownFor.pKa.join(", ")}`;
    const why = kind === "invalid" ? "an input above cannot be used" : "the core could not use these inputs";
    return `Not updated: ${why}. The table and plots still show the last valid inputs ` +
      `(${what}, ${shownFor.total_M} mol/L, pH ${fixed(shownFor.pH, 2)}).`;
  }

  const block = computation({
    read: collect,
    call: (params) => py.call("distribution", params),
    render(result, params) {
      view.showErrors({});
      draw(result);
      shownFor = params;
      view.setResultState("current");
    },
    explain(error) {
      const target = error instanceof CoreError ? inputForField(error.field) : "block";
      return { [target]: readable(error.message, error.field) };
    },
    show(messages, kind) {
      view.showErrors(messages); // the last good result stays on screen, marked as such
      view.setResultState(shownFor ? "stale" : "empty", staleNote(kind));
    },
    busy: (flag) => view.setBusy(flag),
    active: () => isJobShown(JOB),
  });
  onJobShown(JOB, () => block.resume());

  async function refresh() {
    return (await block.run()) === "drawn";
  }

  // Inputs given by a link, file or example (setState) are checked by the core when opened.
  let opened = false;
  function settle() {
    const force = opened;
    opened = false;
    return block.settle(reset, { force });
  }

  function reset(problems) {
    const key = { "pka-input": "pka", "charge-input": "charge", "total-input": "total", "ph-input": "ph" };
    const notes = [];
    for (const [id, message] of Object.entries(problems)) {
      if (!(id in DEFAULTS)) continue;
      const had = view.read()[key[id]];
      if (had === DEFAULTS[id]) continue;
      if ((id === "pka-input" || id === "charge-input") && view.read().acid !== "custom") continue;
      view.write(id, DEFAULTS[id]);
      notes.push(`distribution: ${INPUT_WORD[id]} "${String(had).slice(0, 40)}" could not be used ` +
        `(${message.replace(/\.$/, "")}); ${DEFAULTS[id]} is used instead`);
    }
    return notes;
  }

  view.bindChange((what) => {
    if (what === "acid") fillFromLibrary(view.read().acid);
    if (what === "values" && view.read().acid !== "custom") view.setAcid("custom");
    block.schedule(); // as soon as this event is handled: no fixed delay
    notifyInputChange("distribution");
  });

  // Input state for links, presets and saved files: {acid, pKa, charge, total_M, pH}. Each value
  // is the parsed number (or list) when the field reads as one, else the raw text, so a half-typed
  // field still travels as typed.
  function getState() {
    const raw = view.read();
    const pick = (parsed, text) => (parsed.error ? text : parsed.value);
    return {
      acid: raw.acid,
      pKa: pick(parsePkaList(raw.pka), raw.pka),
      charge: pick(parseCharge(raw.charge), raw.charge),
      total_M: pick(parseNumber(raw.total, ""), raw.total),
      pH: pick(parseNumber(raw.ph, ""), raw.ph),
    };
  }

  function setState(obj) {
    opened = true;
    const notes = [];
    const asText = (value, key, isList) => {
      if (typeof value === "string") return value;
      if (typeof value === "number" && Number.isFinite(value)) return String(value);
      if (isList && Array.isArray(value) && value.length && value.every((v) => typeof v === "number")) {
        return value.join(", ");
      }
      notes.push(`distribution.${key}: ${JSON.stringify(value)?.slice(0, 40)} is not usable here, so it was ignored`);
      return undefined;
    };
    if (obj.acid !== undefined) {
      if (obj.acid === "custom" || library.has(obj.acid)) view.setAcid(obj.acid);
      else notes.push(`distribution.acid: "${String(obj.acid).slice(0, 40)}" is not an acid this page knows, so it was ignored`);
    }
    if (view.read().acid !== "custom") {
      fillFromLibrary(view.read().acid); // library acids carry their own pKa and charge
    } else {
      const pka = obj.pKa === undefined ? undefined : asText(obj.pKa, "pKa", true);
      const charge = obj.charge === undefined ? undefined : asText(obj.charge, "charge", false);
      view.setAcid("custom", { pka, charge });
    }
    const fields = { total_M: "total-input", pH: "ph-input" };
    for (const [key, id] of Object.entries(fields)) {
      if (obj[key] === undefined) continue;
      const text = asText(obj[key], key, false);
      if (text !== undefined) view.write(id, text);
    }
    return notes;
  }

  registerSection("distribution", { get: getState, set: setState, refresh, settle });

  return { refresh };
}
