// Unit tests of site/state.js (no DOM): the registry's order of settling, and the section
// "workbench" that carries the job in view in links, files and reports.
import { test } from "node:test";
import assert from "node:assert/strict";
import { applyState, collectState, registerSection, sectionNames } from "../../site/state.js";
import { isJobShown, onJobShown, showJob, shownJob } from "../../site/workbench.js";

const log = [];
registerSection("water", { get: () => ({ t: 1 }), set: () => (log.push("set water"), []), settle: async () => (log.push("settle water"), []) });
registerSection("scale", { get: () => ({}), set: () => (log.push("set scale"), []), settle: async () => (log.push("settle scale"), []) });
onJobShown("scale", () => log.push(`shown scale (scale settled: ${log.includes("settle scale")})`));

test("the job in view is part of the state", () => {
  assert.ok(sectionNames().includes("workbench"));
  showJob("lead");
  assert.deepEqual(collectState().workbench, { job: "lead" });
  showJob("water");
});

test("an opened job is shown after every section has its inputs and the water has settled, before the jobs settle", async () => {
  log.length = 0;
  const notes = await applyState({ v: 2, workbench: { job: "scale" }, water: {}, scale: {} });
  assert.deepEqual(notes, []);
  assert.ok(isJobShown("scale"));
  assert.deepEqual(log, ["set water", "set scale", "settle water", "shown scale (scale settled: false)", "settle scale"]);
  showJob("water");
});

test("a job the page does not have is named and the job in view stays", async () => {
  for (const job of ["nope", 3, null, { x: 1 }]) {
    const notes = await applyState({ v: 2, workbench: { job } }, ["workbench"]);
    assert.equal(notes.length, 1, String(job));
    assert.match(notes[0], /is not one of this page's jobs; Water stays in view/);
    assert.equal(shownJob(), "water");
  }
  // a state without the section (an older link) leaves the job in view as it is
  showJob("hardness");
  assert.deepEqual(await applyState({ v: 2, water: {} }), []);
  assert.equal(shownJob(), "hardness");
  showJob("water");
});
