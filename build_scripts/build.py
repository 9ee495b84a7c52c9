"""Build the static Acidscape site into dist/ — no network, no bundler.

Run from anywhere:  python build_scripts/build.py [--out DIR] [--snapshot gzip|identity|none] [--site DIR]

Steps, in order:
 1. clean the output folder (default: <repo>/dist);
 2. copy site/ (HTML, CSS, ES modules);
 3. build the core wheel acidscape-<version>-py3-none-any.whl into wheels/, reproducibly
    (sorted entries, fixed time stamps from SOURCE_DATE_EPOCH or 1980-01-01, fixed modes);
 4. copy the pinned Pyodide core (build_scripts/node_modules/pyodide, from
    ``npm ci --prefix build_scripts``) into vendor/pyodide/ and BokehJS from the
    installed Python bokeh into vendor/bokeh/, so the two Bokeh halves match;
 4b. make the Pyodide memory snapshot (build_scripts/snapshot.mjs, in Node) after the whole
    core is imported, its data loaded and the first views' requests answered (the starting
    water, the worked examples), into snapshots/ (without its zero pages, gzip level 1 by default);
 5. write plots.json (Bokeh templates from build_scripts/plots.py);
 6. write the third-party licence notices into licenses/;
 7. write manifest.json (versions, wheel path, snapshot and its key, sha256 of every file);
 8. write sw.js from build_scripts/sw.template.js (assets with their integrity hashes, in
    three caches named by content: vendor, snapshot, app);
 9. print what it wrote.

The same tree gives the same bytes in every output file, so an unchanged build keeps its
service-worker cache names and returning visitors download nothing again.
Any missing input stops the build with exit status 1 and a message naming it.
Needs: the Python that runs it has bokeh (the dev extra) and setuptools + wheel; Node.js 18+.
"""

from __future__ import annotations

import argparse
import base64
import gzip
import hashlib
import json
import os
import shutil
import struct
import subprocess
import sys
import tempfile
import time
import zipfile
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


def copy_site(out: Path, site: Path = SITE) -> None:
    need(site / "index.html", "the page sources live in site/")
    shutil.copytree(site, out, dirs_exist_ok=True)


# -- 3: the core wheel ------------------------------------------------------------------------


# Zip entries carry this time when SOURCE_DATE_EPOCH is not set: the earliest a zip can store
# (1980-01-01 00:00 UTC), so an unchanged tree always gives the same wheel bytes.
DEFAULT_EPOCH = 315532800


def source_date_epoch() -> int:
    """SOURCE_DATE_EPOCH from the environment [s since 1970], or DEFAULT_EPOCH."""
    raw = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if not raw:
        return DEFAULT_EPOCH
    try:
        return max(int(raw), DEFAULT_EPOCH)
    except ValueError:
        raise BuildError(f"SOURCE_DATE_EPOCH={raw!r} is not a whole number of seconds")


def normalise_wheel(source: Path, target: Path, epoch: int) -> None:
    """Rewrite a wheel so its bytes depend on the file contents only.

    Entries in sorted order (the .dist-info folder last, RECORD as the very last entry, as the
    wheel format recommends), every time stamp set to ``epoch``, every file mode 0644, stored
    without compression: the worker copies the files out of it while Pyodide loads (about
    0.4 MB; inflating some forty entries there competed with the runtime for the worker's
    thread). The contents (and so RECORD's hashes) are not touched.
    """
    stamp = time.gmtime(epoch)[:6]
    with zipfile.ZipFile(source) as zin:
        names = [n for n in zin.namelist() if not n.endswith("/")]
        contents = {n: zin.read(n) for n in names}

    def order(name: str):
        in_dist_info = ".dist-info/" in name
        return (in_dist_info, in_dist_info and name.endswith("/RECORD"), name)

    with zipfile.ZipFile(target, "w") as zout:
        for name in sorted(names, key=order):
            info = zipfile.ZipInfo(name, date_time=stamp)
            info.external_attr = 0o100644 << 16
            info.create_system = 3  # Unix, so the mode above is read back the same everywhere
            info.compress_type = zipfile.ZIP_STORED
            zout.writestr(info, contents[name])


