"""Figures of apparent-acceleration terms and of velocities in both frames.

matplotlib is an optional extra (``pip install "frameshift[plot]"``). It is
imported inside the functions, never when frameshift is imported, and the
figures are built on :class:`matplotlib.figure.Figure` directly (no pyplot
state), so they work headless. Every function returns the Figure and, given
``path``, also writes a PNG.

Colour choices: every signed quantity (every acceleration term, even one that
keeps its sign) uses the one diverging map ``RdBu_r`` centred on zero (red
eastward/northward/upward, blue the opposite way); magnitudes use the
perceptually uniform ``cividis``; lines use a palette that stays
distinguishable under the common colour-vision deficiencies. Time axes are
elapsed time from the first value (every CF calendar, cftime values
included), labelled with the start and the calendar; each panel's scale is
its own, with the power of ten in its label, so small terms are readable.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from os import PathLike
from typing import TYPE_CHECKING

import numpy as np
import xarray as xr

from frameshift._plotkit import (
    DPI,
    LINE_COLOURS,
    MAGNITUDE_CMAP,
    SIGNED_CMAP,
    STYLE,
    TERM_LABELS,
    add_caption,
    cell_edges,
    colour_scale,
    coord_by_kind,
    coord_text,
    draw_section,
    figure_style,
    height_name,
    inertial_period_hours,
    is_zero,
    lines_needed,
    new_figure,
    nonzero_terms,
    period_bar,
    power_of_ten,
    save_figure,
    scaled_values,
    select_nearest,
    term_grid,
    term_names,
    time_ticks,
    unit_label,
    vertical_dim,
    zero_note,
    zero_panel,
)
from frameshift.detect import INERTIAL, ROTATING, criteria, find_time, read_layout
from frameshift.errors import MissingInputError
from frameshift.frames import EARTH, Frame
from frameshift.units import parse_units, scale_to

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

__all__ = [
    "LINE_COLOURS",
    "MAGNITUDE_CMAP",
    "SIGNED_CMAP",
    "STYLE",
    "plot_term_maps",
    "plot_terms_timeseries",
    "plot_track_terms",
    "plot_zonal_mean_velocity",
    "unit_label",
]


# --- maps of the terms at one level -------------------------------------------------
def plot_term_maps(
    terms_ds: xr.Dataset,
    level: float | str | None = None,
    *,
    time: object = None,
    terms: Iterable[str] | None = None,
    components: Sequence[str] = criteria.COMPONENTS,
    path: str | PathLike | None = None,
    dpi: int = DPI,
) -> Figure:
    """Latitude-longitude maps of each acceleration term at one level and time.

    One row per term, one column per component, each panel with its own colour
    scale (the power of ten in its label), diverging and centred on zero. Terms
    that are zero everywhere are left out and named in the caption.

    Parameters
    ----------
    terms_ds : xarray.Dataset
        Output of :func:`frameshift.apparent_accelerations` on a latitude-longitude
        grid (variables ``<term>_<component>`` in m s-2).
    level : float or str, optional
        Value on the vertical coordinate (nearest is taken), as a number in the
        coordinate's units or a string with units such as ``"250 hPa"``. Default:
        the first level.
    time : optional
        A time (nearest is taken), ``"mean"`` for the time mean, or None for the
        first time.
    terms : iterable of str, optional
        Terms to draw (default: all found, in the order Coriolis, centrifugal,
        Euler, curvature, total).
    components : sequence of str
        Components to draw, from eastward, northward, upward.
    path : path-like, optional
        Write a PNG here.
    dpi : int
        Resolution of the PNG.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import frameshift, xarray as xr
    >>> from frameshift.plotting import plot_term_maps
    >>> ds = xr.open_dataset("data_demo/global_winds.nc")  # doctest: +SKIP
    >>> fig = plot_term_maps(frameshift.apparent_accelerations(ds), "250 hPa")  # doctest: +SKIP
    """
    names = term_names(terms_ds, terms)
    lat_name = coord_by_kind(terms_ds, "latitude")
    lon_name = coord_by_kind(terms_ds, "longitude")
    draw, zero = nonzero_terms(terms_ds, names, components)
    if not draw:
        draw, zero = names, []
    sample = terms_ds[f"{draw[0]}_{next(c for c in components if f'{draw[0]}_{c}' in terms_ds)}"]
    vdim = vertical_dim(sample)
    tname = find_time(terms_ds, sample.name)
    where = []

    def pick(da: xr.DataArray) -> xr.DataArray:
        if vdim is not None:
            da = select_nearest(da, vdim, level)
        if tname is not None and tname in da.dims:
            da = da.mean(tname) if time == "mean" else select_nearest(da, tname, time)
        return da.transpose(lat_name, lon_name)

    first = pick(sample)
    if vdim is not None:
        where.append(f"at {coord_text(first[vdim])}")
    if tname is not None and time == "mean":
        t = terms_ds[tname]
        where.append(f"mean of {t.size} times from {coord_text(t[0])} to {coord_text(t[-1])}")
    elif tname is not None:
        where.append(f"at {coord_text(first[tname])}")
    lon = terms_ds[lon_name].values
    lat = terms_ds[lat_name].values
    lon_e, lat_e = cell_edges(lon), cell_edges(lat, -90.0, 90.0)
    caption = (
        f"Apparent accelerations of the rotating frame {', '.join(where)}, one panel per "
        "term (rows) and component (columns), each on its own colour scale (power of ten "
        "in the label), red-blue diverging and centred on zero." + zero_note(zero)
    )
    ncol = len(components)
    width = 4.1 * ncol + 0.4
    lines = lines_needed(caption, width)
    with figure_style():
        fig = new_figure((width, 2.45 * len(draw) + 0.8 + 0.17 * lines), lines)
        axes = fig.subplots(len(draw), ncol, squeeze=False, sharex=True, sharey=True)
        for i, term in enumerate(draw):
            for j, comp in enumerate(components):
                ax = axes[i, j]
                name = f"{term}_{comp}"
                if name not in terms_ds:
                    ax.set_axis_off()
                    continue
                title = f"{TERM_LABELS.get(term, term)}, {comp}"
                ax.set_yticks([-60, -30, 0, 30, 60])
                if np.ptp(lon) > 300:
                    start = 0 if lon.min() >= 0 else -180
                    ax.set_xticks(np.arange(start, start + 361, 60))
                ax.set_xlim(lon_e[0], lon_e[-1])
                ax.set_ylim(-90, 90)
                if i == len(draw) - 1:
                    ax.set_xlabel("longitude (°E)")
                if j == 0:
                    ax.set_ylabel("latitude (°N)")
                da = pick(terms_ds[name])
                if is_zero(da):
                    zero_panel(ax, title, keep_ticks=True)
                    continue
                exp = power_of_ten(np.asarray(da.values, dtype=np.float64))
                vals = scaled_values(da, exp)
                cmap, lo, hi = colour_scale(vals, signed=True)  # terms are signed
                mesh = ax.pcolormesh(lon_e, lat_e, vals, cmap=cmap, vmin=lo, vmax=hi)
                units = unit_label(terms_ds[name].attrs.get("units", "m s-2"), exp)
                cbar = fig.colorbar(mesh, ax=ax, shrink=0.9, pad=0.02, aspect=18)
                cbar.set_label(units)
                cbar.formatter.set_useOffset(False)
                ax.set_title(title)
                ax.grid(False)
        fig.suptitle("Apparent accelerations of the rotating frame", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, dpi)
    return fig


# --- terms against time --------------------------------------------------------------
def plot_terms_timeseries(
    terms_ds: xr.Dataset,
    depth: float | str | None = None,
    *,
    terms: Iterable[str] | None = None,
    components: Sequence[str] = criteria.COMPONENTS,
    section: str | None = "coriolis_eastward",
    frame: Frame = EARTH,
    path: str | PathLike | None = None,
    dpi: int = DPI,
) -> Figure:
    """Acceleration terms against time at a fixed point (a mooring or station).

    A depth-time section of one term on top (when the terms have a vertical
    dimension) shows the near-inertial oscillation through the water column; below
    it, small multiples of each term and component at one depth, each with its own
    y scale. A bar marks the inertial period 2π/f at the station's latitude.

    Parameters
    ----------
    terms_ds : xarray.Dataset
        Output of :func:`frameshift.apparent_accelerations` on a time series or
        time series of profiles.
    depth : float or str, optional
        Value on the vertical coordinate (nearest is taken), a number in its units
        or a string with units (``"10 m"``). Default: the first (shallowest) level.
    terms : iterable of str, optional
        Terms to draw (default: all found that are not zero everywhere).
    components : sequence of str
        Components to draw.
    section : str or None
        Variable drawn as a depth-time section on top; None for none.
    frame : Frame
        Frame whose rotation rate gives the inertial period.
    path : path-like, optional
        Write a PNG here.
    dpi : int
        Resolution of the PNG.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import frameshift, xarray as xr
    >>> from frameshift.plotting import plot_terms_timeseries
    >>> ds = xr.open_dataset("data_demo/shelf_mooring.nc")  # doctest: +SKIP
    >>> fig = plot_terms_timeseries(frameshift.apparent_accelerations(ds), 10)  # doctest: +SKIP
    """
    names = term_names(terms_ds, terms)
    draw, zero = nonzero_terms(terms_ds, names, components)
    draw = draw or names
    sample = terms_ds[f"{draw[0]}_{components[0]}"]
    tname = find_time(terms_ds, sample.name)
    if tname is None:
        raise MissingInputError(
            "plot_terms_timeseries needs a time coordinate on the terms",
            variable="time",
            expected="a decoded time coordinate",
            found=str(sample.dims),
        )
    vdim = vertical_dim(sample)
    show_section = section is not None and vdim is not None and section in terms_ds

    def pick(da: xr.DataArray) -> xr.DataArray:
        if vdim is not None and vdim in da.dims:
            da = select_nearest(da, vdim, depth)
        rest = [d for d in da.dims if d != tname]
        return da.isel(dict.fromkeys(rest, 0)).transpose(tname)

    at = ""
    if vdim is not None:
        chosen = pick(sample)[vdim]
        at = f" at {coord_text(chosen)} {'depth' if vdim == 'depth' else vdim}"
    period_h = inertial_period_hours(terms_ds, frame)
    caption = (
        f"Apparent accelerations against time{at}: one panel per term (rows) and component "
        "(columns), each with its own y scale (power of ten in the label)."
        + (
            f" Top: {TERM_LABELS.get(section.rpartition('_')[0], section)} "
            f"{section.rpartition('_')[2]} term against {vdim} and time, centred on zero;"
            " the dashed line marks the depth of the panels below."
            if show_section
            else ""
        )
        + (f" The bar marks one inertial period 2π/f = {period_h:.1f} h." if period_h else "")
        + zero_note(zero)
    )
    width = 4.0 * len(components) + 0.6
    lines = lines_needed(caption, width)
    height = 2.0 * len(draw) + (2.6 if show_section else 0.0) + 0.9 + 0.17 * lines
    with figure_style():
        fig = new_figure((width, height), lines)
        ratios = [2.4, 2.0 * len(draw)] if show_section else [1.0]
        outer = fig.add_gridspec(len(ratios), 1, height_ratios=ratios)
        axes = term_grid(fig, outer[-1], terms_ds, draw, components, pick)
        bar_ax = axes[0, 0]
        if show_section:
            bar_ax = fig.add_subplot(outer[0])
            draw_section(fig, bar_ax, terms_ds[section], tname, vdim, pick)
        if period_h:
            period_bar(bar_ax, period_h)
        fig.suptitle("Apparent accelerations at a fixed point", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, dpi)
    return fig


# --- zonal means in both frames ------------------------------------------------------
def plot_zonal_mean_velocity(
    earth_ds: xr.Dataset,
    inertial_ds: xr.Dataset,
    *,
    height: str | None = None,
    level: float | str | None = None,
    path: str | PathLike | None = None,
    dpi: int = DPI,
) -> Figure:
    """Zonal- and time-mean eastward velocity relative to the Earth and to inertial space.

    Two latitude-height sections (the vertical axis is the zonal and time mean of
    the height variable, in km) and the two profiles against latitude at one level.

    Parameters
    ----------
    earth_ds : xarray.Dataset
        Earth-relative velocities (e.g. ``data_demo/global_winds.nc``).
    inertial_ds : xarray.Dataset
        The same after :func:`frameshift.to_inertial` with ``basis="local"``.
    height : str, optional
        Name of the height variable (default: the variable with standard name
        ``geopotential_height``, ``altitude`` or ``height``).
    level : float or str, optional
        Level of the bottom panel on the vertical dimension (nearest; a string may
        carry units, ``"250 hPa"``). Default: where the Earth-relative zonal mean is
        strongest.
    path : path-like, optional
        Write a PNG here.
    dpi : int
        Resolution of the PNG.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import frameshift, xarray as xr
    >>> from frameshift.plotting import plot_zonal_mean_velocity
    >>> ds = xr.open_dataset("data_demo/global_winds.nc")  # doctest: +SKIP
    >>> fig = plot_zonal_mean_velocity(ds, frameshift.to_inertial(ds))  # doctest: +SKIP
    """
    u_earth = earth_ds[read_layout(earth_ds, target=INERTIAL).velocity.eastward]
    u_inert = inertial_ds[read_layout(inertial_ds, target=ROTATING).velocity.eastward]
    lat_name = coord_by_kind(earth_ds, "latitude")
    lon_name = coord_by_kind(earth_ds, "longitude")
    zname = height or height_name(earth_ds)
    zvar = earth_ds[zname]
    tname = find_time(earth_ds, u_earth.name)
    vdim = vertical_dim(u_earth)
    if vdim is None:
        raise MissingInputError(
            "plot_zonal_mean_velocity needs a vertical dimension on the velocities",
            variable=str(u_earth.name),
            expected="a Z axis",
            found=str(u_earth.dims),
        )
    mean_dims = [d for d in (lon_name, tname) if d is not None and d in u_earth.dims]

    def zonal(da: xr.DataArray, kind: str, si: str) -> np.ndarray:
        """Mean over longitude and time, (vertical, latitude), in SI units."""
        factor = scale_to(parse_units(str(da.name), da.attrs.get("units"), kind), si)
        m = da.mean([d for d in mean_dims if d in da.dims]).transpose(vdim, lat_name)
        return np.asarray(m.values, dtype=np.float64) * factor

    ue, ui = zonal(u_earth, "speed", "m s-1"), zonal(u_inert, "speed", "m s-1")
    z_km = np.broadcast_to(zonal(zvar, "length", "m") / 1000.0, ue.shape)
    lat = np.broadcast_to(earth_ds[lat_name].values, ue.shape)
    if level is None:
        k = int(np.unravel_index(np.nanargmax(np.abs(ue)), ue.shape)[0])
    else:
        chosen = select_nearest(earth_ds[vdim], vdim, level)
        k = int(np.flatnonzero(earth_ds[vdim].values == chosen.values)[0])
    level_text = coord_text(earth_ds[vdim][k])
    zlabel = str(zvar.attrs.get("long_name") or zvar.attrs.get("standard_name", zname))
    zlabel = zlabel.replace("_", " ")
    caption = (
        "Zonal- and time-mean eastward velocity. Left: relative to the rotating Earth "
        "(red eastward, blue westward). Middle: relative to the inertial frame on the same "
        "local axes, which adds the eastward speed of the ground Ω (N + h) cos φ. Vertical "
        f"axis: zonal and time mean of {zname} ({zlabel}). Right: both at {level_text} "
        f"(mean height {np.nanmean(z_km[k]):.1f} km, dotted in the sections), and their "
        "difference."
    )
    width = 14.0
    lines = lines_needed(caption, width)
    speed = unit_label("m s-1")
    with figure_style():
        fig = new_figure((width, 4.6 + 0.17 * lines), lines)
        axes = fig.subplots(1, 3, width_ratios=[1, 1, 0.9])
        top = float(np.nanmax(np.abs(ue)))
        step = 5.0 if top < 60 else 10.0
        levels_e = np.arange(-np.ceil(top / step) * step, np.ceil(top / step) * step + step, step)
        for ax, vals, title, cmap, levs in (
            (axes[0], ue, "relative to the Earth", SIGNED_CMAP, levels_e),
            (axes[1], ui, "relative to the inertial frame (local axes)", MAGNITUDE_CMAP, 12),
        ):
            filled = ax.contourf(lat, z_km, vals, levels=levs, cmap=cmap, extend="neither")
            lines_c = ax.contour(
                lat, z_km, vals, levels=filled.levels[::2], colors="k", linewidths=0.5
            )
            ax.clabel(lines_c, fmt="%.0f", fontsize=7)
            cbar = fig.colorbar(filled, ax=ax, pad=0.02, aspect=25)
            cbar.set_label(f"eastward velocity ({speed})")
            ax.set_title(title)
            ax.set_xlabel("latitude (°N)")
            ax.set_ylabel(f"{zlabel} (km)")
            ax.set_xticks([-60, -30, 0, 30, 60])
            ax.grid(False)
            ax.plot(lat[k], z_km[k], color="#222222", ls=":", lw=1.0)
        ax = axes[2]
        ax.plot(lat[k], ue[k], color=LINE_COLOURS["earth"], label="relative to the Earth")
        ax.plot(
            lat[k], ui[k], color=LINE_COLOURS["inertial"], label="relative to the inertial frame"
        )
        ax.plot(
            lat[k],
            ui[k] - ue[k],
            color="#777777",
            ls="--",
            lw=1.0,
            label="difference: speed of the ground",
        )
        ax.axhline(0.0, color="#777777", lw=0.7)
        ax.set_title(f"at {level_text}")
        ax.set_xlabel("latitude (°N)")
        ax.set_ylabel(f"zonal-mean eastward velocity ({speed})")
        ax.set_xticks([-60, -30, 0, 30, 60])
        ax.legend(loc="lower center", bbox_to_anchor=(0.5, 0.12))
        fig.suptitle("Eastward velocity in two frames", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, dpi)
    return fig


# --- a trajectory ------------------------------------------------------------------
def plot_track_terms(
    terms_ds: xr.Dataset,
    track_ds: xr.Dataset,
    *,
    colour_by: str = "coriolis",
    terms: Iterable[str] | None = None,
    components: Sequence[str] = criteria.COMPONENTS,
    path: str | PathLike | None = None,
    dpi: int = DPI,
) -> Figure:
    """A trajectory's track coloured by one term, and all terms along the track.

    Parameters
    ----------
    terms_ds : xarray.Dataset
        Output of :func:`frameshift.apparent_accelerations` on the trajectory.
    track_ds : xarray.Dataset
        The trajectory (latitude and longitude along time), e.g.
        ``data_demo/balloon_track.nc``.
    colour_by : str
        Term whose horizontal magnitude colours the track.
    terms : iterable of str, optional
        Terms drawn against time (default: all found that are not zero everywhere).
    components : sequence of str
        Components drawn against time.
    path : path-like, optional
        Write a PNG here.
    dpi : int
        Resolution of the PNG.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import frameshift, xarray as xr
    >>> from frameshift.plotting import plot_track_terms
    >>> ds = xr.open_dataset("data_demo/balloon_track.nc")  # doctest: +SKIP
    >>> fig = plot_track_terms(frameshift.apparent_accelerations(ds), ds)  # doctest: +SKIP
    """
    from matplotlib.collections import LineCollection

    names = term_names(terms_ds, terms)
    draw, zero = nonzero_terms(terms_ds, names, components)
    draw = draw or names
    lat = np.asarray(track_ds[coord_by_kind(track_ds, "latitude")].values, dtype=np.float64)
    lon = np.asarray(track_ds[coord_by_kind(track_ds, "longitude")].values, dtype=np.float64)
    tname = find_time(track_ds)
    times = track_ds[tname] if tname else None
    east = terms_ds.get(f"{colour_by}_eastward")
    north = terms_ds.get(f"{colour_by}_northward")
    if east is None or north is None:
        raise MissingInputError(
            f"colour_by={colour_by!r} needs {colour_by}_eastward and {colour_by}_northward",
            variable=colour_by,
            expected=f"{colour_by}_eastward, {colour_by}_northward",
            found=str(list(terms_ds.data_vars)),
        )
    mag = np.hypot(np.asarray(east.values, dtype=np.float64), np.asarray(north.values, np.float64))
    exp = power_of_ten(mag)
    mag = mag / 10.0**exp
    caption = (
        f"Top: the track, coloured by the horizontal magnitude of the "
        f"{TERM_LABELS.get(colour_by, colour_by)} acceleration (cividis); ticks every 6 h, "
        "labelled in hours since the start (circle); equal distances in x and y. "
        "Below: each term (rows) and component (columns) against time, "
        "each with its own y scale (power of ten in the label)." + zero_note(zero)
    )
    width = 4.2 * len(components) + 0.6
    lines = lines_needed(caption, width)
    with figure_style():
        fig = new_figure((width, 1.7 * len(draw) + 3.6 + 0.17 * lines), lines)
        outer = fig.add_gridspec(2, 1, height_ratios=[2.9, 1.7 * len(draw)])
        ax = fig.add_subplot(outer[0])
        points = np.column_stack([lon, lat]).reshape(-1, 1, 2)
        segments = np.concatenate([points[:-1], points[1:]], axis=1)
        coll = LineCollection(segments, cmap=MAGNITUDE_CMAP, linewidths=3.5)
        coll.set_array(0.5 * (mag[1:] + mag[:-1]))
        ax.add_collection(coll)
        ax.plot(lon[0], lat[0], "o", mfc="white", mec="#222222", ms=7, zorder=3)
        if times is not None:
            time_ticks(ax, lon, lat, times)
        pad_x = 0.03 * np.ptp(lon) + 0.5
        pad_y = 0.2 * np.ptp(lat) + 1.0
        ax.set_xlim(lon.min() - pad_x, lon.max() + pad_x)
        ax.set_ylim(lat.min() - pad_y, lat.max() + pad_y)
        ax.set_aspect(1.0 / np.cos(np.deg2rad(np.nanmean(lat))), adjustable="box")
        cbar = fig.colorbar(coll, ax=ax, pad=0.01, aspect=12)
        cbar.set_label(
            f"|{TERM_LABELS.get(colour_by, colour_by)}, horizontal|\n"
            f"({unit_label(east.attrs.get('units', 'm s-2'), exp)})"
        )
        ax.set_xlabel("longitude (°E)")
        ax.set_ylabel("latitude (°N)")
        ax.set_title("track")

        def pick(da: xr.DataArray) -> xr.DataArray:
            return da.squeeze(drop=True)

        term_grid(fig, outer[1], terms_ds, draw, components, pick)
        fig.suptitle("Apparent accelerations along a trajectory", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, dpi)
    return fig
