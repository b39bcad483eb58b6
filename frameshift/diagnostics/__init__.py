"""Diagnostics that exist because of the frame: angular momentum and its excitation of
Earth rotation, absolute vorticity, rotary spectra and inertial oscillations, and the
real force along tracks."""

from frameshift.diagnostics.angular_momentum import (
    axial_angular_momentum,
    excitation,
    integrate_angular_momentum,
)

__all__ = [
    "axial_angular_momentum",
    "excitation",
    "integrate_angular_momentum",
]
