// Unit tests of site/workbench.js (no DOM): one job shown at a time, listeners told in order.
import { test } from "node:test";
import assert from "node:assert/strict";
import {
  FIRST_JOB, JOB_NAMES, isJob, isJobShown, onJobChange, onJobShown, showJob, shownJob,
} from "../../site/workbench.js";

test("the jobs of the workbench, the water first", () => {
  assert.deepEqual(JOB_NAMES, ["water", "treat", "titrate", "scale", "softening", "lead", "hardness", "batch", "explorer"]);
  assert.equal(FIRST_JOB, "water");
  assert.equal(shownJob(), "water");
  assert.ok(isJob("explorer") && !isJob("distribution"));
});

test("one job at a time; the view hears of a change before the job's own listeners", () => {
  const heard = [];
  const offChange = onJobChange((name, previous) => heard.push(`view ${previous}->${name} shown=${isJobShown(name)}`));
  const offTreat = onJobShown("treat", (name) => heard.push(`job ${name}`));
  assert.equal(showJob("treat"), true);
  assert.equal(showJob("treat"), false, "showing the shown job changes nothing");
  assert.ok(isJobShown("treat") && !isJobShown("water"));
  assert.deepEqual(JOB_NAMES.filter(isJobShown), ["treat"]);
  offTreat();
  showJob("water");
  showJob("treat");
  offChange();
  showJob("water");
  assert.deepEqual(heard, ["view water->treat shown=true", "job treat", "view treat->water shown=true", "view water->treat shown=true"]);
});

test("a failing listener does not silence the others; unknown names are refused", () => {
  const heard = [];
  const errors = [];
  const original = console.error;
  console.error = (...args) => errors.push(args.join(" "));
  try {
    const a = onJobShown("lead", () => { throw new Error("boom"); });
    const b = onJobShown("lead", () => heard.push("second"));
    showJob("lead");
    a(); b();
  } finally {
    console.error = original;
  }
  assert.deepEqual(heard, ["second"]);
  assert.equal(errors.length, 1);
  assert.throws(() => showJob("nope"), /no job named "nope"/);
  assert.throws(() => isJobShown("Water"), /no job named/);
  assert.throws(() => onJobShown("", () => {}), /no job named/);
  showJob("water");
});
