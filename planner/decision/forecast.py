"""From per-sample margins to per-pass outcomes, weekly totals and a one-receiver schedule.

The pipeline, all of it vectorized over samples (loops run per pass or per candidate):

1. :func:`compute_samples` predicts the passes once, builds one :class:`~planner.link.budget.LinkSetup`
   per (candidate, satellite) and evaluates the budget over all that satellite's track samples in
   one call, one row a sample.  Each sample carries ``dt_s``, the time it stands for: the
   trapezoid-rule weights of its pass (half the gap to each neighbour), so the weights of a pass
   sum to its duration from AOS to LOS.  For a catalog, ``forecast(..., keep_samples=False)``
   summarizes the samples a batch of satellites at a time and drops them.
2. :func:`summarize_passes` turns samples into one row per (candidate, satellite, pass).  A
   sample is usable when ``margin_db + margin_shift_db >= criteria.min_margin_db``.  The margin
   is taken as linear between samples, so the usable part of a pass is the set where that
   piecewise-linear curve is at or above the threshold: a window opens at AOS if the first
   sample is usable, otherwise at the linearly interpolated crossing between an unusable and a
   usable sample, and it closes likewise (at LOS if the last sample is usable).  ``usable_s`` is
   the total length of the windows.  Dropouts are defined once, in :func:`pass_dropouts`: a
   below-threshold gap between two usable windows of a *usable* pass.  Data volume is
   ``usable_s * data_rate_bps * framing_efficiency`` (0 for ``fm``, which carries voice: its
   usable time still counts).  A pass is *usable* when ``usable_s >= criteria.min_usable_s``.
3. :func:`weekly_table`, :func:`band_table` and :func:`hour_table` total the usable passes per
   candidate and satellite, per culmination-elevation band, and per local hour.
4. :func:`schedule` answers "with one receiver, which passes do we take?": every usable pass is
   an interval ``[first_usable_s, last_usable_s]`` with its ``value`` (weighted data volume or
   usable time, per ``criteria.objective``), and :func:`weighted_interval_schedule` picks the
   non-overlapping set of greatest total value exactly (sort by end, binary-search the latest
   compatible predecessor, dynamic programme; Kleinberg & Tardos, *Algorithm Design*, 6.1).
   :func:`dropped_for_conflicts` lists the passes it leaves out and the kept pass each overlaps.

Local hour is the hour (0..23) at the pass's TCA on the station's clock, its ``time_zone``
(:mod:`planner.timezones`): the civil hour of an IANA zone, daylight saving included (UTC by
default), or, for ``local-mean-solar``, mean solar time at the station's longitude (UTC hour +
longitude / 15, modulo 24).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from datetime import datetime, timedelta

import numpy as np
import pandas as pd

from planner.link.budget import candidate_antenna_noise, downlink_setup, evaluate, nearest_band, pattern_file_name
from planner.passes import Pass, joined_time_s
from planner.scenario import CriteriaConfig
from planner.timezones import DEFAULT_TIME_ZONE, LOCAL_MEAN_SOLAR, local_hours

ELEVATION_BANDS_DEG = ((0, 10), (10, 30), (30, 60), (60, 90))
ELEVATION_BAND_LABELS = tuple(f"{low}-{high}" for low, high in ELEVATION_BANDS_DEG)
HOURS = tuple(range(24))
VOICE_MODULATIONS = frozenset({"fm"})  # analog voice: usable time, no data volume

SAMPLE_COLUMNS = (
    "candidate",
    "satellite",
    "pass_number",
    "time_s",
    "dt_s",
    "azimuth_deg",
    "elevation_deg",
    "range_km",
    "margin_db",
    "margin_at_fade_db",
)
PASS_COLUMNS = (
    "satellite",
    "norad_id",
    "pass_number",
    "aos_utc",
    "tca_utc",
    "los_utc",
    "aos_s",
    "los_s",
    "duration_s",
    "max_elevation_deg",
    "elevation_band",
    "local_hour",
    "aos_clipped",
    "los_clipped",
)
OUTCOME_COLUMNS = (
    ("candidate",)
    + PASS_COLUMNS
    + (
        "usable_s",
        "usable",
        "usable_windows",
        "first_usable_s",
        "last_usable_s",
        "dropouts",
        "dropout_s",
        "min_margin_db",
        "median_margin_db",
        "max_margin_db",
        "data_volume_bit",
        "weight",
        "value",
    )
)
WEEKLY_COLUMNS = (
    "candidate",
    "satellite",
    "passes",
    "usable_passes",
    "usable_minutes",
    "data_volume_mbit",
    "dropouts",
    "usable_minutes_per_day",
    "data_volume_mbit_per_day",
)
TOTAL_COLUMNS = ("passes", "usable_passes", "usable_minutes", "data_volume_mbit")

_KEYS = ["candidate", "satellite", "pass_number"]
TUMBLING_POLARIZATION = "linear-tumbling"

NO_RECEIVER_LIMIT_TEXT = (
    "These totals have no one-receiver limit: every usable pass of every satellite counts, even when passes "
    "overlap (planner compare keeps only the passes one receiver can take)."
)
ONE_RECEIVER_LIMIT_TEXT = (
    "These totals have the one-receiver limit: they count only the passes the one-receiver schedule keeps, "
    "never two that overlap (planner week counts every usable pass)."
)


def usable_rule_text(criteria: CriteriaConfig, satellites) -> str:
    """Which margin decides "usable", per satellite, as :func:`summarize_passes` applies it.

    Every satellite is judged on its expected margin (``margin_db``).  For a tumbling linear
    satellite that margin carries the polarization loss averaged over the tumble; the deeper fade
    at ``criteria.fade_percentile`` (``margin_at_fade_db``) is computed and reported but does not
    decide usability, and the text says so by name.
    """
    tumbling = [s.name for s in satellites if getattr(s, "polarization", None) == TUMBLING_POLARIZATION]
    rule = (
        f"Usable: the expected margin (margin_db) is at least {float(criteria.min_margin_db):g} dB for at least "
        f"{float(criteria.min_usable_s):g} s of a pass, for every satellite."
    )
    if not tumbling:
        return rule + " No satellite is tumbling linear, so criteria.fade_percentile plays no part."
    shown = ", ".join(tumbling[:6]) + (f" and {len(tumbling) - 6} more" if len(tumbling) > 6 else "")
    return (
        f"{rule} For the tumbling linear satellites ({shown}) that margin carries the polarization loss averaged "
        f"over the tumble; the margin at the {float(criteria.fade_percentile):g} % fade (criteria.fade_percentile, "
        "margin_at_fade_db) is lower and does not decide usable passes."
    )


# ---------------------------------------------------------------------------- passes


def numbered_passes(study) -> list[tuple[int, Pass]]:
    """(pass_number, Pass) of the study's targets in AOS order; the number counts from 1 per satellite.

    A caller that forecasts the same study several times (the reflector sweep) predicts them
    once and hands them to :func:`forecast`.
    """
    counters: dict[str, int] = {}
    numbered = []
    for a_pass in study.passes():
        counters[a_pass.satellite] = counters.get(a_pass.satellite, 0) + 1
        numbered.append((counters[a_pass.satellite], a_pass))
    return numbered


def elevation_band(max_elevation_deg) -> np.ndarray:
    """Band label of each culmination elevation (lower edge inclusive; below 0 -> "0-10")."""
    inner_edges = [high for _, high in ELEVATION_BANDS_DEG[:-1]]
    index = np.searchsorted(inner_edges, np.asarray(max_elevation_deg, dtype=float), side="right")
    return np.asarray(ELEVATION_BAND_LABELS, dtype=object)[index]


def local_mean_solar_hour(time_utc: datetime, longitude_deg: float) -> int:
    """Hour (0..23) of local mean solar time: UTC hour + longitude / 15, modulo 24."""
    return int(local_hours([time_utc], LOCAL_MEAN_SOLAR, longitude_deg)[0])


def pass_table(study, numbered: list | None = None) -> pd.DataFrame:
    """One row per (satellite, pass_number), satellites in scenario order, passes in AOS order.

    ``aos_utc``/``tca_utc``/``los_utc`` are timezone-aware python datetimes (UTC);
    ``aos_s``/``los_s`` are seconds from ``study.start_utc``; ``local_hour`` is the hour at TCA,
    0..23, on the station's clock (``study.station.time_zone``, see :mod:`planner.timezones`);
    ``elevation_band`` labels the culmination elevation with :data:`ELEVATION_BANDS_DEG`.
    """
    longitude_deg = float(study.station.longitude_deg)
    time_zone = study.station.time_zone
    order = {s.name: i for i, s in enumerate(study.satellites)}
    numbered = sorted(
        numbered_passes(study) if numbered is None else numbered,
        key=lambda item: (order.get(item[1].satellite, len(order)), item[0]),
    )
    start = study.start_utc
    rows = {
        "satellite": [p.satellite for _, p in numbered],
        "norad_id": np.array([p.norad_id for _, p in numbered], dtype=np.int64),
        "pass_number": np.array([n for n, _ in numbered], dtype=np.int64),
        "aos_utc": pd.Series([p.aos_utc for _, p in numbered], dtype=object),
        "tca_utc": pd.Series([p.tca_utc for _, p in numbered], dtype=object),
        "los_utc": pd.Series([p.los_utc for _, p in numbered], dtype=object),
        "aos_s": np.array([(p.aos_utc - start).total_seconds() for _, p in numbered], dtype=float),
        "los_s": np.array([(p.los_utc - start).total_seconds() for _, p in numbered], dtype=float),
        "duration_s": np.array([p.duration_s for _, p in numbered], dtype=float),
        "max_elevation_deg": np.array([p.max_elevation_deg for _, p in numbered], dtype=float),
    }
    rows["elevation_band"] = elevation_band(rows["max_elevation_deg"])
    rows["local_hour"] = local_hours([p.tca_utc for _, p in numbered], time_zone, longitude_deg)
    rows["aos_clipped"] = np.array([p.aos_clipped for _, p in numbered], dtype=bool)
    rows["los_clipped"] = np.array([p.los_clipped for _, p in numbered], dtype=bool)
    return pd.DataFrame({column: pd.Series(rows[column]).reset_index(drop=True) for column in PASS_COLUMNS})


# ---------------------------------------------------------------------------- samples


def trapezoid_weights(time_s: np.ndarray, group_start: np.ndarray) -> np.ndarray:
    """Trapezoid-rule weight of every sample; ``group_start`` marks the first sample of each pass.

    Weights are half the gap to each neighbour within the pass, so a pass's weights sum to its
    last time minus its first (a one-sample pass weighs 0).
    """
    time_s = np.asarray(time_s, dtype=float)
    if len(time_s) == 0:
        return np.zeros(0)
    gaps = np.diff(time_s)
    gaps[np.asarray(group_start, dtype=bool)[1:]] = 0.0  # no gap across a pass boundary
    return 0.5 * (np.concatenate([[0.0], gaps]) + np.concatenate([gaps, [0.0]]))


def _empty_samples() -> pd.DataFrame:
    frame = pd.DataFrame({column: pd.Series(dtype=float) for column in SAMPLE_COLUMNS})
    frame["candidate"] = frame["candidate"].astype(object)
    frame["satellite"] = frame["satellite"].astype(object)
    frame["pass_number"] = frame["pass_number"].astype(np.int64)
    return frame


def _satellite_tracks(mine: list[tuple[int, Pass]]) -> tuple:
    """One satellite's passes as flat float64 arrays: (pass_number, time_s, dt_s, azimuth, elevation, range)."""
    tracks = [p.sampled_track() for _, p in mine]
    lengths = np.array([len(track) for track in tracks])
    time_s = joined_time_s(tracks)
    first = np.zeros(len(time_s), dtype=bool)
    first[np.cumsum(lengths)[:-1]] = True
    first[0] = True
    return (
        np.repeat(np.array([n for n, _ in mine], dtype=np.int64), lengths),
        time_s,
        trapezoid_weights(time_s, first),
        np.concatenate([track.azimuth_deg for track in tracks]),
        np.concatenate([track.elevation_deg for track in tracks]),
        np.concatenate([track.range_km for track in tracks]),
    )


