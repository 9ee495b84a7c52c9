// Unit tests of site/share.js (no DOM): the link codec and the format migrations, with a saved
// format-1 scenario (formula ion ids) as the fixture of the 1 -> 2 step.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import {
  ION_WORDS, MAX_JSON_BYTES, encodeState, encodeStateShort, expandKeys, migrate, readFragment, readFragmentAsync,
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
