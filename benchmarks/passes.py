"""Pass search plus tracks: planner's vectorized engine against a plain skyfield loop.

Both sides get the same invented satellites, station and 7-day window. The skyfield
side is what one would write by hand: find_events for rise/culminate/set, then altaz
and range at the same track step. Prints the machine's core count, wall times (the
engine's includes its worker processes' start-up and skyfield's time scale loading),
their ratio and how well the two agree: pass count, worst AOS/LOS difference (skyfield
places events to about 0.5 s) and worst maximum elevation, skyfield's culmination
being refined afterwards, untimed, by one parabolic step through its altitude at
-0.5, 0 and +0.5 s.

With ``--pass-list`` it times instead what a user runs: the ``planner passes --elements
... --format csv`` command in a fresh interpreter (start-up, reading the elements and
writing the CSV included), against the plain skyfield ``find_events`` loop without
tracks over the same objects; each side ``--repeat`` times (fastest, median, slowest),
with the agreement of the command's CSV (count, worst AOS/LOS difference; the CSV
gives times to the second).

    .venv/bin/python benchmarks/passes.py [--satellites N] [--days D] [--step-s S]
    .venv/bin/python benchmarks/passes.py --pass-list [--satellites N] [--days D] [--repeat R]
"""

from __future__ import annotations

import argparse
import csv
import os
import statistics
import subprocess
import sys
import tempfile
import time
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from skyfield.api import EarthSatellite, load, wgs84  # noqa: E402

from planner.elements import read_elements  # noqa: E402
from planner.passes import predict_passes  # noqa: E402
from planner.passes.station import Station  # noqa: E402
from tests.orbit_factory import make_tle, write_three_line  # noqa: E402


def invented_catalog(count: int, seed: int = 7):
    rng = np.random.default_rng(seed)
    entries = []
    for k in range(count):
        orbit = dict(
            norad_id=90000 + k,
            height_km=float(rng.uniform(400, 900)),
            inclination_deg=float(rng.choice([51.6, 97.5, 82.0, 65.0, 98.2])),
            raan_deg=float(rng.uniform(0, 360)),
            mean_anomaly_deg=float(rng.uniform(0, 360)),
            eccentricity=float(rng.uniform(0.0001, 0.01)),
        )
        entries.append((f"BENCH-{k:04d}", make_tle(**orbit)))
    return entries


def _skyfield_frame(station, start, end):
    """skyfield's time scale, the station as a WGS84 position, and the window's two ends."""
    ts = load.timescale()
    site = wgs84.latlon(station.latitude_deg, station.longitude_deg, elevation_m=station.altitude_m)
    return ts, site, ts.from_datetime(start), ts.from_datetime(end)


def skyfield_loop(element_sets, station, start, end, step_s):
    ts, site, t0, t1 = _skyfield_frame(station, start, end)
    result = []
    for e in element_sets:
        sat = EarthSatellite.from_satrec(e.satrec, ts)
        times, events = sat.find_events(site, t0, t1, altitude_degrees=0.0)
        rise, culmination, peak_tt = None, -90.0, None
        for t, ev in zip(times, events):
            if ev == 0:
                rise, culmination = t, -90.0
            elif ev == 1 and rise is not None:
                altitude = float((sat - site).at(t).altaz()[0].degrees)
                if altitude > culmination:
                    culmination, peak_tt = altitude, t.tt
            elif ev == 2 and rise is not None:
                span_s = (t.tt - rise.tt) * 86400.0
                track = ts.tt_jd(rise.tt + np.append(np.arange(0.0, span_s, step_s), span_s) / 86400.0)
                alt, az, distance = (sat - site).at(track).altaz()
                result.append((e.norad_id, rise.utc_datetime(), t.utc_datetime(), culmination, peak_tt))
                rise = None
    return result


