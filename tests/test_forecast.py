"""Forecast: usable windows, dropouts, data volume, totals and the one-receiver schedule.

Synthetic margin series check the window arithmetic against crossings worked out by hand; the
demo scenario, shortened to one day, checks the bookkeeping on real passes and budgets.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import itertools
import warnings
from datetime import timedelta
from math import log10
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.decision import forecast as forecast_module
from planner.decision.forecast import (
    ELEVATION_BAND_LABELS,
    ELEVATION_BANDS_DEG,
    NO_RECEIVER_LIMIT_TEXT,
    PASS_COLUMNS,
    SAMPLE_COLUMNS,
    band_table,
    compute_samples,
    forecast,
    hour_table,
    schedule,
    summarize_passes,
    usable_rule_text,
    weekly_table,
    weighted_interval_schedule,
)
from planner.errors import PlannerWarning
from planner.link.budget import pass_budget
from planner.output.export import week_rows
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO

WEEK_COLUMNS = ["candidate", "satellite", "passes", "usable_passes", "usable_minutes", "data_volume_mbit", "dropouts"]


def one_day(scenario, **satellite_changes):
    """The scenario with a one-day window (and, optionally, every satellite's radio changed)."""
    window = scenario.window.model_copy(update={"days": 1})
    satellites = [s.model_copy(update={k: f(s) for k, f in satellite_changes.items()}) for s in scenario.satellite]
    return scenario.model_copy(update={"window": window, "satellite": satellites})


@pytest.fixture(scope="module")
def scenario():
    return load_scenario(DEMO)


@pytest.fixture(scope="module")
def study(scenario):
    return Study.from_scenario(one_day(scenario))


@pytest.fixture(scope="module")
def day(study):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)  # P.372 extrapolation notes
        return forecast(study)


# ------------------------------------------------------------------ synthetic passes


def synthetic(study, series, satellite="WRENLING-1", candidate="test"):
    """samples and pass-table frames for passes given as [(time_s array, margin_db array), ...]."""
    sample_frames, pass_rows = [], []
    start = study.start_utc
    for number, (time_s, margin_db) in enumerate(series, start=1):
        time_s = np.asarray(time_s, dtype=float)
        sample_frames.append(
            pd.DataFrame(
                {
                    "candidate": candidate,
                    "satellite": satellite,
                    "pass_number": number,
                    "time_s": time_s,
                    "dt_s": np.gradient(time_s),
                    "azimuth_deg": 0.0,
                    "elevation_deg": 45.0,
                    "range_km": 1000.0,
                    "margin_db": np.asarray(margin_db, dtype=float),
                    "margin_at_fade_db": np.asarray(margin_db) - 1.0,
                }
            )
        )
        aos, los = float(time_s[0]), float(time_s[-1])
        pass_rows.append(
            {
                "satellite": satellite,
                "norad_id": 99901,
                "pass_number": number,
                "aos_utc": start + timedelta(seconds=aos),
                "tca_utc": start + timedelta(seconds=(aos + los) / 2),
                "los_utc": start + timedelta(seconds=los),
                "aos_s": aos,
                "los_s": los,
                "duration_s": los - aos,
                "max_elevation_deg": 45.0,
                "elevation_band": "30-60",
                "local_hour": 0,
                "aos_clipped": False,
                "los_clipped": False,
            }
        )
    return pd.concat(sample_frames, ignore_index=True), pd.DataFrame(pass_rows, columns=list(PASS_COLUMNS))


