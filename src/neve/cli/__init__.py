"""The ``neve`` command line: a thin shell over the library.

Each command lives in its own module and is imported only when it is run, so
``neve roof`` does not pay for geopandas or folium.  Every command parses its
options, calls the library and prints; errors derived from
:class:`neve.engine.errors.NeveError` become a one-line message on stderr and the
error's exit code (2 for bad input, 1 otherwise).
"""

from __future__ import annotations

import importlib

import click

from neve.engine.errors import NeveError

_COMMANDS = {
    "roof": ("neve.cli.roof", "roof", "Roof snow loads from a given ground snow load."),
    "site": ("neve.cli.site", "site", "Ground and roof snow loads for one site."),
    "screen": ("neve.cli.screen", "screen", "Screen a portfolio of sites."),
    "layer": ("neve.cli.layer", "layer", "Check or show a zone layer."),
    "verify": ("neve.cli.verify", "verify", "Run the verification cases of the standards."),
    "serve": ("neve.cli.serve", "serve", "The site and portfolio pages and the JSON API."),
    "compare": (
        "neve.cli.compare",
        "compare",
        "One site under two or more editions, side by side.",
    ),
}


class _LazyGroup(click.Group):
    def list_commands(self, ctx):
        return sorted(_COMMANDS)

    def get_command(self, ctx, name):
        if name not in _COMMANDS:
            return None
        module, attr, _ = _COMMANDS[name]
        try:
            return getattr(importlib.import_module(module), attr)
        except ModuleNotFoundError as exc:  # a command not built yet
            if exc.name == module:
                return None
            raise

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except NeveError as exc:
            click.echo(f"neve: error: {exc}", err=True)
            raise click.exceptions.Exit(exc.exit_code) from exc

    def format_commands(self, ctx, formatter):
        rows = [(name, help_) for name, (_, _, help_) in sorted(_COMMANDS.items())]
        with formatter.section("Commands"):
            formatter.write_dl(rows)


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("neve")
    except Exception:  # pragma: no cover - running from a source tree
        return "0+unknown"


def _print_version(ctx: click.Context, _param, value: bool) -> None:
    """``--version``: the installed version, looked up only when asked (issue 16)."""
    if not value or ctx.resilient_parsing:
        return
    click.echo(f"neve, version {_version()}")
    ctx.exit()


@click.group(cls=_LazyGroup)
@click.option(
    "--version",
    is_flag=True,
    expose_value=False,
    is_eager=True,
    callback=_print_version,
    help="Show the version and exit.",
)
def cli() -> None:
    """neve: design snow loads from a site's ground snow load to its roof load cases.

    Results are an aid to, not a substitute for, a licensed design
    professional. Confirm ground snow loads with the authority having
    jurisdiction; flagged sites need a site-specific case study.
    """


#: console-script entry point (``neve = "neve.cli:main"``); a click group, so
#: ``CliRunner().invoke(main, [...])`` works as well as the installed command.
main = cli


if __name__ == "__main__":  # pragma: no cover
    main()
