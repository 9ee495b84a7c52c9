// Boot the core under Node.js from a built site's memory snapshot the way site/worker.js does,
// and report what works before and after the wheel is unpacked again. Prints one JSON object.
//
//   node build_scripts/snapshot_check.mjs DIST < requests.json
//
// DIST is a folder written by build_scripts/build.py (manifest.json names the snapshot and the
// wheel). requests.json: [{"method": "...", "params": {...}}, ...], answered with
// acidscape.boundary.api.handle after the boot. Reported:
//   key_matches      the key stored in the image equals the manifest's
//   before_unpack    {lazy_import, loaders}: an import of a core module that was not imported
//                    when the snapshot was made (acidscape.__main__), and the manifest's cached
//                    loaders called again with their caches cleared (they read the CSV files);
//                    each "ok" or the error's type, before the wheel is unpacked again
//   after_unpack     the same after unpacking the wheel and _acidscape_after_restore()
//   answers          the replies to the requests
import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { gunzipSync } from "node:zlib";

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
let bytes = readFileSync(join(dist, entry.file));
if (entry.encoding === "gzip") bytes = gunzipSync(bytes);

const py = await loadPyodide({ _loadSnapshot: new Uint8Array(bytes), stdout: () => {} });
const probe = py.runPython(`
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
`);
const loaders = py.toPy(entry.loaders);
const result = {
  pyodide: version,
  key_matches: py.globals.get("_acidscape_snapshot") === entry.key,
  before_unpack: JSON.parse(probe(loaders)),
};
const sitePackages = py.runPython("import site; site.getsitepackages()[0]");
py.unpackArchive(new Uint8Array(readFileSync(join(dist, manifest.wheel))), "wheel", { extractDir: sitePackages });
py.globals.get("_acidscape_after_restore")();
py.runPython("import sys; sys.modules.pop('acidscape.__main__', None)");
result.after_unpack = JSON.parse(probe(loaders));
const handle = py.pyimport("acidscape.boundary.api").handle;
result.answers = requests.map((r) => JSON.parse(handle(r.method, JSON.stringify(r.params))));
process.stdout.write(JSON.stringify(result));
