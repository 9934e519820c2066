# Shared by scripts/*.sh: create ./.venv with Python >= 3.11 and install the project with an extra.
ensure_venv() {
  local extra="$1" py=""
  for candidate in "${PYTHON:-}" python3.11 python3.12 python3.13 python3; do
    if [ -n "$candidate" ] && command -v "$candidate" >/dev/null 2>&1 \
       && "$candidate" -c 'import sys; sys.exit(sys.version_info < (3, 11))' 2>/dev/null; then
      py="$candidate"; break
    fi
  done
  if [ -z "$py" ]; then
    echo "error: hairtrigger needs Python 3.11 or newer (set PYTHON=/path/to/python3.11)" >&2
    exit 1
  fi
  if [ ! -x .venv/bin/python ]; then
    echo "== creating .venv with $py"
    "$py" -m venv .venv
  fi
  echo "== installing hairtrigger[$extra] into .venv"
  .venv/bin/python -m pip install -q --upgrade pip
  .venv/bin/python -m pip install -q -e ".[$extra]"
}