def refined_culminations(element_sets, station, reference):
    """Maximum elevation of each reference pass after one parabolic step (untimed)."""
    ts = load.timescale()
    site = wgs84.latlon(station.latitude_deg, station.longitude_deg, elevation_m=station.altitude_m)
    by_id = {e.norad_id: e for e in element_sets}
    refined = []
    for norad_id in sorted({r[0] for r in reference}):
        rows = [r for r in reference if r[0] == norad_id]
        sat = EarthSatellite.from_satrec(by_id[norad_id].satrec, ts)
        peak_tt = np.array([r[4] for r in rows])
        h = 0.5 / 86400.0
        alt = (sat - site).at(ts.tt_jd(np.concatenate([peak_tt - h, peak_tt, peak_tt + h]))).altaz()[0].degrees
        before, middle, after = np.split(alt, 3)
        curvature = before - 2 * middle + after
        shift = np.where(curvature < 0, 0.5 * (before - after) / np.where(curvature < 0, curvature, -1.0), 0.0)
        vertex = (sat - site).at(ts.tt_jd(peak_tt + np.clip(shift, -1.0, 1.0) * h)).altaz()[0].degrees
        best = np.maximum(np.maximum(vertex, middle), np.maximum(before, after))
        refined.extend((r[0], r[1], r[2], float(b)) for r, b in zip(rows, best))
    return refined


def skyfield_events(element_sets, station, start, end):
    """(norad_id, rise, set) of every complete pass from skyfield's find_events, no tracks."""
    ts, site, t0, t1 = _skyfield_frame(station, start, end)
    result = []
    for e in element_sets:
        sat = EarthSatellite.from_satrec(e.satrec, ts)
        times, events = sat.find_events(site, t0, t1, altitude_degrees=0.0)
        rise = None
        for t, ev in zip(times, events):
            if ev == 0:
                rise = t
            elif ev == 2 and rise is not None:
                result.append((e.norad_id, rise.utc_datetime(), t.utc_datetime()))
                rise = None
    return result


def _timed(run, repeat: int):
    """(last result, wall times in s) of ``repeat`` runs."""
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        result = run()
        times.append(time.perf_counter() - t)
    return result, times


def _spread(times) -> str:
    return f"{min(times):7.2f} s fastest, {statistics.median(times):.2f} median, {max(times):.2f} slowest"


