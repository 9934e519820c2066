"""Fixtures for widget tests: no kernel, no browser; comm messages recorded where they matter."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any

import ipywidgets
import pytest

from hairtrigger.widgets import Explorer, ExplorerState


@dataclass
class MessageLog:
    """Every comm message the widgets send (``(widget, message, buffers)``)."""

    sent: list[tuple[Any, dict[str, Any], list[Any]]] = field(default_factory=list)

    def clear(self) -> None:
        self.sent.clear()

    def updates(self) -> list[tuple[Any, dict[str, Any], list[Any]]]:
        return [m for m in self.sent if m[1].get("method") == "update"]

    def count(self) -> int:
        return len(self.updates())

    def by_widget(self) -> dict[str, int]:
        counts: dict[str, int] = {}
        for widget, _, _ in self.updates():
            name = type(widget).__name__
            counts[name] = counts.get(name, 0) + 1
        return counts


@pytest.fixture
def messages(monkeypatch: pytest.MonkeyPatch) -> Iterator[MessageLog]:
    """Record what ``Widget._send`` would put on the comm (as ipywidgets' own tests do)."""
    log = MessageLog()
    original = ipywidgets.Widget._send

    def record(self: Any, msg: dict[str, Any], buffers: list[Any] | None = None) -> None:
        log.sent.append((self, msg, list(buffers or [])))
        original(self, msg, buffers)

    monkeypatch.setattr(ipywidgets.Widget, "_send", record)
    yield log


@pytest.fixture
def state() -> ExplorerState:
    """A fresh state at the built-in scenario."""
    return ExplorerState()


@pytest.fixture
def explorer() -> Explorer:
    """A fresh explorer (map at its default resolution)."""
    return Explorer()
