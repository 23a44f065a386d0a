"""Benchmark of the Newton-Newmark kernel for yielding storeys.

Prints one table: nanoseconds per storey per step of the numba kernel for
bilinear (kinematic hardening) storeys at N = 3, 9, 20 with the mean Newton
iterations per step, against a plain NumPy implementation of the same
algorithm; the batch driver's throughput over 44 records on 1 and 2 threads;
and the Bouc-Wen frame against scipy.integrate.solve_ivp at matched accuracy
(peak drift agreeing within 0.5 %).

    python benchmarks/bench_nonlinear.py [--steps 10000] [--repeat 5] [--write]

``--write`` replaces the nonlinear table in benchmarks/README.md.
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numba
import numpy as np
import scipy.integrate
import scipy.signal

from _report import machine, write_section
import simulate as ss
from simulate.kernels.methods import Newmark
from simulate.kernels.nonlinear import ENERGY_COLUMNS, _newmark_nonlinear, _newmark_nonlinear_batch

G = ss.STANDARD_GRAVITY
METHOD = "RK45"


def record(steps: int, dt: float, seed: int = 7, pga_g: float = 0.8) -> np.ndarray:
    """Seeded band-limited noise with a smooth envelope, m/s^2."""
    rng = np.random.default_rng(seed)
    sos = scipy.signal.butter(4, [0.2, 12.0], btype="band", fs=1.0 / dt, output="sos")
    a = scipy.signal.sosfiltfilt(sos, rng.standard_normal(steps))
    t = np.arange(steps) * dt
    a *= np.exp(-(((t - 0.3 * t[-1]) / (0.25 * t[-1])) ** 2))
    return a * pga_g * G / np.abs(a).max()


def frame(n: int, law: str = "bilinear") -> ss.ShearFrame:
    """N storeys, T1 = 0.1 N s, stiffness falling up the height, yield at 0.4 % drift."""
    mass = np.full(n, 3.0e5)
    height = np.full(n, 3.5)
    profile = np.linspace(1.0, 0.5, n)
    k = ss.stiffness_for_period(mass, height, 0.1 * n, profile)
    vy = k * 0.004 * height
    return ss.ShearFrame(mass=mass, stiffness=k, height=height, yield_shear=vy, hardening=0.03,
                         law=law, damping=ss.Rayleigh(0.05, (1, min(3, n)) if n > 1 else (1, 2)))


def kernel_call(fr: ss.ShearFrame, ag: np.ndarray, dt: float):
    """A closure running the serial nonlinear kernel on preallocated outputs."""
    _, common, extra = Newmark().prepare(fr, dt)
    T, n = ag.size, fr.n_storeys
    outs = [np.empty((T, n)) for _ in range(5)]
    energy = np.empty((T, len(ENERGY_COLUMNS)))
    storey = np.empty((n, 2))
    info = np.zeros(4, dtype=np.int64)
    force = np.zeros((1, n))

    def call():
        _newmark_nonlinear(*common, ag, force, False, T, dt, 0.5, 0.25, *extra, 0.10,
                           *outs, energy, storey, info)
        return outs, info

    return call


def batch_call(fr: ss.ShearFrame, ags: np.ndarray, dt: float):
    """A closure running the batch driver (prange over records) on preallocated outputs."""
    _, common, extra = Newmark().prepare(fr, dt)
    R, T = ags.shape
    n = fr.n_storeys
    outs = [np.empty((R, T, n)) for _ in range(5)]
    energy = np.empty((R, T, len(ENERGY_COLUMNS)))
    storey = np.empty((R, n, 2))
    info = np.zeros((R, 4), dtype=np.int64)
    force = np.zeros((R, 1, n))
    nsteps = np.full(R, T, dtype=np.int64)

    def call():
        _newmark_nonlinear_batch(*common, ags, force, False, nsteps, dt, 0.5, 0.25, *extra, 0.10,
                                 *outs, energy, storey, info)
        return info

    return call


def numpy_newmark_bilinear(fr: ss.ShearFrame, ag: np.ndarray, dt: float, tol: float):
    """Plain NumPy Newton-Newmark with bilinear storeys (per-step NumPy operations)."""
    n = fr.n_storeys
    m = fr.mass
    k = fr.stiffness
    vy = fr.yield_shear
    alpha = fr.hardening
    H = alpha * k / (1 - alpha)
    C = fr.damping_matrix()
    beta, gamma = 0.25, 0.5
    c1, c2, c3 = 1 / (beta * dt * dt), 1 / (beta * dt), 0.5 / beta - 1
    g1, g2, g3 = gamma / (beta * dt), 1 - gamma / beta, dt * (1 - 0.5 * gamma / beta)
    u = np.zeros(n)
    v = np.zeros(n)
    a = -ag[0] * np.ones(n)
    dp = np.zeros(n)
    q = np.zeros(n)
    peak = np.zeros(n)
    iters = 0
    for i in range(1, ag.size):
        p = -m * ag[i]
        un = u.copy()
        for it in range(50):
            d = np.diff(np.concatenate(([0.0], un)))
            vt = k * (d - dp)
            xi = vt - q
            f = np.abs(xi) - vy
            plastic = f > 0
            dg = np.where(plastic, f / (k + H), 0.0)
            sgn = np.sign(xi)
            dpn = dp + dg * sgn
            qn = q + H * dg * sgn
            V = k * (d - dpn)
            kt = np.where(plastic, k * H / (k + H), k)
            an = c1 * (un - u) - c2 * v - c3 * a
            vn = g1 * (un - u) + g2 * v + g3 * a
            fs = V - np.concatenate((V[1:], [0.0]))
            r = p - m * an - C @ vn - fs
            Kt = np.diag(kt + np.concatenate((kt[1:], [0.0]))) - np.diag(kt[1:], 1) - np.diag(kt[1:], -1)
            J = np.diag(c1 * m) + g1 * C + Kt
            du = np.linalg.solve(J, r)
            un = un + du
            iters += 1
            if np.abs(du).max() < tol:
                break
        d = np.diff(np.concatenate(([0.0], un)))
        an = c1 * (un - u) - c2 * v - c3 * a
        vn = g1 * (un - u) + g2 * v + g3 * a
        u, v, a, dp, q = un, vn, an, dpn, qn
        peak = np.maximum(peak, np.abs(d))
    return peak, iters / (ag.size - 1)


def solve_ivp_boucwen(fr: ss.ShearFrame, ag: np.ndarray, dt: float, rtol: float):
    """Bouc-Wen frame as a first-order ODE (u, v, z) through scipy.integrate.solve_ivp."""
    n = fr.n_storeys
    m = fr.mass
    k = fr.stiffness
    vy = fr.yield_shear
    alpha = fr.hardening
    dy = vy / k
    C = fr.damping_matrix()
    A, b, g, nn = 1.0, 0.5, 0.5, 2.0
    t_rec = np.arange(ag.size) * dt

    def rhs(t, x):
        u, v, z = x[:n], x[n:2 * n], x[2 * n:]
        d = np.diff(np.concatenate(([0.0], u)))
        dd = np.diff(np.concatenate(([0.0], v)))
        V = alpha * k * d + (1 - alpha) * vy * z
        fs = V - np.concatenate((V[1:], [0.0]))
        acc = (-m * np.interp(t, t_rec, ag) - C @ v - fs) / m
        dz = dd / dy * (A - np.abs(z) ** nn * (b * np.sign(dd * z) + g))
        return np.concatenate((v, acc, dz))

    sol = scipy.integrate.solve_ivp(rhs, (0, t_rec[-1]), np.zeros(3 * n), t_eval=t_rec,
                                    rtol=rtol, atol=1e-12, method=METHOD, max_step=dt)
    u = sol.y[:n]
    d = np.diff(np.vstack((np.zeros((1, u.shape[1])), u)), axis=0)
    return np.abs(d).max(axis=1), sol.nfev


def best_of(fn, repeat):
    times = []
    out = None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--steps", type=int, default=10000)
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--numpy-steps", type=int, default=1500, help="steps for the NumPy loop (slow)")
    parser.add_argument("--ivp-seconds", type=float, default=6.0, help="record length for solve_ivp")
    parser.add_argument("--write", action="store_true")
    args = parser.parse_args()

    dt = 0.01
    ag = record(args.steps, dt)
    rows = []
    for n in (3, 9, 20):
        fr = frame(n)
        call = kernel_call(fr, ag, dt)
        call()  # compile / load from cache
        t, (outs, info) = best_of(call, args.repeat)
        ns = t / (args.steps * n) * 1e9
        its = info[2] / args.steps
        mu = np.nanmax(np.abs(outs[3]), axis=0) * fr.height / (fr.yield_shear / fr.stiffness)
        # NumPy loop on a shorter record, same algorithm
        agn = ag[: args.numpy_steps]
        _, common, extra = Newmark().prepare(fr, dt)
        tn, (peak_np, its_np) = best_of(lambda: numpy_newmark_bilinear(fr, agn, dt, extra[0]), 1)
        ns_np = tn / (args.numpy_steps * n) * 1e9
        # cross-check on the short record: same peak deformations as the kernel
        short = kernel_call(fr, agn, dt)
        o, _ = short()
        d_kernel = np.abs(np.diff(np.hstack((np.zeros((o[0].shape[0], 1)), o[0])), axis=1)).max(axis=0)
        agree = np.abs(d_kernel / peak_np - 1).max()
        rows.append((f"bilinear, N = {n}", ns, its, ns_np, ns_np / ns, float(mu.max()), agree))

    # batch driver: 44 records through the 9-storey frame, 1 and 2 threads
    n_rec, n_batch = 44, 9
    fr = frame(n_batch)
    ags = np.stack([record(args.steps, dt, seed=seed) for seed in range(n_rec)])
    call = batch_call(fr, ags, dt)
    call()
    threads = numba.get_num_threads()
    batch = []
    for nt in sorted({1, min(2, threads)}):
        numba.set_num_threads(nt)
        tb, info = best_of(call, args.repeat)
        batch.append((nt, n_rec * args.steps * n_batch / tb / 1e6, info[:, 2].sum() / (n_rec * args.steps)))
    numba.set_num_threads(threads)

    # Bouc-Wen 3-storey frame against solve_ivp at matched accuracy
    n = 3
    fr = frame(n, law="bouc-wen")
    steps_ivp = int(args.ivp_seconds / dt)
    ag_ivp = ag[:steps_ivp]
    ref_peak, _ = solve_ivp_boucwen(fr, ag_ivp, dt, rtol=1e-10)
    fine = 4
    ag_fine = np.interp(np.arange((steps_ivp - 1) * fine + 1) * dt / fine, np.arange(steps_ivp) * dt, ag_ivp)
    call = kernel_call(fr, ag_fine, dt / fine)
    call()
    tk, (outs, info) = best_of(call, args.repeat)
    u_k = outs[0][::fine]          # compare at the reference's output times
    d_k = np.abs(np.diff(np.hstack((np.zeros((u_k.shape[0], 1)), u_k)), axis=1)).max(axis=0)
    err_k = np.abs(d_k / ref_peak - 1).max()
    ti, (peak_i, nfev) = best_of(lambda: solve_ivp_boucwen(fr, ag_ivp, dt, rtol=1e-6), 1)
    err_i = np.abs(peak_i / ref_peak - 1).max()

    lines = []
    lines.append(f"Nonlinear Newton-Newmark benchmark, {time.strftime('%Y-%m-%d')}, "
                 f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
                 f"load average {os.getloadavg()[0]:.2f}")
    lines.append(machine())
    lines.append("")
    lines.append("| frame | numba kernel (ns / storey-step) | Newton iterations / step | NumPy loop (ns / storey-step) "
                 "| NumPy / numba | peak ductility | NumPy vs numba peak drift |")
    lines.append("|---|---:|---:|---:|---:|---:|---:|")
    for name, ns, its, ns_np, ratio, mu, agree in rows:
        lines.append(f"| {name} | {ns:.1f} | {its:.2f} | {ns_np:.0f} | {ratio:.0f}x | {mu:.1f} | {agree:.1e} |")
    lines.append("")
    lines.append(f"Batch driver, {n_rec} records x {args.steps} steps through the {n_batch}-storey bilinear frame "
                 f"({batch[0][2]:.2f} Newton iterations a step): "
                 + "; ".join(f"{mss:.1f} million storey-steps / s on {nt} thread{'s' if nt > 1 else ''}"
                             for nt, mss, _ in batch))
    lines.append("")
    lines.append(f"Bouc-Wen, 3 storeys, {args.ivp_seconds:g} s record: numba kernel at dt/{fine} "
                 f"{tk * 1e3:.2f} ms (peak drift error {err_k:.1e} against solve_ivp rtol 1e-10); "
                 f"solve_ivp RK45 rtol 1e-6 {ti * 1e3:.0f} ms (error {err_i:.1e}, {nfev} evaluations); "
                 f"ratio {ti / tk:.0f}x")
    table = "\n".join(lines)
    print(table)
    if args.write:
        write_section("nonlinear table", "`bench_nonlinear.py`: yielding storeys", table)


if __name__ == "__main__":
    main()
