// The link is the scenario: the page's input state (state.js collectState()) packed into the URL
// fragment, and read back with every check a hostile or broken link needs. No DOM here, so the
// functions also run under Node for quick checks.
//
// Fragment formats (after the "#"):
//   s=<version>.<payload>   a scenario. <payload> is base64url (RFC 4648 §5, no "=" padding) of
//                           the UTF-8 JSON of the state object, whose "v" field repeats <version>.
//                           Version 1 = {v: 1, <section name>: <that section's inputs>, ...}
//                           with the section shapes of the contract (distribution, water,
//                           treatment, ...).
//                           Version 2 = version 1 with strong ions keyed by words ("calcium",
//                           "sulfate"); version 1 keyed them by formula ("Ca+2", "SO4-2").
//                           Version 0 (the first, single-section format, still read): a flat
//                           object {version: 0, acid, pka: "2.15, 7.2", z, c, ph} for the
//                           species section only; migrate() turns it into version 1.
//   z=<version>.<payload>   the same scenario, shorter: <payload> is base64url of the raw DEFLATE
//                           (RFC 1951, no zlib header) of the same UTF-8 JSON. This is what the
//                           page writes (encodeStateShort); s= links are still read, and written
//                           where a browser lacks CompressionStream. Reading inflates at most
//                           MAX_JSON_BYTES, so a small link cannot expand into a huge one.
//   y=<version>.<payload>   shorter still, and what the page writes: as z=, but before compression
//                           every object key found in KEY_TABLE_1 is replaced by its index in
//                           base 36 ("temperature_C" -> "1b"); a key of the state that is all
//                           digits or starts with "~" is written with a "~" before it. The
//                           table only ever grows at its end (old links keep their meaning).
//   preset=<id>             one of the worked examples in presets.json.
// Anything else after "#" is left alone (e.g. an in-page anchor).
//
// Reading a link: size cap -> split -> base64url -> UTF-8 (strict) -> JSON.parse -> migrate up
// to STATE_VERSION -> sanitize (plain JSON types only, finite numbers of sane size, bounded
// strings, arrays, depth and key counts, no "__proto__"/"constructor"/"prototype" keys) ->
// sections the page does not have are dropped with a note. Nothing is ever evaluated or put in
// the page as HTML: the sections' set() functions write into input values and textContent.

import { STATE_VERSION } from "./state.js";
import { fieldWords } from "./parse.js"; // inputs named in words in the notes about dropped values

/** Longest fragment accepted [characters]. */
export const MAX_LINK_CHARS = 16384;
/** Longest scenario JSON a compressed link may inflate to [bytes]. */
export const MAX_JSON_BYTES = MAX_LINK_CHARS * 4;
/** Bounds applied to every value in a state object read from outside. */
export const LIMITS = Object.freeze({
  depth: 8,
  arrayLength: 200,
  keys: 80,
  stringLength: 400,
  magnitude: 1e15,
});
const FORBIDDEN_KEYS = new Set(["__proto__", "constructor", "prototype"]);
const PAYLOAD = /^[A-Za-z0-9_-]*$/;

/**
 * Turn bytes into base64url text without padding.
 *
 * @param {Uint8Array} bytes  the bytes
 * @returns {string}  base64url text
 */
