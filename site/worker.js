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
// the ordinary way. Either way the wheel's files are in site-packages before the first request
// (files of Pyodide's file system do not survive in a snapshot), so a module imported lazily or
// a data file read later is found as usual: written before Python starts for an ordinary boot,
// and after the restore (before anything else runs) for a snapshot boot, which then need not
// wait for the wheel.
//
// This module has no static imports: its first lines start the downloads, while the modules it
// uses still load. The manifest goes first (the snapshot's name is in it), then the modules and
// the runtime's wasm; once the manifest is in, the snapshot, then the wheel (the browser fetches
// a few files at a time from one host over HTTP/1.1). Pyodide's other files (standard library,
// lock file, runtime module) are asked by loadPyodide itself: starting them here too changed
// nothing measurable in the boot marks (the snapshot's download and the wasm's compile are the
// longer waits).

const MANIFEST_URL = new URL("./manifest.json", import.meta.url);
const manifestResponse = fetch(MANIFEST_URL);
manifestResponse.catch(() => {}); // reported in boot()
const imported = Promise.all([
  import("./vendor/pyodide/pyodide.mjs"),
  import("./py.js"),
  import("./snapshot-image.js"),
  import("./wheel.js"),
]);
let PROTOCOL_VERSION = null; // from py.js, once imported (see post)

// loadPyodide hangs rather than rejects when the wasm cannot be instantiated: always time out.
const BOOT_TIMEOUT_MS = 90000;
const INDEX_URL = new URL("./vendor/pyodide/", import.meta.url).href;

// The runtime's wasm (9.6 MB) compiles while the snapshot downloads: Pyodide itself would start
// compiling only once the snapshot is in (it sizes the memory from it). Pyodide's own fetch of
// the file gets an empty stand-in, so the file is downloaded once, and its instantiateStreaming
// call gets the module compiled here (or, should that compile fail, compiles the file anew).
const WASM_URL = new URL("./vendor/pyodide/pyodide.asm.wasm", import.meta.url).href;
const wasmModule = WebAssembly.compileStreaming(fetch(WASM_URL));
wasmModule.then(() => mark("wasm_compiled"), () => {}); // a failure falls back below
const standIns = new WeakSet();
const fetchFile = self.fetch.bind(self);
self.fetch = (input, init) => {
  if (String(input) !== WASM_URL) return fetchFile(input, init);
  const standIn = new Response(null, { headers: { "Content-Type": "application/wasm" } });
  standIns.add(standIn);
  return Promise.resolve(standIn);
};
// The runtime's memory starts at the size its wasm declares (30 MiB), and Pyodide copies a
// snapshot into it without growing it. A snapshot whose heap outgrew that size at build time
// (the answers the build keeps for the first views, dispatch.keep_answer) needs the memory grown
// to the heap's size first: done here, as soon as the instance exists, before Pyodide looks at
// its memory. 0 = no snapshot (an ordinary boot).
let snapshotHeapBytes = 0;
let makeRoom = null; // snapshot-image.js's, once imported (before any instantiation: see boot)
const withRoom = (result) => {
  if (snapshotHeapBytes) makeRoom(result.instance, snapshotHeapBytes);
  return result;
};
const instantiateStreaming = WebAssembly.instantiateStreaming.bind(WebAssembly);
WebAssembly.instantiateStreaming = async (source, imports) => {
  const response = await source;
  if (!standIns.has(response)) return withRoom(await instantiateStreaming(response, imports));
  let module;
  try {
    module = await wasmModule;
  } catch {
    return withRoom(await instantiateStreaming(fetchFile(WASM_URL), imports));
  }
  return withRoom({ module, instance: await WebAssembly.instantiate(module, imports) });
};

// Messages to the page wait for py.js (its protocol version), in the order they were posted.
const outbox = [];
const post = (message) => {
  if (PROTOCOL_VERSION === null) outbox.push(message);
  else self.postMessage({ v: PROTOCOL_VERSION, ...message });
};
imported.then(
  ([, py]) => {
    PROTOCOL_VERSION = py.PROTOCOL_VERSION;
    for (const message of outbox.splice(0)) post(message);
  },
  (error) => {
    // A module that cannot load is the worker's error, as a static import's would be: the page
    // hears of it at once (its Worker "error" event).
    setTimeout(() => {
      throw error;
    });
  },
);
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
  const [, , decoders] = await imported;
  makeRoom = decoders.makeRoom;
  const heap = decoders.expandImage(image);
  if (heap.length !== entry.bytes) throw new Error(`the snapshot holds ${heap.length} bytes, the manifest says ${entry.bytes}`);
  snapshotHeapBytes = heap.length;
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
 * The snapshot's heap, or a NoSnapshot rejection when the build has none or made it with
 * another Pyodide than the one it ships (manifest.versions.pyodide; then it is not fetched).
 */
