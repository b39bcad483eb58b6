"""Apparent accelerations of a rotating frame, and normal gravity, in pure numpy.

Local axes east, north, up (ENU) at geodetic latitude φ, height h above the
ellipsoid. V = (u, v, w) is the velocity relative to the rotating frame, Ω
the rotation rate about the body's z axis, M and N the meridian and
prime-vertical radii of curvature, p = (N + h) cos φ the distance from the
axis. With these terms, the rate of change of (u, v, w) on local axes is the
inertial acceleration (gravitation, pressure gradient, friction...) plus

============  ===================================  ==================================
term          vector form                          east, north, up
============  ===================================  ==================================
coriolis      -2 Ω × V                             (2Ω sinφ v - 2Ω cosφ w,
                                                    -2Ω sinφ u, 2Ω cosφ u)
centrifugal   -Ω × (Ω × r)                         Ω² p (0, -sinφ, cosφ)
euler         -(dΩ/dt) × r                         for dΩ/dt on the axis: (-Ω̇ p, 0, 0)
curvature     -ω_b × V, ω_b = (-v/(M+h),           (u v tanφ/(N+h) - u w/(N+h),
              u/(N+h), u tanφ/(N+h)), the rate      -u² tanφ/(N+h) - v w/(M+h),
              at which the local axes turn          u²/(N+h) + v²/(M+h))
============  ===================================  ==================================

Each is an acceleration felt in the frame of the local axes (positive along
the axis named). The functions take broadcast-compatible arrays: factors that
depend only on latitude and height are computed on the latitude/height arrays
as they come (small for gridded data) and each full-size product is formed once.
Latitudes are in degrees (as held by the xarray layer), everything else SI;
``scale`` factors turn the caller's velocity units into m s-1 inside the
products, so the velocities are never converted as whole arrays.
"""

from __future__ import annotations

import math

import numpy as np

from frameshift._kernels import geodesy

__all__ = [
    "COMPONENTS",
    "TERMS",
    "TOTALS",
    "accelerations",
    "accelerations_named",
    "centrifugal",
    "coriolis",
    "coriolis_parameters",
    "curvature",
    "equator_and_pole_gravity",
    "euler",
    "normal_gravity",
    "normal_gravity_parts",
    "normal_gravity_second_order",
    "output_names",
]

TERMS = ("coriolis", "centrifugal", "euler", "curvature")
COMPONENTS = ("eastward", "northward", "upward")


#: The sums :func:`accelerations` can return: of every term asked for ("full"), or of
#: every term asked for but the centrifugal one ("without_centrifugal"), for users
#: who count the centrifugal acceleration in an effective gravity.
TOTALS = ("full", "without_centrifugal")
_TOTAL_NAMES = {"full": "total", "without_centrifugal": "total_without_centrifugal"}


def output_names(terms: tuple[str, ...], totals: tuple[str, ...] = ("full",)) -> tuple[str, ...]:
    """Names of the outputs of :func:`accelerations`, in order: ``<term>_<component>``,
    then ``total_<component>`` and ``total_without_centrifugal_<component>`` as asked.

    Examples
    --------
    >>> output_names(("coriolis",), ())
    ('coriolis_eastward', 'coriolis_northward', 'coriolis_upward')
    """
    sums = [_TOTAL_NAMES[t] for t in TOTALS if t in totals]
    return tuple(f"{t}_{c}" for t in (*terms, *sums) for c in COMPONENTS)


# --- the four terms, one function each (for readers and for tests) ---------------------
def coriolis(lat, u, v, w, omega, *, traditional=False):
    """Coriolis acceleration -2 Ω × V on local axes, m s-2.

    ``lat`` in radians, ``u, v, w`` in m s-1, ``omega`` (rad s-1) the rate
    about the body's z axis, which on local axes is Ω (0, cos φ, sin φ).
    Components: (2Ω sinφ v - 2Ω cosφ w, -2Ω sinφ u, 2Ω cosφ u): deflection
    to the right of the motion in the northern hemisphere for Ω > 0, and an
    upward push on eastward motion (the Eötvös effect). ``traditional=True``
    drops the two 2Ω cosφ terms.
    """
    f = 2.0 * omega * np.sin(lat)
    e, n = f * v, -f * u
    if traditional:
        return e, n, np.zeros(np.broadcast_shapes(np.shape(e), np.shape(w)))
    fr = 2.0 * omega * np.cos(lat)
    return e - fr * w, n, fr * u


