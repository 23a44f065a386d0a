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


#: A two-storey frame with the given [records] table.
SUITE_CONFIG = """
    [building]
    storeys = 2
    mass = 3e5
    height = 3.0
    stiffness = 4e8
    [records]
    {records}
"""


def test_records_from_a_suite_file(tmp_path):
    """[records] suite: the suite file's entries with their own units, dt and scale, in its order."""
    motions = tmp_path / "motions"
    motions.mkdir()
    sine_file(motions / "b.txt")
    sine_file(motions / "a.txt")
    (motions / "one.txt").write_text("\n".join(f"{0.1 * np.sin(2 * np.pi * 2.0 * k * 0.01):.8f}"
                                                for k in range(201)) + "\n")
    write(tmp_path, """
        [defaults]
        units = "g"
        [[record]]
        file = "motions/b.txt"
        scale = 2.0
        [[record]]
        file = "motions/one.txt"
        dt = 0.01
        units = "cm/s2"
        [[record]]
        file = "motions/a.txt"
    """, name="set.toml")
    cfg = load_config(write(tmp_path, SUITE_CONFIG.format(records='suite = "set.toml"')))
    assert [p.name for p in cfg.record_files] == ["b.txt", "one.txt", "a.txt"]
    b, one, a = cfg.excitations()
    np.testing.assert_allclose(b.acceleration, 2.0 * a.acceleration, rtol=1e-15)
    assert (one.units, a.units, b.units) == ("cm/s2", "g", "g") and one.dt == a.dt == 0.01
    np.testing.assert_array_equal(one.acceleration, a.acceleration)   # same numbers, other units
    assert cfg.scale_factors() == [1.0, 1.0, 1.0]
    assert b.metadata["suite"].endswith("set.toml")


@pytest.mark.parametrize("records, words", [
    ('suite = "absent.toml"', "[records] suite: 'absent.toml' not found"),
    ('suite = "set.toml"\nunits = "g"', "[records] units: give either a suite file or files"),
    ('suite = "set.toml"\nfiles = ["x.txt"]', "[records] files: give either a suite file or files"),
    ('suite = "bad.toml"', "[records] suite: "),
])
def test_suite_file_mistakes_name_the_config_key(tmp_path, records, words):
    write(tmp_path, '[[record]]\nfile = "nothing-*.txt"\n', name="bad.toml")
    sine_file(tmp_path / "r.txt")
    write(tmp_path, '[[record]]\nfile = "r.txt"\n', name="set.toml")
    with pytest.raises(ConfigError) as info:
        load_config(write(tmp_path, SUITE_CONFIG.format(records=records)))
    message = str(info.value)
    assert words in message and "\n" not in message
    if "bad" in records:
        assert "bad.toml:1: [[record]] 1: " in message and "matches no file" in message


def test_record_errors_pass_through(tmp_path):
    """A bad record file raises RecordError naming that file (and line), not the config."""
    (tmp_path / "r.txt").write_text("0.0 0.1\n0.01 nan\n0.02 0.1\n")
    cfg = load_config(write(tmp_path, SUITE_CONFIG.format(records='files = ["r.txt"]')))
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


# ------------------------------------------------------------------ yielding storeys, P-Delta
NL_BASE = """\
[building]
mass = [3.0e5, 2.0e5, 1.0e5]
height = [4.0, 3.0, 3.0]
stiffness = [4.0e8, 3.0e8, 2.0e8]
"""


def nl_config(tmp_path, building_extra="", tables=""):
    return load_config(write(tmp_path, NL_BASE + building_extra + tables + HARMONIC_ONLY))


def test_linear_building_stays_linear(tmp_path):
    cfg = nl_config(tmp_path)
    frame = cfg.frame
    assert frame.is_linear and frame.yield_shear is None and frame.gravity_load is None
    assert frame.law == ("linear",) * 3
    assert cfg.analysis.collapse_drift == 0.10 and cfg.analysis.linear_twin is False
    assert cfg.strength_from is None and cfg.gravity_from is None


