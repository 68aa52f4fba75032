"""Figures: sky chart, pattern cuts, per-pass margins, usable time per day, margin by elevation band.

Every function takes plain data (pandas DataFrames with the forecast column names, or pattern
tables), returns a :class:`matplotlib.figure.Figure` and never shows anything. Figures are built
on ``matplotlib.figure.Figure`` with an Agg canvas attached, not through ``pyplot``, so nothing
global (current figure, pyplot's figure registry, rcParams) is touched; :func:`save_figure`
writes PNG and SVG through :func:`planner.fileio.write_atomically`.

An empty input gives a figure with a "no data" note instead of an error, so a report can always
be written.

Colours
-------
``PALETTE`` holds eight colours chosen for this project by a max-min search in CIELAB and then
adjusted by hand: every pair stays at least 23 CIELAB units apart (Delta E*ab, 1976) for normal
vision and under simulated protanopia, deuteranopia and tritanopia (Machado, Oliveira and
Fernandes 2009, severity 1). ``tests/test_plots.py`` recomputes this. They are ordered so that
the first few are the most distinct: plots with two or three candidates use the first colours.
Lines also change dash pattern from one candidate to the next, so colour is never the only cue.
Margins are coloured with matplotlib's "cividis" map (perceptually uniform, designed to read
the same with red-green colour-vision deficiency; its lightness rises monotonically).
"""

from __future__ import annotations

import math
import os
import sys
from collections.abc import Mapping, Sequence
from io import BytesIO
from pathlib import Path
from typing import Any, cast

import matplotlib

if "matplotlib.pyplot" not in sys.modules and not os.environ.get("MPLBACKEND"):
    # Before any pyplot import: make Agg the default, so nothing here (nor a later pyplot import
    # in a batch run) needs a display. A backend the user already chose (pyplot in use, or
    # MPLBACKEND set, as Jupyter kernels do) is left alone: the figures below carry their own Agg
    # canvas either way and never go through pyplot.
    matplotlib.use("Agg")

import numpy as np
import pandas as pd
from matplotlib import patheffects
from matplotlib.artist import Artist
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.cm import ScalarMappable
from matplotlib.collections import LineCollection
from matplotlib.colors import Normalize, to_rgb
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle
from matplotlib.projections.polar import PolarAxes

from planner.fileio import REPLACE_ANY, WriteRules, write_atomically

PALETTE: tuple[str, ...] = (
    "#1f4e9c",  # deep blue
    "#b45a00",  # burnt orange
    "#7fb8e6",  # sky blue
    "#3b3b3b",  # charcoal
    "#e58c9a",  # rose
    "#c9b52e",  # mustard
    "#70784b",  # olive
    "#9e5287",  # mauve
)
"""Eight colour-blind-safe colours (see the module docstring), most distinct first."""

LINE_STYLES: tuple[Any, ...] = ("-", (0, (6, 2)), (0, (2, 1.5)), (0, (6, 2, 1.5, 2)))
"""Dash patterns cycled with the colours: a second cue besides colour."""

MARGIN_CMAP = "cividis"
"""Colormap for margins (perceptually uniform, CVD-friendly)."""

THRESHOLD_COLOUR = "#000000"
"""Colour of the threshold line (black, so it never looks like a candidate); the margins below it
are shaded light grey on line and box plots."""

BELOW_THRESHOLD_SHADE = "#e6e6e6"

from planner.decision.forecast import ELEVATION_BANDS_DEG  # noqa: E402  (the forecast's bands, one definition)

FIGSIZE_IN = (8.0, 5.0)
PNG_DPI = 150
NO_DATA_TEXT = "no data to plot"

_SKY_RINGS_ELEVATION_DEG = (60.0, 30.0, 0.0)


# --------------------------------------------------------------------------------------------
# Helpers
# --------------------------------------------------------------------------------------------


def candidate_colours(names: Sequence[str]) -> dict[str, str]:
    """A colour for each name, in order (cycling after eight). Pass the result as ``colours=``
    to every figure of a report so one candidate keeps one colour throughout."""
    return {name: PALETTE[i % len(PALETTE)] for i, name in enumerate(names)}


