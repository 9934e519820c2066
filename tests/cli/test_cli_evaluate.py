"""``hairtrigger evaluate``: exactly the contract's JSON, equal to the Python API."""

from __future__ import annotations

import json
from typing import Any

import pytest
from cli_running import run_cli

from hairtrigger import evaluate, load_snapshot
from hairtrigger.cli import main
from hairtrigger.io import example_path, list_examples

CONTRACT_KEYS = [
    "model",
    "readout",
    "K1",
    "K2",
    "activity_ratio",
    "readout_value",
    "activity_ratio_10",
    "activity_ratio_50",
    "activity_ratio_90",
    "response_coefficient",
    "hill_coefficient",
    "readout_ceiling",
    "relative",
    "warnings",
]
RELATIVE_KEYS = [
    "activity_ratio_10",
    "activity_ratio_50",
    "activity_ratio_90",
    "response_coefficient",
    "hill_coefficient",
]


def strict_json(text: str) -> Any:
    def refuse(token: str) -> None:
        raise AssertionError(f"{token} in the output is not JSON")

    return json.loads(text, parse_constant=refuse)


@pytest.mark.parametrize("name", list_examples())
def test_evaluate_prints_exactly_the_contract(name: str) -> None:
    path = example_path(name)
    done = run_cli(["evaluate", str(path)])
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
    result = strict_json(done.stdout)
    # The contract's keys in order; later issues extend the object (``dynamics``), never rename.
    assert list(result) == [*CONTRACT_KEYS, "dynamics"]
    assert list(result["relative"]) == RELATIVE_KEYS
    assert isinstance(result["warnings"], list)
    snapshot = load_snapshot(path)
    assert (result["model"], result["readout"]) == (snapshot.model, snapshot.readout)
    # Exact equality: floats are printed by repr and read back bit for bit.
    assert result == evaluate(snapshot.cycle, snapshot.model, snapshot.readout)
    assert done.stdout == json.dumps(result, indent=2) + "\n"


def test_unreachable_target_is_null_with_a_warning() -> None:
    done = run_cli(["evaluate", "example:sequestration_limited"])
    assert done.returncode == 0, done.stderr
    result = strict_json(done.stdout)
    assert result["readout_ceiling"] < 0.9
    assert result["activity_ratio_90"] is None
    assert result["response_coefficient"] is None and result["hill_coefficient"] is None
    assert any("activity_ratio_90 does not exist" in w for w in result["warnings"])
    assert "null" in done.stdout and "NaN" not in done.stdout


@pytest.mark.parametrize(
    ("model", "readout"),
    [("mass_action", "free_modified"), ("quasi_steady", "total_modified")],
)
def test_model_and_readout_override_the_file(
    model: str, readout: str, capsys: pytest.CaptureFixture[str]
) -> None:
    path = example_path("scarce_enzyme_switch")
    assert main(["evaluate", str(path), "--model", model, "--readout", readout]) == 0
    result = strict_json(capsys.readouterr().out)
    assert (result["model"], result["readout"]) == (model, readout)
    assert result == evaluate(load_snapshot(path).cycle, model, readout)


def test_bundled_example_by_name(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["evaluate", "example:michaelian_relay"]) == 0
    by_name = capsys.readouterr().out
    assert main(["evaluate", str(example_path("michaelian_relay"))]) == 0
    assert capsys.readouterr().out == by_name


def test_help_through_the_entry_point() -> None:
    done = run_cli(["--help"])
    assert done.returncode == 0
    assert done.stdout.startswith("usage: hairtrigger")
    assert "evaluate" in done.stdout and "map" in done.stdout
    assert "experimental confirmation" in done.stdout
    assert done.stderr == ""


@pytest.mark.parametrize("command", ["evaluate", "map"])
def test_help_of_each_command(command: str, capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as info:
        main([command, "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert out.startswith(f"usage: hairtrigger {command}")
    assert "--model" in out and "--readout" in out and "example:NAME" in out
