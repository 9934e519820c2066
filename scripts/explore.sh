#!/usr/bin/env bash
# Set everything up in ./.venv and open the explorer notebook in JupyterLab (on 127.0.0.1).
# Arguments go to `hairtrigger explore` (for example a snapshot file, or --app voila).
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/_venv.sh
ensure_venv app
exec .venv/bin/hairtrigger explore "$@"