def test_yield_shear_hardening_and_default_law(tmp_path):
    """With a yield key and no law, storeys are bilinear; lists and single numbers both work."""
    cfg = nl_config(tmp_path, "yield_shear = [1.2e6, 9.0e5, 4.0e5]\nhardening = 0.03\n")
    frame = cfg.frame
    np.testing.assert_array_equal(frame.yield_shear, [1.2e6, 9.0e5, 4.0e5])
    np.testing.assert_array_equal(frame.hardening, [0.03, 0.03, 0.03])
    assert frame.law == ("bilinear",) * 3 and not frame.is_linear
    assert cfg.strength_from == "yield_shear"
    listed = nl_config(tmp_path, "yield_shear = 5e5\nhardening = [0.0, 0.02, 0.05]\n"
                                 'law = ["bilinear", "peak-oriented", "linear"]\n').frame
    np.testing.assert_array_equal(listed.yield_shear, [5e5, 5e5, 5e5])
    np.testing.assert_array_equal(listed.hardening, [0.0, 0.02, 0.05])
    assert listed.law == ("bilinear", "peak-oriented", "linear")


def test_yield_drift_ratio_gives_k_ratio_h(tmp_path):
    """Vy_i = k_i * ratio * h_i (the definition of the key: yield deformation Vy / k = ratio * h).

    Hand arithmetic: 4e8 * 0.005 * 4.0 = 8.0e6, 3e8 * 0.005 * 3.0 = 4.5e6, 2e8 * 0.005 * 3.0 = 3.0e6 N.
    """
    cfg = nl_config(tmp_path, "yield_drift_ratio = 0.005\n")
    np.testing.assert_allclose(cfg.frame.yield_shear, [8.0e6, 4.5e6, 3.0e6], rtol=1e-14)
    assert cfg.strength_from == "yield_drift_ratio"
    per_storey = nl_config(tmp_path, "yield_drift_ratio = [0.004, 0.005, 0.006]\n").frame
    np.testing.assert_allclose(per_storey.yield_shear, [6.4e6, 4.5e6, 3.6e6], rtol=1e-14)


def test_yield_drift_ratio_with_target_period(tmp_path):
    """With stiffness from a target period the yield deformation is still ratio * h in every storey."""
    cfg = load_config(write(tmp_path, """
        [building]
        mass = [4.0e5, 3.8e5, 3.0e5]
        height = [4.2, 3.5, 3.5]
        period = 0.6
        stiffness_profile = "linear"
        yield_drift_ratio = 0.004
    """ + HARMONIC_ONLY))
    frame = cfg.frame
    np.testing.assert_allclose(frame.yield_shear / frame.stiffness, 0.004 * frame.height, rtol=1e-14)


def test_yield_base_shear_coefficient(tmp_path):
    """Vy_i = coefficient * g * (mass of floors i..N), g = 9.80665 m/s2 (standard gravity, CGPM 1901).

    Hand arithmetic with masses 3e5, 2e5, 1e5 kg and coefficient 0.1:
    0.1 * 9.80665 * 6e5 = 588399, * 3e5 = 294199.5, * 1e5 = 98066.5 N.
    """
    cfg = nl_config(tmp_path, "yield_base_shear_coefficient = 0.1\n")
    np.testing.assert_allclose(cfg.frame.yield_shear, [588399.0, 294199.5, 98066.5], rtol=1e-14)


def test_gravity_from_masses(tmp_path):
    """gravity = "mass": P_i = g * (sum of floor masses at and above floor i), g = 9.80665 m/s2.

    Standard gravity (CGPM 1901; ISO 80000-3). Hand arithmetic: 9.80665 * 6e5 = 5883990,
    * 3e5 = 2941995, * 1e5 = 980665 N.
    """
    cfg = nl_config(tmp_path, 'gravity = "mass"\n')
    np.testing.assert_allclose(cfg.frame.gravity_load, [5883990.0, 2941995.0, 980665.0], rtol=1e-14)
    assert cfg.gravity_from == "mass"
    # P-Delta alone makes the frame nonlinear (Newton iterations), its storeys stay linear
    assert not cfg.frame.is_linear and cfg.frame.law == ("linear",) * 3


def test_floor_gravity_load_sums_from_the_roof_down(tmp_path):
    """Storey i carries the loads of floors i..N: floors 1e6, 2e6, 3e6 N give storeys 6e6, 5e6, 3e6 N."""
    cfg = nl_config(tmp_path, "floor_gravity_load = [1.0e6, 2.0e6, 3.0e6]\n")
    np.testing.assert_array_equal(cfg.frame.gravity_load, [6.0e6, 5.0e6, 3.0e6])
    assert cfg.gravity_from == "floor_gravity_load"
    one = nl_config(tmp_path, "floor_gravity_load = 2.0e6\n").frame
    np.testing.assert_array_equal(one.gravity_load, [6.0e6, 4.0e6, 2.0e6])
    given = nl_config(tmp_path, "gravity_load = [7.0e6, 4.0e6, 1.0e6]\n").frame
    np.testing.assert_array_equal(given.gravity_load, [7.0e6, 4.0e6, 1.0e6])


