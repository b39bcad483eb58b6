"""Building blocks of frameshift's figures: style, colours, labels, panels.

Private to :mod:`frameshift.plotting`; matplotlib is imported inside functions only.
"""

from __future__ import annotations

import re
import textwrap
from collections.abc import Iterable, Sequence
from os import PathLike
from typing import TYPE_CHECKING

import numpy as np
import xarray as xr

from frameshift.detect import criteria
from frameshift.errors import MissingInputError
from frameshift.frames import Frame
from frameshift.units import parse_quantity

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

__all__ = ["LINE_COLOURS", "MAGNITUDE_CMAP", "SIGNED_CMAP", "STYLE", "elapsed_time",
           "unit_label"]

STYLE: dict[str, object] = {
    "font.size": 9.5,
    "axes.titlesize": 10,
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "axes.labelsize": 9.5,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": "#d9d9d9",
    "grid.linewidth": 0.6,
    "axes.axisbelow": True,
    "xtick.labelsize": 8.5,
    "ytick.labelsize": 8.5,
    "legend.fontsize": 8.5,
    "legend.frameon": False,
    "lines.linewidth": 1.4,
    "figure.facecolor": "white",
    "savefig.facecolor": "white",
    "axes.formatter.use_mathtext": True,
    "axes.formatter.useoffset": False,
}

#: Colour map for signed fields (centred on zero).
SIGNED_CMAP = "RdBu_r"
#: Colour map for fields of one sign and for magnitudes.
MAGNITUDE_CMAP = "cividis"
#: Line colour of each term (a colour-blind-safe qualitative palette).
LINE_COLOURS: dict[str, str] = {
    "coriolis": "#0072B2",
    "centrifugal": "#E69F00",
    "euler": "#009E73",
    "curvature": "#CC79A7",
    "total": "#222222",
    "total_without_centrifugal": "#555555",
    "earth": "#D55E00",
    "inertial": "#0072B2",
}

_TERM_ORDER = ("coriolis", "centrifugal", "euler", "curvature", "total_without_centrifugal",
               "total")
TERM_LABELS = {
    "coriolis": "Coriolis",
    "centrifugal": "centrifugal",
    "euler": "Euler",
    "curvature": "curvature",
    "total": "total",
    "total_without_centrifugal": "total without centrifugal",
}
_TERM_RE = re.compile(r"^(?P<term>\w+?)_(?P<comp>eastward|northward|upward)$")
_SUPER = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
DPI = 120


# --- small helpers ------------------------------------------------------------------
def unit_label(units: str, exponent: int = 0) -> str:
    """Typeset a UDUNITS string for an axis label, with an optional power of ten.

    Examples
    --------
    >>> unit_label("m s-2", -5)
    '10⁻⁵ m s⁻²'
    """
    body = re.sub(r"([A-Za-z])(-?\d+)", lambda m: m.group(1) + m.group(2).translate(_SUPER), units)
    return f"10{str(exponent).translate(_SUPER)} {body}" if exponent else body


def power_of_ten(values: np.ndarray) -> int:
    finite = np.abs(values[np.isfinite(values)])
    top = float(finite.max()) if finite.size else 0.0
    return int(np.floor(np.log10(top))) if top > 0 else 0


def add_caption(fig: Figure, text: str, width_in: float) -> None:
    wrapped = textwrap.fill(text, width=int(width_in * 15))
    fig.text(0.01, 0.005, wrapped, ha="left", va="bottom", fontsize=8.5, color="#333333")


def new_figure(size: tuple[float, float], caption_lines: int) -> Figure:
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    bottom = (0.17 * caption_lines + 0.1) / size[1]
    fig.get_layout_engine().set(rect=(0, bottom, 1, 1 - bottom), h_pad=0.06, w_pad=0.06)
    return fig


def lines_needed(text: str, width_in: float) -> int:
    return len(textwrap.wrap(text, width=int(width_in * 15)))


def save_figure(fig: Figure, path: str | PathLike | None, dpi: int) -> None:
    if path is not None:
        fig.savefig(path, dpi=dpi, format="png")


