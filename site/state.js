// The page's inputs as one plain object: what share links, presets, saved files and reports
// carry. No DOM and no chemistry here.
//
// Contract for sections: registerSection(name, {get, set}) where
//   get() -> a JSON-able object holding the section's INPUTS (never its results), and
//   set(obj) -> fills the inputs from such an object and returns a list of messages (strings)
//               for anything it could not use; it does not recompute (applyState does that).
//   settle() -> computes; an input the core or the parser cannot use is put back to its default
//               and named in the returned notes, so an opened link always computes.
// A section calls notifyInputChange(name) whenever the user changes one of its inputs.

/** Version of the state object; share.js migrates older versions up to this one.
 *  2: strong ions keyed by words ("calcium", "sulfate") instead of formulas ("Ca+2", "SO4-2"). */
export const STATE_VERSION = 2;

const sections = new Map();
const listeners = new Set();

/**
 * @param {string} name  key of the section in the state object (e.g. "distribution", "water")
 * @param {{get: () => object, set: (obj: object) => string[], settle?: () => Promise<string[]>,
 *          refresh?: () => Promise<any>}} handlers
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
  for (const [, { settle, refresh }] of chosen) {
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