def build_wheel(out: Path) -> Path:
    """pip-build the wheel without build isolation (isolation would reach for the index), then
    normalise it (``normalise_wheel``) so two builds of the same tree give identical bytes."""
    need(REPO / "pyproject.toml", "the core's packaging metadata")
    need(REPO / "pycore" / "acidscape" / "__init__.py", "the core package")
    wheels = out / "wheels"
    wheels.mkdir()
    epoch = source_date_epoch()
    with tempfile.TemporaryDirectory() as tmp:
        cmd = [sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation",
               "--no-index", "--quiet", "-w", tmp, str(REPO)]
        env = {**os.environ, "SOURCE_DATE_EPOCH": str(epoch)}
        done = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, env=env)
        if done.returncode != 0:
            raise BuildError("building the core wheel failed:\n" + done.stdout + done.stderr)
        built = sorted(Path(tmp).glob("acidscape-*-py3-none-any.whl"))
        if len(built) != 1:
            raise BuildError(f"expected one acidscape-*-py3-none-any.whl, found {[p.name for p in built]}")
        target = wheels / built[0].name
        normalise_wheel(built[0], target, epoch)
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


# -- 4b: the memory snapshot the worker boots from -------------------------------------------

SNAPSHOT_SCRIPT = SCRIPTS / "snapshot.mjs"
SNAPSHOT_ENCODINGS = ("gzip", "identity")


def snapshot_key(pyodide_version: str, wheel: Path) -> str:
    """What a snapshot was made from, as the exact JSON text stored inside it and in the manifest."""
    return json.dumps({"pyodide": pyodide_version, "wheel_sha256": sha256_of(wheel)}, sort_keys=True)


# The heap is stored without its all-zero pages (about half of them): half the bytes to
# download and to inflate. Layout (little-endian u32): "ASNP", version 1, page size, heap size,
# number of runs, then per run (first page, page count), then the pages of every run in order.
# site/snapshot-image.js expands it in the worker.
IMAGE_MAGIC = b"ASNP"
IMAGE_PAGE = 4096


def pack_image(heap: bytes) -> bytes:
    """The heap without its all-zero pages (layout above)."""
    zero = bytes(IMAGE_PAGE)
    pages = (len(heap) + IMAGE_PAGE - 1) // IMAGE_PAGE

    def empty(i: int) -> bool:
        chunk = heap[i * IMAGE_PAGE:(i + 1) * IMAGE_PAGE]
        return chunk == zero[: len(chunk)]

    runs, i = [], 0
    while i < pages:
        if empty(i):
            i += 1
            continue
        first = i
        while i < pages and not empty(i):
            i += 1
        runs.append((first, i - first))
    header = IMAGE_MAGIC + struct.pack("<4I", 1, IMAGE_PAGE, len(heap), len(runs))
    header += b"".join(struct.pack("<2I", first, count) for first, count in runs)
    body = b"".join(heap[first * IMAGE_PAGE:(first + count) * IMAGE_PAGE] for first, count in runs)
    return header + body


def unpack_image(image: bytes) -> bytes:
    """The heap back from ``pack_image`` (for checks; the worker does this in JavaScript)."""
    if image[:4] != IMAGE_MAGIC:
        raise ValueError("not a packed snapshot image")
    version, page, size, nruns = struct.unpack_from("<4I", image, 4)
    if version != 1:
        raise ValueError(f"packed snapshot image version {version}")
    heap = bytearray(size)
    at = 20 + 8 * nruns
    for r in range(nruns):
        first, count = struct.unpack_from("<2I", image, 20 + 8 * r)
        start, end = first * page, min(size, (first + count) * page)
        heap[start:end] = image[at:at + end - start]
        at += end - start
    if at != len(image):
        raise ValueError("packed snapshot image has trailing bytes")
    return bytes(heap)


