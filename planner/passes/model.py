"""What a prediction takes and gives: the Target, each Pass and its Track.

A track keeps its samples compactly, as float32 rows, and rebuilds its sample times from
AOS, LOS and the step (every step from AOS, then LOS), so that a catalog's week of passes
fits in memory; the Doppler shift of each named frequency follows from the range rate
(speed of light from scipy.constants, CODATA).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import datetime

import numpy as np

from planner.constants import SPEED_OF_LIGHT_M_S
from planner.elements import ElementSet


@dataclass(frozen=True)
class Target:
    """A satellite to predict: its elements, display name and radio frequencies."""

    element_set: ElementSet
    name: str = ""
    frequencies_hz: Mapping[str, float] = field(default_factory=dict)

    @property
    def display_name(self) -> str:
        return self.name or self.element_set.name or str(self.element_set.norad_id)


# Track samples are kept as float32: steps of at most 2e-5 deg in azimuth, 4e-6 deg in
# elevation, 2.4 mm in range at 40,000 km and 0.5 mm/s in range rate, all far below what
# SGP4 elements are good for (a kilometre or so).  With the times rebuilt rather than
# stored, a sample takes 16 bytes instead of 40: a catalog's week holds tens of millions.
_SAMPLE_DTYPE = np.float32
_SAMPLE_COLUMNS = ("azimuth_deg", "elevation_deg", "range_km", "range_rate_km_s")


def _sample_row(name: str, doc: str) -> property:
    """A read-only attribute: one row of ``Track.samples`` as a new float64 array."""
    row = _SAMPLE_COLUMNS.index(name)
    return property(lambda track: track.samples[row].astype(np.float64), doc=doc)


@dataclass(slots=True)
class Track:
    """Samples of one pass: every ``step_s`` from AOS, then LOS (time in seconds from the window start).

    ``samples`` holds azimuth, elevation, range and range rate as float32 rows (in the
    order of ``_SAMPLE_COLUMNS``); the sample times follow from AOS, LOS and the step.
    Every accessor returns float64 arrays.
    """

    window_start_utc: datetime
    aos_s: float
    los_s: float
    step_s: float
    samples: np.ndarray
    frequencies_hz: Mapping[str, float]

    @property
    def time_s(self) -> np.ndarray:
        return _track_times(np.array([self.aos_s]), np.array([self.los_s]), self.step_s)[0]

    azimuth_deg = _sample_row("azimuth_deg", "Azimuth, deg clockwise from true north.")
    elevation_deg = _sample_row("elevation_deg", "Elevation above the horizontal, deg.")
    range_km = _sample_row("range_km", "Slant range station-satellite, km.")
    range_rate_km_s = _sample_row("range_rate_km_s", "Range rate, km/s (negative while approaching).")

    @property
    def doppler_hz(self) -> dict[str, np.ndarray]:
        """Doppler shift (Hz) of each named frequency, positive while the satellite approaches."""
        rate = self.range_rate_km_s
        return {label: -frequency * rate * 1000.0 / SPEED_OF_LIGHT_M_S for label, frequency in self.frequencies_hz.items()}

    @property
    def time_utc(self) -> np.ndarray:
        """Sample times as numpy datetime64 (microseconds, UTC)."""
        start = np.datetime64(self.window_start_utc.replace(tzinfo=None), "us")
        return start + np.round(self.time_s * 1e6).astype("timedelta64[us]")

    def __len__(self) -> int:
        return self.samples.shape[1]


@dataclass(slots=True)
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
    aos_clipped: bool  # the satellite was already up at the window start
    los_clipped: bool  # the satellite was still up at the window end
    track: Track | None  # None when predicted with tracks=False (a pass list)

    @property
    def duration_s(self) -> float:
        return (self.los_utc - self.aos_utc).total_seconds()

    def sampled_track(self) -> Track:
        """The track, for callers that need one: refused when the pass was predicted without."""
        if self.track is None:
            raise ValueError(f"{self.satellite} pass at {self.aos_utc:%Y-%m-%dT%H:%M:%SZ} was predicted without a track")
        return self.track


def _track_times(aos: np.ndarray, los: np.ndarray, step_s: float):
    """Track sample times of all passes, concatenated: aos + i step (i = 0 .. ceil(span /
    step) - 1, as np.arange makes them), then LOS.  Returns (times, offsets, pass of
    each sample); the same numbers wherever it runs."""
    steps = np.ceil((los - aos) / step_s).astype(np.int64)
    with_los = (steps == 0) | (aos + (steps - 1) * step_s < los)
    counts = steps + with_los
    offsets = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    pass_of_sample = np.repeat(np.arange(len(aos)), counts)
    time_s = aos[pass_of_sample] + (np.arange(int(offsets[-1])) - offsets[pass_of_sample]) * step_s
    time_s[offsets[1:][with_los] - 1] = los[with_los]
    return time_s, offsets, pass_of_sample


def joined_time_s(tracks: Sequence[Track]) -> np.ndarray:
    """The sample times of several tracks, concatenated: the numbers of their ``time_s``,
    in one vectorized call when they share a step (a call per track costs ~20 us, which a
    catalog's 300,000 passes notice)."""
    steps = {track.step_s for track in tracks}
    if len(steps) != 1:
        return np.concatenate([track.time_s for track in tracks]) if tracks else np.zeros(0)
    aos = np.array([track.aos_s for track in tracks])
    los = np.array([track.los_s for track in tracks])
    return _track_times(aos, los, steps.pop())[0]
