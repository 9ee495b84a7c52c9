// The core's catalogues (acidscape.boundary.catalogues, the "catalogues" method): units with
// their factors, activity models, plant flow units, temperature and alkalinity units, molar
// masses. The page keeps no copy of these lists: main.js hands the core's answer over once with
// setCatalogues() before any section is mounted, and the tables below are filled in place from it
// (so modules that imported them see the core's lists). No DOM here (catalogue-view.js fills the
// page's selects).

/** Units of the species table, in the core's order (values, e.g. "mmol/L", "mg/L as basis"). */
export const DISPLAY_UNITS = [];
/** Shown value per mol/L for each molar unit of the species table (1000 for mmol/L). */
export const MOLAR_SCALE = {};
/** Shown value per g/L for each mass unit of the species table (1000 for mg/L). */
export const MASS_SCALE = {};
/** Plant flow units [value, words] the core accepts (acidscape.operations.dosing.FLOW_UNITS). */
export const FLOW_UNITS = [];

let current = null;

// 1 / (a power of ten) in floating point can miss the power by one unit in the last place; the
// core's factors are decimal, so the inverse is read back at 15 significant digits.
const inverse = (f) => Number((1 / f).toPrecision(15));

/**
 * Take the core's catalogues (the result of py.call("catalogues")) and fill the tables above.
 *
 * @param {object} cat  {display_units, activity_models, flow_units, temperature_units,
 *                       alkalinity_units, molar_masses_g_per_mol, default_display_unit, default_activity}
 */
export function setCatalogues(cat) {
  if (!cat || !Array.isArray(cat.display_units)) return;
  current = cat;
  DISPLAY_UNITS.splice(0, DISPLAY_UNITS.length, ...cat.display_units.map((u) => u.value));
  for (const key of Object.keys(MOLAR_SCALE)) delete MOLAR_SCALE[key];
  for (const key of Object.keys(MASS_SCALE)) delete MASS_SCALE[key];
  for (const u of cat.display_units) {
    if (u.kind === "molar") MOLAR_SCALE[u.value] = inverse(u.mol_per_L);
    else MASS_SCALE[u.value] = inverse(u.g_per_L);
  }
  FLOW_UNITS.splice(0, FLOW_UNITS.length, ...(cat.flow_units ?? []).map((u) => [u.value, u.label]));
}

/** The core's catalogues as handed over (null before setCatalogues). */
export function catalogues() {
  return current;
}

/**
 * Molar mass of a dosing chemical from the core's catalogue.
 *
 * @param {string} id  chemical id, e.g. "CO2"
 * @returns {number|null}  [g/mol], null if the core lists none
 */
export function molarMass(id) {
  return current?.molar_masses_g_per_mol?.[id] ?? null;
}

/**
 * The choices of one catalogue as [value, words] pairs and the default value.
 *
 * @param {"display_units"|"activity_models"|"flow_units"|"temperature_units"|"alkalinity_units"} name
 * @returns {{options: [string, string][], preferred: string|null}}
 */
export function choices(name) {
  const list = current?.[name] ?? [];
  const preferred = { display_units: current?.default_display_unit, activity_models: current?.default_activity }[name];
  return { options: list.map((u) => [u.value, u.label]), preferred: preferred ?? list[0]?.value ?? null };
}
