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
