// The page's inputs as one plain object: what share links, presets, saved files and reports
// carry. No DOM and no chemistry here.
//
// Contract for sections: registerSection(name, {get, set}) where
//   get() -> a JSON-able object holding the section's INPUTS (never its results), and
//   set(obj) -> fills the inputs from such an object and returns a list of messages (strings)
//               for anything it could not use; it does not recompute (applyState does that).
//   settle() -> computes; an input the core or the parser cannot use is put back to its default
//               and named in the returned notes, so an opened link always computes.
//   settleAfter -> optional names of sections this one settles after (when they are applied too).
// A section calls notifyInputChange(name) whenever the user changes one of its inputs.

import { JOBS, isJob, showJob, shownJob } from "./workbench.js";

/** Version of the state object; share.js migrates older versions up to this one.
 *  2: strong ions keyed by words ("calcium", "sulfate") instead of formulas ("Ca+2", "SO4-2"). */
export const STATE_VERSION = 2;

const sections = new Map();
const listeners = new Set();

/**
 * @param {string} name  key of the section in the state object (e.g. "distribution", "water")
 * @param {{get: () => object, set: (obj: object) => string[], settle?: () => Promise<string[]>,
 *          refresh?: () => Promise<any>, settleAfter?: string[]}} handlers
 */
export function registerSection(name, handlers) {
  sections.set(name, handlers);
}

/** @returns {string[]} names of the registered sections, in registration order */
export function sectionNames() {
  return [...sections.keys()];
}

/** @returns {{v: number}} the inputs of every section, keyed by section name */
export function collectState() {
  const state = { v: STATE_VERSION };
  for (const [name, { get }] of sections) state[name] = get();
  return state;
}

/**
 * Fill sections from a state object, then compute each one in order; what cannot be used is
 * dropped (the input keeps its default) and named in the messages.
 *
 * @param {object} state  as made by collectState (already migrated to STATE_VERSION)
 * @param {string[]} [names]  only these sections (default: every registered one)
 * @returns {Promise<string[]>}  messages about what was ignored or dropped
 */
export async function applyState(state, names = null) {
  const messages = [];
  const chosen = [...sections].filter(([name]) => !names || names.includes(name));
  for (const [name, { set }] of chosen) {
    if (state && Object.prototype.hasOwnProperty.call(state, name)) {
      try {
        messages.push(...(set(state[name]) || []));
      } catch (error) {
        messages.push(`${name}: ${error?.message || error}`);
      }
    }
  }
  // settled in registration order, each after the sections it names in settleAfter
  const order = [...chosen];
  for (const entry of chosen) {
    const at = Math.max(-1, ...(entry[1].settleAfter ?? []).map((n) => order.findIndex(([name]) => name === n)));
    const from = order.indexOf(entry);
    if (at > from) order.splice(at, 0, ...order.splice(from, 1));
  }
  for (const [, { settle, refresh }] of order) {
    if (settle) messages.push(...((await settle()) || []));
    else if (refresh) await refresh();
  }
  return messages;
}

/** @param {(section: string) => void} listener  called after any input changes */
export function onInputChange(listener) {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

/** @param {string} section  the section whose input the user changed */
export function notifyInputChange(section) {
  for (const listener of listeners) listener(section);
}

// Section "workbench": which job is in view ({job: "scale"}), so a link, file or report reopens
// the job it was made on. The job is shown when the opened state settles, once the water is
// (settleAfter), before the jobs settle: the job shown computes once, on the opened inputs.
// Choosing a job is not an input edit (the link in the address bar is rewritten at the next
// edit; Copy link, files and reports take the job in view when they are made).
let wantedJob = null;
registerSection("workbench", {
  get: () => ({ job: shownJob() }),
  set(obj) {
    wantedJob = null;
    if (obj?.job === undefined) return [];
    if (typeof obj.job === "string" && isJob(obj.job)) {
      wantedJob = obj.job;
      return [];
    }
    const label = JOBS.find((j) => j.name === shownJob())?.label ?? shownJob();
    return [`the job to show, ${JSON.stringify(obj.job)?.slice(0, 40)}, is not one of this page's jobs; ${label} stays in view`];
  },
  async settle() {
    if (wantedJob) showJob(wantedJob);
    wantedJob = null;
    return [];
  },
  settleAfter: ["water"],
});
