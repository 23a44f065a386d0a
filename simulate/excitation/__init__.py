"""Excitation: base acceleration records, floor forces, harmonic loads, record readers and files,
processing, spectra, intensity measures, target spectra, scaling, synthetic motions and record sets.

The record classes, readers and harmonic loads import at once; the rest (which
pulls scipy.signal, scipy.stats and h5py) imports on first use, so a run starts fast.
"""

from importlib import import_module

from simulate.excitation.harmonic import harmonic_floor_force, harmonic_ground_motion
from simulate.excitation.loads import FloorForces
from simulate.excitation.readers import read_record, read_records, write_record
from simulate.excitation.record import Record

#: public name -> module that defines it (imported on first access)
_LAZY = {
    **dict.fromkeys(("RECORD_SETS", "record_set", "record_set_metadata"), "recordsets"),
    **dict.fromkeys(("expand_records", "read_suite"), "suites"),
    **dict.fromkeys(("bandpass", "baseline_correct", "pad", "resample", "taper"), "processing"),
    **dict.fromkeys(("inelastic_spectrum", "log_periods", "response_spectrum"), "spectra"),
    "intensity_measures": "intensity",
    **dict.fromkeys(("TARGETS", "ASCE7Spectrum", "EC8Spectrum", "FileSpectrum", "Target", "make_target"),
                    "targets"),
    **dict.fromkeys(("SCALING_METHODS", "ScalingReport", "scale_records", "scale_to_sa",
                     "scale_to_spectrum"), "scaling"),
    **dict.fromkeys(("JenningsHousnerTsai", "SaragoniHart", "Trapezoid", "kanai_tajimi_psd",
                     "kanai_tajimi_record", "spectrum_compatible", "stationary_kanai_tajimi"), "synthetic"),
}

__all__ = ["Record", "FloorForces", "read_record", "read_records", "write_record",
           "harmonic_ground_motion", "harmonic_floor_force", *_LAZY]


def __getattr__(name):
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'simulate.excitation' has no attribute {name!r}") from None
    value = getattr(import_module(f"simulate.excitation.{module}"), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