def term_names(ds: xr.Dataset, terms: Iterable[str] | None) -> list[str]:
    found = {m["term"] for n in ds.data_vars if (m := _TERM_RE.match(str(n)))}
    if terms is not None:
        wanted = list(terms)
        missing = [t for t in wanted if t not in found]
        if missing:
            raise MissingInputError(
                f"no variables '<term>_<component>' for terms {missing}; the Dataset has "
                f"{sorted(found)}",
                variable=missing[0],
                expected=f"{missing[0]}_eastward, ...",
                found=str(sorted(found)),
            )
        return wanted
    if not found:
        raise MissingInputError(
            "the Dataset holds no acceleration terms named '<term>_<component>' "
            "(as frameshift.apparent_accelerations returns)",
            variable="terms_ds",
            expected="e.g. coriolis_eastward",
            found=str(list(ds.data_vars)),
        )
    return [t for t in _TERM_ORDER if t in found] + sorted(found - set(_TERM_ORDER))


def coord_by_kind(ds: xr.Dataset, kind: str) -> str:
    units = criteria.LATITUDE_UNITS if kind == "latitude" else criteria.LONGITUDE_UNITS
    short = {"latitude": "lat", "longitude": "lon"}[kind]
    for name, var in ds.variables.items():
        if var.attrs.get("standard_name") == kind or var.attrs.get("units") in units:
            return str(name)
    for name in (kind, short):
        if name in ds.variables:
            return name
    raise MissingInputError(
        f"no {kind} found (standard_name {kind!r} or units degrees_...)",
        variable=kind,
        expected=f"a {kind} coordinate",
        found=str(list(ds.variables)),
    )


def vertical_dim(da: xr.DataArray) -> str | None:
    for dim in da.dims:
        if dim not in da.coords:
            continue
        attrs = da[dim].attrs
        std = attrs.get("standard_name")
        if (
            attrs.get("axis") == "Z"
            or "positive" in attrs
            or std in criteria.VERTICAL_STANDARD_NAMES
            or std in criteria.PRESSURE_STANDARD_NAMES
        ):
            return str(dim)
    return None


def coord_text(coord: xr.DataArray) -> str:
    value = coord.values
    if np.issubdtype(coord.dtype, np.datetime64):
        return np.datetime_as_string(value, unit="m").replace("T", " ") + " UTC"
    units = coord.attrs.get("units", "")
    if units == "Pa" and abs(float(value)) >= 100:
        return f"{float(value) / 100:g} hPa"
    return f"{float(value):g} {units}".strip()


def select_nearest(da: xr.DataArray, dim: str, value: object) -> xr.DataArray:
    """Nearest element of ``da`` along ``dim``; ``value`` may carry units ("250 hPa")."""
    if value is None:
        return da.isel({dim: 0})
    if isinstance(value, str) and dim in da.coords and "units" in da[dim].attrs:
        target = parse_quantity(str(dim), value, da[dim].attrs["units"])
        return da.sel({dim: target}, method="nearest")
    return da.sel({dim: value}, method="nearest")


def scaled_values(da: xr.DataArray, exponent: int) -> np.ndarray:
    return np.asarray(da.values, dtype=np.float64) / 10.0**exponent


def cell_edges(centres: np.ndarray, lo: float | None = None, hi: float | None = None) -> np.ndarray:
    c = np.asarray(centres, dtype=np.float64)
    mid = 0.5 * (c[1:] + c[:-1])
    edges = np.concatenate([[c[0] - (mid[0] - c[0])], mid, [c[-1] + (c[-1] - mid[-1])]])
    return np.clip(edges, lo, hi) if lo is not None else edges


def colour_scale(values: np.ndarray, signed: bool = False) -> tuple[str, float, float]:
    """Diverging and symmetric about zero for signed quantities (``signed``, or values of
    both signs), else sequential."""
    finite = values[np.isfinite(values)]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    if signed or lo < 0.0 < hi:
        top = max(-lo, hi, abs(lo), abs(hi)) or 1.0
        return SIGNED_CMAP, -top, top
    if lo < 0.0 < hi:
        top = max(-lo, hi)
        return SIGNED_CMAP, -top, top
    if hi == lo:
        hi = lo + (abs(lo) or 1.0) * 1e-3
    return MAGNITUDE_CMAP, lo, hi


def is_zero(da: xr.DataArray) -> bool:
    return bool(np.all(np.asarray(da.values) == 0.0))


def zero_panel(ax: Axes, title: str, keep_ticks: bool = False) -> None:
    """An empty panel that says its term is zero; without ``keep_ticks``, no y scale."""
    ax.set_title(title)
    ax.text(
        0.5,
        0.5,
        "zero everywhere",
        transform=ax.transAxes,
        ha="center",
        va="center",
        color="#555555",
    )
    ax.grid(False)
    if not keep_ticks:
        ax.tick_params(left=False, labelleft=False)