def _sample_frames(study, names: list[str], progress: Callable[[int, int], None] | None, numbered: list, model_notes: list[str]):
    """(satellite, {candidate: samples frame}) for every satellite with passes, in scenario order.

    A satellite's track arrays exist only while its budgets are evaluated, so memory holds
    one satellite's samples beyond what the caller keeps.
    """
    satellites = [s.name for s in study.satellites]
    by_satellite: dict[str, list[tuple[int, Pass]]] = {}
    for number, a_pass in numbered:
        by_satellite.setdefault(a_pass.satellite, []).append((number, a_pass))
    total = len(names) * len(satellites)
    done = 0
    # The antenna noise integral depends on the candidate and the frequency only: once each here.
    noise_by: dict[tuple[str, float], object] = {}

    def noise(candidate: str, frequency_hz: float):
        key = (candidate, frequency_hz)
        if key not in noise_by:
            noise_by[key] = candidate_antenna_noise(study.candidate(candidate), frequency_hz, study.receiver, study.station)
        return noise_by[key]

    def tick():
        nonlocal done
        done += 1
        if progress is not None:
            progress(done, total)

    for satellite in satellites:
        mine = by_satellite.get(satellite)
        if not mine:
            for _ in names:
                tick()
            continue
        pass_number, time_s, dt_s, azimuth, elevation, range_km = _satellite_tracks(mine)
        n = len(time_s)
        frames = {}
        config = study.satellite_config(satellite)
        for candidate in names:
            setup = downlink_setup(
                config,
                study.candidate(candidate),
                study.receiver,
                study.station,
                fade_percentile=study.criteria.fade_percentile,
                source=study.source,
                antenna_noise=noise(candidate, config.downlink_frequency_hz),
            )
            model_notes.extend(n for n in setup.model_notes if n not in model_notes)
            budget = evaluate(setup, azimuth, elevation, range_km)
            frames[candidate] = pd.DataFrame(
                {
                    "candidate": np.full(n, candidate, dtype=object),
                    "satellite": np.full(n, satellite, dtype=object),
                    "pass_number": pass_number,
                    "time_s": time_s,
                    "dt_s": dt_s,
                    "azimuth_deg": azimuth,
                    "elevation_deg": elevation,
                    "range_km": range_km,
                    "margin_db": budget["margin_db"].to_numpy(),
                    "margin_at_fade_db": budget["margin_at_fade_db"].to_numpy(),
                }
            )
            tick()
        yield satellite, frames