def _styles(names: Sequence[str], colours: Mapping[str, str] | None) -> dict[str, tuple[str, Any]]:
    chosen = dict(candidate_colours(names))
    if colours:
        chosen.update({k: v for k, v in colours.items() if k in chosen})
    return {name: (chosen[name], LINE_STYLES[i % len(LINE_STYLES)]) for i, name in enumerate(names)}


def _new_figure(figsize: tuple[float, float] = FIGSIZE_IN) -> Figure:
    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _no_data(ax, message: str = NO_DATA_TEXT) -> None:
    ax.text(
        0.5,
        0.5,
        message,
        transform=ax.transAxes,
        ha="center",
        va="center",
        fontsize=13,
        color="#555555",
        bbox={"boxstyle": "round,pad=0.6", "facecolor": "white", "edgecolor": "#999999"},
    )


def _is_empty(frame: pd.DataFrame | None) -> bool:
    return frame is None or len(frame) == 0


def _require(frame: pd.DataFrame, columns: Sequence[str], what: str) -> None:
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise ValueError(f"{what}: missing column(s) {', '.join(missing)}; has {', '.join(map(str, frame.columns))}")


def _fmt_db(value: float) -> str:
    return f"{value:g}"


def _draw_threshold(ax, threshold_db: float):
    """Threshold line (black, labelled for the legend) over a light shade of the margins below it."""
    # added as a plain artist so the huge extent does not enter the autoscaled data limits
    shade = Rectangle(
        (0.0, threshold_db - 1e6),
        1.0,
        1e6,
        transform=ax.get_yaxis_transform(),
        facecolor=BELOW_THRESHOLD_SHADE,
        alpha=0.6,
        linewidth=0,
        zorder=0,
    )
    ax.add_artist(shade)
    return ax.axhline(
        threshold_db, color=THRESHOLD_COLOUR, linewidth=1.2, zorder=2, label=f"threshold {_fmt_db(threshold_db)} dB (shaded below)"
    )


def _cut_margin_axis(ax, values: np.ndarray, threshold_db: float, *, below_db: float = 20.0) -> bool:
    """Limit the margin axis to at most ``below_db`` under the threshold (nulls and the horizon give
    margins far below it that would squash the useful range); True when data were cut."""
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        ax.set_ylim(threshold_db - 10.0, threshold_db + 10.0)
        return False
    span = max(float(finite.max()), threshold_db) - min(float(finite.min()), threshold_db)
    pad = 0.05 * max(span, 1.0)
    low = min(float(finite.min()), threshold_db) - pad
    high = max(float(finite.max()), threshold_db) + pad
    cut = low < threshold_db - below_db
    ax.set_ylim(max(low, threshold_db - below_db), high)
    return cut


# --------------------------------------------------------------------------------------------
# Sky chart
# --------------------------------------------------------------------------------------------


def _margin_norm(values: np.ndarray, threshold: float, *, below_db: float = 15.0) -> tuple[Normalize, str]:
    """Colour scale around the threshold: from at most ``below_db`` under it (deep nulls and the
    horizon would otherwise squeeze the interesting range) up to the 99th percentile; samples
    beyond are drawn in the end colours and the colour bar gets arrows."""
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        low, high = threshold - 10.0, threshold + 10.0
        data_low, data_high = low, high
    else:
        data_low, data_high = float(finite.min()), float(finite.max())
        low, high = np.percentile(finite, [1.0, 99.0])
    low = math.floor(min(max(float(low), threshold - below_db), threshold - 2.0))
    high = math.ceil(max(float(high), threshold + 2.0))
    extend = {(False, False): "neither", (True, False): "min", (False, True): "max", (True, True): "both"}[
        (data_low < low, data_high > high)
    ]
    return Normalize(vmin=low, vmax=high), extend


