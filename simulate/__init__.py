"""swaysim: time-history analysis of shear-frame buildings under earthquake and wind loads.

The public API::

    import simulate as ss
    frame = ss.ShearFrame(mass=[...], stiffness=[...], height=[...],
                          damping=ss.Rayleigh(ratio=0.05, modes=(1, 3)))
    modes = frame.modes()
    rec = ss.read_record("motions/demo_lakeshore_a.txt", units="g")
    ds = ss.run(frame, [rec], method="newmark")
    env = ss.envelopes(ds)

Results support, and never replace, the judgement of a qualified engineer.

The model, records, run() and results import at once; spectra, processing,
targets, scaling, synthetic motions, record sets, pushover, statistics and the
suite runner import on first use (they pull scipy.signal, scipy.stats, h5py or
dask), so a run starts fast.
"""

from importlib import import_module

from simulate._version import __version__
from simulate.config import Config, load_config
from simulate.errors import ConfigError, InputError, RecordError
from simulate.excitation import (
    FloorForces, Record, harmonic_floor_force, harmonic_ground_motion, read_record, read_records,
    write_record,
)
from simulate.kernels import METHODS, NEWMARK_SCHEMES
from simulate.laws import LAWS
from simulate.model import (
    MassProportional, ModalDamping, NoDamping, Rayleigh, ShearFrame, StiffnessProportional,
    stiffness_for_period,
)
from simulate.results import envelopes, read_dataset, write_dataset
from simulate.settings import CAUTION, STANDARD_GRAVITY
from simulate.suite.run import run

#: public name -> module that defines it (imported on first access)
_LAZY = {
    **dict.fromkeys((
        "RECORD_SETS", "bandpass", "baseline_correct", "expand_records", "inelastic_spectrum",
        "intensity_measures", "log_periods", "pad", "read_suite", "record_set", "record_set_metadata",
        "resample", "response_spectrum", "taper", "TARGETS", "ASCE7Spectrum", "EC8Spectrum",
        "FileSpectrum", "ScalingReport", "kanai_tajimi_record", "make_target", "scale_records",
        "scale_to_sa", "scale_to_spectrum", "spectrum_compatible", "stationary_kanai_tajimi",
    ), "simulate.excitation"),
    **dict.fromkeys(("PATTERNS", "load_pattern", "pushover"), "simulate.analysis"),
    "compare": "simulate.results.compare",
    "suite_statistics": "simulate.results.statistics",
    **dict.fromkeys(("open_results", "run_suite"), "simulate.suite.store"),
}

__all__ = [
    "__version__", "CAUTION", "STANDARD_GRAVITY", "ConfigError", "InputError", "RecordError",
    "Config", "load_config", "FloorForces", "Record", "harmonic_floor_force",
    "harmonic_ground_motion", "read_record", "read_records", "write_record", "METHODS",
    "NEWMARK_SCHEMES", "LAWS", "MassProportional", "ModalDamping", "NoDamping", "Rayleigh",
    "ShearFrame", "StiffnessProportional", "stiffness_for_period", "linear_twin", "envelopes",
    "read_dataset", "write_dataset", "run", *_LAZY,
]


def linear_twin(frame: ShearFrame) -> ShearFrame:
    """The frame's linear twin: same mass, heights, elastic stiffness and damping; no yielding, no P-Delta."""
    return frame.linear_twin()


def __getattr__(name):
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'simulate' has no attribute {name!r}") from None
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
