"""Basemaps under the zones (issue 11): ``--basemap``, MBTiles read with sqlite3, embedded tiles.

Checks against sources outside neve:

- the tile numbering of Web Mercator ("slippy map") tiles against pyproj's EPSG:3857
  projection (a general-purpose reference library): the tile column and row are the
  projected x and y scaled to the 2^z grid, rows counted from the north;
- the MBTiles 1.3 specification (Mapbox, open): ``tiles(zoom_level, tile_column,
  tile_row, tile_data)`` with ``tile_row`` in the TMS scheme, counted from the south,
  so ``tile_row = 2^z - 1 - y``; ``metadata(name, value)`` with ``format``,
  ``bounds`` (west, south, east, north), ``minzoom``, ``maxzoom``, ``attribution``.

Every MBTiles file here is written by the test itself (plain colour tiles) or is the
invented demo basemap (``geo/demo/skerrow_basemap.mbtiles``, built by
``data_recipes/build_demo_basemap.py``); no real map tiles.
"""

from __future__ import annotations

import io
import math
import sqlite3

import numpy as np
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError
from neve.maps import basemap as bm
from tests.maps.conftest import browser_or_skip

README_SITE = ["site", "--at", "47.52,-140.05", "--dem", "demo", "--shape", "gable",
               "--slope", "6:12", "--eave-to-ridge", "30ft"]  # fmt: skip
HOSTILE = "<img src=x onerror=alert(1)>{{ 7*7 }}{% raw %}'\""


def _png(rgb) -> bytes:
    from PIL import Image

    buf = io.BytesIO()
    Image.new("RGB", (256, 256), rgb).save(buf, format="PNG")
    return buf.getvalue()


def write_mbtiles(path, lat, lon, zooms=(10, 11, 12), colour=(255, 0, 255), *, fmt="png",
                  attribution="test tiles (invented)", span=1):  # fmt: skip
    """An MBTiles file of one colour around (lat, lon); tile (z, x, y) -> TMS row."""
    con = sqlite3.connect(path)
    con.execute("CREATE TABLE metadata (name TEXT, value TEXT)")
    con.execute("CREATE TABLE tiles (zoom_level INTEGER, tile_column INTEGER, "
                "tile_row INTEGER, tile_data BLOB)")  # fmt: skip
    d = 0.5
    meta = {"name": "t", "format": fmt, "attribution": attribution,
            "bounds": f"{lon - d},{lat - d},{lon + d},{lat + d}",
            "minzoom": str(min(zooms)), "maxzoom": str(max(zooms))}  # fmt: skip
    con.executemany("INSERT INTO metadata VALUES (?, ?)", meta.items())
    data = _png(colour)
    for z in zooms:
        x, y = (int(v) for v in bm.tile_xy(lat, lon, z))
        for dx in range(-span, span + 1):
            for dy in range(-span, span + 1):
                con.execute("INSERT INTO tiles VALUES (?, ?, ?, ?)",
                            (z, x + dx, 2**z - 1 - (y + dy), data))  # fmt: skip
    con.commit()
    con.close()
    return path


# --- tile numbering ----------------------------------------------------------------------


@pytest.mark.parametrize("lat,lon,zoom", [(47.52, -140.05, 13), (0.001, 0.001, 1),
                                          (-33.9, 151.2, 9), (64.1, -21.9, 12)])  # fmt: skip
def test_tile_xy_matches_pyproj_web_mercator(lat, lon, zoom):
    from pyproj import Transformer

    x, y = Transformer.from_crs(4326, 3857, always_xy=True).transform(lon, lat)
    origin = 20037508.342789244  # half the EPSG:3857 square [m]
    want = ((x + origin) / (2 * origin) * 2**zoom, (origin - y) / (2 * origin) * 2**zoom)
    got = bm.tile_xy(lat, lon, zoom)
    assert got == pytest.approx(want, rel=1e-9)


def test_tms_rows_flip_per_the_mbtiles_specification(tmp_path):
    """A tile stored at TMS row 2^z-1-y is read back as XYZ row y (MBTiles 1.3)."""
    path = tmp_path / "flip.mbtiles"
    con = sqlite3.connect(path)
    con.execute("CREATE TABLE metadata (name TEXT, value TEXT)")
    con.execute("CREATE TABLE tiles (zoom_level INTEGER, tile_column INTEGER, "
                "tile_row INTEGER, tile_data BLOB)")  # fmt: skip
    con.executemany("INSERT INTO metadata VALUES (?, ?)",
                    [("format", "png"), ("bounds", "-180,-85,180,85")])  # fmt: skip
    # zoom 1: XYZ row 0 is the north half; store a red north-west and a blue south-west tile
    con.execute("INSERT INTO tiles VALUES (1, 0, 1, ?)", (_png((255, 0, 0)),))  # TMS 1 = north
    con.execute("INSERT INTO tiles VALUES (1, 0, 0, ?)", (_png((0, 0, 255)),))  # TMS 0 = south
    con.commit()
    con.close()
    base = bm.resolve(str(path))
    tiles = bm.read_tiles(base, 1, [[-80.0, -170.0], [80.0, -10.0]])
    assert set(tiles) == {(0, 0), (0, 1)}
    from PIL import Image

    north = Image.open(io.BytesIO(tiles[(0, 0)])).convert("RGB").getpixel((5, 5))
    south = Image.open(io.BytesIO(tiles[(0, 1)])).convert("RGB").getpixel((5, 5))
    assert north == (255, 0, 0) and south == (0, 0, 255)
    assert bm.xyz_row(bm.xyz_row(5, 4), 4) == 5