def centrifugal(lat, h, omega, *, a, f):
    """Centrifugal acceleration -Ω × (Ω × r) on local axes, m s-2.

    Ω² p (0, -sin φ, cos φ), with p = (N + h) cos φ: directed away from the
    rotation axis, so it has an equatorward and an upward part.
    """
    p = geodesy.axis_distance(lat, h, a, f)
    k = omega * omega * p
    return np.zeros(np.shape(k)), -k * np.sin(lat), k * np.cos(lat)


def euler(lat, h, omega_rate, *, a, f, lon=None):
    """Euler acceleration -(dΩ/dt) × r on local axes, m s-2.

    ``omega_rate`` is dΩ/dt on body-fixed x, y, z (trailing axis of length
    3). It is rotated onto local axes with :func:`geodesy.cartesian_to_enu`
    (``lon`` in radians is needed unless dΩ/dt lies on the z axis) and
    crossed with the position on local axes, r = (0, -N e² sinφ cosφ,
    N (1 - e² sin²φ) + h): rotation preserves cross products, so this is
    -(dΩ/dt × r) of body axes turned onto local ones. Zero for a steady frame.
    """
    rate = np.asarray(omega_rate, dtype=np.float64)
    sin_lat, cos_lat = np.sin(lat), np.cos(lat)
    if lon is None:
        if np.any(rate[..., :2]):
            raise ValueError("euler: longitude needed when dΩ/dt is off the z axis")
        ae = 0.0
        an, au = cos_lat * rate[..., 2], sin_lat * rate[..., 2]
    else:
        enu = geodesy.cartesian_to_enu(lat, lon, rate)
        ae, an, au = enu[..., 0], enu[..., 1], enu[..., 2]
    e2 = geodesy._e2(f)
    n = geodesy.prime_vertical_radius(sin_lat, a, f)
    rn = -n * e2 * sin_lat * cos_lat
    ru = n * (1.0 - e2 * sin_lat * sin_lat) + h
    # -(α × r) with r = (0, rn, ru); "+ 0.0" turns the -0.0 of a zero rate into 0.0
    return au * rn - an * ru + 0.0, ae * ru + 0.0, -ae * rn + 0.0


def curvature(lat, h, u, v, w, *, a, f, traditional=False):
    """Curvature (metric) acceleration -ω_b × V on local axes, m s-2.

    The local axes turn at ω_b = (-v/(M+h), u/(N+h), u tanφ/(N+h)) as the
    point moves over the ellipsoid (dφ/dt = v/(M+h), dλ/dt = u/((N+h) cosφ)),
    giving (u v tanφ/(N+h) - u w/(N+h), -u² tanφ/(N+h) - v w/(M+h),
    u²/(N+h) + v²/(M+h)). ``traditional=True`` keeps only the two tanφ terms.
    The tanφ terms are singular at the poles, where east and north are undefined.
    """
    sin_lat = np.sin(lat)
    n = geodesy.prime_vertical_radius(sin_lat, a, f)
    m = geodesy.meridian_radius(sin_lat, a, f)
    inv_n, inv_m = 1.0 / (n + h), 1.0 / (m + h)
    tan_n = np.tan(lat) * inv_n
    e, nn = u * v * tan_n, -u * u * tan_n
    if traditional:
        return e, nn, np.zeros(np.shape(e))
    return e - u * w * inv_n, nn - v * w * inv_m, u * u * inv_n + v * v * inv_m


def coriolis_parameters(lat_deg, omega):
    """The Coriolis parameter 2Ω sin φ and the reciprocal parameter 2Ω cos φ, s-1.

    A zero is +0.0 whatever the sense of rotation (a retrograde body's Ω < 0
    would otherwise give -0.0 on the equator, printed as "-0").

    Examples
    --------
    >>> f, _ = coriolis_parameters(np.array([0.0, 30.0]), -2.99e-7)  # Venus turns backwards
    >>> np.signbit(f[0]), bool(f[1] < 0)
    (np.False_, True)
    """
    lat = np.deg2rad(lat_deg)
    return 2.0 * omega * np.sin(lat) + 0.0, 2.0 * omega * np.cos(lat) + 0.0


