"""The command-line application objects; the command modules register on them."""

import typer

# Help texts are plain text: no rich markup, so "[catalog]" and "[[satellite]]" print as written.
app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    rich_markup_mode=None,
    help="Plan a satellite ground station: passes, link margins and the antenna set-up to build.",
)

pattern_app = typer.Typer(
    help="Antenna pattern tables: build them from models, inspect them.", no_args_is_help=True, rich_markup_mode=None
)
app.add_typer(pattern_app, name="pattern")


def _print_version(value: bool) -> None:
    if value:
        from planner import __version__

        print(f"planner {__version__}")
        raise typer.Exit()


@app.callback()
def _root(
    version: bool = typer.Option(False, "--version", callback=_print_version, is_eager=True, help="Print the version and stop."),
) -> None:
    """Plan a satellite ground station: passes, link margins and the antenna set-up to build."""
