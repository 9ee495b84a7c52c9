// Boot the core under Node.js from a built site's memory snapshot the way site/worker.js does
// (with the same decoders, site/snapshot-image.js and site/wheel.js), and report what works
// without and with the wheel's files. Prints one JSON object.
//
//   node build_scripts/snapshot_check.mjs DIST < requests.json
//
// DIST is a folder written by build_scripts/build.py (manifest.json names the snapshot and the
// wheel). requests.json: [{"method": "...", "params": {...}}, ...], answered with
// acidscape.boundary.dispatch.handle after the boot. Reported:
//   key_matches      the key stored in the image equals the manifest's
//   without_files    {lazy_import, loaders} after a boot from the snapshot alone: an import of a
//                    core module that was not imported when the snapshot was made
//                    (acidscape.__main__), and the manifest's cached loaders called again with
//                    their caches cleared (they read the CSV files); each "ok" or the error type
//   with_files       the same after a boot that writes the wheel's files into site-packages
//                    first (Pyodide's fsInit hook) and runs _acidscape_after_restore(), as the
//                    worker does
//   answers          the replies to the requests, from the second boot
import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { gunzipSync } from "node:zlib";
import { expandImage, makeRoom } from "../site/snapshot-image.js";
import { wheelFiles, writeFiles } from "../site/wheel.js";

const here = dirname(fileURLToPath(import.meta.url));
const { loadPyodide, version } = await import(join(here, "node_modules", "pyodide", "pyodide.mjs"));

const dist = process.argv[2];
if (!dist) {
  console.error("usage: node snapshot_check.mjs DIST < requests.json");
  process.exit(2);
}
const requests = JSON.parse(readFileSync(0, "utf8") || "[]");
const manifest = JSON.parse(readFileSync(join(dist, "manifest.json"), "utf8"));
const entry = manifest.snapshot;
if (!entry) {
  console.error("snapshot_check.mjs: the manifest names no snapshot");
  process.exit(1);
}
let image = readFileSync(join(dist, entry.file));
if (entry.encoding === "gzip") image = gunzipSync(image);
const heap = () => expandImage(new Uint8Array(image.buffer, image.byteOffset, image.byteLength));
// The runtime's memory must hold the heap before Pyodide copies it in, as in site/worker.js.
for (const name of ["instantiate", "instantiateStreaming"]) {
  const original = WebAssembly[name].bind(WebAssembly);
  WebAssembly[name] = async (...args) => {
    const result = await original(...args);
    if (result.instance) makeRoom(result.instance, entry.bytes);
    return result;
  };
}
const files = await wheelFiles(new Uint8Array(readFileSync(join(dist, manifest.wheel))));

const PROBE = `
def _probe(loader_names):
    import importlib, json
    out = {}
    try:
        importlib.import_module("acidscape.__main__")
        out["lazy_import"] = "ok"
    except Exception as exc:
        out["lazy_import"] = type(exc).__name__
    results = {}
    for dotted in loader_names:
        module_name, attr = dotted.rsplit(".", 1)
        loader = getattr(importlib.import_module(module_name), attr)
        loader.cache_clear()
        try:
            loader()
            results[dotted] = "ok"
        except Exception as exc:
            results[dotted] = type(exc).__name__
    out["loaders"] = results
    return json.dumps(out)
_probe
`;

async function boot(withFiles) {
  const py = await loadPyodide({
    _loadSnapshot: heap(),
    stdout: () => {},
    fsInit: withFiles ? async (FS, { sitePackages }) => writeFiles(FS, sitePackages, files) : undefined,
  });
  py.globals.get("_acidscape_after_restore")();
  return py;
}

const bare = await boot(false);
const result = {
  pyodide: version,
  key_matches: bare.globals.get("_acidscape_snapshot") === entry.key,
  without_files: JSON.parse(bare.runPython(PROBE)(bare.toPy(entry.loaders))),
};
const py = await boot(true);
result.with_files = JSON.parse(py.runPython(PROBE)(py.toPy(entry.loaders)));
const handle = py.pyimport("acidscape.boundary.dispatch").handle;
result.answers = requests.map((r) => JSON.parse(handle(r.method, JSON.stringify(r.params))));
process.stdout.write(JSON.stringify(result));
