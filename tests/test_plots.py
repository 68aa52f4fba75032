"""Figures (planner.output.plots): labels with units, sky-chart orientation, files written, CVD palette.

External facts the checks rest on, each repeated beside its check:
- Machado, Oliveira and Fernandes (2009), "A Physiologically-based Model for Simulation of Color
  Vision Deficiency", IEEE TVCG 15(6) 1291-1298: simulation matrices for protanopia,
  deuteranopia and tritanopia at severity 1.0, applied to linear RGB. Values recalled from memory
  and confirmed against several independent published copies of the table.
- IEC 61966-2-1 (sRGB): transfer function (0.04045 / 12.92 / 2.4 / 0.055) and the linear sRGB ->
  CIE XYZ matrix for the D65 white point.
- CIE 15 (CIELAB 1976): L*, a*, b* from XYZ with the D65 reference white (0.95047, 1, 1.08883),
  f(t) = t^(1/3) above (6/29)^3, linear below; colour difference Delta E*ab = Euclidean distance.
- PNG signature: the 8 bytes 89 50 4E 47 0D 0A 1A 0A (ISO/IEC 15948, section 5.2).
- SVG documents have an <svg> root element (W3C SVG 1.1).
- Geometry of a pass (for the synthetic data only): a circular orbit around a spherical Earth of
  radius 6371 km seen from a point on its surface (plain vector geometry).

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from matplotlib.colors import to_rgb
from matplotlib.figure import Figure

from planner.antenna import turnstile_over_reflector
from planner.errors import UserError
from planner.output import plots

REPO = Path(__file__).resolve().parents[1]
UNIT_RE = re.compile(r"[(\[]\s*(deg|dB|dBic|s|min/day)\s*[)\]]")

# --------------------------------------------------------------------------------------------
# Synthetic data
# --------------------------------------------------------------------------------------------

EARTH_RADIUS_KM = 6371.0  # mean Earth radius (IUGG), enough for synthetic tracks


def synthetic_pass(
    closest_angle_deg: float, heading_deg: float, *, altitude_km: float = 550.0, step_s: float = 10.0, t0_s: float = 0.0
) -> pd.DataFrame:
    """az/el/range of a circular orbit passing over a station, from plain vector geometry.

    ENU-like frame at the Earth's centre (x east, y north, z up through the station).
    ``closest_angle_deg`` is the Earth-central angle at closest approach (0 = overhead),
    ``heading_deg`` the direction (from north) of the closest-approach point from the station.
    """
    r_orbit = EARTH_RADIUS_KM + altitude_km
    b = np.radians(closest_angle_deg)
    a = np.radians(heading_deg)
    u = np.array([np.sin(b) * np.sin(a), np.sin(b) * np.cos(a), np.cos(b)])
    v = np.array([np.cos(a), -np.sin(a), 0.0])  # horizontal, perpendicular to u
    mean_motion_rad_s = np.sqrt(398600.4418 / r_orbit**3)  # GM of the Earth, km^3/s^2 (WGS84)
    t = np.arange(-900.0, 900.0 + step_s / 2, step_s)
    phi = mean_motion_rad_s * t
    sat = r_orbit * (np.cos(phi)[:, None] * u + np.sin(phi)[:, None] * v)
    rel = sat - np.array([0.0, 0.0, EARTH_RADIUS_KM])
    rng = np.linalg.norm(rel, axis=1)
    el = np.degrees(np.arcsin(rel[:, 2] / rng))
    az = np.mod(np.degrees(np.arctan2(rel[:, 0], rel[:, 1])), 360.0)
    up = el >= 0.0
    return pd.DataFrame({"time_s": t[up] - t[up][0] + t0_s, "azimuth_deg": az[up], "elevation_deg": el[up], "range_km": rng[up]})


def margins_for(track: pd.DataFrame, table, *, budget_db: float) -> np.ndarray:
    """A toy margin: budget + RHCP gain - 20 log10(range / 1000 km) - 3 dB (linear vs circular)."""
    rhcp, _ = table.gains_dbic(track["azimuth_deg"].to_numpy(), track["elevation_deg"].to_numpy())
    return budget_db + rhcp - 20.0 * np.log10(track["range_km"].to_numpy() / 1000.0) - 3.0


CANDIDATES = {
    "quarter-wave reflector": 0.25,
    "half-wave reflector": 0.5,
    "0.375-wave reflector": 0.375,
}


@pytest.fixture(scope="module")
def tables():
    # Closed-form image-theory turnstiles (Balanis ch. 4): smooth, well-known shapes to draw.
    return {name: turnstile_over_reflector(spacing, 436e6) for name, spacing in CANDIDATES.items()}


def make_samples(tables) -> pd.DataFrame:
    """forecast.compute_samples-shaped frame: 2 satellites x 4 passes x the candidates."""
    rows = []
    geometry = [(3.0, 100.0), (9.0, 280.0), (14.0, 20.0), (6.0, 200.0)]
    for sat_i, satellite in enumerate(("DEMOSAT-A", "DEMOSAT-B")):
        for number, (angle, heading) in enumerate(geometry, start=1):
            track = synthetic_pass(angle + sat_i, heading + 35 * sat_i, t0_s=number * 6000.0)
            dt = np.gradient(track["time_s"].to_numpy())
            for name, table in tables.items():
                margin = margins_for(track, table, budget_db=9.0 - 2 * sat_i)
                rows.append(
                    track.assign(
                        candidate=name,
                        satellite=satellite,
                        pass_number=number,
                        dt_s=dt,
                        margin_db=margin,
                        margin_at_fade_db=margin - 1.5,
                    )
                )
    return pd.concat(rows, ignore_index=True)


def make_weekly(samples: pd.DataFrame, *, min_margin_db: float = 3.0, days: float = 7.0) -> pd.DataFrame:
    """weekly_table-shaped frame computed straight from the samples (usable = margin >= threshold)."""
    usable = samples[samples["margin_db"] >= min_margin_db]
    minutes = usable.groupby(["candidate", "satellite"], sort=False)["dt_s"].sum() / 60.0
    frame = minutes.rename("usable_minutes").reset_index()
    return frame.assign(usable_minutes_per_day=frame["usable_minutes"] / days)


@pytest.fixture(scope="module")
def samples(tables):
    return make_samples(tables)


@pytest.fixture(scope="module")
def weekly(samples):
    return make_weekly(samples)


# --------------------------------------------------------------------------------------------
# Checks on labels
# --------------------------------------------------------------------------------------------


def _colorbar_of(ax):
    return getattr(ax, "_colorbar", None)


def assert_axes_labelled(fig: Figure, *, categorical_x: str | None = None, minimum: int = 2) -> None:
    """Every visible quantitative axis has a label with a unit in brackets; colour bars label their
    long axis; a categorical x axis (bars by satellite) just needs its name."""
    checked = 0
    for ax in fig.axes:
        cbar = _colorbar_of(ax)
        if cbar is not None:
            label = cbar.ax.get_ylabel() if cbar.orientation == "vertical" else cbar.ax.get_xlabel()
            assert UNIT_RE.search(label), f"colour bar label {label!r} lacks a unit"
            checked += 1
            continue
        if ax.name == "polar":
            continue  # the sky chart labels its rings, checked separately
        if ax.xaxis.get_visible():
            label = ax.get_xlabel()
            if categorical_x is not None and label == categorical_x:
                checked += 1
            else:
                assert UNIT_RE.search(label), f"x label {label!r} lacks a unit"
                checked += 1
        if ax.yaxis.get_visible():
            label = ax.get_ylabel()
            shared = ax.get_shared_y_axes().get_siblings(ax)
            if label == "" and len(shared) > 1:
                assert any(UNIT_RE.search(o.get_ylabel()) for o in shared if o is not ax), "shared y axis unlabelled"
            else:
                assert UNIT_RE.search(label), f"y label {label!r} lacks a unit"
            checked += 1
    assert checked >= minimum


def figure_text(fig: Figure) -> str:
    """All text drawn on the figure (titles, notes, legend titles and entries)."""
    texts = [t.get_text() for t in fig.texts]
    legends = list(fig.legends)
    for sup in (getattr(fig, "_suptitle", None), getattr(fig, "_supxlabel", None)):
        if sup is not None:
            texts.append(sup.get_text())
    for ax in fig.axes:
        texts += [t.get_text() for t in ax.texts] + [ax.get_title()]
        if ax.get_legend() is not None:
            legends.append(ax.get_legend())
    for legend in legends:
        texts += [legend.get_title().get_text()] + [t.get_text() for t in legend.get_texts()]
    return "\n".join(texts)


# --------------------------------------------------------------------------------------------
# Figures
# --------------------------------------------------------------------------------------------


def one_candidate_satellite(samples):
    return samples[(samples["candidate"] == "quarter-wave reflector") & (samples["satellite"] == "DEMOSAT-A")]


def test_sky_chart_orientation_and_ring_labels(samples):
    fig = plots.sky_chart(one_candidate_satellite(samples), title="DEMOSAT-A, quarter-wave", min_margin_db=3.0)
    assert isinstance(fig, Figure)
    polar = [ax for ax in fig.axes if ax.name == "polar"]
    assert len(polar) == 1
    ax = polar[0]
    # north up: zero azimuth at the top (theta offset pi/2 in matplotlib's convention), clockwise (-1)
    assert ax.get_theta_direction() == -1
    assert ax.get_theta_offset() == pytest.approx(np.pi / 2)
    # zenith at the centre, horizon at the edge
    assert ax.get_rmin() == 0.0 and ax.get_rmax() == 90.0
    # rings labelled in elevation: the label at radius r reads 90 - r degrees
    ticks = ax.get_yticks()
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert len(ticks) >= 3
    for r, text in zip(ticks, labels):
        assert float(text.rstrip("°")) == pytest.approx(90.0 - r)
    assert "N" in [t.get_text() for t in ax.get_xticklabels()]
    assert "elevation (deg)" in figure_text(fig) and "azimuth (deg)" in figure_text(fig)
    assert_axes_labelled(fig, minimum=1)  # the colour bar


def test_sky_chart_places_a_sample_where_its_azimuth_and_elevation_say(samples):
    """A sample due east at 30 deg elevation must be drawn right of the centre, 60/90 of the way
    to the edge (north up, east right when looking up with azimuth clockwise on the page)."""
    frame = pd.DataFrame(
        {
            "azimuth_deg": [89.0, 90.0, 91.0],
            "elevation_deg": [30.0, 30.0, 30.0],
            "margin_db": [5.0, 5.0, 5.0],
            "time_s": [0.0, 10.0, 20.0],
        }
    )
    fig = plots.sky_chart(frame, title="east", min_margin_db=3.0)
    ax = next(a for a in fig.axes if a.name == "polar")
    fig.canvas.draw()
    centre = ax.transData.transform((0.0, 0.0))
    east = ax.transData.transform((np.radians(90.0), 60.0))
    edge_north = ax.transData.transform((0.0, 90.0))
    radius_px = edge_north[1] - centre[1]
    assert radius_px > 0  # north is up
    assert east[0] - centre[0] == pytest.approx(radius_px * 60.0 / 90.0, rel=1e-6)
    assert east[1] - centre[1] == pytest.approx(0.0, abs=1e-6 * radius_px)


def test_sky_chart_colour_bar_marks_threshold(samples):
    fig = plots.sky_chart(one_candidate_satellite(samples), title="t", min_margin_db=3.0)
    cbars = [_colorbar_of(ax) for ax in fig.axes if _colorbar_of(ax) is not None]
    assert len(cbars) == 1
    cbar = cbars[0]
    assert cbar.cmap.name == plots.MARGIN_CMAP
    assert cbar.norm.vmin < 3.0 < cbar.norm.vmax
    lines = [l for l in cbar.ax.get_lines() if np.allclose(l.get_ydata(), 3.0)]
    assert lines, "no threshold line on the colour bar"
    assert any("threshold 3 dB" in t.get_text() for t in cbar.ax.texts)


def test_sky_chart_usable_segments_thick_and_north_crossing_short(samples):
    """Segments at or above the threshold are drawn thicker than those below; a track crossing
    north (359 -> 1 deg) is drawn the short way round, not across the whole sky."""
    frame = pd.DataFrame(
        {
            "azimuth_deg": [356.0, 358.0, 359.5, 1.0, 3.0],
            "elevation_deg": [20.0, 22, 24, 26, 28],
            "margin_db": [0.0, 1.0, 5.0, 6.0, 7.0],
            "time_s": [0.0, 10, 20, 30, 40],
            "pass_number": [1, 1, 1, 1, 1],
        }
    )
    fig = plots.sky_chart(frame, title="north", min_margin_db=3.0)
    ax = next(a for a in fig.axes if a.name == "polar")
    lc = next(c for c in ax.collections if len(c.get_segments()) == 4)
    segments = lc.get_segments()
    assert all(abs(seg[1][0] - seg[0][0]) < np.radians(5.0) for seg in segments)
    widths = np.broadcast_to(lc.get_linewidths(), (4,))
    mid_margin = np.array([0.5, 3.0, 5.5, 6.5])
    assert np.all(widths[mid_margin >= 3.0] > widths[mid_margin < 3.0].max())


def test_sky_chart_with_horizon_mask(samples):
    class Mask:  # duck type of planner.passes.station.HorizonMask
        def min_elevation_at(self, azimuth_deg):
            return np.interp(np.mod(azimuth_deg, 360.0), [0, 120, 240, 360], [3.0, 8.0, 2.0, 3.0])

    fig = plots.sky_chart(one_candidate_satellite(samples), title="t", min_margin_db=3.0, horizon_mask=Mask())
    ax = next(a for a in fig.axes if a.name == "polar")
    assert len(ax.collections) >= 2  # mask shading + tracks


def test_elevation_cuts_labels_and_consistency_with_the_table(tables):
    fig = plots.elevation_cuts(tables, azimuth_deg=0.0)
    assert_axes_labelled(fig)
    ax_r, ax_l = fig.axes[:2]
    assert "RHCP" in ax_r.get_title() and "LHCP" in ax_l.get_title()
    # Consistency check, no outside value: the plotted curve is the table's own interpolation (the
    # closed-form turnstile itself is checked against Balanis in test_patterns.py); the outside
    # check of this figure is the zenith maximum below.
    line = ax_r.get_lines()[0]
    name = line.get_label()
    x, y = line.get_xdata(), line.get_ydata()
    expected, _ = tables[name].gains_dbic(np.zeros_like(x), x)
    np.testing.assert_allclose(y, expected)
    # quarter-wave turnstile over a plane: maximum at the zenith (image theory, Balanis ch. 4)
    quarter = next(l for l in ax_r.get_lines() if l.get_label() == "quarter-wave reflector")
    assert quarter.get_xdata()[np.argmax(quarter.get_ydata())] == pytest.approx(90.0)
    assert len({l.get_color() for l in ax_r.get_lines()}) == len(tables)


def test_pass_margins(samples):
    one = samples[(samples["satellite"] == "DEMOSAT-A") & (samples["pass_number"] == 2)]
    frames = {name: g for name, g in one.groupby("candidate", sort=False)}
    fig = plots.pass_margins(frames, title="DEMOSAT-A pass 2", min_margin_db=3.0)
    assert_axes_labelled(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "time from AOS (s)" and ax.get_ylabel() == "margin (dB)"
    candidate_lines = [l for l in ax.get_lines() if l.get_label() in frames]
    assert len(candidate_lines) == 3
    assert min(l.get_xdata().min() for l in candidate_lines) == 0.0  # time counted from AOS
    threshold = [l for l in ax.get_lines() if l.get_label().startswith("threshold")]
    assert threshold and np.allclose(threshold[0].get_ydata(), 3.0)


def test_usable_minutes_bars_consistency_with_their_input(weekly):
    fig = plots.usable_minutes_bars(weekly)
    assert_axes_labelled(fig, categorical_x="satellite")
    ax = fig.axes[0]
    assert "(min/day)" in ax.get_ylabel()
    # Consistency check, no outside value: the bars are the frame they were given (the usable
    # minutes themselves are checked against hand-worked windows in test_forecast.py).
    heights = sorted(round(p.get_height(), 9) for p in ax.patches)
    assert heights == sorted(round(v, 9) for v in weekly["usable_minutes_per_day"])
    assert [t.get_text() for t in ax.get_xticklabels()] == ["DEMOSAT-A", "DEMOSAT-B"]


def test_margin_by_band(samples):
    fig = plots.margin_by_band(samples, min_margin_db=3.0)
    assert_axes_labelled(fig)
    ax = fig.axes[0]
    assert [t.get_text() for t in ax.get_xticklabels()] == ["0-10", "10-30", "30-60", "60-90"]
    # the median line of the first candidate's first box is the median of its 0-10 deg samples
    # (numpy.median of the figure's input: a consistency check, no outside value)
    first = samples[(samples["candidate"] == "quarter-wave reflector") & (samples["elevation_deg"] < 10.0)]
    medians = [l for l in ax.get_lines() if len(l.get_ydata()) == 2 and l.get_ydata()[0] == l.get_ydata()[1]]
    assert any(np.isclose(l.get_ydata()[0], np.median(first["margin_db"])) for l in medians)


@pytest.mark.parametrize(
    "make",
    [
        lambda: plots.sky_chart(pd.DataFrame(), title="empty", min_margin_db=3.0),
        lambda: plots.sky_chart(pd.DataFrame(columns=["azimuth_deg", "elevation_deg", "margin_db"]), title="e", min_margin_db=3.0),
        lambda: plots.elevation_cuts({}),
        lambda: plots.pass_margins({}, title="empty", min_margin_db=3.0),
        lambda: plots.pass_margins({"a": pd.DataFrame(columns=["time_s", "margin_db"])}, title="e", min_margin_db=3.0),
        lambda: plots.usable_minutes_bars(pd.DataFrame()),
        lambda: plots.margin_by_band(pd.DataFrame()),
    ],
)
def test_empty_input_gives_a_no_data_figure(make, tmp_path):
    fig = make()
    assert isinstance(fig, Figure)
    assert plots.NO_DATA_TEXT in figure_text(fig)
    paths = plots.save_figure(fig, tmp_path, "empty")  # it renders
    assert all(p.stat().st_size > 0 for p in paths)


def test_missing_column_is_named():
    with pytest.raises(ValueError, match="margin_db"):
        plots.sky_chart(pd.DataFrame({"azimuth_deg": [1.0], "elevation_deg": [2.0]}), title="t", min_margin_db=3.0)


def test_colours_follow_the_given_mapping(tables):
    fixed = plots.candidate_colours(["0.375-wave reflector", "half-wave reflector", "quarter-wave reflector"])
    fig = plots.elevation_cuts(tables, colours=fixed)
    for line in fig.axes[0].get_lines():
        if line.get_label() in fixed:
            assert line.get_color() == fixed[line.get_label()]
    assert fixed["0.375-wave reflector"] == plots.PALETTE[0]


def test_agg_backend_is_selected_on_import():
    """Importing planner.output.plots in a fresh interpreter (no display, no MPLBACKEND) selects Agg."""
    import os
    import subprocess
    import sys

    env = {k: v for k, v in os.environ.items() if k != "MPLBACKEND"}
    env["PYTHONPATH"] = str(REPO)
    code = "import planner.output.plots, matplotlib; print(matplotlib.get_backend())"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True, cwd=REPO)
    assert out.stdout.strip().lower() == "agg"


# --------------------------------------------------------------------------------------------
# Saving
# --------------------------------------------------------------------------------------------


def test_save_figure_writes_png_and_svg(samples, tmp_path):
    fig = plots.margin_by_band(samples)
    paths = plots.save_figure(fig, tmp_path, "margin_by_band")
    assert [p.name for p in paths] == ["margin_by_band.png", "margin_by_band.svg"]
    png = paths[0].read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 section 5.2
    # IHDR width/height (big-endian, bytes 16..24) = 8 x 5 in at 150 dpi
    width, height = int.from_bytes(png[16:20], "big"), int.from_bytes(png[20:24], "big")
    assert (width, height) == (1200, 750)
    assert "<svg" in paths[1].read_text(encoding="utf-8")
    # same figure, same bytes (no date in the SVG, fixed ids)
    again = plots.save_figure(fig, tmp_path / ".." / tmp_path.name, "margin_by_band")
    assert again[1].read_bytes() == paths[1].read_bytes()
    assert not list(tmp_path.glob(".*.tmp"))  # no temporary files left behind


def test_save_figure_needs_an_existing_folder(tmp_path):
    fig = plots.usable_minutes_bars(pd.DataFrame())
    with pytest.raises(UserError, match="does not exist"):
        plots.save_figure(fig, tmp_path / "missing", "x")
    with pytest.raises(ValueError, match="plain file name"):
        plots.save_figure(fig, tmp_path, "a/b")


def test_no_pyplot_state_is_touched(samples):
    """Figures are built on Figure directly: pyplot's registry stays empty."""
    import matplotlib.pyplot as plt

    before = plt.get_fignums()
    plots.margin_by_band(samples)
    plots.elevation_cuts({})
    assert plt.get_fignums() == before