def _checked_candidates(study, candidates: list[str] | None) -> list[str]:
    names = list(study.candidate_names if candidates is None else candidates)
    for name in names:
        study.candidate(name)  # unknown names: one-line UserError
    return names


def compute_samples(
    study,
    candidates: list[str] | None = None,
    *,
    progress: Callable[[int, int], None] | None = None,
    numbered: list | None = None,
    model_notes: list[str] | None = None,
) -> pd.DataFrame:
    """One row per (candidate, satellite, pass, sample) with the downlink margin.

    Columns: :data:`SAMPLE_COLUMNS`; rows by candidate, then satellite (scenario order), pass
    and time.  ``time_s`` counts from ``study.start_utc``; ``dt_s`` is the trapezoid weight of
    the sample (see :func:`trapezoid_weights`).  Passes are predicted once and shared by all
    candidates; the budget's fixed part is set up once per (candidate, satellite) and evaluated
    over all that satellite's samples at once.  ``progress(done, total)`` is called after each
    (candidate, satellite).
    """
    names = _checked_candidates(study, candidates)
    per_candidate: dict[str, list[pd.DataFrame]] = {name: [] for name in names}
    numbered = numbered_passes(study) if numbered is None else numbered
    for _, frames in _sample_frames(study, names, progress, numbered, model_notes if model_notes is not None else []):
        for name, frame in frames.items():
            per_candidate[name].append(frame)
    ordered = [frame for name in names for frame in per_candidate[name]]
    if not ordered:
        return _empty_samples()
    return pd.concat(ordered, ignore_index=True)