def test_usable_window_crossings_are_linearly_interpolated(study):
    # A margin that is piecewise linear with its knots on sample times is reproduced exactly by
    # linear interpolation, so the threshold crossings are known in closed form (algebra):
    # pass 1: m = 10.25 - |t - 300| / 20 meets 3 dB at |t - 300| = 145 -> t = 155 and 445;
    # pass 2: m = 8.25 - t / 20 (t from 1000) is usable from AOS and meets 3 dB at t = 1105.
    threshold = study.scenario.criteria.min_margin_db
    assert threshold == 3.0
    t1 = np.arange(0.0, 601.0, 10.0)
    t2 = np.arange(1000.0, 1201.0, 10.0)
    samples, passes = synthetic(study, [(t1, 10.25 - np.abs(t1 - 300.0) / 20.0), (t2, 8.25 - (t2 - 1000.0) / 20.0)])
    out = summarize_passes(samples, passes, study.criteria, study.satellites)
    first, second = out.iloc[0], out.iloc[1]
    assert first.usable_windows == [pytest.approx((155.0, 445.0), abs=1e-9)]
    assert first.usable_s == pytest.approx(290.0, abs=1e-9)
    assert (first.first_usable_s, first.last_usable_s) == pytest.approx((155.0, 445.0), abs=1e-9)
    # The pass edge is the AOS when the first sample is usable (the interface's definition).
    assert second.usable_windows == [pytest.approx((1000.0, 1105.0), abs=1e-9)]
    assert second.usable_s == pytest.approx(105.0, abs=1e-9)
    assert first.dropouts == second.dropouts == 0
    # Margin statistics are the sample extremes: 10.25 at t = 300, 10.25 - 15 at the ends.
    assert (first.min_margin_db, first.max_margin_db) == pytest.approx((-4.75, 10.25))
    # A pass with no usable sample has no window and NaN first/last usable times.
    samples, passes = synthetic(study, [(t1, np.full(len(t1), 2.99))])
    none = summarize_passes(samples, passes, study.criteria, study.satellites).iloc[0]
    assert none.usable_s == 0.0 and none.usable_windows == [] and np.isnan(none.first_usable_s) and not none.usable


def test_mid_pass_dip_is_one_dropout_and_low_ends_are_not(study):
    # Margin knots (t, dB): (0,-5) (100,6) (200,6) (250,-1) (300,6) (400,6) (500,-5), sampled every
    # 10 s. Crossings of 3 dB (algebra): 800/11, 200 + 150/7, 300 - 150/7, 400 + 300/11 s.
    # The dip between the two windows is the only dropout; the low ends below 3 dB at AOS and
    # LOS are not (the interface's definition of a dropout).
    t = np.arange(0.0, 501.0, 10.0)
    margin = np.interp(t, [0, 100, 200, 250, 300, 400, 500], [-5, 6, 6, -1, 6, 6, -5])
    samples, passes = synthetic(study, [(t, margin)])
    row = summarize_passes(samples, passes, study.criteria, study.satellites).iloc[0]
    a, b, c, d = 800 / 11, 200 + 150 / 7, 300 - 150 / 7, 400 + 300 / 11
    assert row.usable_windows == [pytest.approx((a, b), abs=1e-9), pytest.approx((c, d), abs=1e-9)]
    assert row.dropouts == 1
    assert row.dropout_s == pytest.approx(c - b, abs=1e-9)
    assert row.usable_s == pytest.approx((b - a) + (d - c), abs=1e-9)
    assert (row.first_usable_s, row.last_usable_s) == pytest.approx((a, d), abs=1e-9)
    # +4.5 dB lifts the dip's bottom (-1 dB) to 3.5 dB >= 3 dB: one window, no dropout.
    lifted = summarize_passes(samples, passes, study.criteria, study.satellites, margin_shift_db=4.5).iloc[0]
    assert lifted.dropouts == 0 and len(lifted.usable_windows) == 1


def test_windows_do_not_span_two_passes(study):
    # Two passes back to back, the first ending usable and the second starting usable: each pass
    # keeps its own window (windows are per pass by definition), no window or dropout across them.
    t1, t2 = np.arange(0.0, 101.0, 10.0), np.arange(200.0, 301.0, 10.0)
    samples, passes = synthetic(study, [(t1, np.full(len(t1), 5.0)), (t2, np.full(len(t2), 5.0))])
    out = summarize_passes(samples, passes, study.criteria, study.satellites)
    assert out.usable_windows.tolist() == [[(0.0, 100.0)], [(200.0, 300.0)]]
    assert out.dropouts.tolist() == [0, 0]


# ------------------------------------------------------------------ the demo day