def sky_chart(
    samples: pd.DataFrame,
    *,
    title: str,
    min_margin_db: float,
    margin_column: str = "margin_db",
    horizon_mask: Any = None,
    label_passes: bool | None = None,
) -> Figure:
    """Tracks on the sky of one candidate and one satellite, coloured by margin.

    Polar chart seen from below looking up: north up, azimuth clockwise, radius = 90 deg minus
    elevation (zenith at the centre, horizon at the edge), rings labelled in elevation. Columns
    used: ``azimuth_deg``, ``elevation_deg``, ``margin_column`` (default ``margin_db``), and
    ``pass_number`` (one track per pass; without it the samples form one track) with
    ``time_s`` for the order. Track segments at or above ``min_margin_db`` are drawn thick,
    those below it thin, so the usable part shows without the colour. ``horizon_mask`` (any
    object with ``min_elevation_at(azimuth_deg)``, e.g. planner.passes.station.HorizonMask) shades the
    blocked sky. An open circle marks each AOS (the direction of travel); ``label_passes`` puts
    the pass number at each track's highest point (default: when there are <= 12 tracks).
    """
    fig = _new_figure((8.0, 6.5))
    ax = cast(PolarAxes, fig.add_subplot(projection="polar"))
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.set_rlim(0.0, 90.0)
    ax.set_rgrids(
        [90.0 - e for e in _SKY_RINGS_ELEVATION_DEG],
        labels=[f"{e:g}°" for e in _SKY_RINGS_ELEVATION_DEG],
        angle=22.5,
        fontsize=9,
        color="#333333",
    )
    ax.set_thetagrids(
        np.arange(0, 360, 30), labels=[{0: "N", 90: "E", 180: "S", 270: "W"}.get(a, f"{a}°") for a in range(0, 360, 30)]
    )
    ax.grid(True, color="#bbbbbb", linewidth=0.7)
    ax.set_title(title, pad=18)
    caption = "azimuth (deg) clockwise from north; rings: elevation (deg), zenith at centre, horizon at edge"

    if horizon_mask is not None:
        az = np.linspace(0.0, 360.0, 361)
        mask_el = np.clip(np.asarray(horizon_mask.min_elevation_at(az), dtype=float), 0.0, 90.0)
        ax.fill_between(np.radians(az), 90.0 - mask_el, 90.0, color="#9a8f80", alpha=0.35, linewidth=0, label="horizon mask")

    norm = Normalize(vmin=min_margin_db - 10.0, vmax=min_margin_db + 10.0)
    extend = "neither"
    if _is_empty(samples):
        _no_data(ax)
        fig.supxlabel(caption, fontsize=8, color="#444444")
    else:
        _require(samples, ("azimuth_deg", "elevation_deg", margin_column), "sky_chart samples")
        norm, extend = _margin_norm(samples[margin_column].to_numpy(dtype=float), min_margin_db)
        keys = [k for k in ("candidate", "satellite", "pass_number") if k in samples.columns]
        if "pass_number" in keys:
            grouped = list(samples.groupby(keys, sort=True, dropna=False))
            numbers = [key[-1] for key, _ in grouped]
            groups = [g for _, g in grouped]
        else:
            groups, numbers = [samples], [None]
        if label_passes is None:
            label_passes = len(groups) <= 12 and numbers[0] is not None
        segments, seg_margin = [], []
        for number, track in zip(numbers, groups):
            if "time_s" in track.columns:
                track = track.sort_values("time_s")
            theta = np.radians(track["azimuth_deg"].to_numpy(dtype=float))
            radius = 90.0 - np.clip(track["elevation_deg"].to_numpy(dtype=float), 0.0, 90.0)
            margin = track[margin_column].to_numpy(dtype=float)
            if len(theta) >= 2:
                # Polar axes draw straight lines in data space (theta, r); a segment that crosses
                # north (359 -> 1 deg) must go the short way, so unwrap the angle.
                theta_u = np.unwrap(theta)
                pts = np.column_stack([theta_u, radius])
                segs = np.stack([pts[:-1], pts[1:]], axis=1)
                mid = 0.5 * (margin[:-1] + margin[1:])
                keep = np.isfinite(mid)
                segments.append(segs[keep])
                seg_margin.append(mid[keep])
            elif len(theta) == 1 and np.isfinite(margin[0]):
                ax.scatter(theta, radius, c=margin, cmap=MARGIN_CMAP, norm=norm, s=12, zorder=3)
            if len(theta) >= 1:
                # AOS marker (shows the direction of travel); pass number at the highest point
                ax.plot(
                    theta[:1],
                    radius[:1],
                    marker="o",
                    markersize=4,
                    markerfacecolor="white",
                    markeredgecolor="#222222",
                    linestyle="none",
                    zorder=4,
                )
                if label_passes:
                    top = int(np.argmin(radius))
                    text = str(int(number)) if isinstance(number, (int, np.integer, float)) and np.isfinite(number) else str(number)
                    ax.annotate(
                        text,
                        (theta[top], radius[top]),
                        xytext=(0, 0),
                        textcoords="offset points",
                        fontsize=8,
                        color="#222222",
                        ha="center",
                        va="center",
                        zorder=5,
                        bbox={"boxstyle": "circle,pad=0.2", "facecolor": "white", "edgecolor": "#666666", "linewidth": 0.6},
                    )
        if segments:
            segs = np.concatenate(segments)
            mids = np.concatenate(seg_margin)
            widths = np.where(mids >= min_margin_db, 3.2, 1.0)
            lc = LineCollection(list(segs), cmap=MARGIN_CMAP, norm=norm, linewidths=widths, capstyle="round", zorder=3)
            lc.set_array(mids)
            ax.add_collection(lc)
        handles: list[Artist] = [
            Line2D([], [], color="#555555", linewidth=3.2, label=f"margin ≥ {_fmt_db(min_margin_db)} dB"),
            Line2D([], [], color="#555555", linewidth=1.0, label=f"margin < {_fmt_db(min_margin_db)} dB"),
            Line2D(
                [],
                [],
                marker="o",
                markersize=4,
                markerfacecolor="white",
                markeredgecolor="#222222",
                linestyle="none",
                label="AOS" + (" (number: pass, at its highest point)" if label_passes else ""),
            ),
        ]
        if horizon_mask is not None:
            handles.append(Patch(color="#9a8f80", alpha=0.35, label="horizon mask"))
        fig.legend(
            handles=handles,
            loc="outside lower center",
            ncols=len(handles),
            fontsize=8,
            frameon=False,
            title=caption,
            title_fontsize=8,
        )

    sm = ScalarMappable(norm=norm, cmap=MARGIN_CMAP)
    cbar = fig.colorbar(sm, ax=ax, shrink=0.8, pad=0.08, extend=extend)
    _mark_threshold(cbar, min_margin_db)
    return fig


