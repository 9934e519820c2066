"""Safe file writing shared by snapshots and every command that writes a file.

`atomic_write` never leaves a half-written file: the bytes go to a temporary file in the target's
folder, are flushed to disk, and only then take the target's name in one atomic step. On any
failure the temporary file is removed and an existing target is left untouched.
"""

from __future__ import annotations

import contextlib
import errno
import os
import secrets
import stat
from pathlib import Path

__all__ = ["atomic_write"]


def _exists_message(target: Path) -> str:
    return f"{target}: file exists; pass overwrite=True to replace it"


def _write_all(fd: int, payload: bytes) -> None:
    """Write every byte (``os.write`` may write fewer than asked)."""
    view = memoryview(payload)
    while view:
        written = os.write(fd, view)
        view = view[written:]


def _fsync_folder(folder: Path) -> None:
    """Make the rename itself durable where the platform allows it (best effort)."""
    if os.name != "posix":
        return
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _open_temporary(folder: Path, name: str) -> tuple[Path, int]:
    """Create a fresh, exclusively opened temporary file beside the target."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    for _ in range(100):
        candidate = folder / f".{name}.{secrets.token_hex(6)}.tmp"
        try:
            # Mode 0o666 so the umask decides the final permissions, as for any new file.
            return candidate, os.open(candidate, flags, 0o666)
        except FileExistsError:
            continue
    msg = f"{folder}: could not create a temporary file"
    raise FileExistsError(msg)


def _publish_new(temporary: Path, target: Path) -> None:
    """Give `temporary` the name `target` only if no file has that name (no clobbering)."""
    try:
        # A hard link fails atomically if the name is taken, closing the window between the
        # existence check and the rename.
        os.link(temporary, target)
    except FileExistsError:
        raise FileExistsError(_exists_message(target)) from None
    except OSError:
        # Some file systems have no hard links; fall back to check-then-rename.
        if target.exists() or target.is_symlink():
            raise FileExistsError(_exists_message(target)) from None
        os.replace(temporary, target)


def atomic_write(
    path: str | os.PathLike[str], data: bytes | str, *, overwrite: bool = False
) -> Path:
    """Write `data` to `path` atomically: the file ends up complete or not changed at all.

    Parameters
    ----------
    path : str or os.PathLike
        Target file. Its folder must exist. A symbolic link is followed (the file it points
        to is replaced, the link stays).
    data : bytes or str
        Content; a str is encoded as UTF-8.
    overwrite : bool
        Replace an existing file. If False (the default) an existing `path` is refused.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    FileExistsError
        `path` exists and `overwrite` is False (the message names the path).
    IsADirectoryError, FileNotFoundError, PermissionError, OSError
        `path` is a folder, its folder does not exist, or writing failed. In every case no
        temporary file is left behind and an existing file keeps its old content.
    """
    target = Path(os.fspath(path))
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    if target.is_dir():
        raise IsADirectoryError(errno.EISDIR, "is a folder, not a file", str(target))
    if not overwrite and (target.exists() or target.is_symlink()):
        raise FileExistsError(_exists_message(target))
    if overwrite and target.is_symlink():
        target = Path(os.path.realpath(target))
    folder = target.parent
    if not folder.is_dir():
        raise FileNotFoundError(errno.ENOENT, "folder does not exist", str(folder))

    temporary, fd = _open_temporary(folder, target.name)
    try:
        try:
            if overwrite and target.exists():
                # Keep the permissions of the file being replaced.
                with contextlib.suppress(OSError):
                    os.chmod(temporary, stat.S_IMODE(target.stat().st_mode))
            _write_all(fd, payload)
            os.fsync(fd)
        finally:
            os.close(fd)
        if overwrite:
            os.replace(temporary, target)
        else:
            _publish_new(temporary, target)
    finally:
        # After os.replace the temporary name is gone; after os.link it is a second name.
        with contextlib.suppress(OSError):
            os.unlink(temporary)
    _fsync_folder(folder)
    return target
