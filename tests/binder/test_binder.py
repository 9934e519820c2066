"""The Binder environment installs into a fresh venv and runs the app notebook there.

This mirrors what repo2docker does with ``binder/``: ``pip install -r binder/requirements.txt``
from the repository root in a Python of the version in ``binder/runtime.txt``, then
``binder/postBuild``; the app notebook (opened on Binder as
``?urlpath=voila/render/notebooks/app.ipynb``) must then execute without error, and a Jupyter
server of that venv must render it at that very path through its Voila extension. It needs
the package registry (about a minute and ~1 GB for a cold install), hence ``slow``.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
BINDER = REPO / "binder"
APP_NOTEBOOK = Path("notebooks") / "app.ipynb"

#: Path, under the server root, at which Binder's ``urlpath`` opens the app.
VOILA_PATH = f"voila/render/{APP_NOTEBOOK.as_posix()}"

# Parts of the working tree that are not part of the repository a hosted service would clone.
_IGNORED = shutil.ignore_patterns(
    ".git",
    ".venv",
    "venv",
    "artifacts",
    "__pycache__",
    "*.pyc",
    ".pytest_cache",
    ".mypy_cache",
    ".ruff_cache",
    ".hypothesis",
    "build",
    "dist",
    "*.egg-info",
    ".ipynb_checkpoints",
)


def _runtime_version() -> tuple[int, int]:
    text = (BINDER / "runtime.txt").read_text(encoding="utf-8").strip()
    match = re.fullmatch(r"python-(\d+)\.(\d+)", text)
    assert match, f"binder/runtime.txt must read python-X.Y; got {text!r}"
    return int(match[1]), int(match[2])


def test_binder_folder_is_complete_and_consistent() -> None:
    # repo2docker ignores root-level config when binder/ exists; both at once is an error.
    assert not (REPO / "requirements.txt").exists() and not (REPO / "environment.yml").exists()
    assert not (BINDER / "environment.yml").exists()  # it would make runtime.txt ignored
    assert _runtime_version() >= (3, 11)
    requirements = (BINDER / "requirements.txt").read_text(encoding="utf-8").splitlines()
    entries = [line.split("#")[0].strip() for line in requirements]
    entries = [e for e in entries if e]
    assert any(e.startswith(".[") or e == "." for e in entries)  # the repository itself
    pins = dict(e.split("==") for e in entries if "==" in e)
    assert {"voila", "ipywidgets", "bqplot"} <= set(pins)
    assert pins["voila"].startswith("0.5.") and pins["ipywidgets"].startswith("8.")
    post_build = (BINDER / "postBuild").read_text(encoding="utf-8")
    assert "set -e" in post_build
    assert os.access(BINDER / "postBuild", os.X_OK)
    config = json.loads((BINDER / "jupyter_config.json").read_text(encoding="utf-8"))
    assert config["VoilaConfiguration"]["show_tracebacks"] is True


@pytest.mark.slow
def test_binder_requirements_install_and_the_app_notebook_executes(tmp_path: Path) -> None:
    assert (REPO / APP_NOTEBOOK).exists(), f"{APP_NOTEBOOK} (the Binder app) is missing"
    # Binder builds with the Python of runtime.txt: use this one if it is that version, else
    # that version from the PATH (pythonX.Y); skip, saying why, only if neither exists.
    major, minor = _runtime_version()
    python = sys.executable if sys.version_info[:2] == (major, minor) else None
    python = python or shutil.which(f"python{major}.{minor}")
    if python is None:
        pytest.skip(
            f"needs Python {major}.{minor} as in binder/runtime.txt (python{major}.{minor} on "
            f"the PATH); this is {sys.version.split()[0]}"
        )
    repo = tmp_path / "repo"
    shutil.copytree(REPO, repo, ignore=_IGNORED)
    venv = tmp_path / "venv"
    subprocess.run([python, "-m", "venv", str(venv)], check=True)
    bin_dir = venv / "bin"
    env = {
        k: v
        for k, v in os.environ.items()
        if k
        not in {
            "PYTHONPATH",
            "VIRTUAL_ENV",
            "PYTHONHOME",
            "JUPYTER_PATH",
            "JUPYTER_CONFIG_DIR",
            "JUPYTER_DATA_DIR",
        }
    }
    env["PATH"] = f"{bin_dir}{os.pathsep}{env.get('PATH', '')}"
    env["VIRTUAL_ENV"] = str(venv)
    env["JUPYTER_PLATFORM_DIRS"] = "1"
    env["HOME"] = str(tmp_path / "home")  # no user-level Jupyter config or kernels leak in

    def run(*cmd: str | Path, timeout: float = 900) -> subprocess.CompletedProcess[str]:
        done = subprocess.run(
            [str(c) for c in cmd],
            cwd=repo,
            env=env,
            text=True,
            capture_output=True,
            timeout=timeout,
        )
        assert done.returncode == 0, f"{cmd} failed:\n{done.stdout[-3000:]}\n{done.stderr[-3000:]}"
        return done

    run(bin_dir / "python", "-m", "pip", "install", "--quiet", "--upgrade", "pip")
    run(bin_dir / "python", "-m", "pip", "install", "--quiet", "-r", "binder/requirements.txt")
    run(bin_dir / "python", "-m", "pip", "check")
    run("bash", "binder/postBuild")

    # The package comes from the venv, not from the source tree of the test run.
    where = run(bin_dir / "python", "-c", "import hairtrigger; print(hairtrigger.__file__)")
    assert str(venv) in where.stdout
    config = json.loads((venv / "etc" / "jupyter" / "jupyter_config.json").read_text())
    assert config["VoilaConfiguration"]["show_tracebacks"] is True
    kernels = run(bin_dir / "jupyter", "kernelspec", "list", "--json")
    python3 = json.loads(kernels.stdout)["kernelspecs"]["python3"]["spec"]["argv"][0]
    assert python3 in {"python", str(bin_dir / "python")} or str(venv) in python3

    executed = tmp_path / "explore-executed.ipynb"
    run(
        bin_dir / "jupyter",
        "nbconvert",
        "--to",
        "notebook",
        "--execute",
        APP_NOTEBOOK,
        "--output",
        executed,
        "--ExecutePreprocessor.timeout=300",
        "--ExecutePreprocessor.kernel_name=python3",
        timeout=900,
    )
    notebook = json.loads(executed.read_text(encoding="utf-8"))
    errors = [
        out
        for cell in notebook["cells"]
        for out in cell.get("outputs", [])
        if out.get("output_type") == "error"
    ]
    assert errors == []
    shown = [out.get("data", {}) for cell in notebook["cells"] for out in cell.get("outputs", [])]
    assert any("application/vnd.jupyter.widget-view+json" in data for data in shown)

    # What Binder's address opens: the venv's Jupyter server renders the app with Voila.
    port = _free_port()
    server = subprocess.Popen(  # noqa: S603 - the venv's own Jupyter
        [
            str(bin_dir / "jupyter"),
            "server",
            "--no-browser",
            "--allow-root",
            "--ServerApp.ip=127.0.0.1",
            f"--ServerApp.port={port}",
            "--ServerApp.port_retries=0",
            "--IdentityProvider.token=",
            f"--ServerApp.root_dir={repo}",
        ],
        cwd=repo,
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        start_new_session=True,
    )
    try:
        page = _get_when_up(f"http://127.0.0.1:{port}/{VOILA_PATH}", server, timeout=300)
    finally:
        _stop(server)
    assert "application/vnd.jupyter.widget-view+json" in page  # the executed app's widgets
    assert "hairtrigger" in page
    assert "application/vnd.jupyter.stderr" not in page  # no error or traceback output


def _free_port() -> int:
    import socket

    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return int(sock.getsockname()[1])


def _get_when_up(url: str, server: subprocess.Popen[str], timeout: float) -> str:
    """GET `url` once the server answers (Voila runs the notebook before replying)."""
    import time
    import urllib.error
    import urllib.request

    deadline = time.monotonic() + timeout
    while True:
        if server.poll() is not None:
            err = server.stderr.read() if server.stderr else ""
            raise AssertionError(f"the Jupyter server exited:\n{err[-3000:]}")
        try:
            with urllib.request.urlopen(url, timeout=timeout) as response:  # noqa: S310
                assert response.status == 200, response.status
                return response.read().decode("utf-8")
        except urllib.error.HTTPError as exc:
            raise AssertionError(f"{url}: HTTP {exc.code}") from exc
        except OSError:
            if time.monotonic() > deadline:
                raise
            time.sleep(0.5)


def _stop(server: subprocess.Popen[str]) -> None:
    """Stop the server and the kernels it started (its own process group), by its PID."""
    import signal

    if server.poll() is None:
        os.killpg(server.pid, signal.SIGTERM)
        try:
            server.wait(timeout=20)
        except subprocess.TimeoutExpired:
            os.killpg(server.pid, signal.SIGKILL)
            server.wait()
    try:
        os.killpg(server.pid, signal.SIGKILL)  # kernels left behind in the group
    except (ProcessLookupError, PermissionError):
        pass