def _mark_threshold(cbar, threshold_db: float) -> None:
    """A labelled line across the colour bar at the threshold."""
    cbar.set_label("margin (dB)")
    low, high = cbar.norm.vmin, cbar.norm.vmax
    if low <= threshold_db <= high:
        cbar.ax.axhline(
            threshold_db,
            color=THRESHOLD_COLOUR,
            linewidth=2.0,
            path_effects=[patheffects.withStroke(linewidth=4.0, foreground="white")],
        )
        cbar.ax.annotate(
            f"threshold {_fmt_db(threshold_db)} dB",
            xy=(0.0, threshold_db),
            xycoords=("axes fraction", "data"),
            xytext=(-4, 0),
            textcoords="offset points",
            ha="right",
            va="center",
            fontsize=8,
            color=THRESHOLD_COLOUR,
            rotation=90,
        )


# --------------------------------------------------------------------------------------------
# Pattern cuts
# --------------------------------------------------------------------------------------------


def elevation_cuts(
    patterns: Mapping[str, Any],
    *,
    azimuth_deg: float = 0.0,
    colours: Mapping[str, str] | None = None,
    title: str | None = None,
    dynamic_range_db: float = 40.0,
    lower_hemisphere: bool | None = None,
) -> Figure:
    """RHCP (left) and LHCP (right) partial gain in dBic against elevation for every pattern, cut
    at ``azimuth_deg`` (ignored by azimuth-symmetric tables).

    ``patterns`` maps a candidate (or file) name to a planner.antenna.PatternTable. The gain axis
    spans ``dynamic_range_db`` below the highest gain; deeper values (the -60 dBic floor) sit on
    the bottom edge. The elevation axis covers -90..90 deg with the lower hemisphere shaded (it
    sets the ground noise picked up); ``lower_hemisphere=None`` (default) shows it only when some
    pattern has gain there above the bottom of the gain axis, otherwise the axis starts at -10.
    """
    fig = _new_figure()
    ax_r, ax_l = fig.subplots(1, 2, sharey=True)
    fig.suptitle(title or f"Elevation cuts at azimuth {azimuth_deg:g}°")
    names = list(patterns)
    styles = _styles(names, colours)
    elevation = np.linspace(-90.0, 90.0, 721)
    cuts = {}
    for name in names:
        cuts[name] = patterns[name].gains_dbic(np.full_like(elevation, float(azimuth_deg)), elevation)
    top = max((float(np.max(g)) for pair in cuts.values() for g in pair), default=5.0)
    upper = 5.0 * math.ceil((top + 1.0) / 5.0)
    bottom = upper - float(dynamic_range_db)
    below = elevation < 0.0
    if lower_hemisphere is None:
        lower_hemisphere = any(float(np.max(g[below])) > bottom for pair in cuts.values() for g in pair)
    x_low = -90.0 if lower_hemisphere else -10.0
    for name, (rhcp, lhcp) in cuts.items():
        colour, dash = styles[name]
        ax_r.plot(elevation, rhcp, color=colour, linestyle=dash, linewidth=1.8, label=name)
        ax_l.plot(elevation, lhcp, color=colour, linestyle=dash, linewidth=1.8, label=name)
    for ax, sense in ((ax_r, "RHCP"), (ax_l, "LHCP")):
        ax.set_title(f"{sense} partial gain")
        ax.set_xlabel("elevation (deg)")
        ax.set_xlim(x_low, 90.0)
        ax.set_xticks(np.arange(-90, 91, 30) if lower_hemisphere else np.arange(0, 91, 15))
        ax.axvspan(-90.0, 0.0, color="#8c7b6b", alpha=0.15, linewidth=0)
        ax.grid(True, color="#dddddd", linewidth=0.6)
        ax.text(
            0.01 if lower_hemisphere else 0.005,
            0.99,
            "below\nhorizon",
            transform=ax.transAxes,
            ha="left",
            va="top",
            fontsize=7,
            color="#5b4d40",
        )
    ax_r.set_ylabel("gain (dBic)")
    ax_r.set_ylim(bottom, upper)
    if not names:
        _no_data(ax_r)
        _no_data(ax_l)
    else:
        handles, labels = ax_r.get_legend_handles_labels()
        note = f"gain axis cut at {bottom:g} dBic (tables hold -60 dBic where there is no field)"
        if not lower_hemisphere:
            note += f"; below the horizon every pattern is under {bottom:g} dBic"
        fig.legend(
            handles,
            labels,
            loc="outside lower center",
            ncols=min(len(names), 4),
            fontsize=8,
            frameon=False,
            title=note,
            title_fontsize=7,
        )
    return fig


