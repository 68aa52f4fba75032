"""Pass prediction: when each satellite is above the station's horizon mask, and where.

How it works (all numpy, vectorized over time):

1. SGP4 (``Satrec.sgp4_array``) gives TEME position and velocity; a rotation by
   Greenwich mean sidereal time (IAU-82, Vallado) takes them to Earth-fixed
   coordinates, and the station's east-north-up frame gives azimuth, elevation,
   slant range and range rate.  Polar motion is neglected (metres at the site).
2. The *clearance* ``elevation - mask(azimuth)`` is sampled on a coarse grid whose
   step follows from the orbital period.  Local extremes of the clearance near zero
   (a grazing peak between two negative samples, or a dip between two positive ones)
   are refined by golden-section search, so no short pass or short mask shadow hides
   between grid points.
3. Every sign change of the clearance brackets an AOS or a LOS, refined by
   bisection (all brackets at once) to well under a millisecond; the culmination
   (TCA: maximum elevation, which for a near-circular orbit is also the minimum
   range) is refined by golden-section search.
4. Tracks are sampled at the scenario's step from AOS to LOS (LOS included), with a
   Doppler shift for each frequency given.

Times inside this module are float seconds from the window start; the Julian date
arithmetic runs on UTC as SGP4 expects (AIAA 2006-6753), with UT1 - UTC from
skyfield's built-in tables for the Earth's rotation.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from functools import lru_cache
from typing import Mapping, Sequence

import numpy as np
from scipy.constants import c as SPEED_OF_LIGHT_M_S
from sgp4.api import SGP4_ERRORS, jday

from planner.errors import warn
from planner.orbits import ElementSet
from planner.station import Station

SECONDS_PER_DAY = 86400.0
# Clearance (deg) beyond which a sampled extreme cannot cross zero between two
# grid points: generous against the few tenths of a degree a low LEO peak moves.
_EXTREME_SEARCH_DEG = 10.0
_BISECTION_STEPS = 22          # 60 s bracket / 2**22 ~ 15 microseconds
_GOLDEN_STEPS = 32             # 120 s bracket * 0.618**32 ~ 25 microseconds
_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
_BELOW_EVERYTHING_DEG = -180.0  # clearance used where SGP4 reports an error


@dataclass(frozen=True)
class Target:
    """A satellite to predict: its elements, display name and radio frequencies."""

    element_set: ElementSet
    name: str = ""
    frequencies_hz: Mapping[str, float] = field(default_factory=dict)

    @property
    def display_name(self) -> str:
        return self.name or self.element_set.name or str(self.element_set.norad_id)


@dataclass
class Track:
    """Samples of one pass, aligned arrays (time in seconds from the window start)."""

    window_start_utc: datetime
    time_s: np.ndarray
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    range_km: np.ndarray
    range_rate_km_s: np.ndarray
    doppler_hz: dict[str, np.ndarray]

    @property
    def time_utc(self) -> np.ndarray:
        """Sample times as numpy datetime64 (microseconds, UTC)."""
        start = np.datetime64(self.window_start_utc.replace(tzinfo=None), "us")
        return start + np.round(self.time_s * 1e6).astype("timedelta64[us]")

    def __len__(self) -> int:
        return len(self.time_s)


@dataclass
class Pass:
    """One pass of one satellite above the station's horizon mask."""

    satellite: str
    norad_id: int
    aos_utc: datetime
    tca_utc: datetime
    los_utc: datetime
    max_elevation_deg: float
    aos_azimuth_deg: float
    tca_azimuth_deg: float
    los_azimuth_deg: float
    min_range_km: float
    aos_clipped: bool          # the satellite was already up at the window start
    los_clipped: bool          # the satellite was still up at the window end
    track: Track

    @property
    def duration_s(self) -> float:
        return (self.los_utc - self.aos_utc).total_seconds()


@dataclass
class Look:
    """Topocentric geometry of one satellite at an array of times."""

    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    range_km: np.ndarray
    range_rate_km_s: np.ndarray
    error: np.ndarray          # SGP4 error code per sample, 0 = fine


