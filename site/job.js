// What the job controllers share (hardness.js, lead.js, scale.js, softening.js, treatment.js):
// the words for a water that cannot be used, and the one request for the figures of the water
// already on the page when a job mounts after the water's first result. No DOM here.

import { fixed } from "./format.js";

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
 * Ask the core once for the water already on the page (a job mounted after the water's first
 * result); `take(scenario, result)` runs unless a solve of the water arrived in between.
 *
 * @param {{call: Function}} py  the core
 * @param {() => {scenario: object|null, result: object|null}} getCurrent  the job's water now
 * @param {(scenario: object, result: object) => void} take
 */
export function askInitialWater(py, getCurrent, take) {
  const initial = getCurrent().scenario;
  if (!initial) return;
  py.call("solve", initial).then((result) => {
    const now = getCurrent();
    if (now.result || now.scenario !== initial) return;
    take(initial, result);
  }).catch(() => {}); // the water section shows its own failure
}