# --------------------------------------------------------------------------------------------
# Margin through one pass
# --------------------------------------------------------------------------------------------


def pass_margins(
    frames: Mapping[str, pd.DataFrame],
    *,
    title: str,
    min_margin_db: float,
    margin_column: str = "margin_db",
    colours: Mapping[str, str] | None = None,
) -> Figure:
    """Margin (dB) against time from AOS (s) through one pass, one line per candidate, the
    threshold drawn. ``frames`` maps a candidate name to a frame with ``time_s`` and
    ``margin_column``; AOS is the earliest ``time_s`` of all frames (so the lines share one time
    axis). If the first non-empty frame has ``elevation_deg``, the elevation is drawn on a right
    axis (grey, dotted) for reference."""
    fig = _new_figure()
    ax = fig.add_subplot()
    ax.set_title(title)
    ax.set_xlabel("time from AOS (s)")
    ax.set_ylabel("margin (dB)")
    ax.grid(True, color="#dddddd", linewidth=0.6)
    names = [n for n, f in frames.items() if not _is_empty(f)]
    if not names:
        _no_data(ax)
        _draw_threshold(ax, min_margin_db)
        return fig
    for name in names:
        _require(frames[name], ("time_s", margin_column), f"pass_margins frame {name!r}")
    aos_s = min(float(frames[n]["time_s"].min()) for n in names)
    styles = _styles(names, colours)
    all_margins = []
    for name in names:
        frame = frames[name].sort_values("time_s")
        colour, dash = styles[name]
        margin = frame[margin_column].to_numpy(dtype=float)
        all_margins.append(margin)
        ax.plot(
            frame["time_s"].to_numpy(dtype=float) - aos_s, margin, color=colour, linestyle=dash, linewidth=1.8, label=name, zorder=3
        )
    _draw_threshold(ax, min_margin_db)
    if _cut_margin_axis(ax, np.concatenate(all_margins), min_margin_db):
        ax.text(
            0.01,
            0.01,
            f"axis cut at {ax.get_ylim()[0]:.0f} dB",
            transform=ax.transAxes,
            fontsize=7,
            color="#555555",
            ha="left",
            va="bottom",
        )
    first = frames[names[0]]
    if "elevation_deg" in first.columns:
        first = first.sort_values("time_s")
        ax_el = ax.twinx()
        ax_el.plot(
            first["time_s"].to_numpy(dtype=float) - aos_s,
            first["elevation_deg"].to_numpy(dtype=float),
            color="#888888",
            linestyle=":",
            linewidth=1.2,
            label="elevation",
            zorder=1,
        )
        ax_el.set_ylabel("elevation (deg)", color="#666666")
        ax_el.set_ylim(0.0, 90.0)
        ax_el.set_yticks(np.arange(0, 91, 15))
        ax_el.tick_params(axis="y", colors="#666666")
        ax.set_zorder(ax_el.get_zorder() + 1)
        ax.patch.set_visible(False)
        handles, labels = ax.get_legend_handles_labels()
        h2, l2 = ax_el.get_legend_handles_labels()
        handles, labels = handles + h2, labels + l2
    else:
        handles, labels = ax.get_legend_handles_labels()
    fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8, frameon=False)
    return fig