def nonzero_terms(ds: xr.Dataset, terms: list[str], components: Sequence[str]):
    keep, zero = [], []
    for term in terms:
        names = [f"{term}_{c}" for c in components if f"{term}_{c}" in ds]
        (zero if all(is_zero(ds[n]) for n in names) else keep).append(term)
    return keep, zero


def zero_note(zero: list[str]) -> str:
    if not zero:
        return ""
    return f" Not drawn, zero everywhere: {', '.join(TERM_LABELS.get(t, t) for t in zero)}."


def elapsed_time(times: xr.DataArray) -> tuple[np.ndarray, str]:
    """Time as hours (or days, past ten days) since its first value, and the axis label.

    Works for every CF calendar (datetime64 and cftime values alike), and starts
    the axis where the data start.

    Examples
    --------
    >>> import numpy as np, xarray as xr
    >>> t = xr.DataArray(np.array(["2030-01-01T00", "2030-01-01T06"], "datetime64[ns]"))
    >>> elapsed_time(t)
    (array([0., 6.]), 'hours since 2030-01-01 00:00 (standard calendar)')
    """
    values = np.asarray(times.values).ravel()
    first = values[0]
    if np.issubdtype(values.dtype, np.datetime64):
        seconds = (values - first) / np.timedelta64(1, "s")
        start = np.datetime_as_string(first, unit="m").replace("T", " ")
        calendar = times.encoding.get("calendar", "standard")
    else:  # cftime values: differences are datetime.timedelta in their own calendar
        seconds = np.array([(t - first).total_seconds() for t in values])
        start = first.strftime("%Y-%m-%d %H:%M")
        calendar = getattr(first, "calendar", None) or times.encoding.get("calendar", "")
    seconds = np.asarray(seconds, dtype=np.float64)
    span = float(np.nanmax(seconds)) if seconds.size else 0.0
    per, unit = (86400.0, "days") if span > 10 * 86400.0 else (3600.0, "hours")
    return seconds / per, f"{unit} since {start} ({calendar or 'standard'} calendar)"


def _format_time_axis(ax: Axes, t: np.ndarray | None = None) -> None:
    if t is not None and len(t):
        ax.set_xlim(float(np.nanmin(t)), float(np.nanmax(t)))  # from where the data start


def figure_style():
    """The rc context every figure is built and saved in; the one matplotlib import."""
    try:
        import matplotlib
    except ImportError as exc:
        raise ImportError(
            "frameshift's figures need matplotlib: pip install 'frameshift[plot]'"
        ) from exc
    return matplotlib.rc_context(STYLE)


def term_grid(fig: Figure, spec, ds: xr.DataArray | xr.Dataset, draw, components, pick):
    """Small multiples: a row per term, a column per component; returns the axes."""
    axes = spec.subgridspec(len(draw), len(components)).subplots(sharex=True, squeeze=False)
    for i, term in enumerate(draw):
        for j, comp in enumerate(components):
            ax = axes[i, j]
            name = f"{term}_{comp}"
            if name not in ds:
                ax.set_axis_off()
                continue
            da = pick(ds[name])
            if is_zero(da):
                zero_panel(ax, f"{TERM_LABELS.get(term, term)}, {comp}")
                continue
            t, t_label = elapsed_time(da[da.dims[0]])
            exp = power_of_ten(np.asarray(da.values, dtype=np.float64))
            vals = scaled_values(da, exp)
            ax.plot(t, vals, color=LINE_COLOURS.get(term, "#444444"))
            finite = vals[np.isfinite(vals)]
            if finite.size and np.ptp(finite) <= 1e-6 * max(np.abs(finite).max(), 1e-300):
                mid = float(finite.mean())
                ax.set_ylim(mid - 0.1 * abs(mid or 1), mid + 0.1 * abs(mid or 1))
                ax.text(
                    0.98,
                    0.08,
                    "constant in time",
                    transform=ax.transAxes,
                    ha="right",
                    va="bottom",
                    fontsize=8,
                    color="#555555",
                )
            elif finite.size and finite.min() < 0 < finite.max():
                ax.axhline(0.0, color="#777777", lw=0.7, zorder=1)
            ax.set_title(f"{TERM_LABELS.get(term, term)}, {comp}")
            ax.set_ylabel(unit_label(ds[name].attrs.get("units", "m s-2"), exp))
            _format_time_axis(ax, t)
            if i == len(draw) - 1:
                ax.set_xlabel(t_label)
    return axes