export function toBase64Url(bytes) {
  let binary = "";
  for (let i = 0; i < bytes.length; i += 0x8000) {
    binary += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  }
  return btoa(binary).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

/**
 * Base64url text (padding optional) to bytes; throws on characters outside the alphabet or
 * an impossible length (a truncated link).
 *
 * @param {string} text  base64url text
 * @returns {Uint8Array}  the bytes
 */
export function fromBase64Url(text) {
  if (!PAYLOAD.test(text)) throw new Error("it holds characters that a link of this kind never has");
  if (text.length % 4 === 1) throw new Error("it is cut short (its length is impossible)");
  const b64 = text.replace(/-/g, "+").replace(/_/g, "/") + "===".slice((text.length + 3) % 4);
  const binary = atob(b64);
  const bytes = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i += 1) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

/**
 * The fragment text (without "#") for a state object.
 *
 * @param {object} state  as from collectState(); its "v" is the version written
 * @returns {string}  e.g. "s=1.eyJ2IjoxLC..."
 */
export function encodeState(state) {
  const version = Number.isInteger(state?.v) ? state.v : STATE_VERSION;
  const json = JSON.stringify({ ...state, v: version });
  return `s=${version}.${toBase64Url(new TextEncoder().encode(json))}`;
}

/**
 * The word ids of the strong ions that format 1 keyed by formula (the core accepts both; the
 * page and its examples use the words from format 2 on).
 */
export const ION_WORDS = Object.freeze({
  "Na+": "sodium", "K+": "potassium", "Li+": "lithium", "Ca+2": "calcium", "Mg+2": "magnesium",
  "Sr+2": "strontium", "Ba+2": "barium", "Cl-": "chloride", "Br-": "bromide", "I-": "iodide",
  "NO3-": "nitrate", "SO4-2": "sulfate", "ClO4-": "perchlorate", "ClO3-": "chlorate", "BrO3-": "bromate",
});

/** Migrations: MIGRATIONS[n] turns a version-n state into a version-(n+1) state. */
const MIGRATIONS = {
  0: (old) => {
    const notes = [];
    const out = { v: 1 };
    const dist = {};
    if (typeof old.acid === "string") dist.acid = old.acid;
    if (typeof old.pka === "string") {
      const parts = old.pka.split(",").map((p) => Number(p.trim()));
      if (parts.length && parts.every((p) => Number.isFinite(p))) dist.pKa = parts;
      else notes.push(`the old link's pKa list "${old.pka}" is not a list of numbers`);
    }
    if (old.z !== undefined) dist.charge = old.z;
    if (old.c !== undefined) dist.total_M = old.c;
    if (old.ph !== undefined) dist.pH = old.ph;
    out.distribution = dist;
    notes.push("an older link (format 0) was brought up to date");
    return { state: out, notes };
  },
  1: (old) => {
    // Strong ions: formula ids -> word ids. Nothing else changed between formats 1 and 2.
    const out = { ...old, v: 2 };
    const ions = old?.water?.scenario?.ions;
    if (Array.isArray(ions)) {
      out.water = {
        ...old.water,
        scenario: {
          ...old.water.scenario,
          ions: ions.map((e) =>
            e && typeof e === "object" && typeof e.id === "string" && Object.hasOwn(ION_WORDS, e.id)
              ? { ...e, id: ION_WORDS[e.id] } : e),
        },
      };
    }
    return { state: out, notes: [] };
  },
};

/**
 * Bring a state object of any known version up to STATE_VERSION.
 *
 * @param {object} obj  a parsed state object (version in "v", or "version" for format 0)
 * @returns {{state: object, notes: string[]}}  the migrated state and what was changed
 * @throws {Error} when the version is missing, unknown or newer than this page reads
 */
export function migrate(obj) {
  let version = obj.v ?? obj.version;
  if (!Number.isInteger(version) || version < 0) {
    throw new Error(`its format version ${JSON.stringify(version)?.slice(0, 20) ?? "(none)"} is not a whole number`);
  }
  if (version > STATE_VERSION) {
    throw new Error(`it was made by a newer Acidscape (format ${version}); this copy reads formats up to ${STATE_VERSION}`);
  }
  let state = obj;
  const notes = [];
  while (version < STATE_VERSION) {
    const step = MIGRATIONS[version];
    if (!step) throw new Error(`format ${version} is not one this page knows`);
    const next = step(state);
    state = next.state;
    notes.push(...next.notes);
    version += 1;
  }
  return { state, notes };
}

function describe(value) {
  if (typeof value === "string") return `text of ${value.length} characters`;
  if (typeof value === "number") return String(value);
  return Array.isArray(value) ? "a list" : typeof value;
}

/**
 * Copy a JSON value keeping only what a state may hold; note everything dropped.
 *
 * @param {any} value  parsed JSON from outside
 * @param {string} path  where it sits, for the notes (e.g. "water.scenario.systems[0]")
 * @param {string[]} notes  receives one note per dropped value
 * @param {number} [depth]  current nesting depth
 * @returns {any}  the clean copy, or undefined when the value itself is dropped
 */
export function sanitize(value, path, notes, depth = 0) {
  if (value === null || typeof value === "boolean") return value;
  if (typeof value === "number") {
    if (!Number.isFinite(value) || Math.abs(value) > LIMITS.magnitude) {
      notes.push(`${fieldWords(path)}: the number ${String(value).slice(0, 24)} is too large`);
      return undefined;
    }
    return value;
  }
  if (typeof value === "string") {
    if (value.length > LIMITS.stringLength) {
      notes.push(`${fieldWords(path)}: text of ${value.length} characters is too long (at most ${LIMITS.stringLength})`);
      return undefined;
    }
    return value;
  }
  if (depth >= LIMITS.depth) {
    notes.push(`${fieldWords(path)}: nested too deeply`);
    return undefined;
  }
  if (Array.isArray(value)) {
    if (value.length > LIMITS.arrayLength) {
      notes.push(`${fieldWords(path)}: a list of ${value.length} items is too long (at most ${LIMITS.arrayLength})`);
      return undefined;
    }
    const out = [];
    for (const [i, item] of value.entries()) {
      const clean = sanitize(item, `${path}[${i}]`, notes, depth + 1);
      out.push(clean === undefined ? null : clean);
    }
    return out;
  }
  if (typeof value === "object") {
    const keys = Object.keys(value);
    if (keys.length > LIMITS.keys) {
      notes.push(`${fieldWords(path)}: ${keys.length} entries is too many (at most ${LIMITS.keys})`);
      return undefined;
    }
    const out = {};
    for (const key of keys) {
      if (FORBIDDEN_KEYS.has(key)) {
        notes.push(`${fieldWords(path)}: the entry named "${key}" is not allowed`);
        continue;
      }
      const clean = sanitize(value[key], path ? `${path}.${key}` : key, notes, depth + 1);
      if (clean !== undefined) out[key] = clean;
    }
    return out;
  }
  notes.push(`${fieldWords(path)}: ${describe(value)} is not allowed`);
  return undefined;
}

/**
 * Check a migrated state: plain object, known sections only, each section an object.
 *
 * @param {any} obj  a state object (already migrated)
 * @param {string[]} sections  the section names the page has registered
 * @returns {{state: object, notes: string[]}}  the usable part and what was ignored
 * @throws {Error} when the whole thing is not a state object
 */
export function validateState(obj, sections) {
  if (obj === null || typeof obj !== "object" || Array.isArray(obj)) {
    throw new Error(`it does not hold a scenario (found ${obj === null ? "null" : describe(obj)})`);
  }
  const notes = [];
  const state = { v: STATE_VERSION };
  for (const key of Object.keys(obj)) {
    if (key === "v") continue;
    if (FORBIDDEN_KEYS.has(key)) {
      notes.push(`the entry named "${key}" is not allowed`);
      continue;
    }
    if (!sections.includes(key)) {
      notes.push(`"${key.slice(0, 40)}" is not a part of this page, so it was ignored`);
      continue;
    }
    const section = obj[key];
    if (section === null || typeof section !== "object" || Array.isArray(section)) {
      notes.push(`${key}: expected a group of inputs, found ${section === null ? "null" : describe(section)}`);
      continue;
    }
    const clean = sanitize(section, key, notes, 1);
    if (clean !== undefined) state[key] = clean;
  }
  return { state, notes };
}

/**
 * Read a JSON text (a saved file, or a decoded link) into a state the page can apply.
 *
 * @param {string} json  the text
 * @param {string[]} sections  the registered section names
 * @returns {{state: object, notes: string[]}}
 * @throws {Error} with the reason when nothing usable is in it
 */
export function readStateJson(json, sections) {
  if (typeof json !== "string") throw new Error("it is not text");
  if (json.length > MAX_LINK_CHARS * 4) throw new Error(`it is too long (${json.length} characters)`);
  let parsed;
  try {
    parsed = JSON.parse(json);
  } catch {
    throw new Error("it is not valid JSON (it may be cut short or changed by hand)");
  }
  if (parsed === null || typeof parsed !== "object" || Array.isArray(parsed)) {
    throw new Error(`it does not hold a scenario (found ${parsed === null ? "null" : describe(parsed)})`);
  }
  const { state, notes } = migrate(parsed);
  const checked = validateState(state, sections);
  return { state: checked.state, notes: [...notes, ...checked.notes] };
}

/**
 * Read a URL fragment.
 *
 * @param {string} hash  location.hash (with or without the leading "#")
 * @param {string[]} sections  the registered section names
 * @returns {{kind: "none"} | {kind: "preset", id: string} | {kind: "state", state: object,
 *           notes: string[]} | {kind: "error", reason: string}}
 */
export function readFragment(hash, sections) {
  const text = String(hash || "").replace(/^#/, "");
  if (!text) return { kind: "none" };
  if (text.length > MAX_LINK_CHARS) {
    return { kind: "error", reason: `the link is too long (${text.length.toLocaleString("en")} characters; at most ${MAX_LINK_CHARS.toLocaleString("en")})` };
  }
  if (text.startsWith("preset=")) {
    const id = text.slice(7);
    if (!/^[a-z0-9-]{1,60}$/.test(id)) return { kind: "error", reason: "the example it names is not a valid name" };
    return { kind: "preset", id };
  }
  if (text.startsWith("z=") || text.startsWith("y=")) {
    return { kind: "error", reason: "it is a compressed link; this page reads those with readFragmentAsync" };
  }
  if (!text.startsWith("s=")) return { kind: "none" };
  return readPayload(text.slice(2), (payload) => fromBase64Url(payload), sections);
}

/**
 * The part of reading a link after its kind: version prefix, bytes, UTF-8, JSON, version marks,
 * migrate, validate.
 *
 * @param {string} body  "<version>.<payload>"
 * @param {(payload: string) => Uint8Array} bytesOf  the payload's bytes (throws with a reason)
 * @param {string[]} sections  the registered section names
 * @param {(parsed: any) => any} [expand]  undoes a key table (y= links)
 * @returns {{kind: "state", state: object, notes: string[]} | {kind: "error", reason: string}}
 */
function readPayload(body, bytesOf, sections, expand = (x) => x) {
  const dot = body.indexOf(".");
  if (dot < 1) return { kind: "error", reason: "it has no format version (expected s=<version>.<data>)" };
  const prefix = body.slice(0, dot);
  if (!/^\d{1,3}$/.test(prefix)) return { kind: "error", reason: "its format version is not a number" };
  try {
    const bytes = bytesOf(body.slice(dot + 1));
    let json;
    try {
      json = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
    } catch {
      throw new Error("it is damaged (not valid text after decoding; it may be cut short)");
    }
    let parsed;
    try {
      parsed = expand(JSON.parse(json));
    } catch {
      throw new Error("it is damaged (the scenario inside is incomplete; it may be cut short)");
    }
    if (parsed === null || typeof parsed !== "object" || Array.isArray(parsed)) {
      throw new Error(`it does not hold a scenario (found ${parsed === null ? "null" : describe(parsed)})`);
    }
    const inner = parsed.v ?? parsed.version;
    if (inner !== Number(prefix)) {
      throw new Error(`its two version marks disagree (${prefix} and ${JSON.stringify(inner)?.slice(0, 12)}); it was changed by hand`);
    }
    const { state, notes } = migrate(parsed);
    const checked = validateState(state, sections);
    return { kind: "state", state: checked.state, notes: [...notes, ...checked.notes] };
  } catch (error) {
    return { kind: "error", reason: String(error?.message || error) };
  }
}

/** Bytes through a (De)CompressionStream, stopping past `limit` bytes of output. */
async function pipeBytes(bytes, stream, limit = Infinity) {
  const out = new Blob([bytes]).stream().pipeThrough(stream);
  const reader = out.getReader();
  const chunks = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > limit) {
      await reader.cancel();
      throw new Error(`it holds more than ${limit.toLocaleString("en")} bytes of scenario`);
    }
    chunks.push(value);
  }
  const joined = new Uint8Array(total);
  let at = 0;
  for (const c of chunks) {
    joined.set(c, at);
    at += c.length;
  }
  return joined;
}

