"""Project-wide constants and numba options (kept in one place, never as scattered literals)."""

from __future__ import annotations

#: Standard acceleration of gravity, m/s^2 (CGPM 1901; ISO 80000-3).
STANDARD_GRAVITY = 9.80665

#: Options for every serial numba kernel.
JIT = dict(cache=True, nogil=True, fastmath=False, error_model="numpy")

#: Options for small functions called in a kernel's inner loop (storey laws): inlined
#: at numba-IR level so no reference counting of array arguments happens per call.
JIT_INLINE = dict(JIT, inline="always")

#: Options for batch drivers that loop over records with ``prange``.
JIT_PARALLEL = dict(JIT, parallel=True)

#: Conversion factors from a record's declared units to m/s^2.
ACCELERATION_UNITS = {
    "g": STANDARD_GRAVITY,
    "m/s2": 1.0,
    "cm/s2": 0.01,
}

#: Other spellings accepted for the units above.
UNIT_ALIASES = {
    "m/s^2": "m/s2",
    "m/s**2": "m/s2",
    "cm/s^2": "cm/s2",
    "cm/s**2": "cm/s2",
    "gal": "cm/s2",
}

CAUTION = (
    "swaysim results support, and never replace, the judgement of a qualified "
    "structural engineer. A shear-frame model is an idealisation; check its "
    "assumptions against the real structure. Design decisions follow the local "
    "building code and licensed professional practice."
)
