"""More of issues 3-5 through the CLI: raster layers, projected CRS, stacking,
addresses, and hostile text in spreadsheet outputs.

Unit conversions: 1 psf = 0.04788026 kPa (NIST SP 811 App. B.9, from memory).
Everything else is the contract of docs/contract.md / the issues (regression guard).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tests.geo.conftest import FIXTURE_META, cell, fixture_rows, toml_text, write_layer

from .conftest import run, run_json, zone

KPA_PER_PSF = 0.04788026


@pytest.fixture(scope="module")
def raster(tmp_path_factory):
    import rasterio
    from rasterio.transform import from_origin

    d = tmp_path_factory.mktemp("raster_contract")
    values = np.array([[1.0, 2.0, -9999.0], [1.5, 1.5, 1.5]], dtype="float32")
    mask = np.zeros((2, 3), dtype="uint8")
    mask[1, 2] = 1
    prof = dict(driver="GTiff", width=3, height=2, count=1, crs="EPSG:4326",
                transform=from_origin(-40.0, 30.02, 0.01, 0.01))  # fmt: skip
    with rasterio.open(d / "r.tif", "w", dtype="float32", nodata=-9999.0, **prof) as ds:
        ds.write(values, 1)
    with rasterio.open(d / "mask.tif", "w", dtype="uint8", **prof) as ds:
        ds.write(mask, 1)
    meta = dict(FIXTURE_META, name="raster fixture", value_units="kPa", study_mask="mask.tif")
    (d / "r.tif.toml").write_text(toml_text(meta), encoding="utf-8")
    return str(d / "r.tif")


def test_raster_value_nodata_and_mask_through_site(raster):
    g = run_json("site", "--layer", raster, "--at", "30.015,-39.995")["ground"]
    assert g["status"] == "ok"
    assert g["pg"]["kPa"] == pytest.approx(1.0, abs=1e-3)
    assert g["pg"]["psf"] == pytest.approx(1.0 / KPA_PER_PSF, rel=1e-3)
    g = run_json("site", "--layer", raster, "--at", "30.015,-39.975")["ground"]
    assert g["status"] == "no_data" and "outside_layer" in g["flags"]
    g = run_json("site", "--layer", raster, "--at", "30.005,-39.975")["ground"]
    assert g["status"] == "study_required" and g["pg"] is None


def test_raster_layer_check_clean(raster):
    assert run("layer", "check", raster).exit_code == 0


def test_projected_layer_same_answers(tmp_path, grid):
    utm = write_layer(tmp_path / "utm.gpkg", fixture_rows(), crs="EPSG:32624")
    for at, extra in [("30.005,-39.995", []), ("30.005,-39.9901", ["--elevation", "100ft"]),
                      ("30.015,-39.985", ["--elevation", "100m"]), ("30.005,-39.975", [])]:  # fmt: skip
        a = run_json("site", "--layer", grid, "--at", at, *extra)["ground"]
        b = run_json("site", "--layer", str(utm), "--at", at, *extra)["ground"]
        assert (a["status"], a["pg"], a["zone_id"], sorted(a["flags"])) == (
            b["status"], b["pg"], b["zone_id"], sorted(b["flags"]))  # fmt: skip


def test_stacked_layers_most_local_first(tmp_path, grid):
    local = write_layer(tmp_path / "local.geojson", [zone("L1", "fixed", cell(0, 0), pg=50.0)],
                        meta={"name": "local amendment"})  # fmt: skip
    g = run_json("site", "--layer", str(local), "--layer", grid, "--at", "30.005,-39.995")["ground"]
    assert g["zone_id"] == "L1" and g["pg"]["psf"] == pytest.approx(50.0)
    others = g["other_layers"]
    assert any(o["zone_id"] == "Z1" and o["pg"]["psf"] == pytest.approx(20.0) for o in others)
    g = run_json("site", "--layer", str(local), "--layer", grid, "--at", "30.005,-39.985",
                 "--elevation", "100ft")["ground"]  # fmt: skip
    assert g["zone_id"] == "Z2" and g["layer"]["name"] == "fixture grid"


def test_gazetteer_ambiguous_and_missing_addresses(tmp_path, grid):
    gaz = tmp_path / "gaz.csv"
    gaz.write_text("address,lat,lon\n1 Harbour Row,30.005,-39.995\n1 Harbour Row,30.015,-39.985\n"
                   "2 Quay Lane,30.005,-39.975\n", encoding="utf-8")  # fmt: skip
    res = run("site", "--layer", grid, "--address", "1 Harbour Row", "--gazetteer", str(gaz))
    assert res.exit_code == 2 and "ambiguous" in res.stderr
    res = run("site", "--layer", grid, "--address", "9 Nowhere", "--gazetteer", str(gaz))
    assert res.exit_code == 2 and "address" in res.stderr
    g = run_json("site", "--layer", grid, "--address", "2 Quay Lane", "--gazetteer", str(gaz))
    assert g["ground"]["zone_id"] == "Z3"


def test_screen_addresses_from_gazetteer(tmp_path, grid):
    gaz = tmp_path / "gaz.csv"
    gaz.write_text("address,lat,lon\n1 Harbour Row,30.005,-39.995\n1 Harbour Row,30.015,-39.985\n"
                   "2 Quay Lane,30.005,-39.975\n", encoding="utf-8")  # fmt: skip
    s = tmp_path / "s.csv"
    s.write_text("site_id,address\na,2 Quay Lane\nb,1 Harbour Row\nc,9 Nowhere\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    res = run("screen", str(s), "-o", str(out), "--layer", grid, "--gazetteer", str(gaz), "--quiet")
    assert res.exit_code == 0, res.output
    df = pd.read_csv(out)
    assert df["site_id"].tolist() == ["a", "b", "c"]
    assert df.loc[0, "status"] == "study_required"
    assert df.loc[1, "status"] == "error" and df.loc[2, "status"] == "error"


def test_xlsx_output_never_holds_formulas(tmp_path, grid):
    import openpyxl

    s = tmp_path / "s.csv"
    s.write_text('site_id,lat,lon,note\n"=HYPERLINK(""http://x.invalid"",""x"")",30.005,-39.995,'
                 '"=1+2"\n', encoding="utf-8")  # fmt: skip
    out = tmp_path / "o.xlsx"
    assert run("screen", str(s), "-o", str(out), "--layer", grid, "--quiet").exit_code == 0
    wb = openpyxl.load_workbook(out)
    kinds = {c.data_type for ws in wb for row in ws.iter_rows() for c in row}
    assert "f" not in kinds


def test_screen_point_geometry_in_projected_crs(tmp_path, grid):
    import geopandas as gpd
    from shapely.geometry import Point

    p = tmp_path / "pts.gpkg"
    pts = [Point(-39.995, 30.005), Point(-39.975, 30.005)]
    gpd.GeoDataFrame({"site_id": ["a", "b"]}, geometry=pts, crs=4326).to_crs(32624).to_file(p)
    out = tmp_path / "o.csv"
    assert run("screen", str(p), "-o", str(out), "--layer", grid, "--quiet").exit_code == 0
    df = pd.read_csv(out)
    assert df["zone_id"].tolist() == ["Z1", "Z3"]
    assert df["status"].tolist() == ["ok", "study_required"]


def test_package_written_whole_with_cautions(tmp_path, grid):
    pkg = tmp_path / "pkg"
    args = ["site", "--layer", grid, "--at", "30.005,-39.995", "--shape", "flat",
            "--site-name", "Depot 4", "--project", "Harbour works", "--package", str(pkg)]  # fmt: skip
    res = run(*args)
    assert res.exit_code == 0, res.output
    for name in ("report.html", "report.pdf", "site.json"):
        assert (pkg / name).is_file(), name
    assert list(pkg.glob("*.html"))
    html = (pkg / "report.html").read_text(encoding="utf-8").lower()
    assert "licensed" in html and "authority having jurisdiction" in html and "depot 4" in html
    assert (pkg / "report.pdf").read_bytes()[:5] == b"%PDF-"
    res = run(*args)
    assert res.exit_code == 2 and "package" in res.stderr  # never overwritten silently


def test_failed_package_leaves_nothing(tmp_path, grid, monkeypatch):
    import neve.maps.package

    def broken(*a, **k):
        raise RuntimeError("renderer died (simulated)")

    monkeypatch.setattr(neve.maps.package, "write_static_map", broken)
    pkg = tmp_path / "pkg"
    res = run("site", "--layer", grid, "--at", "30.005,-39.995", "--package", str(pkg))
    assert res.exit_code == 1  # unexpected failure (docs/contract.md, "Exit codes")
    assert not pkg.exists()
    assert [p.name for p in tmp_path.iterdir()] == []


def test_dem_elevation_matches_rasterio_sample(grid, dem):
    # reference: rasterio's own DatasetReader.sample() after a pyproj transform
    import rasterio
    from pyproj import Transformer

    lat, lon = 30.015, -39.995
    with rasterio.open(dem) as ds:
        x, y = Transformer.from_crs(4326, ds.crs, always_xy=True).transform(lon, lat)
        ref_m = float(next(ds.sample([(x, y)]))[0])
    g = run_json("site", "--layer", grid, "--at", f"{lat},{lon}", "--dem", dem)["ground"]
    assert g["elevation_source"] == "dem"
    assert g["elevation"]["m"] == pytest.approx(ref_m, abs=1e-3)


def test_dem_without_vertical_unit_is_refused(tmp_path, grid):
    from tests.geo.conftest import write_dem

    d = write_dem(tmp_path / "nounit.tif", unit=None)
    res = run("site", "--layer", grid, "--at", "30.015,-39.995", "--dem", str(d))
    assert res.exit_code == 2 and "--dem-units" in res.stderr
    g = run_json("site", "--layer", grid, "--at", "30.015,-39.995", "--dem", str(d),
                 "--dem-units", "ft")["ground"]  # fmt: skip
    assert g["elevation_source"] == "dem" and g["elevation"]["ft"] > 0


def test_boundary_distance_is_geodesic(grid):
    # reference: pyproj.Geod(ellps="WGS84").inv along the parallel to the Z1/Z2 edge
    from pyproj import Geod

    _, _, ref = Geod(ellps="WGS84").inv(-39.9901, 30.005, -39.99, 30.005)
    g = run_json("site", "--layer", grid, "--at", "30.005,-39.9901", "--elevation", "100ft")
    assert g["ground"]["distance_to_other"]["m"] == pytest.approx(ref, abs=0.5)


def test_input_columns_that_clash_are_kept(tmp_path, grid):
    s = tmp_path / "s.csv"
    s.write_text("site_id,lat,lon,status,flags\n1,30.005,-39.995,mine,f\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    assert run("screen", str(s), "-o", str(out), "--layer", grid, "--quiet").exit_code == 0
    df = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert df.loc[0, "status"] == "ok"
    assert "mine" in df.iloc[0].tolist() and "f" in df.iloc[0].tolist()  # nothing lost


def test_package_overwrite_never_deletes_unrelated_files(tmp_path, grid):
    d = tmp_path / "work"
    d.mkdir()
    (d / "thesis.docx").write_text("precious", encoding="utf-8")
    res = run("site", "--layer", grid, "--at", "30.005,-39.995", "--package", str(d), "--overwrite")
    # either refused (exit 2) or written beside the user's file; never the file deleted
    assert (d / "thesis.docx").exists(), res.output


def test_text_output_has_no_terminal_escapes(tmp_path, grid):
    import re
    import shutil

    p = tmp_path / "esc.geojson"
    shutil.copy(grid, p)
    side = open(grid + ".toml", encoding="utf-8").read()
    side = re.sub(r"(?m)^name = .*$", r'name = "evil\\u001b]0;t\\u0007\\u001b[2J layer"', side)
    (tmp_path / "esc.geojson.toml").write_text(side, encoding="utf-8")
    res = run("site", "--layer", str(p), "--at", "30.005,-39.995")
    assert res.exit_code == 0, res.output
    assert not re.search(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]", res.stdout)


@pytest.mark.parametrize(
    "at, elev, status, kpa",
    [
        ("30.005,-39.995", "490ft", "ok", 1.0),  # 490 ft = 149.35 m, under elev_max 150 m
        ("30.005,-39.995", "500ft", "study_required", None),  # 152.4 m, above it
        ("30.005,-39.985", "490ft", "ok", 1.0 + 149.352 / 100),  # Z + A/100, A in metres
        ("30.005,-39.975", "10m", "ok", 1.5),  # table gives 1.1, pg_min floor 1.5
        ("30.005,-39.975", "90m", "ok", 1.9),  # piecewise-linear between (0, 1) and (100, 2)
    ],
)
def test_metric_layer_rules(tmp_path_factory, at, elev, status, kpa):
    # 1 ft = 0.3048 m exactly (international foot, common practice); rules per docs/contract.md, "Vector columns and rules"
    d = tmp_path_factory.getbasetemp() / "metric_layer"
    d.mkdir(exist_ok=True)
    p = d / "metric.geojson"
    if not p.exists():
        rows = [
            zone("M1", "fixed", cell(0, 0), pg=1.0, elev_max=150.0),
            zone("M2", "formula", cell(1, 0), expr="Z + A/100", Z=1.0, elev_max=150.0),
            zone("M3", "elevation_table", cell(2, 0), table="[[0, 1.0], [100, 2.0]]", pg_min=1.5),
        ]
        write_layer(p, rows, meta={"value_units": "kPa", "elevation_units": "m"})
    g = run_json("site", "--layer", str(p), "--at", at, "--elevation", elev)["ground"]
    assert g["status"] == status
    if kpa is None:
        assert g["pg"] is None
    else:
        assert g["pg"]["kPa"] == pytest.approx(kpa, abs=1e-3)
        assert g["pg"]["psf"] == pytest.approx(kpa / KPA_PER_PSF, rel=1e-4)
