// The one pattern every section (and each block of a section) follows to turn inputs into a
// result on screen. No DOM here: the section's view does the drawing through the hooks.
//
//   const block = computation({
//     name: "water",
//     read()             -> {params, errors}    errors: input id -> message; params null = nothing to ask
//     call(params)       -> Promise<result>     the core request (py.call)
//     render(result, params)                   draw it; the result belongs to the inputs on screen
//     invalid(errors)                          inputs cannot be used: show the messages, mark the
//                                              result on screen as belonging to the last valid inputs
//     failed(error, params)                    the core refused: show its message (CoreError.field)
//     busy(flag)                               a request is on its way
//   });
//   block.schedule(delayMs)   debounced run (typing)
//   block.run()               run now -> "drawn" | "invalid" | "failed" | "idle" | "superseded"
//
// Latest only: while a request is with the core, newer ones wait; only the newest waiting one
// is sent when the core is free (the ones in between are dropped before they are computed),
// and an answer that is no longer the newest is never rendered.

const SUPERSEDED = Symbol("superseded");
/** Core error types that say the question has no answer, not that a value is unusable. */
const NOT_RESETTABLE = new Set(["UnreachableError", "ConvergenceError"]);

let pendingCount = 0;
const pendingListeners = new Set();

function changePending(delta) {
  pendingCount += delta;
  for (const listener of pendingListeners) listener(pendingCount);
}

/**
 * @param {(count: number) => void} listener  called with the number of scheduled or running
 *        computations of the page whenever it changes (0: every result on screen is settled)
 * @returns {() => void}  unsubscribe
 */
export function onPendingChange(listener) {
  pendingListeners.add(listener);
  listener(pendingCount);
  return () => pendingListeners.delete(listener);
}

/**
 * Count something the page is waiting for (a debounce, a request) in the pending total.
 *
 * @returns {() => void}  call once when it is over
 */
export function holdPending() {
  let held = true;
  changePending(1);
  return () => {
    if (held) changePending(-1);
    held = false;
  };
}

/**
 * A caller that sends one request at a time and keeps only the newest waiting one.
 *
 * @param {(params: any) => Promise<any>} send  the request
 * @returns {{request: (params: any) => Promise<any>, cancel: () => void}}  request resolves with
 *          the answer, or with SUPERSEDED when a newer request (or cancel) overtook it
 */
export function latestOnly(send) {
  let newest = 0;
  let running = false;
  let waiting = null; // {ticket, params, resolve, reject}

  function start(job) {
    running = true;
    const done = (settle) => {
      running = false;
      settle();
      if (waiting) {
        const next = waiting;
        waiting = null;
        start(next);
      }
    };
    let sent;
    try {
      sent = Promise.resolve(send(job.params));
    } catch (error) {
      sent = Promise.reject(error);
    }
    sent.then(
      (result) => done(() => job.resolve(job.ticket === newest ? result : SUPERSEDED)),
      (error) => done(() => (job.ticket === newest ? job.reject(error) : job.resolve(SUPERSEDED))),
    );
  }

  return {
    request(params) {
      const ticket = ++newest;
      return new Promise((resolve, reject) => {
        const job = { ticket, params, resolve, reject };
        if (waiting) waiting.resolve(SUPERSEDED); // dropped before it was computed
        waiting = null;
        if (running) waiting = job;
        else start(job);
      });
    },
    cancel() {
      newest += 1;
      if (waiting) waiting.resolve(SUPERSEDED);
      waiting = null;
    },
  };
}

/**
 * One block of the page that turns inputs into a drawn result (see the top of this file).
 *
 * @param {object} hooks
 * @param {() => {params: any, errors?: Record<string, string>}} hooks.read  the inputs
 * @param {(params: any) => Promise<any>} hooks.call  the core request
 * @param {(result: any, params: any) => void} hooks.render  draw a result
 * @param {(error: Error) => Record<string, string>} [hooks.explain]  a failed request's messages,
 *        keyed by input id ("block" for the block as a whole)
 * @param {(messages: Record<string, string>, kind: "invalid"|"failed") => void} [hooks.show]
 *        show messages instead of a result: "invalid" = inputs that cannot be read,
 *        "failed" = the core refused them
 * @param {(flag: boolean) => void} [hooks.busy]  a request is on its way
 * @returns {{run: () => Promise<string>, schedule: (delayMs?: number) => void, cancel: () => void,
 *            settle: (reset: (problems: Record<string, string>) => string[]) => Promise<string[]>}}
 */
export function computation(hooks) {
  const { read, call, render } = hooks;
  const explain = hooks.explain ?? ((error) => ({ block: String(error?.message || error) }));
  const show = hooks.show ?? (() => {});
  const busy = hooks.busy ?? (() => {});
  const caller = latestOnly((params) => call(params));
  let timer = null;
  let releaseTimer = null;
  let inFlight = 0;
  let problems = {};
  let resettable = false; // whether settle() may put the inputs of `problems` back to defaults

  async function run() {
    clearTimeout(timer);
    releaseTimer?.();
    releaseTimer = null;
    const { params, errors } = read();
    if (errors && Object.keys(errors).length) {
      caller.cancel(); // an answer for older inputs must not be drawn now
      problems = errors;
      resettable = true;
      show(errors, "invalid");
      return "invalid";
    }
    if (params === null || params === undefined) {
      caller.cancel();
      problems = {};
      return "idle";
    }
    const release = holdPending();
    inFlight += 1;
    busy(true);
    try {
      const result = await caller.request(params);
      if (result === SUPERSEDED) return "superseded";
      problems = {};
      render(result, params);
      return "drawn";
    } catch (error) {
      // A refusal of the core (CoreError) is the user's to fix; anything else is a bug of the
      // page: it is logged as an error (the e2e tests fail on it) and shown like a refusal.
      if (error?.name !== "CoreError") console.error(error);
      problems = explain(error);
      // A value out of range or of the wrong kind can be dropped; a question the chemistry
      // cannot answer (a dose that cannot reach its target) is the user's to change.
      resettable = !NOT_RESETTABLE.has(error?.type);
      show(problems, "failed");
      return "failed";
    } finally {
      inFlight -= 1;
      if (!inFlight) busy(false);
      release();
    }
  }

  /**
   * Compute; while the inputs cannot be used, let `reset` put a usable value (its default) in
   * each input named by a message and compute again. For opening a link, file or example.
   *
   * @param {(problems: Record<string, string>) => string[]} reset  puts the inputs named in
   *        `problems` (input id -> message) back to usable values and returns one note for each
   *        thing it dropped; [] when it cannot help
   * @returns {Promise<string[]>}  the notes
   */
  async function settle(reset) {
    const notes = [];
    for (let round = 0; round < 12; round += 1) {
      const outcome = await run();
      if ((outcome !== "invalid" && outcome !== "failed") || !resettable) break;
      const fixed = (reset({ ...problems }) || []).filter(Boolean);
      if (!fixed.length) break; // nothing more to drop: the messages stay beside the inputs
      notes.push(...fixed);
    }
    return notes;
  }

  return {
    run,
    settle,
    schedule(delayMs = 120) {
      clearTimeout(timer);
      if (!releaseTimer) releaseTimer = holdPending();
      timer = setTimeout(() => {
        run().catch((error) => console.error(error));
      }, delayMs);
    },
    cancel() {
      clearTimeout(timer);
      releaseTimer?.();
      releaseTimer = null;
      caller.cancel();
    },
  };
}