# --- choosing a basemap ------------------------------------------------------------------


def test_auto_gives_the_demo_basemap_for_demo_data_only(tmp_path):
    demo = tmp_path / "demo.mbtiles"
    write_mbtiles(demo, 47.5, -140.0)
    assert bm.resolve("auto", demo_data=True, demo_file=demo).kind == "mbtiles"
    assert bm.resolve("auto", demo_data=False, demo_file=demo).kind == "none"
    assert bm.resolve(None, demo_data=True, demo_file=demo).demo
    # the older --tiles osm still means OpenStreetMap, with its attribution
    osm = bm.resolve("auto", tiles="osm", demo_data=True, demo_file=demo)
    assert osm.kind == "url" and "OpenStreetMap" in osm.attribution
    assert bm.resolve("none", tiles="osm").kind == "none"


@pytest.mark.parametrize(
    "choice,attribution,field",
    [
        ("satellite", None, "basemap"),
        ("https://tiles.example/{z}/{x}.png", "x", "basemap"),
        ("ftp://tiles.example/{z}/{x}/{y}.png", "x", "basemap"),
        ('https://tiles.example/{z}/{x}/{y}.png"onload="x', "x", "basemap"),
        ("https://tiles.example/{z}/{x}/{y}.png", None, "basemap-attribution"),
        ("https://tiles.example/{z}/{x}/{y}.png", "  ", "basemap-attribution"),
        ("missing.mbtiles", None, "basemap"),
    ],
)
def test_bad_basemaps_are_refused_naming_the_field(choice, attribution, field):
    with pytest.raises(InputError) as err:
        bm.resolve(choice, attribution)
    assert err.value.field == field


def test_not_sqlite_and_vector_tiles_are_refused(tmp_path):
    junk = tmp_path / "junk.mbtiles"
    junk.write_bytes(b"not a database at all" * 100)
    with pytest.raises(InputError, match="not an MBTiles file"):
        bm.resolve(str(junk))
    vector = write_mbtiles(tmp_path / "vector.mbtiles", 47.5, -140.0, fmt="pbf")
    with pytest.raises(InputError, match="raster tiles only"):
        bm.resolve(str(vector))


def test_a_url_template_carries_its_attribution():
    base = bm.resolve("https://tiles.example/{z}/{x}/{y}.png", "(c) Example tiles")
    assert base.kind == "url" and base.attribution == "(c) Example tiles"


# --- embedding ------------------------------------------------------------------------


def test_embedded_tiles_cover_the_view_and_stay_in_budget(tmp_path):
    path = write_mbtiles(tmp_path / "t.mbtiles", 47.52, -140.05, zooms=range(8, 15), span=2)
    base = bm.resolve(str(path))
    d = 0.03
    bounds = [[47.52 - d, -140.05 - d], [47.52 + d, -140.05 + d]]
    layers = bm.embedded_tiles(base, bounds, 13)
    keys = set().union(*(set(t) for t, _, _ in layers))
    for z in (13, 14):  # the tiles under the site at the zooms the map opens with are there
        x, y = (int(v) for v in bm.tile_xy(47.52, -140.05, z))
        assert f"{z}/{x}/{y}" in keys
    assert all(v.startswith("data:image/png;base64,") for t, _, _ in layers for v in t.values())
    small = bm.embedded_tiles(base, bounds, 13, budget=3000)
    n_small = sum(len(t) for t, _, _ in small)
    assert 0 < n_small < len(keys)


def test_site_map_embeds_the_demo_basemap_and_none_turns_it_off(tmp_path):
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(tmp_path / "a.html")])
    assert res.exit_code == 0, res.output
    page = (tmp_path / "a.html").read_text("utf-8")
    assert "EmbeddedTiles" not in page  # the class name is ours, not written to the page
    assert page.count("data:image/png;base64,") > 100
    assert "Invented demo basemap of Skerrow Island" in page
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(tmp_path / "b.html"),
                                    "--basemap", "none"])  # fmt: skip
    assert res.exit_code == 0, res.output
    bare = (tmp_path / "b.html").read_text("utf-8")
    assert "Invented demo basemap" not in bare and len(bare) < len(page) / 1.5


def test_bad_basemap_exits_2_before_writing(tmp_path):
    out = tmp_path / "m.html"
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(out), "--basemap", "aerial"])
    assert res.exit_code == 2
    assert "basemap" in res.output and "mbtiles" in res.output
    assert not out.exists()
    url = "https://tiles.example/{z}/{x}/{y}.png"
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(out), "--basemap", url])
    assert res.exit_code == 2 and "basemap-attribution" in res.output
    assert not out.exists()