# --------------------------------------------------------------------------------------------
# Usable minutes per day
# --------------------------------------------------------------------------------------------


def usable_minutes_bars(
    weekly: pd.DataFrame,
    *,
    title: str = "Usable time per day",
    colours: Mapping[str, str] | None = None,
    annotate: bool | None = None,
) -> Figure:
    """Grouped bars: usable minutes per day (``usable_minutes_per_day``) for each satellite
    (groups, in order of appearance), one bar and colour per candidate. ``weekly`` is
    planner.decision.forecast.weekly_table output. Bars carry their value when there are at most 32 of
    them (``annotate`` forces it either way)."""
    fig = _new_figure()
    ax = fig.add_subplot()
    ax.set_title(title)
    ax.set_xlabel("satellite")
    ax.set_ylabel("usable time (min/day)")
    ax.grid(True, axis="y", color="#dddddd", linewidth=0.6)
    ax.set_axisbelow(True)
    if _is_empty(weekly):
        _no_data(ax)
        return fig
    _require(weekly, ("candidate", "satellite", "usable_minutes_per_day"), "usable_minutes_bars weekly table")
    candidates = list(pd.unique(weekly["candidate"]))
    satellites = list(pd.unique(weekly["satellite"]))
    styles = _styles(candidates, colours)
    table = weekly.pivot_table(
        index="satellite", columns="candidate", values="usable_minutes_per_day", aggfunc="sum", sort=False
    ).reindex(index=satellites, columns=candidates)
    n = len(candidates)
    width = 0.8 / n
    x = np.arange(len(satellites), dtype=float)
    if annotate is None:
        annotate = n * len(satellites) <= 32
    for i, name in enumerate(candidates):
        values = table[name].to_numpy(dtype=float)
        bars = ax.bar(
            x - 0.4 + width * (i + 0.5),
            np.nan_to_num(values),
            width * 0.92,
            color=styles[name][0],
            edgecolor="#222222",
            linewidth=0.5,
            label=name,
        )
        if annotate:
            ax.bar_label(bars, labels=[f"{v:.1f}" if np.isfinite(v) else "" for v in values], fontsize=7, padding=1.5)
    ax.set_xticks(x, satellites)
    ax.set_xlim(-0.6, len(satellites) - 0.4)
    ax.set_ylim(bottom=0.0)
    ax.margins(y=0.12)
    ax.legend(title="candidate", loc="best", fontsize=8, title_fontsize=8)
    return fig