def make_snapshot(out: Path, wheel: Path, pyodide_version: str, encoding: str, site: Path = SITE) -> dict:
    """Boot the pinned Pyodide in Node, import the whole core, load its data, answer the first
    views' requests (the starting water of ``site``/water-start.js and the worked examples of
    ``site``/presets.json), save the heap.

    The heap is packed without its zero pages (``pack_image``) and written as
    snapshots/acidscape-<sha256[:12]>.img (identity) or .img.gz (gzip level 1, no name or time
    in the header, inflated in the worker with DecompressionStream as it arrives). Returns the
    manifest's "snapshot" entry; the same ``key`` text is stored inside the heap, so the worker
    can tell after booting whether the image belongs to this manifest.
    """
    node = shutil.which("node")
    if node is None:
        raise BuildError("node is not on PATH: the memory snapshot is made with Node.js (18+)")
    need(SNAPSHOT_SCRIPT, "the snapshot script")
    key = snapshot_key(pyodide_version, wheel)
    epoch = source_date_epoch()
    with tempfile.TemporaryDirectory() as tmp:
        raw = Path(tmp) / "snapshot.bin"
        env = {**os.environ, "SOURCE_DATE_EPOCH": str(epoch)}
        done = subprocess.run([node, str(SNAPSHOT_SCRIPT), str(wheel), str(raw), key, str(site)], capture_output=True,
                              text=True, env=env, timeout=600)
        if done.returncode != 0:
            # Node echoes the minified source line of the throw: keep the readable lines only.
            lines = [line for line in (done.stdout + done.stderr).splitlines() if len(line) < 400]
            raise BuildError("making the memory snapshot failed:\n" + "\n".join(lines[-60:]))
        report = json.loads(done.stdout.strip().splitlines()[-1])
        heap = raw.read_bytes()
    image = pack_image(heap)
    if encoding == "gzip":
        data_out, suffix = gzip.compress(image, compresslevel=1, mtime=0), ".img.gz"
    else:
        data_out, suffix = image, ".img"
    folder = out / "snapshots"
    folder.mkdir()
    target = folder / f"acidscape-{hashlib.sha256(data_out).hexdigest()[:12]}{suffix}"
    target.write_bytes(data_out)
    return {
        "file": target.relative_to(out).as_posix(),
        "encoding": encoding,
        "bytes": len(heap),
        "image_bytes": len(image),
        "key": key,
        "modules": len(report["modules"]),
        "skipped_modules": report["skipped"],
        "loaders": report["loaders"],
        "warmed": len(report["warmed"]),
        "kept_answer_chars": report.get("kept_chars", 0),
        "start_request": report["start_request"],
    }


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


def write_manifest(out: Path, versions: dict, wheel: Path, snapshot: dict | None) -> dict:
    files = {rel: sha256_of(out / rel) for rel in site_files(out, {"manifest.json", "sw.js"})}
    manifest = {
        "name": "acidscape",
        "versions": versions,
        "wheel": wheel.relative_to(out).as_posix(),
        "snapshot": snapshot,
        "constants": constants_fingerprint(),
        "files": files,
    }
    (out / "manifest.json").write_text(json.dumps(manifest, indent=1, sort_keys=True) + "\n")
    return manifest


# The service worker keeps each group in its own cache, named by a hash of that group's file
# names and contents only. A build that changes only the core or the page keeps the vendor
# cache's name, and the new worker finds those files already cached instead of fetching them.
CACHE_GROUPS = (("vendor", "vendor/"), ("snapshot", "snapshots/"), ("app", ""))


def cache_group(rel: str) -> str:
    return next(group for group, prefix in CACHE_GROUPS if rel.startswith(prefix))


