"""Project-wide constants and numba options (kept in one place, never as scattered literals)."""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

#: Standard acceleration of gravity, m/s^2 (CGPM 1901; ISO 80000-3).
STANDARD_GRAVITY = 9.80665

def _numba_cache_dir() -> str | None:
    """A numba cache folder keyed by the source of every kernel and storey law.

    numba invalidates a cached function only when its own file changes, not when a
    function it inlines from another file does (a storey law inlined into the
    Newton-Newmark kernel, say), so an edited law or an upgraded package could run
    stale machine code. Keying the folder by a hash of all numba source files makes
    any change compile afresh. A NUMBA_CACHE_DIR set by the user wins.
    """
    if os.environ.get("NUMBA_CACHE_DIR"):
        return None
    package = Path(__file__).resolve().parent
    digest = hashlib.sha256()
    for folder in ("kernels", "laws"):
        for path in sorted((package / folder).glob("*.py")):
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    digest.update(Path(__file__).read_bytes())
    root = Path(os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache") / "swaysim" / "numba"
    folder = root / digest.hexdigest()[:16]
    try:
        folder.mkdir(parents=True, exist_ok=True)
        os.utime(folder)        # marks it as in use, for the pruning below
    except OSError:
        return None  # unwritable home: numba's default (__pycache__ beside the sources)
    prune_caches(root, keep=folder)
    return str(folder)


#: Cache folders of other source versions (an upgrade, an edit) unused this many days are removed.
CACHE_KEEP_DAYS = 30


def prune_caches(root: Path, keep: Path, days: float = CACHE_KEEP_DAYS) -> list[Path]:
    """Remove the cache folders under ``root`` other than ``keep`` that no process used for ``days``.

    A folder's modification time is set each time a process starts with it, so one
    still in use by another installed version is kept. Returns the folders removed.
    """
    import shutil
    import time

    limit = time.time() - days * 86400.0
    removed = []
    try:
        entries = list(root.iterdir())
    except OSError:
        return removed
    for path in entries:
        try:
            if path == keep or not path.is_dir() or path.stat().st_mtime >= limit:
                continue
        except OSError:
            continue
        shutil.rmtree(path, ignore_errors=True)
        removed.append(path)
    return removed


_CACHE_DIR = _numba_cache_dir()
if _CACHE_DIR is not None:
    os.environ["NUMBA_CACHE_DIR"] = _CACHE_DIR
    import numba.core.config

    numba.core.config.CACHE_DIR = _CACHE_DIR

#: Options for every serial numba kernel.
JIT = dict(cache=True, nogil=True, fastmath=False, error_model="numpy")

#: Options for small functions called in a kernel's inner loop (storey laws): inlined
#: at numba-IR level so no reference counting of array arguments happens per call.
JIT_INLINE = dict(JIT, inline="always")

#: Options for batch drivers that loop over records with ``prange``.
JIT_PARALLEL = dict(JIT, parallel=True)

#: Conversion factors from a record's declared units to m/s^2.
ACCELERATION_UNITS = {
    "g": STANDARD_GRAVITY,
    "m/s2": 1.0,
    "cm/s2": 0.01,
}

#: Other spellings accepted for the units above.
UNIT_ALIASES = {
    "m/s^2": "m/s2",
    "m/s**2": "m/s2",
    "cm/s^2": "cm/s2",
    "cm/s**2": "cm/s2",
    "gal": "cm/s2",
}

CAUTION = (
    "swaysim results support, and never replace, the judgement of a qualified "
    "structural engineer. A shear-frame model is an idealisation; check its "
    "assumptions against the real structure. Design decisions follow the local "
    "building code and licensed professional practice."
)