# --------------------------------------------------------------------------------------------
# Margin by elevation band
# --------------------------------------------------------------------------------------------


def band_labels(bands: Sequence[tuple[float, float]] = ELEVATION_BANDS_DEG) -> list[str]:
    """ "0-10", "10-30", ... for the bands."""
    return [f"{lo:g}-{hi:g}" for lo, hi in bands]


def margin_by_band(
    samples: pd.DataFrame,
    *,
    title: str = "Margin by elevation band",
    min_margin_db: float | None = None,
    margin_column: str = "margin_db",
    colours: Mapping[str, str] | None = None,
    bands: Sequence[tuple[float, float]] = ELEVATION_BANDS_DEG,
) -> Figure:
    """Box plots of the sample margins in each elevation band, one box per candidate.

    Boxes: quartiles and median; whiskers: 5th and 95th percentiles (outliers not drawn: a week
    has many thousands of samples). A band holds lo <= elevation < hi, the top band includes 90
    deg. Samples count equally (the forecast samples at a fixed time step, so a count is time).
    ``min_margin_db`` draws the threshold when given."""
    fig = _new_figure()
    ax = fig.add_subplot()
    ax.set_title(title)
    ax.set_xlabel("elevation band (deg)")
    ax.set_ylabel("margin (dB)")
    ax.grid(True, axis="y", color="#dddddd", linewidth=0.6)
    ax.set_axisbelow(True)
    labels = band_labels(bands)
    positions = np.arange(len(bands), dtype=float)
    ax.set_xticks(positions, labels)
    ax.set_xlim(-0.6, len(bands) - 0.4)
    handles = []
    if min_margin_db is not None:
        handles.append(_draw_threshold(ax, min_margin_db))
    if _is_empty(samples):
        _no_data(ax)
        centre = 0.0 if min_margin_db is None else float(min_margin_db)
        ax.set_ylim(centre - 10.0, centre + 10.0)
        return fig
    cols = ("elevation_deg", margin_column) + (("candidate",) if "candidate" in samples.columns else ())
    _require(samples, ("elevation_deg", margin_column), "margin_by_band samples")
    data = samples.loc[:, list(cols)]
    if "candidate" not in data.columns:
        data = data.assign(candidate="")
    candidates = list(pd.unique(data["candidate"]))
    styles = _styles(candidates, colours)
    elevation = data["elevation_deg"].to_numpy(dtype=float)
    margin = data[margin_column].to_numpy(dtype=float)
    band_index = np.full(len(data), -1)
    for k, (lo, hi) in enumerate(bands):
        inside = (elevation >= lo) & ((elevation < hi) | ((k == len(bands) - 1) & (elevation <= hi)))
        band_index[inside] = k
    n = len(candidates)
    width = 0.8 / n
    cand_values = data["candidate"].to_numpy()
    for i, name in enumerate(candidates):
        colour = styles[name][0]
        groups, where = [], []
        for k in range(len(bands)):
            sel = (cand_values == name) & (band_index == k) & np.isfinite(margin)
            if sel.any():
                groups.append(margin[sel])
                where.append(positions[k] - 0.4 + width * (i + 0.5))
        if groups:
            ax.boxplot(
                groups,
                positions=where,
                widths=width * 0.8,
                whis=(5, 95),
                showfliers=False,
                patch_artist=True,
                manage_ticks=False,
                boxprops={"facecolor": colour, "edgecolor": "#222222", "alpha": 0.9},
                medianprops={"color": "white" if _dark(colour) else "black", "linewidth": 1.6},
                whiskerprops={"color": "#222222"},
                capprops={"color": "#222222"},
            )
        handles.append(_box_handle(colour, name or "all samples"))
    for k in range(len(bands)):
        if not np.any(band_index == k):
            ax.text(
                positions[k],
                0.5,
                "no samples",
                transform=ax.get_xaxis_transform(),
                ha="center",
                va="center",
                fontsize=8,
                color="#777777",
            )
    ax.legend(handles=handles, fontsize=8, loc="best")
    ax.text(
        0.99,
        0.01,
        "box: quartiles and median; whiskers: 5th-95th percentile",
        transform=ax.transAxes,
        ha="right",
        va="bottom",
        fontsize=7,
        color="#555555",
    )
    return fig


