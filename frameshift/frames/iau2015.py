"""Rotational elements and shapes of named bodies, as plain data.

Source: Archinal, B. A., et al. (2018), "Report of the IAU Working Group on
Cartographic Coordinates and Rotational Elements: 2015", Celest. Mech. Dyn.
Astron. 130:22 (the "2015 report"): its tables of the planets' and the
satellites' poles and prime meridians, and of their sizes and shapes.

Where the digits come from: the report's own text could not be opened while
this file was written. Every coefficient below was read from several
independent public transcriptions of the 2015 report (code and data files
that quote it term by term) and kept only where they agree digit for digit;
the radii of Venus, Mars, Jupiter and Saturn likewise. Titan's radius is the
report's cartographic mean radius, 2575 km, which the report distinguishes
from a triaxial figure for geophysical use (2575.15, 2574.78, 2574.47 km): the
value 2575 km and that distinction are taken from the transcriptions and the
report's abstract.

Conventions of the report: α0, δ0 are the ICRF right ascension and
declination of the body's north pole of rotation (the pole on the north side
of the invariable plane; a body turning clockwise seen from there, like Venus,
has a negative rate of W), W the angle from the ascending node of the body's
equator on the ICRF equator to the prime meridian, measured eastward along
the body's equator. T is in Julian centuries of 36525 days and d in days from
J2000.0 (JD 2451545.0 TDB). Periodic terms are written (amplitude, phase,
phase rate per century), all in degrees: α0 and W use their sines and δ0
their cosines.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

__all__ = ["ELEMENTS", "SECONDS_PER_DAY", "RotationalElements"]

#: The report's day: 86400 SI seconds (of TDB).
SECONDS_PER_DAY = 86400.0


@dataclass(frozen=True)
class RotationalElements:
    """One body's pole, prime meridian and reference figure, in the report's units.

    Parameters
    ----------
    name : str
    pole_ra, pole_dec : tuple of float
        (value at J2000.0 in deg, rate in deg per Julian century).
    meridian : tuple of float
        (W at J2000.0 in deg, rate in deg per day).
    pole_ra_terms, pole_dec_terms, meridian_terms : tuple
        Periodic terms (amplitude deg, phase deg, phase rate deg per century).
    radii_km : tuple of float
        Equatorial radius, second equatorial radius and polar radius, km.
    note : str
        What the figure or the angles refer to.
    """

    name: str
    pole_ra: tuple[float, float]
    pole_dec: tuple[float, float]
    meridian: tuple[float, float]
    radii_km: tuple[float, float, float]
    pole_ra_terms: tuple[tuple[float, float, float], ...] = ()
    pole_dec_terms: tuple[tuple[float, float, float], ...] = ()
    meridian_terms: tuple[tuple[float, float, float], ...] = ()
    note: str = field(default="", compare=False)

    @property
    def rotation_rate(self) -> float:
        """Rate of W in rad s-1 (negative for a retrograde body).

        Examples
        --------
        >>> f"{ELEMENTS['mars'].rotation_rate:.7e}"
        '7.0882181e-05'
        """
        return math.radians(self.meridian[1]) / SECONDS_PER_DAY

    @property
    def equatorial_radius(self) -> float:
        """Mean of the two equatorial radii, m."""
        return 500.0 * (self.radii_km[0] + self.radii_km[1])

    @property
    def polar_radius(self) -> float:
        """Polar radius, m."""
        return 1000.0 * self.radii_km[2]

    @property
    def inverse_flattening(self) -> float:
        """1/f of the reference spheroid, 0 for a sphere.

        Examples
        --------
        >>> round(ELEMENTS["saturn"].inverse_flattening, 3)
        10.208
        """
        a, b = self.equatorial_radius, self.polar_radius
        return 0.0 if a == b else a / (a - b)


# Jupiter's pole terms share five arguments Ja..Je (deg, deg per century).
_JA = (99.360714, 4850.4046)
_JB = (175.895369, 1191.9605)
_JC = (300.323162, 262.5475)
_JD = (114.012305, 6070.2476)
_JE = (49.511251, 64.3000)

ELEMENTS: dict[str, RotationalElements] = {
    "venus": RotationalElements(
        name="Venus",
        pole_ra=(272.76, 0.0),
        pole_dec=(67.16, 0.0),
        meridian=(160.20, -1.4813688),
        radii_km=(6051.8, 6051.8, 6051.8),
        note="retrograde rotation; sphere of the mean radius",
    ),
    "mars": RotationalElements(
        name="Mars",
        pole_ra=(317.269202, -0.10927547),
        pole_dec=(54.432516, -0.05827105),
        meridian=(176.049863, 350.891982443297),
        radii_km=(3396.19, 3396.19, 3376.20),
        pole_ra_terms=(
            (0.000068, 198.991226, 19139.4819985),
            (0.000238, 226.292679, 38280.8511281),
            (0.000052, 249.663391, 57420.7251593),
            (0.000009, 266.183510, 76560.6367950),
            (0.419057, 79.398797, 0.5042615),
        ),
        pole_dec_terms=(
            (0.000051, 122.433576, 19139.9407476),
            (0.000141, 43.058401, 38280.8753272),
            (0.000031, 57.663379, 57420.7517205),
            (0.000005, 79.476401, 76560.6495004),
            (1.591274, 166.325722, 0.5042615),
        ),
        meridian_terms=(
            (0.000145, 129.071773, 19140.0328244),
            (0.000157, 36.352167, 38281.0473591),
            (0.000040, 56.668646, 57420.9295360),
            (0.000001, 67.364003, 76560.2552215),
            (0.000001, 104.792680, 95700.4387578),
            (0.584542, 95.391654, 0.5042615),
        ),
        note="prime meridian through the crater Airy-0",
    ),
    "jupiter": RotationalElements(
        name="Jupiter",
        pole_ra=(268.056595, -0.006499),
        pole_dec=(64.495303, 0.002413),
        meridian=(284.95, 870.5360000),
        radii_km=(71492.0, 71492.0, 66854.0),
        pole_ra_terms=(
            (0.000117, *_JA),
            (0.000938, *_JB),
            (0.001432, *_JC),
            (0.000030, *_JD),
            (0.002150, *_JE),
        ),
        pole_dec_terms=(
            (0.000050, *_JA),
            (0.000404, *_JB),
            (0.000617, *_JC),
            (-0.000013, *_JD),
            (0.000926, *_JE),
        ),
        note="rotation of the magnetic field (System III); 1 bar level",
    ),
    "saturn": RotationalElements(
        name="Saturn",
        pole_ra=(40.589, -0.036),
        pole_dec=(83.537, -0.004),
        meridian=(38.90, 810.7939024),
        radii_km=(60268.0, 60268.0, 54364.0),
        note="rotation of the magnetic field (System III); 1 bar level",
    ),
    "titan": RotationalElements(
        name="Titan",
        pole_ra=(39.4827, 0.0),
        pole_dec=(83.4279, 0.0),
        meridian=(186.5855, 22.5769768),
        radii_km=(2575.0, 2575.0, 2575.0),
        note="synchronous rotation; sphere of the cartographic mean radius",
    ),
}
