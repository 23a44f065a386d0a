"""Speed of the linear time-stepping kernels, with reference implementations beside them.

Run from the repository root::

    python benchmarks/bench_linear.py            # print the table
    python benchmarks/bench_linear.py --write    # also put it into benchmarks/README.md
    python benchmarks/bench_linear.py --profile  # add a cProfile listing of one ss.run call

Every kernel column is the best of several repeats, in nanoseconds per storey per
step (wall time of one call / (steps x storeys)). The frames are N-storey shear
frames with 5 % Rayleigh damping in modes 1 and 3 (tridiagonal C); the record is
seeded white noise, dt = 0.01 s. See benchmarks/README.md for what each row means.
This is a benchmark, never a test: it asserts nothing about time.
"""

from __future__ import annotations

import argparse
import ctypes
import datetime as _dt
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numba
import numpy as np
import scipy
import scipy.signal

from _report import machine
import simulate as ss
from simulate.kernels.methods import make_method
from simulate.kernels.newmark import _newmark_tridiagonal, _newmark_tridiagonal_batch
from simulate.kernels.statespace import _state_space_foh

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
README = HERE / "README.md"
C_SOURCE = HERE / "c_newmark.c"
BEGIN, END = "<!-- bench_linear:begin -->", "<!-- bench_linear:end -->"

DT = 0.01
GAMMA, BETA = 0.5, 0.25


# ----------------------------------------------------------------------------- inputs
def make_frame(n: int) -> ss.ShearFrame:
    """N storeys, T1 = 0.1 N s (a common rule of thumb), stiffness falling linearly up the height."""
    mass = np.full(n, 2.0e5)
    mass[-1] = 1.5e5
    height = np.full(n, 3.2)
    height[0] = 4.0
    profile = (n - np.arange(n)) / n + 0.5
    stiffness = ss.stiffness_for_period(mass, height, 0.1 * n, profile)
    modes = (1, 3) if n >= 3 else (1, 2)
    return ss.ShearFrame(mass=mass, stiffness=stiffness, height=height,
                         damping=ss.Rayleigh(ratio=0.05, modes=modes), name=f"bench-{n}")


def ground_motion(seed: int, steps: int) -> np.ndarray:
    """Seeded white-noise ground acceleration, m/s^2 (0.1 g standard deviation)."""
    return 0.1 * ss.STANDARD_GRAVITY * np.random.default_rng(seed).standard_normal(steps)


def empty_outputs(*shape) -> list[np.ndarray]:
    """Five history arrays, touched once so page faults stay out of the timings."""
    outs = [np.empty(shape) for _ in range(5)]
    for out in outs:
        out.fill(0.0)
    return outs


#: Seconds ``settle`` may wait for other processes to leave the CPUs (0: never wait).
IDLE_WAIT = [0.0]


def _cpu_times():
    with open("/proc/stat") as f:
        fields = [float(x) for x in f.readline().split()[1:]]
    return fields[3] + fields[4], sum(fields)  # idle + iowait, total


def settle() -> None:
    """Wait (up to IDLE_WAIT s) until other processes use under 10 % of the CPUs for half a second.

    On a shared machine another job holding a core slows the serial kernels and
    stalls the parallel ones; measuring only in idle spells keeps runs comparable.
    Does nothing where /proc/stat is missing.
    """
    deadline = time.monotonic() + IDLE_WAIT[0]
    while time.monotonic() < deadline:
        try:
            idle0, total0 = _cpu_times()
            time.sleep(0.5)
            idle1, total1 = _cpu_times()
        except (OSError, ValueError, IndexError):
            return
        if total1 > total0 and (idle1 - idle0) / (total1 - total0) > 0.9:
            return


def best_time(fn, repeat: int) -> float:
    """Best wall time of ``repeat`` calls of ``fn`` after one warm-up call, s."""
    fn()
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