# --------------------------------------------------------------------------------------------
# Colour-vision deficiency
# --------------------------------------------------------------------------------------------

# Machado, Oliveira & Fernandes 2009, severity 1.0, linear RGB (values from memory, confirmed
# against published copies of the paper's table).
MACHADO_2009 = {
    "protanopia": np.array([[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]]),
    "deuteranopia": np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.011820, 0.042940, 0.968881]]),
    "tritanopia": np.array([[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.303900]]),
}
SIMULATIONS = {"normal vision": np.eye(3), **MACHADO_2009}


def srgb_to_linear(c: np.ndarray) -> np.ndarray:
    """IEC 61966-2-1 sRGB decoding."""
    c = np.asarray(c, dtype=float)
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


# IEC 61966-2-1: linear sRGB -> CIE XYZ (D65)
SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]])
D65_WHITE = np.array([0.95047, 1.0, 1.08883])  # CIE 15, 2 deg observer


def linear_rgb_to_lab(rgb: np.ndarray) -> np.ndarray:
    """CIE 1976 L*a*b* (CIE 15) from linear sRGB."""
    xyz = np.asarray(rgb, dtype=float) @ SRGB_TO_XYZ.T / D65_WHITE
    delta = 6.0 / 29.0
    f = np.where(xyz > delta**3, np.cbrt(xyz), xyz / (3.0 * delta**2) + 4.0 / 29.0)
    return np.stack([116.0 * f[..., 1] - 16.0, 500.0 * (f[..., 0] - f[..., 1]), 200.0 * (f[..., 1] - f[..., 2])], -1)