def test_data_volume_is_usable_time_times_rate_times_framing(day, study):
    # Definition (the forecast's contract): data volume = usable seconds x data rate x framing efficiency, and 0
    # for FM voice whose usable time still counts; value = weight x volume (objective data_volume).
    out = day.outcomes
    assert len(out) > 0
    for row in out.itertuples():
        sat = study.scenario.satellite_named(row.satellite)
        expected = 0.0 if sat.modulation == "fm" else row.usable_s * sat.data_rate_bps * sat.framing_efficiency
        assert row.data_volume_bit == pytest.approx(expected, rel=1e-12, abs=1e-9)
        assert row.value == pytest.approx(sat.weight * expected, rel=1e-12, abs=1e-9)
        assert row.usable == (row.usable_s >= study.scenario.criteria.min_usable_s)
    voice = out[out.satellite == "CALDERWISP"]
    assert (voice.data_volume_bit == 0).all()
    assert (voice.usable_s > 0).any(), "the FM repeater should have usable time on some candidate"
    # Under the usable-time objective the value is weight x usable seconds, FM included.
    timed = study.criteria.model_copy(update={"objective": "usable-time"})
    again = summarize_passes(day.samples, day.passes, timed, study.satellites)
    weights = again.satellite.map({s.name: s.weight for s in study.scenario.satellite})
    np.testing.assert_allclose(again.value, weights * again.usable_s, rtol=1e-12)


def test_dt_sums_to_duration_and_every_pass_for_every_candidate(day, study):
    # Trapezoid rule: the weights integrate a constant exactly, so they sum to LOS - AOS
    # (numerical analysis, composite trapezoid rule). Durations come from datetimes rounded to
    # the microsecond, hence 1e-5 s.
    samples, passes = day.samples, day.passes
    assert list(samples.columns) == list(SAMPLE_COLUMNS)
    assert len(passes) > 10
    totals = samples.groupby(["candidate", "satellite", "pass_number"]).dt_s.sum()
    for candidate in study.candidate_names:
        for row in passes.itertuples():
            assert totals[(candidate, row.satellite, row.pass_number)] == pytest.approx(row.duration_s, abs=1e-5)
    assert (samples.dt_s >= 0).all()
    # Every (satellite, pass) appears once for every candidate in the outcomes.
    keys = set(zip(passes.satellite, passes.pass_number))
    for candidate in study.candidate_names:
        mine = day.outcomes[day.outcomes.candidate == candidate]
        assert len(mine) == len(passes)
        assert set(zip(mine.satellite, mine.pass_number)) == keys
    # pass_number counts 1, 2, ... per satellite in AOS order.
    for _, group in passes.groupby("satellite"):
        assert group.sort_values("aos_s").pass_number.tolist() == list(range(1, len(group) + 1))


def test_samples_match_the_per_pass_budget(day, study):
    # compute_samples evaluates each (candidate, satellite) budget over all samples at once; it
    # must equal planner.link.budget.pass_budget run pass by pass (the budget is per sample).
    # Consistency check, no outside value: two paths through the code must agree; the budget
    # itself is checked against published formulas in test_budget.py.
    passes = study.passes()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)
        for candidate in ("turnstile-far", "isotropic-reference"):
            for satellite in ("WRENLING-1", "CALDERWISP"):
                setup = study.downlink_setup(satellite, candidate)
                mine = [p for p in passes if p.satellite == satellite]
                for number, a_pass in enumerate(mine[:3], start=1):
                    expected = pass_budget(setup, a_pass)
                    got = day.samples[
                        (day.samples.candidate == candidate)
                        & (day.samples.satellite == satellite)
                        & (day.samples.pass_number == number)
                    ]
                    np.testing.assert_allclose(got.time_s, expected.time_s)
                    np.testing.assert_allclose(got.margin_db, expected.margin_db, rtol=0, atol=1e-12)
                    np.testing.assert_allclose(got.margin_at_fade_db, expected.margin_at_fade_db, rtol=0, atol=1e-12)


def test_progress_is_reported_per_candidate_and_satellite(study):
    calls = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)
        compute_samples(study, ["isotropic-reference", "turnstile-far"], progress=lambda d, t: calls.append((d, t)))
    total = 2 * len(study.scenario.satellite)
    assert calls == [(k, total) for k in range(1, total + 1)]


