"""Write the synthetic demo base-acceleration records ``motions/demo_*.txt``.

Invented scenario (no real place, event or recording): a small town built on
soft lake deposits beside a shallow lake, with an old river terrace and a rock
ridge behind it, shaken by a moderate crustal earthquake some tens of
kilometres away. Each of the four records stands for one site of that town:

* ``demo_lakeshore_a`` - deep soft clay at the shore: long-period, long shaking;
* ``demo_lakeshore_b`` - shallower soft deposits a few blocks inland;
* ``demo_terrace``     - dense terrace gravel: broader band, shorter shaking;
* ``demo_ridge``       - rock ridge: high-frequency, short, lower amplitude.

Method for each record: white Gaussian noise from ``numpy.random.default_rng(seed)``,
band-pass filtered forward and backward (zero phase) with a Butterworth filter
(``scipy.signal.butter(..., output="sos")`` and ``sosfiltfilt``), multiplied by a
Saragoni-Hart-type envelope ``w(t) = (t / t_peak)^b exp(b (1 - t / t_peak))``
(peak 1 at ``t_peak``), corrected for a linear baseline by least squares
(``scipy.signal.detrend``) and scaled to the chosen PGA. Values are written
with 6 significant digits, so the files are small and the bytes do not depend
on the last bits of the floating-point arithmetic in practice.

References: G. R. Saragoni and G. C. Hart (1974), "Simulation of artificial
earthquakes", Earthquake Engineering and Structural Dynamics 2, 249-267
(envelope shape).

Usage::

    python motions/make_demo_motions.py [output_folder]

The default output folder is the folder of this script. Running it twice gives
the same bytes.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy import signal

DT = 0.01  # s
UNITS = "g"

#: name -> generation parameters (seed, duration s, pass band Hz, envelope, PGA g).
DEMO_MOTIONS = {
    "demo_lakeshore_a": dict(
        seed=20241,
        duration=36.0,
        band=(0.2, 3.0),
        t_peak=9.0,
        shape=2.0,
        pga=0.28,
        site="deep soft lake clay at the shore",
    ),
    "demo_lakeshore_b": dict(
        seed=20242,
        duration=30.0,
        band=(0.3, 5.0),
        t_peak=7.0,
        shape=2.0,
        pga=0.35,
        site="shallower soft lake deposits inland",
    ),
    "demo_terrace": dict(
        seed=20243,
        duration=25.0,
        band=(0.4, 10.0),
        t_peak=5.0,
        shape=2.5,
        pga=0.42,
        site="dense river-terrace gravel",
    ),
    "demo_ridge": dict(
        seed=20244,
        duration=20.0,
        band=(0.8, 18.0),
        t_peak=3.5,
        shape=3.0,
        pga=0.18,
        site="rock ridge behind the town",
    ),
}

FILTER_ORDER = 4


def synthesise(seed, duration, band, t_peak, shape, pga, dt=DT, **_):
    """Return (time s, acceleration g) of one synthetic record, rounded as written."""
    n_steps = int(round(duration / dt)) + 1
    t = np.arange(n_steps) * dt
    rng = np.random.default_rng(seed)
    noise = rng.standard_normal(n_steps)
    sos = signal.butter(FILTER_ORDER, band, btype="bandpass", fs=1.0 / dt, output="sos")
    filtered = signal.sosfiltfilt(sos, noise)
    envelope = (t / t_peak) ** shape * np.exp(shape * (1.0 - t / t_peak))
    motion = signal.detrend(filtered * envelope, type="linear")
    motion *= pga / np.max(np.abs(motion))
    # Round as written, then check the written peak equals the stated PGA.
    motion = np.array([float(f"{value:.6g}") for value in motion])
    return t, motion


def header(name, params, dt=DT):
    """Comment lines at the top of a demo file."""
    low, high = params["band"]
    return [
        f"# {name}: SYNTHETIC base acceleration for the swaysim demo (invented scenario,",
        "#   not a recording of any real earthquake or place).",
        f"# Site: {params['site']} (invented town on soft lake deposits).",
        f"# Method: Gaussian noise, Butterworth band-pass {low:g}-{high:g} Hz (order "
        f"{FILTER_ORDER}, zero phase),",
        f"#   Saragoni-Hart-type envelope (t_peak {params['t_peak']:g} s, b {params['shape']:g}), "
        "linear baseline correction.",
        f"# Seed: {params['seed']}",
        f"# dt: {dt:g} s",
        f"# Units: time s, acceleration {UNITS}",
        f"# PGA: {params['pga']:g} {UNITS}",
        "# Columns: time acceleration",
    ]


def render(name, params) -> str:
    """Full text of one demo file."""
    t, motion = synthesise(**params)
    lines = header(name, params)
    lines.extend(f"{ti:.2f} {ai:.6g}" for ti, ai in zip(t, motion))
    return "\n".join(lines) + "\n"


def write_demo_motions(folder=None) -> list[Path]:
    """Write all demo records into ``folder`` (default: this script's folder); return the paths."""
    folder = Path(__file__).resolve().parent if folder is None else Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for name, params in DEMO_MOTIONS.items():
        path = folder / f"{name}.txt"
        path.write_bytes(render(name, params).encode("ascii"))
        paths.append(path)
    return paths


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if len(argv) > 1:
        print("usage: python make_demo_motions.py [output_folder]", file=sys.stderr)
        return 2
    for path in write_demo_motions(argv[0] if argv else None):
        print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
