"""Durable, atomic file writing shared by every writer of the project.

A file is written to a temporary file in its destination folder, flushed to
disk (fsync), given the usual permissions, renamed over the destination
(atomic on POSIX file systems) and the folder entry is flushed too. A crash, a
kill or a full disk leaves either the old file or the new one, never half a
file, and a temporary file that could not be finished is removed.
"""

from __future__ import annotations

import errno
import os
import shutil
import tempfile
from pathlib import Path
from typing import Callable

from simulate.errors import InputError, StorageError

#: errno values that mean the disk (or the user's quota) is full.
NO_SPACE = (errno.ENOSPC, errno.EDQUOT)


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
    except BaseException as exc:
        if os.path.exists(tmp):
            os.unlink(tmp)
        if _no_space(exc) or _nearly_full(folder):
            raise StorageError(f"{path}: no space left on the disk of {folder.resolve()} while writing it "
                               "(nothing half-written was kept)") from exc
        raise
    fsync_folder(folder)
    return path


def _nearly_full(folder: Path) -> bool:
    """True when ``folder``'s disk has less than 16 MB free (libraries that report a full disk
    only as a generic write error, such as HDF5, are understood this way)."""
    try:
        return shutil.disk_usage(folder).free < 16 * 2 ** 20
    except OSError:
        return False


def _no_space(exc: BaseException) -> bool:
    """True for an OSError (or one it was raised from) saying the disk or quota is full."""
    while exc is not None:
        if isinstance(exc, OSError) and exc.errno in NO_SPACE:
            return True
        if isinstance(exc, RuntimeError) and "No space left" in str(exc):   # HDF5 reports it as text
            return True
        exc = exc.__cause__ or exc.__context__
    return False


def read_input(path, error=InputError, kind: str = "file", missing: str = "no such file") -> bytes:
    """The bytes of an input file the user named; ``error`` with one line naming it when it cannot be read.

    ``kind`` names what the file should be ("is a folder, not a <kind>"), ``missing``
    is the message for a path that does not exist.
    """
    source = str(path)
    try:
        return Path(path).read_bytes()
    except FileNotFoundError:
        raise error(f"{source}: {missing}") from None
    except IsADirectoryError:
        raise error(f"{source}: is a folder, not a {kind}") from None
    except OSError as exc:
        raise error(f"{source}: cannot be read ({exc.strerror or exc})") from None


def write_text_atomic(path, text: str) -> Path:
    """Write ``text`` (UTF-8) to ``path`` durably and atomically."""
    return write_atomic(path, lambda tmp: Path(tmp).write_text(text, encoding="utf-8"))
