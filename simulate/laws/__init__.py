"""Storey force-deformation laws: one file a law, one registry, one numba calling shape.

To add a law: write ``simulate/laws/<name>.py`` with a ``_shear(d, dc, p, s, s_new)``
numba function and a ``StoreyLaw`` subclass (see ``base.py``), add the class to
``LAWS`` below and its id to ``dispatch.storey_shear``.
"""

from simulate.laws.base import N_PARAMS, N_STATE, StoreyLaw
from simulate.laws.bilinear import Bilinear
from simulate.laws.boucwen import BoucWen
from simulate.laws.linear import Linear
from simulate.laws.peak_oriented import PeakOriented

#: Storey laws by name.
LAWS = {cls.name: cls for cls in (Linear, Bilinear, BoucWen, PeakOriented)}

__all__ = ["LAWS", "N_PARAMS", "N_STATE", "StoreyLaw", "Linear", "Bilinear", "BoucWen", "PeakOriented"]
