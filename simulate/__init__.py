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
"""

from simulate._version import __version__
from simulate.errors import ConfigError, InputError, RecordError
from simulate.excitation import (
    RECORD_SETS, FloorForces, Record, bandpass, baseline_correct, expand_records,
    harmonic_floor_force, harmonic_ground_motion, inelastic_spectrum, intensity_measures,
    log_periods, pad, read_record, read_records, read_suite, record_set, record_set_metadata,
    resample, response_spectrum, taper, write_record,
)
from simulate.excitation import (
    TARGETS, ASCE7Spectrum, EC8Spectrum, FileSpectrum, ScalingReport, kanai_tajimi_record,
    make_target, scale_records, scale_to_sa, scale_to_spectrum, spectrum_compatible,
    stationary_kanai_tajimi,
)
from simulate.kernels import METHODS, NEWMARK_SCHEMES
from simulate.laws import LAWS
from simulate.model import (
    MassProportional, ModalDamping, NoDamping, Rayleigh, ShearFrame, StiffnessProportional,
    stiffness_for_period,
)
from simulate.analysis import PATTERNS, load_pattern, pushover
from simulate.results import compare, envelopes, read_dataset, suite_statistics, write_dataset
from simulate.settings import CAUTION, STANDARD_GRAVITY
from simulate.suite import open_results, run, run_suite

__all__ = [
    "__version__", "CAUTION", "STANDARD_GRAVITY", "ConfigError", "InputError", "RecordError",
    "FloorForces", "Record", "harmonic_floor_force", "harmonic_ground_motion", "read_record",
    "METHODS", "NEWMARK_SCHEMES", "MassProportional", "ModalDamping", "NoDamping", "Rayleigh",
    "ShearFrame", "StiffnessProportional", "stiffness_for_period", "envelopes", "read_dataset",
    "write_dataset", "run", "LAWS", "linear_twin",
    "RECORD_SETS", "bandpass", "baseline_correct", "expand_records", "inelastic_spectrum",
    "intensity_measures", "log_periods", "pad", "read_records", "read_suite", "record_set",
    "record_set_metadata", "resample", "response_spectrum", "taper", "write_record",
    "TARGETS", "ASCE7Spectrum", "EC8Spectrum", "FileSpectrum", "ScalingReport",
    "kanai_tajimi_record", "make_target", "scale_records", "scale_to_sa", "scale_to_spectrum",
    "spectrum_compatible", "stationary_kanai_tajimi",
    "PATTERNS", "load_pattern", "pushover", "compare", "suite_statistics", "open_results",
    "run_suite",
]


def linear_twin(frame: ShearFrame) -> ShearFrame:
    """The frame's linear twin: same mass, heights, elastic stiffness and damping; no yielding, no P-Delta."""
    return frame.linear_twin()
from simulate.config import Config, load_config  # noqa: E402  (after the layers it builds on)
__all__ += ["Config", "load_config"]
