"""The command-line application objects; the command modules register on them."""

import typer

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Plan a satellite ground station: passes, link margins and the antenna set-up to build.",
)

pattern_app = typer.Typer(help="Antenna pattern tables: build them from models, inspect them.", no_args_is_help=True)
app.add_typer(pattern_app, name="pattern")


@app.callback()
def _root() -> None:
    """Plan a satellite ground station: passes, link margins and the antenna set-up to build."""
