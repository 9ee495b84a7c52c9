// What the job controllers share (hardness.js, lead.js, scale.js, softening.js, treatment.js):
// the words for a water that cannot be used, the figures of the water already on the page
// when a job mounts after the water's first result, and following the water (hardness, lead).
// No DOM here.

import { fixed } from "./format.js";
import { isJobShown, onJobShown } from "./workbench.js";

/**
 * The note a job shows while the water above has an input that cannot be used.
 *
 * @param {object|null} result  the last valid water's result (null: there was none)
 * @param {string} [what]  what the job's figures are ("figures", "curves")
 * @param {boolean} [withTemperature]  also name the last valid water's temperature
 * @returns {string}
 */
export function staleWaterNote(result, what = "figures", withTemperature = false) {
  if (!result) return "The water above has an input that cannot be used; nothing is computed here until it can.";
  const at = withTemperature ? `pH ${fixed(result.pH, 2)}, ${fixed(result.temperature_C, 1)} °C` : `pH ${fixed(result.pH, 2)}`;
  return `Not updated: the water above has an input that cannot be used. These ${what} are for the last valid water (${at}).`;
}

/**
 * The figures of the water already on the page for a job mounted after the water's first result.
 * They normally come with the water handle's replay of its last solve (main.js), which costs no
 * request; only when there was none (the water went stale before the job was mounted) is the
 * core asked, once, and not before the job is shown (a hidden job asks nothing). `take(scenario,
 * result)` runs unless a solve of the water arrived in between.
 *
 * @param {{call: Function}} py  the core
 * @param {() => {scenario: object|null, result: object|null}} getCurrent  the job's water now
 * @param {(scenario: object, result: object) => void} take
 * @param {{shown: () => boolean, onShown: (listener: () => void) => () => void}} job  whether the
 *        job is in view, and a listener for when it comes into view (workbench.js)
 */
export function askInitialWater(py, getCurrent, take, { shown, onShown }) {
  let off = null;
  const ask = () => {
    off?.();
    off = null;
    const initial = getCurrent().scenario;
    if (!initial || getCurrent().result) return; // no water yet, or the replayed solve came
    py.call("solve", initial).then((result) => {
      const now = getCurrent();
      if (now.result || now.scenario !== initial) return;
      take(initial, result);
    }).catch(() => {}); // the water section shows its own failure
  };
  // After the replay of the water's last solve (a microtask queued when the job subscribed).
  queueMicrotask(() => {
    if (shown()) ask();
    else off = onShown(ask);
  });
}

/**
 * A job follows the water above: each solve is kept, written on the job's water line
 * (`describe(result)`) and computed (`run()`); while the water has an input that cannot be used
 * the line says so (staleWaterNote) and `stale(note)` stops and marks the job's drawn results; the
 * water already on the page when the job mounts is taken as askInitialWater takes it. The line
 * reads `describe(null)` until the first water comes.
 *
 * @param {object} o
 * @param {{call: Function}} o.py  the core
 * @param {{scenario?: () => object|null, onSolved: Function, onStale?: Function}} o.water  the water handle (main.js)
 * @param {{setWater: (text: string, stale?: boolean) => void}} o.view  the job's view
 * @param {string} o.job  the job's name on the workbench (workbench.js)
 * @param {string} o.what  what the job's figures are ("figures", "curves"), for the note
 * @param {(result: object|null) => string} o.describe  the water line for a water's result
 * @param {() => void} o.run  compute the job on the water now
 * @param {(note: string) => void} o.stale  stop the job's requests and mark what it has drawn
 * @returns {{scenario: object|null, result: object|null, note: string}}  the job's water, kept
 *          up to date in place (`note`: the stale note, "" while the water can be used)
 */
export function followWater({ py, water, view, job, what, describe, run, stale }) {
  const current = { scenario: water.scenario?.() ?? null, result: null, note: "" };
  const take = (scenario, result) => {
    current.scenario = scenario;
    current.result = result;
    view.setWater(describe(result));
    run();
  };
  water.onSolved((scenario, result) => {
    current.note = "";
    take(scenario, result);
  });
  water.onStale?.((note, result) => {
    current.note = staleWaterNote(result, what);
    view.setWater(current.note, true);
    stale(current.note);
  });
  view.setWater(describe(null));
  askInitialWater(py, () => current, take, { shown: () => isJobShown(job), onShown: (listener) => onJobShown(job, listener) });
  return current;
}
