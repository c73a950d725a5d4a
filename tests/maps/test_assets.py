"""Offline assets from the XStatic packages and atomic writing."""

from __future__ import annotations

import re

import pytest

from neve.maps import assets


def test_inline_head_has_no_remote_reference_and_closes_every_script():
    head = assets.inline_head(cluster=True)
    assert assets.remote_references(head) == []
    # library code must not end a <script> element early: only our 4 closers remain
    assert head.count("</script") == 4
    assert all(part.rstrip().endswith("</script>") for part in head.split("\n<script>")[1:])
    assert head.count("<style>") == head.count("</style>") == 3
    assert "L.Icon.Default.imagePath" in head
    assert "sourceMappingURL" not in head
    # leaflet's control images and the icon font are inlined
    assert "url(images/" not in head and "../webfonts/" not in head
    assert "data:font/woff2;base64," in head


@pytest.mark.parametrize(
    "html",
    [
        '<script src="https://example.invalid/x.js"></script>',
        "<script type='text/javascript' src='http://example.invalid/x.js'></script>",
        '<link rel="stylesheet" href="//example.invalid/x.css">',
        "<style>@import url('https://example.invalid/x.css');</style>",
        "<style>.a{background:url(http://example.invalid/a.png)}</style>",
    ],
)
def test_remote_references_are_found(html):
    assert assets.remote_references(html)


def test_local_references_and_plain_text_urls_are_not_remote():
    html = (
        '<link rel="icon" href="data:,"><style>.a{background:url(data:image/png;base64,AA==)}'
        "</style><script>/* see https://example.invalid/licence */</script><p>https://x</p>"
    )
    assert assets.remote_references(html) == []


def test_prepare_assets_changes_only_the_instance():
    """FIELD_NOTES: changing folium's class-level lists would affect every later map."""
    import folium

    before_js, before_css = list(folium.Map.default_js), list(folium.Map.default_css)
    m = folium.Map(tiles=None)
    assets.prepare_assets(m, self_contained=True)
    assert m.default_js == [] and m.default_css == []
    m2 = folium.Map(tiles=None)
    assets.prepare_assets(m2, self_contained=False)
    assert [n for n, _ in m2.default_js] == ["leaflet", "jquery"]
    assert "bootstrap" not in " ".join(u for _, u in m2.default_js + m2.default_css)
    assert folium.Map.default_js == before_js and folium.Map.default_css == before_css


def test_atomic_write_leaves_no_temp_file(tmp_path):
    target = tmp_path / "sub" / "a.html"
    assets.atomic_write_text(target, "one")
    assets.atomic_write_text(target, "two")
    assert target.read_text() == "two"
    assert [p.name for p in target.parent.iterdir()] == ["a.html"]


def test_atomic_write_failure_keeps_folder_clean(tmp_path):
    target = tmp_path / "a.html"
    target.mkdir()  # a folder where the file should go: the final rename fails
    with pytest.raises(OSError):
        assets.atomic_write_text(target, "x")
    assert [p.name for p in tmp_path.iterdir()] == ["a.html"]
    assert not any(re.search(r"\.tmp$", p.name) for p in tmp_path.iterdir())
