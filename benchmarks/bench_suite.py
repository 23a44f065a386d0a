"""Benchmark of an overnight suite through the command line runner.

44 synthetic records (Kanai-Tajimi / Clough-Penzien noise, seeded) through a
9-storey bilinear frame with full histories written, run by ``swaysim run`` in
a fresh process with 1 and 2 workers; beside it the pure kernel time of the
same analyses (``simulate.run`` in one process, numba threads over records) and
a 1,000-analysis suite for the memory figure (peak resident memory of the
process tree).

    python benchmarks/bench_suite.py [--records 44] [--duration 30] [--big 1000] [--write]
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from _report import write_section
import simulate as ss
from simulate.excitation.synthetic import SaragoniHart


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
[records]
files = ["{pattern}"]
units = "g"
"""


def run_cli(config: Path, out: Path, workers: int) -> tuple[float, float]:
    """Wall time and peak resident memory (MB) of ``swaysim run`` in a fresh process tree."""
    cmd = [sys.executable, "-c", "from simulate.cli import main; main()", "run", str(config), "-o", str(out),
           "--quiet", "--workers", str(workers)]
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    t = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - t
    peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return wall, max(peak, before) / 1024.0


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--records", type=int, default=44)
    parser.add_argument("--duration", type=float, default=30.0)
    parser.add_argument("--big", type=int, default=1000, help="analyses in the memory suite (0: skip)")
    parser.add_argument("--write", action="store_true")
    args = parser.parse_args()

    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        rec_dir = tmp / "records"
        rec_dir.mkdir()
        write_records(rec_dir, args.records, args.duration)
        config = tmp / "suite.toml"
        config.write_text(CONFIG.format(pattern=(rec_dir / "*.txt").as_posix()))
        cfg = ss.load_config(config)
        recs = cfg.excitations()
        steps = sum(r.n_steps for r in recs)
        n = cfg.frame.n_storeys
        ss.run(cfg.frame, recs[:2])  # compile or load the kernels
        t = time.perf_counter()
        ds = ss.run(cfg.frame, recs)
        kernel_wall = time.perf_counter() - t
        iters = float(ds["newton_iterations"].sum()) / steps
        statuses = ", ".join(f"{k} {v}" for k, v in zip(*np.unique(ds["status"].values.astype(str),
                                                                        return_counts=True)))
        del ds
        run_cli(config, tmp / "warm.nc", 1)  # numba cache warm for the worker processes too
        results = {}
        for workers in (1, 2):
            wall, rss = run_cli(config, tmp / f"w{workers}.nc", workers)
            results[workers] = (wall, rss)
            rows.append((f"swaysim run, {workers} worker{'s' if workers > 1 else ''}", wall,
                         args.records / wall, steps * n / wall / 1e6, rss))
        rows.insert(0, ("ss.run in one process (numba threads)", kernel_wall, args.records / kernel_wall,
                        steps * n / kernel_wall / 1e6, float("nan")))
        speedup = results[1][0] / results[2][0]
        overhead = results[2][0] / kernel_wall
        big_line = ""
        if args.big:
            big_cfg = tmp / "big.toml"
            reps = max(1, args.big // args.records)
            scales = ", ".join(f"{1.0 + 0.01 * k:.2f}" for k in range(reps))
            big_cfg.write_text(CONFIG.format(pattern=(rec_dir / "*.txt").as_posix()).replace(
                "tail = 0.0", f"tail = 0.0\nscale = [{scales}]"))
            wall, rss = run_cli(big_cfg, tmp / "big.nc", 2)
            size = (tmp / "big.nc").stat().st_size / 2**20
            big_line = (f"{reps * args.records} analyses ({reps} scale factors x {args.records} records), "
                        f"2 workers, full histories: {wall:.0f} s, peak resident memory {rss:.0f} MB "
                        f"(largest process), results file {size:.0f} MB")

    lines = [f"Suite benchmark, {time.strftime('%Y-%m-%d')}, {platform.machine()}, {os.cpu_count()} cores, "
             f"load average {os.getloadavg()[0]:.2f}",
             f"{args.records} records x {args.duration:g} s at dt 0.01 s through a 9-storey bilinear frame "
             f"(T1 1.0 s, yield drift 0.4 %), full histories written; {iters:.2f} Newton iterations a step; "
             f"statuses: {statuses}", "",
             "| run | wall time (s) | analyses / s | million storey-steps / s | peak resident memory (MB) |",
             "|---|---:|---:|---:|---:|"]
    for name, wall, aps, msps, rss in rows:
        lines.append(f"| {name} | {wall:.2f} | {aps:.1f} | {msps:.1f} | "
                     f"{'-' if np.isnan(rss) else f'{rss:.0f}'} |")
    lines += ["", f"speed-up 1 -> 2 workers: {speedup:.2f}x; runner overhead (swaysim run, 2 workers, "
                  f"over ss.run in one process): {overhead:.2f}x (includes process start, reading the "
                  f"records and writing every batch and the combined file)"]
    if big_line:
        lines.append(big_line)
    table = "\n".join(lines)
    print(table)
    if args.write:
        write_section("suite table", "`bench_suite.py`: an overnight suite through `swaysim run`", table)


if __name__ == "__main__":
    main()