# ---------------------------------------------------------------------------- per pass


def usable_windows(time_s, margin_db, threshold_db, group=None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Usable windows of sampled margins: (start_s, end_s, group of each window), in time order.

    ``group`` (one integer per sample, samples of a group contiguous and in time order) keeps
    windows from spanning two passes; None means one group.  Window edges are the group's first
    or last time when that sample is usable, else the linearly interpolated threshold crossing
    between the usable sample and its unusable neighbour.  NaN margins are unusable; an edge
    next to one sits on the usable sample.
    """
    t = np.asarray(time_s, dtype=float)
    m = np.asarray(margin_db, dtype=float)
    g = np.zeros(len(t), dtype=np.int64) if group is None else np.asarray(group)
    n = len(t)
    if n == 0:
        return np.zeros(0), np.zeros(0), np.zeros(0, dtype=g.dtype)
    ok = m >= threshold_db
    first = np.ones(n, dtype=bool)
    first[1:] = g[1:] != g[:-1]
    last = np.ones(n, dtype=bool)
    last[:-1] = g[1:] != g[:-1]
    previous_ok = np.zeros(n, dtype=bool)
    previous_ok[1:] = ok[:-1]
    next_ok = np.zeros(n, dtype=bool)
    next_ok[:-1] = ok[1:]
    opens = np.nonzero(ok & (first | ~previous_ok))[0]
    closes = np.nonzero(ok & (last | ~next_ok))[0]

    def crossing(inside, outside):
        """Where the margin, linear from the usable sample to its neighbour, meets the threshold."""
        with np.errstate(divide="ignore", invalid="ignore"):
            fraction = (m[inside] - threshold_db) / (m[inside] - m[outside])
        fraction = np.where(np.isfinite(fraction), np.clip(fraction, 0.0, 1.0), 0.0)
        return t[inside] + fraction * (t[outside] - t[inside])

    start_s = t[opens].copy()
    inner = ~first[opens]
    start_s[inner] = crossing(opens[inner], opens[inner] - 1)
    end_s = t[closes].copy()
    inner = ~last[closes]
    end_s[inner] = crossing(closes[inner], closes[inner] + 1)
    return start_s, end_s, g[opens]


def is_usable_pass(usable_s, criteria: CriteriaConfig) -> np.ndarray:
    """Whether each pass counts: at least ``criteria.min_usable_s`` of usable time."""
    return np.asarray(usable_s, dtype=float) >= float(criteria.min_usable_s)


def pass_dropouts(start_s, end_s, window_group, usable_pass) -> tuple[np.ndarray, np.ndarray]:
    """Dropouts of each pass, (count, seconds): the one definition every screen and file uses.

    A *dropout* is a stretch of a usable pass (``usable_pass``, one flag per pass) where the
    margin that decides usability (``margin_db``, piecewise linear between samples) falls below
    ``criteria.min_margin_db`` between two of the pass's usable windows and comes back: the
    signature of a pattern null or a polarization fade mid-pass.  It runs from the window that
    closes to the next that opens, and every such gap counts, however short.  The unusable
    low-elevation ends of a pass (before its first and after its last window) are not dropouts,
    and a pass that is not usable counts none: there is no contact to drop out of.  Windows are
    given as from :func:`usable_windows` (``window_group`` is the pass index of each window, in
    time order); totals are sums of these per-pass counts over the passes a screen counts.
    """
    usable_pass = np.asarray(usable_pass, dtype=bool)
    n_groups = len(usable_pass)
    window_group = np.asarray(window_group)
    same = window_group[1:] == window_group[:-1]  # consecutive windows of one pass
    gap_group = window_group[1:][same]
    gap_s = (np.asarray(start_s, dtype=float)[1:] - np.asarray(end_s, dtype=float)[:-1])[same]
    counted = usable_pass[gap_group]
    dropouts = np.bincount(gap_group[counted], minlength=n_groups).astype(np.int64)
    dropout_s = np.bincount(gap_group[counted], weights=gap_s[counted], minlength=n_groups)
    return dropouts, dropout_s


def _empty_outcomes(passes: pd.DataFrame) -> pd.DataFrame:
    frame = pd.DataFrame({column: pd.Series(dtype=object) for column in OUTCOME_COLUMNS})
    for column in PASS_COLUMNS:
        frame[column] = frame[column].astype(passes[column].dtype if column in passes else object)
    return frame


def summarize_passes(
    samples: pd.DataFrame, passes: pd.DataFrame, criteria: CriteriaConfig, satellites, *, margin_shift_db: float = 0.0
) -> pd.DataFrame:
    """One row per (candidate, satellite, pass_number): the pass table's columns and outcomes.

    Candidates are those in ``samples`` (in order of appearance); every pass of ``passes``
    appears for each.  ``margin_shift_db`` is added to every margin first (the robustness
    check: +x dB is x dB more EIRP); it costs no budget recomputation.  ``value`` is
    ``weight * data_volume_bit`` or ``weight * usable_s`` per ``criteria.objective`` for every
    pass; totals and the schedule count usable passes only (filter on ``usable``). ``satellites``
    are the satellites' configurations (their radio: data rate, framing, modulation, weight).
    """
    threshold_db = float(criteria.min_margin_db)
    candidates = list(pd.unique(samples["candidate"])) if len(samples) else []
    if not candidates or len(passes) == 0:
        return _empty_outcomes(passes)
    # Samples in (candidate, satellite, pass, time) order, names as integer codes (sorting
    # and grouping strings is what a catalog's millions of rows would spend their time on);
    # a group is one (candidate, satellite, pass).
    candidate_code, _ = pd.factorize(samples["candidate"])
    satellite_code, _ = pd.factorize(samples["satellite"])
    pass_number = samples["pass_number"].to_numpy()
    time_s = samples["time_s"].to_numpy(dtype=float)
    order = np.lexsort((time_s, pass_number, satellite_code, candidate_code))
    code = np.stack([candidate_code[order], satellite_code[order], pass_number[order]])
    new_group = np.ones(len(order), dtype=bool)
    new_group[1:] = np.any(code[:, 1:] != code[:, :-1], axis=0)
    group = np.cumsum(new_group) - 1
    keys = samples.loc[:, _KEYS].iloc[order[new_group]].reset_index(drop=True)
    n_groups = len(keys)
    margin = samples["margin_db"].to_numpy(dtype=float)[order] + float(margin_shift_db)
    start_s, end_s, window_group = usable_windows(time_s[order], margin, threshold_db, group)

    length = end_s - start_s
    usable_s = np.bincount(window_group, weights=length, minlength=n_groups)
    count = np.bincount(window_group, minlength=n_groups)
    dropouts, dropout_s = pass_dropouts(start_s, end_s, window_group, is_usable_pass(usable_s, criteria))
    first_usable = np.full(n_groups, np.nan)
    last_usable = np.full(n_groups, np.nan)
    has = count > 0
    first_index = np.concatenate([[0], np.cumsum(count)[:-1]])
    first_usable[has] = start_s[first_index[has]]
    last_usable[has] = end_s[(first_index + count - 1)[has]]
    window_pairs = list(zip(start_s.tolist(), end_s.tolist()))
    windows = [window_pairs[a : a + c] for a, c in zip(first_index.tolist(), count.tolist())]
    stats = pd.Series(margin).groupby(group).agg(["min", "median", "max"]).reindex(range(n_groups))

    metrics = keys.assign(
        usable_s=usable_s,
        usable_windows=pd.Series(windows, dtype=object),
        first_usable_s=first_usable,
        last_usable_s=last_usable,
        dropouts=dropouts.astype(np.int64),
        dropout_s=dropout_s,
        min_margin_db=stats["min"].to_numpy(),
        median_margin_db=stats["median"].to_numpy(),
        max_margin_db=stats["max"].to_numpy(),
    )
    grid = pd.DataFrame({"candidate": candidates}).merge(passes.loc[:, list(PASS_COLUMNS)], how="cross")
    outcomes = grid.merge(metrics, on=_KEYS, how="left", validate="one_to_one")
    missing = outcomes["usable_s"].isna().to_numpy()
    if missing.any():  # a pass without samples
        outcomes.loc[missing, ["usable_s", "dropouts", "dropout_s"]] = 0
        outcomes["dropouts"] = outcomes["dropouts"].astype(np.int64)
        outcomes["usable_windows"] = pd.Series(
            [w if isinstance(w, list) else [] for w in outcomes["usable_windows"]], index=outcomes.index, dtype=object
        )

    radio = {s.name: s for s in satellites}
    sat_names = outcomes["satellite"].to_numpy()
    rate_bps = np.array([float(radio[s].data_rate_bps) for s in sat_names])
    framing = np.array([float(radio[s].framing_efficiency) for s in sat_names])
    voice = np.array([radio[s].modulation in VOICE_MODULATIONS for s in sat_names], dtype=bool)
    weight = np.array([float(radio[s].weight) for s in sat_names])
    usable_time = outcomes["usable_s"].to_numpy(dtype=float)
    volume = np.where(voice, 0.0, usable_time * rate_bps * framing)
    outcomes["usable"] = is_usable_pass(usable_time, criteria)
    outcomes["data_volume_bit"] = volume
    outcomes["weight"] = weight
    outcomes["value"] = weight * (volume if criteria.objective == "data-volume" else usable_time)
    return outcomes.loc[:, list(OUTCOME_COLUMNS)].reset_index(drop=True)


# ---------------------------------------------------------------------------- totals


def _totals(outcomes: pd.DataFrame, by: list[str]) -> pd.DataFrame:
    usable = outcomes["usable"].to_numpy(dtype=bool)
    frame = outcomes.loc[:, by].assign(
        passes=1,
        usable_passes=usable.astype(np.int64),
        usable_minutes=np.where(usable, outcomes["usable_s"].to_numpy(dtype=float), 0.0) / 60.0,
        data_volume_mbit=np.where(usable, outcomes["data_volume_bit"].to_numpy(dtype=float), 0.0) / 1e6,
        dropouts=outcomes["dropouts"].to_numpy(dtype=np.int64),
    )
    return frame.groupby(by, sort=False).sum().reset_index()


def _full_grid(totals: pd.DataFrame, by: list[str], levels: list[list]) -> pd.DataFrame:
    """Every combination of ``levels`` (in that order), zeros where there were no passes."""
    index = pd.MultiIndex.from_product(levels, names=by)
    full = totals.set_index(by).reindex(index, fill_value=0).reset_index()
    for column in ("passes", "usable_passes", "dropouts"):
        if column in full:
            full[column] = full[column].astype(np.int64)
    return full


def weekly_table(
    outcomes: pd.DataFrame,
    days: float,
    *,
    candidates: Sequence[str] | None = None,
    satellites: Sequence[str] | None = None,
) -> pd.DataFrame:
    """One row per (candidate, satellite): the ``planner week`` contract columns and per-day rates.

    ``passes`` counts every pass, ``usable_passes`` those with ``usable``; ``usable_minutes`` and
    ``data_volume_mbit`` (10^6 bit) and ``dropouts`` (:func:`pass_dropouts`) total the usable
    passes only.  There is no one-receiver limit: every usable pass of every satellite counts, even
    when passes overlap (:func:`schedule` applies the limit).
    Rows follow the order of appearance in ``outcomes``, or ``candidates`` x ``satellites`` when
    given (then pairs without passes get zero rows).
    """
    days = float(days)
    if not days > 0:
        raise ValueError(f"days must be positive, got {days!r}")
    by = ["candidate", "satellite"]
    totals = _totals(outcomes, by)
    if candidates is not None or satellites is not None:
        levels = [
            list(candidates) if candidates is not None else list(pd.unique(outcomes["candidate"])),
            list(satellites) if satellites is not None else list(pd.unique(outcomes["satellite"])),
        ]
        totals = _full_grid(totals, by, levels)
    totals["usable_minutes_per_day"] = totals["usable_minutes"] / days
    totals["data_volume_mbit_per_day"] = totals["data_volume_mbit"] / days
    return totals.loc[:, list(WEEKLY_COLUMNS)].reset_index(drop=True)


def tables_used(study, weekly: pd.DataFrame) -> list[str]:
    """The file name of the pattern table each (candidate, satellite) row of ``weekly`` uses.

    A candidate of several bands hears each satellite on the band nearest its downlink
    frequency (planner.link.budget.nearest_band), so the screens name that table.
    """
    return [
        pattern_file_name(nearest_band(study.candidate(c), study.satellite_config(s).downlink_frequency_hz).pattern)
        for c, s in zip(weekly["candidate"], weekly["satellite"], strict=True)
    ]


def band_table(outcomes: pd.DataFrame) -> pd.DataFrame:
    """Per (candidate, elevation_band), every band listed: passes, usable_passes, usable_minutes, data_volume_mbit."""
    by = ["candidate", "elevation_band"]
    totals = _full_grid(_totals(outcomes, by), by, [list(pd.unique(outcomes["candidate"])), list(ELEVATION_BAND_LABELS)])
    return totals.loc[:, by + list(TOTAL_COLUMNS)]


def hour_table(outcomes: pd.DataFrame, time_zone: str = DEFAULT_TIME_ZONE) -> pd.DataFrame:
    """Per (candidate, local_hour 0..23 at TCA), every hour listed: as :func:`band_table`.

    ``time_zone`` names the clock the outcomes' ``local_hour`` was computed on (the station's,
    :func:`planner.timezones.zone_label`); it fills a last ``time_zone`` column so a table on
    its own says which hours it counts.
    """
    by = ["candidate", "local_hour"]
    totals = _full_grid(_totals(outcomes, by), by, [list(pd.unique(outcomes["candidate"])), list(HOURS)])
    totals["local_hour"] = totals["local_hour"].astype(np.int64)
    totals["time_zone"] = time_zone
    return totals.loc[:, by + list(TOTAL_COLUMNS) + ["time_zone"]]


# ---------------------------------------------------------------------------- schedule


def weighted_interval_schedule(starts, ends, values) -> tuple[float, np.ndarray]:
    """Non-overlapping intervals of greatest total value: (best_value, chosen indices in time order).

    Exact, O(n log n): sort by (end, start), find for each interval the number of earlier ones
    ending at or before its start by binary search, and run the dynamic programme
    ``best[j + 1] = max(best[j], value_j + best[p_j])`` (Kleinberg & Tardos, *Algorithm Design*,
    6.1), then walk it back.  Intervals touching at an end point do not overlap.  Intervals of
    value <= 0 are taken only when they cost nothing.
    """
    starts = np.asarray(starts, dtype=float).ravel()
    ends = np.asarray(ends, dtype=float).ravel()
    values = np.asarray(values, dtype=float).ravel()
    if not (len(starts) == len(ends) == len(values)):
        raise ValueError("starts, ends and values must have the same length")
    if not (np.all(np.isfinite(starts)) and np.all(np.isfinite(ends)) and np.all(np.isfinite(values))):
        raise ValueError("starts, ends and values must be finite")
    if np.any(ends < starts):
        raise ValueError("every interval must end at or after its start")
    n = len(starts)
    if n == 0:
        return 0.0, np.zeros(0, dtype=np.int64)
    order = np.lexsort((starts, ends))
    s, e, v = starts[order], ends[order], values[order]
    # Earlier intervals compatible with j: those ending at or before its start (a prefix).
    predecessor = np.minimum(np.searchsorted(e, s, side="right"), np.arange(n))
    best = np.zeros(n + 1)
    for j in range(n):
        best[j + 1] = max(best[j], v[j] + best[predecessor[j]])
    chosen = []
    j = n
    while j > 0:
        k = j - 1
        if v[k] + best[predecessor[k]] >= best[k]:
            chosen.append(k)
            j = int(predecessor[k])
        else:
            j = k
    return float(best[n]), order[np.array(chosen[::-1], dtype=np.int64)]


@dataclass
class ScheduleResult:
    """What one receiver can take of one candidate's usable passes."""

    chosen: pd.DataFrame  # outcome rows taken, in time order
    value: float  # their total value
    unconstrained_value: float  # total value of all usable passes (a receiver per pass)
    lost_value: float  # unconstrained_value - value
    lost_passes: pd.DataFrame  # usable passes dropped for an overlap, in time order


