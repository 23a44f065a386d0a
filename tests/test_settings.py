"""The numba cache folder follows the kernel and law sources."""

import os
import subprocess
import sys

SNIPPET = "import simulate, numba; print(numba.config.CACHE_DIR)"


def _cache_dir(env):
    out = subprocess.run([sys.executable, "-c", SNIPPET], env=env, capture_output=True, text=True, check=True)
    return out.stdout.strip()


def test_cache_folder_is_keyed_by_the_sources(tmp_path):
    """Without NUMBA_CACHE_DIR the cache lives in XDG_CACHE_HOME/swaysim/numba/<hash of sources>
    (numba itself does not invalidate a cached kernel when an inlined law in another file changes)."""
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["XDG_CACHE_HOME"] = str(tmp_path)
    folder = _cache_dir(env)
    parent = tmp_path / "swaysim" / "numba"
    assert os.path.dirname(folder) == str(parent)
    assert len(os.path.basename(folder)) == 16
    assert os.path.isdir(folder)
    # the same sources give the same folder
    assert _cache_dir(env) == folder


def test_user_cache_folder_wins(tmp_path):
    env = dict(os.environ, NUMBA_CACHE_DIR=str(tmp_path / "mine"))
    assert _cache_dir(env) == str(tmp_path / "mine")


def test_cache_folders_of_other_sources_unused_for_30_days_are_removed(tmp_path):
    """A process start removes cache folders of other source versions untouched for
    CACHE_KEEP_DAYS and keeps recent ones (another installed version may still use them)."""
    import time

    from simulate.settings import CACHE_KEEP_DAYS

    parent = tmp_path / "swaysim" / "numba"
    old, recent = parent / "0123456789abcdef", parent / "fedcba9876543210"
    for folder in (old, recent):
        (folder / "sub").mkdir(parents=True)
        (folder / "sub" / "kernel.nbc").write_bytes(b"compiled")
    stale = time.time() - (CACHE_KEEP_DAYS + 1) * 86400.0
    os.utime(old, (stale, stale))
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["XDG_CACHE_HOME"] = str(tmp_path)
    current = _cache_dir(env)
    assert not old.exists() and recent.is_dir() and os.path.isdir(current)
    # the folder in use is marked as used at every start, so it is never the stale one
    os.utime(current, (stale, stale))
    assert _cache_dir(env) == current and os.path.getmtime(current) > stale + 86400.0
