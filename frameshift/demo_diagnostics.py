"""The diagnostics of ``frameshift demo``: an angular-momentum series and a rotary spectrum.

Two steps follow the demo's conversions, each on one file and through the
batch runner the command line uses (:func:`frameshift.batch.process`), so
their outputs are CF NetCDF files with manifests like the others:

- ``momentum/global_winds.nc``: the global axial angular momentum of the
  invented winds (relative and frame parts, mass) and the excitation of the
  length of day, at each of the file's 16 times, as ``frameshift momentum
  --surface-pressure ps --excitation`` writes it;
- ``rotary_spectrum/shelf_mooring.nc``: the clockwise and counter-clockwise
  spectra of the mooring's currents at every depth
  (:func:`frameshift.rotary_spectrum`, its defaults).

Each gets a figure drawn from the file just written, and a few numbers read
from the files for the demo's printed summary (:func:`summary_values`).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TextIO

import numpy as np
import xarray as xr

from frameshift import batch
from frameshift.diagnostics.command import momentum_operation, spectrum_operation

__all__ = [
    "DIAGNOSTICS",
    "SPECTRUM_DEPTHS",
    "DiagnosticStep",
    "SummaryValue",
    "draw_angular_momentum",
    "draw_rotary_spectrum",
    "print_summary",
    "summary_values",
]


@dataclass(frozen=True)
class DiagnosticStep:
    """One diagnostic of one demo file, written to ``<out>/<folder>/<file>``."""

    folder: str
    file: str
    what: str
    operation: batch.Operation


#: The diagnostic steps, in the order they run.
DIAGNOSTICS = (
    DiagnosticStep("momentum", "global_winds.nc",
                   "axial angular momentum and length-of-day series, whole globe",
                   momentum_operation(surface_pressure="ps", excitation=True)),
    DiagnosticStep("rotary_spectrum", "shelf_mooring.nc",
                   "rotary spectrum (clockwise, counter-clockwise)", spectrum_operation()),
)

#: The mooring depths (m) the spectrum figure draws: in the mixed layer, and below it.
#: The summary gives the first.
SPECTRUM_DEPTHS = (10.0, 50.0)

_DAY = 86400.0
_CLOCKWISE, _COUNTER = "#0072B2", "#E69F00"


@dataclass(frozen=True)
class SummaryValue:
    """One number of the demo's diagnostics summary, read from an output file."""

    file: str
    quantity: str
    value: float
    units: str
    style: str  # a format spec: ".3e", ".1f"...

    @property
    def text(self) -> str:
        """The value as printed.

        Examples
        --------
        >>> SummaryValue("a.nc", "period", 16.2838, "h", ".1f").text
        '16.3'
        """
        return format(self.value, self.style)


def summary_values(outputs: dict[str, Path]) -> list[SummaryValue]:
    """The summary's numbers, read from the diagnostic outputs (by folder) that exist.

    ``outputs`` maps a step's folder (``"momentum"``, ``"rotary_spectrum"``)
    to the file this run wrote or kept; absent steps give no numbers.
    """
    values: list[SummaryValue] = []
    path = outputs.get("momentum")
    if path is not None:
        with xr.open_dataset(path) as ds:
            name = _file_of("momentum")
            rel = ds["angular_momentum_relative"].values.astype(np.float64)
            frame = ds["angular_momentum_frame"].values.astype(np.float64)
            lod = ds["length_of_day_change"].values.astype(np.float64)
            n = ds.sizes.get("time", 1)
            units = ds["angular_momentum_relative"].attrs.get("units", "")
            values += [
                SummaryValue(name, "angular momentum, relative part, time mean",
                             float(rel.mean()), units, ".3e"),
                SummaryValue(name, "angular momentum, frame part, time mean",
                             float(frame.mean()), units, ".4e"),
                SummaryValue(name, f"relative part, range over the {n} times",
                             float(np.ptp(rel)), units, ".2e"),
                SummaryValue(name, f"length-of-day change, range over the {n} times",
                             float(np.ptp(lod)), ds["length_of_day_change"].attrs["units"],
                             ".2e"),
            ]
    path = outputs.get("rotary_spectrum")
    if path is not None:
        with xr.open_dataset(path) as ds:
            name = _file_of("rotary_spectrum")
            depth = SPECTRUM_DEPTHS[0]
            at = ds.sel(depth=depth, method="nearest")
            at_text = f"{float(at.depth):g} m"
            freq = ds["frequency"].values.astype(np.float64)
            peak = freq[int(np.argmax(at["clockwise"].values))]
            lat = float(ds["lat"])
            where = f"{abs(lat):g}° {'N' if lat >= 0 else 'S'}"
            band = str(ds["inertial_band_fraction"].attrs.get("band", "")).replace(" ", "-")
            values += [
                SummaryValue(name, f"period of the clockwise peak, {at_text}",
                             1.0 / peak / 3600.0 if peak > 0 else float("nan"), "h", ".1f"),
                SummaryValue(name, f"inertial period 2π/|f| at {where}",
                             float(ds["inertial_period"]) / 3600.0, "h", ".1f"),
                SummaryValue(name, f"share of the variance at {band} |f|, clockwise, {at_text}",
                             float(at["inertial_band_fraction"]), "1", ".2f"),
            ]
    return values