def schedule(outcomes: pd.DataFrame) -> ScheduleResult:
    """One receiver, one candidate: the best non-overlapping set of usable passes.

    Each usable pass occupies ``[first_usable_s, last_usable_s]`` (all satellites compete) and
    is worth its ``value``.  Raises ValueError when ``outcomes`` mixes candidates.
    """
    names = pd.unique(outcomes["candidate"]) if len(outcomes) else []
    if len(names) > 1:
        raise ValueError(f"schedule takes the outcomes of one candidate, got {len(names)}: {', '.join(map(str, names))}")
    usable = outcomes.loc[outcomes["usable"].astype(bool)]
    usable = usable.sort_values(["first_usable_s", "last_usable_s"], kind="stable")
    best, chosen = weighted_interval_schedule(
        usable["first_usable_s"].to_numpy(dtype=float),
        usable["last_usable_s"].to_numpy(dtype=float),
        usable["value"].to_numpy(dtype=float),
    )
    taken = np.zeros(len(usable), dtype=bool)
    taken[chosen] = True
    unconstrained = float(usable["value"].sum())
    return ScheduleResult(
        chosen=usable.loc[taken].reset_index(drop=True),
        value=best,
        unconstrained_value=unconstrained,
        lost_value=unconstrained - best,
        lost_passes=usable.loc[~taken].reset_index(drop=True),
    )