def test_pass_table_local_hour_and_band(day, study):
    # Local hours are the civil hour at TCA on the station's clock (the demo keeps Europe/London);
    # the reference is the IANA database through the standard library's zoneinfo. Other zones,
    # the UTC default and mean solar time: tests/test_timezone.py.
    clock = ZoneInfo(study.station.time_zone)
    for row in day.passes.itertuples():
        assert row.local_hour == row.tca_utc.astimezone(clock).hour
        low, high = ELEVATION_BANDS_DEG[ELEVATION_BAND_LABELS.index(row.elevation_band)]
        assert low <= row.max_elevation_deg < high or (high == 90 and row.max_elevation_deg <= 90)
        assert row.aos_s == pytest.approx((row.aos_utc - study.start_utc).total_seconds(), abs=1e-6)
        assert row.aos_utc <= row.tca_utc <= row.los_utc


def test_weekly_table_contract_and_totals(day, study):
    # The "planner week" contract columns, then totals recomputed from the per-pass rows.
    weekly = day.weekly
    assert list(weekly.columns[: len(WEEK_COLUMNS)]) == WEEK_COLUMNS
    assert len(weekly) == len(study.candidate_names) * len(study.scenario.satellite)
    out = day.outcomes
    for row in weekly.itertuples():
        mine = out[(out.candidate == row.candidate) & (out.satellite == row.satellite)]
        usable = mine[mine.usable]
        assert row.passes == len(mine)
        assert row.usable_passes == len(usable)
        assert row.usable_minutes == pytest.approx(sum(usable.usable_s) / 60.0, rel=1e-12, abs=1e-12)
        assert row.data_volume_mbit == pytest.approx(sum(usable.data_volume_bit) / 1e6, rel=1e-12, abs=1e-12)
        assert row.dropouts == sum(mine.dropouts)
        assert row.usable_minutes_per_day == pytest.approx(row.usable_minutes / day.days)
    assert weekly.usable_minutes.sum() == pytest.approx(out.usable_s[out.usable].sum() / 60.0)
    assert weekly.usable_minutes.sum() > 0


def test_band_and_hour_tables_add_up_to_the_weekly_totals(day):
    weekly = day.weekly.groupby("candidate")[["passes", "usable_passes", "usable_minutes", "data_volume_mbit"]].sum()
    for table, key, levels in (
        (band_table(day.outcomes), "elevation_band", ELEVATION_BAND_LABELS),
        (hour_table(day.outcomes), "local_hour", tuple(range(24))),
    ):
        for candidate, group in table.groupby("candidate"):
            assert tuple(group[key]) == levels
            for column in ("passes", "usable_passes"):
                assert group[column].sum() == weekly.loc[candidate, column]
            for column in ("usable_minutes", "data_volume_mbit"):
                assert group[column].sum() == pytest.approx(weekly.loc[candidate, column], rel=1e-12)


def test_zero_rows_for_a_satellite_without_passes(day):
    table = weekly_table(day.outcomes, day.days, candidates=["isotropic-reference"], satellites=["WRENLING-1", "NOWHERE"])
    assert table.satellite.tolist() == ["WRENLING-1", "NOWHERE"]
    assert table.iloc[1][["passes", "usable_passes", "usable_minutes", "dropouts"]].tolist() == [0, 0, 0.0, 0]


# ------------------------------------------------------------------ monotonicity in EIRP


@settings(max_examples=25, deadline=None)
@given(st.floats(min_value=0.01, max_value=20.0))
def test_more_margin_never_lowers_usable_time(day, study, shift_db):
    # With margins linear between samples, the usable set {m + x >= threshold} only grows with x
    # (monotonicity of a superlevel set); so must usable time per pass.
    base = day.outcomes
    shifted = summarize_passes(day.samples, day.passes, study.criteria, study.satellites, margin_shift_db=shift_db)
    assert (shifted.usable_s.to_numpy() >= base.usable_s.to_numpy() - 1e-9).all()
    assert (shifted.usable.to_numpy() >= base.usable.to_numpy()).all()


