"""``hairtrigger app``: the generated app folder and the errors it reports before serving."""

from __future__ import annotations

import importlib.util
import json
import sys
from pathlib import Path

import pytest

from hairtrigger.cli import main
from hairtrigger.commands import app


def test_app_folder_has_a_notebook_and_a_kernel_running_this_python(tmp_path: Path) -> None:
    notebook = app.write_app_folder(tmp_path)
    nb = json.loads(notebook.read_text(encoding="utf-8"))
    assert nb["nbformat"] == 4
    assert nb["metadata"]["kernelspec"]["name"] == app.KERNEL_NAME
    (cell,) = nb["cells"]
    assert "explorer_app()" in "".join(cell["source"])
    spec = json.loads(
        (tmp_path / "jupyter" / "kernels" / app.KERNEL_NAME / "kernel.json").read_text(
            encoding="utf-8"
        )
    )
    assert spec["argv"][0] == sys.executable
    assert "{connection_file}" in spec["argv"]


def test_voila_is_bound_to_loopback_with_tracebacks_shown(tmp_path: Path) -> None:
    command = app.voila_command(tmp_path / "x.ipynb", 18123)
    assert "--Voila.ip=127.0.0.1" in command
    assert "--port=18123" in command
    assert "--show_tracebacks=True" in command
    assert "--no-browser" in command


def test_environment_passes_the_snapshot_and_the_kernel_spec(tmp_path: Path) -> None:
    snap = tmp_path / "s.json"
    env = app.app_environment(tmp_path, snap, base={"HAIRTRIGGER_SNAPSHOT": "old"})
    assert env[app.SNAPSHOT_ENV] == str(snap.resolve())
    assert env["JUPYTER_PATH"].split(":")[0] == str(tmp_path / "jupyter")
    assert app.SNAPSHOT_ENV not in app.app_environment(
        tmp_path, None, base={app.SNAPSHOT_ENV: "stale"}
    )


def test_free_port_is_bindable() -> None:
    import socket

    port = app.free_port()
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", port))


def test_bad_snapshot_fails_before_serving(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    bad = tmp_path / "bad.json"
    bad.write_text("{not json", encoding="utf-8")
    assert main(["app", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("hairtrigger app: error: ") and "bad.json" in err
    assert err.count("\n") == 1


def test_missing_voila_gives_the_install_command(
    monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    real = importlib.util.find_spec
    monkeypatch.setattr(
        importlib.util, "find_spec", lambda name, *a: None if name == "voila" else real(name, *a)
    )
    assert main(["app"]) == 2
    assert "hairtrigger[app]" in capsys.readouterr().err


@pytest.mark.parametrize("port", ["0", "70000", "http"])
def test_bad_port_is_refused(port: str, capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["app", "--port", port])
    assert "--port" in capsys.readouterr().err
