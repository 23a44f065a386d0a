"""Write the synthetic demo base-acceleration records ``motions/demo_*.txt``.

Invented scenario (no real place, event or recording): a small town built on
soft lake deposits beside a shallow lake, with an old river terrace and a rock
ridge behind it, shaken by a moderate crustal earthquake some tens of
kilometres away. Each of the four records stands for one site of that town:

* ``demo_lakeshore_a`` - deep soft clay at the shore: Kanai-Tajimi filtered
  noise with a low ground frequency and the Clough-Penzien second filter,
  long shaking;
* ``demo_lakeshore_b`` - shallower soft deposits a few blocks inland:
  matched to the EN 1998-1 Type 1 elastic spectrum for ground type D;
* ``demo_terrace``     - dense terrace gravel: matched to the EN 1998-1
  Type 1 elastic spectrum for ground type C;
* ``demo_ridge``       - rock ridge: Kanai-Tajimi / Clough-Penzien noise with
  firm-ground parameters, short, lower amplitude.

The records are made with :mod:`simulate.excitation.synthetic`
(``kanai_tajimi_record`` and ``spectrum_compatible``), each from its own seed
of ``numpy.random.default_rng``. The a_g values of the two targets are chosen
for the demo; they are not hazard values of any place. Values are written with
6 significant digits (the stated PGA is that of the written values), so the
files are small; running the script twice gives the same bytes.

References: K. Kanai (1957) and H. Tajimi (1960) (ground filter); R. W. Clough
and J. Penzien, Dynamics of Structures (second filter); G. R. Saragoni and
G. C. Hart (1974) (envelope); D. A. Gasparini and E. H. Vanmarcke (1976)
(spectrum-compatible motions); EN 1998-1:2004 section 3.2.2.2 (target shape).

Usage::

    python motions/make_demo_motions.py [output_folder]

The default output folder is the folder of this script.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np

from simulate.excitation.synthetic import SaragoniHart, kanai_tajimi_record, spectrum_compatible
from simulate.excitation.targets import EC8Spectrum

DT = 0.01  # s
UNITS = "g"

#: name -> how the record is made. ``kind`` is "kanai-tajimi" or "spectrum-compatible".
DEMO_MOTIONS = {
    "demo_lakeshore_a": dict(
        kind="kanai-tajimi",
        site="deep soft lake clay at the shore",
        seed=20241,
        duration=36.0,
        filter=dict(wg=6.0, zg=0.35, wf=0.6, zf=0.9),
        envelope=SaragoniHart(t_peak=9.0, shape=2.0),
        pga=0.25,
    ),
    "demo_lakeshore_b": dict(
        kind="spectrum-compatible",
        site="shallower soft lake deposits inland",
        seed=20242,
        duration=28.0,
        target=dict(ag=0.16, ground_type="D", spectrum_type=1),
        band=(0.1, 2.5),
        envelope=SaragoniHart(t_peak=6.0, shape=1.5),
    ),
    "demo_terrace": dict(
        kind="spectrum-compatible",
        site="dense river-terrace gravel",
        seed=20243,
        duration=30.0,
        target=dict(ag=0.20, ground_type="C", spectrum_type=1),
        band=(0.1, 2.5),
        envelope=SaragoniHart(t_peak=7.0, shape=1.5),
    ),
    "demo_ridge": dict(
        kind="kanai-tajimi",
        site="rock ridge behind the town",
        seed=20244,
        duration=20.0,
        filter=dict(wg=25.0, zg=0.6, wf=2.0, zf=0.8),
        envelope=SaragoniHart(t_peak=3.5, shape=3.0),
        pga=0.18,
    ),
}

#: Wanted largest deviation from the target while iterating (the achieved one is written).
MATCH_TOLERANCE = 0.05


def make_record(name, params):
    """The record of one demo site (a ``simulate.excitation.Record`` in g)."""
    if params["kind"] == "kanai-tajimi":
        return kanai_tajimi_record(params["duration"], DT, **params["filter"],
                                   envelope=params["envelope"], pga=params["pga"],
                                   seed=params["seed"], name=name)
    target = EC8Spectrum(**params["target"])
    with warnings.catch_warnings():
        # the achieved deviation is written in the header whatever it is
        warnings.simplefilter("ignore", UserWarning)
        return spectrum_compatible(target, params["duration"], DT, band=params["band"],
                                   envelope=params["envelope"], seed=params["seed"],
                                   tolerance=MATCH_TOLERANCE, name=name)


def rounded(values: np.ndarray) -> np.ndarray:
    """The values as written (6 significant digits)."""
    return np.array([float(f"{value:.6g}") for value in values])


def header(name, params, rec, values) -> list[str]:
    """Comment lines at the top of a demo file; ``dt`` and ``units`` in the reader's
    ``# key = value`` form."""
    pga = float(np.max(np.abs(values)))
    lines = [
        f"# {name}: SYNTHETIC base acceleration for the swaysim demo (invented scenario,",
        "#   not a recording of any real earthquake or place).",
        f"# site = {params['site']} (invented lakeside town)",
    ]
    envelope = params["envelope"].describe()
    if params["kind"] == "kanai-tajimi":
        f = params["filter"]
        lines += [
            "# method = Kanai-Tajimi filtered white noise with the Clough-Penzien second filter",
            f"#   (wg {f['wg']:g} rad/s, zg {f['zg']:g}, wf {f['wf']:g} rad/s, zf {f['zf']:g}),",
            f"#   {envelope}, scaled to the PGA",
        ]
    else:
        meta = rec.metadata
        target = EC8Spectrum(**params["target"])
        low, high = params["band"]
        lines += [
            "# method = spectrum-compatible: Gasparini-Vanmarcke Fourier amplitude iteration",
            f"#   from seeded white noise, {envelope}",
            f"# target = EN 1998-1 3.2.2.2 Type {target.spectrum_type} elastic spectrum, ground type "
            f"{target.ground_type}, a_g {target.ag:g} g",
            "#   (a_g chosen for the demo, not a hazard value), 5 % damping",
            f"# match = largest deviation {100 * meta['max_deviation']:.1f} % from "
            f"{low:g} to {high:g} s after {meta['iterations']} iterations",
        ]
    lines += [
        "# baseline = polynomial (degree 5) fitted to the displacement, ending at rest",
        f"# seed = {params['seed']}",
        f"# dt = {DT:g} s",
        f"# units = {UNITS}",
        f"# pga = {pga:.6g} {UNITS}",
        "# columns: time (s), acceleration (g)",
    ]
    return lines


def render(name, params) -> str:
    """Full text of one demo file."""
    rec = make_record(name, params)
    values = rounded(rec.acceleration)
    lines = header(name, params, rec, values)
    lines.extend(f"{ti:.2f} {ai:.6g}" for ti, ai in zip(rec.time, values))
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
