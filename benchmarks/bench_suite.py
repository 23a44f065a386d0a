"""Benchmark of an overnight suite through the command-line runner.

44 synthetic records (Kanai-Tajimi / Clough-Penzien noise, seeded) through a
9-storey bilinear frame, run by ``swaysim run`` in a fresh process; beside it
the pure kernel time of the same analyses (the batch kernel on preallocated
outputs, numba threads over records) and ``simulate.run`` in one process. Then
a 1,012-analysis suite (the 44 records at 23 scale factors) for throughput,
memory and the bytes the runner writes, against the write bandwidth of the disk
the run folder is on.

    python benchmarks/bench_suite.py [--records 44] [--duration 30] [--big 1000] [--write]
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numba
import numpy as np

from _report import machine, write_section
import simulate as ss
from simulate.excitation.synthetic import SaragoniHart
from simulate.kernels.methods import make_method
from simulate.results.schema import HISTORIES
from simulate.suite.plan import load_arrays, make_plan


def write_records(folder: Path, count: int, duration: float) -> list[Path]:
    """Seeded synthetic records as two-column text files (time s, acceleration g)."""
    paths = []
    for i in range(count):
        rec = ss.kanai_tajimi_record(duration, 0.01, wg=2 * np.pi * 2.5, zg=0.6, wf=2 * np.pi * 0.3, zf=0.6,
                                     envelope=SaragoniHart(t_peak=0.3 * duration), pga=0.45, seed=1000 + i,
                                     name=f"b{i:04d}")
        path = folder / f"b{i:04d}.txt"
        np.savetxt(path, np.column_stack([rec.time, rec.acceleration]), fmt="%.6g",
                   header=f"synthetic benchmark record, seed {1000 + i}\ndt = 0.01 s\nunits = g")
        paths.append(path)
    return paths


CONFIG = """
title = "benchmark: nine-storey bilinear frame (invented)"
[building]
storeys = 9
mass = 4.0e5
height = 3.5
period = 1.0
stiffness_profile = "linear"
yield_drift_ratio = 0.004
hardening = 0.03
[analysis]
tail = 0.0
{scale}
[records]
files = ["{pattern}"]
units = "g"
"""


def kernel_time(frame, records, threads: int, repeat: int = 9) -> float:
    """Best wall time of the batch kernel alone on preallocated, touched outputs."""
    integrator = make_method("newmark")
    plan = make_plan(records, frame.n_storeys, dt=None, scale=1.0, tail=0.0)
    prepared = integrator.prepare(frame, plan.dt)
    ag, force = load_arrays(records, plan, frame.n_storeys)
    R, T, n = len(records), plan.n_time, frame.n_storeys
    best = np.inf
    old = numba.get_num_threads()
    numba.set_num_threads(threads)
    try:
        for _ in range(repeat + 1):
            outputs = tuple(np.zeros((R, T, n)) for _ in HISTORIES)
            t = time.perf_counter()
            integrator.integrate(frame, prepared, plan.dt, ag.copy(), force, plan.has_force, plan.nsteps, outputs,
                                 collapse_drift=0.10)
            best = min(best, time.perf_counter() - t)
    finally:
        numba.set_num_threads(old)
    return best


def run_time(frame, records, threads: int, repeat: int = 9) -> float:
    """Best wall time of simulate.run (plan, kernel, dataset, envelopes) in this process."""
    best = np.inf
    old = numba.get_num_threads()
    numba.set_num_threads(threads)
    try:
        for _ in range(repeat):
            t = time.perf_counter()
            ss.run(frame, records)
            best = min(best, time.perf_counter() - t)
    finally:
        numba.set_num_threads(old)
    return best


def run_cli(config: Path, out: Path, *options: str) -> tuple[float, float]:
    """Wall time and peak resident memory (MB, largest process) of ``swaysim run`` in a fresh process."""
    cmd = [sys.executable, "-c", "from simulate.cli import main; main()", "run", str(config), "-o", str(out),
           "--quiet", *options]
    t = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - t
    return wall, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0


def fresh_rss(config: Path, out: Path, *options: str) -> tuple[float, float]:
    """As run_cli, but the peak memory of this one run (through /usr/bin/time when it is there)."""
    if not Path("/usr/bin/time").exists():
        return run_cli(config, out, *options)
    cmd = ["/usr/bin/time", "-f", "%M", sys.executable, "-c", "from simulate.cli import main; main()", "run",
           str(config), "-o", str(out), "--quiet", *options]
    t = time.perf_counter()
    done = subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - t
    return wall, float(done.stderr.strip().splitlines()[-1]) / 1024.0


def disk_bandwidth(folder: Path, megabytes: int = 512) -> float:
    """MB/s of writing and fsyncing ``megabytes`` of random bytes in ``folder``."""
    block = np.random.default_rng(0).random(8 * 2 ** 20 // 8).tobytes()
    path = folder / "bandwidth.bin"
    t = time.perf_counter()
    with open(path, "wb") as handle:
        for _ in range(megabytes // 8):
            handle.write(block)
        handle.flush()
        os.fsync(handle.fileno())
    wall = time.perf_counter() - t
    path.unlink()
    return megabytes / wall


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--records", type=int, default=44)
    parser.add_argument("--duration", type=float, default=30.0)
    parser.add_argument("--big", type=int, default=1000, help="analyses in the large suite (0: skip)")
    parser.add_argument("--write", action="store_true")
    args = parser.parse_args()
    cores = numba.config.NUMBA_NUM_THREADS

    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        rec_dir = tmp / "records"
        rec_dir.mkdir()
        write_records(rec_dir, args.records, args.duration)
        pattern = (rec_dir / "*.txt").as_posix()
        config = tmp / "suite.toml"
        config.write_text(CONFIG.format(pattern=pattern, scale=""))
        cfg = ss.load_config(config)
        recs = cfg.excitations()
        frame = cfg.frame
        steps = sum(r.n_steps for r in recs)
        storey_steps = steps * frame.n_storeys
        ds = ss.run(frame, recs)  # compile or load the kernels
        iters = float(ds["newton_iterations"].sum()) / steps
        statuses = ", ".join(f"{k} {v}" for k, v in zip(*np.unique(ds["status"].values.astype(str),
                                                                        return_counts=True)))
        del ds
        kernel = {t: kernel_time(frame, recs, t) for t in (1, cores)}
        in_process = {t: run_time(frame, recs, t) for t in (1, cores)}
        run_cli(config, tmp / "warm.nc")  # numba cache warm for fresh processes too

        rows = [(f"batch kernel alone, {t} thread{'s' if t > 1 else ''}", kernel[t], None) for t in (1, cores)]
        rows += [(f"ss.run in one process, {t} thread{'s' if t > 1 else ''}", in_process[t], None)
                 for t in (1, cores)]
        cli = {}
        for label, options in (("1 worker", ["--workers", "1"]), (f"{cores} workers", ["--workers", str(cores)]),
                               (f"{cores} worker processes", ["--workers", str(cores), "--processes"]),
                               ("1 worker, envelopes only", ["--workers", "1", "--keep", "envelopes"]),
                               (f"{cores} workers, envelopes only",
                                ["--workers", str(cores), "--keep", "envelopes"])):
            best = min((fresh_rss(config, tmp / "cli.nc", *options) for _ in range(2)), key=lambda x: x[0])
            cli[label] = best
            rows.append((f"swaysim run, {label}", best[0], best[1]))
        bandwidth = disk_bandwidth(tmp)

        lines = [f"Suite benchmark, {time.strftime('%Y-%m-%d')}; {machine()}; load average "
                 f"{os.getloadavg()[0]:.2f}",
                 f"{args.records} records x {args.duration:g} s at dt 0.01 s through a 9-storey bilinear frame "
                 f"(T1 1.0 s, yield drift 0.4 %), {storey_steps / 1e6:.1f} million storey-steps; {iters:.2f} "
                 f"Newton iterations a step; statuses: {statuses}", "",
                 "| run | wall time (s) | analyses / s | million storey-steps / s | peak memory (MB) |",
                 "|---|---:|---:|---:|---:|"]
        for name, wall, rss in rows:
            lines.append(f"| {name} | {wall:.3f} | {args.records / wall:.0f} | {storey_steps / wall / 1e6:.1f} | "
                         f"{'-' if rss is None else f'{rss:.0f}'} |")
        w1, w2 = cli["1 worker"][0], cli[f"{cores} workers"][0]
        e1, e2 = cli["1 worker, envelopes only"][0], cli[f"{cores} workers, envelopes only"][0]
        lines += ["",
                  f"- kernel speed-up 1 -> {cores} threads: {kernel[1] / kernel[cores]:.2f}x; "
                  f"ss.run / kernel: {in_process[cores] / kernel[cores]:.2f}x",
                  f"- swaysim run, 1 -> {cores} workers: {w1 / w2:.2f}x with histories, {e1 / e2:.2f}x envelopes "
                  f"only; runner overhead (swaysim run, {cores} workers / kernel alone): {w2 / kernel[cores]:.1f}x "
                  f"with histories, {e2 / kernel[cores]:.1f}x envelopes only. A fresh process spends about "
                  f"{e2 - in_process[cores]:.1f} s that does not grow with the suite (interpreter, imports, "
                  f"loading the compiled kernels, reading the records, the report)"]

        if args.big:
            reps = max(1, -(-args.big // args.records))
            scales = ", ".join(f"{1.0 + 0.01 * k:.2f}" for k in range(reps))
            big_cfg = tmp / "big.toml"
            big_cfg.write_text(CONFIG.format(pattern=pattern, scale=f"scale = [{scales}]"))
            n_big = reps * args.records
            big = {}
            big_steps = storey_steps * reps
            lines += ["", f"{n_big} analyses ({reps} scale factors x {args.records} records, "
                          f"{big_steps / 1e6:.0f} million storey-steps); disk write bandwidth measured "
                          f"here (write and fsync of 512 MB): {bandwidth:.0f} MB/s", "",
                      "| run | wall time (s) | analyses / s | million storey-steps / s | peak memory (MB) | "
                      "results file (MB) | MB written / s |",
                      "|---|---:|---:|---:|---:|---:|---:|"]
            for label, options in (("1 worker", ["--workers", "1"]), (f"{cores} workers", ["--workers", str(cores)]),
                                   (f"{cores} workers, --precision single",
                                    ["--workers", str(cores), "--precision", "single"]),
                                   ("1 worker, envelopes only", ["--workers", "1", "--keep", "envelopes"]),
                                   (f"{cores} workers, envelopes only",
                                    ["--workers", str(cores), "--keep", "envelopes"])):
                out = tmp / "big.nc"
                wall, rss = fresh_rss(big_cfg, out, *options)
                big[label] = wall
                size = out.stat().st_size / 2 ** 20
                # each batch file once, then the results file: about twice the file's bytes
                lines.append(f"| swaysim run, {label} | {wall:.1f} | {n_big / wall:.0f} | {big_steps / wall / 1e6:.1f} "
                             f"| {rss:.0f} | {size:.0f} | {2 * size / wall:.0f} |")
                out.unlink()
            b1, b2 = big["1 worker, envelopes only"], big[f"{cores} workers, envelopes only"]
            lines += ["", f"- envelopes only, 1 -> {cores} workers: {b1 / b2:.2f}x; runner overhead "
                          f"(wall time / kernel alone on {cores} threads, {reps * kernel[cores]:.1f} s): "
                          f"{b2 / (reps * kernel[cores]):.1f}x, or {(b2 - (e2 - in_process[cores])) / (reps * kernel[cores]):.1f}x "
                          f"without the fixed start of a fresh process",
                      "- MB written / s counts each batch file and the results file (about twice the results "
                      "file); with full histories the suite is I/O-bound: at the measured disk bandwidth, writing "
                      "them takes longer than computing them."]

    table = "\n".join(lines)
    print(table)
    if args.write:
        write_section("suite table", "`bench_suite.py`: an overnight suite through `swaysim run`", table)


if __name__ == "__main__":
    main()
