// Module worker: boots Pyodide from ./vendor/pyodide/ and answers requests with
// acidscape.boundary.dispatch.handle (JSON strings in and out, so no Python proxies cross over).
// Protocol: see py.js (the one place its version is written).
//
// Boot. manifest.json names the core wheel and, when the build made one, a memory snapshot:
// the Python heap saved at build time after the whole core was imported and its data loaded
// (build_scripts/snapshot.mjs). Booting from it skips CPython's start-up and the imports.
// The snapshot is used only if it was made by this Pyodide version, Pyodide accepts it (it
// checks its own build id), and the key stored inside it equals the manifest's (Pyodide
// version + sha256 of the wheel). Otherwise, or if it fails to load, the worker boots Pyodide
// the ordinary way. Either way the wheel's files are written into site-packages before Python
// starts (files of Pyodide's file system do not survive in a snapshot), so a module imported
// lazily or a data file read later is found as usual.

import { loadPyodide, version as pyodideVersion } from "./vendor/pyodide/pyodide.mjs";
import { PROTOCOL_VERSION } from "./py.js";
import { expandImage } from "./snapshot-image.js";
import { wheelFiles, writeFiles } from "./wheel.js";

// loadPyodide hangs rather than rejects when the wasm cannot be instantiated: always time out.
const BOOT_TIMEOUT_MS = 90000;
const INDEX_URL = new URL("./vendor/pyodide/", import.meta.url).href;

// The runtime's wasm (9.6 MB) compiles while the snapshot downloads: Pyodide itself would start
// compiling only once the snapshot is in (it sizes the memory from it). Pyodide's own fetch of
// the file gets an empty stand-in, so the file is downloaded once, and its instantiateStreaming
// call gets the module compiled here (or, should that compile fail, compiles the file anew).
const WASM_URL = new URL("./vendor/pyodide/pyodide.asm.wasm", import.meta.url).href;
const wasmModule = WebAssembly.compileStreaming(fetch(WASM_URL));
wasmModule.catch(() => {}); // a failure falls back below
const standIns = new WeakSet();
const fetchFile = self.fetch.bind(self);
self.fetch = (input, init) => {
  if (String(input) !== WASM_URL) return fetchFile(input, init);
  const standIn = new Response(null, { headers: { "Content-Type": "application/wasm" } });
  standIns.add(standIn);
  return Promise.resolve(standIn);
};
const instantiateStreaming = WebAssembly.instantiateStreaming.bind(WebAssembly);
WebAssembly.instantiateStreaming = async (source, imports) => {
  const response = await source;
  if (!standIns.has(response)) return instantiateStreaming(response, imports);
  let module;
  try {
    module = await wasmModule;
  } catch {
    return instantiateStreaming(fetchFile(WASM_URL), imports);
  }
  return { module, instance: await WebAssembly.instantiate(module, imports) };
};

const post = (message) => self.postMessage({ v: PROTOCOL_VERSION, ...message });
const progress = (stage, fraction, text) => post({ type: "progress", stage, fraction, text });
const timings = {}; // ms since the worker started, per boot step (reported with "ready")
const mark = (name) => {
  timings[name] = Math.round(performance.now());
};

async function fetchOk(url, what) {
  const response = await fetch(url);
  if (!response.ok) throw new Error(`could not load ${what} (${url.pathname}: HTTP ${response.status})`);
  return response;
}

/** Read a stream of byte chunks into one array of the expected size. */
async function readExactly(stream, size, what) {
  const out = new Uint8Array(size);
  let at = 0;
  const reader = stream.getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    if (at + value.length > size) throw new Error(`${what} is larger than the manifest says (${size} bytes)`);
    out.set(value, at);
    at += value.length;
  }
  if (at !== size) throw new Error(`${what} has ${at} bytes, the manifest says ${size}`);
  return out;
}

