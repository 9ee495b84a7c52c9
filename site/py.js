// The page's side of the worker protocol: starts worker.js and turns its messages into Promises.
//
// Every message carries v: PROTOCOL_VERSION (below; worker.js imports it from here, so the
// number is written in this one place):
//   page -> worker   {v, id, method, params}            one answer:
//   worker -> page   {v, id, ok: true, result} | {v, id, ok: false, error: {type, message, field}}
//   page -> worker   {v, id, method, params, parts: true}  an answer in parts (stream() below):
//   worker -> page   {v, id, ok: true, part: n, result} for each part (n = 0, 1, ...), then
//                    {v, id, ok: true, done: true} | {v, id, ok: true, dropped: true} (a newer
//                    request for the same method arrived, so the rest was not computed) |
//                    {v, id, ok: false, error} (no part follows an error)
//   worker -> page   {v, type: "progress", stage, fraction, text} while booting,
//                    then exactly one {v, type: "ready", versions, boot} or {v, type: "fatal", message}
//                    (boot: {snapshot: whether Python started from the build's memory snapshot,
//                    origin: the worker's performance.timeOrigin, ms: {step: ms since then}})

export const PROTOCOL_VERSION = 2;

/**
 * Requests sent to the worker since the page loaded, in total and per method: what tests count
 * (one request per edit of the water). Also on window.__acidscapeCalls in the page.
 */
export const callCount = { total: 0, byMethod: {} };
if (typeof window !== "undefined") window.__acidscapeCalls = callCount;

function counted(method) {
  callCount.total += 1;
  callCount.byMethod[method] = (callCount.byMethod[method] || 0) + 1;
}

/** An error reported by the Python core (or the worker), with the input field it concerns. */
export class CoreError extends Error {
  /**
   * @param {{type?: string, message?: string, field?: string|null}} error  the worker's error object
   */
  constructor(error) {
    super(error?.message || "unknown error");
    this.name = "CoreError";
    this.type = error?.type || "Error";
    this.field = error?.field ?? null;
  }
}

/**
 * Start Python in a module worker.
 *
 * @param {object} options
 * @param {(p: {stage: string, fraction: number, text: string}) => void} [options.onProgress]
 *        called for each boot step
 * @param {number} [options.bootTimeoutMs]  give up if "ready" has not come by then [ms]
 * @returns {{ready: Promise<object>, boot: Promise<object>,
 *            call: (method: string, params?: object) => Promise<any>,
 *            stream: (method: string, params: object, onPart: Function) => Promise<string>, terminate: () => void}}
 *          `ready` resolves with the versions Python reports, `boot` with how it started
 */
export function startPython({ onProgress = () => {}, bootTimeoutMs = 120000 } = {}) {
  performance.mark("py:worker-start");
  const worker = new Worker(new URL("./worker.js", import.meta.url), { type: "module" });
  const pending = new Map();
  let nextId = 1;
  let settleBoot;
  let settleInfo;
  const ready = new Promise((resolve, reject) => {
    settleBoot = { resolve, reject };
  });
  const boot = new Promise((resolve) => {
    settleInfo = resolve;
  });
  const fail = (message) => {
    settleBoot.reject(new Error(message));
    for (const { reject } of pending.values()) reject(new CoreError({ type: "BootError", message }));
    pending.clear();
  };
  const timer = setTimeout(
    () => fail(`Python did not start within ${Math.round(bootTimeoutMs / 1000)} s.`),
    bootTimeoutMs,
  );

  worker.addEventListener("error", (event) => {
    clearTimeout(timer);
    fail(`The calculation worker could not start${event.message ? `: ${event.message}` : "."}`);
  });
  worker.addEventListener("message", (event) => {
    const msg = event.data;
    if (!msg || msg.v !== PROTOCOL_VERSION) {
      fail(`The worker speaks another protocol version (${msg?.v}); reload the page.`);
      return;
    }
    if (msg.type === "progress") {
      onProgress(msg);
    } else if (msg.type === "ready") {
      clearTimeout(timer);
      settleBoot.resolve(msg.versions || {});
      settleInfo(msg.boot || {});
    } else if (msg.type === "fatal") {
      clearTimeout(timer);
      fail(msg.message);
    } else if (pending.has(msg.id)) {
      const { resolve, reject, onPart } = pending.get(msg.id);
      if (onPart && msg.ok && Number.isInteger(msg.part)) {
        onPart(msg.result, msg.part);
        return;
      }
      pending.delete(msg.id);
      if (!msg.ok) reject(new CoreError(msg.error));
      else if (onPart) resolve(msg.dropped ? "dropped" : "done");
      else resolve(msg.result);
    }
  });

  /**
   * Call one method of acidscape.boundary.dispatch.handle in the worker.
   *
   * @param {string} method  e.g. "distribution", "systems", "version"
   * @param {object} [params]  plain JSON-able object
   * @returns {Promise<any>}  the result; rejects with a CoreError
   */
  function call(method, params = {}) {
    const id = nextId++;
    const start = performance.now();
    const measured = (settle) => (value) => {
      // One entry per call (performance.getEntriesByName("py:<method>")), for benchmarks.
      performance.measure(`py:${method}`, { start });
      settle(value);
    };
    counted(method);
    return new Promise((resolve, reject) => {
      pending.set(id, { resolve: measured(resolve), reject: measured(reject) });
      worker.postMessage({ v: PROTOCOL_VERSION, id, method, params });
    });
  }

  /**
   * Call a method that answers in parts (acidscape.boundary.dispatch.stages), e.g. "water_view":
   * the solved water first, its curves after. The worker stops computing the parts still to
   * come when a newer request for the same method reaches it.
   *
   * @param {string} method  e.g. "water_view"
   * @param {object} params  plain JSON-able object
   * @param {(result: any, index: number) => void} onPart  called with each part as it arrives
   * @returns {Promise<"done"|"dropped">}  settles after the last part ("dropped": the rest was
   *          not computed); rejects with a CoreError (no part comes after it)
   */
  function stream(method, params, onPart) {
    const id = nextId++;
    counted(method);
    return new Promise((resolve, reject) => {
      pending.set(id, { resolve, reject, onPart });
      worker.postMessage({ v: PROTOCOL_VERSION, id, method, params, parts: true });
    });
  }

  return { ready, boot, call, stream, terminate: () => worker.terminate() };
}

let shared = null;
let lastProgress = null;
const progressListeners = new Set();

/**
 * The page's one Python worker, started on first use. `boot.js` calls this before BokehJS
 * is parsed so that Pyodide starts loading at once; main.js gets the same instance.
 *
 * @returns {{ready: Promise<object>, boot: Promise<object>,
 *            call: (method: string, params?: object) => Promise<any>,
 *            stream: (method: string, params: object, onPart: Function) => Promise<string>, terminate: () => void}}
 */
export function sharedPython() {
  if (!shared) {
    shared = startPython({
      onProgress: (step) => {
        lastProgress = step;
        for (const listener of progressListeners) listener(step);
      },
    });
  }
  return shared;
}

/**
 * @param {(p: {stage: string, fraction: number, text: string}) => void} listener  called with
 *        the latest boot step at once (if any) and with every later one
 */
export function onBootProgress(listener) {
  progressListeners.add(listener);
  if (lastProgress) listener(lastProgress);
}