def pass_list_mode(args, path: Path, element_sets, station, start, end) -> None:
    """The command as a user runs it against the plain skyfield event loop (no tracks)."""
    root = Path(__file__).resolve().parents[1]
    out = path.with_suffix(".csv")
    command = [sys.executable, "-m", "planner", "passes", "--elements", str(path)]
    command += ["--lat", str(station.latitude_deg), "--lon", str(station.longitude_deg), "--alt-m", str(station.altitude_m)]
    command += ["--start", start.strftime("%Y-%m-%dT%H:%M:%SZ"), "--days", f"{args.days:g}", "--step-s", f"{args.step_s:g}"]
    command += ["--format", "csv", "--output", str(out), "--force", "--allow-stale"]
    environment = dict(os.environ, PYTHONPATH=str(root) + os.pathsep + os.environ.get("PYTHONPATH", ""))

    def run_command():
        subprocess.run(command, check=True, env=environment, cwd=root, capture_output=True)

    _, command_s = _timed(run_command, args.repeat)
    reference, reference_s = _timed(lambda: skyfield_events(element_sets, station, start, end), args.repeat)

    edges = {start.strftime("%Y-%m-%dT%H:%M:%SZ"), end.strftime("%Y-%m-%dT%H:%M:%SZ")}
    with open(out, newline="") as source:
        rows = [r for r in csv.DictReader(source) if r["aos_utc"] not in edges and r["los_utc"] not in edges]
    parse = lambda text: datetime.strptime(text, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)  # noqa: E731
    ours = sorted((int(r["norad_id"]), parse(r["aos_utc"]), parse(r["los_utc"])) for r in rows)
    ref = sorted(reference)
    same = len(ours) == len(ref) and all(a[0] == b[0] for a, b in zip(ours, ref))
    worst_aos = max((abs((a[1] - b[1]).total_seconds()) for a, b in zip(ours, ref)), default=0.0) if same else float("nan")
    worst_los = max((abs((a[2] - b[2]).total_seconds()) for a, b in zip(ours, ref)), default=0.0) if same else float("nan")
    print(f"machine: {os.cpu_count()} cores; {args.satellites} satellites x {args.days:g} days; {args.repeat} runs each")
    print(f"planner passes --format csv : {_spread(command_s)}  ({len(ours)} complete passes in the CSV)")
    print(f"skyfield find_events loop   : {_spread(reference_s)}  ({len(ref)} complete passes)")
    ratio = statistics.median(reference_s) / statistics.median(command_s)
    print(f"ratio (medians)             : {ratio:7.1f} (skyfield time / planner time)")
    print(
        f"agreement                   : same passes of the same satellites: {same}; worst AOS {worst_aos:.3f} s, "
        f"LOS {worst_los:.3f} s (CSV to the second, skyfield's events to about 0.5 s)"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--satellites", type=int, default=200)
    parser.add_argument("--days", type=float, default=7.0)
    parser.add_argument("--step-s", type=float, default=10.0)
    parser.add_argument("--pass-list", action="store_true", help="time the planner passes command against find_events alone")
    parser.add_argument("--repeat", type=int, default=3, help="runs of each side in --pass-list mode")
    args = parser.parse_args()

    folder = Path(tempfile.mkdtemp())
    path = folder / "bench.tle"
    write_three_line(path, invented_catalog(args.satellites))
    element_sets = read_elements(path)
    station = Station("bench", 52.137, -1.804, 142.0)
    start = datetime(2027, 1, 4, tzinfo=UTC)
    end = start + timedelta(days=args.days)
    if args.pass_list:
        pass_list_mode(args, path, element_sets, station, start, end)
        return

    t = time.perf_counter()
    ours = predict_passes(element_sets, station, start, end, step_s=args.step_s)
    ours_s = time.perf_counter() - t
    t = time.perf_counter()
    reference = skyfield_loop(element_sets, station, start, end, args.step_s)
    reference_s = time.perf_counter() - t

    complete = [p for p in ours if not (p.aos_clipped or p.los_clipped)]
    ours_by = sorted((p.norad_id, p.aos_utc, p.los_utc, p.max_elevation_deg) for p in complete)
    ref_by = sorted(refined_culminations(element_sets, station, reference))
    same_count = len(ours_by) == len(ref_by) and all(a[0] == b[0] for a, b in zip(ours_by, ref_by))
    worst_aos = worst_los = worst_el = float("nan")
    if same_count:
        worst_aos = max(abs((a[1] - b[1]).total_seconds()) for a, b in zip(ours_by, ref_by))
        worst_los = max(abs((a[2] - b[2]).total_seconds()) for a, b in zip(ours_by, ref_by))
        worst_el = max(abs(a[3] - b[3]) for a, b in zip(ours_by, ref_by))
    identical = same_count and worst_aos < 1.0 and worst_los < 1.0 and worst_el < 0.01
    print(f"machine: {os.cpu_count()} cores; {args.satellites} satellites x {args.days:g} days, track step {args.step_s:g} s")
    print(f"planner engine : {ours_s:8.2f} s  ({len(complete)} complete passes)")
    print(f"skyfield loop  : {reference_s:8.2f} s  ({len(ref_by)} complete passes)")
    print(f"ratio          : {reference_s / ours_s:8.1f}x faster (target >= 20x)")
    print(
        f"agreement      : same passes of the same satellites: {same_count}; worst AOS {worst_aos:.3f} s, "
        f"LOS {worst_los:.3f} s (skyfield's events to about 0.5 s), max elevation {worst_el:.4f} deg; "
        f"identical within 1 s / 0.01 deg: {identical}"
    )


if __name__ == "__main__":
    main()