/**
 * Keys of the state shapes (state.js sections and the core's scenario), in a fixed order: the
 * index of each (base 36) stands for it in a y= link. Append only; never reorder or remove.
 */
export const KEY_TABLE_1 = Object.freeze([
  "v", "distribution", "water", "treatment", "scenario", "display", "titration", "dose", "buffer",
  "acid", "pKa", "charge", "total_M", "pH", "temperature_C", "activity", "measured", "alkalinity",
  "value", "unit", "systems", "ions", "id", "total", "custom", "name", "mass", "complexes",
  "precipitate", "gas", "CO2_partial_pressure_atm", "ionic_strength_M", "tds_mg_per_L",
  "conductance_uS_per_cm", "plot_system", "titrant", "titrant_M", "titrant_N", "sample_mL", "to_pH",
  "axis", "chemical", "product", "target_pH", "strength_pct", "density_kg_per_L", "flow", "flow_unit",
  "from_pH", "log_scale", "charge_most_protonated", "molar_mass_g_per_mol", "ccpp_temperatures_C",
  "uncertainty", "temperature_F", "target_LSI", "target_CCPP", "steps", "dose_mg_per_L",
  // appended: the scale and softening jobs' inputs and the job in view (workbench)
  "scale", "softening", "workbench", "job", "blend", "other", "fractions", "remove_magnesium", "softening_pH",
  "lime_mg_per_L", "soda_ash_mg_per_L", "target_hardness_mg_per_L_as_CaCO3", "excess_lime_meq_per_L", "recarbonation",
]);
const KEY_INDEX_1 = new Map(KEY_TABLE_1.map((k, i) => [k, i.toString(36)]));

