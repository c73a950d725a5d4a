"""The interactive site map (HTML structure; the browser test drives it for real)."""

from __future__ import annotations

import pytest

from neve.engine.errors import InputError, LayerError
from neve.maps import assets, style
from neve.maps.site_map import governing_index, write_site_map
from tests.maps.conftest import HOSTILE, make_site_json, make_view

RAW_HOSTILE = ("<script>alert", "<img src=x", "onerror=alert(2)>")


def _write(tmp_path, site=None, views=None, **kw):
    site = site or make_site_json()
    views = views if views is not None else [make_view()]
    kw.setdefault("overwrite", True)  # the tests write several maps to one path
    return write_site_map(site, views, tmp_path / "site.html", **kw).read_text(encoding="utf-8")


def test_self_contained_map_references_nothing_remote(tmp_path):
    html = _write(tmp_path, self_contained=True)
    assert assets.remote_references(html) == []
    assert "L.map(" in html and "L.tileLayer" not in html  # tiles="none": no tile layer
    for part in ('id="neve-summary"', 'id="neve-legend"', "neve-site-marker",
                 "neve-hatch", "L.control.scale"):  # fmt: skip
        assert part in html
    assert [p.name for p in tmp_path.iterdir()] == ["site.html"]  # no temp file left


def test_linked_map_uses_folium_sources_without_bootstrap(tmp_path):
    html = _write(tmp_path, tiles="osm")
    assert "L.tileLayer" in html
    assert "leaflet" in html and "bootstrap" not in html.lower()


def test_governing_zone_and_study_area_are_drawn_distinctly(tmp_path):
    html = _write(tmp_path)
    assert style.GOVERNING_COLOUR in html
    assert "url(#neve-hatch)" in html  # study zone V20: a pattern, not a value colour
    assert "35 psf" in html and "study" in html and "by elevation" in html


def test_demo_banner_only_for_demo_layers(tmp_path):
    assert 'id="neve-demo-banner"' in _write(tmp_path)
    site = make_site_json()
    site["ground"]["layer"]["demo"] = False
    site["ground"]["flags"] = []
    assert 'id="neve-demo-banner"' not in _write(tmp_path, site, [make_view(demo=False)])


def test_layer_switcher_only_when_layers_are_stacked(tmp_path):
    assert "L.control.layers" not in _write(tmp_path)
    html = _write(tmp_path, views=[make_view(name="local"), make_view()])
    assert "L.control.layers" in html


def test_governing_view_is_the_layer_named_in_the_result():
    site = make_site_json()
    views = [make_view(name="local amendment"), make_view()]
    views[0]["sha256"] = "cd" * 32
    assert governing_index(site, views) == 1
    assert governing_index({"ground": {}}, views) == 0


def test_hostile_text_is_never_markup(tmp_path):
    site = make_site_json(name=HOSTILE, project=HOSTILE)
    site["ground"]["message"] = HOSTILE
    html = _write(
        tmp_path, site, [make_view(note=HOSTILE, source=HOSTILE), make_view(name=HOSTILE)]
    )
    for raw in RAW_HOSTILE:
        assert raw not in html
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html  # shown as text in the panel


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [({"tiles": "satellite"}, "tiles")],
)
def test_bad_options_are_input_errors(tmp_path, kwargs, field):
    with pytest.raises(InputError, match=field):
        _write(tmp_path, **kwargs)


def test_bad_path_and_layer_errors(tmp_path):
    with pytest.raises(InputError, match="map"):
        write_site_map(make_site_json(), [make_view()], tmp_path / "site.png")
    view = make_view()
    view["zones"] = view["zones"].drop(columns=["zone_id"])
    with pytest.raises(LayerError, match="zone_id"):
        write_site_map(make_site_json(), [view], tmp_path / "site.html")
    assert not (tmp_path / "site.html").exists()


def test_site_outside_every_layer_still_gives_a_map(tmp_path):
    site = make_site_json(roof=False, status="no_data")
    site["ground"].update(pg=None, zone_id=None, zone_ids=[], flags=["outside_layer"])
    html = _write(tmp_path, site, [])
    assert "neve-site-marker" in html and "no value" in html


def test_dense_layers_label_only_the_nearest_zones(tmp_path):
    """A polygonized raster gives hundreds of cells near a site: labels are capped."""
    import geopandas as gpd
    from shapely.geometry import box

    from tests.maps.conftest import SITE_LAT, SITE_LON

    d = 0.002
    cells = [box(SITE_LON + i * d, SITE_LAT + j * d, SITE_LON + (i + 1) * d, SITE_LAT + (j + 1) * d)
             for i in range(-10, 10) for j in range(-10, 10)]  # fmt: skip
    zones = gpd.GeoDataFrame(
        {"zone_id": [f"c{k}" for k in range(len(cells))], "rule": "fixed",
         "pg": [20.0 + (k % 7) for k in range(len(cells))]},
        geometry=cells, crs=4326,
    )  # fmt: skip
    view = make_view()
    view["zones"] = zones
    html = _write(tmp_path, views=[view])
    assert html.count("neve-label-icon") == 120  # one DivIcon class per label
    assert html.count('"zone_id": "c') == 400  # every cell is still drawn