def draw_section(fig: Figure, ax: Axes, da: xr.DataArray, tname, vdim, pick) -> None:
    da = da.transpose(vdim, tname, ...)
    da = da.isel(dict.fromkeys(da.dims[2:], 0))
    exp = power_of_ten(np.asarray(da.values, dtype=np.float64))
    vals = scaled_values(da, exp)
    _, lo, hi = colour_scale(vals)
    top = max(abs(lo), abs(hi))
    z = da[vdim].values
    t, t_label = elapsed_time(da[tname])
    mesh = ax.pcolormesh(t, z, vals, cmap=SIGNED_CMAP, vmin=-top, vmax=top, shading="nearest")
    cbar = fig.colorbar(mesh, ax=ax, pad=0.01, aspect=12)
    cbar.set_label(unit_label(da.attrs.get("units", "m s-2"), exp))
    vunits = da[vdim].attrs.get("units", "")
    ax.set_ylabel(f"{vdim} ({vunits})" if vunits else vdim)
    if da[vdim].attrs.get("positive") == "down" or vdim == "depth":
        ax.invert_yaxis()
    ax.axhline(float(pick(da)[vdim]), color="#222222", ls="--", lw=1.0)
    term, _, comp = str(da.name).rpartition("_")
    ax.set_title(f"{TERM_LABELS.get(term, term)}, {comp}, against {vdim} and time")
    ax.grid(False)
    ax.set_xlabel(t_label)
    _format_time_axis(ax, t)


def inertial_period_hours(ds: xr.Dataset, frame: Frame) -> float | None:
    try:
        lat = ds[coord_by_kind(ds, "latitude")]
    except MissingInputError:
        return None
    if lat.size != 1:
        return None
    f = 2.0 * frame.rotation_rate * np.sin(np.deg2rad(float(lat.values)))
    return float(2.0 * np.pi / abs(f) / 3600.0) if f else None


def period_bar(ax: Axes, hours: float) -> None:
    """A bar one inertial period long in the upper left of an elapsed-time axis."""
    t0, t1 = ax.get_xlim()  # hours or days since the start (see elapsed_time)
    per_hour = 1.0 / 24.0 if "days" in ax.get_xlabel() else 1.0
    start = t0 + 0.02 * (t1 - t0)
    end = start + hours * per_hour
    trans = ax.get_xaxis_transform()
    ax.plot(
        [start, end],
        [0.88, 0.88],
        transform=trans,
        color="#222222",
        lw=2.0,
        solid_capstyle="butt",
        zorder=5,
    )
    for x in (start, end):
        ax.plot([x, x], [0.84, 0.92], transform=trans, color="#222222", lw=1.2, zorder=5)
    ax.text(
        end + 0.01 * (t1 - t0),
        0.88,
        f"inertial period 2π/f = {hours:.1f} h",
        transform=trans,
        ha="left",
        va="center",
        fontsize=8.5,
        zorder=5,
        bbox={"facecolor": "white", "edgecolor": "none", "alpha": 0.85, "pad": 1.5},
    )


def height_name(ds: xr.Dataset) -> str:
    for std in ("geopotential_height", "altitude", "height_above_reference_ellipsoid", "height"):
        for name, var in ds.variables.items():
            if var.attrs.get("standard_name") == std and var.ndim > 0:
                return str(name)
    raise MissingInputError(
        "no height variable found for the vertical axis; pass height='name'",
        variable="height",
        expected="standard_name geopotential_height, altitude or height",
        found=str(list(ds.variables)),
    )


def time_ticks(ax: Axes, lon: np.ndarray, lat: np.ndarray, times: xr.DataArray) -> None:
    hours, label_text = elapsed_time(times)
    if "days" in label_text:
        hours = hours * 24.0
    t = np.floor(hours * 3600.0).astype(np.int64)
    every = 6 * 3600
    marks = np.flatnonzero(np.diff(t // every, prepend=t[0] // every - 1) != 0)
    for n, i in enumerate(marks):
        ax.plot(lon[i], lat[i], "|", color="#222222", ms=8, mew=1.2, zorder=3)
        if n % 4 == 0:
            label = f"+{hours[i]:.0f} h"
            ax.annotate(
                label,
                (lon[i], lat[i]),
                xytext=(0, 7),
                textcoords="offset points",
                ha="center",
                fontsize=7.5,
            )
