"""Serve a built Acidscape folder (default: dist/) on 127.0.0.1.

Usage:  python build_scripts/serve.py [PORT] [--dir FOLDER]

PORT defaults to 8000; 0 picks a free port. The MIME types that matter are set
explicitly (Pyodide fails on a .wasm not served as application/wasm, and browsers
refuse a module script without a JavaScript type), whatever the host's mime.types says.
"""

from __future__ import annotations

import argparse
import sys
from functools import partial
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent

MIME_TYPES = {
    ".html": "text/html; charset=utf-8",
    ".js": "text/javascript; charset=utf-8",
    ".mjs": "text/javascript; charset=utf-8",
    ".css": "text/css; charset=utf-8",
    ".json": "application/json",
    ".wasm": "application/wasm",
    ".zip": "application/zip",
    ".whl": "application/zip",
    ".txt": "text/plain; charset=utf-8",
}


class SiteHandler(SimpleHTTPRequestHandler):
    """Static files with fixed MIME types; no caching headers beyond the defaults."""

    extensions_map = {**SimpleHTTPRequestHandler.extensions_map, **MIME_TYPES}

    def log_message(self, format, *args):  # quieter than the default: one short line each
        sys.stderr.write("%s %s\n" % (self.log_date_time_string(), format % args))


def make_server(folder: Path, port: int = 0, quiet: bool = False) -> ThreadingHTTPServer:
    """An HTTP server for ``folder`` on 127.0.0.1:``port`` (not started)."""
    handler = partial(SiteHandler, directory=str(folder))
    if quiet:
        handler = partial(QuietHandler, directory=str(folder))
    return ThreadingHTTPServer(("127.0.0.1", port), handler)


class QuietHandler(SiteHandler):
    def log_message(self, format, *args):
        pass


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Serve the built Acidscape site on 127.0.0.1.")
    parser.add_argument("port", nargs="?", type=int, default=8000, help="port (default 8000; 0 = any free port)")
    parser.add_argument("--dir", type=Path, default=REPO / "dist", help="folder to serve (default: dist/)")
    args = parser.parse_args(argv)
    folder = args.dir.resolve()
    if not (folder / "index.html").is_file():
        print(f"serve.py: {folder} has no index.html; build first: python build_scripts/build.py", file=sys.stderr)
        return 1
    server = make_server(folder, args.port)
    host, port = server.server_address[:2]
    print(f"Serving {folder} at http://{host}:{port}/  (Ctrl+C stops)", flush=True)
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        pass
    finally:
        server.server_close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