def test_hostile_attribution_stays_text(tmp_path):
    """An MBTiles file's own attribution is data: escaped for Leaflet, never compiled."""
    tiles = write_mbtiles(tmp_path / "t.mbtiles", 47.52, -140.05, attribution=HOSTILE)
    out = tmp_path / "m.html"
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(out), "--basemap", str(tiles)])
    assert res.exit_code == 0, res.output
    page = out.read_text("utf-8")
    assert "<img src=x" not in page  # escaped before Leaflet sees it
    assert "{{ 7*7 }}" in page  # never compiled as a template
    browser_or_skip()
    from tests.maps.browser import offline_page, serve

    with serve(tmp_path) as url, offline_page(url) as (pg, record):
        pg.goto(f"{url}/m.html", wait_until="load")
        pg.wait_for_selector(".neve-basemap img.leaflet-tile-loaded")
        attribution = pg.locator(".leaflet-control-attribution")
        assert HOSTILE in attribution.inner_text()
        assert attribution.locator("img").count() == 0
        assert record["dialogs"] == [] and record["page_errors"] == []


def test_static_map_draws_an_mbtiles_basemap(tmp_path):
    """A magenta basemap shows in the static map's pixels; with none it does not."""
    from PIL import Image

    from neve.maps.static import write_static_map
    from tests.maps.conftest import make_site_json

    site = make_site_json()
    lat, lon = site["site"]["lat"], site["site"]["lon"]
    tiles = write_mbtiles(tmp_path / "t.mbtiles", lat, lon, zooms=range(9, 14), span=3)
    base = bm.resolve(str(tiles))

    def magenta(path) -> float:
        a = np.asarray(Image.open(path).convert("RGB")).astype(int)
        return float(((a[..., 0] > 200) & (a[..., 1] < 60) & (a[..., 2] > 200)).mean())

    write_static_map(site, [], tmp_path / "with.png", basemap=base)
    write_static_map(site, [], tmp_path / "without.png", basemap="none")
    assert magenta(tmp_path / "with.png") > 0.2
    assert magenta(tmp_path / "without.png") == 0.0


def test_demo_basemap_is_invented_and_says_so():
    from neve.geo.layers.model import demo_basemap_path

    base = bm.resolve("demo", demo_file=demo_basemap_path())
    assert base.meta["demo"] == "true" and "invented" in base.meta["description"].lower()
    assert "not a real place" in base.attribution
    lo, hi = base.meta["_minzoom"], base.meta["_maxzoom"]
    assert lo <= 10 and hi >= 13  # the site map opens at 13
    w, s, e, n = (float(v) for v in base.meta["bounds"].split(","))
    assert w < -140.05 < e and s < 47.52 < n  # the README's demo site lies on it
    assert math.isclose(bm.static_zoom(base, 10.0, 47.5), 13)


def test_readme_site_map_shows_the_demo_basemap_offline_in_chromium(tmp_path):
    browser_or_skip()
    from tests.maps.browser import offline_page, serve

    res = CliRunner().invoke(main, [*README_SITE, "--map", str(tmp_path / "site.html")])
    assert res.exit_code == 0, res.output
    with serve(tmp_path) as url, offline_page(url) as (page, record):
        page.goto(f"{url}/site.html", wait_until="load")
        page.wait_for_selector(".neve-basemap img.leaflet-tile-loaded")
        loaded = page.locator(".neve-basemap img.leaflet-tile-loaded")
        assert loaded.count() >= 4
        srcs = [loaded.nth(i).get_attribute("src") for i in range(loaded.count())]
        assert all(s.startswith("data:image/png;base64,") for s in srcs)
        assert page.locator(".leaflet-overlay-pane svg path").count() >= 3  # the zones
        assert page.locator("#neve-site-marker").is_visible()
        assert "Invented demo basemap" in page.locator(".leaflet-control-attribution").inner_text()
        page.screenshot(path=str(tmp_path / "basemap.png"))
        assert record["blocked"] == [] and record["page_errors"] == []


def test_the_shipped_demo_basemap_is_what_its_recipe_builds(tmp_path):
    """Rebuild zooms 8-10 with data_recipes/build_demo_basemap.py; the tiles are identical."""
    import subprocess
    import sys
    from pathlib import Path

    from neve.geo.layers.model import demo_basemap_path

    recipe = Path(__file__).resolve().parents[2] / "data_recipes" / "build_demo_basemap.py"
    out = tmp_path / "rebuilt.mbtiles"
    subprocess.run([sys.executable, str(recipe), "--out", str(out), "--max-zoom", "10"],
                   check=True, capture_output=True)  # fmt: skip
    query = ("SELECT zoom_level, tile_column, tile_row, tile_data FROM tiles "
             "WHERE zoom_level <= 10 ORDER BY 1, 2, 3")  # fmt: skip
    rebuilt = sqlite3.connect(out).execute(query).fetchall()
    shipped = sqlite3.connect(f"{demo_basemap_path().as_uri()}?mode=ro", uri=True).execute(
        query
    ).fetchall()
    assert len(rebuilt) > 5 and rebuilt == shipped
