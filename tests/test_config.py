"""Reading and validating TOML configs (simulate.config)."""

from __future__ import annotations

import hashlib
import math
import textwrap

import numpy as np
import pytest
import scipy.linalg

from simulate import FloorForces, Record, load_config
from simulate.errors import ConfigError, RecordError
from simulate.model import MassProportional, ModalDamping, NoDamping, Rayleigh


def write(tmp_path, text, name="case.toml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text))
    return path


def sine_file(path, dt=0.01, n=201, amplitude=0.1):
    t = np.arange(n) * dt
    path.write_text("\n".join(f"{ti:.4f} {amplitude * np.sin(2 * np.pi * 2.0 * ti):.8f}" for ti in t) + "\n")
    return path


def scipy_periods(frame):
    """Periods from scipy's generalized symmetric eigensolver on the full K and M."""
    k = frame.stiffness
    n = k.size
    K = np.zeros((n, n))
    for i in range(n):
        K[i, i] += k[i]
        if i + 1 < n:
            K[i, i] += k[i + 1]
            K[i, i + 1] = K[i + 1, i] = -k[i + 1]
    w2 = scipy.linalg.eigh(K, np.diag(frame.mass), eigvals_only=True)
    return 2 * np.pi / np.sqrt(np.sort(w2))


HARMONIC_ONLY = """
[[harmonic]]
amplitude = 0.05
frequency = 1.0
duration = 2.0
"""


# ------------------------------------------------------------------ building
def test_uniform_shorthand_equals_explicit_lists(tmp_path):
    """Single numbers with `storeys` broadcast to the same frame as the written-out lists.

    The periods are also checked against scipy.linalg.eigh on the assembled K and M.
    """
    short = load_config(write(tmp_path, """
        [building]
        storeys = 4
        mass = 3.5e5
        height = 3.4
        stiffness = 5.0e8
    """ + HARMONIC_ONLY, "short.toml"))
    full = load_config(write(tmp_path, """
        [building]
        mass = [3.5e5, 3.5e5, 3.5e5, 3.5e5]
        height = [3.4, 3.4, 3.4, 3.4]
        stiffness = [5.0e8, 5.0e8, 5.0e8, 5.0e8]
    """ + HARMONIC_ONLY, "full.toml"))
    for name in ("mass", "height", "stiffness"):
        np.testing.assert_array_equal(getattr(short.frame, name), getattr(full.frame, name))
    assert short.frame.n_storeys == 4
    np.testing.assert_allclose(short.frame.periods(), full.frame.periods(), rtol=0, atol=0)
    np.testing.assert_allclose(short.frame.periods(), scipy_periods(full.frame), rtol=1e-12)


@pytest.mark.parametrize("profile", ['"uniform"', '"linear"', "[1.0, 0.8, 0.55, 0.3, 0.2]"])
def test_period_and_profile_give_the_target_period(tmp_path, profile):
    """`period` scales the profile so that T1 equals the target.

    Exact by construction: with K = kappa K(profile), the eigenvalues w^2 scale
    linearly with kappa, so one scaling hits the target to round-off. Checked
    also with scipy.linalg.eigh on the assembled matrices.
    """
    cfg = load_config(write(tmp_path, f"""
        [building]
        storeys = 5
        mass = [4.0e5, 3.8e5, 3.8e5, 3.6e5, 3.0e5]
        height = [4.0, 3.3, 3.3, 3.3, 3.3]
        period = 0.73
        stiffness_profile = {profile}
    """ + HARMONIC_ONLY))
    frame = cfg.frame
    assert frame.periods()[0] == pytest.approx(0.73, rel=1e-10)
    assert scipy_periods(frame)[0] == pytest.approx(0.73, rel=1e-10)
    expected = {'"uniform"': np.ones(5), '"linear"': np.array([5, 4, 3, 2, 1]) / 5.0}.get(
        profile, np.array([1.0, 0.8, 0.55, 0.3, 0.2]))
    np.testing.assert_allclose(frame.stiffness / frame.stiffness[0], expected, rtol=1e-12)


def test_uniform_chain_stiffness_matches_closed_form(tmp_path):
    """Uniform masses and storeys: w_n = 2 sqrt(k/m) sin((2n-1) pi / (2 (2N+1))).

    The closed form for a fixed-free uniform lumped-mass shear chain is a standard
    result (common practice; quoted from memory). With T1 given, k = m (2 pi / T1)^2
    / (4 sin^2(pi / (2 (2N+1)))).
    """
    n, m, t1 = 6, 4.0e5, 0.9
    cfg = load_config(write(tmp_path, f"""
        [building]
        storeys = {n}
        mass = {m}
        height = 3.5
        period = {t1}
    """ + HARMONIC_ONLY))
    k = m * (2 * math.pi / t1) ** 2 / (4 * math.sin(math.pi / (2 * (2 * n + 1))) ** 2)
    np.testing.assert_allclose(cfg.frame.stiffness, k, rtol=1e-10)
    w = 2 * math.sqrt(k / m) * np.sin((2 * np.arange(1, n + 1) - 1) * math.pi / (2 * (2 * n + 1)))
    np.testing.assert_allclose(cfg.frame.periods(), 2 * math.pi / w, rtol=1e-10)


def test_defaults_and_name(tmp_path):
    """No [damping]: Rayleigh 5 % in modes 1 and 3; 1 and 2 for a two-storey frame."""
    cfg = load_config(write(tmp_path, """
        [building]
        storeys = 4
        mass = 3e5
        height = 3.0
        stiffness = 4e8
    """ + HARMONIC_ONLY, "office.toml"))
    assert isinstance(cfg.frame.damping, Rayleigh)
    assert cfg.frame.damping.modes == (1, 3)
    assert cfg.frame.name == "office"
    assert cfg.analysis.method == "newmark" and cfg.analysis.dt is None and cfg.analysis.tail == 0.0
    zeta = cfg.frame.modes()["damping_ratio"].values
    assert zeta[0] == pytest.approx(0.05, rel=1e-10) and zeta[2] == pytest.approx(0.05, rel=1e-10)

    two = load_config(write(tmp_path, """
        [building]
        storeys = 2
        mass = 3e5
        height = 3.0
        stiffness = 4e8
    """ + HARMONIC_ONLY, "two.toml"))
    assert two.frame.damping.modes == (1, 2)
    np.testing.assert_allclose(two.frame.modes()["damping_ratio"].values, 0.05, rtol=1e-10)


@pytest.mark.parametrize("table, cls, check", [
    ('model = "modal"\nratio = [0.02, 0.03]', ModalDamping, lambda d: d.ratios == (0.02, 0.03)),
    ('model = "mass"\nratio = 0.04\nmode = 2', MassProportional, lambda d: d.mode == 2 and d.ratio == 0.04),
    ('model = "none"', NoDamping, lambda d: True),
    ('ratio = [0.02, 0.05]\nmodes = [1, 2]', Rayleigh, lambda d: d.ratios() == (0.02, 0.05)),
])
def test_damping_models(tmp_path, table, cls, check):
    cfg = load_config(write(tmp_path, """
        [building]
        storeys = 3
        mass = 3e5
        height = 3.0
        stiffness = 4e8
        [damping]
    """ + table + "\n" + HARMONIC_ONLY))
    assert isinstance(cfg.frame.damping, cls)
    assert check(cfg.frame.damping)


def test_analysis_scheme_and_run_kwargs(tmp_path):
    path = write(tmp_path, """
        title = "kwargs"
        [building]
        storeys = 2
        mass = 3e5
        height = 3.0
        stiffness = 4e8
        [analysis]
        scheme = "linear-acceleration"
        dt = 0.002
        tail = 1.5
        scale = 2.0
    """ + HARMONIC_ONLY)
    cfg = load_config(path)
    kw = cfg.run_kwargs()
    assert kw["method"] == "newmark" and kw["beta"] == pytest.approx(1 / 6) and kw["gamma"] == 0.5
    assert kw["dt"] == 0.002 and kw["tail"] == 1.5
    assert kw["scale"] == [1.0]             # scale is for records; the harmonic load keeps its amplitude
    assert kw["attrs"]["config_sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()
    assert kw["attrs"]["config_text"] == path.read_text()
    other = cfg.run_kwargs(method="state-space", dt=0.001)
    assert other["method"] == "state-space" and "beta" not in other and other["dt"] == 0.001


# ------------------------------------------------------------------ excitations
def test_records_resolved_from_the_config_folder(tmp_path):
    """Globs are relative to the config file, sorted; scale applies to records only."""
    motions = tmp_path / "motions"
    motions.mkdir()
    for name in ("b.txt", "a.txt", "c.dat"):
        sine_file(motions / name)
    configs = tmp_path / "configs"
    configs.mkdir()
    cfg = load_config(write(configs, """
        [building]
        storeys = 3
        mass = 3e5
        height = 3.0
        stiffness = 4e8
        [analysis]
        scale = 1.5
        [records]
        files = ["../motions/*.txt", "../motions/c.dat"]
        [[harmonic]]
        mode = 1
        amplitude = 0.01
        duration = 3.0
        [[harmonic]]
        kind = "force"
        amplitude = 1.0e4
        frequency = 2.0
        duration = 1.0
        floors = [3]
    """))
    assert [p.name for p in cfg.record_files] == ["a.txt", "b.txt", "c.dat"]
    loads = cfg.excitations()
    assert [type(x) for x in loads] == [Record, Record, Record, Record, FloorForces]
    assert loads[3].metadata["frequency"] == pytest.approx(1.0 / cfg.frame.periods()[0], rel=1e-12)
    assert loads[3].dt <= 0.01
    assert loads[4].force.shape[1] == 3 and np.all(loads[4].force[:, :2] == 0.0)
    assert cfg.scale_factors() == [1.5, 1.5, 1.5, 1.0, 1.0]


def test_record_errors_pass_through(tmp_path):
    """A bad record file raises RecordError naming that file (and line), not the config."""
    (tmp_path / "r.txt").write_text("0.0 0.1\n0.01 nan\n0.02 0.1\n")
    cfg = load_config(write(tmp_path, """
        [building]
        storeys = 2
        mass = 3e5
        height = 3.0
        stiffness = 4e8
        [records]
        files = ["r.txt"]
    """))
    with pytest.raises(RecordError) as info:
        cfg.excitations()
    assert not isinstance(info.value, ConfigError)
    assert "r.txt:2" in str(info.value)


def test_bad_harmonic_is_reported_with_its_entry(tmp_path):
    path = write(tmp_path, """
        [building]
        storeys = 2
        mass = 3e5
        height = 3.0
        stiffness = 4e8
        [[harmonic]]
        amplitude = 0.05
        frequency = 30.0
        duration = 2.0
        dt = 0.01
    """)
    cfg = load_config(path)
    with pytest.raises(ConfigError, match=r"\[\[harmonic\]\] #1.*too coarse"):
        cfg.excitations()


# ------------------------------------------------------------------ mistakes
BASE = """\
[building]
storeys = 3
mass = 3e5
height = 3.0
stiffness = 4e8
"""

BAD = {
    "unknown key": (BASE + "stifness = 4e8\n" + HARMONIC_ONLY,
                    ["[building]", "'stifness'", "did you mean 'stiffness'?"]),
    "unknown table": (BASE + "[analysys]\ndt = 0.01\n" + HARMONIC_ONLY, ["'analysys'", "did you mean 'analysis'?"]),
    "missing stiffness": ("[building]\nstoreys = 3\nmass = 3e5\nheight = 3.0\n" + HARMONIC_ONLY,
                          ["[building]", "stiffness", "period"]),
    "negative mass": ("[building]\nmass = [3e5, -3.0, 3e5]\nheight = 3.0\nstiffness = 4e8\n" + HARMONIC_ONLY,
                      ["[building] mass", "floor 2 has -3.0", "positive"]),
    "nan stiffness": ("[building]\nmass = 3e5\nheight = 3.0\nstiffness = [4e8, nan]\n" + HARMONIC_ONLY,
                      ["[building] stiffness", "storey 2 has nan", "finite"]),
    "different lengths": ("[building]\nmass = [3e5, 3e5, 3e5]\nheight = [3.0, 3.0]\nstiffness = 4e8\n"
                          + HARMONIC_ONLY, ["[building] height", "2 values", "mass has 3"]),
    "storeys mismatch": ("[building]\nstoreys = 4\nmass = [3e5, 3e5, 3e5]\nheight = 3.0\nstiffness = 4e8\n"
                         + HARMONIC_ONLY, ["[building] storeys", "4"]),
    "storeys missing": ("[building]\nmass = 3e5\nheight = 3.0\nstiffness = 4e8\n" + HARMONIC_ONLY,
                        ["[building] storeys", "single numbers"]),
    "both period and stiffness": (BASE + "period = 0.5\n" + HARMONIC_ONLY, ["[building]", "stiffness or period"]),
    "text for a number": ("[building]\nstoreys = 3\nmass = \"heavy\"\nheight = 3.0\nstiffness = 4e8\n"
                          + HARMONIC_ONLY, ["[building] mass", "'heavy'", "number"]),
    "unknown damping model": (BASE + "[damping]\nmodel = \"rayleigh2\"\n" + HARMONIC_ONLY,
                              ["[damping] model", "'rayleigh2'", "did you mean 'rayleigh'?"]),
    "damping mode too high": (BASE + "[damping]\nmodes = [1, 4]\n" + HARMONIC_ONLY,
                              ["[damping] modes", "mode 4 does not exist"]),
    "damping ratio too high": (BASE + "[damping]\nratio = 5\n" + HARMONIC_ONLY, ["[damping] ratio", "[0, 1)"]),
    "unknown method": (BASE + "[analysis]\nmethod = \"newmarc\"\n" + HARMONIC_ONLY,
                       ["[analysis] method", "did you mean 'newmark'?"]),
    "scheme and gamma": (BASE + "[analysis]\nscheme = \"average-acceleration\"\ngamma = 0.6\n" + HARMONIC_ONLY,
                         ["[analysis] scheme", "not both"]),
    "negative tail": (BASE + "[analysis]\ntail = -1\n" + HARMONIC_ONLY, ["[analysis] tail", "-1.0"]),
    "glob matching nothing": (BASE + "[records]\nfiles = [\"nowhere/*.txt\"]\n",
                              ["[records] files", "'nowhere/*.txt' matches no file"]),
    "missing record file": (BASE + "[records]\nfiles = [\"gone.txt\"]\n", ["[records] files", "'gone.txt' not found"]),
    "bad units": (BASE + "[records]\nfiles = [\"*.toml\"]\nunits = \"furlongs\"\n", ["[records]", "'furlongs'"]),
    "nothing to run": (BASE, ["nothing to run", "[[harmonic]]"]),
    "frequency and mode": (BASE + "[[harmonic]]\namplitude = 0.1\nfrequency = 1.0\nmode = 1\nduration = 5.0\n",
                           ["[[harmonic]] #1", "frequency", "mode", "not both"]),
    "force floor too high": (BASE + "[[harmonic]]\nkind = \"force\"\namplitude = 1e4\nfrequency = 1.0\n"
                             "duration = 5.0\nfloors = [4]\n", ["[[harmonic]] #1 floors", "floor 4 does not exist"]),
    "harmonic kind": (BASE + "[[harmonic]]\nkind = \"wind\"\namplitude = 1\nfrequency = 1\nduration = 1\n",
                      ["[[harmonic]] #1 kind", "'wind'"]),
    "output suffix": (BASE + HARMONIC_ONLY + "[output]\nfile = \"out.csv\"\n", ["[output] file", ".nc"]),
    "toml syntax": (BASE + "[analysis\ndt = 0.01\n", [":6:", "TOML"]),
    "building missing": (HARMONIC_ONLY, ["[building]", "missing"]),
}


@pytest.mark.parametrize("case", list(BAD))
def test_mistakes_name_file_and_key(tmp_path, case):
    text, fragments = BAD[case]
    path = tmp_path / "bad.toml"
    path.write_text(text)
    with pytest.raises(ConfigError) as info:
        load_config(path)
    message = str(info.value)
    assert message.startswith(str(path)), message
    assert "\n" not in message
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def test_missing_and_non_utf8_config(tmp_path):
    with pytest.raises(ConfigError, match="no such config file"):
        load_config(tmp_path / "absent.toml")
    path = tmp_path / "latin.toml"
    path.write_bytes(b'title = "ok"\ntitle2 = "caf\xe9"\n')
    with pytest.raises(ConfigError, match=r"latin\.toml:2: not UTF-8"):
        load_config(path)
