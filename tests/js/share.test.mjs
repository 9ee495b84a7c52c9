// Unit tests of site/share.js (no DOM): the link codec and the format migrations, with a saved
// format-1 scenario (formula ion ids) as the fixture of the 1 -> 2 step.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import {
  ION_WORDS, KEY_TABLE_1, MAX_JSON_BYTES, encodeState, encodeStateShort, expandKeys, migrate, readFragment, readFragmentAsync,
  readStateJson, shortenKeys, toBase64Url,
} from "../../site/share.js";
import { STATE_VERSION } from "../../site/state.js";

const fixture = (name) => JSON.parse(readFileSync(new URL(`./fixtures/${name}`, import.meta.url), "utf8"));
const SECTIONS = ["distribution", "water", "treatment"];

test("the page writes format 2", () => {
  assert.equal(STATE_VERSION, 2);
  assert.ok(encodeState({ v: STATE_VERSION, water: {} }).startsWith("s=2."));
});

test("a format-1 file migrates to word ion ids, everything else unchanged", () => {
  const { state, notes } = migrate(fixture("scenario-v1.json"));
  assert.deepEqual(state, fixture("scenario-v2.json"));
  assert.deepEqual(notes, []);
  // and through the file reader, with the sanitiser after it
  const read = readStateJson(JSON.stringify(fixture("scenario-v1.json")), SECTIONS);
  assert.deepEqual(read.state, fixture("scenario-v2.json"));
});

test("a format-1 link opens as format 2", () => {
  const v1 = fixture("scenario-v1.json");
  const link = `#s=1.${toBase64Url(new TextEncoder().encode(JSON.stringify(v1)))}`;
  const r = readFragment(link, SECTIONS);
  assert.equal(r.kind, "state");
  assert.deepEqual(r.state, fixture("scenario-v2.json"));
});

test("a format-0 link migrates through 1 to 2", () => {
  const old = { version: 0, acid: "custom", pka: "4.76", z: 0, c: 0.01, ph: 5 };
  const r = readFragment(`#s=0.${toBase64Url(new TextEncoder().encode(JSON.stringify(old)))}`, ["distribution"]);
  assert.equal(r.kind, "state");
  assert.deepEqual(r.state, { v: 2, distribution: { acid: "custom", pKa: [4.76], charge: 0, total_M: 0.01, pH: 5 } });
  assert.deepEqual(r.notes, ["an older link (format 0) was brought up to date"]);
});

test("every formula id has a word, and no word is a formula", () => {
  for (const [formula, word] of Object.entries(ION_WORDS)) {
    assert.match(formula, /[+-]\d*$/);
    assert.match(word, /^[a-z]+$/);
  }
});

test("a link from a newer page is refused with the reason", () => {
  const r = readFragment(`#s=3.${toBase64Url(new TextEncoder().encode('{"v":3}'))}`, SECTIONS);
  assert.equal(r.kind, "error");
  assert.match(r.reason, /newer Acidscape \(format 3\)/);
});

// -- the short (compressed) link: z=<version>.<base64url of raw DEFLATE>, RFC 1951 ------------

const PRESETS = JSON.parse(readFileSync(new URL("../../site/presets.json", import.meta.url), "utf8")).presets;

test("a short link round-trips every example and is much shorter than the plain one", async () => {
  for (const preset of PRESETS) {
    const state = readStateJson(JSON.stringify(preset.state), SECTIONS).state;
    const short = await encodeStateShort(state);
    const plain = encodeState(state);
    assert.ok(short.startsWith(`y=${STATE_VERSION}.`), short.slice(0, 10));
    assert.ok(short.length < 0.5 * plain.length, `${preset.id}: ${short.length} vs ${plain.length} characters`);
    const back = await readFragmentAsync(`#${short}`, SECTIONS);
    assert.equal(back.kind, "state");
    assert.deepEqual(back.state, state);
    assert.deepEqual(back.notes, []);
  }
});

