"""`neve layer check` (neve.geo.layers.check, neve.cli.layer): every defect is caught."""

from __future__ import annotations

import json
import math

import pytest
from click.testing import CliRunner
from shapely.geometry import Polygon, box

from neve.cli import main
from neve.engine.errors import LayerError
from neve.geo.layers.check import check_layer, geodesic_area_m2

from .conftest import FIXTURE_META, LAT0, LON0, fixture_rows, toml_text, write_layer


def kinds(report):
    return sorted({p["kind"] for p in report["problems"]})


def test_clean_layer(grid_layer):
    rep = check_layer(grid_layer)
    assert rep["ok"] and rep["problems"] == [] and rep["zones"] == 6


def test_demo_layers_are_clean():
    from neve.geo.layers.model import DEMO_DIR, DEMO_LAYER_FILES

    for name in DEMO_LAYER_FILES:
        assert check_layer(DEMO_DIR / name)["ok"], name


def defective(tmp_path, change, meta=None, name="bad.gpkg"):
    rows = fixture_rows()
    change(rows)
    return check_layer(write_layer(tmp_path / name, rows, meta))


@pytest.mark.parametrize(
    "change, kind",
    [
        (lambda r: r[1].update(zone_id="Z1"), "duplicate_id"),
        (lambda r: r[1].update(zone_id=None), "missing_id"),
        (lambda r: r[0].update(rule="mapped"), "rule"),
        (lambda r: r[0].update(pg=float("nan")), "parameter"),
        (lambda r: r[3].update(table="[[0, 20], [1000, 10], [500, 30]]"), "table"),
        (lambda r: r[3].update(table="[[0, 20], [1000"), "table"),
        (lambda r: r[4].update(expr="__import__('os').system('x')"), "expression"),
        (lambda r: r[4].update(expr="Z +* A"), "expression"),
        (lambda r: r[4].update(expr="W * A"), "expression"),
        (lambda r: r[0].update(geometry=Polygon([(LON0, LAT0), (LON0 + 0.01, LAT0 + 0.01),
                                                 (LON0 + 0.01, LAT0), (LON0, LAT0 + 0.01)])),
         "invalid_geometry"),  # a bow-tie
    ],
)  # fmt: skip
def test_each_defect_is_reported(tmp_path, change, kind):
    rep = defective(tmp_path, change)
    assert not rep["ok"] and kind in kinds(rep), rep["problems"]


def test_overlap_area_is_geodesic(tmp_path):
    extra = {"zone_id": "OV", "rule": "fixed", "pg": 5.0,
             "geometry": box(LON0 + 0.005, LAT0, LON0 + 0.015, LAT0 + 0.01)}  # fmt: skip
    rep = defective(tmp_path, lambda r: r.append(extra))
    ov = [p for p in rep["problems"] if p["kind"] == "overlap"]
    assert {(p["zone_id"], p["other_zone_id"]) for p in ov} == {("Z1", "OV"), ("Z2", "OV")}
    # each overlap is a 0.005 x 0.01 degree box: compare with pyproj.Geod's polygon area
    from pyproj import Geod

    lons = [LON0 + 0.005, LON0 + 0.01, LON0 + 0.01, LON0 + 0.005]
    lats = [LAT0, LAT0, LAT0 + 0.01, LAT0 + 0.01]
    ref = abs(Geod(ellps="WGS84").polygon_area_perimeter(lons, lats)[0])
    z1 = next(p for p in ov if p["zone_id"] == "Z1")
    assert z1["area_m2"] == pytest.approx(ref, rel=1e-6)
    # and a rough spherical check (from memory: ~111.32 km per degree at the equator)
    assert z1["area_m2"] == pytest.approx(
        0.005 * 111_320 * math.cos(math.radians(LAT0 + 0.005)) * 0.01 * 110_860, rel=0.01
    )


def test_geodesic_area_in_a_projected_crs_matches(tmp_path):
    import geopandas as gpd

    g = gpd.GeoSeries([box(LON0, LAT0, LON0 + 0.01, LAT0 + 0.01)], crs=4326)
    a = geodesic_area_m2(g.values, g.crs)[0]
    b = geodesic_area_m2(g.to_crs(32624).values, "EPSG:32624")[0]
    assert a == pytest.approx(b, rel=1e-4)


def test_sidecar_defects_are_reported_not_fatal(tmp_path):
    path = write_layer(tmp_path / "s.gpkg", fixture_rows())
    side = tmp_path / "s.gpkg.toml"
    side.write_text(toml_text(dict(FIXTURE_META, value_units="stone")))
    assert "units" in kinds(check_layer(path))
    side.write_text(toml_text(dict(FIXTURE_META, boundary_tolerance_m=99999)))
    assert "sidecar" in kinds(check_layer(path))
    side.unlink()
    assert kinds(check_layer(path)) == ["missing_sidecar"]


def test_empty_layer(tmp_path):
    import geopandas as gpd

    p = tmp_path / "e.gpkg"
    gpd.GeoDataFrame({"zone_id": [], "rule": []}, geometry=[], crs=4326).to_file(p)
    (tmp_path / "e.gpkg.toml").write_text(toml_text(FIXTURE_META))
    assert kinds(check_layer(p)) == ["empty_layer"]


def test_non_polygon_geometry(tmp_path):
    from shapely.geometry import Point

    rep = defective(tmp_path, lambda r: r[0].update(geometry=Point(LON0, LAT0)), name="p.geojson")
    assert "geometry_type" in kinds(rep)


def test_unreadable_is_layer_error(tmp_path):
    p = tmp_path / "x.gpkg"
    p.write_text("garbage")
    with pytest.raises(LayerError):
        check_layer(p)


def test_cli_exit_codes_and_json(grid_layer, tmp_path):
    runner = CliRunner()
    ok = runner.invoke(main, ["layer", "check", str(grid_layer)])
    assert ok.exit_code == 0 and "no problems" in ok.output
    bad_path = write_layer(tmp_path / "b.gpkg", [dict(r, zone_id="A") for r in fixture_rows()])
    bad = runner.invoke(main, ["layer", "check", str(bad_path), "--format", "json"])
    assert bad.exit_code == 1
    rep = json.loads(bad.output)
    assert rep["ok"] is False and rep["problems"][0]["kind"] in ("duplicate_id", "overlap")
    assert {"kind", "zone_id", "message"} <= set(rep["problems"][0])
    gone = runner.invoke(main, ["layer", "check", str(tmp_path / "none.gpkg")])
    assert gone.exit_code == 2 and "not found" in gone.output


def test_cli_show_calls_the_layer_map(grid_layer, tmp_path):
    pytest.importorskip("neve.maps.layer_map")
    out = tmp_path / "layer.html"
    res = CliRunner().invoke(main, ["layer", "show", str(grid_layer), "--map", str(out)])
    assert res.exit_code == 0, res.output
    assert out.is_file()