DROPPED_COLUMNS = (
    "satellite",
    "norad_id",
    "pass_number",
    "aos_utc",
    "usable_start_utc",
    "usable_end_utc",
    "usable_s",
    "value",
    "conflicts_with_satellite",
    "conflicts_with_pass_number",
    "conflicts_with_aos_utc",
    "overlap_s",
)


def usable_span_utc(rows: pd.DataFrame) -> tuple[list, list]:
    """(first, last) usable moment of each outcome row as UTC datetimes (None where it has none).

    ``aos_utc - aos_s`` is the window start, so ``aos_utc + (first_usable_s - aos_s)`` is the first
    usable moment without needing the study.
    """
    firsts, lasts = [], []
    for aos_utc, aos_s, first_s, last_s in zip(rows["aos_utc"], rows["aos_s"], rows["first_usable_s"], rows["last_usable_s"]):
        usable = np.isfinite(first_s) and np.isfinite(last_s)
        firsts.append(aos_utc + timedelta(seconds=float(first_s - aos_s)) if usable else None)
        lasts.append(aos_utc + timedelta(seconds=float(last_s - aos_s)) if usable else None)
    return firsts, lasts


def dropped_for_conflicts(result: ScheduleResult) -> pd.DataFrame:
    """The usable passes the one-receiver schedule left out, each with the kept pass it overlaps longest.

    Columns :data:`DROPPED_COLUMNS`, in time order.  The kept passes do not overlap, so sorted by
    start they are sorted by end too, and the kept passes overlapping ``[start, end]`` are the run
    of those ending after ``start`` and starting before ``end`` (two binary searches).  The
    ``conflicts_with_*`` columns are empty (None) for a pass that overlaps no kept pass (only a
    pass worth nothing can be left out so).
    """
    kept = result.chosen.sort_values(["first_usable_s", "last_usable_s"], kind="stable").reset_index(drop=True)
    lost = result.lost_passes.sort_values(["first_usable_s", "last_usable_s"], kind="stable").reset_index(drop=True)
    kept_start = kept["first_usable_s"].to_numpy(dtype=float)
    kept_end = kept["last_usable_s"].to_numpy(dtype=float)
    start = lost["first_usable_s"].to_numpy(dtype=float)
    end = lost["last_usable_s"].to_numpy(dtype=float)
    low = np.searchsorted(kept_end, start, side="right")
    high = np.searchsorted(kept_start, end, side="left")
    partner: list[int | None] = []
    overlap_s: list[float | None] = []
    for i, (a, b) in enumerate(zip(low.tolist(), high.tolist())):  # one step per dropped pass
        if a >= b:
            partner.append(None)
            overlap_s.append(None)
            continue
        overlap = np.minimum(kept_end[a:b], end[i]) - np.maximum(kept_start[a:b], start[i])
        best = int(np.argmax(overlap))
        partner.append(a + best)
        overlap_s.append(float(overlap[best]))
    firsts, lasts = usable_span_utc(lost)

    def of_partner(column: str) -> list:
        return [None if k is None else kept.at[k, column] for k in partner]

    frame = pd.DataFrame(
        {
            "satellite": lost["satellite"].to_numpy(dtype=object),
            "norad_id": lost["norad_id"].to_numpy(),
            "pass_number": lost["pass_number"].to_numpy(),
            "aos_utc": pd.Series(list(lost["aos_utc"]), dtype=object),
            "usable_start_utc": pd.Series(firsts, dtype=object),
            "usable_end_utc": pd.Series(lasts, dtype=object),
            "usable_s": lost["usable_s"].to_numpy(dtype=float),
            "value": lost["value"].to_numpy(dtype=float),
            "conflicts_with_satellite": pd.Series(of_partner("satellite"), dtype=object),
            "conflicts_with_pass_number": pd.Series(of_partner("pass_number"), dtype=object),
            "conflicts_with_aos_utc": pd.Series(of_partner("aos_utc"), dtype=object),
            "overlap_s": pd.Series(overlap_s, dtype=object),
        }
    )
    return frame.loc[:, list(DROPPED_COLUMNS)]


