"""A catalog query as a user runs it: `planner rank` over thousands of invented objects.

Writes an invented catalog (the mix of benchmarks/catalog.py: 90 % LEO, 5 % eccentric,
2 % MEO, 3 % GEO) and a scenario that is the demo's station, receiver and candidates
with a ``[catalog]`` table instead of its satellites, then times

    planner rank SCENARIO --candidate turnstile-far --format csv --output ... --quiet

as a subprocess (start-up, element reading, passes, budgets and ranking included) and
prints the wall time and the peak resident memory of the largest process (the command
or one of its workers; ``ru_maxrss`` of the waited-for children, which includes the
track samples it maps from RAM files once they are read).  None of the objects is real.

    .venv/bin/python benchmarks/rank.py [--satellites N] [--days D]
"""

from __future__ import annotations

import argparse
import os
import re
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from catalog import invented_catalog  # noqa: E402

from tests.orbit_factory import write_three_line  # noqa: E402

CANDIDATE = "turnstile-far"


def catalog_scenario(folder: Path, count: int, days: float) -> Path:
    """The demo scenario with its [[satellite]] tables replaced by a [catalog] of ``count`` objects."""
    elements = folder / "catalog.tle"
    write_three_line(elements, invented_catalog(count))
    demo = (ROOT / "scenarios" / "demo.toml").read_text()
    head, tail = demo[: demo.index("[[satellite]]")], demo[demo.index("[receiver]") :]
    head = re.sub(r"^days = .*$", f"days = {days:g}", head, flags=re.M)
    text = (
        head
        + f'''[catalog]
elements = "{elements}"
downlink_mhz = 436.0
tx_power_w = 1.0
modulation = "gmsk"
data_rate_bps = 9600

'''
        + tail
    )
    # Relative paths of the demo (patterns, cables) are taken from the demo's folder.
    text = text.replace('"../', f'"{ROOT}/')
    path = folder / "catalog.toml"
    path.write_text(text)
    return path


def planner_command() -> list[str]:
    script = Path(sys.executable).with_name("planner")
    return [str(script)] if script.exists() else [sys.executable, "-m", "planner"]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--satellites", type=int, default=10_000)
    parser.add_argument("--days", type=float, default=7.0)
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp())
    scenario = catalog_scenario(folder, args.satellites, args.days)
    output = folder / "ranked.csv"
    command = planner_command() + [
        "rank",
        str(scenario),
        "--candidate",
        CANDIDATE,
        "--format",
        "csv",
        "--output",
        str(output),
        "--quiet",
    ]
    started = time.perf_counter()
    run = subprocess.run(command, capture_output=True, text=True)
    wall_s = time.perf_counter() - started
    if run.returncode != 0:
        sys.exit(f"planner rank failed ({run.returncode}): {run.stderr.strip()}")
    peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0  # kilobytes on Linux
    ranked = len(output.read_text().splitlines()) - 1
    print(
        f"machine: {os.cpu_count()} cores; planner rank, {args.satellites} invented objects x {args.days:g} days, "
        f"candidate {CANDIDATE}, tracks every 10 s"
    )
    print(
        f"wall time {wall_s:.1f} s (start-up included); {ranked} objects ranked; "
        f"peak resident memory of the largest process {peak_mb:.0f} MB (target < 2048 MB)"
    )


if __name__ == "__main__":
    main()
