"""Make executed notebooks reproducible to commit: fixed widget model ids, no run metadata.

Run after ``jupyter nbconvert --execute --inplace``::

    python scripts/sanitize_notebooks.py notebooks/*.ipynb

Widget model ids are random per run (nbval skips them, but they churn every diff); they become
``"sanitised"``. Cell execution timings and ``execution`` metadata are dropped. Everything nbval
compares (stream output of ``# NBVAL_CHECK_OUTPUT`` cells) is left untouched.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

WIDGET_VIEW = "application/vnd.jupyter.widget-view+json"


def sanitize(path: Path) -> bool:
    """Sanitise one notebook in place; return True if it changed."""
    text = path.read_text(encoding="utf-8")
    notebook = json.loads(text)
    for cell in notebook.get("cells", []):
        cell.get("metadata", {}).pop("execution", None)
        for output in cell.get("outputs", []):
            view = output.get("data", {}).get(WIDGET_VIEW)
            if isinstance(view, dict) and "model_id" in view:
                view["model_id"] = "sanitised"
    notebook.get("metadata", {}).pop("widgets", None)
    new = json.dumps(notebook, indent=1, ensure_ascii=False) + "\n"
    if new != text:
        path.write_text(new, encoding="utf-8")
        return True
    return False


def main(paths: list[str]) -> int:
    """Sanitise every notebook named on the command line."""
    for name in paths:
        changed = sanitize(Path(name))
        print(f"{name}: {'sanitised' if changed else 'unchanged'}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