/** The snapshot's heap: the file inflated as it arrives (when the build gzipped it), expanded. */
async function fetchSnapshot(entry) {
  const response = await fetchOk(new URL(entry.file, import.meta.url), "the Python snapshot");
  let body = response.body;
  if (entry.encoding === "gzip") {
    // A host that serves the file with Content-Encoding: gzip has inflated it already: look at
    // the first bytes for gzip's magic number before inflating.
    const reader = body.getReader();
    const first = await reader.read();
    const gzip = !first.done && first.value[0] === 0x1f && first.value[1] === 0x8b;
    body = new ReadableStream({
      start(controller) {
        if (!first.done) controller.enqueue(first.value);
      },
      async pull(controller) {
        const { done, value } = await reader.read();
        if (done) controller.close();
        else controller.enqueue(value);
      },
    });
    if (gzip) body = body.pipeThrough(new DecompressionStream("gzip"));
  }
  const image = await readExactly(body, entry.image_bytes, "the Python snapshot");
  mark("snapshot_fetched");
  const heap = expandImage(image);
  if (heap.length !== entry.bytes) throw new Error(`the snapshot holds ${heap.length} bytes, the manifest says ${entry.bytes}`);
  mark("snapshot_expanded");
  return heap;
}

const pyodideOptions = {
  indexURL: INDEX_URL,
  stdout: () => {},
  stderr: (line) => console.warn("[python]", line),
};

class NoSnapshot extends Error {}

/**
 * A Pyodide restored from the build's snapshot, or null (after a console message) when there
 * is none, it belongs to another Pyodide or another core, or it fails to load. Pyodide's own
 * files (runtime module, wasm, standard library) start loading at once, beside the manifest
 * and the snapshot.
 */
async function bootFromSnapshot(manifestPromise, options) {
  const snapshot = manifestPromise.then((manifest) => {
    const entry = manifest.snapshot;
    if (!entry) throw new NoSnapshot("this build has none");
    if (!entry.key || JSON.parse(entry.key).pyodide !== pyodideVersion) {
      throw new NoSnapshot(`it was made for another Pyodide (this is ${pyodideVersion})`);
    }
    return fetchSnapshot(entry);
  });
  try {
    const pyodide = await loadPyodide({ ...options, _loadSnapshot: snapshot });
    // Pyodide keeps its options; drop the image (tens of MB) now that it sits in the heap.
    if (pyodide._api?.config) pyodide._api.config._loadSnapshot = null;
    const stored = pyodide.globals.get("_acidscape_snapshot");
    if (stored !== (await manifestPromise).snapshot.key) {
      throw new NoSnapshot("it was made from another build of the core");
    }
    return pyodide;
  } catch (error) {
    const why = String(error?.message || error);
    if (error instanceof NoSnapshot) console.info(`Python starts without a snapshot: ${why}`);
    else console.warn(`The Python snapshot could not be loaded (${why}); starting Python the ordinary way.`);
    return null;
  }
}

async function boot() {
  progress("runtime", 0.15, "Loading the Python runtime (about 20 MB the first time)…");
  const manifestPromise = fetchOk(new URL("./manifest.json", import.meta.url), "manifest.json")
    .then((response) => response.json())
    .then((manifest) => {
      mark("manifest");
      if (!manifest.wheel) throw new Error("manifest.json names no wheel");
      return manifest;
    });
  // The core's files, read from the wheel while the runtime loads, go into site-packages
  // before Python starts (Pyodide's fsInit hook), for either kind of boot.
  const files = manifestPromise
    .then((manifest) => fetchOk(new URL(manifest.wheel, import.meta.url), "the acidscape package"))
    .then((response) => response.arrayBuffer())
    .then(wheelFiles)
    .then((list) => {
      mark("wheel_read");
      return list;
    });
  files.catch(() => {}); // its failure is reported where it is awaited
  const options = {
    ...pyodideOptions,
    fsInit: async (FS, { sitePackages }) => {
      try {
        writeFiles(FS, sitePackages, await files);
      } catch {
        // reported by the await of `files` below
      }
    },
  };

  let pyodide = await bootFromSnapshot(manifestPromise, options);
  const manifest = await manifestPromise; // a failed manifest fails the boot here
  const fromSnapshot = Boolean(pyodide);
  if (!pyodide) {
    progress("runtime", 0.5, "Starting Python…");
    pyodide = await loadPyodide(options);
  }
  await files; // a wheel that could not be read fails the boot here
  mark("runtime");
  if (fromSnapshot) {
    // Defined in the image by build_scripts/snapshot.mjs: fresh directory listings, random seed.
    const afterRestore = pyodide.globals.get("_acidscape_after_restore");
    afterRestore();
    afterRestore.destroy();
  }

  progress("import", 0.95, "Importing the Acidscape core…");
  const dispatch = pyodide.pyimport("acidscape.boundary.dispatch");
  const handle = dispatch.handle; // kept for the worker's lifetime, like the module proxy
  const stages = dispatch.stages; // answers in parts (see answerInParts below)
  const version = JSON.parse(handle("version", "{}"));
  mark("ready");
  return {
    handle,
    stages,
    versions: { ...(manifest.versions || {}), ...(version.ok ? version.result : {}), protocol: PROTOCOL_VERSION },
    boot: { snapshot: fromSnapshot, origin: performance.timeOrigin, ms: timings },
  };
}