def gmst_1982_rad(jd_ut1_whole: np.ndarray, jd_ut1_fraction: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Greenwich mean sidereal angle (rad) and its rate (rad/s), IAU-82 (AIAA 2006-6753 App. C)."""
    t = (jd_ut1_whole - 2451545.0 + jd_ut1_fraction) / 36525.0
    g = 67310.54841 + (8640184.812866 + (0.093104 + (-6.2e-6) * t) * t) * t
    dg = 8640184.812866 + (0.093104 * 2.0 + (-6.2e-6 * 3.0) * t) * t
    theta = np.mod(np.mod(jd_ut1_whole, 1.0) + jd_ut1_fraction + np.mod(g / SECONDS_PER_DAY, 1.0), 1.0) * 2 * np.pi
    theta_dot = (1.0 + dg / (SECONDS_PER_DAY * 36525.0)) * 2 * np.pi / SECONDS_PER_DAY
    return theta, theta_dot


@lru_cache(maxsize=1)
def _timescale():
    from skyfield.api import load

    return load.timescale()


class Observer:
    """Computes look angles from one station, for times in seconds from ``start_utc``."""

    def __init__(self, station: Station, start_utc: datetime, duration_s: float):
        self.station = station
        self.start_utc = start_utc
        self._station_ecef_km = station.ecef_km
        self._enu = station.enu_rotation
        start = start_utc.astimezone(timezone.utc)
        seconds = start.second + start.microsecond * 1e-6
        self._jd_whole, self._jd_fraction = jday(start.year, start.month, start.day, start.hour, start.minute, seconds)
        # UT1 - UTC at hourly knots (it changes by milliseconds a day).
        knots_s = np.arange(0.0, duration_s + 7200.0, 3600.0)
        ts = _timescale()
        knot_times = ts.utc(start.year, start.month, start.day, start.hour, start.minute, seconds + knots_s)
        self._dut1_knots_s = knots_s
        self._dut1_s = np.atleast_1d(knot_times.dut1).astype(float)

    def look(self, satrec, time_s: np.ndarray) -> Look:
        time_s = np.asarray(time_s, dtype=float)
        fraction = self._jd_fraction + time_s / SECONDS_PER_DAY
        whole = np.full(time_s.shape, self._jd_whole)
        error, r_teme, v_teme = satrec.sgp4_array(whole, fraction)
        dut1_s = np.interp(time_s, self._dut1_knots_s, self._dut1_s)
        theta, theta_dot = gmst_1982_rad(whole, fraction + dut1_s / SECONDS_PER_DAY)
        cos_t, sin_t = np.cos(theta), np.sin(theta)
        x, y, z = r_teme[:, 0], r_teme[:, 1], r_teme[:, 2]
        vx, vy, vz = v_teme[:, 0], v_teme[:, 1], v_teme[:, 2]
        # TEME -> pseudo Earth-fixed: rotate by -theta about z; velocity loses omega x r.
        xe, ye = cos_t * x + sin_t * y, -sin_t * x + cos_t * y
        vxe = cos_t * vx + sin_t * vy + theta_dot * ye
        vye = -sin_t * vx + cos_t * vy - theta_dot * xe
        relative = np.stack([xe, ye, z], axis=1) - self._station_ecef_km
        velocity = np.stack([vxe, vye, vz], axis=1)
        east, north, up = (relative @ self._enu.T).T
        range_km = np.sqrt(east**2 + north**2 + up**2)
        azimuth = np.mod(np.degrees(np.arctan2(east, north)), 360.0)
        elevation = np.degrees(np.arctan2(up, np.hypot(east, north)))
        range_rate = np.einsum("ij,ij->i", relative, velocity) / range_km
        bad = error != 0
        if np.any(bad):
            for array in (azimuth, elevation, range_km, range_rate):
                array[bad] = np.nan
        return Look(azimuth, elevation, range_km, range_rate, error)

    def clearance_deg(self, satrec, time_s: np.ndarray) -> tuple[np.ndarray, Look]:
        """Elevation above the horizon mask (deg); very negative where SGP4 failed."""
        look = self.look(satrec, time_s)
        clearance = look.elevation_deg - self.station.mask.min_elevation_at(look.azimuth_deg)
        return np.where(np.isnan(clearance), _BELOW_EVERYTHING_DEG, clearance), look


def coarse_step_s(period_s: float) -> float:
    """Search grid step: 1/100 of the orbit, between 5 and 60 s.

    A LEO pass above the mask lasts minutes and its clearance curve is smooth over
    tens of seconds, so sign changes and near-zero extremes are never lost; deep-space
    orbits move slowly in the sky and 60 s is ample.
    """
    return float(np.clip(period_s / 100.0, 5.0, 60.0))


def _golden_extreme(function, low: np.ndarray, high: np.ndarray, maximize: bool) -> tuple[np.ndarray, np.ndarray]:
    """Vectorized golden-section search for an extreme of ``function`` in each [low, high]."""
    low, high = low.astype(float).copy(), high.astype(float).copy()
    sign = 1.0 if maximize else -1.0
    for _ in range(_GOLDEN_STEPS):
        span = high - low
        inner_low = high - _GOLDEN * span
        inner_high = low + _GOLDEN * span
        values = sign * function(np.concatenate([inner_low, inner_high]))
        f_low, f_high = np.split(values, 2)
        keep_lower = f_low > f_high
        high = np.where(keep_lower, inner_high, high)
        low = np.where(keep_lower, low, inner_low)
    best = 0.5 * (low + high)
    return best, function(best)


def _bisect_roots(function, left: np.ndarray, right: np.ndarray) -> np.ndarray:
    """Vectorized bisection for a zero of ``function`` in each [left, right] (signs differ).

    The bracket ends on the positive side of the zero are returned (within 15 us of it).
    """
    left, right = left.astype(float).copy(), right.astype(float).copy()
    left_positive = function(left) > 0
    for _ in range(_BISECTION_STEPS):
        middle = 0.5 * (left + right)
        same_as_left = (function(middle) > 0) == left_positive
        left = np.where(same_as_left, middle, left)
        right = np.where(same_as_left, right, middle)
    # Return the side inside the pass, so AOS and LOS samples never fall below the mask.
    return np.where(left_positive, left, right)


def _search_grid(duration_s: float, step_s: float) -> np.ndarray:
    grid = np.arange(0.0, duration_s, step_s)
    return np.append(grid, duration_s) if len(grid) == 0 or grid[-1] < duration_s else grid


def _pass_intervals(
    observer: Observer, target: Target, duration_s: float, step_s: float
) -> list[tuple[float, float, bool, bool]]:
    """(aos_s, los_s, aos_clipped, los_clipped) for every interval of positive clearance."""
    satrec = target.element_set.satrec
    grid = _search_grid(duration_s, step_s)

    def clearance(t):
        return observer.clearance_deg(satrec, t)[0]

    values, grid_look = observer.clearance_deg(satrec, grid)
    _report_sgp4_failure(observer, target, grid, grid_look.error)
    anchors_t, anchors_v = [grid], [values]
    if len(grid) >= 3:
        inner = np.arange(1, len(grid) - 1)
        rising_in = values[inner] - values[inner - 1]
        rising_out = values[inner + 1] - values[inner]
        peak = (rising_in >= 0) & (rising_out <= 0) & (values[inner] <= 0) & (values[inner] > -_EXTREME_SEARCH_DEG)
        dip = (rising_in <= 0) & (rising_out >= 0) & (values[inner] > 0) & (values[inner] < _EXTREME_SEARCH_DEG)
        for mask, maximize in ((peak, True), (dip, False)):
            index = inner[mask]
            if len(index):
                t_best, v_best = _golden_extreme(clearance, grid[index - 1], grid[index + 1], maximize)
                anchors_t.append(t_best)
                anchors_v.append(v_best)
    anchor_t = np.concatenate(anchors_t)
    anchor_v = np.concatenate(anchors_v)
    order = np.argsort(anchor_t, kind="stable")
    anchor_t, anchor_v = anchor_t[order], anchor_v[order]
    up = anchor_v > 0
    change = np.nonzero(up[1:] != up[:-1])[0]
    roots = _bisect_roots(clearance, anchor_t[change], anchor_t[change + 1]) if len(change) else np.empty(0)
    rising = ~up[change]
    intervals = []
    open_at, open_clipped = (0.0, True) if up[0] else (None, False)
    for time_s, is_rise in zip(roots.tolist(), rising.tolist()):
        if is_rise:
            open_at, open_clipped = time_s, False
        elif open_at is not None:
            intervals.append((open_at, time_s, open_clipped, False))
            open_at = None
    if open_at is not None:
        intervals.append((open_at, duration_s, open_clipped, True))
    return intervals


def _track_times(aos_s: float, los_s: float, step_s: float) -> np.ndarray:
    times = aos_s + np.arange(0.0, los_s - aos_s, step_s)
    return np.append(times, los_s) if len(times) == 0 or times[-1] < los_s else times


def predict_passes(
    targets: Sequence[Target | ElementSet] | Target | ElementSet,
    station: Station,
    start_utc: datetime,
    end_utc: datetime,
    *,
    step_s: float = 10.0,
) -> list[Pass]:
    """Every pass of every target above the station's mask in [start_utc, end_utc].

    Passes under way at either edge of the window are clipped to it and flagged.
    A satellite whose SGP4 propagation fails (decayed, eccentricity out of range...)
    is reported with a warning from the first failing time on; the others go on.
    Passes are returned sorted by AOS.
    """
    if isinstance(targets, (Target, ElementSet)):
        targets = [targets]
    targets = [t if isinstance(t, Target) else Target(t) for t in targets]
    start_utc = start_utc.astimezone(timezone.utc)
    duration_s = (end_utc.astimezone(timezone.utc) - start_utc).total_seconds()
    if duration_s <= 0:
        return []
    observer = Observer(station, start_utc, duration_s)
    passes: list[Pass] = []
    for target in targets:
        passes.extend(_passes_of(observer, target, duration_s, step_s))
    passes.sort(key=lambda p: (p.aos_utc, p.norad_id))
    return passes


def _report_sgp4_failure(observer: Observer, target: Target, grid_s: np.ndarray, error: np.ndarray) -> None:
    """Warn once per satellite from the first search-grid time at which SGP4 fails."""
    if np.any(error):
        first = int(np.argmax(error != 0))
        when = observer.start_utc + timedelta(seconds=float(grid_s[first]))
        reason = SGP4_ERRORS.get(int(error[first]), f"error {int(error[first])}")
        warn(
            f"{target.display_name} ({target.element_set.norad_id}): SGP4 fails from "
            f"{when:%Y-%m-%dT%H:%M:%SZ} on ({reason}); no passes predicted after that"
        )


def _passes_of(observer: Observer, target: Target, duration_s: float, step_s: float) -> list[Pass]:
    element_set = target.element_set
    satrec = element_set.satrec
    if satrec.error:
        reason = SGP4_ERRORS.get(satrec.error, f"error {satrec.error}")
        warn(f"{target.display_name} ({element_set.norad_id}): SGP4 cannot start from these elements ({reason}); no passes predicted")
        return []
    intervals = _pass_intervals(observer, target, duration_s, coarse_step_s(element_set.period_s))
    if not intervals:
        return []
    aos = np.array([i[0] for i in intervals])
    los = np.array([i[1] for i in intervals])

    # Culmination: start from the best track sample, refine within one step of it.
    track_times = [_track_times(a, b, step_s) for a, b in zip(aos, los)]
    all_times = np.concatenate(track_times)
    look = observer.look(satrec, all_times)
    bounds = np.cumsum([0] + [len(t) for t in track_times])
    best = np.array([bounds[k] + np.nanargmax(look.elevation_deg[bounds[k]:bounds[k + 1]]) for k in range(len(intervals))])
    low = np.maximum(aos, all_times[best] - step_s)
    high = np.minimum(los, all_times[best] + step_s)

    def elevation(t):
        e = observer.look(satrec, t).elevation_deg
        return np.where(np.isnan(e), _BELOW_EVERYTHING_DEG, e)

    tca, _ = _golden_extreme(elevation, low, high, maximize=True)
    key_look = observer.look(satrec, np.concatenate([aos, tca, los]))
    n = len(intervals)
    passes = []
    for k, (a, b, aos_clipped, los_clipped) in enumerate(intervals):
        segment = slice(bounds[k], bounds[k + 1])
        range_km = look.range_km[segment]
        range_rate = look.range_rate_km_s[segment]
        track = Track(
            window_start_utc=observer.start_utc,
            time_s=all_times[segment],
            azimuth_deg=look.azimuth_deg[segment],
            elevation_deg=look.elevation_deg[segment],
            range_km=range_km,
            range_rate_km_s=range_rate,
            doppler_hz={
                label: -frequency * range_rate * 1000.0 / SPEED_OF_LIGHT_M_S
                for label, frequency in target.frequencies_hz.items()
            },
        )
        tca_elevation = key_look.elevation_deg[n + k]
        passes.append(
            Pass(
                satellite=target.display_name,
                norad_id=element_set.norad_id,
                aos_utc=observer.start_utc + timedelta(seconds=float(a)),
                tca_utc=observer.start_utc + timedelta(seconds=float(tca[k])),
                los_utc=observer.start_utc + timedelta(seconds=float(b)),
                max_elevation_deg=float(max(tca_elevation, np.nanmax(track.elevation_deg))),
                aos_azimuth_deg=float(key_look.azimuth_deg[k]),
                tca_azimuth_deg=float(key_look.azimuth_deg[n + k]),
                los_azimuth_deg=float(key_look.azimuth_deg[2 * n + k]),
                min_range_km=float(min(key_look.range_km[n + k], np.nanmin(range_km))),
                aos_clipped=aos_clipped,
                los_clipped=los_clipped,
                track=track,
            )
        )
    return passes