# ------------------------------------------------------------------ reference methods
def numpy_newmark(frame: ss.ShearFrame, ag: np.ndarray, dt: float, gamma=GAMMA, beta=BETA):
    """Newmark-beta written the plain NumPy way: dense M, C, K and array operations every step.

    Same scheme and outputs as ``_newmark_tridiagonal`` (Chopra, *Dynamics of
    Structures*, Table 15.3.3), with Khat inverted once.
    """
    n = frame.n_storeys
    T = ag.shape[0]
    M = frame.mass_matrix()
    K = frame.stiffness_matrix()
    C = frame.damping_matrix()
    m, k, h = frame.mass, frame.stiffness, frame.height
    c1, c2, c3 = 1.0 / (beta * dt * dt), 1.0 / (beta * dt), 0.5 / beta - 1.0
    q1, q2, q3 = gamma / (beta * dt), gamma / beta - 1.0, dt * (0.5 * gamma / beta - 1.0)
    g1, g2, g3 = gamma / (beta * dt), 1.0 - gamma / beta, dt * (1.0 - 0.5 * gamma / beta)
    khat_inv = np.linalg.inv(K + c1 * M + q1 * C)
    U, V, A, D, S = (np.empty((T, n)) for _ in range(5))
    u = np.zeros(n)
    v = np.zeros(n)
    a = -ag[0] * np.ones(n)
    U[0], V[0], A[0], D[0], S[0] = u, v, a + ag[0], 0.0, 0.0
    for i in range(1, T):
        rhs = -m * ag[i] + M @ (c1 * u + c2 * v + c3 * a) + C @ (q1 * u + q2 * v + q3 * a)
        un = khat_inv @ rhs
        du = un - u
        an = c1 * du - c2 * v - c3 * a
        v = g1 * du + g2 * v + g3 * a
        a = an
        u = un
        d = np.diff(u, prepend=0.0)
        U[i], V[i], A[i], D[i], S[i] = u, v, a + ag[i], d / h, k * d
    return U, V, A, D, S


def lsim_system(frame: ss.ShearFrame):
    """scipy.signal.StateSpace of x' = A x + B ag with x = [u; v], B = [0; -1], outputs u."""
    n = frame.n_storeys
    A = frame.state_matrix()
    B = np.zeros((2 * n, 1))
    B[n:, 0] = -1.0
    Cout = np.hstack([np.eye(n), np.zeros((n, n))])
    return scipy.signal.StateSpace(A, B, Cout, np.zeros((n, 1)))


def build_c_kernel(folder: Path):
    """Compile benchmarks/c_newmark.c with gcc -O3; (ctypes function, note) or (None, reason)."""
    gcc = shutil.which("gcc")
    if gcc is None:
        return None, "C column skipped: gcc not found"
    lib = folder / "libc_newmark.so"
    cmd = [gcc, "-O3", "-ffp-contract=off", "-shared", "-fPIC", "-o", str(lib), str(C_SOURCE)]
    proc = subprocess.run(cmd, capture_output=True, text=True)
    if proc.returncode != 0:
        return None, f"C column skipped: gcc failed ({proc.stderr.strip()[:200]})"
    fn = ctypes.CDLL(str(lib)).newmark_tridiagonal
    P = ctypes.POINTER(ctypes.c_double)
    fn.argtypes = [ctypes.c_int] + [P] * 8 + [ctypes.c_long] + [ctypes.c_double] * 3 + [P] * 5
    fn.restype = ctypes.c_int
    return fn, "gcc -O3 -ffp-contract=off"


def c_call(fn, frame, prepared, ag, outs):
    """A closure that runs the C kernel on the same arrays as the numba kernel."""
    _, (m, k, h, kd, ko), (cd, co) = prepared
    P = ctypes.POINTER(ctypes.c_double)
    arrays = [m, k, h, kd, ko, cd, co, ag]
    ptrs = [x.ctypes.data_as(P) for x in arrays]
    out_ptrs = [x.ctypes.data_as(P) for x in outs]
    n, T = frame.n_storeys, ag.shape[0]

    def run():
        fn(n, *ptrs, T, DT, GAMMA, BETA, *out_ptrs)

    run.keep = arrays  # keep the arrays alive as long as the closure
    return run


def rel_diff(a: np.ndarray, b: np.ndarray) -> float:
    """max |a - b| / max |b|."""
    return float(np.max(np.abs(a - b)) / np.max(np.abs(b)))


