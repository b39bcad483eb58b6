"""Reference expressions for the body-orientation checks, written out independently.

The Mars and Jupiter expressions are those of the IAU WGCCRE 2015 report
(Archinal et al. 2018, Celest. Mech. Dyn. Astron. 130:22), term by term, kept
apart from frameshift's data module so that both transcriptions are compared;
the matrix is built with pyerfa's rotation routines.
"""

import math

import erfa


def mars_angles_by_hand(d, T):
    """The 2015 report's Mars expressions (deg), written out independently of the data module."""
    s = lambda a, b: math.sin(math.radians(a + b * T))  # noqa: E731
    c = lambda a, b: math.cos(math.radians(a + b * T))  # noqa: E731
    ra = (
        317.269202
        - 0.10927547 * T
        + 0.000068 * s(198.991226, 19139.4819985)
        + 0.000238 * s(226.292679, 38280.8511281)
        + 0.000052 * s(249.663391, 57420.7251593)
        + 0.000009 * s(266.183510, 76560.6367950)
        + 0.419057 * s(79.398797, 0.5042615)
    )
    dec = (
        54.432516
        - 0.05827105 * T
        + 0.000051 * c(122.433576, 19139.9407476)
        + 0.000141 * c(43.058401, 38280.8753272)
        + 0.000031 * c(57.663379, 57420.7517205)
        + 0.000005 * c(79.476401, 76560.6495004)
        + 1.591274 * c(166.325722, 0.5042615)
    )
    w = (
        176.049863
        + 350.891982443297 * d
        + 0.000145 * s(129.071773, 19140.0328244)
        + 0.000157 * s(36.352167, 38281.0473591)
        + 0.000040 * s(56.668646, 57420.9295360)
        + 0.000001 * s(67.364003, 76560.2552215)
        + 0.000001 * s(104.792680, 95700.4387578)
        + 0.584542 * s(95.391654, 0.5042615)
    )
    return ra, dec, w % 360.0  # fmt: skip


def jupiter_angles_by_hand(d, T):
    """The 2015 report's Jupiter expressions (deg), with the arguments Ja..Je."""
    ja, jb, jc, jd_, je = (
        math.radians(p + r * T)
        for p, r in [(99.360714, 4850.4046), (175.895369, 1191.9605), (300.323162, 262.5475),
                     (114.012305, 6070.2476), (49.511251, 64.3000)]
    )  # fmt: skip
    ra = (
        268.056595
        - 0.006499 * T
        + 0.000117 * math.sin(ja)
        + 0.000938 * math.sin(jb)
        + 0.001432 * math.sin(jc)
        + 0.000030 * math.sin(jd_)
        + 0.002150 * math.sin(je)
    )
    dec = (
        64.495303
        + 0.002413 * T
        + 0.000050 * math.cos(ja)
        + 0.000404 * math.cos(jb)
        + 0.000617 * math.cos(jc)
        - 0.000013 * math.cos(jd_)
        + 0.000926 * math.cos(je)
    )
    return ra, dec, (284.95 + 870.5360000 * d) % 360.0  # fmt: skip


def erfa_icrf_to_body(ra, dec, w):
    # pyerfa r-matrix rotations (each the passive rotation about one axis):
    # ICRF -> body = R3(W) R1(90° - δ0) R3(90° + α0), the report's definition of W
    r = erfa.ir()
    r = erfa.rz(ra + math.pi / 2, r)
    r = erfa.rx(math.pi / 2 - dec, r)
    return erfa.rz(w, r)
