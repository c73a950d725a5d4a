"""Every command and option that docs/contract.md ("Commands and exit codes") names exists, spelt exactly.

Source of every check: docs/contract.md, "Commands and exit codes" (regression guard
of the contract's spelling).
"""

from __future__ import annotations

import click
import pytest

from neve.cli import main

from .conftest import run

ROOF_OPTIONS = [
    "--shape", "--slope", "--surface", "--ct", "--thermal", "--ce", "--terrain", "--exposure",
    "--risk", "--eave-to-ridge", "--r-value", "--ventilated", "--unventilated",
    "--unobstructed", "--obstructed", "--roof",
]  # fmt: skip
SITE_OPTIONS = [
    "--at", "--address", "--elevation", "--dem", "--layer", "--site-name", "--project",
    "--map", "--package", "--format",
]  # fmt: skip
SCREEN_OPTIONS = ["-o", "--layer", "--dem", "--roof", "--map"]


def _command(*path: str) -> click.Command:
    ctx = click.Context(main)
    cmd: click.Command = main
    for name in path:
        cmd = cmd.get_command(ctx, name)  # type: ignore[attr-defined]
        assert cmd is not None, f"command {' '.join(path)!r} missing"
    return cmd


def _spellings(cmd: click.Command) -> set[str]:
    out: set[str] = set()
    for p in cmd.params:
        if isinstance(p, click.Option):
            out.update(p.opts)
            out.update(p.secondary_opts)
    return out


@pytest.mark.parametrize("path", [("roof",), ("site",), ("screen",), ("layer", "check")])
def test_commands_exist(path):
    _command(*path)


@pytest.mark.parametrize("command", ["roof", "site"])
@pytest.mark.parametrize("option", ROOF_OPTIONS)
def test_roof_options_on_roof_and_site(command, option):
    assert option in _spellings(_command(command))


@pytest.mark.parametrize("option", SITE_OPTIONS)
def test_site_options(option):
    assert option in _spellings(_command("site"))


def test_roof_has_pg_and_format():
    names = _spellings(_command("roof"))
    assert {"--pg", "--format"} <= names


@pytest.mark.parametrize("option", SCREEN_OPTIONS)
def test_screen_options(option):
    assert option in _spellings(_command("screen"))


def test_screen_takes_the_sites_file_as_argument():
    args = [p for p in _command("screen").params if isinstance(p, click.Argument)]
    assert len(args) == 1


def test_layer_check_takes_the_layer_as_argument():
    args = [p for p in _command("layer", "check").params if isinstance(p, click.Argument)]
    assert len(args) == 1


@pytest.mark.parametrize("fmt", ["text", "json"])
def test_format_choices(fmt):
    res = run("roof", "--pg", "35psf", "--format", fmt)
    assert res.exit_code == 0, res.output


def test_unknown_format_is_exit_2():
    res = run("roof", "--pg", "35psf", "--format", "xml")
    assert res.exit_code == 2
    assert "text" in res.output and "json" in res.output
