"""Excitation: base acceleration records, floor forces, harmonic loads and record readers."""

from simulate.excitation.harmonic import harmonic_floor_force, harmonic_ground_motion
from simulate.excitation.loads import FloorForces
from simulate.excitation.readers import read_record
from simulate.excitation.record import Record

__all__ = [
    "Record",
    "FloorForces",
    "read_record",
    "harmonic_ground_motion",
    "harmonic_floor_force",
]
from simulate.excitation.recordsets import RECORD_SETS, record_set, record_set_metadata  # noqa: E402
__all__ += ["RECORD_SETS", "record_set", "record_set_metadata"]
from simulate.excitation.readers import read_records, write_record  # noqa: E402
from simulate.excitation.suites import expand_records, read_suite  # noqa: E402
from simulate.excitation.processing import bandpass, baseline_correct, pad, resample, taper  # noqa: E402
__all__ += ["read_records", "write_record", "read_suite", "expand_records",
            "baseline_correct", "bandpass", "taper", "resample", "pad"]
from simulate.excitation.spectra import inelastic_spectrum, log_periods, response_spectrum  # noqa: E402
from simulate.excitation.intensity import intensity_measures  # noqa: E402
__all__ += ["response_spectrum", "inelastic_spectrum", "log_periods", "intensity_measures"]
from simulate.excitation.targets import TARGETS, ASCE7Spectrum, EC8Spectrum, FileSpectrum, Target, make_target  # noqa: E402
from simulate.excitation.scaling import SCALING_METHODS, ScalingReport, scale_records, scale_to_sa, scale_to_spectrum  # noqa: E402
from simulate.excitation.synthetic import (  # noqa: E402
    JenningsHousnerTsai, SaragoniHart, Trapezoid, kanai_tajimi_psd, kanai_tajimi_record,
    spectrum_compatible, stationary_kanai_tajimi)
__all__ += ["TARGETS", "Target", "ASCE7Spectrum", "EC8Spectrum", "FileSpectrum", "make_target",
            "SCALING_METHODS", "ScalingReport", "scale_records", "scale_to_sa", "scale_to_spectrum",
            "SaragoniHart", "JenningsHousnerTsai", "Trapezoid", "kanai_tajimi_psd",
            "stationary_kanai_tajimi", "kanai_tajimi_record", "spectrum_compatible"]