/** Object keys through `rename`, recursively (array items keep their places). */
function renameKeys(value, rename) {
  if (Array.isArray(value)) return value.map((v) => renameKeys(v, rename));
  if (value === null || typeof value !== "object") return value;
  const out = {};
  for (const [k, v] of Object.entries(value)) {
    const key = rename(k);
    if (key === "__proto__") continue; // never set a prototype through a link
    out[key] = renameKeys(v, rename);
  }
  return out;
}

/** What a key of a y= link written short looks like: a base-36 index of KEY_TABLE_1. */
const TOKEN = /^[0-9a-z]{1,2}$/;

/** A state with its keys written short (KEY_TABLE_1), for a y= link. */
export function shortenKeys(state) {
  return renameKeys(state, (k) => KEY_INDEX_1.get(k) ?? (TOKEN.test(k) || k.startsWith("~") ? `~${k}` : k));
}

/** The inverse of shortenKeys. */
export function expandKeys(state) {
  return renameKeys(state, (k) => {
    if (k.startsWith("~")) return k.slice(1);
    if (TOKEN.test(k)) return KEY_TABLE_1[parseInt(k, 36)] ?? k;
    return k;
  });
}

/**
 * The short fragment text (without "#") for a state object: y=<version>.<base64url of raw
 * DEFLATE of the JSON with its keys shortened>. Falls back to encodeState (s=) where the
 * browser has no CompressionStream.
 *
 * @param {object} state  as from collectState()
 * @returns {Promise<string>}  e.g. "z=2.q1YqU7IyNNJRKs..."
 */
