"""The command line: parses options, calls the library, prints.

One module per command group (`passes`, `budget`, `forecast` for week/compare/rank, `sweep`,
`pattern`, `harness`), what they share in `common`, the application objects in `app`. The
computation lives in the library; a command checks its options, resolves names through the
study, calls, and prints or writes.
"""

from __future__ import annotations

import sys
import warnings

# Importing a command module registers its commands, in the order `planner --help` lists them.
# isort: off
from planner.cli import passes, budget, forecast, sweep, pattern, harness, sheet, cables, start  # noqa: F401

# isort: on
from planner.cli.app import app
from planner.errors import PlannerWarning, UserError


def _warning_printer():
    """A ``warnings.showwarning`` that prints each distinct warning once, as one line on stderr
    (a model's validity note is said once a run, not once a satellite)."""
    said: set[str] = set()

    def show(message, category, filename, lineno, file=None, line=None):
        text = (
            f"planner: warning: {message}"
            if issubclass(category, PlannerWarning)
            else f"planner: warning: {category.__name__}: {message}"
        )
        if text not in said:
            said.add(text)
            print(text, file=sys.stderr)

    return show


def _only_planner_warnings() -> None:
    """Show the program's own warnings and nothing from the libraries underneath.

    A library's warning (a deprecation, a figure-layout note) is about our code, not about the
    user's input, and the user can do nothing about it; the test suite turns such warnings into
    errors instead (``filterwarnings`` in pyproject.toml). A developer who asks for them with
    ``python -W`` or ``PYTHONWARNINGS`` still gets them.
    """
    if not sys.warnoptions:
        warnings.simplefilter("ignore")
    warnings.simplefilter("always", PlannerWarning)


def main() -> None:
    """Entry point: user errors -> one line and exit code 2; bugs -> exit code 1."""
    _only_planner_warnings()
    warnings.showwarning = _warning_printer()
    try:
        # Not standalone, so typer's own usage errors come here and are reported in one line too.
        result = app(standalone_mode=False)
    except UserError as error:
        print(f"planner: error: {error}", file=sys.stderr)
        sys.exit(2)
    except KeyboardInterrupt:
        print("planner: interrupted", file=sys.stderr)
        sys.exit(130)
    except OSError as error:  # a filesystem problem no reader or writer foresaw: still one line
        where = error.filename if error.filename is not None else "file system"
        print(f"planner: error: {where}: {error.strerror or error}", file=sys.stderr)
        sys.exit(2)
    except Exception as error:  # noqa: BLE001 - the command-line parser's own exceptions
        if hasattr(error, "format_message") and hasattr(error, "exit_code"):
            message = " ".join(str(error.format_message()).split())
            if message:  # an empty message: the help text was already shown (no command given)
                print(f"planner: error: {message} (see planner --help)", file=sys.stderr)
            sys.exit(error.exit_code)
        if type(error).__name__ == "Abort":
            print("planner: interrupted", file=sys.stderr)
            sys.exit(130)
        raise
    sys.exit(result if isinstance(result, int) else 0)


if __name__ == "__main__":
    main()
