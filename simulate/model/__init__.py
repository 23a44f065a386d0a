"""Shear-frame model, damping models, modal and state-space analysis."""

from simulate.model.damping import (
    DAMPING_MODELS, Damping, MassProportional, ModalDamping, NoDamping, Rayleigh,
    StiffnessProportional,
)
from simulate.model.frame import STIFFNESS_PROFILES, ShearFrame, stiffness_for_period

__all__ = [
    "DAMPING_MODELS", "Damping", "MassProportional", "ModalDamping", "NoDamping", "Rayleigh",
    "StiffnessProportional", "STIFFNESS_PROFILES", "ShearFrame", "stiffness_for_period",
]