# --- all terms in one pass, for the xarray layer ------------------------------------
def accelerations_named(*arrays, names, **kwargs):
    """Call :func:`accelerations` with positional ``arrays`` named by ``names``."""
    return accelerations(**dict(zip(names, arrays, strict=True)), **kwargs)


def accelerations(
    lat_deg,
    h,
    u,
    v,
    omega,
    omega_rate_x,
    omega_rate_y,
    omega_rate_z,
    w=None,
    lon_deg=None,
    *,
    a: float,
    f: float,
    scale: tuple[float, float, float] = (1.0, 1.0, 1.0),
    terms: tuple[str, ...] = TERMS,
    traditional: bool = False,
    totals: tuple[str, ...] = ("full",),
):
    """Every requested term and the totals, as a tuple ordered like :func:`output_names`.

    Parameters
    ----------
    lat_deg, h : array_like
        Geodetic latitude (degrees) and height above the ellipsoid (m).
    u, v : array_like
        Eastward and northward velocity relative to the rotating frame, in
        units that ``scale[0]``, ``scale[1]`` turn into m s-1.
    omega : array_like
        Rotation rate about the body's z axis, rad s-1.
    omega_rate_x, omega_rate_y, omega_rate_z : array_like
        dΩ/dt on body-fixed axes, rad s-2.
    w : array_like, optional
        Upward velocity (``scale[2]`` to m s-1); None means zero.
    lon_deg : array_like, optional
        Longitude (degrees); needed only when dΩ/dt is off the z axis.
    a, f : float
        Semi-major axis (m) and flattening of the ellipsoid.
    scale : tuple of 3 floats
        Factors from the velocity units to m s-1.
    terms : tuple of str
        Subset of :data:`TERMS`, in output order.
    traditional : bool
        Drop the 2Ω cos φ Coriolis terms and the curvature terms in w or upward.
    totals : tuple of str
        Subset of :data:`TOTALS`: the sum of all terms asked for (``"full"``)
        and/or of all of them but the centrifugal term (``"without_centrifugal"``).

    Returns
    -------
    tuple of ndarray
        Each of the broadcast shape of all inputs, float64, sharing no memory
        with another output (or an input); a term that varies over fewer axes
        than the inputs' broadcast shape is a read-only broadcast view.

    Examples
    --------
    >>> out = accelerations(45.0, 0.0, 10.0, 0.0, 7.292115e-5, 0.0, 0.0, 0.0,
    ...                     a=6378137.0, f=1 / 298.257223563, terms=("coriolis",))
    >>> round(float(out[1]), 9)  # northward: -f u with f = 1.031261e-4 s-1 at 45°
    -0.001031261
    """
    # float64 throughout (float32 or integer input would otherwise leak into outputs)
    lat_deg, h, u, v = (np.asarray(x, dtype=np.float64) for x in (lat_deg, h, u, v))
    w = None if w is None else np.asarray(w, dtype=np.float64)
    inputs = [lat_deg, h, u, v, omega, omega_rate_x, omega_rate_y, omega_rate_z]
    shape = np.broadcast_shapes(*(np.shape(x) for x in [*inputs, w, lon_deg] if x is not None))
    su, sv, sw = (float(s) for s in scale)
    full_w = w is not None and not traditional
    terms = tuple(terms)
    for term in terms:
        if term not in TERMS:
            raise ValueError(f"unknown term {term!r}; expected one of {TERMS}")
    rx, ry, rz = (np.asarray(r, dtype=np.float64) for r in inputs[5:8])
    off_axis = bool(np.any(rx) or np.any(ry))
    if "euler" in terms and off_axis and lon_deg is None:
        raise ValueError("accelerations: lon_deg needed when dΩ/dt is off the z axis")

    # Factors of latitude and height (and of time for an unsteady frame): small
    # arrays for gridded data, full-size for trajectories, so each is formed once.
    lat = np.multiply(lat_deg, np.pi / 180.0)  # np.deg2rad runs a slower loop
    sin_lat, cos_lat = np.sin(lat), np.cos(lat)
    two_omega = np.multiply(omega, 2.0)
    if {"centrifugal", "euler", "curvature"} & set(terms):
        e2 = geodesy._e2(f)
        d = 1.0 - e2 * (sin_lat * sin_lat)  # 1 - e² sin²φ
        n = a / np.sqrt(d)  # N, as geodesy.prime_vertical_radius
        nh = n + h
        p = nh * cos_lat  # distance from the axis, as geodesy.axis_distance

    scratch: list[np.ndarray] = []

    def temp() -> np.ndarray:  # one full-size work array, reused
        if not scratch:
            scratch.append(np.empty(shape))
        return scratch[0]

    parts: dict[str, list] = {c: [] for c in COMPONENTS}  # contributions to the totals
    results: list = []
    centrifugal_parts: dict[str, object] = {}

    def emit(values, term):
        for comp, value in zip(COMPONENTS, values, strict=True):
            results.append(value)
            if value is not None:
                parts[comp].append(value)
                if term == "centrifugal":
                    centrifugal_parts[comp] = value

    for term in terms:
        if term == "coriolis":
            fs = two_omega * sin_lat  # the Coriolis parameter f
            east = np.multiply(v, _fold(fs, sv))
            if full_w or not traditional:
                fr = two_omega * cos_lat  # the reciprocal parameter
            if full_w:
                east = _subtract(east, w, _fold(fr, sw), temp)
            north = _neg(np.multiply(u, _fold(fs, su)))
            up = None if traditional else np.multiply(u, _fold(fr, su))
            emit((east, north, up), term)
        elif term == "centrifugal":
            k = np.square(omega) * p
            emit((None, _neg(k * sin_lat), k * cos_lat), term)
        elif term == "euler":
            if not off_axis:  # dΩ/dt on the axis: -(dΩ/dt × r) = -Ω̇ p east, nothing else
                emit((p * (0.0 - rz), None, None), term)  # 0.0 - rz: no -0.0 for zero
            else:
                rn = -n * e2 * sin_lat * cos_lat  # r on local axes: (0, rn, ru)
                ru = n * d + h
                rate = np.stack(np.broadcast_arrays(rx, ry, rz), axis=-1)
                enu = geodesy.cartesian_to_enu(lat, np.deg2rad(lon_deg), rate)
                ae, an, au = enu[..., 0], enu[..., 1], enu[..., 2]
                emit((au * rn - an * ru + 0.0, ae * ru + 0.0, -ae * rn + 0.0), term)
        elif term == "curvature":
            inv_n = 1.0 / nh
            tan_n = (sin_lat / cos_lat) * inv_n
            uv = np.multiply(u, v)
            uu = np.multiply(u, u)
            east = _times(uv, _fold(tan_n, su * sv))
            north = _neg(np.multiply(uu, _fold(tan_n, su * su)))
            up = None
            if not traditional:
                inv_m = d / (n * (1.0 - e2) + h * d)  # 1/(M + h), M = N (1 - e²)/d
                up = _times(uu, _fold(inv_n, su * su))
                vv = np.multiply(v, v, out=temp())
                up = _accumulate(up, np.multiply(vv, _fold(inv_m, sv * sv), out=vv))
                if full_w:
                    uw = np.multiply(u, w, out=temp())
                    east = _subtract(east, uw, _fold(inv_n, su * sw), temp)
                    vw = np.multiply(v, w, out=temp())
                    north = _subtract(north, vw, _fold(inv_m, sv * sw), temp)
            emit((east, north, up), term)
    for total in totals:
        if total not in TOTALS:
            raise ValueError(f"unknown total {total!r}; expected one of {TOTALS}")
    # the work array, no longer needed, becomes the first total: one full-size
    # array fewer at the peak (fresh memory is what a first call pays most for)
    spare = scratch.pop() if scratch else None
    wanted = []
    if "full" in totals:
        wanted += [parts[c] for c in COMPONENTS]
    if "without_centrifugal" in totals:  # the same additions, the centrifugal part left out
        wanted += [[x for x in parts[c] if x is not centrifugal_parts.get(c)]
                   for c in COMPONENTS]
    sums = []
    for values in wanted:
        out, spare = spare, None
        sums.append(_sum(values, shape, out=out))
    full = [_fresh(r, shape) for r in results]
    return (*full, *sums)


