"""Saving never half-writes: failures at every step leave the old file and no temporary file."""

from __future__ import annotations

import errno
import json
import os
import pathlib
import stat
from typing import Any

import pytest

from hairtrigger.io import Snapshot, atomic_write, load_snapshot, save_snapshot

OLD = b'{"old": "content that must survive"}\n'


def entries(folder: pathlib.Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir())


@pytest.fixture
def old_file(tmp_path: pathlib.Path) -> pathlib.Path:
    path = tmp_path / "cycle.json"
    path.write_bytes(OLD)
    return path


def test_new_file_is_written_completely(tmp_path: pathlib.Path) -> None:
    target = tmp_path / "new.txt"
    assert atomic_write(target, "µM ✓\n") == target
    assert target.read_bytes() == "µM ✓\n".encode()
    assert entries(tmp_path) == ["new.txt"]


def test_existing_file_is_refused_by_default(old_file: pathlib.Path) -> None:
    with pytest.raises(FileExistsError, match="pass overwrite=True") as info:
        atomic_write(old_file, b"new")
    assert str(old_file) in str(info.value)
    assert old_file.read_bytes() == OLD
    assert entries(old_file.parent) == ["cycle.json"]


def test_overwrite_replaces(old_file: pathlib.Path) -> None:
    atomic_write(old_file, b"new", overwrite=True)
    assert old_file.read_bytes() == b"new"
    assert entries(old_file.parent) == ["cycle.json"]


def test_save_snapshot_refuses_overwrite(old_file: pathlib.Path, snapshot: Snapshot) -> None:
    with pytest.raises(FileExistsError, match=str(old_file)):
        save_snapshot(snapshot, old_file)
    assert old_file.read_bytes() == OLD
    save_snapshot(snapshot, old_file, overwrite=True)
    assert load_snapshot(old_file) == snapshot


