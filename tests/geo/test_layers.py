"""Layer loading and views (neve.geo.layers.model), formats and the demo stack."""

from __future__ import annotations

import hashlib

import pytest

from neve.engine.errors import LayerError
from neve.geo.layers.model import demo_dem_path, demo_layers, load_layer

from .conftest import FIXTURE_META, centre, fixture_rows, toml_text, write_layer

VIEW_COLUMNS = [
    "zone_id",
    "rule",
    "pg",
    "pg_psf",
    "elev_max",
    "note",
    "source",
    "study",
    "pg_lo",
    "pg_hi",
    "geometry",
]  # fmt: skip  (issue 11: the range a rule gives)


@pytest.mark.parametrize("suffix", [".gpkg", ".geojson", ".shp", ".fgb"])
def test_every_vector_format_reads(tmp_path, suffix):
    path = write_layer(tmp_path / f"z{suffix}", fixture_rows())
    layer = load_layer(path)
    assert len(layer.zones) == 6 and not layer.is_raster and layer.zones.problems == []
    from neve.geo.site.resolve import resolve_points

    r = resolve_points([centre(0, 0)[0]], [centre(0, 0)[1]], layers=[layer]).iloc[0]
    assert r["pg_psf"] == 20.0


def test_sha256_is_of_the_file(grid_layer):
    layer = load_layer(grid_layer)
    assert layer.sha256 == hashlib.sha256(grid_layer.read_bytes()).hexdigest()


def test_view_contract(grid_layer):
    v = load_layer(grid_layer).view()
    assert set(v) == {"name", "meta", "sha256", "demo", "value_units", "quantity", "zones"}
    assert v["quantity"] == "pg"
    z = v["zones"]
    rows = z.set_index("zone_id")
    table = rows[rows["rule"] == "elevation_table"]
    assert len(table) and (table["pg_hi"] > table["pg_lo"]).all()  # a table's range
    assert list(z.columns) == VIEW_COLUMNS and z.crs.to_epsg() == 4326 and len(z) == 6
    assert z.set_index("zone_id").loc["Z3", "study"]
    assert z.set_index("zone_id")["pg"].isna().sum() == 3  # study, table, formula
    near = load_layer(grid_layer).view(center=centre(0, 0), radius_m=300)["zones"]
    assert set(near["zone_id"]) == {"Z1"}


def test_missing_layer_and_sidecar(tmp_path):
    with pytest.raises(LayerError, match="not found"):
        load_layer(tmp_path / "none.gpkg")
    p = write_layer(tmp_path / "a.gpkg", fixture_rows())
    (tmp_path / "a.gpkg.toml").unlink()
    with pytest.raises(LayerError, match="no sidecar"):
        load_layer(p)


def test_unreadable_layer(tmp_path):
    p = tmp_path / "junk.gpkg"
    p.write_text("not a geopackage")
    (tmp_path / "junk.gpkg.toml").write_text(toml_text(FIXTURE_META))
    with pytest.raises(LayerError, match="cannot be read"):
        load_layer(p)


def test_demo_stack_is_marked_and_complete():
    layers = demo_layers()
    assert len(layers) == 2 and all(layer.demo and layer.meta["demo"] for layer in layers)
    base = layers[1]
    assert set(base.zones.rule_names()) == {"fixed", "study", "elevation_table", "formula"}
    assert (base.zones.rule_names() == "study").sum() >= 2
    assert (~__import__("numpy").isnan(base.zones.elev_max)).any()
    assert (~__import__("numpy").isnan(base.zones.pg_min)).any()
    assert "Z" in base.zones.columns
    assert base.crs.to_epsg() == 32607  # stored projected on purpose
    assert demo_dem_path().is_file()


def test_view_of_a_kpa_layer_converts_to_psf():
    from neve.engine.units import KPA_PER_PSF

    town = demo_layers()[0]
    z = town.view()["zones"].set_index("zone_id")
    assert town.meta["value_units"] == "kPa"
    assert z.loc["PH-1", "pg"] == 1.45  # invented demo value, kPa
    assert z.loc["PH-1", "pg_psf"] == pytest.approx(1.45 / KPA_PER_PSF)


@pytest.mark.parametrize("seed", range(6))
def test_own_zone_pairs_match_pair_keys(seed):
    """Regression guard (issue 16): the index look-up gives what np.isin on pair keys gave."""
    import numpy as np

    from neve.geo.layers.vector import _own_zone

    rng = np.random.default_rng(seed)
    n_sites, n_zones = 200, 30
    qi = rng.integers(0, n_sites, 260)  # some sites in two or more zones
    cz = rng.integers(0, n_zones, 260)
    qn_site = rng.integers(0, n_sites, 900)
    nz = np.where(
        rng.random(900) < 0.4, cz[rng.integers(0, 260, 900)], rng.integers(0, n_zones, 900)
    )
    nz[:200] = cz[:200]
    qn_site[:200] = qi[:200]
    want = np.isin(qn_site * n_zones + nz, qi * n_zones + cz)
    assert (_own_zone(qi, cz, qn_site, nz, n_sites, n_zones) == want).all()
