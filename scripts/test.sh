#!/usr/bin/env bash
# Set everything up in ./.venv and run the whole test suite (unit, reference, property, CLI,
# widget, notebook and browser tests). Extra arguments go to the first pytest run.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/_venv.sh
ensure_venv test

# Browser tests drive Debian's chromium through Playwright (never a browser download).
if ! command -v chromium >/dev/null 2>&1; then
  if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
    echo "== installing Debian's chromium for the browser tests"
    apt-get update -q >/dev/null && DEBIAN_FRONTEND=noninteractive apt-get install -y -q chromium >/dev/null
  else
    echo "error: the browser tests need Debian's chromium: run 'sudo apt-get install chromium' first" >&2
    exit 1
  fi
fi

echo "== unit, reference, property, command-line and widget tests"
.venv/bin/python -m pytest -m "not browser" "$@"
# A separate process: Playwright's sync API leaves an event loop running in the main thread,
# which changes how widget debouncing behaves in any test that runs after it.
echo "== browser tests (headless Chromium)"
.venv/bin/python -m pytest -m browser "$@"
if compgen -G "notebooks/*.ipynb" >/dev/null; then
  echo "== notebooks (executed under nbval)"
  .venv/bin/python -m pytest --nbval-lax notebooks
fi