def _times(x: np.ndarray, k) -> np.ndarray:
    """x k, in place in the fresh array ``x`` when it already has the broadcast shape."""
    if np.shape(x) == np.broadcast_shapes(np.shape(x), np.shape(k)) and np.ndim(x):
        return np.multiply(x, k, out=x)
    return x * k


def _fold(k, s: float):
    """k times a unit scale factor, skipping the pass when the factor is 1."""
    return k if s == 1.0 else k * s


def _neg(x: np.ndarray) -> np.ndarray:
    """-x, in place (x is a fresh array)."""
    return np.negative(x, out=x) if isinstance(x, np.ndarray) and x.ndim else -x


def _subtract(x, y, k, temp) -> np.ndarray:
    """x - y k, forming y k in the work array when it has the full shape (y may be it)."""
    work = temp()
    if np.shape(y) == work.shape and np.shape(x) == work.shape:
        np.multiply(y, k, out=work)
        x -= work
        return x
    return x - y * k


def _accumulate(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """x + y, in place in ``x`` when ``x`` already has the broadcast shape."""
    if np.shape(x) == np.broadcast_shapes(np.shape(x), np.shape(y)):
        x += y
        return x
    return x + y


def _fresh(value, shape) -> np.ndarray:
    """``value`` as a float64 array of ``shape``, not sharing memory with another output.

    A term that varies over fewer axes than the output (the centrifugal term
    of a latitude-height grid, say) comes back as a read-only broadcast view
    of its own small array, as ``numpy.broadcast_to`` and ``xarray.broadcast``
    give: copying it to the full shape would cost a full-size array of memory
    and of page faults for no new number.
    """
    if value is None:
        return np.zeros(shape)
    if np.shape(value) == shape and isinstance(value, np.ndarray):
        return value
    return np.broadcast_to(np.asarray(value, dtype=np.float64), shape)


def _sum(values, shape, out: np.ndarray | None = None) -> np.ndarray:
    """Sum of broadcastable arrays into ``out`` (a new array of ``shape`` if None)."""
    if not values:
        return np.zeros(shape)
    # start from the largest so the first addition already has the full shape
    values = sorted(values, key=np.size, reverse=True)
    if out is None:
        out = np.empty(shape)
    if len(values) == 1:
        out[...] = values[0]
        return out
    np.add(values[0], values[1], out=out)
    for value in values[2:]:
        out += value
    return out


# --- normal gravity -------------------------------------------------------------------
def _series_terms(s_max: float) -> int:
    """Terms of the q series so that s_max**k falls below 1e-18."""
    return max(4, math.ceil(-18.0 / math.log10(max(s_max, 1e-300))) + 1)


def _q_ratios(s, s0, k):
    """Q(s) = q/t³ and P(s) = q'/t² for t² = s (series in s, exact at s = 0).

    q(t) = ½[(1 + 3/t²) arctan t - 3/t] = Σ_{j≥1} (-1)^(j+1) 2j t^(2j+1)/((2j+1)(2j+3)),
    q'(t) = 3 (1 + 1/t²)(1 - arctan(t)/t) - 1 = Σ_{j≥1} (-1)^(j+1) 6 t^(2j)/((2j+1)(2j+3)),
    with t = E/u (from the Taylor series of arctan, |t| < 1). The series
    avoid the cancellation of the closed forms, which lose about six digits
    for the Earth, and keep a finite limit for a sphere (E = 0).
    """
    q_series = np.zeros_like(np.asarray(s, dtype=np.float64))
    p_series = np.zeros_like(q_series)
    q0 = 0.0
    for j in range(k, 0, -1):  # Horner, highest power first
        d = (2 * j + 1) * (2 * j + 3)
        sign = 1.0 if j % 2 else -1.0
        q_series = q_series * s + sign * 2 * j / d
        p_series = p_series * s + sign * 6.0 / d
        q0 = q0 * s0 + sign * 2 * j / d
    return q_series, p_series, q0


def normal_gravity(lat, h, *, a, f, gm, omega):
    """Normal gravity of a level ellipsoid, exact on and above it (Somigliana-Pizzetti field).

    The normal potential in ellipsoidal coordinates (u, β), E = sqrt(a² - b²)
    (Heiskanen & Moritz, Physical Geodesy, 1967, ch. 2, and the same field
    behind NIMA TR8350.2 ch. 4; cited from memory, equation numbers not checked):
    U = GM/E arctan(E/u) + ½ ω² a² (q/q0)(sin²β - 1/3) + ½ ω² (u² + E²) cos²β,
    the last term being the centrifugal potential ½ ω² (x² + y²). The gradient
    of the first two terms (derived here: dq/du = -q' E/(u² + E²); scale
    factors w and w sqrt(u² + E²), w = sqrt((u² + E² sin²β)/(u² + E²))) is
    projected on the local geodetic north and up axes.

    Returns ``(gravitation_north, gravitation_up, centrifugal_north,
    centrifugal_up)`` in m s-2: the attraction of the normal body and the
    centrifugal acceleration ω² p (-sinφ, cosφ); their sum is normal gravity,
    which on the ellipsoid points straight down (its magnitude there is
    Somigliana's formula). ``lat`` in radians, ``h`` in m.
    """
    sin_lat, cos_lat = np.sin(lat), np.cos(lat)
    n = geodesy.prime_vertical_radius(sin_lat, a, f)
    e2 = geodesy._e2(f)
    b = a * (1.0 - f)
    big_e2 = a * a - b * b  # E²
    rho = (n + h) * cos_lat  # distance from the axis
    z = (n * (1.0 - e2) + h) * sin_lat
    r2 = rho * rho + z * z
    d = r2 - big_e2
    u2 = 0.5 * d * (1.0 + np.sqrt(1.0 + 4.0 * big_e2 * z * z / (d * d)))
    u = np.sqrt(u2)
    c = np.sqrt(u2 + big_e2)  # sqrt(u² + E²)
    beta = np.arctan2(z * c, u * rho)
    sb, cb = np.sin(beta), np.cos(beta)
    w = np.sqrt((u2 + big_e2 * sb * sb) / (u2 + big_e2))
    s, s0 = big_e2 / u2, big_e2 / (b * b)
    q_s, p_s, q0_s = _q_ratios(s, s0, _series_terms(float(np.max(s, initial=s0)) * 1.0001))
    q_over_q0 = (b / u) ** 3 * q_s / q0_s  # q/q0 = (t/t0)³ Q(s)/Q(s0), t/t0 = b/u
    e_qp_over_q0 = b**3 / u2 * p_s / q0_s  # E q'/q0 = (b³/u²) P(s)/Q(s0)
    om2 = omega * omega
    # gradient of the gravitational part only (the centrifugal part is exact below)
    g_u = (
        -gm / (u2 + big_e2)
        - om2 * a * a / (u2 + big_e2) * e_qp_over_q0 * (0.5 * sb * sb - 1.0 / 6.0)
    ) / w
    g_b = om2 * a * a / c * q_over_q0 * sb * cb / w
    # unit vectors of increasing u and β in the meridian plane (ρ, z), dotted with
    # local up (cosφ, sinφ) and north (-sinφ, cosφ)
    uhat_rho, uhat_z = u * cb / c / w, sb / w
    bhat_rho, bhat_z = -sb / w, u * cb / c / w
    grav_up = g_u * (uhat_rho * cos_lat + uhat_z * sin_lat) + g_b * (
        bhat_rho * cos_lat + bhat_z * sin_lat
    )
    grav_north = g_u * (-uhat_rho * sin_lat + uhat_z * cos_lat) + g_b * (
        -bhat_rho * sin_lat + bhat_z * cos_lat
    )
    k = om2 * rho
    return grav_north, grav_up, -k * sin_lat, k * cos_lat


def normal_gravity_second_order(lat, h, *, a, f, gm, omega):
    """Magnitude of normal gravity from Somigliana's formula and the second-order height series.

    γ = γe (1 + k sin²φ)/sqrt(1 - e² sin²φ), k = b γp/(a γe) - 1 (NIMA TR8350.2
    eq. 4-1), with γe, γp from the defining constants
    (:func:`equator_and_pole_gravity`), and above the ellipsoid
    γ_h = γ [1 - (2/a)(1 + f + m - 2 f sin²φ) h + (3/a²) h²], m = ω²a²b/GM
    (NIMA TR8350.2 eq. 4-3).
    """
    sin2 = np.sin(lat) ** 2
    gamma_e, gamma_p, m = equator_and_pole_gravity(a=a, f=f, gm=gm, omega=omega)
    b = a * (1.0 - f)
    k = b * gamma_p / (a * gamma_e) - 1.0
    gamma = gamma_e * (1.0 + k * sin2) / np.sqrt(1.0 - geodesy._e2(f) * sin2)
    return gamma * (1.0 - 2.0 / a * (1.0 + f + m - 2.0 * f * sin2) * h + 3.0 / (a * a) * h * h)


def equator_and_pole_gravity(*, a, f, gm, omega):
    """Normal gravity at the equator and the pole (m s-2), and m = ω²a²b/GM.

    γe = GM/(ab) (1 - m - (m/6) e' q0'/q0), γp = GM/a² (1 + (m/3) e' q0'/q0),
    e' = E/b the second eccentricity (Heiskanen & Moritz 1967, ch. 2, from
    memory; for WGS 84 they reproduce the values of NIMA TR8350.2 to 1e-12).
    """
    b = a * (1.0 - f)
    s0 = (a * a - b * b) / (b * b)  # e'²
    _, p0, q0 = _q_ratios(np.asarray(s0), s0, _series_terms(s0))
    ratio = float(p0) / q0  # e' q0'/q0 = e' t0² P / (t0³ Q) = P/Q with t0 = e'
    m = omega * omega * a * a * b / gm
    gamma_e = gm / (a * b) * (1.0 - m - m / 6.0 * ratio)
    gamma_p = gm / (a * a) * (1.0 + m / 3.0 * ratio)
    return gamma_e, gamma_p, m


def normal_gravity_parts(lat_deg, h, *, a, f, gm, omega, method="exact"):
    """Normal gravity and its split, for the xarray layer (all of the broadcast shape).

    Returns ``(magnitude, gravity_north, gravity_up, gravitation_north,
    gravitation_up, centrifugal_north, centrifugal_up)``, m s-2. With
    ``method="second_order"`` the magnitude is :func:`normal_gravity_second_order`
    and gravity is taken along the ellipsoidal normal (the curvature of the
    normal plumb line, about 0.17" per km of height times sin 2φ, neglected).
    """
    shape = np.broadcast_shapes(np.shape(lat_deg), np.shape(h))
    lat = np.deg2rad(np.asarray(lat_deg, dtype=np.float64))
    h = np.asarray(h, dtype=np.float64)
    if method == "exact":
        grav_n, grav_u, cen_n, cen_u = normal_gravity(lat, h, a=a, f=f, gm=gm, omega=omega)
        g_n, g_u = grav_n + cen_n, grav_u + cen_u
        magnitude = np.hypot(g_n, g_u)
    elif method == "second_order":
        magnitude = normal_gravity_second_order(lat, h, a=a, f=f, gm=gm, omega=omega)
        k = omega * omega * geodesy.axis_distance(lat, h, a, f)
        cen_n, cen_u = -k * np.sin(lat), k * np.cos(lat)
        g_n, g_u = np.zeros(np.shape(magnitude)), -magnitude
        grav_n, grav_u = g_n - cen_n, g_u - cen_u
    else:
        raise ValueError(f"unknown method {method!r}; expected 'exact' or 'second_order'")
    out = (magnitude, g_n, g_u, grav_n, grav_u, cen_n, cen_u)
    return tuple(_fresh(np.asarray(x, dtype=np.float64), shape) for x in out)