# ---------------------------------------------------------------------- measurements
def kernel_rows(sizes, steps, repeat, c_fn):
    """Per-size timings of the serial kernels and the reference methods, ns per storey-step."""
    rows = {key: {} for key in ("numba", "c", "foh", "lsim", "numpy")}
    checks = []
    ag = ground_motion(1, steps)
    no_force = None
    for n in sizes:
        settle()
        frame = make_frame(n)
        scale = 1e9 / (steps * n)
        prepared = make_method("newmark").prepare(frame, DT)
        _, common, extra = prepared
        no_force = np.zeros((1, n))
        outs = empty_outputs(steps, n)
        newmark_args = (*common, *extra, ag, no_force, False, steps, DT, GAMMA, BETA, *outs)
        rows["numba"][n] = best_time(lambda: _newmark_tridiagonal(*newmark_args), repeat) * scale
        ref = [x.copy() for x in outs]

        if c_fn is not None:
            c_outs = empty_outputs(steps, n)
            run_c = c_call(c_fn, frame, prepared, ag, c_outs)
            rows["c"][n] = best_time(run_c, repeat) * scale
            same = all(np.array_equal(x, y) for x, y in zip(c_outs, ref))
            checks.append(f"N={n}: C kernel {'bit-identical to' if same else 'DIFFERS from'} numba Newmark")

        ss_common, ss_extra = make_method("state-space").prepare(frame, DT)
        foh_outs = empty_outputs(steps, n)
        foh_args = (*ss_common, *ss_extra, ag, no_force, False, steps, *foh_outs)
        rows["foh"][n] = best_time(lambda: _state_space_foh(*foh_args), repeat) * scale

        system = lsim_system(frame)
        t = np.arange(steps) * DT
        slow = max(2, repeat // 3)
        rows["lsim"][n] = best_time(lambda: scipy.signal.lsim(system, ag, t), slow) * scale
        y = scipy.signal.lsim(system, ag, t)[1].reshape(steps, n)
        checks.append(f"N={n}: lsim vs state-space kernel, displacement rel. diff {rel_diff(foh_outs[0], y):.1e}")

        rows["numpy"][n] = best_time(lambda: numpy_newmark(frame, ag, DT), slow) * scale
        U = numpy_newmark(frame, ag, DT)[0]
        checks.append(f"N={n}: NumPy loop vs numba Newmark, displacement rel. diff {rel_diff(U, ref[0]):.1e}")
    return rows, checks


def batch_rows(n, steps, n_records, repeat):
    """``ss.run`` on a batch against the batch kernel alone, and the kernel's thread speed-up."""
    frame = make_frame(n)
    records = [ss.Record(acceleration=ground_motion(100 + r, steps), dt=DT, units="m/s2",
                         name=f"noise-{r:02d}") for r in range(n_records)]
    _, common, extra = make_method("newmark").prepare(frame, DT)
    ag = np.stack([rec.to_si() for rec in records])
    force = np.zeros((n_records, 1, n))
    nsteps = np.full(n_records, steps, dtype=np.int64)
    outs = empty_outputs(n_records, steps, n)
    args = (*common, *extra, ag, force, False, nsteps, DT, GAMMA, BETA, *outs)
    settle()
    threads = numba.get_num_threads()
    kernel = {}
    for nt in sorted({1, threads}):
        numba.set_num_threads(nt)
        try:
            kernel[nt] = best_time(lambda: _newmark_tridiagonal_batch(*args), repeat)
        finally:
            numba.set_num_threads(threads)

    def fresh():
        # what run() pays at least: new history arrays, first touched by the kernel
        new = [np.empty((n_records, steps, n)) for _ in range(5)]
        _newmark_tridiagonal_batch(*args[:-5], *new)

    fresh_time = best_time(fresh, max(3, repeat // 2))
    run = best_time(lambda: ss.run(frame, records), max(3, repeat // 2))
    return {"threads": threads, "kernel": kernel, "fresh": fresh_time, "run": run,
            "storey_steps": n_records * steps * n, "records": n_records, "n": n}


STARTUP_SCRIPT = r"""
import json, os, time
t0 = time.perf_counter()
import numpy as np
import simulate as ss
t1 = time.perf_counter()
frame = ss.ShearFrame(mass=[2.0e5] * 3, stiffness=[3.0e8, 2.5e8, 2.0e8], height=[3.2] * 3)
rec = ss.Record(acceleration=np.sin(0.3 * np.arange(500)), dt=0.01, units="m/s2", name="tiny")
ds = ss.run(frame, [rec])
peak = float(ds["peak_drift_ratio"].max())
t2 = time.perf_counter()
print(json.dumps({"import": t1 - t0, "first_run": t2 - t1,
                  "since_start": time.time() - float(os.environ["BENCH_SPAWN_TIME"])}))
"""


def startup_rows(cache: Path):
    """Cold (empty numba cache) and cached start: import time and time to the first result."""
    cache.mkdir()
    results = {}
    for label in ("cold", "cached", "cached again"):
        settle()
        env = dict(os.environ, NUMBA_CACHE_DIR=str(cache), BENCH_SPAWN_TIME=repr(time.time()))
        proc = subprocess.run([sys.executable, "-c", STARTUP_SCRIPT], cwd=ROOT, env=env,
                              capture_output=True, text=True)
        if proc.returncode != 0:
            raise RuntimeError(f"start-up run failed:\n{proc.stderr}")
        results[label] = json.loads(proc.stdout.strip().splitlines()[-1])
    cached = min((results["cached"], results["cached again"]), key=lambda r: r["since_start"])
    return {"cold": results["cold"], "cached": cached,
            "import": min(results["cached"]["import"], results["cached again"]["import"])}


def keep_best(best, new):
    """Merge one round of measurements into the best so far (smallest times win)."""
    if best is None:
        return new
    if isinstance(new, dict):
        if "since_start" in new:
            return min(best, new, key=lambda r: r["since_start"])
        return {key: keep_best(best.get(key), value) for key, value in new.items()}
    if isinstance(new, float):
        return min(best, new)
    return new


# -------------------------------------------------------------------------- reporting
def fmt(x, spec=".1f", suffix=""):
    return "—" if x is None else f"{x:{spec}}{suffix}"


def table(sizes, steps, repeat, rows, batch, startup, c_note) -> str:
    def line(label, values, aim=""):
        return "| " + " | ".join([label, *values, aim]) + " |"

    per_n = lambda key: [fmt(rows[key].get(n)) for n in sizes]  # noqa: E731
    ratio = lambda key: [fmt(rows[key][n] / rows["numba"][n], ".0f", "x") for n in sizes]  # noqa: E731
    head = line("measure", [f"N = {n}" for n in sizes], "aim")
    sep = "|---|" + "--:|" * len(sizes) + "---|"
    lines = [head, sep,
             line("numba Newmark `_newmark_tridiagonal`, ns/storey-step", per_n("numba"), "<= 10"),
             line(f"C Newmark ({c_note}), ns/storey-step" if rows["c"] else "C Newmark, ns/storey-step",
                  per_n("c"), "6-9"),
             line("numba state-space `_state_space_foh`, ns/storey-step", per_n("foh"), "O(N^2)"),
             line("scipy.signal.lsim, ns/storey-step", per_n("lsim")),
             line("plain NumPy Newmark loop, ns/storey-step", per_n("numpy")),
             line("lsim / numba Newmark", ratio("lsim"), "80-160x"),
             line("NumPy loop / numba Newmark", ratio("numpy"), ">= 70x")]

    def at(n, text):
        """``text`` in the column of N = n (or, if n is not a column, in the last one, labelled)."""
        if n not in sizes:
            return [""] * (len(sizes) - 1) + [f"N={n}: {text}"]
        return [text if m == n else "" for m in sizes]

    if batch:
        n, threads = batch["n"], batch["threads"]
        k1, kt = batch["kernel"][1], batch["kernel"][threads]
        per = 1e9 * kt / batch["storey_steps"]
        lines += [
            line(f"batch of {batch['records']} records x {steps} steps: batch kernel, {threads} threads, ms",
                 at(n, f"{kt * 1e3:.0f} ({per:.1f} ns/storey-step)")),
            line("batch: the same on newly allocated outputs (first touch), ms",
                 at(n, f"{batch['fresh'] * 1e3:.0f}")),
            line("batch: `ss.run` (records in, dataset out), ms", at(n, f"{batch['run'] * 1e3:.0f}")),
            line("batch: `ss.run` / batch kernel", at(n, f"{batch['run'] / kt:.2f}x"), "<= 2x"),
            line(f"batch kernel speed-up, {threads} threads vs 1", at(n, f"{k1 / kt:.2f}x"),
                 f"~{threads}x"),
        ]
    if startup:
        n0 = sizes[0]
        cold, cached = startup["cold"], startup["cached"]
        lines += [
            line("start-up: `import simulate`, s", at(n0, f"{startup['import']:.2f}")),
            line("start-up, empty numba cache: process start to first `ss.run` result, s",
                 at(n0, f"{cold['since_start']:.1f} (JIT {cold['first_run']:.1f})")),
            line("start-up, cached: process start to first `ss.run` result, s",
                 at(n0, f"{cached['since_start']:.2f} (first run {cached['first_run']:.2f})"), "<= 2"),
        ]
    return "\n".join(lines)


def write_readme(text: str) -> None:
    body = README.read_text() if README.exists() else f"# Benchmarks\n\n{BEGIN}\n{END}\n"
    if BEGIN not in body or END not in body:
        body = body.rstrip() + f"\n\n{BEGIN}\n{END}\n"
    start = body.index(BEGIN) + len(BEGIN)
    stop = body.index(END)
    README.write_text(body[:start] + "\n" + text.strip() + "\n" + body[stop:])


def profile_run(n, steps, n_records) -> str:
    import cProfile
    import io
    import pstats

    frame = make_frame(n)
    records = [ss.Record(acceleration=ground_motion(100 + r, steps), dt=DT, units="m/s2",
                         name=f"noise-{r:02d}") for r in range(n_records)]
    ss.run(frame, records[:1])
    prof = cProfile.Profile()
    prof.runcall(ss.run, frame, records)
    buf = io.StringIO()
    pstats.Stats(prof, stream=buf).sort_stats("cumulative").print_stats(25)
    return buf.getvalue()


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--sizes", type=lambda s: [int(x) for x in s.split(",")], default=[3, 9, 20],
                        help="storey counts, comma separated (default 3,9,20)")
    parser.add_argument("--steps", type=int, default=10_000, help="steps per record (default 10000)")
    parser.add_argument("--repeat", type=int, default=9, help="repeats per numba kernel timing (best is kept)")
    parser.add_argument("--rounds", type=int, default=3,
                        help="repeat all measurements this many times and keep the best (default 3)")
    parser.add_argument("--records", type=int, default=44, help="records in the batch (default 44)")
    parser.add_argument("--batch-storeys", type=int, default=9, help="storeys of the batch frame (default 9)")
    parser.add_argument("--no-batch", action="store_true", help="skip the batch rows")
    parser.add_argument("--no-startup", action="store_true", help="skip the start-up rows")
    parser.add_argument("--profile", action="store_true", help="print a cProfile listing of one ss.run call")
    parser.add_argument("--write", action="store_true", help="write the table into benchmarks/README.md")
    parser.add_argument("--wait-idle", type=float, default=60.0,
                        help="before each measurement wait up to this many seconds for the CPUs to be "
                             "idle (default 60; 0 to measure at once)")
    args = parser.parse_args(argv)
    IDLE_WAIT[0] = max(0.0, args.wait_idle)

    rows = batch = startup = checks = None
    with tempfile.TemporaryDirectory(prefix="bench-linear-") as tmpdir:
        tmp = Path(tmpdir)
        c_fn, c_note = build_c_kernel(tmp)
        # whole rounds, best of each entry kept: a busy spell on a shared machine
        # then spoils one round, not the table
        for k in range(args.rounds):
            if not args.no_startup:
                startup = keep_best(startup, startup_rows(tmp / f"numba-cache-{k}"))
            new_rows, new_checks = kernel_rows(args.sizes, args.steps, args.repeat, c_fn)
            rows = keep_best(rows, new_rows)
            checks = checks or new_checks
            if not args.no_batch:
                batch = keep_best(batch, batch_rows(args.batch_storeys, args.steps, args.records,
                                                    args.repeat))
    stamp = _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z")
    text = "\n".join([
        f"Measured {stamp} on {machine()}.",
        f"Record: seeded white noise, {args.steps} steps, dt = {DT} s; frames with 5 % Rayleigh damping; "
        f"{args.rounds} rounds of best-of-{args.repeat} for the numba and C kernels (best-of-"
        f"{max(2, args.repeat // 3)} for lsim and NumPy); each entry is its best round.",
        "",
        table(args.sizes, args.steps, args.repeat, rows, batch, startup, c_note),
        "",
        "Checks: " + "; ".join(checks) + ".",
    ])
    print(text)
    if args.profile:
        print()
        print(profile_run(args.batch_storeys, args.steps, args.records))
    if args.write:
        write_readme(text)
        print(f"\nwritten to {README.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
