"""Pass prediction: when each satellite is above the station's horizon mask, and where.

How it works (numpy throughout, many satellites at once):

1. Satellites are grouped by search-grid step (``coarse_step_s`` of their fastest
   angular rate, i.e. at perigee) and cut into chunks small enough that a chunk's
   arrays stay under about 150 MB, whatever the catalog size.
2. Per chunk, one ``SatrecArray.sgp4`` call propagates every satellite over the
   chunk's coarse time grid: TEME position and velocity, and an SGP4 error code per
   (satellite, time).  Greenwich mean sidereal time (IAU-82, Vallado; UT1 from
   skyfield's built-in UT1 - UTC tables) is computed once per grid time, shared by
   all satellites, and rotates TEME to Earth-fixed; the station's east-north-up frame
   gives the elevation.  Polar motion is neglected (metres at the site).  A cheap
   linear bound on the "up" coordinate discards samples that are certainly more than
   10 deg below the mask before any trigonometry.
3. The *clearance* ``elevation - mask(azimuth)`` on the grid brackets every AOS and
   LOS by a sign change; local extremes of the clearance near zero (a grazing peak
   between two negative samples, or a mask shadow between two positive ones) are
   refined by golden-section search, so no short pass or short shadow hides between
   grid points.
4. Refinement makes no further SGP4 calls: between two grid samples the TEME
   position is the cubic Hermite interpolant of the two SGP4 positions and
   velocities (error below a metre for LEO, see ``_hermite``), and the Earth
   rotation is carried exactly from the grid time to the query time.  Bisection
   (AOS, LOS) and golden-section search (extremes, culmination) run on all brackets
   of all satellites of the chunk at once.
5. Tracks are sampled at the scenario's step from AOS to LOS (LOS included) by the
   same interpolation, the range rate from the interpolant's derivative, only where
   passes are, and kept compactly (float32 geometry, times rebuilt from AOS, LOS and
   the step: 16 bytes a sample, see ``Track``); the Doppler shift of each frequency
   given is derived from the range rate on demand.
6. Chunks are spread over worker processes (one per core; none below 200
   satellites, where start-up would cost more than it saves).  The result is
   identical whatever the chunking or the number of workers: every number a
   satellite gets depends on that satellite alone (each is rebuilt from its elements,
   arithmetic is element by element).  SGP4 failures found in a chunk are handed back
   to the calling process and reported there, once per satellite, through
   ``planner.errors.warn``; a failing satellite never stops the others.

Times inside this module are float seconds from the window start; the Julian date
arithmetic runs on UTC as SGP4 expects (AIAA 2006-6753).
"""

from __future__ import annotations

import math
import os
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from functools import lru_cache
from typing import Mapping, Sequence

import numpy as np
from scipy.constants import c as SPEED_OF_LIGHT_M_S
from sgp4.api import SGP4_ERRORS, WGS72, WGS72OLD, WGS84, Satrec, SatrecArray, jday

from planner.errors import warn
from planner.limits import PROPAGATION_SECONDS_PER_SAMPLE, RUN_TIME_LIMIT_S, check_duration
from planner.elements import ElementSet
from planner.passes.station import Station

SECONDS_PER_DAY = 86400.0
# Clearance (deg) beyond which a sampled extreme cannot cross zero between two
# grid points: generous against the few tenths of a degree a low LEO peak moves.
_EXTREME_SEARCH_DEG = 10.0
_BISECTION_STEPS = 22          # 60 s bracket / 2**22 ~ 15 microseconds
_EXTREME_TOLERANCE_S = 1e-3   # near-zero extremes: only their sign matters
_TCA_TOLERANCE_S = 1e-4       # culmination to 0.1 ms (elevation to 1e-4 deg even at the zenith)
_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
_BELOW_EVERYTHING_DEG = -180.0  # clearance used where SGP4 reports an error, or far below
_CHUNK_BYTES = 150e6           # arrays of one chunk (SGP4 output) stay under this
_BYTES_PER_SAMPLE = 49         # TEME r and v (6 float64) + the error code (uint8)
_BLOCK_SAMPLES = 1 << 17       # satellites x times handled at once inside a chunk (cache)
_LOOK_BLOCK = 1 << 13          # interpolated samples handled at once (cache)
_IN_PROCESS_SATELLITES = 200   # fewer satellites than this: no worker processes
_WGS_BY_MU = {398600.79964: WGS72OLD, 398600.8: WGS72, 398600.5: WGS84}


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


