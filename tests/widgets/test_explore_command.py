"""``hairtrigger explore``: builds a loopback JupyterLab (or Voila) command on the notebook."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from hairtrigger.cli import main
from hairtrigger.commands import explore
from hairtrigger.commands.explore import NOTEBOOK_NAME, notebook_to_open, source_notebook

ROOT = Path(__file__).resolve().parents[2]


def test_help(cli_env: dict[str, str]) -> None:
    out = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "explore", "--help"],
        capture_output=True,
        text=True,
        env=cli_env,
        check=True,
    )
    assert "JupyterLab" in out.stdout and "SNAPSHOT" in out.stdout


def test_dry_run_opens_the_repository_notebook(capsys: pytest.CaptureFixture[str]) -> None:
    assert source_notebook() == ROOT / "notebooks" / NOTEBOOK_NAME
    assert main(["explore", "--dry-run", "--no-browser", "--port", "8123"]) == 0
    lines = capsys.readouterr().out.splitlines()
    command = lines[-1]
    assert "-m jupyterlab" in command and "--ip=127.0.0.1" in command
    assert str(ROOT / "notebooks" / NOTEBOOK_NAME) in command
    assert "--no-browser" in command and "--port=8123" in command
    is_root = hasattr(os, "geteuid") and os.geteuid() == 0
    assert ("--allow-root" in command) == is_root


def test_snapshot_is_checked_and_passed_on(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["explore", "example:scarce_enzyme_switch", "--dry-run"]) == 0
    out = capsys.readouterr().out
    assert "HAIRTRIGGER_SNAPSHOT=" in out and "scarce_enzyme_switch.json" in out


@pytest.mark.parametrize(
    "argument, message",
    [
        ("missing.json", "no such file"),
        ("example:nope", "no example snapshot"),
    ],
)
def test_bad_snapshot_is_one_line_exit_2(
    argument: str, message: str, cli_env: dict[str, str], tmp_path: Path
) -> None:
    out = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "explore", argument, "--dry-run"],
        capture_output=True,
        text=True,
        env=cli_env,
        cwd=tmp_path,
    )
    assert out.returncode == 2
    assert message in out.stderr and len(out.stderr.strip().splitlines()) == 1
    assert "Traceback" not in out.stderr


def test_invalid_snapshot_file_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "hairtrigger.snapshot", "version": 1}', encoding="utf-8")
    assert main(["explore", str(bad), "--dry-run"]) == 2
    assert "bad.json" in capsys.readouterr().err


def test_voila_app(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["explore", "--app", "voila", "--dry-run"]) == 0
    command = capsys.readouterr().out.splitlines()[-1]
    assert "-m voila" in command and "--Voila.ip=127.0.0.1" in command


def test_working_copy_is_made_once_and_kept(tmp_path: Path) -> None:
    folder = tmp_path / "work"
    path, note = notebook_to_open(folder, fresh=False, dry_run=True)
    assert not folder.exists() and "would copy" in note
    path, note = notebook_to_open(folder, fresh=False)
    assert path == folder / NOTEBOOK_NAME and path.read_bytes() == source_notebook().read_bytes()
    path.write_text("{}", encoding="utf-8")  # the user's edits
    again, note = notebook_to_open(folder, fresh=False)
    assert again.read_text(encoding="utf-8") == "{}" and "your copy" in note
    notebook_to_open(folder, fresh=True)
    assert path.read_bytes() == source_notebook().read_bytes()


def test_installed_package_copies_the_packaged_notebook(tmp_path: Path, monkeypatch) -> None:
    packaged = tmp_path / "site" / "hairtrigger" / "_notebooks" / NOTEBOOK_NAME
    packaged.parent.mkdir(parents=True)
    packaged.write_text('{"cells": []}', encoding="utf-8")
    monkeypatch.setattr(explore, "source_notebook", lambda: None)
    monkeypatch.setattr(explore, "packaged_notebook", lambda: packaged)
    monkeypatch.chdir(tmp_path)
    path, note = notebook_to_open(None, fresh=False)
    assert path == Path("hairtrigger-explore") / NOTEBOOK_NAME
    assert path.read_text(encoding="utf-8") == '{"cells": []}'


def test_the_wheel_ships_the_notebook() -> None:
    # pyproject force-includes the repository notebook as package data.
    import tomllib

    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    include = config["tool"]["hatch"]["build"]["targets"]["wheel"]["force-include"]
    assert include["notebooks/explore.ipynb"] == "hairtrigger/_notebooks/explore.ipynb"
    assert (ROOT / "notebooks" / "explore.ipynb").is_file()


def test_bad_port(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["explore", "--port", "0", "--dry-run"]) == 2
    assert "--port" in capsys.readouterr().err


def test_missing_jupyterlab_is_a_clear_error(monkeypatch, capsys) -> None:
    import importlib.util

    real = importlib.util.find_spec
    monkeypatch.setattr(
        importlib.util,
        "find_spec",
        lambda name, *a: None if name == "jupyterlab" else real(name, *a),
    )
    assert main(["explore", "--dry-run"]) == 2
    assert "hairtrigger[app]" in capsys.readouterr().err
