"""planner: choose a fixed circularly polarized ground-station antenna set-up.

The package follows one data flow: scenario -> orbits and station -> passes with
tracks -> per-sample link budget -> forecast -> recommendation -> outputs.
"""

__version__ = "0.1.0"