# ---------------------------------------------------------------------------- bundle


@dataclass
class Forecast:
    """Everything the forecast computes for a study, ready for ranking, tables and plots."""

    samples: pd.DataFrame
    passes: pd.DataFrame
    outcomes: pd.DataFrame
    weekly: pd.DataFrame
    days: float
    criteria: CriteriaConfig
    model_notes: list[str] = field(default_factory=list)  # models used beyond their range, once each

    @property
    def candidates(self) -> list[str]:
        return list(pd.unique(self.weekly["candidate"]))

    def outcomes_of(self, candidate: str) -> pd.DataFrame:
        return self.outcomes.loc[self.outcomes["candidate"] == candidate].reset_index(drop=True)

    def schedule(self, candidate: str) -> ScheduleResult:
        return schedule(self.outcomes_of(candidate))


# Samples summarized at once when the samples are not kept (about 100 MB of frame).
_SUMMARY_BATCH_ROWS = 1_000_000


def forecast(
    study,
    candidates: list[str] | None = None,
    progress: Callable[[int, int], None] | None = None,
    *,
    keep_samples: bool = True,
    numbered: list | None = None,
) -> Forecast:
    """Samples, pass table, per-pass outcomes and weekly totals of a study's candidates.

    ``keep_samples=False`` is for catalogs (thousands of objects, tens of millions of samples):
    the samples are summarized a batch of satellites at a time and dropped, so memory follows
    the number of passes rather than samples, and ``Forecast.samples`` is empty.  The outcomes
    and totals are the same either way.
    """
    names = _checked_candidates(study, candidates)
    numbered = numbered_passes(study) if numbered is None else numbered
    passes = pass_table(study, numbered)
    model_notes: list[str] = []
    if keep_samples:
        samples = compute_samples(study, names, progress=progress, numbered=numbered, model_notes=model_notes)
        outcomes = summarize_passes(samples, passes, study.criteria, study.satellites)
    else:
        samples = _empty_samples()
        outcomes = _summarized_in_batches(study, names, passes, progress, numbered, model_notes)
    weekly = weekly_table(outcomes, study.days, candidates=names, satellites=[s.name for s in study.satellites])
    weekly["pattern_table"] = tables_used(study, weekly)
    return Forecast(
        samples=samples,
        passes=passes,
        outcomes=outcomes,
        weekly=weekly,
        days=study.days,
        criteria=study.criteria,
        model_notes=model_notes,
    )


