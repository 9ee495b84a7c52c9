// The one pattern every section (and each block of a section) follows to turn inputs into a
// result on screen. No DOM here: the section's view does the drawing through the hooks.
//
//   const block = computation({
//     read()             -> {params, errors}    errors: input id -> message; params null = nothing to ask
//     call(params)       -> Promise<result>     the core request (py.call)
//       or stream(params, onPart) -> Promise    a request answered in parts (py.stream): the first
//                                              part is drawn by render(), each later one by more()
//     render(result, params)                   draw it; the result belongs to the inputs on screen
//     more(part, params)                       draw a later part (stream only): curves after the headline
//     invalid(errors)                          inputs cannot be used: show the messages, mark the
//                                              result on screen as belonging to the last valid inputs
//     failed(error, params)                    the core refused: show its message (CoreError.field)
//     busy(flag)                               a request is on its way
//     active()           -> boolean            false while nobody can see the block (a hidden job):
//                                              it reads and checks its inputs but asks the core
//                                              nothing; resume() computes what was put off
//   });
//   block.schedule()          run as soon as the event being handled is over (typing; a
//                             microtask): the changes made in it share one request, and no
//                             fixed delay is added; while the core is busy, latest only (below)
//   block.run()               run now -> "drawn" | "invalid" | "failed" | "idle" | "superseded" | "deferred"
//
// Latest only: while a request is with the core, newer ones wait; only the newest waiting one
// is sent when the core is free (the ones in between are dropped before they are computed),
// and an answer that is no longer the newest is never rendered. A stream frees the core for the
// next request as soon as its first part is in; its later parts are drawn only while it is the
// newest (the worker stops computing them when a newer request arrives). The same inputs are
// not asked twice: a run (not an edit) whose inputs equal the ones on screen (or on their way)
// draws nothing new.

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
 * @param {(params: any, isNewest: () => boolean) => Promise<any>} send  the request;
 *        isNewest() tells whether it is still the newest (no newer request or cancel since)
 * @returns {{request: (params: any) => Promise<any>, cancel: () => void}}  request resolves with
 *          the answer, or with SUPERSEDED when a newer request (or cancel) overtook it
 */
/**
 * As soon as the event being handled is over (a microtask): the changes it makes share one
 * run, and the request leaves at once, so its answer can be drawn in the next frame.
 *
 * @param {() => void} fn
 */