function snapshotHeap(manifestPromise) {
  return manifestPromise.then((manifest) => {
    const entry = manifest.snapshot;
    if (!entry) throw new NoSnapshot("this build has none");
    const shipped = manifest.versions?.pyodide;
    if (!entry.key || JSON.parse(entry.key).pyodide !== shipped) {
      throw new NoSnapshot(`it was made for another Pyodide (this is ${shipped})`);
    }
    return fetchSnapshot(entry);
  });
}

/**
 * A Pyodide restored from the build's snapshot, or null (after a console message) when there
 * is none, it belongs to another Pyodide or another core, or it fails to load. Pyodide's own
 * files (runtime module, wasm, standard library) load meanwhile, beside the snapshot.
 */
async function bootFromSnapshot(heap, manifestPromise, options) {
  const [{ loadPyodide, version }] = await imported;
  try {
    // the runtime that loaded must be the one the manifest names (checked again, now it is in)
    const bytes = Promise.all([heap, manifestPromise]).then(([image, manifest]) => {
      const made = JSON.parse(manifest.snapshot.key).pyodide;
      if (made !== version) throw new NoSnapshot(`it was made for another Pyodide (this is ${version})`);
      return image;
    });
    const pyodide = await loadPyodide({ ...options, _loadSnapshot: bytes });
    mark("restored");
    // Pyodide keeps its options; drop the image (tens of MB) now that it sits in the heap.
    if (pyodide._api?.config) pyodide._api.config._loadSnapshot = null;
    const stored = pyodide.globals.get("_acidscape_snapshot");
    if (stored !== (await manifestPromise).snapshot.key) {
      throw new NoSnapshot("it was made from another build of the core");
    }
    return pyodide;
  } catch (error) {
    snapshotHeapBytes = 0; // the ordinary boot that follows starts with the runtime's own memory
    const why = String(error?.message || error);
    if (error instanceof NoSnapshot) console.info(`Python starts without a snapshot: ${why}`);
    else console.warn(`The Python snapshot could not be loaded (${why}); starting Python the ordinary way.`);
    return null;
  }
}

async function boot() {
  progress("runtime", 0.15, "Loading the Python runtime (about 20 MB the first time)…");
  const manifestPromise = manifestResponse
    .then((response) => {
      if (!response.ok) throw new Error(`could not load manifest.json (HTTP ${response.status})`);
      return response.json();
    })
    .then((manifest) => {
      mark("manifest");
      if (!manifest.wheel) throw new Error("manifest.json names no wheel");
      return manifest;
    });
  const heap = snapshotHeap(manifestPromise);
  heap.catch(() => {}); // reported by bootFromSnapshot
  // The core's files, read from the wheel while the runtime loads: written into site-packages
  // before Python starts (Pyodide's fsInit hook) for an ordinary boot, after the restore for a
  // snapshot boot (whose modules are in the image already).
  const files = manifestPromise
    .then((manifest) => fetchOk(new URL(manifest.wheel, import.meta.url), "the acidscape package"))
    .then((response) => response.arrayBuffer())
    .then(async (archive) => (await imported)[3].wheelFiles(archive))
    .then((list) => {
      mark("wheel_read");
      return list;
    });
  files.catch(() => {}); // its failure is reported where it is awaited
  let sitePackages = null;
  const options = {
    ...pyodideOptions,
    fsInit: async (FS, paths) => {
      try {
        (await imported)[3].writeFiles(FS, paths.sitePackages, await files);
      } catch {
        // reported by the await of `files` below
      }
    },
  };
  const snapshotOptions = {
    ...pyodideOptions,
    fsInit: (FS, paths) => {
      sitePackages = paths.sitePackages;
    },
  };

  let pyodide = await bootFromSnapshot(heap, manifestPromise, snapshotOptions);
  const manifest = await manifestPromise; // a failed manifest fails the boot here
  const fromSnapshot = Boolean(pyodide);
  if (!pyodide) {
    progress("runtime", 0.5, "Starting Python…");
    const [{ loadPyodide }] = await imported;
    pyodide = await loadPyodide(options);
  }
  const list = await files; // a wheel that could not be read fails the boot here
  mark("runtime");
  if (fromSnapshot) {
    // Before any request: the wheel's files for what is imported or read lazily, then (defined
    // in the image by build_scripts/snapshot.mjs) fresh directory listings and random seed.
    (await imported)[3].writeFiles(pyodide.FS, sitePackages, list);
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

/** A request from the page (after py.js is in: requests sent early wait for it, in order). */
function receive(event) {
  const request = event.data || {};
  if (request.v !== PROTOCOL_VERSION) {
    post({ id: request.id, ok: false, error: { type: "ProtocolError", message: `unsupported protocol version ${request.v}`, field: null } });
    return;
  }
  queue.push(request);
  work();
}

self.onmessage = (event) => {
  if (PROTOCOL_VERSION === null) imported.then(() => receive(event), () => {});
  else receive(event);
};
