// Module worker: boots Pyodide from ./vendor/pyodide/, installs the acidscape wheel named in
// manifest.json and answers requests with acidscape.boundary.api.handle (JSON strings in and out, so no
// Python proxies cross over). Protocol: see py.js.

import { loadPyodide } from "./vendor/pyodide/pyodide.mjs";

const PROTOCOL_VERSION = 1;
// loadPyodide hangs rather than rejects when the wasm cannot be instantiated: always time out.
const BOOT_TIMEOUT_MS = 90000;

const post = (message) => self.postMessage({ v: PROTOCOL_VERSION, ...message });
const progress = (stage, fraction, text) => post({ type: "progress", stage, fraction, text });

async function fetchOk(url, what) {
  const response = await fetch(url);
  if (!response.ok) throw new Error(`could not load ${what} (${url.pathname}: HTTP ${response.status})`);
  return response;
}

async function boot() {
  progress("runtime", 0.15, "Loading the Python runtime (about 13 MB the first time)…");
  // The runtime, the manifest and the wheel load side by side.
  const runtime = loadPyodide({
    indexURL: new URL("./vendor/pyodide/", import.meta.url).href,
    stdout: () => {},
    stderr: (line) => console.warn("[python]", line),
  });
  runtime.catch(() => {}); // its failure is reported through the await below, not as unhandled
  const manifest = await (await fetchOk(new URL("./manifest.json", import.meta.url), "manifest.json")).json();
  if (!manifest.wheel) throw new Error("manifest.json names no wheel");
  const wheelUrl = new URL(manifest.wheel, import.meta.url);
  const wheel = fetchOk(wheelUrl, "the acidscape package").then((r) => r.arrayBuffer());
  const pyodide = await runtime;

  progress("package", 0.85, "Installing the Acidscape core…");
  const sitePackages = pyodide.runPython("import site; site.getsitepackages()[0]");
  pyodide.unpackArchive(await wheel, "wheel", { extractDir: sitePackages });

  progress("import", 0.95, "Importing the Acidscape core…");
  const api = pyodide.pyimport("acidscape.boundary.api");
  const handle = api.handle; // kept for the worker's lifetime, like the module proxy
  const version = JSON.parse(handle("version", "{}"));
  return {
    handle,
    versions: { ...(manifest.versions || {}), ...(version.ok ? version.result : {}) },
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
    post({ type: "ready", versions: core.versions });
    return core;
  },
  (error) => {
    post({ type: "fatal", message: String(error?.message || error) });
    throw error;
  },
);
ready.catch(() => {}); // reported above; keep the console free of an unhandled rejection

self.onmessage = async (event) => {
  const { v, id, method, params } = event.data || {};
  if (v !== PROTOCOL_VERSION) {
    post({ id, ok: false, error: { type: "ProtocolError", message: `unsupported protocol version ${v}`, field: null } });
    return;
  }
  let core;
  try {
    core = await ready;
  } catch (error) {
    post({ id, ok: false, error: { type: "BootError", message: String(error?.message || error), field: null } });
    return;
  }
  try {
    const reply = JSON.parse(core.handle(String(method), JSON.stringify(params ?? {})));
    post({ id, ok: reply.ok, result: reply.result, error: reply.error });
  } catch (error) {
    post({ id, ok: false, error: { type: "WorkerError", message: String(error?.message || error), field: null } });
  }
};
