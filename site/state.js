// The page's inputs as one plain object: what share links, presets, saved files and reports
// carry. No DOM and no chemistry here.
//
// Contract for sections: registerSection(name, {get, set}) where
//   get() -> a JSON-able object holding the section's INPUTS (never its results), and
//   set(obj) -> fills the inputs from such an object and returns a list of messages (strings)
//               for anything it could not use; it does not recompute (applyState does that).
// A section calls notifyInputChange(name) whenever the user changes one of its inputs.

/** Version of the state object; share.js migrates older versions up to this one. */
export const STATE_VERSION = 1;

const sections = new Map();
const listeners = new Set();

/**
 * @param {string} name  key of the section in the state object (e.g. "distribution", "water")
 * @param {{get: () => object, set: (obj: object) => string[], refresh?: () => Promise<any>}} handlers
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
 * Fill every section from a state object, then recompute each one in order.
 *
 * @param {object} state  as made by collectState (already migrated to STATE_VERSION)
 * @returns {Promise<string[]>}  messages about what was ignored
 */
export async function applyState(state) {
  const messages = [];
  for (const [name, { set }] of sections) {
    if (state && Object.prototype.hasOwnProperty.call(state, name)) {
      try {
        messages.push(...(set(state[name]) || []));
      } catch (error) {
        messages.push(`${name}: ${error?.message || error}`);
      }
    }
  }
  for (const [, { refresh }] of sections) if (refresh) await refresh();
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
