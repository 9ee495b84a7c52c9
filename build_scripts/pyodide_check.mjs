// Run the core inside Pyodide (CPython 3.14, the browser's interpreter) under Node.js:
// install the built wheel, run every module's doctests, and evaluate the scenarios given on
// stdin with acidscape.boundary.dispatch.handle. Prints one JSON object on stdout.
//
//   node build_scripts/pyodide_check.mjs dist/wheels/acidscape-*.whl < requests.json
//
// requests.json: [{"method": "...", "params": {...}}, ...]
import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

const here = dirname(fileURLToPath(import.meta.url));
const pyodideDir = join(here, "node_modules", "pyodide");
const { loadPyodide } = await import(join(pyodideDir, "pyodide.mjs"));

const wheelPath = process.argv[2];
if (!wheelPath) {
  console.error("usage: node pyodide_check.mjs WHEEL < requests.json");
  process.exit(2);
}
const requests = JSON.parse(readFileSync(0, "utf8") || "[]");

const py = await loadPyodide({ indexURL: pyodideDir + "/" });
const sitePackages = py.runPython("import site; site.getsitepackages()[0]");
py.unpackArchive(new Uint8Array(readFileSync(wheelPath)), "wheel", { extractDir: sitePackages });

const checker = py.runPython(`
import doctest, importlib, json, pkgutil, sys
import acidscape, acidscape.boundary.dispatch

def check(requests_json):
    failures, attempted, modules = 0, 0, []
    for info in pkgutil.walk_packages(acidscape.__path__, "acidscape."):
        name = info.name
        if name == "acidscape.__main__":
            continue
        mod = importlib.import_module(name)
        res = doctest.testmod(mod, verbose=False, report=False)
        failures += res.failed
        attempted += res.attempted
        modules.append(name)
    answers = [json.loads(acidscape.boundary.dispatch.handle(r["method"], json.dumps(r["params"])))
               for r in json.loads(requests_json)]
    return json.dumps({"python": sys.version.split()[0], "modules": modules,
                       "doctests_attempted": attempted, "doctests_failed": failures,
                       "answers": answers})
check
`);
process.stdout.write(checker(JSON.stringify(requests)));
