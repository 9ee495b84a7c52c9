// Unit tests of site/job.js followWater (no DOM): a job follows the water above, as the lead and
// hardness jobs use it. Fakes stand for the water handle (main.js), the job's view and the core;
// what is checked is the wiring the module's doc describes (no chemistry).
import { test } from "node:test";
import assert from "node:assert/strict";
import { followWater, staleWaterNote } from "../../site/job.js";
import { showJob } from "../../site/workbench.js";

function fakeWater(scenario = null) {
  const solved = new Set();
  const stale = new Set();
  return {
    scenario: () => scenario,
    onSolved(cb) { solved.add(cb); return () => solved.delete(cb); },
    onStale(cb) { stale.add(cb); return () => stale.delete(cb); },
    solve(s, r) { for (const cb of solved) cb(s, r); },
    goStale(note, r) { for (const cb of stale) cb(note, r); },
  };
}

function fakeJob(water, py, job = "lead") {
  const lines = [];
  const runs = [];
  const marks = [];
  const view = { setWater: (text, isStale = false) => lines.push([text, isStale]) };
  const describe = (result) => (result ? `water at pH ${result.pH}` : "no water yet");
  const current = followWater({ py, water, view, job, what: "curves", describe,
    run: () => runs.push({ ...current }), stale: (note) => marks.push(note) });
  return { current, lines, runs, marks };
}

const tick = () => new Promise((resolve) => setTimeout(resolve, 0));

test("a job follows each solve and each stale mark of the water above", async () => {
  showJob("water"); // the job is hidden: it asks the core nothing on its own
  const calls = [];
  const py = { call: (...args) => { calls.push(args); return Promise.resolve({ pH: 0 }); } };
  const water = fakeWater(null);
  const job = fakeJob(water, py);
  assert.deepEqual(job.lines, [["no water yet", false]]);
  const a = { systems: [] };
  water.solve(a, { pH: 7.2 });
  assert.equal(job.current.scenario, a);
  assert.deepEqual(job.current.result, { pH: 7.2 });
  assert.equal(job.current.note, "");
  assert.deepEqual(job.lines.at(-1), ["water at pH 7.2", false]);
  assert.equal(job.runs.length, 1);
  assert.equal(job.runs[0].scenario, a, "the job computes on the water just solved");
  // an input that cannot be used: the line says so, what is drawn is marked, nothing computed
  water.goStale("the pH is not a number", { pH: 7.2 });
  const note = staleWaterNote({ pH: 7.2 }, "curves");
  assert.equal(job.current.note, note);
  assert.deepEqual(job.lines.at(-1), [note, true]);
  assert.deepEqual(job.marks, [note]);
  assert.equal(job.runs.length, 1);
  // the next solve clears the note
  water.solve(a, { pH: 7.4 });
  assert.equal(job.current.note, "");
  assert.equal(job.runs.length, 2);
  await tick();
  assert.deepEqual(calls, [], "no water at mount and the job hidden: the core is not asked");
});

test("the water already on the page is asked for once, when the job is shown, unless a solve came", async () => {
  showJob("water");
  const calls = [];
  let answer;
  const py = { call: (...args) => { calls.push(args); return new Promise((resolve) => { answer = resolve; }); } };
  const first = { systems: [{ id: "carbonate" }] };
  const water = fakeWater(first);
  const job = fakeJob(water, py, "hardness");
  assert.equal(job.current.scenario, first);
  await tick();
  assert.deepEqual(calls, [], "hidden: nothing asked");
  showJob("hardness");
  assert.deepEqual(calls, [["solve", first]]);
  answer({ pH: 8.1 });
  await tick();
  assert.deepEqual(job.current.result, { pH: 8.1 });
  assert.deepEqual(job.lines.at(-1), ["water at pH 8.1", false]);
  assert.equal(job.runs.length, 1);
  showJob("water");
  showJob("hardness");
  assert.equal(calls.length, 1, "asked once");

  // a solve that arrives before the answer wins
  showJob("lead");
  const calls2 = [];
  let answer2;
  const py2 = { call: (...args) => { calls2.push(args); return new Promise((resolve) => { answer2 = resolve; }); } };
  const water2 = fakeWater(first);
  const job2 = fakeJob(water2, py2, "lead");
  await tick();
  assert.deepEqual(calls2, [["solve", first]], "shown at mount: asked at once");
  const later = { systems: [] };
  water2.solve(later, { pH: 6.5 });
  answer2({ pH: 9.9 });
  await tick();
  assert.equal(job2.current.scenario, later);
  assert.deepEqual(job2.current.result, { pH: 6.5 });
  assert.equal(job2.runs.length, 1);
});