def simulated_lab(hex_colours, matrix) -> np.ndarray:
    rgb = np.array([to_rgb(h) for h in hex_colours])
    return linear_rgb_to_lab(np.clip(srgb_to_linear(rgb) @ matrix.T, 0.0, 1.0))


def test_colour_science_against_known_values():
    """The conversion itself: sRGB white is L*=100, a*=b*=0; sRGB red (#ff0000) is about
    L*=53.2, a*=80.1, b*=67.2 (widely tabulated value, from memory); the deuteranopia and
    protanopia matrices keep greys grey (their rows sum to 1: Machado 2009 normalisation)."""
    white = linear_rgb_to_lab(srgb_to_linear(np.array([1.0, 1.0, 1.0])))
    np.testing.assert_allclose(white, [100.0, 0.0, 0.0], atol=0.05)
    red = linear_rgb_to_lab(srgb_to_linear(np.array([1.0, 0.0, 0.0])))
    np.testing.assert_allclose(red, [53.24, 80.09, 67.20], atol=0.3)
    for matrix in MACHADO_2009.values():
        np.testing.assert_allclose(matrix.sum(axis=1), 1.0, atol=1e-5)
    # a red/green pair that normal eyes tell apart collapses under deuteranopia: the simulation bites
    pair = ["#d62020", "#4a9a20"]
    normal = simulated_lab(pair, np.eye(3))
    deutan = simulated_lab(pair, MACHADO_2009["deuteranopia"])
    assert np.linalg.norm(normal[0] - normal[1]) > 60.0
    assert np.linalg.norm(deutan[0] - deutan[1]) < 15.0


