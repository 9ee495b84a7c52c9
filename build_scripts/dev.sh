#!/usr/bin/env bash
# Acidscape developer entry points. Run from anywhere:
#
#   bash build_scripts/dev.sh setup-serve [PORT]   set up, build, serve dist/ on 127.0.0.1 (default 8000)
#   bash build_scripts/dev.sh setup-test [ARGS]    set up (+ Debian chromium if missing), build,
#                                                  then pytest from the repo root (extra ARGS go to pytest)
#   bash build_scripts/dev.sh build                build dist/ with the existing setup
#   bash build_scripts/dev.sh fast [ARGS]          the fast layers only: Python unit tests, doctests and
#                                                  the Node tests of the page's pure modules (no build,
#                                                  no browser; about a minute)
#
# "Set up" = a .venv with the project installed editable with its dev extra, and the pinned
# Pyodide from npm ci --prefix build_scripts. Both steps are skipped when their inputs
# (pyproject.toml, package-lock.json) have not changed since the last run, so a second run is quick.
set -euo pipefail

REPO="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$REPO"
VENV="$REPO/.venv"
PY="$VENV/bin/python"

say() { printf '\n== %s\n' "$*"; }

stamp_of() { cat "$@" | sha256sum | cut -c1-16; }

setup_python() {
  local host="${PYTHON:-python3}"
  if [ ! -x "$PY" ]; then
    say "creating .venv with $($host --version)"
    "$host" -m venv "$VENV"
  fi
  local want have
  want="$(stamp_of pyproject.toml)"
  have="$(cat "$VENV/.acidscape-dev-stamp" 2>/dev/null || true)"
  if [ "$want" != "$have" ] || ! "$PY" -c "import acidscape, bokeh, pytest_playwright" 2>/dev/null; then
    say "installing acidscape (editable) with its dev extra into .venv"
    "$PY" -m pip install --quiet --upgrade pip
    "$PY" -m pip install --quiet -e ".[dev]"
    echo "$want" > "$VENV/.acidscape-dev-stamp"
  else
    say ".venv is up to date"
  fi
}

setup_node() {
  command -v npm >/dev/null || { echo "npm is required (Node.js 18+)" >&2; exit 1; }
  local want have
  want="$(stamp_of build_scripts/package-lock.json)"
  have="$(cat build_scripts/node_modules/.acidscape-stamp 2>/dev/null || true)"
  if [ "$want" != "$have" ] || [ ! -f build_scripts/node_modules/pyodide/pyodide.asm.wasm ]; then
    say "npm ci --prefix build_scripts (pinned pyodide)"
    npm ci --prefix build_scripts --no-audit --no-fund
    echo "$want" > build_scripts/node_modules/.acidscape-stamp
  else
    say "build_scripts/node_modules is up to date"
  fi
}

setup_chromium() {
  if [ -x /usr/bin/chromium ]; then
    say "chromium present: /usr/bin/chromium"
    return
  fi
  local sudo=""
  if [ "$(id -u)" != 0 ]; then
    command -v sudo >/dev/null || { echo "need root or sudo to apt-get install chromium" >&2; exit 1; }
    sudo="sudo"
  fi
  say "installing Debian chromium (apt-get)"
  $sudo apt-get update
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y chromium
}

build() {
  say "building dist/"
  "$PY" build_scripts/build.py
}

cmd="${1:-}"
shift || true
case "$cmd" in
  setup-serve)
    setup_python
    setup_node
    build
    say "serving"
    exec "$PY" build_scripts/serve.py "${1:-8000}"
    ;;
  setup-test)
    setup_python
    setup_node
    setup_chromium
    build
    say "pytest (unit, doctests, e2e)"
    set +e
    "$PY" -m pytest "$@"
    status=$?
    set -e
    if [ "$status" = 5 ]; then echo "pytest collected no tests: failing" >&2; fi
    exit "$status"
    ;;
  build)
    build
    ;;
  fast)
    setup_python
    say "pytest, fast layers (not e2e)"
    exec "$PY" -m pytest -q -m "not e2e" "$@"
    ;;
  *)
    sed -n '2,12p' "$0" | sed 's/^# \{0,1\}//'
    exit 2
    ;;
esac
