"""Diagnostics that exist because of the frame.

Angular momentum and its excitation of Earth rotation, absolute vorticity,
rotary spectra and inertial oscillations, and the real force along tracks.
"""

from frameshift.diagnostics.angular_momentum import (
    axial_angular_momentum,
    excitation,
    integrate_angular_momentum,
)
from frameshift.diagnostics.rotary import inertial_demodulation, rotary_spectrum
from frameshift.diagnostics.tracks import track_forces
from frameshift.diagnostics.vorticity import absolute_vorticity

__all__ = [
    "absolute_vorticity",
    "axial_angular_momentum",
    "excitation",
    "inertial_demodulation",
    "integrate_angular_momentum",
    "rotary_spectrum",
    "track_forces",
]