def print_summary(values: list[SummaryValue], stream: TextIO) -> None:
    """Print the diagnostics summary (nothing when there are no values)."""
    if not values:
        return
    head = ["data set", "diagnostic", "value", "units"]
    rows = [[v.file, v.quantity, v.text, v.units] for v in values]
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]
    folders = " and ".join(f"{s.folder}/" for s in DIAGNOSTICS)
    print(f"\nDiagnostics, read from the files in {folders}:", file=stream)
    for cells in (head, *rows):
        print("  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True)).rstrip(),
              file=stream)


def _file_of(folder: str) -> str:
    return next(s.file for s in DIAGNOSTICS if s.folder == folder)


# --- figures, drawn from the files the demo wrote ------------------------------------------
def draw_angular_momentum(out: Path, data: Path, path: Path) -> None:
    """The angular-momentum series: relative and frame parts, and the length-of-day change."""
    from frameshift._plotkit import (
        DPI,
        add_caption,
        elapsed_time,
        figure_style,
        lines_needed,
        new_figure,
        power_of_ten,
        save_figure,
        unit_label,
    )

    with xr.open_dataset(out / "momentum" / "global_winds.nc") as ds:
        t, t_label = elapsed_time(ds["time"])
        rel = ds["angular_momentum_relative"].values.astype(np.float64)
        frame = ds["angular_momentum_frame"].values.astype(np.float64)
        lod = ds["length_of_day_change"].values.astype(np.float64)
        lod_motion = ds["chi3_motion"].values.astype(np.float64) * _DAY * 1e3  # ms
        units = ds["angular_momentum_relative"].attrs["units"]
        constants = ds["length_of_day_change"].attrs.get("excitation_constants", "")
    caption = (
        "Axial angular momentum of the invented global winds, summed over the whole grid with "
        "cell masses from the pressure levels cut at the surface pressure. Top: the relative "
        "part (the winds) and the frame part (the air carried round by the Earth's rotation, "
        "which changes as mass moves), each as its departure from its mean over the series. "
        "Bottom: the change of the length of day they would excite (χ3 × 86400 s, "
        f"{constants} constants), departure from its mean; the wind term alone dashed. "
        "Invented data."
    )
    width = 7.5
    lines = lines_needed(caption, width)
    with figure_style():
        fig = new_figure((width, 5.6 + 0.17 * lines), lines)
        top, bottom = fig.subplots(2, 1, sharex=True)
        exponent = power_of_ten(np.concatenate([rel - rel.mean(), frame - frame.mean()]))
        scale = 10.0 ** exponent
        top.plot(t, (rel - rel.mean()) / scale, color=_CLOCKWISE,
                 label=f"relative part (mean {rel.mean():.3e})")
        top.plot(t, (frame - frame.mean()) / scale, color=_COUNTER,
                 label=f"frame part (mean {frame.mean():.4e})")
        top.axhline(0.0, color="#666666", lw=0.8)
        top.set_ylabel(f"departure ({unit_label(units, exponent)})")
        top.set_title("Axial angular momentum of the atmosphere")
        top.legend(loc="best")
        bottom.plot(t, lod - lod.mean(), color="#222222", label="wind and mass terms")
        bottom.plot(t, lod_motion - lod_motion.mean(), color=_CLOCKWISE, ls="--",
                    label="wind term alone")
        bottom.axhline(0.0, color="#666666", lw=0.8)
        bottom.set_ylabel("departure (ms)")
        bottom.set_xlabel(t_label)
        bottom.set_xlim(float(t[0]), float(t[-1]))
        bottom.set_title("Length-of-day change excited")
        bottom.legend(loc="best")
        fig.suptitle("Angular momentum series of the global winds", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, DPI)