function withTimeout(promise, ms) {
  let timer;
  const timeout = new Promise((_, reject) => {
    timer = setTimeout(() => reject(new Error(`Python did not start within ${ms / 1000} s`)), ms);
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

const ready = withTimeout(boot(), BOOT_TIMEOUT_MS).then(
  (core) => {
    post({ type: "ready", versions: core.versions, boot: core.boot });
    return core;
  },
  (error) => {
    post({ type: "fatal", message: String(error?.message || error) });
    throw error;
  },
);
ready.catch(() => {}); // reported above; keep the console free of an unhandled rejection

// Requests are answered one at a time, in the order they came. A request for parts (py.js
// stream) pauses where the core's generator pauses (acidscape.boundary.dispatch.stages): there
// the worker lets the messages that have arrived in; when a newer request for the same method
// is among them, it stops and answers "dropped" instead of computing the rest, and requests of
// one answer that are waiting are answered first (the rest of a stream, e.g. curves, should not
// hold up another section's figures).
const queue = [];
let working = false;

/**
 * Let messages that have arrived be queued: a round trip through a MessageChannel, a task that
 * comes after the page's messages already waiting (the same kind of task, in order). Not
 * setTimeout(0): Chromium clamps nested timers to 4 ms, and a water's curves pause some twenty
 * times.
 */
const pauses = new MessageChannel();
const resumes = [];
pauses.port1.onmessage = () => resumes.shift()?.();
const letMessagesIn = () =>
  new Promise((resolve) => {
    resumes.push(resolve);
    pauses.port2.postMessage(null);
  });

/** A request of one answer. */
function answer(core, { id, method, params }) {
  try {
    const reply = JSON.parse(core.handle(String(method), JSON.stringify(params ?? {})));
    post({ id, ok: reply.ok, result: reply.result, error: reply.error });
  } catch (error) {
    post({ id, ok: false, error: { type: "WorkerError", message: String(error?.message || error), field: null } });
  }
}

async function answerInParts(core, { id, method, params }) {
  const parts = core.stages(String(method), JSON.stringify(params ?? {}));
  try {
    let sent = 0;
    for (;;) {
      const step = parts.next();
      if (step.done) break;
      if (typeof step.value === "string") {
        const reply = JSON.parse(step.value);
        if (!reply.ok) {
          post({ id, ok: false, error: reply.error });
          return;
        }
        post({ id, ok: true, part: sent, result: reply.result });
        sent += 1;
      } else if (sent) {
        await letMessagesIn();
        if (queue.some((next) => next.parts && next.method === method)) {
          post({ id, ok: true, dropped: true });
          return;
        }
        for (let i = 0; i < queue.length; ) {
          if (queue[i].parts) i += 1;
          else answer(core, queue.splice(i, 1)[0]);
        }
      }
    }
    post({ id, ok: true, done: true });
  } finally {
    parts.destroy?.();
  }
}

async function work() {
  if (working) return;
  working = true;
  try {
    let core;
    try {
      core = await ready;
    } catch (error) {
      for (const { id } of queue.splice(0)) {
        post({ id, ok: false, error: { type: "BootError", message: String(error?.message || error), field: null } });
      }
      return;
    }
    while (queue.length) {
      const request = queue.shift();
      if (request.parts) {
        try {
          await answerInParts(core, request);
        } catch (error) {
          post({ id: request.id, ok: false, error: { type: "WorkerError", message: String(error?.message || error), field: null } });
        }
      } else {
        answer(core, request);
      }
    }
  } finally {
    working = false;
  }
}

self.onmessage = (event) => {
  const request = event.data || {};
  if (request.v !== PROTOCOL_VERSION) {
    post({ id: request.id, ok: false, error: { type: "ProtocolError", message: `unsupported protocol version ${request.v}`, field: null } });
    return;
  }
  queue.push(request);
  work();
};
