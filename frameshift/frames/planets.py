"""Named bodies other than the Earth: Mars, Venus, Jupiter, Saturn, Titan.

Each is a :class:`~frameshift.frames.Planet` built from the rotational
elements and reference figures of the IAU Working Group on Cartographic
Coordinates and Rotational Elements 2015 report (Archinal et al. 2018,
Celest. Mech. Dyn. Astron. 130:22), held as plain data in
:mod:`frameshift.frames.iau2015`:

- the rotation rate is the rate of the prime-meridian angle W (deg/day of
  86400 s, turned into rad s-1), negative for Venus, which turns backwards
  relative to its north pole (the pole on the north side of the invariable
  plane) — so f = 2Ω sin φ is negative in its northern hemisphere, the frame's
  eastward speed Ω (N + h) cos φ points west, and inertial oscillations turn
  counter-clockwise there;
- the figure is the report's spheroid: equatorial radius a, polar radius c,
  1/f = a/(a - c) (a sphere for Venus and Titan);
- the rotation angle is W: the angle from the node of the body's equator on
  the ICRF equator to the prime meridian.

Inertial axes: by default the body's own non-rotating axes (z along its pole,
x towards the node), reached from body-fixed axes by the angle W alone; the
ICRF, through the report's pole (α0, δ0) and W, as an option.

No GM: the report does not give masses, so normal gravity refuses these
bodies unless built again with ``gm=`` (``dataclasses.replace``).
"""

from __future__ import annotations

import math

from frameshift.frames.bodies import Planet
from frameshift.frames.iau2015 import ELEMENTS, RotationalElements

__all__ = ["JUPITER", "MARS", "NAMED_BODIES", "SATURN", "TITAN", "VENUS", "iau_elements"]


def _body(key: str) -> Planet:
    el = ELEMENTS[key]
    return Planet(
        name=f"{el.name} (IAU 2015)",
        rotation_rate=el.rotation_rate,
        equatorial_radius=el.equatorial_radius,
        inverse_flattening=el.inverse_flattening,
        angle_model="uniform",
        prime_meridian_angle=math.radians(el.meridian[0]),
        description=(
            f"IAU WGCCRE 2015 report: rotation rate {el.meridian[1]} deg/day, radii "
            f"{'/'.join(f'{r:g}' for r in el.radii_km)} km; {el.note}"
        ),
    )


#: Mars: 350.891982443297 deg/day (7.0882181e-5 rad s-1), a = 3396.19 km, c = 3376.20 km.
MARS = _body("mars")
#: Venus: -1.4813688 deg/day (retrograde, -2.9924494e-7 rad s-1), sphere of 6051.8 km.
VENUS = _body("venus")
#: Jupiter (System III): 870.536 deg/day (1.7585323e-4 rad s-1), a = 71492 km, c = 66854 km.
JUPITER = _body("jupiter")
#: Saturn (System III): 810.7939024 deg/day (1.6378499e-4 rad s-1), a = 60268 km, c = 54364 km.
SATURN = _body("saturn")
#: Titan: 22.5769768 deg/day (synchronous, 4.5606780e-6 rad s-1), sphere of 2575 km.
TITAN = _body("titan")

NAMED_BODIES = {"mars": MARS, "venus": VENUS, "jupiter": JUPITER, "saturn": SATURN, "titan": TITAN}
_ELEMENTS_OF = {frame: ELEMENTS[key] for key, frame in NAMED_BODIES.items()}


def iau_elements(frame) -> RotationalElements | None:
    """The report's rotational elements of a named body, or ``None`` for any other frame.

    Examples
    --------
    >>> iau_elements(MARS).pole_ra[0]
    317.269202
    """
    try:
        return _ELEMENTS_OF.get(frame)
    except TypeError:  # an unhashable object is not one of ours
        return None
