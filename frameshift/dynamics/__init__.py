"""Dynamics of a rotating frame: the apparent accelerations and normal gravity."""

from frameshift.dynamics.accelerations import (
    TERM_FORMULAS,
    TERMS,
    apparent_accelerations,
    coriolis_parameters,
)
from frameshift.dynamics.gravity import GRAVITY_METHODS, normal_gravity

__all__ = [
    "GRAVITY_METHODS",
    "TERMS",
    "TERM_FORMULAS",
    "apparent_accelerations",
    "coriolis_parameters",
    "normal_gravity",
]