test("keys written short come back, and a state's own keys that look like tokens survive", () => {
  const state = { v: 2, water: { scenario: { temperature_C: 7, "1b": 1, "~x": 2, zz: 3, newKey_mL: [{ id: "a" }] } } };
  const short = shortenKeys(state);
  assert.equal(short["0"], 2);
  assert.deepEqual(Object.keys(short["2"]["4"]).sort(), ["e", "newKey_mL", "~1b", "~zz", "~~x"].sort());
  assert.deepEqual(expandKeys(short), state);
  assert.deepEqual(expandKeys({ "__proto__x": 1, zz: 1 }), { "__proto__x": 1, zz: 1 }); // unknown index: left as is
});

test("a z= link (compressed, keys as they are) still opens", async () => {
  const state = readStateJson(JSON.stringify(PRESETS[0].state), SECTIONS).state;
  const json = new TextEncoder().encode(JSON.stringify(state));
  const packed = new Uint8Array(await new Response(new Blob([json]).stream()
    .pipeThrough(new CompressionStream("deflate-raw"))).arrayBuffer());
  const back = await readFragmentAsync(`#z=2.${toBase64Url(packed)}`, SECTIONS);
  assert.equal(back.kind, "state");
  assert.deepEqual(back.state, state);
});

test("plain s= links still open through the same reader", async () => {
  const state = readStateJson(JSON.stringify(PRESETS[0].state), SECTIONS).state;
  const back = await readFragmentAsync(`#${encodeState(state)}`, SECTIONS);
  assert.equal(back.kind, "state");
  assert.deepEqual(back.state, state);
});

test("a damaged, cut or oversized short link is refused with a reason", async () => {
  const state = readStateJson(JSON.stringify(PRESETS[0].state), SECTIONS).state;
  const short = await encodeStateShort(state);
  const cut = await readFragmentAsync(`#${short.slice(0, short.length - 12)}`, SECTIONS);
  assert.equal(cut.kind, "error");
  assert.match(cut.reason, /damaged|cut short/);
  const bad = await readFragmentAsync("#z=2.AAAA", SECTIONS);
  assert.equal(bad.kind, "error");
  const marks = await readFragmentAsync(`#y=1.${short.slice(4)}`, SECTIONS);
  assert.match(marks.reason, /version marks disagree/);
  // a few hundred characters that would inflate past MAX_JSON_BYTES: stopped, not expanded
  const bomb = new TextEncoder().encode(`{"v":2,"x":"${" ".repeat(MAX_JSON_BYTES * 2)}"}`);
  const packed = new Uint8Array(await new Response(new Blob([bomb]).stream()
    .pipeThrough(new CompressionStream("deflate-raw"))).arrayBuffer());
  assert.ok(packed.length < 2000);
  const boom = await readFragmentAsync(`#y=2.${toBase64Url(packed)}`, SECTIONS);
  assert.equal(boom.kind, "error");
  assert.match(boom.reason, /more than/);
});

// -- the key table only grows: y= links written before keys were appended keep their meaning --