def test_more_transmit_power_is_a_margin_shift(scenario, day, study):
    # The budget is additive in dB (C = EIRP - losses + gains; e.g. Sklar, Digital
    # Communications, ch. 5): doubling the satellite's power raises every margin by 10 log10 2 dB,
    # so usable time per pass is at least the old one and equals the shifted summary.
    louder = Study.from_scenario(one_day(scenario, tx_power_w=lambda s: 2.0 * s.tx_power_w))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)
        result = forecast(louder)
    assert result.passes[["satellite", "pass_number", "aos_s"]].equals(day.passes[["satellite", "pass_number", "aos_s"]])
    np.testing.assert_allclose(result.samples.margin_db - day.samples.margin_db, 10 * log10(2.0), atol=1e-9)
    assert (result.outcomes.usable_s.to_numpy() >= day.outcomes.usable_s.to_numpy() - 1e-9).all()
    assert result.outcomes.usable_s.sum() > day.outcomes.usable_s.sum()
    shifted = summarize_passes(day.samples, day.passes, study.criteria, study.satellites, margin_shift_db=10 * log10(2.0))
    np.testing.assert_allclose(result.outcomes.usable_s, shifted.usable_s, atol=1e-6)


# ------------------------------------------------------------------ schedule


def brute_force(starts, ends, values):
    """Best total value over all subsets with no two intervals overlapping (touching is fine)."""
    n = len(starts)
    best = 0.0
    for size in range(1, n + 1):
        for subset in itertools.combinations(range(n), size):
            if all(ends[i] <= starts[j] or ends[j] <= starts[i] for i, j in itertools.combinations(subset, 2)):
                best = max(best, sum(values[i] for i in subset))
    return best


def overlapping(starts, ends, chosen):
    return any(not (ends[i] <= starts[j] or ends[j] <= starts[i]) for i, j in itertools.combinations(chosen, 2))


@settings(max_examples=150, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 20), st.integers(0, 8), st.floats(0.0, 100.0)), max_size=10))
def test_weighted_interval_schedule_is_optimal(intervals):
    # Weighted interval scheduling (Kleinberg & Tardos, Algorithm Design, 6.1): the DP optimum
    # equals the brute-force optimum over all subsets; integer ends make touching ties common.
    starts = [float(s) for s, _, _ in intervals]
    ends = [float(s + length) for s, length, _ in intervals]
    values = [v for _, _, v in intervals]
    best, chosen = weighted_interval_schedule(starts, ends, values)
    assert not overlapping(starts, ends, list(chosen))
    assert len(set(chosen.tolist())) == len(chosen)
    assert best == pytest.approx(sum(values[i] for i in chosen), rel=1e-12, abs=1e-12)
    assert best == pytest.approx(brute_force(starts, ends, values), rel=1e-12, abs=1e-12)
    assert list(np.asarray(ends)[chosen]) == sorted(np.asarray(ends)[chosen])  # time order


def test_weighted_interval_schedule_small_cases():
    # Hand-worked: [0,10] worth 5 against [5,15] worth 4 and [10,20] worth 3 (touching [0,10]):
    # best is {[0,10], [10,20]} = 8 (touching end points do not overlap).
    best, chosen = weighted_interval_schedule([0, 5, 10], [10, 15, 20], [5, 4, 3])
    assert best == 8 and chosen.tolist() == [0, 2]
    # One long valuable interval beats two short ones that together are worth less.
    best, chosen = weighted_interval_schedule([0, 0, 6], [10, 5, 10], [9, 4, 4])
    assert best == 9 and chosen.tolist() == [0]
    assert weighted_interval_schedule([], [], []) == (0.0, pytest.approx(np.zeros(0)))
    with pytest.raises(ValueError):
        weighted_interval_schedule([5], [4], [1])


def test_schedule_of_a_candidate(day):
    # One receiver: the chosen passes never overlap, and kept + lost = the value with a receiver
    # per pass; every usable pass is either chosen or lost.
    for candidate in day.weekly.candidate.unique():
        mine = day.outcomes[day.outcomes.candidate == candidate]
        result = schedule(mine)
        chosen = result.chosen.sort_values("first_usable_s")
        assert (chosen.first_usable_s.to_numpy()[1:] >= chosen.last_usable_s.to_numpy()[:-1]).all()
        assert result.value == pytest.approx(chosen.value.sum())
        assert result.value + result.lost_value == pytest.approx(result.unconstrained_value)
        assert result.unconstrained_value == pytest.approx(mine.value[mine.usable].sum())
        assert result.lost_value >= -1e-6
        assert len(result.chosen) + len(result.lost_passes) == int(mine.usable.sum())
        assert result.lost_passes.value.sum() == pytest.approx(result.lost_value, abs=1e-6)
    with pytest.raises(ValueError):
        schedule(day.outcomes)


