"""The demo's full comparison as a user runs it: `planner compare scenarios/demo.toml --quiet`.

Timed as a subprocess, so Python start-up, imports, reading the scenario and the
element files, pass prediction, link budgets, forecast and ranking are all included.
Prints the machine's core count, every run's wall time, the best and the median.

    .venv/bin/python benchmarks/demo.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def command() -> list[str]:
    """The installed `planner` entry point next to this Python, else `python -m planner`."""
    script = Path(sys.executable).with_name("planner")
    if script.exists():
        return [str(script)]
    return [sys.executable, "-m", "planner"]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3)
    args = parser.parse_args()
    argv = command() + ["compare", "scenarios/demo.toml", "--quiet"]
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    times = []
    for _ in range(max(1, args.runs)):
        t = time.perf_counter()
        done = subprocess.run(argv, cwd=ROOT, env=env, capture_output=True, text=True)
        times.append(time.perf_counter() - t)
        if done.returncode != 0:
            sys.exit(f"{' '.join(argv)} failed with exit code {done.returncode}:\n{done.stderr.strip()}")
    print(f"machine: {os.cpu_count()} cores; command: {' '.join(argv)} (cwd {ROOT})")
    print("runs (wall s, start-up included): " + ", ".join(f"{t:.2f}" for t in times))
    print(f"best {min(times):.2f} s, median {statistics.median(times):.2f} s")


if __name__ == "__main__":
    main()
