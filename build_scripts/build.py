"""Build the static Acidscape site into dist/ — no network, no bundler.

Run from anywhere:  python build_scripts/build.py [--out DIR]

Steps, in order:
 1. clean the output folder (default: <repo>/dist);
 2. copy site/ (HTML, CSS, ES modules);
 3. build the core wheel acidscape-<version>-py3-none-any.whl into wheels/;
 4. copy the pinned Pyodide core (build_scripts/node_modules/pyodide, from
    ``npm ci --prefix build_scripts``) into vendor/pyodide/ and BokehJS from the
    installed Python bokeh into vendor/bokeh/, so the two Bokeh halves match;
 5. write plots.json (Bokeh templates from build_scripts/plots.py);
 6. write the third-party licence notices into licenses/;
 7. write manifest.json (versions, wheel path, sha256 of every file);
 8. write sw.js from build_scripts/sw.template.js (asset list, content-hash cache name);
 9. print what it wrote.

Any missing input stops the build with exit status 1 and a message naming it.
Needs: the Python that runs it has bokeh (the dev extra) and setuptools + wheel.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
SCRIPTS = REPO / "build_scripts"
SITE = REPO / "site"
PYODIDE_NPM = SCRIPTS / "node_modules" / "pyodide"
PYODIDE_FILES = ("pyodide.mjs", "pyodide.asm.mjs", "pyodide.asm.wasm", "python_stdlib.zip", "pyodide-lock.json")
SW_TEMPLATE = SCRIPTS / "sw.template.js"
LICENSE_TEXTS = SCRIPTS / "licenses"


class BuildError(Exception):
    """A missing or broken input; the message says which and how to fix it."""


def need(path: Path, hint: str) -> Path:
    if not path.exists():
        raise BuildError(f"missing input: {path} ({hint})")
    return path


def sha256_of(path: Path) -> str:
    h = hashlib.sha256()
    with path.open("rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


# -- 1, 2: clean and copy the page ------------------------------------------------------------


def clean(out: Path) -> None:
    if out.exists():
        shutil.rmtree(out)
    out.mkdir(parents=True)


def copy_site(out: Path) -> None:
    need(SITE / "index.html", "the page sources live in site/")
    shutil.copytree(SITE, out, dirs_exist_ok=True)


# -- 3: the core wheel ------------------------------------------------------------------------


def build_wheel(out: Path) -> Path:
    """pip-build the wheel without build isolation (isolation would reach for the index)."""
    need(REPO / "pyproject.toml", "the core's packaging metadata")
    need(REPO / "pycore" / "acidscape" / "__init__.py", "the core package")
    wheels = out / "wheels"
    wheels.mkdir()
    with tempfile.TemporaryDirectory() as tmp:
        cmd = [sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation",
               "--no-index", "--quiet", "-w", tmp, str(REPO)]
        done = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True)
        if done.returncode != 0:
            raise BuildError("building the core wheel failed:\n" + done.stdout + done.stderr)
        built = sorted(Path(tmp).glob("acidscape-*-py3-none-any.whl"))
        if len(built) != 1:
            raise BuildError(f"expected one acidscape-*-py3-none-any.whl, found {[p.name for p in built]}")
        target = wheels / built[0].name
        shutil.copy2(built[0], target)
    shutil.rmtree(REPO / "build", ignore_errors=True)  # setuptools' scratch folder
    return target


# -- 4: vendored runtimes ---------------------------------------------------------------------


def copy_pyodide(out: Path) -> str:
    hint = "run: npm ci --prefix build_scripts"
    package = json.loads(need(PYODIDE_NPM / "package.json", hint).read_text())
    target = out / "vendor" / "pyodide"
    target.mkdir(parents=True)
    for name in PYODIDE_FILES:
        shutil.copy2(need(PYODIDE_NPM / name, hint), target / name)
    return package["version"]


def copy_bokehjs(out: Path) -> str:
    try:
        import bokeh
        from bokeh.util.paths import bokehjs_path
    except ImportError as exc:
        raise BuildError(f"bokeh is not importable ({exc}); install the dev extra: pip install -e '.[dev]'")
    source = need(Path(bokehjs_path()) / "js" / "bokeh.min.js", "shipped inside the bokeh wheel")
    target = out / "vendor" / "bokeh"
    target.mkdir(parents=True)
    shutil.copy2(source, target / "bokeh.min.js")
    return bokeh.__version__


def python_in_pyodide() -> str:
    lock = json.loads((PYODIDE_NPM / "pyodide-lock.json").read_text())
    return lock.get("info", {}).get("python", "unknown")


# -- 5: plot templates ------------------------------------------------------------------------


def write_plot_templates(out: Path) -> None:
    sys.path.insert(0, str(SCRIPTS))
    import plots

    (out / "plots.json").write_text(json.dumps(plots.templates(), separators=(",", ":")))


# -- 6: licences ------------------------------------------------------------------------------


def write_licences(out: Path, pyodide_version: str, bokeh_version: str) -> None:
    import bokeh

    folder = out / "licenses"
    folder.mkdir()
    shutil.copy2(need(REPO / "LICENSE", "Acidscape's own licence"), folder / "acidscape-LICENSE.txt")
    dist_info = Path(bokeh.__file__).resolve().parent.parent / f"bokeh-{bokeh_version}.dist-info"
    bokeh_licence = dist_info / "licenses" / "LICENSE.txt"
    if not bokeh_licence.exists():
        bokeh_licence = dist_info / "LICENSE.txt"
    shutil.copy2(need(bokeh_licence, "licence file shipped in the bokeh wheel"), folder / "bokehjs-LICENSE.txt")
    # The pyodide npm package declares MPL-2.0 in package.json but ships no licence text, and
    # python_stdlib.zip ships no CPython licence; the texts are kept in build_scripts/licenses/.
    shutil.copy2(need(LICENSE_TEXTS / "MPL-2.0.txt", "Mozilla Public License 2.0 text"), folder / "pyodide-MPL-2.0.txt")
    shutil.copy2(need(LICENSE_TEXTS / "CPython-LICENSE.txt", "Python Software Foundation licence text"),
                 folder / "cpython-LICENSE.txt")
    declared = json.loads((PYODIDE_NPM / "package.json").read_text()).get("license")
    if declared != "MPL-2.0":
        raise BuildError(f"pyodide's package.json declares licence {declared!r}; update the notices")
    (folder / "NOTICE.txt").write_text(
        "Third-party software in this folder's site\n"
        "==========================================\n\n"
        f"Pyodide {pyodide_version} (vendor/pyodide/): Mozilla Public License 2.0, see\n"
        "  pyodide-MPL-2.0.txt. Source code: the 'pyodide' package on the npm registry and\n"
        "  the Pyodide project repository. It contains CPython "
        f"{python_in_pyodide()} and its standard library\n"
        "  (python_stdlib.zip), under the Python Software Foundation licence, see cpython-LICENSE.txt.\n\n"
        f"BokehJS {bokeh_version} (vendor/bokeh/bokeh.min.js): BSD 3-Clause licence, see\n"
        "  bokehjs-LICENSE.txt (copied from the bokeh Python package).\n\n"
        "Acidscape itself (wheels/, the page): BSD 3-Clause licence, see acidscape-LICENSE.txt.\n"
    )


# -- 7, 8: manifest and service worker -----------------------------------------------------


def site_files(out: Path, skip: set[str]) -> list[str]:
    return sorted(p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file() and p.name not in skip)


def constants_fingerprint() -> dict:
    """The version of the cited constants: a hash over the data tables and constants.py."""
    core = REPO / "pycore" / "acidscape"
    tables = sorted((core / "data").glob("*.csv")) + [core / "constants.py"]
    digest = hashlib.sha256()
    for path in tables:
        digest.update(path.name.encode() + b"\0" + path.read_bytes())
    return {"sha256": digest.hexdigest(), "files": [p.relative_to(core).as_posix() for p in tables]}


def write_manifest(out: Path, versions: dict, wheel: Path) -> dict:
    files = {rel: sha256_of(out / rel) for rel in site_files(out, {"manifest.json", "sw.js"})}
    manifest = {
        "name": "acidscape",
        "versions": versions,
        "wheel": wheel.relative_to(out).as_posix(),
        "constants": constants_fingerprint(),
        "files": files,
    }
    (out / "manifest.json").write_text(json.dumps(manifest, indent=1, sort_keys=True) + "\n")
    return manifest


def write_service_worker(out: Path) -> str:
    template = need(SW_TEMPLATE, "the service worker template").read_text()
    assets = site_files(out, {"sw.js"})
    digest = hashlib.sha256()
    for rel in assets:
        digest.update(rel.encode() + b"\0" + sha256_of(out / rel).encode() + b"\n")
    cache_name = "acidscape-" + digest.hexdigest()[:12]
    asset_list = ["./"] + ["./" + rel for rel in assets]
    for marker in ("/*@ASSETS@*/", "/*@CACHE_NAME@*/"):
        if marker not in template:
            raise BuildError(f"{SW_TEMPLATE} lacks the marker {marker}")
    text = template.replace("/*@ASSETS@*/", json.dumps(asset_list, indent=2)).replace(
        "/*@CACHE_NAME@*/", json.dumps(cache_name)
    )
    (out / "sw.js").write_text(text)
    return cache_name


# -- the whole build --------------------------------------------------------------------------


def build(out: Path) -> dict:
    clean(out)
    copy_site(out)
    wheel = build_wheel(out)
    pyodide_version = copy_pyodide(out)
    bokeh_version = copy_bokehjs(out)
    write_plot_templates(out)
    write_licences(out, pyodide_version, bokeh_version)
    acidscape_version = wheel.name.split("-")[1]
    versions = {
        "acidscape": acidscape_version,
        "pyodide": pyodide_version,
        "python": python_in_pyodide(),
        "bokeh": bokeh_version,
    }
    manifest = write_manifest(out, versions, wheel)
    cache_name = write_service_worker(out)
    return {"manifest": manifest, "cache": cache_name}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=REPO / "dist", help="output folder (default: dist/)")
    args = parser.parse_args(argv)
    out = args.out.resolve()
    try:
        report = build(out)
    except BuildError as exc:
        print(f"build.py: {exc}", file=sys.stderr)
        return 1
    files = report["manifest"]["files"]
    total = 0
    for rel in files:
        size = (out / rel).stat().st_size
        total += size
        print(f"  {size:>10,}  {rel}")
    for rel in ("manifest.json", "sw.js"):
        print(f"  {(out / rel).stat().st_size:>10,}  {rel}")
    versions = ", ".join(f"{k} {v}" for k, v in report["manifest"]["versions"].items())
    print(f"wrote {len(files) + 2} files ({total / 1e6:.1f} MB) to {out}")
    print(f"versions: {versions}; service-worker cache: {report['cache']}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