def test_bouc_wen_parameters(tmp_path):
    cfg = nl_config(tmp_path, 'yield_shear = 1e6\nlaw = ["bouc-wen", "bouc-wen", "bilinear"]\n',
                    "[building.bouc_wen]\nA = 1.0\nbeta = [0.6, 0.5, 0.5]\ngamma = 0.2\nn = 3\n")
    frame = cfg.frame
    assert frame.law == ("bouc-wen", "bouc-wen", "bilinear")
    np.testing.assert_array_equal(frame.law_params["beta"], [0.6, 0.5, 0.5])
    np.testing.assert_array_equal(frame.law_params["gamma"], [0.2, 0.2, 0.2])
    np.testing.assert_array_equal(frame.law_params["n"], [3.0, 3.0, 3.0])


@pytest.mark.parametrize("model", ["rayleigh", "stiffness"])
def test_damping_on_tangent_stiffness(tmp_path, model):
    cfg = nl_config(tmp_path, "yield_shear = 1e6\n", f'[damping]\nmodel = "{model}"\nstiffness = "tangent"\n')
    assert cfg.frame.damping.stiffness == "tangent"
    default = nl_config(tmp_path, "yield_shear = 1e6\n", f'[damping]\nmodel = "{model}"\n')
    assert default.frame.damping.stiffness == "initial"


def test_analysis_solver_keys_and_twin(tmp_path):
    cfg = nl_config(tmp_path, "yield_shear = 1e6\n",
                    "[analysis]\ncollapse_drift = 0.08\ntol_drift = 1e-9\ntol_force = 1e-7\n"
                    "max_iter = 30\nmax_depth = 5\nlinear_twin = true\n")
    assert cfg.analysis.collapse_drift == 0.08 and cfg.analysis.linear_twin is True
    kw = cfg.run_kwargs()
    assert kw["collapse_drift"] == 0.08
    assert (kw["tol_drift"], kw["tol_force"], kw["max_iter"], kw["max_depth"]) == (1e-9, 1e-7, 30, 5)
    other = cfg.run_kwargs(method="state-space")
    assert "tol_drift" not in other and other["collapse_drift"] == 0.08