def _summarized_in_batches(
    study, names: list[str], passes: pd.DataFrame, progress, numbered: list, model_notes: list[str]
) -> pd.DataFrame:
    """``summarize_passes`` over batches of satellites, in the order it gives for all at once."""
    parts: list[pd.DataFrame] = []
    batch: list[pd.DataFrame] = []
    batch_satellites: list[str] = []
    rows = 0

    def flush():
        samples = pd.concat(batch, ignore_index=True)
        mine = passes.loc[passes["satellite"].isin(batch_satellites)]
        parts.append(summarize_passes(samples, mine, study.criteria, study.satellites))
        batch.clear()
        batch_satellites.clear()

    for satellite, frames in _sample_frames(study, names, progress, numbered, model_notes):
        batch.extend(frames.values())
        batch_satellites.append(satellite)
        rows += sum(len(frame) for frame in frames.values())
        if rows >= _SUMMARY_BATCH_ROWS:
            flush()
            rows = 0
    if batch:
        flush()
    if not parts:
        return _empty_outcomes(passes)
    outcomes = pd.concat(parts, ignore_index=True)
    # summarize_passes orders its rows by candidate, then as the pass table (satellite, pass).
    candidate_rank = {name: k for k, name in enumerate(names)}
    satellite_rank = {s.name: k for k, s in enumerate(study.satellites)}
    order = np.lexsort(
        (
            outcomes["pass_number"].to_numpy(),
            outcomes["satellite"].map(satellite_rank).to_numpy(),
            outcomes["candidate"].map(candidate_rank).to_numpy(),
        )
    )
    return outcomes.iloc[order].reset_index(drop=True)