// KEY_TABLE_1 as it was before the scale, softening and workbench keys were appended.
const KEY_TABLE_BEFORE_SCALE = [
  "v", "distribution", "water", "treatment", "scenario", "display", "titration", "dose", "buffer",
  "acid", "pKa", "charge", "total_M", "pH", "temperature_C", "activity", "measured", "alkalinity",
  "value", "unit", "systems", "ions", "id", "total", "custom", "name", "mass", "complexes",
  "precipitate", "gas", "CO2_partial_pressure_atm", "ionic_strength_M", "tds_mg_per_L",
  "conductance_uS_per_cm", "plot_system", "titrant", "titrant_M", "titrant_N", "sample_mL", "to_pH",
  "axis", "chemical", "product", "target_pH", "strength_pct", "density_kg_per_L", "flow", "flow_unit",
  "from_pH", "log_scale", "charge_most_protonated", "molar_mass_g_per_mol", "ccpp_temperatures_C",
  "uncertainty", "temperature_F", "target_LSI", "target_CCPP", "steps", "dose_mg_per_L",
];
// A y= link the page wrote before those keys were appended (the example "hard-well-scale" with
// lead and hardness inputs), and the state it holds.
const OLD_Y_LINK = "y=2.bZJBa8MwDIX_ynhn0cZO0na6ZocOCt19jODVbpPhxCFOy1jxfvtwU9oOchG29OlJPPuMBCwJEnxGFoMBC0nYg6HVqTYehEMsaPByJglVvNRgucgJX2A0h_nmSfmnQhXbFCEQLPj9jAaMnbK7-tiA0IJFkt07EGhEGnVojb9Bz7N8AvJO32UWE0DnBuXvKnImJqBdZV1fazMy6RTij3avhiuRyQmirYf-RojVI_ERCHm0554KhDRmFjGIBJzMEkkQMtqREEQKzggiA-Pk7LGJwj9grAuLQFhe-nIwiq0EQSzBS4JYgdujtQTxfDupuPFF9DPOT-d6fA2j9EUlznh5LUDY964BC8Lv4K6LuH6oXFc531VqMKV23pTNoexMX25K5cu3uPqKsK-_jS67dfwNq1G89M7W2oOhrAVh57rY9i8bCJXqdWu8f3BCjE7kyaOuSEL4Aw";
const OLD_Y_STATE = {
  ...PRESETS.find((p) => p.id === "hard-well-scale").state,
  lead: { axis: "DIC", from: 1, to: 100, orthophosphate_dose_mg_per_L_as_P: 0.8, fixed_pH: 7.8, lead_solids: "all", copper_solids: "all" },
  hardness: { sample_mL: 50, titrant_M: 0.01, fixed_pH: 10 },
};

test("the key table keeps every earlier key at its place", () => {
  assert.deepEqual(KEY_TABLE_1.slice(0, KEY_TABLE_BEFORE_SCALE.length), KEY_TABLE_BEFORE_SCALE);
  assert.equal(new Set(KEY_TABLE_1).size, KEY_TABLE_1.length); // no key twice
});

test("a y= link written before the scale and softening keys still opens to the same state", async () => {
  const all = ["distribution", "water", "treatment", "lead", "hardness", "scale", "softening", "workbench"];
  const back = await readFragmentAsync(`#${OLD_Y_LINK}`, all);
  assert.equal(back.kind, "state");
  assert.deepEqual(back.notes, []);
  assert.deepEqual(back.state, OLD_Y_STATE);
});

test("the scale, softening and workbench inputs round-trip through a y= link with short keys", async () => {
  const state = {
    v: 2, workbench: { job: "softening" },
    scale: {
      ccpp_temperatures_C: [5, 60], CO2_partial_pressure_atm: 0.00042,
      dose: { chemical: "NaOH", target_LSI: 0.3, flow: null, flow_unit: "m3/d" },
      steps: [{ chemical: "Ca(OH)2", target_pH: 9.5 }, { chemical: "CO2", dose_mg_per_L: "12 x" }],
      blend: { other: "hard-well-scale", fractions: [0.6, 0.4] },
    },
    softening: {
      remove_magnesium: false, softening_pH: 10.4, lime_mg_per_L: null, soda_ash_mg_per_L: 30,
      target_hardness_mg_per_L_as_CaCO3: null, excess_lime_meq_per_L: null, flow: null, flow_unit: "L/s",
      recarbonation: null,
    },
  };
  const short = await encodeStateShort(state);
  const back = await readFragmentAsync(`#${short}`, ["scale", "softening", "workbench"]);
  assert.deepEqual(back, { kind: "state", state, notes: [] });
  // the appended keys are written as table indices, not spelled out
  const keys = JSON.stringify(shortenKeys(state));
  for (const word of ["scale", "softening", "workbench", "remove_magnesium", "recarbonation", "fractions"]) {
    assert.ok(!keys.includes(`"${word}":`), word);
  }
});
