"""Speed of the response-spectrum kernels against looping scipy.signal.lsim over periods.

Run from the repository root::

    python benchmarks/bench_spectra.py                 # print the table
    python benchmarks/bench_spectra.py --records 10    # a smaller suite

The suite is synthetic until a real record set is wired in: seeded white noise
with a 4 s rise and an 8 s decay, low-passed at 15 Hz, 40 s at dt = 0.01 s
(4001 samples), peak 0.3 g. Spectra at 5 % damping for log-spaced periods.
Warm times are the best of several repeats after one call that compiles or
loads the numba cache. lsim is timed on a subset of records and periods and
scaled to the whole suite (its cost is the same for every oscillator).
This is a benchmark, never a test: it asserts nothing about time.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import math
import os
import time

import numba
import numpy as np
import scipy
import scipy.signal

from _report import machine
import simulate as ss
from simulate.excitation.spectra import inelastic_spectrum, pack_records, response_spectrum
from simulate.kernels.spectra import _elastic_spectra, substeps, tail_steps

DT = 0.01
DAMPING = 0.05


def make_records(count: int, duration: float = 40.0) -> list[ss.Record]:
    """Seeded synthetic ground motions (invented), m/s^2."""
    n = int(round(duration / DT)) + 1
    sos = scipy.signal.butter(4, 15.0, btype="low", fs=1.0 / DT, output="sos")
    rise, fall = int(4.0 / DT), int(8.0 / DT)
    envelope = np.ones(n)
    envelope[:rise] = np.linspace(0.0, 1.0, rise)
    envelope[-fall:] = np.linspace(1.0, 0.0, fall)
    records = []
    for r in range(count):
        a = scipy.signal.sosfiltfilt(sos, np.random.default_rng(1000 + r).standard_normal(n)) * envelope
        a *= 0.3 * ss.STANDARD_GRAVITY / np.abs(a).max()
        records.append(ss.Record(a, dt=DT, units="m/s2", name=f"synthetic-{r:02d}"))
    return records


def best_time(fn, repeat: int, clock=time.perf_counter) -> float:
    """Best time of ``repeat`` calls after one warm-up call, s (wall time unless ``clock`` says otherwise)."""
    fn()
    best = math.inf
    for _ in range(repeat):
        t0 = clock()
        fn()
        best = min(best, clock() - t0)
    return best


def lsim_peak(ag: np.ndarray, T: float) -> float:
    """Peak |u| at the samples by scipy.signal.lsim (input linear between samples)."""
    w = 2.0 * math.pi / T
    system = scipy.signal.StateSpace([[0.0, 1.0], [-w * w, -2.0 * DAMPING * w]], [[0.0], [-1.0]],
                                     [[1.0, 0.0]], [[0.0]])
    _, y, _ = scipy.signal.lsim(system, ag, np.arange(ag.size) * DT)
    return float(np.abs(y).max())


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--records", type=int, default=44, help="records in the suite (default 44)")
    parser.add_argument("--periods", type=int, default=200, help="periods (default 200)")
    parser.add_argument("--range", default="0.05:4", help="period range start:stop, s (default 0.05:4)")
    parser.add_argument("--repeat", type=int, default=5, help="repeats of each warm timing (best kept)")
    parser.add_argument("--lsim-records", type=int, default=2, help="records in the lsim subset")
    parser.add_argument("--lsim-periods", type=int, default=10, help="periods in the lsim subset")
    parser.add_argument("--no-inelastic", action="store_true", help="skip the constant-ductility row")
    args = parser.parse_args(argv)

    start, stop = (float(x) for x in args.range.split(":"))
    periods = np.geomspace(start, stop, args.periods)
    records = make_records(args.records)
    n_osc = len(records) * periods.size
    steps = records[0].n_steps

    # lsim over a subset, scaled to the suite (first, before numba starts its threads)
    pick = np.unique(np.round(np.linspace(0, periods.size - 1, args.lsim_periods)).astype(int))
    subset = records[:args.lsim_records]
    t0, c0 = time.perf_counter(), time.thread_time()
    ref = np.array([[lsim_peak(rec.to_si(), periods[p]) for p in pick] for rec in subset])
    lsim_each = (time.perf_counter() - t0) / ref.size
    lsim_cpu_suite = (time.thread_time() - c0) / ref.size * n_osc
    lsim_suite = lsim_each * n_osc

    # public function: records in, Dataset out (defaults: >= 20 points per period, free vibration)
    public = best_time(lambda: response_spectrum(records, periods, DAMPING), args.repeat)

    # the kernel alone, default settings and the lsim-equivalent settings, 1 thread and all
    ag, nsteps, dt = pack_records(records)
    out = [np.empty((len(records), periods.size)) for _ in range(3)]
    settings = {
        "default": (substeps(dt, periods), tail_steps(dt, periods, DAMPING)),
        "samples": (substeps(dt, periods, 0), tail_steps(dt, periods, DAMPING, False)),
    }
    threads = numba.get_num_threads()
    kernel = {}
    for key, (nsub, ntail) in settings.items():
        for nt in sorted({1, threads}):
            numba.set_num_threads(nt)
            try:
                kernel[key, nt] = best_time(
                    lambda: _elastic_spectra(ag, nsteps, dt, periods, DAMPING, nsub, ntail, *out), args.repeat)
                if nt == 1 and key == "default":
                    # processor time of the calling thread: the least disturbed by other work
                    kernel["cpu"] = best_time(
                        lambda: _elastic_spectra(ag, nsteps, dt, periods, DAMPING, nsub, ntail, *out),
                        args.repeat, clock=time.thread_time)
            finally:
                numba.set_num_threads(threads)
    work = {key: float(np.sum((nsteps[:, None] - 1 + ntail) * nsub)) for key, (nsub, ntail) in settings.items()}

    mine = response_spectrum(subset, periods[pick], DAMPING, samples_per_period=0,
                             free_vibration=False)["sd"].values
    agreement = float(np.max(np.abs(mine / ref - 1.0)))

    inel = None
    if not args.no_inelastic:
        few = records[:4]
        grid = np.geomspace(start, stop, 50)
        inel = best_time(lambda: inelastic_spectrum(few, grid, (2, 4, 6), DAMPING), max(1, args.repeat // 3))

    def row(label, value, aim=""):
        return f"| {label} | {value} | {aim} |"

    ns = lambda seconds, key: 1e9 * seconds / work[key]  # noqa: E731
    lines = [
        "| measure | value | aim |",
        "|---|--:|---|",
        row(f"`response_spectrum`, {len(records)} records x {periods.size} periods, warm, {threads} threads, s",
            f"{public:.3f}", "< 0.5"),
        row(f"kernel `_elastic_spectra`, default settings, {threads} threads, s (ns per oscillator sub-step)",
            f"{kernel['default', threads]:.3f} ({ns(kernel['default', threads], 'default'):.1f})"),
        row("kernel, default settings, 1 thread, s (processor time of that thread)",
            f"{kernel['default', 1]:.3f} ({kernel['cpu']:.3f})"),
        row(f"kernel, peaks at the samples only (lsim's work), {threads} threads, s",
            f"{kernel['samples', threads]:.3f} ({ns(kernel['samples', threads], 'samples'):.1f})"),
        row(f"scipy.signal.lsim, one oscillator ({steps} steps), ms", f"{1e3 * lsim_each:.2f}"),
        row(f"scipy.signal.lsim looped over the suite ({n_osc} oscillators, scaled from {ref.size}), s",
            f"{lsim_suite:.1f}"),
        row("speed-up: lsim loop / `response_spectrum` (defaults do more work)", f"{lsim_suite / public:.0f}x",
            ">= 100x"),
        row("speed-up: lsim loop / kernel on the same samples", f"{lsim_suite / kernel['samples', threads]:.0f}x"),
        row("speed-up in processor time, one thread: lsim loop / kernel with default settings",
            f"{lsim_cpu_suite / kernel['cpu']:.0f}x"),
        row("kernel threads speed-up", f"{kernel['default', 1] / kernel['default', threads]:.2f}x", f"~{threads}x"),
    ]
    if inel is not None:
        lines.append(row("`inelastic_spectrum`, 4 records x 50 periods x mu = 2, 4, 6, warm, s", f"{inel:.2f}"))
    stamp = _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z")
    extra = float(np.mean(settings["default"][0]))
    print("\n".join([
        f"Measured {stamp} on {machine()}; load average {os.getloadavg()[0]:.1f} at the end.",
        f"Suite: {len(records)} synthetic records, {steps} samples at dt = {DT} s; {periods.size} periods "
        f"log-spaced from {start:g} to {stop:g} s; {100 * DAMPING:g} % damping. Defaults: peaks at >= 20 "
        f"points per period (mean {extra:.2f} sub-steps per record step) and one damped period of free "
        f"vibration after each record.",
        "",
        *lines,
        "",
        f"Check: on the lsim subset ({len(subset)} records x {pick.size} periods) the kernel's SD at the "
        f"samples differs from lsim's by at most {agreement:.1e} (relative).",
    ]))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