# --------------------------------------------------------------------------- time and place


@dataclass(frozen=True)
class _Clock:
    """UTC Julian dates and the Earth's rotation for times in seconds from the window start.

    Plain numbers only, so it travels to worker processes unchanged.
    """

    jd_whole: float
    jd_fraction: float
    dut1_knots_s: np.ndarray   # UT1 - UTC at hourly knots (it changes by milliseconds a day)
    dut1_s: np.ndarray

    @classmethod
    def starting(cls, start_utc: datetime, duration_s: float) -> "_Clock":
        start = start_utc.astimezone(timezone.utc)
        seconds = start.second + start.microsecond * 1e-6
        jd_whole, jd_fraction = jday(start.year, start.month, start.day, start.hour, start.minute, seconds)
        knots_s = np.arange(0.0, max(duration_s, 0.0) + 7200.0, 3600.0)
        knot_times = _timescale().utc(start.year, start.month, start.day, start.hour, start.minute, seconds + knots_s)
        return cls(jd_whole, jd_fraction, knots_s, np.atleast_1d(knot_times.dut1).astype(float))

    def julian(self, time_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(whole, fraction) UTC Julian dates as SGP4 takes them."""
        return np.full(np.shape(time_s), self.jd_whole), self.jd_fraction + time_s / SECONDS_PER_DAY

    def earth_angle(self, time_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """GMST-82 (rad) and its rate (rad/s) at the given times."""
        dut1_s = np.interp(time_s, self.dut1_knots_s, self.dut1_s)
        fraction = self.jd_fraction + time_s / SECONDS_PER_DAY
        return gmst_1982_rad(np.full(np.shape(time_s), self.jd_whole), fraction + dut1_s / SECONDS_PER_DAY)


@dataclass(frozen=True)
class _Site:
    """The station as plain numbers: Earth-fixed position, ENU rows, mask."""

    position_km: tuple[float, float, float]
    east: tuple[float, float, float]
    north: tuple[float, float, float]
    up: tuple[float, float, float]
    mask_azimuth_deg: np.ndarray
    mask_elevation_deg: np.ndarray

    @classmethod
    def of(cls, station: Station) -> "_Site":
        enu = station.enu_rotation
        mask = station.mask
        return cls(tuple(float(x) for x in station.ecef_km), *(tuple(float(x) for x in row) for row in enu),
                   np.asarray(mask.azimuth_deg, float), np.asarray(mask.min_elevation_deg, float))

    @property
    def flat_mask(self) -> bool:
        return len(self.mask_azimuth_deg) == 1

    def mask_at(self, azimuth_deg: np.ndarray) -> np.ndarray:
        if self.flat_mask:
            return np.full(np.shape(azimuth_deg), self.mask_elevation_deg[0])
        return np.interp(np.mod(azimuth_deg, 360.0), self.mask_azimuth_deg, self.mask_elevation_deg, period=360.0)


def _topocentric(site: _Site, x, y, z, cos_t, sin_t, *, azimuth=True, theta_dot=None, velocity=None):
    """(azimuth_deg or None, elevation_deg, range_km, range_rate_km_s or None) from TEME.

    ``cos_t, sin_t``: cosine and sine of GMST.  Element by element (no matrix
    products), so a sample's numbers never depend on which other samples share the
    call.  TEME -> pseudo Earth-fixed is a rotation by -GMST about z; the velocity
    also loses omega x r.
    """
    xe = cos_t * x + sin_t * y
    ye = cos_t * y - sin_t * x
    sx, sy, sz = site.position_km
    dx, dy, dz = xe - sx, ye - sy, z - sz
    (e0, e1, _), (n0, n1, n2), (u0, u1, u2) = site.east, site.north, site.up  # east has no z part
    east = e0 * dx + e1 * dy
    north = n0 * dx + n1 * dy + n2 * dz
    up = u0 * dx + u1 * dy + u2 * dz
    horizontal2 = east * east + north * north
    horizontal = np.sqrt(horizontal2)
    elevation = np.degrees(np.arctan2(up, horizontal))
    range_km = np.sqrt(horizontal2 + up * up)
    if azimuth:
        azimuth = np.degrees(np.arctan2(east, north))
        azimuth = np.where(azimuth < 0.0, azimuth + 360.0, azimuth)
    else:
        azimuth = None
    rate = None
    if velocity is not None:
        vx, vy, vz = velocity
        vxe = cos_t * vx + sin_t * vy + theta_dot * ye
        vye = cos_t * vy - sin_t * vx - theta_dot * xe
        rate = (dx * vxe + dy * vye + dz * vz) / range_km
    return azimuth, elevation, range_km, rate


class Observer:
    """Computes look angles from one station, for times in seconds from ``start_utc``.

    ``look`` calls SGP4 directly at the times asked (the pass search itself works on
    whole chunks of satellites, see the module notes).
    """

    def __init__(self, station: Station, start_utc: datetime, duration_s: float):
        self.station = station
        self.start_utc = start_utc
        self._clock = _Clock.starting(start_utc, duration_s)
        self._site = _Site.of(station)
        self._jd_whole, self._jd_fraction = self._clock.jd_whole, self._clock.jd_fraction

    def look(self, satrec, time_s: np.ndarray) -> Look:
        time_s = np.asarray(time_s, dtype=float)
        whole, fraction = self._clock.julian(time_s)
        error, r_teme, v_teme = satrec.sgp4_array(whole, fraction)
        theta, theta_dot = self._clock.earth_angle(time_s)
        with np.errstate(invalid="ignore"):
            azimuth, elevation, range_km, range_rate = _topocentric(
                self._site, r_teme[:, 0], r_teme[:, 1], r_teme[:, 2], np.cos(theta), np.sin(theta),
                theta_dot=theta_dot, velocity=(v_teme[:, 0], v_teme[:, 1], v_teme[:, 2]),
            )
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


# --------------------------------------------------------------------------- the search grid


def coarse_step_s(period_s: float) -> float:
    """Search grid step for an orbit of this period: 1/100 of it, in whole seconds, 5 to 60 s.

    Why no pass above 1 deg is missed: the lowest LEO (about 350 km, period about
    5500 s) stays above 1 deg elevation for about 3 minutes even on a pass that just
    reaches it (a chord of about 11 deg of ground track), so at a step of at most
    60 s, and at 1/100 of the period for faster orbits, at least two samples fall
    inside it and it shows as a sign change of the clearance.  Lower passes and mask
    shadows shorter than a step show as a sampled local extreme of the clearance
    within 10 deg of zero and are found by a golden-section search between the
    neighbouring samples.  Eccentric orbits are handed the period of their perigee
    angular rate (see ``_perigee_period_s``), where they move fastest.  Whole seconds
    let satellites of similar orbits share one grid, and a satellite's grid never
    depends on which others are predicted with it.
    """
    return float(np.clip(np.floor(period_s / 100.0), 5.0, 60.0))


def _perigee_period_s(satrec) -> float:
    """2 pi over the angular rate at perigee, n (1 + e)^2 / (1 - e^2)^(3/2) (Kepler's 2nd law)."""
    period_s = 2.0 * math.pi / satrec.no_kozai * 60.0
    e = min(max(satrec.ecco, 0.0), 0.999)
    return period_s * (1.0 - e) ** 1.5 / math.sqrt(1.0 + e)


def _search_grid(duration_s: float, step_s: float) -> np.ndarray:
    grid = np.arange(0.0, duration_s, step_s)
    return np.append(grid, duration_s) if len(grid) == 0 or grid[-1] < duration_s else grid


def _hermite(r0, v0, r1, v1, h, tau, with_velocity=False):
    """Cubic Hermite interpolation of position (and its derivative) between two samples.

    ``r0, v0, r1, v1`` are (m, 3) positions (km) and velocities (km/s) at the ends of
    intervals of length ``h`` (s); ``tau`` in [0, 1] is the fraction of the interval.
    Returns the position and (if asked) velocity as (x, y, z) tuples of arrays.
    The interpolant's error is (t - t0)^2 (t - t1)^2 r''''(xi) / 4!, at most
    h^4 / 384 |r''''| at mid-interval (Burden & Faires, Numerical Analysis, Hermite
    error term).  For a LEO orbit |r''''| ~ omega^4 |r| = (2 pi / 5400 s)^4 x 6900 km
    = 1.3e-8 km/s^4, so at the 60 s maximum step the bound is 0.4 m (0.3 m at 54 s);
    SGP4's velocities agree with the derivative of its positions to about 2 cm/s for
    near-circular orbits, adding at most 4/27 h dv ~ 0.2 m.  Measured against SGP4 at
    mid-step: 0.26 m (350 km), 0.29 m (550 km); eccentric orbits, whose SGP4
    velocities are less consistent (about 1 m/s), 0.8 m (e = 0.2) and 1.6 m
    (e = 0.74 at perigee): all far below what AOS/LOS to 1 s or elevation to
    0.01 deg need.  At tau = 0 and tau = 1 the samples are returned exactly.
    """
    tau2 = tau * tau
    tau3 = tau2 * tau
    h00 = 2.0 * tau3 - 3.0 * tau2 + 1.0
    h10 = (tau3 - 2.0 * tau2 + tau) * h
    h01 = 3.0 * tau2 - 2.0 * tau3
    h11 = (tau3 - tau2) * h
    position = tuple(h00 * r0[:, i] + h10 * v0[:, i] + h01 * r1[:, i] + h11 * v1[:, i] for i in range(3))
    if not with_velocity:
        return position, None
    d00 = (6.0 * tau2 - 6.0 * tau) / h
    d10 = 3.0 * tau2 - 4.0 * tau + 1.0
    d11 = 3.0 * tau2 - 2.0 * tau
    velocity = tuple(d00 * (r0[:, i] - r1[:, i]) + d10 * v0[:, i] + d11 * v1[:, i] for i in range(3))
    return position, velocity


# --------------------------------------------------------------------------- one chunk


@dataclass(frozen=True)
class _ChunkJob:
    """Everything a worker needs for one chunk of satellites (all picklable)."""

    target_index: np.ndarray       # position of each satellite in the caller's list
    recipes: tuple                 # sgp4init arguments, one tuple a satellite
    site: _Site
    clock: _Clock
    duration_s: float
    grid_step_s: float
    track_step_s: float


def _recipe(satrec) -> tuple:
    """The sgp4init arguments that rebuild ``satrec`` (it cannot be pickled).

    Epoch as ``Satrec.twoline2rv`` hands it to sgp4init.  Every run rebuilds its
    satellites this way, in the calling process too, so the numbers never depend on
    where a chunk runs.
    """
    whichconst = _WGS_BY_MU.get(round(satrec.mu, 5), WGS72)
    return (
        whichconst, satrec.operationmode, satrec.satnum, satrec.jdsatepoch + satrec.jdsatepochF - 2433281.5,
        satrec.bstar, satrec.ndot, satrec.nddot, satrec.ecco, satrec.argpo, satrec.inclo, satrec.mo,
        satrec.no_kozai, satrec.nodeo,
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

    def __init__(self, chunk: "_Chunk", sat: np.ndarray, k: np.ndarray):
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
        position, velocity = _hermite(self.r0, self.v0, self.r1, self.v1, self.h, tau, rate)
        # cos and sin of theta_k + delta by the angle sum, delta <= 60 s x 7.3e-5 rad/s =
        # 4.4e-3 rad: the series below are good to delta^6 / 720 < 1e-16.
        delta = self.theta_dot * since
        delta2 = delta * delta
        cos_d = 1.0 - delta2 * (0.5 - delta2 / 24.0)
        sin_d = delta * (1.0 - delta2 * (1.0 / 6.0 - delta2 / 120.0))
        cos_t = self.cos0 * cos_d - self.sin0 * sin_d
        sin_t = self.sin0 * cos_d + self.cos0 * sin_d
        azimuth_deg, elevation_deg, range_km, range_rate = _topocentric(
            self.site, *position, cos_t, sin_t,
            azimuth=azimuth, theta_dot=self.theta_dot, velocity=velocity,
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
        self.intervals_table = np.stack([self.grid[:-1], np.diff(self.grid), self.cos_theta[:-1],
                                         self.sin_theta[:-1], self.theta_dot[:-1]], axis=1)

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
        out = None
        for i in range(0, len(time_s), block):
            part = slice(i, i + block)
            values = _Segments(self, sat[part], self.interval_of(time_s[part])).look(
                time_s[part], azimuth=azimuth, rate=rate)
            if out is None:
                out = [None if v is None else np.empty(len(time_s), v.dtype) for v in values]
            for target, v in zip(out, values):
                if v is not None:
                    target[part] = v
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
        threshold = (up_least + up_site - 1.0)[:, None]   # 1 km to spare for rounding
        rows = max(1, _BLOCK_SAMPLES // n_time)
        keys, values = [], []
        flat = site.flat_mask
        for first in range(0, self.n_sat, rows):
            block = slice(first, min(first + rows, self.n_sat))
            r = self.r[block]
            up = r[:, :, 0] * a
            up += r[:, :, 1] * b
            up += r[:, :, 2] * u2
            candidate = up >= threshold[block]      # NaN (SGP4 error) compares False
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
        node_keys = np.unique(np.concatenate([
            keys[sets_after], keys[sets_after] + 1, keys[rises_before] - 1, keys[rises_before],
            keys[extreme] - 1, keys[extreme], keys[extreme] + 1, ends, ends + n_time - 1,
        ]))
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
        return (start_sat[start_order], start_time[start_order], end_time[end_order],
                start_clipped[start_order], end_clipped[end_order])

    def passes(self) -> dict:
        """The chunk's passes and tracks as flat arrays (see ``_run_chunk``)."""
        sat, aos, los, aos_clipped, los_clipped = self.intervals()
        step = self.job.track_step_s
        time_s, offsets, pass_of_sample = _track_times(aos, los, step)
        n_pass = len(aos)
        azimuth, elevation, range_km, range_rate, valid = self.look(sat[pass_of_sample], time_s, rate=True)
        if not valid.all():
            for array in (azimuth, elevation, range_km, range_rate):
                array[~valid] = np.nan

        # Culmination: from the best track sample, golden section within a step of it.
        if n_pass:
            starts = offsets[:-1]
            ranked = np.where(valid, elevation, -np.inf)
            best_value = np.maximum.reduceat(ranked, starts)
            is_best = np.flatnonzero(ranked == np.repeat(best_value, np.diff(offsets)))
            best = is_best[np.searchsorted(is_best, starts)]        # the first best sample of each pass
            low = np.maximum(aos, time_s[best] - step)
            high = np.minimum(los, time_s[best] + step)
            tca, _ = _golden_extreme(lambda t: self.elevation(sat, t), low, high, maximize=True,
                                     tolerance_s=_TCA_TOLERANCE_S)
            key_azimuth, key_elevation, key_range, _, key_valid = self.look(np.tile(sat, 3), np.concatenate([aos, tca, los]))
            for array in (key_azimuth, key_elevation, key_range):
                array[~key_valid] = np.nan
            max_elevation = np.fmax(key_elevation[n_pass:2 * n_pass], np.fmax.reduceat(elevation, starts))
            min_range = np.fmin(key_range[n_pass:2 * n_pass], np.fmin.reduceat(range_km, starts))
        else:
            tca = max_elevation = min_range = key_azimuth = np.empty(0)
        samples = np.empty((len(_SAMPLE_COLUMNS), len(time_s)), _SAMPLE_DTYPE)
        for row, values in zip(samples, (azimuth, elevation, range_km, range_rate)):
            row[:] = values
        return dict(
            target_index=self.job.target_index[sat],
            aos_s=aos, tca_s=tca, los_s=los,
            max_elevation_deg=max_elevation,
            aos_azimuth_deg=key_azimuth[:n_pass],
            tca_azimuth_deg=key_azimuth[n_pass:2 * n_pass],
            los_azimuth_deg=key_azimuth[2 * n_pass:],
            min_range_km=min_range,
            aos_clipped=aos_clipped, los_clipped=los_clipped,
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


def _golden_extreme(function, low: np.ndarray, high: np.ndarray, maximize: bool,
                    tolerance_s: float = _EXTREME_TOLERANCE_S) -> tuple[np.ndarray, np.ndarray]:
    """Vectorized golden-section search for an extreme of ``function`` in each [low, high].

    One new evaluation per step (the other inner point is kept); as many steps as take
    the widest bracket below ``tolerance_s``.
    """
    a, b = low.astype(float).copy(), high.astype(float).copy()
    if not len(a):
        return a, function(a)
    sign = 1.0 if maximize else -1.0
    widest = float(np.max(b - a))
    steps = int(np.ceil(np.log(max(widest, tolerance_s) / tolerance_s) / -np.log(_GOLDEN)))
    c = b - _GOLDEN * (b - a)
    d = a + _GOLDEN * (b - a)
    fc, fd = sign * function(c), sign * function(d)
    for _ in range(steps):
        lower = fc > fd                       # the extreme lies in [a, d]
        b = np.where(lower, d, b)
        a = np.where(lower, a, c)
        new = np.where(lower, b - _GOLDEN * (b - a), a + _GOLDEN * (b - a))
        f_new = sign * function(new)
        c, d = np.where(lower, new, d), np.where(lower, c, new)
        fc, fd = np.where(lower, f_new, fd), np.where(lower, fc, f_new)
    best = 0.5 * (a + b)
    return best, function(best)


def _bisect_roots(function, left: np.ndarray, right: np.ndarray) -> np.ndarray:
    """Vectorized bisection for a zero of ``function`` in each [left, right] (signs differ).

    The bracket ends on the positive side of the zero are returned (within 15 us of it),
    so AOS and LOS samples never fall below the mask.
    """
    left, right = left.astype(float).copy(), right.astype(float).copy()
    if not len(left):
        return left
    left_positive = function(left) > 0
    for _ in range(_BISECTION_STEPS):
        middle = 0.5 * (left + right)
        same_as_left = (function(middle) > 0) == left_positive
        left = np.where(same_as_left, middle, left)
        right = np.where(same_as_left, right, middle)
    return np.where(left_positive, left, right)


def _run_chunk(job: _ChunkJob) -> tuple[dict, list[tuple[int, float, int]]]:
    """Passes of one chunk (flat arrays, tracks concatenated, ``offsets`` per pass) and
    the SGP4 failures to report.  Runs in a worker process or in the caller's."""
    with np.errstate(invalid="ignore", divide="ignore"):
        chunk = _Chunk(job)
        return chunk.passes(), chunk.failures()


# --------------------------------------------------------------------------- handing results back

def _run_chunk_in_worker(job: _ChunkJob, shared_dir: str | None):
    """``_run_chunk`` in a worker process, its track samples handed back cheaply.

    The samples (most of the result) go into a file in ``shared_dir`` (a RAM file
    system) that the calling process maps instead of unpickling a copy; without one,
    or when it lacks room, they travel pickled.
    """
    result, failures = _run_chunk(job)
    samples = result["samples"]
    path = _write_samples(samples, shared_dir) if shared_dir and samples.size else None
    if path is not None:
        del result["samples"]
        result["samples_file"] = path
    return result, failures


def _write_samples(samples: np.ndarray, folder: str) -> str | None:
    import tempfile

    path = None
    try:
        free = os.statvfs(folder)
        if free.f_bavail * free.f_frsize < 2 * samples.nbytes + (64 << 20):
            return None
        fd, path = tempfile.mkstemp(prefix="planner-passes-", suffix=".f4", dir=folder)
        with os.fdopen(fd, "wb") as out:
            out.write(memoryview(np.ascontiguousarray(samples)))
        return path
    except OSError:
        if path is not None:
            _unlink_quietly(path)
        return None


def _unlink_quietly(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def _take_samples(result: dict) -> None:
    """Put the track samples of a chunk's result back in place (mapped from their file)."""
    path = result.pop("samples_file", None)
    if path is None:
        return
    import mmap

    shape = (len(_SAMPLE_COLUMNS), int(result["offsets"][-1]))
    size = shape[0] * shape[1] * np.dtype(_SAMPLE_DTYPE).itemsize
    try:
        with open(path, "rb") as source:
            mapped = mmap.mmap(source.fileno(), size, flags=mmap.MAP_PRIVATE,
                               prot=mmap.PROT_READ | mmap.PROT_WRITE)   # copy-on-write: writable arrays
    finally:
        _unlink_quietly(path)   # the mapping keeps the data until the last array goes
    result["samples"] = np.frombuffer(mapped, dtype=_SAMPLE_DTYPE).reshape(shape)


def _shared_dir() -> str | None:
    """A RAM file system for handing samples back (Linux), or None."""
    import sys

    folder = "/dev/shm"
    if sys.platform.startswith("linux") and os.path.isdir(folder) and os.access(folder, os.W_OK):
        return folder
    return None


# --------------------------------------------------------------------------- planning and running


def _worker_count() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def _plan_chunks(satrecs: Sequence, duration_s: float, *, workers: int, chunk_satellites: int | None = None):
    """Groups of satellite indices sharing a grid step, cut into chunks.

    Returns [(grid_step_s, indices)].  A chunk's SGP4 output stays under
    ``_CHUNK_BYTES``; with several workers chunks are also made small enough that
    each worker gets a few of them.
    """
    steps = np.array([coarse_step_s(_perigee_period_s(s)) for s in satrecs])
    plan = []
    for step in np.unique(steps):
        members = np.nonzero(steps == step)[0]
        n_time = len(_search_grid(duration_s, float(step)))
        size = max(1, int(_CHUNK_BYTES // (n_time * _BYTES_PER_SAMPLE)))
        if workers > 1:
            size = min(size, max(16, -(-len(members) // (4 * workers))))
        if chunk_satellites is not None:
            size = max(1, int(chunk_satellites))
        plan.extend((float(step), members[i:i + size]) for i in range(0, len(members), size))
    return plan


def _process_context():
    """How worker processes start: fork on Linux, spawn elsewhere.

    Forking re-imports nothing (spawn re-runs the caller's main script, which then
    needs an ``if __name__ == "__main__":`` guard, and imports numpy and sgp4 again
    in every worker).  The workers start no threads and use no BLAS, and every
    satellite is rebuilt from plain numbers (``_recipe``), so what runs in a worker
    is the same whichever way it was started.  Platforms where fork is unsafe or
    missing (macOS, Windows) spawn.
    """
    import multiprocessing
    import sys

    method = "fork" if sys.platform.startswith("linux") else "spawn"
    return multiprocessing.get_context(method)


def _run_all(jobs: list[_ChunkJob], workers: int):
    """Results of every job, in order; in worker processes when ``workers`` > 1."""
    if workers <= 1 or len(jobs) <= 1:
        for job in jobs:
            yield _run_chunk(job)
        return
    try:
        pool = ProcessPoolExecutor(max_workers=min(workers, len(jobs)), mp_context=_process_context())
    except (OSError, NotImplementedError, ImportError):  # no process support here: run in-process
        for job in jobs:
            yield _run_chunk(job)
        return
    shared_dir = _shared_dir()
    with pool:
        futures = [pool.submit(_run_chunk_in_worker, job, shared_dir) for job in jobs]
        taken = 0
        try:
            for future in futures:
                result = future.result()
                taken += 1
                _take_samples(result[0])
                yield result
        finally:  # stopped early (an error, an interrupt): leave no sample files behind
            for future in futures[taken:]:
                future.cancel()
            pool.shutdown(wait=True)
            for future in futures[taken:]:
                if future.done() and not future.cancelled() and future.exception() is None:
                    path = future.result()[0].get("samples_file")
                    if path:
                        _unlink_quietly(path)


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
        samples, PROPAGATION_SECONDS_PER_SAMPLE, RUN_TIME_LIMIT_S,
        "shorten the window or predict fewer satellites (--satellite, or a catalog's max_objects)",
    )


def predict_passes(
    targets: Sequence[Target | ElementSet] | Target | ElementSet,
    station: Station,
    start_utc: datetime,
    end_utc: datetime,
    *,
    step_s: float = 10.0,
    workers: int | None = None,
    chunk_satellites: int | None = None,
) -> list[Pass]:
    """Every pass of every target above the station's mask in [start_utc, end_utc].

    Passes under way at either edge of the window are clipped to it and flagged.
    A satellite whose SGP4 propagation fails (decayed, eccentricity out of range...)
    is reported with a warning from the first failing time on; the others go on.
    Passes are returned sorted by AOS, then NORAD id.

    ``workers``: processes to spread the chunks over (default: one per core, and
    none at all below 200 satellites); ``chunk_satellites`` forces the chunk size.
    Neither changes the result.
    """
    if isinstance(targets, (Target, ElementSet)):
        targets = [targets]
    targets = [t if isinstance(t, Target) else Target(t) for t in targets]
    if not step_s > 0:
        raise ValueError(f"step_s must be positive, got {step_s!r}")
    start_utc = start_utc.astimezone(timezone.utc)
    duration_s = (end_utc.astimezone(timezone.utc) - start_utc).total_seconds()
    if duration_s <= 0:
        return []

    usable, satrecs, recipes, messages = [], [], [], {}
    for index, target in enumerate(targets):
        satrec = target.element_set.satrec
        recipe = _recipe(satrec)
        # The initialisation error of a fresh copy: ``satrec.error`` itself also holds
        # the outcome of whatever propagation the caller ran last.
        error = _rebuild(recipe).error
        if error:
            reason = SGP4_ERRORS.get(error, f"error {error}")
            messages[index] = (f"{target.display_name} ({target.element_set.norad_id}): SGP4 cannot start "
                               f"from these elements ({reason}); no passes predicted")
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
            _ChunkJob(usable_index[members], tuple(recipes[m] for m in members), site, clock,
                      duration_s, grid_step, float(step_s))
            for grid_step, members in _plan_chunks(satrecs, duration_s, workers=workers, chunk_satellites=chunk_satellites)
        ]
        for result, failures in _run_all(jobs, workers):
            passes.extend(_passes_from(result, targets, start_utc, float(step_s)))
            for index, time_s, code in failures:
                target = targets[index]
                when = start_utc + timedelta(seconds=time_s)
                reason = SGP4_ERRORS.get(code, f"error {code}")
                messages[index] = (f"{target.display_name} ({target.element_set.norad_id}): SGP4 fails from "
                                   f"{when:%Y-%m-%dT%H:%M:%SZ} on ({reason}); no passes predicted after that")
    for index in sorted(messages):
        warn(messages[index])
    passes.sort(key=lambda item: item[0])
    return [item[1] for item in passes]


def _passes_from(result: dict, targets: list[Target], start_utc: datetime, track_step_s: float) -> list[tuple]:
    """(sort key, Pass) for every pass of one chunk; tracks are views of the chunk's samples."""
    offsets = result["offsets"].tolist()
    columns = [result[name].tolist() for name in (
        "target_index", "aos_s", "tca_s", "los_s", "max_elevation_deg", "aos_azimuth_deg",
        "tca_azimuth_deg", "los_azimuth_deg", "min_range_km", "aos_clipped", "los_clipped")]
    samples = result["samples"]
    names: dict[int, tuple[str, int]] = {}
    made = []
    for j, (index, aos_s, tca_s, los_s, max_elevation, aos_az, tca_az, los_az, min_range,
            aos_clipped, los_clipped) in enumerate(zip(*columns)):
        target = targets[index]
        if index not in names:
            names[index] = (target.display_name, target.element_set.norad_id)
        name, norad_id = names[index]
        track = Track(start_utc, aos_s, los_s, track_step_s, samples[:, offsets[j]:offsets[j + 1]],
                      target.frequencies_hz)
        aos_utc = start_utc + timedelta(seconds=aos_s)
        item = Pass(
            name, norad_id, aos_utc, start_utc + timedelta(seconds=tca_s), start_utc + timedelta(seconds=los_s),
            max_elevation, aos_az, tca_az, los_az, min_range, aos_clipped, los_clipped, track,
        )
        made.append(((aos_utc, norad_id, index, aos_s), item))
    return made
