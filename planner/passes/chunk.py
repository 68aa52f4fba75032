"""One chunk of satellites: propagated once over its coarse grid, then searched for passes.

A chunk carries only plain numbers (``_ChunkJob``: sgp4init arguments, the site, the
clock), so it runs unchanged in a worker process or in the caller's, and every number a
satellite gets depends on that satellite alone. One ``SatrecArray.sgp4`` call gives the
grid; a cheap linear bound drops samples certainly far below the mask; sign changes and
near-zero extremes of the clearance (elevation minus mask) bracket AOS and LOS, refined
on the interpolant without further SGP4 calls; tracks are sampled only where passes are.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from sgp4.api import WGS72, WGS72OLD, WGS84, Satrec, SatrecArray

from planner.passes.frames import _BELOW_EVERYTHING_DEG, _Clock, _Site, _topocentric
from planner.passes.model import _SAMPLE_COLUMNS, _SAMPLE_DTYPE, _track_times
from planner.passes.search import (
    _EXTREME_SEARCH_DEG,
    _TCA_TOLERANCE_S,
    _bisect_roots,
    _golden_extreme,
    _hermite,
    _search_grid,
)

_BLOCK_SAMPLES = 1 << 17  # satellites x times handled at once inside a chunk (cache)
_LOOK_BLOCK = 1 << 13  # interpolated samples handled at once (cache)
_WGS_BY_MU = {398600.79964: WGS72OLD, 398600.8: WGS72, 398600.5: WGS84}


@dataclass(frozen=True)
class _ChunkJob:
    """Everything a worker needs for one chunk of satellites (all picklable)."""

    target_index: np.ndarray  # position of each satellite in the caller's list
    recipes: tuple  # sgp4init arguments, one tuple a satellite
    site: _Site
    clock: _Clock
    duration_s: float
    grid_step_s: float
    track_step_s: float
    keep_tracks: bool = True  # False: the pass figures alone, no samples handed back


def _recipe(satrec) -> tuple:
    """The sgp4init arguments that rebuild ``satrec`` (it cannot be pickled).

    Epoch as ``Satrec.twoline2rv`` hands it to sgp4init.  Every run rebuilds its
    satellites this way, in the calling process too, so the numbers never depend on
    where a chunk runs.
    """
    whichconst = _WGS_BY_MU.get(round(satrec.mu, 5), WGS72)
    return (
        whichconst,
        satrec.operationmode,
        satrec.satnum,
        satrec.jdsatepoch + satrec.jdsatepochF - 2433281.5,
        satrec.bstar,
        satrec.ndot,
        satrec.nddot,
        satrec.ecco,
        satrec.argpo,
        satrec.inclo,
        satrec.mo,
        satrec.no_kozai,
        satrec.nodeo,
    )


def _rebuild(recipe: tuple) -> Satrec:
    satrec = Satrec()
    satrec.sgp4init(*recipe)
    return satrec


def _farthest_range_km(site: _Site, satrecs, below_deg: float) -> np.ndarray:
    """Per satellite, a range no sample at elevation >= ``below_deg`` (< 0) can exceed.

    Slant range on a sphere, rho(el) = sqrt(r^2 - R^2 cos^2 el) - R sin el, grows with
    the satellite's radius r and falls with elevation (Wertz & Larson, SMAD); r is
    bounded by 1.1 x the apogee radius + 50 km, R is the site's geocentric radius, and
    1 deg is taken off the elevation for the geodetic (not radial) vertical.
    """
    site_radius_km = math.sqrt(sum(c * c for c in site.position_km))
    radius_km = np.array([(1.0 + s.alta) * s.radiusearthkm for s in satrecs]) * 1.1 + 50.0
    elevation = math.radians(max(below_deg - 1.0, -90.0))
    under = radius_km**2 - (site_radius_km * math.cos(elevation)) ** 2
    return np.sqrt(np.maximum(under, 0.0)) - site_radius_km * math.sin(elevation)


class _Segments:
    """The Hermite interpolant of given satellites on given grid intervals, gathered once.

    Row j covers satellite ``sat[j]`` on [grid[k[j]], grid[k[j] + 1]].  The Earth angle
    is theta(t_k) + theta_dot (t - t_k): GMST-82 is a cubic in Julian centuries whose
    rate changes by parts in 1e15 over a step, and UT1 - UTC (milliseconds a day)
    moves it by < 1e-10 rad, so this is the exact rotation to well below a millimetre;
    at t = t_k it is the grid's own value.
    """

    def __init__(self, chunk: _Chunk, sat: np.ndarray, k: np.ndarray):
        self.site = chunk.site
        first = sat * chunk.n_time + k
        self.r0 = chunk.r_flat.take(first, axis=0)
        self.v0 = chunk.v_flat.take(first, axis=0)
        self.r1 = chunk.r_flat.take(first + 1, axis=0)
        self.v1 = chunk.v_flat.take(first + 1, axis=0)
        if chunk.all_ok:
            self.ok0 = self.ok1 = None
        else:
            self.ok0 = chunk.ok_flat[first]
            self.ok1 = chunk.ok_flat[first + 1]
            # SGP4 failed at an end: no NaN in the sums (the sample is flagged invalid).
            for array, ok in ((self.r0, self.ok0), (self.v0, self.ok0), (self.r1, self.ok1), (self.v1, self.ok1)):
                array[~ok] = 0.0
        node = chunk.intervals_table.take(k, axis=0)
        self.t0, self.h, self.cos0, self.sin0, self.theta_dot = np.ascontiguousarray(node.T)

    def look(self, time_s: np.ndarray, *, azimuth: bool = True, rate: bool = False):
        """(azimuth_deg or None, elevation_deg, range_km, range_rate_km_s or None, valid)."""
        since = time_s - self.t0
        tau = since / self.h
        if self.ok0 is None:
            valid = np.ones(len(tau), bool)
        else:
            valid = (self.ok0 | (tau == 1.0)) & (self.ok1 | (tau == 0.0))
        (x, y, z), velocity = _hermite(self.r0, self.v0, self.r1, self.v1, self.h, tau, rate)
        # cos and sin of theta_k + delta by the angle sum, delta <= 60 s x 7.3e-5 rad/s =
        # 4.4e-3 rad: the series below are good to delta^6 / 720 < 1e-16.
        delta = self.theta_dot * since
        delta2 = delta * delta
        cos_d = 1.0 - delta2 * (0.5 - delta2 / 24.0)
        sin_d = delta * (1.0 - delta2 * (1.0 / 6.0 - delta2 / 120.0))
        cos_t = self.cos0 * cos_d - self.sin0 * sin_d
        sin_t = self.sin0 * cos_d + self.cos0 * sin_d
        azimuth_deg, elevation_deg, range_km, range_rate = _topocentric(
            self.site,
            x,
            y,
            z,
            cos_t,
            sin_t,
            azimuth=azimuth,
            theta_dot=self.theta_dot,
            velocity=velocity,
        )
        return azimuth_deg, elevation_deg, range_km, range_rate, valid

    def clearance(self, time_s: np.ndarray) -> np.ndarray:
        site = self.site
        azimuth, elevation, _, _, valid = self.look(time_s, azimuth=not site.flat_mask)
        clearance = elevation - (site.mask_elevation_deg[0] if site.flat_mask else site.mask_at(azimuth))
        return np.where(valid, clearance, _BELOW_EVERYTHING_DEG)


class _Chunk:
    """One chunk of satellites propagated over one grid, and the searches on it."""

    def __init__(self, job: _ChunkJob):
        self.job = job
        self.site = job.site
        self.satrecs = [_rebuild(recipe) for recipe in job.recipes]
        self.grid = _search_grid(job.duration_s, job.grid_step_s)
        whole, fraction = job.clock.julian(self.grid)
        self.error, self.r, self.v = SatrecArray(self.satrecs).sgp4(whole, fraction)
        self.n_sat, self.n_time = self.error.shape
        self.r_flat = self.r.reshape(-1, 3)
        self.v_flat = self.v.reshape(-1, 3)
        self.ok_flat = (self.error == 0).reshape(-1)
        theta, self.theta_dot = job.clock.earth_angle(self.grid)
        self.cos_theta, self.sin_theta = np.cos(theta), np.sin(theta)
        self.all_ok = not self.error.any()
        # Per grid interval: start, length, cos and sin of GMST at the start, GMST rate.
        self.intervals_table = np.stack(
            [self.grid[:-1], np.diff(self.grid), self.cos_theta[:-1], self.sin_theta[:-1], self.theta_dot[:-1]], axis=1
        )

    def interval_of(self, time_s: np.ndarray) -> np.ndarray:
        """k with grid[k] <= t < grid[k + 1] (the last interval closed), like searchsorted."""
        last = self.n_time - 2
        k = np.clip(np.floor(time_s / self.job.grid_step_s), 0, last).astype(np.int64)
        k -= (self.grid[k] > time_s) & (k > 0)
        k += (self.grid[k + 1] <= time_s) & (k < last)
        return k

    def look(self, sat: np.ndarray, time_s: np.ndarray, *, azimuth: bool = True, rate: bool = False):
        """Interpolated looks, in blocks that keep the temporaries in cache."""
        block = _LOOK_BLOCK
        if len(time_s) <= block:
            return _Segments(self, sat, self.interval_of(time_s)).look(time_s, azimuth=azimuth, rate=rate)
        out: list[np.ndarray | None] | None = None
        for i in range(0, len(time_s), block):
            part = slice(i, i + block)
            values = _Segments(self, sat[part], self.interval_of(time_s[part])).look(time_s[part], azimuth=azimuth, rate=rate)
            if out is None:
                out = [None if v is None else np.empty(len(time_s), v.dtype) for v in values]
            for target, v in zip(out, values):
                if v is not None:
                    assert target is not None  # every block leaves the same columns out (azimuth, rate)
                    target[part] = v
        assert out is not None  # more samples than one block: the loop ran
        return tuple(out)

    def clearance(self, sat: np.ndarray, time_s: np.ndarray) -> np.ndarray:
        return _Segments(self, sat, self.interval_of(time_s)).clearance(time_s)

    def elevation(self, sat: np.ndarray, time_s: np.ndarray) -> np.ndarray:
        _, elevation, _, _, valid = self.look(sat, time_s, azimuth=False)
        return np.where(valid, elevation, _BELOW_EVERYTHING_DEG)

    # ---------------------------------------------------------------- the grid

    def grid_clearance(self) -> tuple[np.ndarray, np.ndarray]:
        """Keys (sat * n_time + k, ascending) and clearances of the samples that matter.

        Left out: SGP4 errors and samples certainly more than ``_EXTREME_SEARCH_DEG``
        below the lowest point of the mask (their clearance is taken as
        ``_BELOW_EVERYTHING_DEG``, which changes no sign and no near-zero extreme).  The
        test is linear in TEME: up = a(t) x + b(t) y + u_z z - u . site, against the
        least "up" a sample at that elevation can have (``_farthest_range_km``).
        """
        site, n_time = self.site, self.n_time
        floor_deg = float(np.min(site.mask_elevation_deg)) - _EXTREME_SEARCH_DEG
        cos_t, sin_t = self.cos_theta, self.sin_theta
        u0, u1, u2 = site.up
        a = u0 * cos_t - u1 * sin_t
        b = u0 * sin_t + u1 * cos_t
        up_site = u0 * site.position_km[0] + u1 * site.position_km[1] + u2 * site.position_km[2]
        if floor_deg < 0.0:
            up_least = _farthest_range_km(site, self.satrecs, floor_deg) * math.sin(math.radians(floor_deg))
        else:
            up_least = np.zeros(self.n_sat)
        threshold = (up_least + up_site - 1.0)[:, None]  # 1 km to spare for rounding
        rows = max(1, _BLOCK_SAMPLES // n_time)
        keys, values = [], []
        flat = site.flat_mask
        for first in range(0, self.n_sat, rows):
            block = slice(first, min(first + rows, self.n_sat))
            r = self.r[block]
            up = r[:, :, 0] * a
            up += r[:, :, 1] * b
            up += r[:, :, 2] * u2
            candidate = up >= threshold[block]  # NaN (SGP4 error) compares False
            candidate &= self.error[block] == 0
            key = np.flatnonzero(candidate)
            if not len(key):
                continue
            key += first * n_time
            k = key % n_time
            position = self.r_flat.take(key, axis=0)
            azimuth, elevation, _, _ = _topocentric(
                site, position[:, 0], position[:, 1], position[:, 2], cos_t[k], sin_t[k], azimuth=not flat
            )
            keys.append(key)
            values.append(elevation - (site.mask_elevation_deg[0] if flat else site.mask_at(azimuth)))
        if not keys:
            return np.empty(0, np.int64), np.empty(0)
        return np.concatenate(keys).astype(np.int64), np.concatenate(values)

    # ---------------------------------------------------------------- searches

    def intervals(self):
        """(sat, aos_s, los_s, aos_clipped, los_clipped) arrays of every interval above the mask."""
        n_time, grid = self.n_time, self.grid
        keys, values = self.grid_clearance()
        k = keys % n_time
        count = len(keys)
        next_adjacent = np.zeros(count, bool)
        next_adjacent[:-1] = (keys[1:] == keys[:-1] + 1) & (k[:-1] < n_time - 1)
        prev_adjacent = np.zeros(count, bool)
        prev_adjacent[1:] = next_adjacent[:-1]
        value_next = np.full(count, _BELOW_EVERYTHING_DEG)
        value_next[:-1] = np.where(next_adjacent[:-1], values[1:], _BELOW_EVERYTHING_DEG)
        value_prev = np.full(count, _BELOW_EVERYTHING_DEG)
        value_prev[1:] = np.where(prev_adjacent[1:], values[:-1], _BELOW_EVERYTHING_DEG)
        inner = (k >= 1) & (k <= n_time - 2)
        peak = inner & (values <= 0) & (values > -_EXTREME_SEARCH_DEG) & (value_prev <= values) & (value_next <= values)
        dip = inner & (values > 0) & (values < _EXTREME_SEARCH_DEG) & (value_prev >= values) & (value_next >= values)
        positive = values > 0
        sets_after = positive & ~(next_adjacent & (value_next > 0)) & (k < n_time - 1)
        rises_before = positive & ~(prev_adjacent & (value_prev > 0)) & (k > 0)

        # Grid samples that bound an event, plus both window ends of every satellite.
        # Between two consecutive ones of a satellite the clearance keeps its sign on
        # the grid, so every bracket below lies inside one grid interval.
        ends = np.arange(self.n_sat, dtype=np.int64) * n_time
        extreme = peak | dip
        node_keys = np.unique(
            np.concatenate(
                [
                    keys[sets_after],
                    keys[sets_after] + 1,
                    keys[rises_before] - 1,
                    keys[rises_before],
                    keys[extreme] - 1,
                    keys[extreme],
                    keys[extreme] + 1,
                    ends,
                    ends + n_time - 1,
                ]
            )
        )
        if count:
            position = np.minimum(np.searchsorted(keys, node_keys), count - 1)
            node_values = np.where(keys[position] == node_keys, values[position], _BELOW_EVERYTHING_DEG)
        else:
            node_values = np.full(len(node_keys), _BELOW_EVERYTHING_DEG)
        node_sat = node_keys // n_time
        node_time = grid[node_keys % n_time]

        # Near-zero extremes between samples, refined on the interpolated clearance.
        anchor_sat, anchor_time, anchor_value = [node_sat], [node_time], [node_values]
        for where, maximize in ((peak, True), (dip, False)):
            if where.any():
                sat = keys[where] // n_time
                kk = k[where]
                t_best, v_best = _golden_extreme(lambda t, s=sat: self.clearance(s, t), grid[kk - 1], grid[kk + 1], maximize)
                anchor_sat.append(sat)
                anchor_time.append(t_best)
                anchor_value.append(v_best)
        sat = np.concatenate(anchor_sat)
        time_s = np.concatenate(anchor_time)
        value = np.concatenate(anchor_value)
        order = np.lexsort((time_s, sat))
        sat, time_s, value = sat[order], time_s[order], value[order]
        up = value > 0
        change = np.nonzero((sat[1:] == sat[:-1]) & (up[1:] != up[:-1]))[0]
        change_sat = sat[change]
        left, right = time_s[change], time_s[change + 1]
        segments = _Segments(self, change_sat, self.interval_of(0.5 * (left + right)))
        roots = _bisect_roots(segments.clearance, left, right)
        rising = ~up[change]

        # Pair the k-th start of each satellite with its k-th end.
        everyone = np.arange(self.n_sat)
        up_at_start = np.nonzero(up[np.searchsorted(sat, everyone, side="left")])[0]
        up_at_end = np.nonzero(up[np.searchsorted(sat, everyone, side="right") - 1])[0]
        start_sat = np.concatenate([change_sat[rising], up_at_start])
        start_time = np.concatenate([roots[rising], np.zeros(len(up_at_start))])
        start_clipped = np.concatenate([np.zeros(int(rising.sum()), bool), np.ones(len(up_at_start), bool)])
        end_sat = np.concatenate([change_sat[~rising], up_at_end])
        end_time = np.concatenate([roots[~rising], np.full(len(up_at_end), self.job.duration_s)])
        end_clipped = np.concatenate([np.zeros(int((~rising).sum()), bool), np.ones(len(up_at_end), bool)])
        start_order = np.lexsort((start_time, start_sat))
        end_order = np.lexsort((end_time, end_sat))
        return (
            start_sat[start_order],
            start_time[start_order],
            end_time[end_order],
            start_clipped[start_order],
            end_clipped[end_order],
        )

    def passes(self) -> dict:
        """The chunk's passes and tracks as flat arrays (see ``_run_chunk``); with
        ``keep_tracks`` false, ``samples`` is empty and every ``offsets`` entry 0."""
        sat, aos, los, aos_clipped, los_clipped = self.intervals()
        step = self.job.track_step_s
        time_s, offsets, pass_of_sample = _track_times(aos, los, step)
        n_pass = len(aos)
        keep = self.job.keep_tracks
        # Without tracks the samples still seed TCA and bound the extremes (the same
        # elevations and ranges, so the same pass figures), but azimuth and range rate
        # are not computed and nothing is stored.
        azimuth, elevation, range_km, range_rate, valid = self.look(sat[pass_of_sample], time_s, azimuth=keep, rate=keep)
        if not valid.all():
            for array in (azimuth, elevation, range_km, range_rate):
                if array is not None:
                    array[~valid] = np.nan

        # Culmination: from the best track sample, golden section within a step of it.
        if n_pass:
            starts = offsets[:-1]
            ranked = np.where(valid, elevation, -np.inf)
            best_value = np.maximum.reduceat(ranked, starts)
            is_best = np.flatnonzero(ranked == np.repeat(best_value, np.diff(offsets)))
            best = is_best[np.searchsorted(is_best, starts)]  # the first best sample of each pass
            low = np.maximum(aos, time_s[best] - step)
            high = np.minimum(los, time_s[best] + step)
            tca, _ = _golden_extreme(lambda t: self.elevation(sat, t), low, high, maximize=True, tolerance_s=_TCA_TOLERANCE_S)
            key_azimuth, key_elevation, key_range, _, key_valid = self.look(np.tile(sat, 3), np.concatenate([aos, tca, los]))
            for array in (key_azimuth, key_elevation, key_range):
                array[~key_valid] = np.nan
            max_elevation = np.fmax(key_elevation[n_pass : 2 * n_pass], np.fmax.reduceat(elevation, starts))
            min_range = np.fmin(key_range[n_pass : 2 * n_pass], np.fmin.reduceat(range_km, starts))
        else:
            tca = max_elevation = min_range = key_azimuth = np.empty(0)
        if keep:
            samples = np.empty((len(_SAMPLE_COLUMNS), len(time_s)), _SAMPLE_DTYPE)
            for row, values in zip(samples, (azimuth, elevation, range_km, range_rate)):
                row[:] = values
        else:
            samples = np.empty((len(_SAMPLE_COLUMNS), 0), _SAMPLE_DTYPE)
            offsets = np.zeros(n_pass + 1, np.int64)
        return dict(
            target_index=self.job.target_index[sat],
            aos_s=aos,
            tca_s=tca,
            los_s=los,
            max_elevation_deg=max_elevation,
            aos_azimuth_deg=key_azimuth[:n_pass],
            tca_azimuth_deg=key_azimuth[n_pass : 2 * n_pass],
            los_azimuth_deg=key_azimuth[2 * n_pass :],
            min_range_km=min_range,
            aos_clipped=aos_clipped,
            los_clipped=los_clipped,
            offsets=offsets,
            samples=samples,
        )

    def failures(self) -> list[tuple[int, float, int]]:
        """(target index, first failing grid time, SGP4 error code) of satellites that fail."""
        failing = np.nonzero(self.error.any(axis=1))[0]
        first = np.argmax(self.error[failing] != 0, axis=1)
        return [
            (int(self.job.target_index[s]), float(self.grid[k]), int(self.error[s, k]))
            for s, k in zip(failing.tolist(), first.tolist())
        ]


def _run_chunk(job: _ChunkJob) -> tuple[dict, list[tuple[int, float, int]]]:
    """Passes of one chunk (flat arrays, tracks concatenated, ``offsets`` per pass) and
    the SGP4 failures to report.  Runs in a worker process or in the caller's."""
    with np.errstate(invalid="ignore", divide="ignore"):
        chunk = _Chunk(job)
        return chunk.passes(), chunk.failures()
