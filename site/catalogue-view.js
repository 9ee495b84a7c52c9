// Fills the page's lists whose choices are the core's catalogues (site/catalogues.js): the
// activity models, the species table's units, the alkalinity and temperature units. The options
// keep their values (links and saved files name them); the choice already made in a list is kept
// when the core still offers it, otherwise the core's default is chosen.

import { choices } from "./catalogues.js";

/** Select id -> the catalogue it lists (acidscape.boundary.catalogues). */
export const CATALOGUE_SELECTS = {
  "water-activity": "activity_models",
  "batch-activity": "activity_models",
  "water-display-unit": "display_units",
  "water-alk-unit": "alkalinity_units",
  "batch-alk-unit": "alkalinity_units",
  "batch-temp-unit": "temperature_units",
};

/**
 * Put [value, words] options into a select, keeping its choice when still offered.
 *
 * @param {HTMLSelectElement} select
 * @param {[string, string][]} options
 * @param {string|null} preferred  chosen when the select's current value is not among the options
 */
export function fillSelect(select, options, preferred = null) {
  const doc = select.ownerDocument;
  const before = select.value;
  select.replaceChildren(
    ...options.map(([value, text]) => {
      const option = doc.createElement("option");
      option.value = value;
      option.textContent = text;
      return option;
    }),
  );
  const keep = options.some(([value]) => value === before) ? before : preferred;
  if (keep !== null && options.some(([value]) => value === keep)) select.value = keep;
}

/**
 * Fill every catalogue list of the page (call once, after setCatalogues, before sections mount).
 *
 * @param {Document} doc
 */
export function fillCatalogueSelects(doc) {
  for (const [id, name] of Object.entries(CATALOGUE_SELECTS)) {
    const select = doc.getElementById(id);
    if (!select) continue;
    const { options, preferred } = choices(name);
    if (options.length) fillSelect(select, options, preferred);
  }
}
