"""The `init` command: write a commented scenario to start from, that loads and runs as written."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import typer

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError

ELEMENTS_FILE = Path("sample_tle") / "demo.tle"
PATTERN_FILES = (Path("patterns") / "turnstile-close.csv", Path("patterns") / "loops-tall-far.csv")

SCENARIO_TEMPLATE = """\
# A scenario to start from, written by `planner init`. Change what describes your station;
# every key is checked when the file is read, and unknown keys are refused.
# Units are in the key names (_deg, _m, _mhz, _w, _db, _s). Choices are written with hyphens
# (an underscore spelling such as "data_volume" is read as the same choice).
# The station and the satellite below are invented examples.

[station]
name = "My Station"               # any one-line name, shown in every output
latitude_deg = 52.137             # north positive, -90 to 90
longitude_deg = -1.804            # east positive, -180 to 180
altitude_m = 142                  # above the WGS84 ellipsoid, -500 to 9000
# The lowest elevation you can hear at, either one number for every azimuth or a list of
# [azimuth_deg, min_elevation_deg] points, linear between them and wrapping at north.
horizon_mask = [[0, 3], [90, 5], [180, 8], [270, 2]]
# Man-made radio noise at the site (ITU-R P.372): one of city, residential, rural, quiet-rural.
noise_environment = "rural"
# The clock of the hour tables and the calendar: an IANA time zone name such as
# "Europe/London", "UTC", or "local-mean-solar".
time_zone = "UTC"

[window]
start_utc = 2027-01-04T00:00:00Z  # first moment predicted, UTC
days = 2                          # length of the prediction window, up to 31 days
step_s = 10                       # time step of the pass samples, at least 0.5 s

[[satellite]]
# One target: its element file and catalog number, its frequencies and its radio.
name = "WRENLING-1"
elements = "{elements}"           # TLE or CCSDS OMM file, relative to this file
norad_id = 99901                  # catalog number in the element file
downlink_mhz = 436.525
tx_power_w = 1.0                  # the satellite's transmitter power
antenna_gain_dbi = 0.0            # its antenna gain towards the station
line_loss_db = 0.5                # its losses between transmitter and antenna
polarization = "linear-tumbling"  # one of rhcp, lhcp, linear, linear-tumbling
modulation = "gmsk"               # bpsk, qpsk, dbpsk, fsk-coherent, fsk-noncoherent, gmsk, afsk-fm, fm
data_rate_bps = 9600
target_ber = 1e-5                 # bit error ratio the link must reach
implementation_loss_db = 2.0      # the demodulator's loss against theory
weight = 1.0                      # how much this satellite counts in the ranking

[receiver]
lna_noise_figure_db = 0.8
lna_gain_db = 20
lna_position = "antenna"          # one of antenna, receiver, none; a candidate may override
receiver_noise_figure_db = 6      # the receiver behind the LNA
feedline_temperature_k = 290      # physical temperature of the feedline

# Candidate set-ups to compare: a pattern table (relative to this file), the feedline
# (catalog cables: planner cables) and the number of connectors.

[[candidate]]
name = "turnstile-close"
pattern = "{pattern_a}"
feedline = [{{ cable = "RG-213", length_m = 20.0 }}]
connectors = 4

[[candidate]]
name = "loops-tall-far"
pattern = "{pattern_b}"
feedline = [{{ cable = "RG-213", length_m = 20.0 }}]
connectors = 4

[criteria]
min_margin_db = 3.0               # a pass sample counts when its margin is at least this
min_usable_s = 60                 # a pass counts when it has at least this much usable time
objective = "data-volume"         # or "usable-time"
fade_percentile = 90              # tumbling satellites: fade not exceeded this often
budget_uncertainty_db = 2.0       # the recommendation is re-checked with every budget shifted by this
"""


def _relative_to(target_folder: Path, data_dir: Path, file: Path, option: str) -> str:
    """``data_dir/file`` as written in a scenario saved in ``target_folder`` (relative, forward slashes)."""
    source = data_dir / file
    if not source.is_file():
        raise UserError(
            f"{option}: {source} does not exist; run from the folder that holds sample_tle/ and patterns/, or name it with {option}"
        )
    return Path(os.path.relpath(source.absolute(), target_folder.absolute())).as_posix()


def scenario_text(target: Path, data_dir: Path) -> str:
    """The starting scenario for ``target``, its element and pattern paths relative to the target's folder."""
    folder = target.parent if str(target.parent) else Path(".")
    return SCENARIO_TEMPLATE.format(
        elements=_relative_to(folder, data_dir, ELEMENTS_FILE, "--data-dir"),
        pattern_a=_relative_to(folder, data_dir, PATTERN_FILES[0], "--data-dir"),
        pattern_b=_relative_to(folder, data_dir, PATTERN_FILES[1], "--data-dir"),
    )


@app.command("init")
def init(
    path: Path = typer.Argument(..., help="The scenario file to write."),
    data_dir: Path = typer.Option(
        Path("."), "--data-dir", help="Folder holding sample_tle/ and patterns/ (default: the working folder)."
    ),
    force: bool = common.FORCE,
) -> None:
    """Write a commented scenario to start from: one station, one satellite, two candidates."""
    from planner.fileio import write_atomically

    rules = common.write_rules(force)
    common.check_outputs(rules, {"PATH": path})
    write_atomically(path, scenario_text(path, data_dir), rules=rules)
    print(f"wrote {path}; next: planner compare {path}", file=sys.stderr)