NL_BAD = {
    "yield shear zero": ("yield_shear = [1e6, 0.0, 1e6]\n", "",
                         ["[building] yield_shear", "storey 2 has 0.0", "positive"]),
    "yield shear negative": ("yield_shear = -1e6\n", "", ["[building] yield_shear", "-1000000.0", "positive"]),
    "hardening one": ("yield_shear = 1e6\nhardening = [0.0, 1.0, 0.0]\n", "",
                      ["[building] hardening", "storey 2 has 1.0", "[0, 1)"]),
    "hardening negative": ("yield_shear = 1e6\nhardening = -0.01\n", "",
                           ["[building] hardening", "-0.01", "[0, 1)"]),
    "hardening without strength": ("hardening = 0.03\n", "", ["[building] hardening", "yield_shear"]),
    "unknown law": ("yield_shear = 1e6\nlaw = \"bilnear\"\n", "",
                    ["[building] law", "'bilnear'", "did you mean 'bilinear'?"]),
    "unknown law in a list": ("yield_shear = 1e6\nlaw = [\"bilinear\", \"bouc-wenn\", \"linear\"]\n", "",
                              ["[building] law", "storey 2", "did you mean 'bouc-wen'?"]),
    "law list length": ("yield_shear = 1e6\nlaw = [\"bilinear\", \"linear\"]\n", "",
                        ["[building] law", "2 values", "mass has 3"]),
    "law without strength": ("law = \"peak-oriented\"\n", "", ["[building] law", "peak-oriented", "yield_shear"]),
    "strength unused": ("yield_shear = 1e6\nlaw = \"linear\"\n", "", ["[building] yield_shear", "not used"]),
    "bouc-wen gamma": ("yield_shear = 1e6\nlaw = \"bouc-wen\"\n",
                       "[building.bouc_wen]\nbeta = 0.4\ngamma = [0.0, 0.0, 0.5]\n",
                       ["[building.bouc_wen]", "storey 3", "gamma", "[-0.4, 0.4]"]),
    "bouc-wen key": ("yield_shear = 1e6\nlaw = \"bouc-wen\"\n", "[building.bouc_wen]\nalpha = 0.1\n",
                     ["[building.bouc_wen]", "'alpha'"]),
    "bouc-wen table unused": ("yield_shear = 1e6\n", "[building.bouc_wen]\nn = 2\n",
                              ["[building.bouc_wen]", "bouc-wen", "no storey"]),
    "bouc-wen list length": ("yield_shear = 1e6\nlaw = \"bouc-wen\"\n", "[building.bouc_wen]\nn = [2, 2]\n",
                             ["[building.bouc_wen] n", "2 values", "3 storeys"]),
    "two strength keys": ("yield_shear = 1e6\nyield_drift_ratio = 0.005\n", "",
                          ["[building]", "yield_shear and yield_drift_ratio", "keep one"]),
    "three strength keys": ("yield_shear = 1e6\nyield_drift_ratio = 0.005\nyield_base_shear_coefficient = 0.1\n",
                            "", ["[building]", "yield_shear, yield_drift_ratio and yield_base_shear_coefficient"]),
    "yield drift ratio zero": ("yield_drift_ratio = [0.005, 0.0, 0.005]\n", "",
                               ["[building] yield_drift_ratio", "storey 2 has 0.0"]),
    "coefficient list": ("yield_base_shear_coefficient = [0.1, 0.1, 0.1]\n", "",
                         ["[building] yield_base_shear_coefficient", "a list", "positive number"]),
    "gravity two ways": ("gravity_load = 1e6\ngravity = \"mass\"\n", "",
                         ["[building]", "gravity_load and gravity", "keep one"]),
    "gravity three ways": ("gravity_load = 1e6\nfloor_gravity_load = 1e6\ngravity = \"mass\"\n", "",
                           ["[building]", "gravity_load, floor_gravity_load and gravity"]),
    "gravity source": ("gravity = \"masses\"\n", "", ["[building] gravity", "'masses'", "did you mean 'mass'?"]),
    "negative floor load": ("floor_gravity_load = [1e6, -1e6, 1e6]\n", "",
                            ["[building] floor_gravity_load", "floor 2 has -1000000.0"]),
    "tangent with modal damping": ("yield_shear = 1e6\n", "[damping]\nmodel = \"modal\"\nstiffness = \"tangent\"\n",
                                   ["[damping] stiffness", "'modal'", "rayleigh and stiffness"]),
    "damping stiffness value": ("yield_shear = 1e6\n", "[damping]\nstiffness = \"secant\"\n",
                                ["[damping] stiffness", "'secant'", "initial"]),
    "collapse drift above one": ("yield_shear = 1e6\n", "[analysis]\ncollapse_drift = 10\n",
                                 ["[analysis] collapse_drift", "(0, 1]"]),
    "max_iter not whole": ("yield_shear = 1e6\n", "[analysis]\nmax_iter = 2.5\n",
                           ["[analysis] max_iter", "whole number"]),
    "max_depth too deep": ("yield_shear = 1e6\n", "[analysis]\nmax_depth = 40\n",
                           ["[analysis] max_depth", "0 to 20"]),
    "tolerance for state-space": ("", "[analysis]\nmethod = \"state-space\"\ntol_force = 1e-6\n",
                                  ["[analysis] tol_force", "only used with method 'newmark'"]),
    "twin of a linear frame": ("", "[analysis]\nlinear_twin = true\n", ["[analysis] linear_twin", "already linear"]),
    "twin not a boolean": ("yield_shear = 1e6\n", "[analysis]\nlinear_twin = \"yes\"\n",
                           ["[analysis] linear_twin", "true or false"]),
    "typo in a new key": ("yeild_shear = 1e6\n", "", ["[building]", "'yeild_shear'", "did you mean 'yield_shear'?"]),
}


@pytest.mark.parametrize("case", list(NL_BAD))
def test_nonlinear_mistakes_name_file_and_key(tmp_path, case):
    building_extra, tables, fragments = NL_BAD[case]
    path = tmp_path / "bad.toml"
    path.write_text(NL_BASE + building_extra + tables + HARMONIC_ONLY)
    with pytest.raises(ConfigError) as info:
        load_config(path)
    message = str(info.value)
    assert message.startswith(f"{path}: "), message
    assert "\n" not in message
    for fragment in fragments:
        assert fragment in message, (fragment, message)