export function soon(fn) {
  queueMicrotask(fn);
}

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
      sent = Promise.resolve(send(job.params, () => job.ticket === newest));
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
 * @param {(params: any) => Promise<any>} [hooks.call]  the core request
 * @param {(params: any, onPart: (part: any) => void) => Promise<any>} [hooks.stream]  the core
 *        request answered in parts (instead of call): settles after the last part
 * @param {(result: any, params: any) => void} hooks.render  draw a result (a stream's first part)
 * @param {(part: any, params: any) => void} [hooks.more]  draw a stream's later part
 * @param {(error: Error) => Record<string, string>} [hooks.explain]  a failed request's messages,
 *        keyed by input id ("block" for the block as a whole)
 * @param {(messages: Record<string, string>, kind: "invalid"|"failed") => void} [hooks.show]
 *        show messages instead of a result: "invalid" = inputs that cannot be read,
 *        "failed" = the core refused them
 * @param {(flag: boolean) => void} [hooks.busy]  a request is on its way
 * @param {() => boolean} [hooks.active]  false while the block need not compute (hidden)
 * @param {(fn: () => void) => void} [hooks.frame]  when schedule() runs (default soon())
 * @returns {{run: () => Promise<string>, schedule: () => void, cancel: () => void,
 *            resume: () => Promise<string>,
 *            settle: (reset: (problems: Record<string, string>) => string[], options?: {force?: boolean}) => Promise<string[]>}}
 */
export function computation(hooks) {
  const { read, render } = hooks;
  const explain = hooks.explain ?? ((error) => ({ block: String(error?.message || error) }));
  const show = hooks.show ?? (() => {});
  const busy = hooks.busy ?? (() => {});
  const active = hooks.active ?? (() => true);
  const frame = hooks.frame ?? soon;
  const more = hooks.more ?? (() => {});
  const caller = latestOnly((params, isNewest) => (hooks.stream ? streamed(params, isNewest) : hooks.call(params)));
  let scheduled = false;
  let releaseScheduled = null;
  let inFlight = 0;
  let problems = {};
  let resettable = false; // whether settle() may put the inputs of `problems` back to defaults
  let deferred = false; // a run was put off while the block was inactive
  // The inputs of the result on screen (JSON) and of the newest run on its way, so the same
  // question is not asked twice (e.g. a section computed by a solve of the water it follows and
  // again when a link is settled).
  let drawnKey = null;
  let asked = null; // {key, outcome: Promise<string>}

  /**
   * A stream: resolves with {first, later} at the first part; the later parts are drawn by
   * more() once the first is drawn (ask() calls later.drawn()), and only while it is the newest.
   * later.finished resolves when the stream is over: "drawn" (every part drawn) or "superseded".
   */
  function streamed(params, isNewest) {
    const release = holdPending(); // until the last part is in (or the rest is dropped)
    const waiting = [];
    let finish;
    const later = {
      ready: false,
      finished: new Promise((resolve) => {
        finish = resolve;
      }),
      drawn() {
        later.ready = true;
        for (const part of waiting.splice(0)) if (isNewest()) more(part, params);
      },
    };
    return new Promise((resolve, reject) => {
      let first = true;
      const onPart = (part) => {
        if (first) {
          first = false;
          resolve({ first: part, later });
        } else if (!isNewest()) {
          // a newer request took over: this part belongs to inputs no longer on screen
        } else if (later.ready) {
          more(part, params);
        } else {
          waiting.push(part);
        }
      };
      Promise.resolve(hooks.stream(params, onPart)).then(
        (end) => {
          release();
          if (first) reject(new Error("the core sent no answer"));
          // after the waiting parts are drawn (later.drawn() runs before this in ask())
          Promise.resolve().then(() => finish(end !== "dropped" && isNewest() ? "drawn" : "superseded"));
        },
        (error) => {
          release();
          if (first) reject(error);
          else if (isNewest()) console.error("a later part of the answer failed:", error);
          finish("superseded");
        },
      );
    });
  }

  function forget() {
    drawnKey = null;
    asked = null;
  }

  /**
   * @param {boolean} force  compute even while inactive
   * @param {boolean} edited  an edit asks (schedule): drawn anew even when the inputs read the
   *        same as the result on screen (e.g. "12" typed again as "53,6 °F")
   */
  async function run(force = false, edited = false) {
    scheduled = false;
    releaseScheduled?.();
    releaseScheduled = null;
    const { params, errors } = read();
    if (errors && Object.keys(errors).length) {
      caller.cancel(); // an answer for older inputs must not be drawn now
      forget();
      problems = errors;
      resettable = true;
      show(errors, "invalid");
      return "invalid";
    }
    if (params === null || params === undefined) {
      caller.cancel();
      forget();
      problems = {};
      return "idle";
    }
    if (!force && !active()) {
      deferred = true; // computed when shown (resume)
      return "deferred";
    }
    deferred = false;
    const key = JSON.stringify(params);
    if (asked && asked.key === key) return asked.outcome; // the same question is on its way
    if (!asked && !edited && drawnKey === key) return "drawn"; // and already answered on screen
    const outcome = ask(params);
    asked = { key, outcome };
    outcome.finally(() => {
      if (asked?.outcome === outcome) asked = null;
    });
    return outcome;
  }

  async function ask(params) {
    const release = holdPending();
    const key = JSON.stringify(params);
    inFlight += 1;
    busy(true);
    try {
      const answer = await caller.request(params);
      if (answer === SUPERSEDED) return "superseded";
      problems = {};
      render(hooks.stream ? answer.first : answer, params);
      drawnKey = key;
      if (!hooks.stream) return "drawn";
      // A stream's run is over when its last part is drawn (a newer edit need not wait for
      // that: the core took it as soon as the first part was in).
      answer.later.drawn();
      return await answer.later.finished;
    } catch (error) {
      // A refusal of the core (CoreError) is the user's to fix; anything else is a bug of the
      // page: it is logged as an error (the e2e tests fail on it) and shown like a refusal.
      if (error?.name !== "CoreError") console.error(error);
      drawnKey = null;
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
   * @param {{force?: boolean}} [options]  force: compute even while inactive (a link or file
   *        gave this block's inputs: the core must see them now to name what it drops)
   * @returns {Promise<string[]>}  the notes
   */
  async function settle(reset, { force = false } = {}) {
    const notes = [];
    for (let round = 0; round < 12; round += 1) {
      const outcome = await run(force);
      if ((outcome !== "invalid" && outcome !== "failed") || !resettable) break;
      const fixed = (reset({ ...problems }) || []).filter(Boolean);
      if (!fixed.length) break; // nothing more to drop: the messages stay beside the inputs
      notes.push(...fixed);
    }
    return notes;
  }

  return {
    run: () => run(),
    settle,
    /** Run once the event being handled is over; the changes it made share one request. */
    schedule() {
      if (!releaseScheduled) releaseScheduled = holdPending();
      if (scheduled) return;
      scheduled = true;
      frame(() => {
        if (!scheduled) return; // run() or cancel() came first
        run(false, true).catch((error) => console.error(error));
      });
    },
    /** Compute what was put off while the block was inactive (call when it is shown). */
    resume() {
      return deferred ? run() : Promise.resolve("idle");
    },
    cancel() {
      scheduled = false;
      releaseScheduled?.();
      releaseScheduled = null;
      forget();
      caller.cancel();
    },
  };
}