def _failing_write(monkeypatch: pytest.MonkeyPatch) -> None:
    """Make the disk fill up halfway through the first write."""
    real_write = os.write

    def half_then_full(fd: int, data: Any) -> int:
        real_write(fd, bytes(data[: max(1, len(data) // 2)]))
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "write", half_then_full)


def _failing(name: str, exc: BaseException) -> Any:
    def fail(*args: Any, **kwargs: Any) -> None:
        raise exc

    return fail


@pytest.mark.parametrize("overwrite", [False, True], ids=["new-file", "overwrite"])
@pytest.mark.parametrize(
    "failure",
    ["write-midway", "fsync", "replace", "link", "interrupt"],
)
def test_failure_leaves_old_file_and_no_temporary(
    tmp_path: pathlib.Path,
    snapshot: Snapshot,
    monkeypatch: pytest.MonkeyPatch,
    failure: str,
    overwrite: bool,
) -> None:
    target = tmp_path / "cycle.json"
    if overwrite:
        target.write_bytes(OLD)
    expected_exc: type[BaseException] = OSError
    if failure == "write-midway":
        _failing_write(monkeypatch)
    elif failure == "fsync":
        monkeypatch.setattr(os, "fsync", _failing("fsync", OSError(errno.EIO, "I/O error")))
    elif failure == "replace":
        # Used for an overwrite, and for a new file on file systems without hard links.
        monkeypatch.setattr(os, "replace", _failing("replace", OSError(errno.EXDEV, "cross")))
        monkeypatch.setattr(os, "link", _failing("link", OSError(errno.EPERM, "no links")))
    elif failure == "link":
        # Another process created the target between the check and the rename.
        monkeypatch.setattr(os, "link", _failing("link", FileExistsError(errno.EEXIST, "x")))
        monkeypatch.setattr(os, "replace", _failing("replace", OSError(errno.EXDEV, "cross")))
    elif failure == "interrupt":
        monkeypatch.setattr(os, "fsync", _failing("fsync", KeyboardInterrupt()))
        expected_exc = KeyboardInterrupt
    with pytest.raises(expected_exc):
        save_snapshot(snapshot, target, overwrite=overwrite)
    monkeypatch.undo()
    if overwrite:
        assert target.read_bytes() == OLD
        assert entries(tmp_path) == ["cycle.json"]
    else:
        assert entries(tmp_path) == []


def test_serialisation_failure_touches_nothing(
    old_file: pathlib.Path, snapshot: Snapshot, monkeypatch: pytest.MonkeyPatch
) -> None:
    import hairtrigger.io.snapshot as module

    monkeypatch.setattr(module.json, "dumps", _failing("dumps", TypeError("not serialisable")))
    with pytest.raises(TypeError):
        save_snapshot(snapshot, old_file, overwrite=True)
    monkeypatch.undo()
    assert old_file.read_bytes() == OLD
    assert entries(old_file.parent) == ["cycle.json"]


def test_without_hard_links_a_new_file_is_still_written(
    tmp_path: pathlib.Path, snapshot: Snapshot, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(os, "link", _failing("link", PermissionError(errno.EPERM, "no links")))
    target = tmp_path / "s.json"
    save_snapshot(snapshot, target)
    assert load_snapshot(target) == snapshot
    assert entries(tmp_path) == ["s.json"]


def test_race_is_caught_without_hard_links(
    tmp_path: pathlib.Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    target = tmp_path / "s.txt"

    def link_unsupported_and_someone_writes(src: Any, dst: Any) -> None:
        pathlib.Path(dst).write_bytes(b"theirs")
        raise PermissionError(errno.EPERM, "no links")

    monkeypatch.setattr(os, "link", link_unsupported_and_someone_writes)
    with pytest.raises(FileExistsError):
        atomic_write(target, b"mine")
    assert target.read_bytes() == b"theirs"
    assert entries(tmp_path) == ["s.txt"]


def test_partial_os_writes_are_completed(
    tmp_path: pathlib.Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    real_write = os.write
    monkeypatch.setattr(os, "write", lambda fd, data: real_write(fd, bytes(data[:7])))
    payload = bytes(range(256)) * 40
    target = tmp_path / "bin"
    atomic_write(target, payload)
    monkeypatch.undo()
    assert target.read_bytes() == payload


@pytest.mark.skipif(os.name != "posix", reason="POSIX permissions")
def test_permissions_follow_umask_or_the_replaced_file(tmp_path: pathlib.Path) -> None:
    umask = os.umask(0)
    os.umask(umask)
    new = atomic_write(tmp_path / "new", b"x")
    assert stat.S_IMODE(new.stat().st_mode) == 0o666 & ~umask
    old = tmp_path / "old"
    old.write_bytes(b"x")
    old.chmod(0o640)
    atomic_write(old, b"y", overwrite=True)
    assert stat.S_IMODE(old.stat().st_mode) == 0o640


@pytest.mark.skipif(not hasattr(os, "symlink"), reason="needs symbolic links")
def test_overwriting_through_a_symlink_keeps_the_link(tmp_path: pathlib.Path) -> None:
    real = tmp_path / "real.json"
    real.write_bytes(OLD)
    link = tmp_path / "link.json"
    link.symlink_to(real)
    with pytest.raises(FileExistsError):
        atomic_write(link, b"new")
    atomic_write(link, b"new", overwrite=True)
    assert link.is_symlink()
    assert real.read_bytes() == b"new"


def test_folder_target_and_missing_folder_are_refused(tmp_path: pathlib.Path) -> None:
    with pytest.raises(IsADirectoryError):
        atomic_write(tmp_path, b"x", overwrite=True)
    with pytest.raises(FileNotFoundError, match="folder does not exist"):
        atomic_write(tmp_path / "absent" / "f.json", b"x")
    assert entries(tmp_path) == []


def test_saved_file_is_canonical_json(tmp_path: pathlib.Path, snapshot: Snapshot) -> None:
    target = save_snapshot(snapshot, tmp_path / "s.json")
    text = target.read_text(encoding="utf-8")
    assert json.loads(text)["cycle"]["kinase_km"] == snapshot.cycle.kinase_km
    assert text.endswith("\n")
