"""``predict_passes``: every pass of every target over a window, and the bound checked first.

Before anything is propagated, the number of SGP4 samples the search grid asks for is
held against the run-time limit (``planner.limits``). Satellites whose elements SGP4
cannot start from, or whose propagation fails later, are reported once each through
``planner.errors.warn``; the others go on. Passes come back sorted by AOS, then NORAD id.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import UTC, datetime, timedelta

import numpy as np
from sgp4.api import SGP4_ERRORS

from planner.elements import ElementSet
from planner.errors import warn
from planner.limits import PROPAGATION_SECONDS_PER_SAMPLE, RUN_TIME_LIMIT_S, check_duration
from planner.passes.batch import _IN_PROCESS_SATELLITES, _plan_chunks, _run_all, _worker_count
from planner.passes.chunk import _ChunkJob, _rebuild, _recipe
from planner.passes.frames import SECONDS_PER_DAY, _Clock, _Site
from planner.passes.model import Pass, Target, Track
from planner.passes.search import _perigee_period_s, coarse_step_s
from planner.passes.station import Station


def _check_propagation_time(satrecs: Sequence, duration_s: float) -> None:
    """Refuse, before propagating, a window x satellites whose SGP4 search would take longer
    than the run-time limit (``planner.limits``). Memory needs no check: chunks bound it."""
    if not satrecs:
        return
    steps = np.array([coarse_step_s(_perigee_period_s(s)) for s in satrecs])
    samples = float(np.sum(duration_s / steps + 1.0))  # grid length per satellite, as _search_grid makes it
    check_duration(
        f"{len(satrecs):,} satellites over {duration_s / SECONDS_PER_DAY:g} days ask for {samples:,.0f} SGP4 "
        "samples on the pass-search grid",
        samples,
        PROPAGATION_SECONDS_PER_SAMPLE,
        RUN_TIME_LIMIT_S,
        "shorten the window or predict fewer satellites (--satellite, or a catalog's max_objects)",
    )


def _as_targets(targets: Sequence[Target | ElementSet] | Target | ElementSet) -> list[Target]:
    """The targets as a list of ``Target``: one alone becomes a list, a bare element set a target."""
    if isinstance(targets, (Target, ElementSet)):
        targets = [targets]
    return [t if isinstance(t, Target) else Target(t) for t in targets]


def predict_passes(
    targets: Sequence[Target | ElementSet] | Target | ElementSet,
    station: Station,
    start_utc: datetime,
    end_utc: datetime,
    *,
    step_s: float = 10.0,
    workers: int | None = None,
    chunk_satellites: int | None = None,
    tracks: bool = True,
) -> list[Pass]:
    """Every pass of every target above the station's mask in [start_utc, end_utc].

    Passes under way at either edge of the window are clipped to it and flagged.
    A satellite whose SGP4 propagation fails (decayed, eccentricity out of range...)
    is reported with a warning from the first failing time on; the others go on.
    Passes are returned sorted by AOS, then NORAD id.

    ``workers``: processes to spread the chunks over (default: one per core, and
    none at all below 200 satellites); ``chunk_satellites`` forces the chunk size.
    Neither changes the result.

    ``tracks=False`` leaves every pass's ``track`` None, for callers that need the pass
    figures alone (a pass list): no azimuth or range rate is computed along the passes and
    no samples are kept or handed back between processes. AOS, TCA, LOS, the maximum
    elevation, the azimuths and the minimum range are the same numbers either way.
    """
    target_list = _as_targets(targets)
    if not step_s > 0:
        raise ValueError(f"step_s must be positive, got {step_s!r}")
    start_utc = start_utc.astimezone(UTC)
    duration_s = (end_utc.astimezone(UTC) - start_utc).total_seconds()
    if duration_s <= 0:
        return []

    usable, satrecs, recipes, messages = [], [], [], {}
    for index, target in enumerate(target_list):
        satrec = target.element_set.satrec
        recipe = _recipe(satrec)
        # The initialisation error of a fresh copy: ``satrec.error`` itself also holds
        # the outcome of whatever propagation the caller ran last.
        error = _rebuild(recipe).error
        if error:
            reason = SGP4_ERRORS.get(error, f"error {error}")
            messages[index] = (
                f"{target.display_name} ({target.element_set.norad_id}): SGP4 cannot start "
                f"from these elements ({reason}); no passes predicted"
            )
            continue
        usable.append(index)
        satrecs.append(satrec)
        recipes.append(recipe)
    _check_propagation_time(satrecs, duration_s)
    if workers is None:
        workers = 1 if len(usable) < _IN_PROCESS_SATELLITES else _worker_count()
    workers = max(1, int(workers))

    passes: list[tuple] = []
    if usable:
        clock = _Clock.starting(start_utc, duration_s)
        site = _Site.of(station)
        usable_index = np.array(usable)
        jobs = [
            _ChunkJob(
                usable_index[members], tuple(recipes[m] for m in members), site, clock, duration_s, grid_step, float(step_s), tracks
            )
            for grid_step, members in _plan_chunks(satrecs, duration_s, workers=workers, chunk_satellites=chunk_satellites)
        ]
        for result, failures in _run_all(jobs, workers):
            passes.extend(_passes_from(result, target_list, start_utc, float(step_s), tracks))
            for index, time_s, code in failures:
                target = target_list[index]
                when = start_utc + timedelta(seconds=time_s)
                reason = SGP4_ERRORS.get(code, f"error {code}")
                messages[index] = (
                    f"{target.display_name} ({target.element_set.norad_id}): SGP4 fails from "
                    f"{when:%Y-%m-%dT%H:%M:%SZ} on ({reason}); no passes predicted after that"
                )
    for index in sorted(messages):
        warn(messages[index])
    passes.sort(key=lambda item: item[0])
    return [item[1] for item in passes]


def _passes_from(result: dict, targets: list[Target], start_utc: datetime, track_step_s: float, tracks: bool) -> list[tuple]:
    """(sort key, Pass) for every pass of one chunk; tracks are views of the chunk's samples
    (None when ``tracks`` is false)."""
    offsets = result["offsets"].tolist()
    columns = [
        result[name].tolist()
        for name in (
            "target_index",
            "aos_s",
            "tca_s",
            "los_s",
            "max_elevation_deg",
            "aos_azimuth_deg",
            "tca_azimuth_deg",
            "los_azimuth_deg",
            "min_range_km",
            "aos_clipped",
            "los_clipped",
        )
    ]
    samples = result["samples"]
    names: dict[int, tuple[str, int]] = {}
    made = []
    for j, (index, aos_s, tca_s, los_s, max_elevation, aos_az, tca_az, los_az, min_range, aos_clipped, los_clipped) in enumerate(
        zip(*columns)
    ):
        target = targets[index]
        if index not in names:
            names[index] = (target.display_name, target.element_set.norad_id)
        name, norad_id = names[index]
        track = (
            Track(start_utc, aos_s, los_s, track_step_s, samples[:, offsets[j] : offsets[j + 1]], target.frequencies_hz)
            if tracks
            else None
        )
        aos_utc = start_utc + timedelta(seconds=aos_s)
        item = Pass(
            name,
            norad_id,
            aos_utc,
            start_utc + timedelta(seconds=tca_s),
            start_utc + timedelta(seconds=los_s),
            max_elevation,
            aos_az,
            tca_az,
            los_az,
            min_range,
            aos_clipped,
            los_clipped,
            track,
        )
        made.append(((aos_utc, norad_id, index, aos_s), item))
    return made