export async function encodeStateShort(state) {
  if (typeof CompressionStream !== "function") return encodeState(state);
  const version = Number.isInteger(state?.v) ? state.v : STATE_VERSION;
  const json = new TextEncoder().encode(JSON.stringify(shortenKeys({ ...state, v: version })));
  const packed = await pipeBytes(json, new CompressionStream("deflate-raw"));
  return `y=${version}.${toBase64Url(packed)}`;
}

/**
 * Read a URL fragment of any kind, the compressed one included (readFragment reads the rest).
 *
 * @param {string} hash  location.hash (with or without the leading "#")
 * @param {string[]} sections  the registered section names
 * @returns {Promise<ReturnType<typeof readFragment>>}
 */
export async function readFragmentAsync(hash, sections) {
  const text = String(hash || "").replace(/^#/, "");
  const tabled = text.startsWith("y=");
  if (!(tabled || text.startsWith("z=")) || text.length > MAX_LINK_CHARS) return readFragment(hash, sections);
  if (typeof DecompressionStream !== "function") {
    return { kind: "error", reason: "it is a compressed link, and this browser cannot decompress (it lacks DecompressionStream)" };
  }
  const body = text.slice(2);
  const dot = body.indexOf(".");
  let inflated = null;
  let failure = null;
  if (dot >= 1) {
    try {
      inflated = await pipeBytes(fromBase64Url(body.slice(dot + 1)), new DecompressionStream("deflate-raw"), MAX_JSON_BYTES);
    } catch (error) {
      failure = /bytes of scenario|characters|cut short/.test(String(error?.message))
        ? String(error.message) : "it is damaged (it could not be decompressed; it may be cut short)";
    }
  }
  if (failure) return { kind: "error", reason: failure };
  return readPayload(body, () => inflated, sections, tabled ? expandKeys : (x) => x);
}