def integrity(path: Path) -> str:
    """Subresource-integrity text (sha256) of a file, checked by fetch() in the service worker."""
    return "sha256-" + base64.b64encode(bytes.fromhex(sha256_of(path))).decode()


def write_service_worker(out: Path) -> dict:
    """Fill sw.js from the template; returns {"build": ..., "caches": {group: name}}."""
    template = need(SW_TEMPLATE, "the service worker template").read_text()
    assets = site_files(out, {"sw.js"})
    groups = {group: [] for group, _ in CACHE_GROUPS}
    for rel in assets:
        groups[cache_group(rel)].append(("./" + rel, integrity(out / rel)))
    groups["app"].insert(0, ("./", integrity(out / "index.html")))
    caches = {}
    whole = hashlib.sha256()
    for group, entries in groups.items():
        digest = hashlib.sha256()
        for url, check in entries:
            digest.update(url.encode() + b"\0" + check.encode() + b"\n")
        name = f"acidscape-{group}-{digest.hexdigest()[:12]}"
        caches[group] = {"name": name, "assets": [list(entry) for entry in entries]}
        whole.update(name.encode() + b"\n")
    build_id = whole.hexdigest()[:12]
    for marker in ("/*@CACHES@*/", "/*@BUILD@*/"):
        if marker not in template:
            raise BuildError(f"{SW_TEMPLATE} lacks the marker {marker}")
    text = template.replace("/*@CACHES@*/", json.dumps(caches, indent=1)).replace(
        "/*@BUILD@*/", json.dumps(build_id)
    )
    (out / "sw.js").write_text(text)
    return {"build": build_id, "caches": {group: c["name"] for group, c in caches.items()}}


# -- the whole build --------------------------------------------------------------------------


def build(out: Path, snapshot_encoding: str | None = "gzip", site: Path = SITE) -> dict:
    """Build the site into ``out`` from the page sources in ``site``; ``snapshot_encoding``
    None leaves the snapshot out (the worker then boots Pyodide the ordinary way)."""
    clean(out)
    copy_site(out, site)
    wheel = build_wheel(out)
    pyodide_version = copy_pyodide(out)
    bokeh_version = copy_bokehjs(out)
    snapshot = make_snapshot(out, wheel, pyodide_version, snapshot_encoding, site) if snapshot_encoding else None
    write_plot_templates(out)
    write_licences(out, pyodide_version, bokeh_version)
    acidscape_version = wheel.name.split("-")[1]
    versions = {
        "acidscape": acidscape_version,
        "pyodide": pyodide_version,
        "python": python_in_pyodide(),
        "bokeh": bokeh_version,
    }
    manifest = write_manifest(out, versions, wheel, snapshot)
    service_worker = write_service_worker(out)
    return {"manifest": manifest, **service_worker}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=REPO / "dist", help="output folder (default: dist/)")
    parser.add_argument("--snapshot", choices=SNAPSHOT_ENCODINGS + ("none",), default="gzip",
                        help="how the Pyodide memory snapshot is shipped (default gzip; none: no snapshot, "
                             "the page boots Pyodide the ordinary way)")
    parser.add_argument("--site", type=Path, default=SITE, help="page sources (default: site/)")
    args = parser.parse_args(argv)
    out = args.out.resolve()
    try:
        report = build(out, None if args.snapshot == "none" else args.snapshot, args.site.resolve())
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
    caches = ", ".join(report["caches"].values())
    print(f"versions: {versions}; build {report['build']}; service-worker caches: {caches}")
    snapshot = report["manifest"]["snapshot"]
    if snapshot:
        print(f"snapshot: {snapshot['file']} ({snapshot['bytes'] / 1e6:.1f} MB in memory), "
              f"{snapshot['modules']} core modules imported, loaders called: {', '.join(snapshot['loaders'])}; "
              f"{snapshot['warmed']} requests of the first views answered")
        if snapshot["skipped_modules"]:
            print(f"snapshot: not imported (missing under Pyodide): {', '.join(snapshot['skipped_modules'])}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
