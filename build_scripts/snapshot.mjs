// Make the Pyodide memory snapshot the page boots from (platform notes §8), at build time,
// in Node, with the pinned package build_scripts/node_modules/pyodide.
//
//   node build_scripts/snapshot.mjs WHEEL OUT KEY_JSON [SITE]
//
// WHEEL     the acidscape wheel the page installs (its bytes are what KEY_JSON's hash covers)
// OUT       where to write the raw snapshot (a Uint8Array of the whole wasm heap + a header)
// KEY_JSON  a JSON object identifying what the snapshot was made from (the Pyodide version and
//           the wheel's sha256); it is stored inside the Python heap as
//           __main__._acidscape_snapshot, so the worker can check after booting that the image
//           it restored belongs to the manifest it read.
// SITE      the page sources (default: site/ beside this folder): the requests of the first
//           views are answered once before the heap is saved (see "Warm-up" below).
//
// Before the heap is saved, every module of the core is imported (pkgutil.walk_packages over
// acidscape; a module that needs a package Pyodide lacks is skipped and reported), every
// zero-argument cached loader (functools.cache) of the core is called so the data files sit in
// memory, and handle("version" | "systems" | "chemicals") is answered once.
// Warm-up: then the requests the page's first views make are answered, so that what the core
// builds on a water's first solve (its tableau shared by every water of the same make-up, the
// code compiled for its structure, modules imported inside functions) is in the image: the
// catalogue calls ("catalogues", "products"), and for the starting water (site/water-start.js,
// the module water.js reads) and each worked example's water (site/presets.json): the water
// job's request answered in full (dispatch.stages "water_view" with the page's curve grid),
// "solve", and for an example its one-acid "distribution". The water job's answers are also
// kept (acidscape.boundary.dispatch.keep_answer): the same request later is answered from them,
// so a page opened on the starting water or an example draws its first view as soon as Python
// is up; any other water is computed as usual.
// Files of the Emscripten file system do not survive a snapshot boot (imported modules do), so
// the worker writes the wheel's files into site-packages again before Python starts (fsInit),
// for anything imported or read lazily, and after the boot calls
// __main__._acidscape_after_restore() (defined here, kept in the image).
//
// Prints one JSON line: {python, modules, skipped, loaders, warmed, kept_chars, start_request, seconds,
// bytes} ("kept_chars": characters of JSON kept for the water job's answers);
// "skipped" lists core modules that need a package Pyodide lacks (they are not imported, and
// not part of the page); "warmed" the requests answered by name; "start_request" the starting
// water's request (tests compare it with the one the page sends).
import { readFileSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const here = dirname(fileURLToPath(import.meta.url));
const pyodideDir = join(here, "node_modules", "pyodide");
const { loadPyodide, version } = await import(join(pyodideDir, "pyodide.mjs"));

const [wheelPath, outPath, keyJson, siteArg] = process.argv.slice(2);
const siteDir = siteArg || join(here, "..", "site");
if (!wheelPath || !outPath || !keyJson) {
  console.error("usage: node snapshot.mjs WHEEL OUT KEY_JSON");
  process.exit(2);
}
const key = JSON.parse(keyJson);
if (key.pyodide !== version) {
  console.error(`snapshot.mjs: key names Pyodide ${key.pyodide}, the installed package is ${version}`);
  process.exit(1);
}

let startRequest = null; // set by warmUpRequests
const clock = performance.now.bind(performance); // the real clock, for the report
const t0 = clock();
makeDeterministic(Number(process.env.SOURCE_DATE_EPOCH || 315619200));
const py = await loadPyodide({
  indexURL: pyodideDir + "/",
  _makeSnapshot: true,
  _sysExecutable: "./this.program", // what Emscripten names the program in a browser
  env: { PYTHONHASHSEED: "0" },
  stdout: () => {},
  stderr: (line) => console.error("[python]", line),
});
// Not through fsInit as the worker does: Pyodide then notes the wheel among its loaded packages
// in a JavaScript object that a snapshot cannot hold.
const sitePackages = py.runPython("import site; site.getsitepackages()[0]");
py.unpackArchive(new Uint8Array(readFileSync(wheelPath)), "wheel", { extractDir: sitePackages });

py.globals.set("_snapshot_key_json", keyJson);
py.globals.set("_snapshot_warm_json", JSON.stringify(await warmUpRequests(siteDir)));
const report = py.runPython(`
def _after_restore():
    """Run by the worker once after booting from this snapshot.

    The file system is new, so the directory listings cached for folders on it are stale
    (only these: importlib.invalidate_caches() would also re-read the standard library zip's
    directory, which takes seconds here); and every browser restores the same random state, so
    draw a fresh seed if the random module is loaded.
    """
    import sys
    from importlib.machinery import FileFinder
    for finder in list(sys.path_importer_cache.values()):
        if isinstance(finder, FileFinder):
            finder.invalidate_caches()
    if "random" in sys.modules:
        sys.modules["random"].seed()


def _prepare(key_json, warm_json):
    import gc, importlib, json, pkgutil, sys
    import acidscape

    modules, skipped = [], []
    for info in pkgutil.walk_packages(acidscape.__path__, "acidscape."):
        if info.name.rsplit(".", 1)[-1] == "__main__":
            continue  # the command line entry point (python -m acidscape)
        try:
            importlib.import_module(info.name)
        except ModuleNotFoundError as exc:
            # A module built on an optional package that Pyodide lacks (not part of the page).
            # A missing module of the core itself is a broken core: stop.
            if (exc.name or "").split(".")[0] == "acidscape":
                raise
            skipped.append(f"{info.name} (needs {exc.name})")
            continue
        modules.append(info.name)

    # Every zero-argument cached loader (functools.cache / lru_cache) defined in the core:
    # these read the data files through importlib.resources, which is gone after a snapshot boot.
    loaders = []
    for name in sorted(n for n in sys.modules if n == "acidscape" or n.startswith("acidscape.")):
        for attr, obj in sorted(vars(sys.modules[name]).items()):
            wrapped = getattr(obj, "__wrapped__", None)
            code = getattr(wrapped, "__code__", None)
            if not hasattr(obj, "cache_info") or code is None or obj.__module__ != name:
                continue
            required = code.co_argcount - len(wrapped.__defaults__ or ())
            kwonly = code.co_kwonlyargcount - len(wrapped.__kwdefaults__ or {})
            if required == 0 and kwonly == 0:
                obj()
                loaders.append(f"{name}.{attr}")

    from acidscape.boundary.dispatch import handle
    for method in ("version", "systems", "chemicals"):
        reply = json.loads(handle(method, "{}"))
        if not reply.get("ok"):
            raise RuntimeError(f"handle({method!r}) failed before the snapshot: {reply}")

    # Warm-up (see the head of build_scripts/snapshot.mjs): answered as the worker answers them.
    # The water job's answers (dispatch.keep_answer) are kept in the image as well: a page opened
    # on the starting water or an example draws them as soon as Python is up.
    from acidscape.boundary.dispatch import keep_answer, stages
    warmed = []
    kept_chars = 0
    for name, method, params in json.loads(warm_json):
        if method == "water_view":
            kept_chars += keep_answer(method, json.dumps(params))
        else:
            parts = [json.loads(p) for p in stages(method, json.dumps(params)) if p is not None]
            if not parts or not all(p.get("ok") for p in parts):
                raise RuntimeError(f"{method} for {name} failed before the snapshot: {parts[-1:]}")
        warmed.append(f"{name}: {method}")

    import __main__
    __main__._acidscape_snapshot = key_json
    __main__._acidscape_after_restore = _after_restore
    gc.collect()
    return json.dumps({"python": sys.version.split()[0], "modules": modules, "skipped": skipped,
                       "loaders": loaders, "warmed": warmed, "kept_chars": kept_chars})

_prepare(_snapshot_key_json, _snapshot_warm_json)
`);
py.runPython("del _prepare, _after_restore, _snapshot_key_json, _snapshot_warm_json");
const bytes = py.makeMemorySnapshot();
writeFileSync(outPath, bytes);
const out = JSON.parse(report);
out.start_request = startRequest;
out.seconds = Math.round(clock() - t0) / 1000;
out.bytes = bytes.length;
process.stdout.write(JSON.stringify(out) + "\n");

/**
 * The requests of the page's first views, as [name, method, params]: the starting water's as
 * water.js sends it (its rows read as numbers, the conditions its inputs start with), and each worked example's as the page sends it once the example is
 * applied (the saved scenario, with the same curve grid).
 */
async function warmUpRequests(site) {
  const { START_CONDITIONS, START_WATER, WATER_CURVE } = await import(pathToFileURL(join(site, "water-start.js")).href);
  const rows = (list) => list.map(({ id, total, unit }) => ({ id, total: Number(total), unit }));
  const start = { ...START_CONDITIONS, systems: rows(START_WATER.systems), ions: rows(START_WATER.ions) };
  startRequest = { ...start, curve: WATER_CURVE };
  const requests = [["catalogues", "catalogues", {}], ["products", "products", {}],
    ["start", "water_view", startRequest], ["start", "solve", start]];
  const { presets } = JSON.parse(readFileSync(join(site, "presets.json"), "utf8"));
  for (const { id, state } of presets) {
    const scenario = state?.water?.scenario;
    if (scenario) {
      requests.push([id, "water_view", { systems: [], ions: [], ...scenario, curve: WATER_CURVE }]);
      requests.push([id, "solve", { systems: [], ions: [], ...scenario }]);
    }
    const acid = state?.distribution;
    if (acid?.acid && acid.acid !== "custom") {
      requests.push([id, "distribution", { system: acid.acid, total_M: acid.total_M, pH: acid.pH }]);
    }
  }
  return requests;
}

// The same inputs must give the same bytes (so an unchanged build keeps its cache name): the
// heap would otherwise hold the build's clock (file times, time.time() at import) and random
// bytes (the allocator's and the random module's seeds). While the snapshot is made, the clock
// starts at SOURCE_DATE_EPOCH and ticks 1 ms per reading, and "random" bytes come from a fixed
// xorshift stream. Every browser that boots the snapshot shares these seeds in any case (the
// image is the same for all); the worker reseeds Python's random module after booting.
function makeDeterministic(epochSeconds) {
  let wall = epochSeconds * 1000;
  let mono = 0;
  Date.now = () => (wall += 1);
  performance.now = () => (mono += 1);
  let state = 0x9e3779b9;
  const nodeCrypto = createRequire(import.meta.url)("node:crypto");
  nodeCrypto.randomFillSync = (view) => {
    const bytes = new Uint8Array(view.buffer, view.byteOffset, view.byteLength);
    for (let i = 0; i < bytes.length; i++) {
      state ^= state << 13;
      state ^= state >>> 17;
      state ^= state << 5;
      bytes[i] = state & 0xff;
    }
    return view;
  };
}