def draw_rotary_spectrum(out: Path, data: Path, path: Path) -> None:
    """Clockwise and counter-clockwise spectra at two depths, the inertial frequency marked."""
    from frameshift._plotkit import (
        DPI,
        add_caption,
        figure_style,
        lines_needed,
        new_figure,
        save_figure,
    )

    with xr.open_dataset(out / "rotary_spectrum" / "shelf_mooring.nc") as ds:
        freq = ds["frequency"].values.astype(np.float64) * _DAY  # cycles per day
        keep = freq > 0  # a logarithmic axis: the mean (zero frequency) is left out
        f_cpd = abs(float(ds["inertial_frequency"])) * _DAY
        period_h = float(ds["inertial_period"]) / 3600.0
        lat = float(ds["lat"])
        low, high = (float(b) for b in str(ds["inertial_band_fraction"].attrs["band"]).split())
        how = ds["clockwise"].attrs.get("spectral_estimate", "")
        panels = []
        for depth in SPECTRUM_DEPTHS:
            at = ds.sel(depth=depth, method="nearest")
            # density per cycle per day: the file's is per s-1 (cycles per second)
            panels.append((float(at.depth), at["clockwise"].values[keep] / _DAY,
                           at["counterclockwise"].values[keep] / _DAY,
                           float(at["inertial_band_fraction"])))
    caption = (
        "Rotary spectra of the invented mooring currents u + iv: the clockwise and "
        "counter-clockwise parts of the variance against frequency, in the mixed layer and "
        f"below it ({how.rstrip('.')}). The dashed line marks the local inertial frequency "
        f"f/2π = 2Ω sin φ/2π at {abs(lat):g}° {'N' if lat >= 0 else 'S'} ({f_cpd:.2f} cycles "
        f"per day, period {period_h:.1f} h), "
        f"the shading the band {low:g}-{high:g} |f|. In the northern hemisphere inertial "
        "motion turns clockwise. Invented data."
    )
    width = 8.5
    lines = lines_needed(caption, width)
    with figure_style():
        fig = new_figure((width, 3.8 + 0.17 * lines), lines)
        axes = fig.subplots(1, len(panels), sharey=True)
        for ax, (depth, cw, ccw, share) in zip(np.atleast_1d(axes), panels, strict=True):
            ax.axvspan(low * f_cpd, high * f_cpd, color="#e6e6e6", lw=0)
            ax.loglog(freq[keep], cw, color=_CLOCKWISE, label="clockwise")
            ax.loglog(freq[keep], ccw, color=_COUNTER, label="counter-clockwise")
            ax.axvline(f_cpd, color="#222222", ls="--", lw=1.0)
            ax.text(f_cpd * 1.05, 0.97, f"f ({period_h:.1f} h)", transform=ax.get_xaxis_transform(),
                    ha="left", va="top", fontsize=8.5)
            ax.set_title(f"{depth:g} m: {share:.0%} of the variance near f, clockwise")
            ax.set_xlabel("frequency (cycles per day)")
            ax.legend(loc="lower left")
        np.atleast_1d(axes)[0].set_ylabel("spectral density (m² s⁻² per cycle per day)")
        fig.suptitle("Rotary spectrum at the mooring", fontweight="bold")
        add_caption(fig, caption, width)
        save_figure(fig, path, DPI)
