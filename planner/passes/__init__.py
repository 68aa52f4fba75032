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

Modules:

* ``model``: ``Target``, ``Pass`` and ``Track`` (compact samples, times rebuilt, Doppler).
* ``station``: the ground station, a WGS84 site and its horizon mask.
* ``frames``: time, Earth rotation and the station's look angles (``Observer``).
* ``search``: the coarse grid step, Hermite interpolation, bisection and golden section.
* ``chunk``: one chunk of satellites propagated over its grid and searched for passes.
* ``batch``: chunk planning, worker processes and handing track samples back.
* ``predict``: ``predict_passes`` and the propagation-time bound checked before it runs.

Times inside the engine are float seconds from the window start; the Julian date
arithmetic runs on UTC as SGP4 expects (AIAA 2006-6753).
"""

from planner.passes.frames import SECONDS_PER_DAY, Look, Observer, gmst_1982_rad
from planner.passes.model import Pass, Target, Track, joined_time_s
from planner.passes.predict import predict_passes
from planner.passes.search import coarse_step_s

__all__ = [
    "predict_passes",
    "Target",
    "Pass",
    "Track",
    "Look",
    "Observer",
    "gmst_1982_rad",
    "coarse_step_s",
    "joined_time_s",
    "SECONDS_PER_DAY",
]