@pytest.mark.parametrize("batch_rows", [1, 2_000, 10**9])
def test_catalog_mode_gives_the_same_outcomes(day, study, monkeypatch, batch_rows):
    # keep_samples=False (catalog queries) summarizes the samples a batch of satellites at a
    # time and drops them; every pass outcome depends on its own samples only, so the outcomes
    # and weekly totals must equal the all-at-once path exactly, whatever the batch size (one
    # satellite per batch, a few, all).  Internal consistency: the outcomes themselves are
    # checked against hand computations and the budget above.
    monkeypatch.setattr(forecast_module, "_SUMMARY_BATCH_ROWS", batch_rows)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)
        lean = forecast(study, keep_samples=False)
    assert len(lean.samples) == 0 and len(day.samples) > 1000
    pd.testing.assert_frame_equal(lean.outcomes, day.outcomes)
    pd.testing.assert_frame_equal(lean.weekly, day.weekly)
    pd.testing.assert_frame_equal(lean.passes, day.passes)


# ------------------------------------------------------------------ one dropout definition


def test_a_pass_too_short_to_be_usable_counts_no_dropout(study):
    # Margins 5, 5, -5, 5, 5 dB at 0..40 s: windows [0, 12] and [28, 40] s (linear crossings of
    # 3 dB, worked by hand: 10 + 10 * 2/10 and 30 - 10 * 2/10), 24 s usable in all, below the
    # demo's min_usable_s = 60 s. No usable pass, so no dropout (pass_dropouts' definition);
    # stretched tenfold (windows [0, 120] and [280, 400] s) the same dip is one 160 s dropout.
    short = (np.arange(0.0, 41.0, 10.0), [5, 5, -5, 5, 5])
    long = (np.arange(0.0, 401.0, 100.0), [5, 5, -5, 5, 5])
    samples, passes = synthetic(study, [short, long])
    out = summarize_passes(samples, passes, study.criteria, study.satellites)
    assert out.usable_windows[0] == [pytest.approx((0.0, 12.0)), pytest.approx((28.0, 40.0))]
    assert not out.usable[0] and out.dropouts[0] == 0 and out.dropout_s[0] == 0.0
    assert out.usable[1] and out.dropouts[1] == 1 and out.dropout_s[1] == pytest.approx(160.0)


def test_only_the_expected_margin_decides_usable(study):
    # The wording says the margin at the fade percentile does not decide usable passes; check the
    # code does what the text says: moving margin_at_fade_db moves nothing.
    t = np.arange(0.0, 501.0, 10.0)
    margin = np.interp(t, [0, 100, 200, 250, 300, 400, 500], [-5, 6, 6, -1, 6, 6, -5])
    samples, passes = synthetic(study, [(t, margin)])
    before = summarize_passes(samples, passes, study.criteria, study.satellites)
    deeper = samples.assign(margin_at_fade_db=samples["margin_db"] - 20.0)
    after = summarize_passes(deeper, passes, study.criteria, study.satellites)
    for column in ("usable_s", "usable", "dropouts", "dropout_s"):
        assert before[column].tolist() == after[column].tolist()


def test_usable_rule_names_the_fade_percentile_when_a_satellite_tumbles(study):
    # Demo: four satellites are linear-tumbling, OSTRAVEL-2 is rhcp (scenarios/demo.toml).
    text = usable_rule_text(study.criteria, study.satellites)
    assert "expected margin" in text and f"{study.criteria.fade_percentile:g} % fade" in text
    assert "criteria.fade_percentile" in text and "does not decide" in text
    for satellite in study.satellites:
        assert (satellite.name in text) == (satellite.polarization == "linear-tumbling")
    circular = [s.model_copy(update={"polarization": "rhcp"}) for s in study.satellites]
    plain = usable_rule_text(study.criteria, circular)
    assert "plays no part" in plain and "% fade" not in plain


def test_week_rows_say_there_is_no_receiver_limit(day):
    rows = week_rows(day.weekly)
    assert rows and all(row["one_receiver_limit"] is False for row in rows)
    # Unusable passes count no dropouts, so a pair without usable passes shows none.
    for row in rows:
        if row["usable_passes"] == 0:
            assert row["dropouts"] == 0
    assert "no one-receiver limit" in NO_RECEIVER_LIMIT_TEXT
