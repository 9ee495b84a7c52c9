// Lists of whole-page states: the worked examples shipped in presets.json, and the user's own
// recent scenarios kept in this browser's localStorage (never sent anywhere). No DOM here.

/** localStorage key of the recent list; the value is JSON [{saved, title, link}]. */
export const RECENT_KEY = "acidscape.recent.v1";
/** How many recent scenarios are kept. */
export const RECENT_MAX = 10;

/**
 * Load the worked examples.
 *
 * @param {string} url  where presets.json is (same origin)
 * @returns {Promise<{id: string, title: string, label: string, description: string,
 *           state: object}[]>}  the examples, or [] when the file cannot be read
 */
export async function loadPresets(url) {
  try {
    const response = await fetch(url);
    if (!response.ok) return [];
    const data = await response.json();
    return Array.isArray(data?.presets) ? data.presets.filter((p) => typeof p?.id === "string") : [];
  } catch {
    return [];
  }
}

/**
 * @param {object[]} presets  from loadPresets
 * @param {string} id  a preset id
 * @returns {object|undefined}  the preset with that id
 */
export function findPreset(presets, id) {
  return presets.find((p) => p.id === id);
}

/**
 * A short title for a state, for the recent list: the systems of the water and its pH, or the
 * acid of the species section.
 *
 * @param {object} state  a page state
 * @returns {string}  e.g. "carbonate, phosphate · pH 7.4"
 */
export function describeState(state) {
  const sc = state?.water?.scenario;
  if (sc && typeof sc === "object") {
    const ids = (Array.isArray(sc.systems) ? sc.systems : [])
      .map((s) => (typeof s?.id === "string" ? s.id : s?.custom?.name))
      .filter((x) => typeof x === "string")
      .slice(0, 4);
    const pH = sc.measured?.pH ?? sc.pH;
    const parts = [ids.length ? ids.join(", ") : "water"];
    if (typeof pH === "number") parts.push(`pH ${pH}`);
    return parts.join(" · ");
  }
  const acid = state?.distribution?.acid;
  return typeof acid === "string" ? `species of ${acid}` : "scenario";
}

/** The user's recent scenarios in localStorage; every method survives a missing or full store. */
export class RecentStore {
  /** @param {Storage|null} storage  window.localStorage (null when the browser blocks it) */
  constructor(storage) {
    this.storage = storage;
  }

  /** @returns {{saved: string, title: string, link: string}[]}  newest first */
  list() {
    try {
      const items = JSON.parse(this.storage?.getItem(RECENT_KEY) || "[]");
      if (!Array.isArray(items)) return [];
      return items
        .filter((x) => x && typeof x.link === "string" && typeof x.title === "string" && typeof x.saved === "string")
        .slice(0, RECENT_MAX);
    } catch {
      return [];
    }
  }

  /**
   * Put a scenario at the top of the list (moving it if it is already there).
   *
   * @param {string} link  its fragment text (share.js encodeState)
   * @param {string} title  shown in the menu
   * @returns {boolean}  whether it was stored
   */
  add(link, title) {
    const items = this.list().filter((x) => x.link !== link);
    items.unshift({ saved: new Date().toISOString(), title: title.slice(0, 120), link });
    try {
      this.storage?.setItem(RECENT_KEY, JSON.stringify(items.slice(0, RECENT_MAX)));
      return Boolean(this.storage);
    } catch {
      return false;
    }
  }

  /** Forget every recent scenario. */
  clear() {
    try {
      this.storage?.removeItem(RECENT_KEY);
    } catch {
      /* nothing stored, nothing to clear */
    }
  }
}
