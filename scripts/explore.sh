#!/usr/bin/env bash
# Set everything up in ./.venv and open the explorer (JupyterLab on 127.0.0.1).
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/_venv.sh
ensure_venv app
exec .venv/bin/hairtrigger evaluate "${1:-example:scarce_enzyme_switch}"
