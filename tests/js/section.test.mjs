// Unit tests of site/section.js: latest-only requests and the computation pattern (no DOM).
import { test } from "node:test";
import assert from "node:assert/strict";
import { computation, latestOnly, onPendingChange } from "../../site/section.js";

function deferred() {
  let resolve;
  let reject;
  const promise = new Promise((a, b) => { resolve = a; reject = b; });
  return { promise, resolve, reject };
}

test("requests in between are dropped before they are sent; only the newest answer counts", async () => {
  const sent = [];
  const answers = [];
  const caller = latestOnly((p) => {
    const d = deferred();
    sent.push({ p, d });
    return d.promise;
  });
  const r1 = caller.request(1);
  const r2 = caller.request(2);
  const r3 = caller.request(3);
  assert.deepEqual(sent.map((s) => s.p), [1]); // 2 and 3 wait; 2 is dropped when 3 arrives
  sent[0].d.resolve("one");
  const out1 = await r1;
  const out2 = await r2;
  assert.equal(typeof out1, "symbol"); // superseded: never rendered
  assert.equal(typeof out2, "symbol"); // dropped before it was computed
  assert.deepEqual(sent.map((s) => s.p), [1, 3]);
  sent[1].d.resolve("three");
  answers.push(await r3);
  assert.deepEqual(answers, ["three"]);
});

test("a computation renders only the newest result and counts what is pending", async () => {
  const counts = [];
  const stop = onPendingChange((n) => counts.push(n));
  const gates = [];
  const rendered = [];
  let value = 0;
  const block = computation({
    read: () => ({ params: value, errors: value < 0 ? { x: "negative" } : {} }),
    call: (p) => {
      const d = deferred();
      gates.push({ p, d });
      return d.promise;
    },
    render: (result) => rendered.push(result),
  });
  value = 1;
  const a = block.run();
  value = 2;
  const b = block.run();
  gates[0].d.resolve("r1");
  assert.equal(await a, "superseded");
  gates[1].d.resolve("r2");
  assert.equal(await b, "drawn");
  assert.deepEqual(rendered, ["r2"]);
  value = -1;
  assert.equal(await block.run(), "invalid");
  stop();
  assert.equal(counts.at(-1), 0);
  assert.ok(Math.max(...counts) >= 1);
});

test("settle resets what cannot be used until the inputs compute", async () => {
  const inputs = { t: "500", ph: "x" };
  const block = computation({
    read: () => {
      const errors = {};
      if (Number.isNaN(Number(inputs.ph))) errors.ph = "not a number";
      return { params: { ...inputs }, errors };
    },
    call: async (p) => {
      if (Number(p.t) > 100) {
        const e = new Error("t = 500 is above the allowed maximum 100");
        e.name = "CoreError";
        e.field = "t";
        throw e;
      }
      return "ok";
    },
    explain: (e) => ({ [e.field]: e.message }),
    render: () => {},
  });
  const notes = await block.settle((problems) => Object.keys(problems).map((id) => {
    inputs[id] = id === "t" ? "25" : "7";
    return `${id} reset`;
  }));
  assert.deepEqual(notes, ["ph reset", "t reset"]);
  assert.deepEqual(inputs, { t: "25", ph: "7" });
});

test("settle leaves a question the chemistry cannot answer to the user", async () => {
  let resets = 0;
  const block = computation({
    read: () => ({ params: { target: 8.5 }, errors: {} }),
    call: async () => {
      const e = new Error("NaOH acts as a base on this water; it cannot bring it to 8.5");
      e.name = "CoreError";
      e.type = "UnreachableError";
      e.field = "target";
      throw e;
    },
    explain: (e) => ({ [e.field]: e.message }),
    render: () => {},
  });
  const notes = await block.settle(() => {
    resets += 1;
    return ["reset"];
  });
  assert.deepEqual(notes, []);
  assert.equal(resets, 0);
});