def _box_handle(colour: str, label: str):
    return Patch(facecolor=colour, edgecolor="#222222", label=label)


def _dark(colour: str) -> bool:
    """True when white text reads better than black on ``colour`` (relative luminance < 0.3)."""
    r, g, b = to_rgb(colour)
    lin = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in (r, g, b)]
    return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2] < 0.3


# --------------------------------------------------------------------------------------------
# Saving
# --------------------------------------------------------------------------------------------


def save_figure(fig: Figure, folder: str | Path, stem: str, *, rules: WriteRules = REPLACE_ANY) -> list[Path]:
    """Write ``folder/stem.png`` (150 dpi) and ``folder/stem.svg`` atomically; returns the paths.

    The folder must exist (planner.errors.UserError otherwise, from write_atomically). The SVG
    carries no date and fixed element ids, so the same figure gives the same bytes."""
    if not stem or "/" in stem or "\\" in stem or stem in (".", ".."):
        raise ValueError(f"save_figure: stem {stem!r} must be a plain file name without a folder or extension")
    folder = Path(folder)
    if fig.canvas is None or not isinstance(fig.canvas, FigureCanvasAgg):
        FigureCanvasAgg(fig)
    written = []
    for fmt, options in (("png", {"dpi": PNG_DPI}), ("svg", {"metadata": {"Date": None}})):
        buffer = BytesIO()
        with matplotlib.rc_context({"svg.hashsalt": "planner"}):
            fig.savefig(buffer, format=fmt, facecolor="white", **options)
        written.append(write_atomically(folder / f"{stem}.{fmt}", buffer.getvalue(), rules=rules))
    return written


def sweep_chart(
    table: pd.DataFrame, per_satellite: pd.DataFrame, *, title: str, best_spacing_wavelengths: float | None = None
) -> Figure:
    """Weekly usable minutes per satellite (lines) and the score (bars) against reflector spacing."""
    fig = _new_figure()
    ax = fig.add_subplot(1, 1, 1)
    if _is_empty(table):
        _no_data(ax)
        return fig
    _require(table, ["spacing_wavelengths", "score"], "sweep table")
    spacing = table["spacing_wavelengths"].to_numpy()
    width = 0.6 * (np.min(np.diff(np.sort(spacing))) if len(spacing) > 1 else 0.1)
    score_ax = ax.twinx()
    score_ax.bar(
        spacing, table["score"].to_numpy(), width=width, color="#d9d9d9", edgecolor="#8c8c8c", label="score (right axis)", zorder=0
    )
    score_ax.set_ylabel("score (objective units)")
    ax.set_zorder(score_ax.get_zorder() + 1)
    ax.patch.set_visible(False)
    satellites = list(dict.fromkeys(per_satellite["satellite"])) if not _is_empty(per_satellite) else []
    styles = _styles(satellites, None)
    for satellite in satellites:
        rows = per_satellite[per_satellite["satellite"] == satellite].sort_values("spacing_wavelengths")
        colour, dash = styles[satellite]
        ax.plot(
            rows["spacing_wavelengths"],
            rows["usable_minutes"],
            color=colour,
            linestyle=dash,
            marker="o",
            markersize=3,
            label=satellite,
        )
    if best_spacing_wavelengths is not None:
        ax.axvline(
            best_spacing_wavelengths, color="black", linewidth=1.0, linestyle=":", label=f"best {best_spacing_wavelengths:.3g} wl"
        )
    ax.set_xlabel("reflector spacing (wavelengths)")
    ax.set_ylabel("usable minutes in the window (min)")
    ax.set_title(title)
    handles, labels = ax.get_legend_handles_labels()
    bar_handles, bar_labels = score_ax.get_legend_handles_labels()
    ax.legend(
        handles + bar_handles,
        labels + bar_labels,
        loc="upper center",
        bbox_to_anchor=(0.5, -0.14),
        ncol=4,
        frameon=False,
        fontsize=8,
    )
    ax.grid(True, alpha=0.3)
    return fig
