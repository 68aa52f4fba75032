"""Test-wide settings.

Property-based tests run with a fixed seed and a fixed number of examples, so every run (on a
laptop or in CI) draws the same inputs and a failure can be reproduced (hypothesis documentation,
"settings: derandomize"; no example database is written). Set PLANNER_HYPOTHESIS_PROFILE=explore
for fresh random examples on each run, and PLANNER_FUZZ_EXAMPLES for a longer hunt in the
command-line fuzzers (tests/test_hardening.py).
"""

import os

from hypothesis import settings

settings.register_profile("fixed", derandomize=True, database=None, deadline=None)
settings.register_profile("explore", derandomize=False, deadline=None)
settings.load_profile(os.environ.get("PLANNER_HYPOTHESIS_PROFILE", "fixed"))

import subprocess  # noqa: E402
import sys  # noqa: E402
from pathlib import Path  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
"""The repository's root folder (scenarios/, patterns/, sample_tle/ are under it)."""
DEMO = ROOT / "scenarios" / "demo.toml"
"""The demo scenario: the invented station and satellites the README walks through."""


def run_planner(*args, cwd: Path = ROOT) -> subprocess.CompletedProcess:
    """``planner ARGS`` in a new interpreter (``python -m planner``), output captured as text."""
    return subprocess.run([sys.executable, "-m", "planner", *map(str, args)], capture_output=True, text=True, cwd=cwd)