MIN_DELTA_E = 20.0  # common practice, no published source: Delta E*ab >= ~10-20 reads as clearly different


@pytest.mark.parametrize("simulation", list(SIMULATIONS))
def test_palette_is_distinct_under_colour_vision_deficiency(simulation):
    palette = list(plots.PALETTE)
    assert len(palette) == 8 and len(set(palette)) == 8
    lab = simulated_lab(palette, SIMULATIONS[simulation])
    distance = np.linalg.norm(lab[:, None, :] - lab[None, :, :], axis=-1)
    np.fill_diagonal(distance, np.inf)
    i, j = np.unravel_index(np.argmin(distance), distance.shape)
    assert distance[i, j] >= MIN_DELTA_E, f"{simulation}: {palette[i]} vs {palette[j]} only {distance[i, j]:.1f} apart"


def test_palette_colours_read_on_white():
    """Lines must show on a white page: CIELAB L* at most 80 (white is 100) for every colour,
    also under each simulation (common practice, no published source)."""
    for name, matrix in SIMULATIONS.items():
        lab = simulated_lab(plots.PALETTE, matrix)
        assert lab[:, 0].max() <= 80.0, name


@pytest.mark.parametrize("simulation", list(SIMULATIONS))
def test_margin_colormap_stays_ordered(simulation):
    """The margin colormap's lightness rises monotonically from end to end for every simulation,
    so a higher margin always looks lighter, whatever the colour vision."""
    import matplotlib

    cmap = matplotlib.colormaps[plots.MARGIN_CMAP]
    rgb = cmap(np.linspace(0.0, 1.0, 64))[:, :3]
    lightness = linear_rgb_to_lab(np.clip(srgb_to_linear(rgb) @ SIMULATIONS[simulation].T, 0, 1))[:, 0]
    assert np.all(np.diff(lightness) > 0)
    assert lightness[-1] - lightness[0] > 50.0
