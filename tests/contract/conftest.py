"""Hand-made layers for the contract audit (invented fixture data only).

Re-uses the fixture grid of ``tests/geo/conftest.py`` (six 0.01-degree cells
in the open Atlantic near 30 N, 40 W) and adds small layers that provoke the
flags and statuses the grid cannot: overlapping zones, a zone over the DEM's
nodata corner, defective zones and hostile formulas.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from neve.cli import main
from tests.geo.conftest import cell, fixture_rows, write_dem, write_layer

NAN = float("nan")
BASE = {"pg": NAN, "elev_max": NAN, "table": None, "expr": None, "Z": NAN, "pg_min": NAN}


def zone(zone_id: str, rule: str, geometry, **kw) -> dict:
    """One fixture row (invented)."""
    return dict(BASE, zone_id=zone_id, rule=rule, geometry=geometry, **kw)


def run(*args: str):
    """Invoke the click group in-process."""
    return CliRunner().invoke(main, list(args))


def _no_constant(name: str):
    raise AssertionError(f"JSON output holds {name}, which strict JSON (RFC 8259) does not allow")


def run_json(*args: str) -> dict:
    """Run a command with ``--format json``; its stdout must be one strict JSON object."""
    res = run(*args, "--format", "json")
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout, parse_constant=_no_constant)


@pytest.fixture(scope="session")
def cdir(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("contract")


@pytest.fixture(scope="session")
def grid(cdir) -> str:
    return str(write_layer(cdir / "grid.geojson", fixture_rows()))


@pytest.fixture(scope="session")
def dem(cdir) -> str:
    """DEM over the grid: 10 m per column + row index; nodata in its north-west corner."""
    return str(write_dem(cdir / "dem.tif"))


@pytest.fixture(scope="session")
def overlap(cdir) -> str:
    from shapely.geometry import box

    rows = [
        zone("O1", "fixed", box(-40.0, 30.0, -39.98, 30.02), pg=20.0),
        zone("O2", "fixed", box(-39.99, 30.0, -39.97, 30.02), pg=40.0),
    ]
    return str(write_layer(cdir / "overlap.geojson", rows))


@pytest.fixture(scope="session")
def big(cdir) -> str:
    """One elevation-table zone that also covers the DEM's nodata corner."""
    from shapely.geometry import box

    rows = [zone("B1", "elevation_table", box(-40.01, 30.0, -39.96, 30.04),
                 table="[[0, 20], [1000, 40]]")]  # fmt: skip
    return str(write_layer(cdir / "big.geojson", rows))


@pytest.fixture(scope="session")
def defective(cdir) -> str:
    """Zones a layer check must reject; the site lookup must answer 'error', not crash."""
    rows = [
        zone("E1", "formula", cell(0, 0), expr="log(A - 100000)"),
        zone("E2", "fixed", cell(1, 0), pg=-5.0),
        zone("E3", "fixed", cell(2, 0)),  # fixed without a value
        zone("E4", "elevation_table", cell(0, 1), table="[[0, 20], [1000, 10], [500, 5]]"),
        zone("E5", "bogus", cell(1, 1)),
    ]
    return str(write_layer(cdir / "defective.geojson", rows))


@pytest.fixture(scope="session")
def hostile(cdir) -> str:
    rows = [
        zone("H1", "formula", cell(0, 0), expr="__import__('os').system('touch pwned')"),
        zone("H2", "formula", cell(1, 0), expr="A.__class__"),
        zone("H3", "formula", cell(2, 0), expr="(lambda: 1)()"),
    ]
    return str(write_layer(cdir / "hostile.geojson", rows))


@pytest.fixture(scope="session")
def implausible(cdir) -> str:
    """A fixed zone whose only defect is an implausible mapped value (1e12 psf)."""
    return str(
        write_layer(cdir / "implausible.geojson", [zone("X1", "fixed", cell(0, 0), pg=1.0e12)])
    )
