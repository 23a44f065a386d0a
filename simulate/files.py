"""Durable, atomic file writing shared by every writer of the project.

A file is written to a temporary file in its destination folder, flushed to
disk (fsync), given the usual permissions, renamed over the destination
(atomic on POSIX file systems) and the folder entry is flushed too. A crash, a
kill or a full disk leaves either the old file or the new one, never half a
file, and a temporary file that could not be finished is removed.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Callable

from simulate.errors import InputError


def fsync_folder(folder: Path) -> None:
    """Flush a folder's entries (a rename in it) to disk; silently skipped where unsupported."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def destination_folder(path) -> Path:
    """The folder ``path`` will be written in; InputError naming the path when it does not exist."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{path}: folder {folder} does not exist")
    return folder


def write_atomic(path, write: Callable[[Path], None]) -> Path:
    """Call ``write(tmp)`` on a temporary file beside ``path``, then make it ``path`` durably."""
    path = Path(path)
    folder = destination_folder(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
    os.close(fd)
    try:
        write(Path(tmp))
        with open(tmp, "rb+") as handle:
            os.fsync(handle.fileno())
        # mkstemp creates the file private (0600); give it the usual permissions
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    fsync_folder(folder)
    return path


def write_text_atomic(path, text: str) -> Path:
    """Write ``text`` (UTF-8) to ``path`` durably and atomically."""
    return write_atomic(path, lambda tmp: Path(tmp).write_text(text, encoding="utf-8"))
