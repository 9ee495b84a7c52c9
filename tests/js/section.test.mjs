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

// -- scheduling: one request per frame, latest only, the same question not asked twice ------------

/** A page whose frames run when the test says so. */
function frames() {
  const queue = [];
  return {
    frame: (fn) => queue.push(fn),
    run: () => queue.splice(0).forEach((fn) => fn()),
    get size() {
      return queue.length;
    },
  };
}

const tick = () => new Promise((resolve) => setTimeout(resolve, 0));

test("edits made before a frame are computed in one request at that frame (no fixed delay)", async () => {
  const page = frames();
  const sent = [];
  let value = "1";
  const drawn = [];
  const block = computation({
    read: () => ({ params: { total: value }, errors: {} }),
    call: async (p) => {
      sent.push(p.total);
      return `for ${p.total}`;
    },
    render: (result) => drawn.push(result),
    frame: page.frame,
  });
  for (const key of "1234567890") {
    value += key;
    block.schedule();
  }
  assert.equal(page.size, 1); // one frame asked for, whatever the number of edits
  assert.deepEqual(sent, []); // nothing before the frame
  page.run();
  await tick();
  assert.deepEqual(sent, ["11234567890"]);
  assert.deepEqual(drawn, ["for 11234567890"]);
});

test("a burst of 10 keystrokes while a request is with the core computes 2 requests, the last input's drawn", async () => {
  const page = frames();
  const gates = [];
  const drawn = [];
  let value = "2";
  const block = computation({
    read: () => ({ params: { total: value }, errors: {} }),
    call: (p) => {
      const d = deferred();
      gates.push({ total: p.total, d });
      return d.promise;
    },
    render: (result, params) => drawn.push([result, params.total]),
    frame: page.frame,
  });
  value = "2.";
  block.schedule();
  page.run(); // the first keystroke goes to the core
  assert.equal(gates.length, 1);
  for (const key of "051234567") {
    value += key; // the rest of the burst, each in a frame of its own
    block.schedule();
    page.run();
  }
  assert.equal(gates.length, 1); // they wait; each newer one drops the one before
  gates[0].d.resolve("first");
  await tick();
  assert.equal(gates.length, 2);
  assert.equal(gates[1].total, "2.051234567"); // the last input, nothing in between
  gates[1].d.resolve("last");
  await tick();
  assert.deepEqual(drawn, [["last", "2.051234567"]]); // the first answer was never drawn
});

test("a stream's first part is drawn at once, its later parts only while it is the newest", async () => {
  const page = frames();
  const streams = [];
  const drawn = [];
  let value = 1;
  const block = computation({
    read: () => ({ params: { v: value }, errors: {} }),
    stream: (p, onPart) => {
      const d = deferred();
      streams.push({ v: p.v, onPart, d });
      return d.promise;
    },
    render: (part, p) => drawn.push(`headline ${part} (${p.v})`),
    more: (part, p) => drawn.push(`curves ${part} (${p.v})`),
    frame: page.frame,
  });
  const first = block.run();
  streams[0].onPart("A");
  await tick();
  assert.deepEqual(drawn, ["headline A (1)"]);
  streams[0].onPart("A-curves");
  streams[0].d.resolve("done");
  assert.equal(await first, "drawn"); // the run is over when its last part is drawn
  assert.deepEqual(drawn, ["headline A (1)", "curves A-curves (1)"]);

  // A newer edit after the headline: the core is free for it at once, and the older curves are
  // not drawn when they come (the worker stops computing them).
  value = 2;
  const second = block.run();
  streams[1].onPart("B");
  await tick();
  value = 3;
  const third = block.run();
  await tick();
  assert.equal(streams.length, 3); // sent without waiting for B's curves
  streams[1].onPart("B-curves");
  streams[1].d.resolve("dropped");
  assert.equal(await second, "superseded");
  streams[2].onPart("C");
  streams[2].onPart("C-curves");
  streams[2].d.resolve("done");
  assert.equal(await third, "drawn");
  assert.deepEqual(drawn.slice(2), ["headline B (2)", "headline C (3)", "curves C-curves (3)"]);
});

test("the pending count holds until a stream's last part is in", async () => {
  const counts = [];
  const stop = onPendingChange((n) => counts.push(n));
  let onPart;
  const last = deferred();
  const block = computation({
    read: () => ({ params: { v: 1 }, errors: {} }),
    stream: (p, part) => {
      onPart = part;
      return last.promise;
    },
    render: () => {},
    more: () => {},
  });
  const outcome = block.run();
  onPart("headline");
  await tick();
  assert.ok(counts.at(-1) > 0); // the curves are still to come
  onPart("curves");
  last.resolve("done");
  assert.equal(await outcome, "drawn");
  stop();
  assert.equal(counts.at(-1), 0);
});

test("the same inputs are not asked twice; after a message they are", async () => {
  const sent = [];
  let value = "7";
  const block = computation({
    read: () => ({ params: { pH: value }, errors: Number.isNaN(Number(value)) ? { ph: "not a number" } : {} }),
    call: async (p) => {
      sent.push(p.pH);
      return p.pH;
    },
    render: () => {},
  });
  const [a, b] = await Promise.all([block.run(), block.run()]); // e.g. a solve of the water, then a link's settle
  assert.deepEqual([a, b], ["drawn", "drawn"]);
  assert.equal(await block.run(), "drawn");
  assert.deepEqual(sent, ["7"]);
  value = "x";
  assert.equal(await block.run(), "invalid"); // the result on screen is marked stale now
  value = "7";
  assert.equal(await block.run(), "drawn");
  assert.deepEqual(sent, ["7", "7"]); // drawn again, so it is current again
  block.cancel();
  await block.run();
  assert.deepEqual(sent, ["7", "7", "7"]);
});

test("an edit that reads the same as the result on screen is drawn anew (only runs share answers)", async () => {
  const sent = [];
  const block = computation({
    read: () => ({ params: { T: 12 }, errors: {} }), // e.g. "12" typed again as "53,6 °F"
    call: async (p) => {
      sent.push(p.T);
      return p.T;
    },
    render: () => {},
  });
  await block.run();
  block.schedule();
  await tick();
  assert.deepEqual(sent, [12, 12]);
  await block.run();
  assert.deepEqual(sent, [12, 12]);
});

test("a block nobody can see asks nothing until it is shown", async () => {
  const sent = [];
  let shown = false;
  const block = computation({
    read: () => ({ params: { v: 1 }, errors: {} }),
    call: async (p) => {
      sent.push(p.v);
      return p.v;
    },
    render: () => {},
    active: () => shown,
  });
  assert.equal(await block.run(), "deferred");
  assert.equal(await block.run(), "deferred");
  assert.deepEqual(sent, []);
  assert.equal(await block.resume(), "deferred");
  shown = true;
  assert.equal(await block.resume(), "drawn");
  assert.equal(await block.resume(), "idle"); // nothing was put off since
  assert.deepEqual(sent, [1]);
});

test("by default an edit is computed once the event that made it is handled, in one request", async () => {
  const sent = [];
  let value = "";
  const block = computation({
    read: () => ({ params: { total: value }, errors: {} }),
    call: async (p) => {
      sent.push(p.total);
      return p.total;
    },
    render: () => {},
  });
  for (const key of "2.05") {
    value += key; // e.g. a paste, or a link applied: several changes in one event
    block.schedule();
  }
  assert.deepEqual(sent, []); // not inside the event
  await Promise.resolve();
  assert.deepEqual(sent, ["2.05"]); // at once after it, no timer
});
