"""A whole invented catalog for one station and a week: the engine against bare propagation.

Two measurements, each in a fresh Python process of its own so that its peak memory is
its own:

* baseline: bare ``SatrecArray.sgp4`` over the engine's coarse search grid, nothing
  else: the same satellites rebuilt the same way, the same chunks
  (``planner.passes.batch._plan_chunks``), the same worker processes (same count, same start
  method, pool start-up included); the positions are thrown away.
* engine: ``predict_passes`` with tracks at the default 10 s step, everything included
  (worker start-up, topocentric geometry, pass search, refinement, tracks, Pass objects
  in the calling process).

Peak memory is ``resource.getrusage`` ``ru_maxrss``: RUSAGE_SELF for the calling
process, RUSAGE_CHILDREN for the largest worker.  The engine hands track samples back
from its workers through files on a RAM file system (/dev/shm) that the calling
process maps; those pages count in ru_maxrss only once touched, so the space they take
there (measured with statvfs) is added to the calling process's figure.  A bound on
the total, with every worker at its peak at once, is printed as well, and the peak of
everything at once (resident memory of the calling process and its workers from /proc,
plus the RAM files), sampled every 0.1 s during the run.  The satellites are invented (LEO at many
heights and inclinations, eccentric, MEO and geosynchronous orbits), none is real.

    .venv/bin/python benchmarks/catalog.py [--satellites N] [--days D] [--workers W]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ProcessPoolExecutor
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
from sgp4.api import SatrecArray

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from planner import passes as engine  # noqa: E402
from planner.elements import read_elements  # noqa: E402
from planner.passes.batch import _plan_chunks, _process_context, _shared_dir, _worker_count  # noqa: E402
from planner.passes.chunk import _rebuild, _recipe  # noqa: E402
from planner.passes.frames import _Clock  # noqa: E402
from planner.passes.model import _SAMPLE_COLUMNS, _SAMPLE_DTYPE  # noqa: E402
from planner.passes.search import _search_grid  # noqa: E402
from planner.passes.station import Station  # noqa: E402
from tests.orbit_factory import EARTH_RADIUS_KM, make_tle, write_three_line  # noqa: E402

STATION = Station("catalog-bench", 52.137, -1.804, 142.0)
START = datetime(2027, 1, 4, tzinfo=UTC)


def invented_catalog(count: int, seed: int = 2027, mix: str = "mixed"):
    """(name, TLE lines) of ``count`` invented satellites: 90 % LEO, 5 % eccentric, 2 % MEO, 3 % GEO.

    Roughly the make-up of today's active population, which is mostly low orbits.
    Satellites seen for days on end (GEO, MEO) carry the longest tracks: at a 10 s
    step a week-long pass is 60,480 samples.  ``mix="leo"``: LEO only.
    """
    rng = np.random.default_rng(seed)
    entries = []
    for k in range(count):
        kind = rng.uniform() if mix == "mixed" else 0.0
        orbit = dict(
            raan_deg=float(rng.uniform(0, 360)), mean_anomaly_deg=float(rng.uniform(0, 360)), argp_deg=float(rng.uniform(0, 360))
        )
        if kind < 0.90:
            orbit.update(
                height_km=float(rng.uniform(350, 1200)),
                inclination_deg=float(rng.uniform(0, 100)),
                eccentricity=float(rng.uniform(1e-4, 0.01)),
            )
        elif kind < 0.95:
            e = float(rng.uniform(0.01, 0.3))
            perigee_km = float(rng.uniform(300, 1000))
            orbit.update(
                height_km=(EARTH_RADIUS_KM + perigee_km) / (1 - e) - EARTH_RADIUS_KM,
                inclination_deg=float(rng.uniform(0, 110)),
                eccentricity=e,
            )
        elif kind < 0.97:
            orbit.update(
                height_km=float(rng.uniform(19000, 24000)),
                inclination_deg=float(rng.uniform(50, 65)),
                eccentricity=float(rng.uniform(1e-4, 0.02)),
            )
        else:
            orbit.update(
                height_km=35786.0 + float(rng.uniform(-50, 50)),
                inclination_deg=float(rng.uniform(0, 15)),
                eccentricity=float(rng.uniform(1e-4, 1e-3)),
            )
        entries.append((f"CAT-{k:05d}", make_tle(200000 + k, bstar=1e-5, **orbit)))
    return entries


# Python objects of one pass without its samples (Pass, Track, 3 datetimes, 7 floats,
# one array view, the list slot), measured with tracemalloc on this engine.
_PASS_OBJECT_BYTES = 680
_SAMPLE_BYTES = len(_SAMPLE_COLUMNS) * np.dtype(_SAMPLE_DTYPE).itemsize


def _bare_chunk(job):
    """Baseline work for one chunk: rebuild, SatrecArray.sgp4 over the grid, nothing more."""
    recipes, duration_s, step_s, clock = job
    satrecs = [_rebuild(recipe) for recipe in recipes]
    grid = _search_grid(duration_s, step_s)
    whole, fraction = clock.julian(grid)
    error, r, v = SatrecArray(satrecs).sgp4(whole, fraction)
    return int(error.shape[0] * error.shape[1])


def _shared_used_mb() -> float:
    """Space in use on the RAM file system the engine hands track samples back through."""
    folder = _shared_dir()
    if folder is None:
        return 0.0
    stats = os.statvfs(folder)
    return (stats.f_blocks - stats.f_bfree) * stats.f_frsize / 2**20


def _family_rss_mb() -> float:
    """Resident memory of this process and its children now, from /proc (Linux)."""
    pids = [os.getpid()]
    try:
        for task in os.listdir("/proc/self/task"):
            with open(f"/proc/self/task/{task}/children") as f:
                pids.extend(int(pid) for pid in f.read().split())
    except OSError:
        pass
    total = 0.0
    for pid in pids:
        try:
            with open(f"/proc/{pid}/statm") as f:
                total += int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
        except (OSError, ValueError, IndexError):
            pass
    return total / 2**20


class _PeakSampler:
    """Samples (resident memory of this process and its workers + RAM-file space) every 0.1 s."""

    def __init__(self):
        import threading

        self.peak_mb = 0.0
        self._base_shared = _shared_used_mb()
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self._stop.is_set():
            self.peak_mb = max(self.peak_mb, _family_rss_mb() + _shared_used_mb() - self._base_shared)
            self._stop.wait(0.1)

    def __enter__(self):
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()
        self.peak_mb = max(self.peak_mb, _family_rss_mb() + _shared_used_mb() - self._base_shared)


def _rss_mb(who) -> float:
    return resource.getrusage(who).ru_maxrss / 1024.0  # kilobytes on Linux


def measure(mode: str, path: Path, days: float, workers: int) -> dict:
    element_sets = read_elements(path)
    end = START + timedelta(days=days)
    duration_s = (end - START).total_seconds()
    own0, children0 = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    sampler = _PeakSampler().__enter__()
    if mode == "baseline":
        t = time.perf_counter()
        satrecs = [e.satrec for e in element_sets]
        recipes = [_recipe(s) for s in satrecs]
        clock = _Clock.starting(START, duration_s)
        plan = _plan_chunks(satrecs, duration_s, workers=workers)
        jobs = [(tuple(recipes[m] for m in members), duration_s, step, clock) for step, members in plan]
        if workers > 1:
            with ProcessPoolExecutor(max_workers=min(workers, len(jobs)), mp_context=_process_context()) as pool:
                samples = sum(pool.map(_bare_chunk, jobs))
        else:
            samples = sum(map(_bare_chunk, jobs))
        wall_s = time.perf_counter() - t
        extra = {"samples": samples, "chunks": len(jobs)}
    else:
        shared_before = _shared_used_mb()
        t = time.perf_counter()
        found = engine.predict_passes(element_sets, STATION, START, end, workers=workers)
        wall_s = time.perf_counter() - t
        extra = {
            "passes": len(found),
            "track_samples": int(sum(len(p.track) for p in found)),
            "shared_mb": _shared_used_mb() - shared_before,
        }
    sampler.__exit__(None, None, None)
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)

    def cpu_s(after, before):
        return after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime

    return {
        "wall_s": wall_s,
        "self_mb": _rss_mb(resource.RUSAGE_SELF),
        "children_mb": _rss_mb(resource.RUSAGE_CHILDREN),
        "self_cpu_s": cpu_s(own, own0),
        "children_cpu_s": cpu_s(children, children0),
        "family_peak_mb": sampler.peak_mb,
        **extra,
    }


def _walls(runs) -> str:
    return ", ".join(f"{r['wall_s']:.1f}" for r in runs)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--satellites", type=int, default=10_000)
    parser.add_argument("--days", type=float, default=7.0)
    parser.add_argument("--workers", type=int, default=_worker_count())
    parser.add_argument(
        "--mix",
        choices=["mixed", "leo"],
        default="mixed",
        help="mixed: 90 %% LEO, 5 %% eccentric, 2 %% MEO, 3 %% GEO; leo: LEO only",
    )
    parser.add_argument(
        "--repeat",
        type=int,
        default=2,
        help="measure each side this many times, interleaved, and keep the best "
        "(other load on the machine only ever slows a run down)",
    )
    parser.add_argument("--mode", choices=["baseline", "engine"], help=argparse.SUPPRESS)
    parser.add_argument("--elements", type=Path, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.mode:  # one measurement, in this process
        print(json.dumps(measure(args.mode, args.elements, args.days, args.workers)))
        return

    path = Path(tempfile.mkdtemp()) / "catalog.tle"
    write_three_line(path, invented_catalog(args.satellites, mix=args.mix))
    runs = {"baseline": [], "engine": []}
    for _ in range(max(1, args.repeat)):
        for mode in ("baseline", "engine"):
            out = subprocess.run(
                [
                    sys.executable,
                    __file__,
                    "--mode",
                    mode,
                    "--elements",
                    str(path),
                    "--days",
                    str(args.days),
                    "--workers",
                    str(args.workers),
                ],
                check=True,
                capture_output=True,
                text=True,
            ).stdout
            runs[mode].append(json.loads(out.strip().splitlines()[-1]))
    base = min(runs["baseline"], key=lambda r: r["wall_s"])
    full = min(runs["engine"], key=lambda r: r["wall_s"])
    print(
        f"machine: {os.cpu_count()} cores ({_worker_count()} usable), {args.workers} worker processes; "
        f"{args.satellites} invented satellites ({args.mix}) x {args.days:g} days x 1 station, tracks every 10 s; "
        f"best of {max(1, args.repeat)} interleaved runs each "
        f"(all wall times: baseline {_walls(runs['baseline'])}; engine {_walls(runs['engine'])} s)"
    )
    print(
        f"baseline, bare SatrecArray.sgp4 on the engine's coarse grid, same chunks ({base['chunks']}) and workers: "
        f"{base['wall_s']:7.2f} s  ({base['samples'] / 1e6:.1f} M satellite-samples)"
    )
    print(
        f"engine, predict_passes with tracks: {full['wall_s']:7.2f} s  "
        f"({full['passes']} passes, {full['track_samples'] / 1e6:.1f} M track samples)"
    )
    print(
        f"ratio engine / baseline: {full['wall_s'] / base['wall_s']:.2f} (target <= 1.5); CPU seconds "
        f"(calling process + workers): baseline {base['self_cpu_s']:.1f} + {base['children_cpu_s']:.1f}, "
        f"engine {full['self_cpu_s']:.1f} + {full['children_cpu_s']:.1f}"
    )
    returned_mb = (full["track_samples"] * _SAMPLE_BYTES + full["passes"] * _PASS_OBJECT_BYTES) / 2**20
    print(
        f"returned passes alone: about {returned_mb:.0f} MB ({full['track_samples'] / 1e6:.1f} M samples x "
        f"{_SAMPLE_BYTES} bytes + {full['passes']} Pass/Track objects x ~{_PASS_OBJECT_BYTES} bytes)"
    )
    for name, r in (("baseline", base), ("engine", full)):
        shared = r.get("shared_mb", 0.0)
        bound = r["self_mb"] + shared + (args.workers * r["children_mb"] if args.workers > 1 else 0.0)
        print(
            f"peak memory ({name}): ru_maxrss of the calling process {r['self_mb']:.0f} MB, of the largest "
            f"worker {r['children_mb']:.0f} MB"
            + (
                f", track samples mapped from RAM files {shared:.0f} MB (counted in the process only where touched)"
                if shared
                else ""
            )
            + f"; the calling process's own total {r['self_mb'] + shared:.0f} MB; sampled peak of everything "
            f"at once (calling process + workers + RAM files, every 0.1 s) {r['family_peak_mb']:.0f} MB "
            f"(target < 2048 MB); loose bound with every worker at its peak at the end {bound:.0f} MB"
        )


if __name__ == "__main__":
    main()
