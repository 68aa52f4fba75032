"""``python -m planner``: the same command line as ``planner``."""

from planner.cli import main

main()
