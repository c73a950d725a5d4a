"""Static map and load diagrams: made with Agg, no display, no network."""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import textwrap
import xml.etree.ElementTree as ET

import pytest

from neve.maps.diagrams import write_case_diagrams
from neve.maps.geom import local_crs
from neve.maps.static import _nice_length, true_north_angle, write_static_map
from tests.maps.conftest import make_roof_json, make_site_json, make_view


def test_static_map_and_diagrams_without_display_or_network(tmp_path):
    """Run in a fresh interpreter with no DISPLAY and every socket connection refused."""
    code = textwrap.dedent(
        f"""
        import socket, sys
        def refuse(*a, **k):
            raise OSError("network used")
        socket.socket.connect = refuse
        socket.create_connection = refuse
        sys.path.insert(0, {os.getcwd()!r})
        from tests.maps.conftest import make_site_json, make_view, make_roof_json
        from neve.maps.static import write_static_map
        from neve.maps.diagrams import write_case_diagrams
        import matplotlib
        out = write_static_map(make_site_json(), [make_view()], {str(tmp_path / "m.png")!r},
                               {str(tmp_path / "m.svg")!r})
        d = write_case_diagrams(make_roof_json(), {str(tmp_path / "d")!r})
        print(matplotlib.get_backend().lower(), len(out), len(d))
        """
    )
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "WAYLAND_DISPLAY")}
    env["MPLBACKEND"] = "Agg"
    run = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                         timeout=120)  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert run.stdout.split() == ["agg", "2", "2"]
    from PIL import Image

    with Image.open(tmp_path / "m.png") as im:
        assert im.size[0] > 1000 and im.size[1] > 700
    root = ET.parse(tmp_path / "m.svg").getroot()
    assert root.tag.endswith("svg")


def test_static_map_content(tmp_path):
    png, svg = write_static_map(
        make_site_json(), [make_view()], tmp_path / "m.png", tmp_path / "m.svg"
    )
    text = svg.read_text(encoding="utf-8")  # text is kept as text (svg.fonttype none)
    assert png.stat().st_size > 20_000
    for part in ("site: pg = 35 psf (1.68 kPa)", "Ground snow load pg [psf]", "governing zone",
                 "case study required (no value)", "2 km", "5,000 ft", ">N<", "UTM zone 12N",
                 "DEMO DATA"):  # fmt: skip
        assert part in text, part
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.png", "m.svg"]


def test_static_map_needs_no_views(tmp_path):
    site = make_site_json(roof=False)
    (png,) = write_static_map(site, [], tmp_path / "m.png")
    assert png.exists()


@pytest.mark.parametrize(("target", "nice"), [(1.0, 1.0), (2600.0, 2000.0), (4999.0, 2000.0),
                                              (5000.0, 5000.0), (0.73, 0.5)])  # fmt: skip
def test_scale_bar_lengths_are_round(target, nice):
    # 1-2-5 steps (common practice for scale bars)
    assert _nice_length(target) == nice


@pytest.mark.parametrize(("lat", "lon"), [(44.0, -110.0), (44.0, -113.9), (60.0, 24.0 + 2.5)])
def test_north_arrow_follows_meridian_convergence(lat, lon):
    """Transverse Mercator convergence gamma ~ atan(tan(lon - lon0) sin(lat)).

    Spherical approximation of the grid convergence (from memory, Snyder 1987,
    Map Projections: A Working Manual, transverse Mercator chapter); agrees
    with the ellipsoidal value to well under 0.05 degrees this close to the
    central meridian.
    """
    crs = local_crs(lat, lon)
    zone = crs.to_epsg() - 32600
    lon0 = -183.0 + 6.0 * zone
    expected = math.degrees(
        math.atan(math.tan(math.radians(lon - lon0)) * math.sin(math.radians(lat)))
    )
    assert true_north_angle(lat, lon, crs) == pytest.approx(expected, abs=0.05)


def test_diagrams_for_unbalanced_drift_and_sliding_only(tmp_path):
    roof = make_roof_json()
    roof["cases"].append({"case": "sliding", "name": "onto canopy",
                          "load": {"psf": 12.0, "kPa": 0.5746}, "extent": {"ft": 15.0, "m": 4.572}})  # fmt: skip
    out = write_case_diagrams(roof, tmp_path)
    assert list(out) == ["unbalanced (wind across ridge)", "drift at high bay", "onto canopy"]
    for p in out.values():
        assert p.suffix == ".png" and p.stat().st_size > 5_000
    assert write_case_diagrams(None, tmp_path / "none") == {}
    json.dumps({k: str(v) for k, v in out.items()})  # plain, serialisable names
