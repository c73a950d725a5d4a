"""ASCE 7-22 site side: ground layers per risk category, W2 layers, the roof standard a layer chooses.

Every expected value below comes from the invented layer data written in this
file (hand-checked against those rows); none is a real map value.  Where a
roof load is checked, the equation's source is named beside it.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from neve.cli import main as cli
from neve.engine import Roof
from neve.engine.errors import LayerError
from neve.engine.standards import available, get_standard
from neve.geo.layers.model import demo_722_layers, demo_layers, load_layer
from neve.geo.site.one import resolve_site
from neve.geo.site.resolve import resolve
from neve.geo.site.result import BIT, FLAG_TABLE
from tests.geo.conftest import LAT0, LON0, D, cell, centre, write_layer

needs_722 = pytest.mark.skipif(
    "asce7-22" not in available(), reason="the ASCE 7-22 engine is not registered"
)
META_722 = {"standard": "ASCE 7-22", "name": "fixture 7-22"}
CATS = ("I", "II", "III", "IV")
NAN = float("nan")


def rows_722() -> list[dict]:
    """Invented 7-22 fixture zones (values per risk category I, II, III, IV).

    Z1 fixed: 20, 24, 27, 30 psf.
    Z2 elevation_table: [[0, a], [1000, b]] with (a, b) = (10, 30), (12, 36), (14, 40),
       (16, 44): at A = 500 ft the midpoints 20, 24, 27, 30 psf.
    Z3 study.
    Z4 formula: c + 0.02 A with c = 10, 12, 14, 16 and pg_min_IV = 40: at A = 500 ft
       20, 22, 24 psf and max(26, 40) = 40 psf.
    """
    base = {"elev_max": NAN}
    for c in CATS:
        base.update({f"pg_{c}": NAN, f"table_{c}": None, f"expr_{c}": None, f"pg_min_{c}": NAN})
    tables = {"I": (10, 30), "II": (12, 36), "III": (14, 40), "IV": (16, 44)}
    z1 = dict(base, zone_id="Z1", rule="fixed", geometry=cell(0, 0))
    z2 = dict(base, zone_id="Z2", rule="elevation_table", geometry=cell(1, 0))
    z4 = dict(base, zone_id="Z4", rule="formula", geometry=cell(0, 1))
    for c, v, (a, b), k in zip(CATS, (20, 24, 27, 30), tables.values(), (10, 12, 14, 16),
                               strict=True):  # fmt: skip
        z1[f"pg_{c}"] = float(v)
        z2[f"table_{c}"] = json.dumps([[0, a], [1000, b]])
        z4[f"expr_{c}"] = f"{k} + 0.02 * A"
    z4["pg_min_IV"] = 40.0
    z3 = dict(base, zone_id="Z3", rule="study", geometry=cell(2, 0))
    return [z1, z2, z3, z4]


@pytest.fixture(scope="module")
def layer_722(tmp_path_factory):
    return write_layer(tmp_path_factory.mktemp("l722") / "g722.gpkg", rows_722(), META_722)


def w2_rows(values=(0.5, 0.4)) -> list[dict]:
    """Invented W2 zones: W1 fixed 0.5 (cell 0,0), W2 fixed 0.4 (cell 1,0), W3 study (cell 2,0)."""
    return [
        {"zone_id": "W1", "rule": "fixed", "w2": values[0], "geometry": cell(0, 0)},
        {"zone_id": "W2", "rule": "fixed", "w2": values[1], "geometry": cell(1, 0)},
        {"zone_id": "W3", "rule": "study", "w2": NAN, "geometry": cell(2, 0)},
    ]


def write_w2(path, rows=None, meta=None):
    m = {"quantity": "w2", "standard": "ASCE 7-22", "name": f"W2 {path.stem}"}
    m.update(meta or {})
    path = write_layer(path, rows or w2_rows(), m)
    side = path.with_name(path.name + ".toml")  # a W2 sidecar names no value_units
    side.write_text(
        "\n".join(ln for ln in side.read_text().splitlines() if not ln.startswith("value_units")),
        encoding="utf-8",
    )
    return path


@pytest.fixture(scope="module")
def w2_layer(tmp_path_factory):
    return write_w2(tmp_path_factory.mktemp("w2") / "w2.geojson")


# ----------------------------------------------------------------- rule kinds x categories
CASES = [  # (cell, category, expected pg [psf] at A = 500 ft; from rows_722's docstring)
    *[((0, 0), c, v) for c, v in zip(CATS, (20, 24, 27, 30), strict=True)],
    *[((1, 0), c, v) for c, v in zip(CATS, (20, 24, 27, 30), strict=True)],
    *[((0, 1), c, v) for c, v in zip(CATS, (20, 22, 24, 40), strict=True)],
]


@pytest.mark.parametrize(("where", "cat", "expected"), CASES)
def test_each_rule_kind_per_category(layer_722, where, cat, expected):
    lat, lon = centre(*where)
    g = resolve_site(lat, lon, layers=[layer_722], elevation="500ft", risk=cat).to_json()["ground"]
    assert g["status"] == "ok"
    assert g["pg"]["psf"] == pytest.approx(expected)
    assert g["risk_category"] == cat


@pytest.mark.parametrize("cat", CATS)
def test_study_zone_in_every_category(layer_722, cat):
    lat, lon = centre(2, 0)
    g = resolve_site(lat, lon, layers=[layer_722], risk=cat).to_json()["ground"]
    assert g["status"] == "study_required" and g["pg"] is None
    assert "study_required" in g["flags"]


def test_pg_by_risk_lists_all_four_and_pg_is_category_ii_by_default(layer_722):
    lat, lon = centre(1, 0)  # Z2 table at 500 ft: 20, 24, 27, 30 psf (rows_722)
    g = resolve_site(lat, lon, layers=[layer_722], elevation="500ft").to_json()["ground"]
    assert {c: v["psf"] for c, v in g["pg_by_risk"].items()} == pytest.approx(
        {"I": 20.0, "II": 24.0, "III": 27.0, "IV": 30.0}
    )
    assert g["pg"]["psf"] == pytest.approx(24.0) and g["risk_category"] == "II"
    # kPa beside psf (1 psf = 0.0478803 kPa, NIST SP 811 Appendix B)
    assert g["pg_by_risk"]["IV"]["kPa"] == pytest.approx(30.0 * 0.0478803, abs=1e-3)


def test_pg_by_risk_null_per_category_without_value_and_null_for_716(layer_722, grid_layer):
    lat, lon = centre(0, 1)  # Z4 formula needs A: no elevation, no value in any category
    g = resolve_site(lat, lon, layers=[layer_722]).to_json()["ground"]
    assert g["pg_by_risk"] == {"I": None, "II": None, "III": None, "IV": None}
    lat, lon = centre(0, 0)  # an ASCE 7-16 layer maps one pg for every category
    assert resolve_site(lat, lon, layers=[grid_layer]).to_json()["ground"]["pg_by_risk"] is None


@needs_722
def test_cli_risk_iii_takes_pg_iii_and_the_layer_chooses_asce_7_22(layer_722):
    lat, lon = centre(0, 0)  # Z1: pg_III = 27 psf (rows_722)
    out = CliRunner().invoke(cli, ["site", "--at", f"{lat},{lon}", "--layer", str(layer_722),
                                   "--risk", "III", "--shape", "flat", "--format", "json"])  # fmt: skip
    assert out.exit_code == 0, out.output
    d = json.loads(out.output)
    assert d["ground"]["pg"]["psf"] == pytest.approx(27.0)
    assert d["ground"]["pg_by_risk"]["III"]["psf"] == pytest.approx(27.0)
    assert d["roof"]["standard"] == "ASCE 7-22"
    assert "roof_standard_unsupported" not in d["ground"]["flags"]
    # the same roof worked by the registered engine on pg_III directly
    direct = get_standard("asce7-22").analyze(
        {"pg": 27.0, "w2": None}, Roof.from_mapping({"shape": "flat", "risk": "III"})
    )
    assert d["roof"]["design_uniform"] == direct.to_json()["design_uniform"]


# ----------------------------------------------------------------- rasters per category
def _raster(path, value, crs="EPSG:4326"):
    import rasterio
    from rasterio.transform import from_origin

    z = np.full((3, 3), value, dtype="float32")
    z[0, 0] = -9999.0  # the north-west cell is nodata
    with rasterio.open(path, "w", driver="GTiff", width=3, height=3, count=1, dtype="float32",
                       crs=crs, transform=from_origin(LON0, LAT0 + 3 * D, D, D),
                       nodata=-9999.0) as ds:  # fmt: skip
        ds.write(z, 1)
    return path


def _toml(meta: dict) -> str:
    import tomli_w

    return tomli_w.dumps(meta)


def write_risk_rasters(folder, values=(11.0, 22.0, 33.0, 44.0), sidecar=None):
    from tests.geo.conftest import FIXTURE_META

    names = {c: f"pg_{c}.tif" for c in CATS}
    for c, v in zip(CATS, values, strict=True):
        _raster(folder / names[c], v)
    main = folder / "pg_II.tif"
    meta = dict(FIXTURE_META, standard="ASCE 7-22", name="raster 7-22", risk_rasters=names)
    meta.update(sidecar or {})
    (folder / "pg_II.tif.toml").write_text(_toml(meta), encoding="utf-8")
    return main


@pytest.mark.parametrize(
    ("cat", "expected"), list(zip(CATS, (11.0, 22.0, 33.0, 44.0), strict=True))
)
def test_raster_per_category(tmp_path, cat, expected):
    path = write_risk_rasters(tmp_path)  # cell values 11, 22, 33, 44 psf (written above)
    lat, lon = centre(1, 1)
    g = resolve_site(lat, lon, layers=[path], risk=cat).to_json()["ground"]
    assert g["pg"]["psf"] == pytest.approx(expected)
    assert g["zone_id"] == f"cell:{expected:g}"


def test_raster_per_category_nodata_is_outside_and_sha_covers_every_file(tmp_path):
    path = write_risk_rasters(tmp_path)
    lat, lon = centre(0, 2)  # the nodata cell of every category raster
    g = resolve_site(lat, lon, layers=[path], risk="IV").to_json()["ground"]
    assert g["status"] == "no_data" and "outside_layer" in g["flags"]
    before = load_layer(path).sha256
    _raster(tmp_path / "pg_IV.tif", 45.0)  # one category's data changed: the hash changes
    assert load_layer(path).sha256 != before


def test_risk_rasters_refused_on_another_edition_and_when_incomplete(tmp_path):
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    with pytest.raises(LayerError, match="risk_rasters"):
        load_layer(write_risk_rasters(tmp_path / "a", sidecar={"standard": "ASCE 7-16"}))
    bad = {"risk_rasters": {"I": "pg_I.tif", "II": "pg_II.tif"}}
    with pytest.raises(LayerError, match="risk_rasters"):
        load_layer(write_risk_rasters(tmp_path / "b", sidecar=bad))


def test_716_layer_reads_pg_as_before(grid_layer):
    # the ASCE 7-16 fixture grid: Z1 fixed 20 psf (tests/geo/conftest.py), whatever the risk
    lat, lon = centre(0, 0)
    for cat in CATS:
        g = resolve_site(lat, lon, layers=[grid_layer], risk=cat).to_json()["ground"]
        assert g["pg"]["psf"] == pytest.approx(20.0)


# ----------------------------------------------------------------- W2
@needs_722
def test_w2_vector_value_zone_layer_and_flags(layer_722, w2_layer):
    lat, lon = centre(0, 0)  # W1 = 0.5 (w2_rows)
    g = resolve_site(lat, lon, layers=[layer_722, w2_layer]).to_json()["ground"]
    assert g["w2"]["value"] == pytest.approx(0.5)
    assert g["w2"]["zone_id"] == "W1"
    assert g["w2"]["layer"]["name"] == "W2 w2"
    assert g["w2"]["flags"] == []
    assert g["pg"]["psf"] == pytest.approx(24.0)  # the ground value is unchanged (Z1 pg_II)


def test_w2_boundary_takes_the_larger_value(layer_722, w2_layer):
    # 50 m west of the W1 | W2 edge (tolerance 100 m): 0.5 and 0.4 differ, the larger governs
    lat, lon = LAT0 + D / 2, LON0 + D + 0.0005
    g = resolve_site(lat, lon, layers=[layer_722, w2_layer]).to_json()["ground"]
    assert g["w2"]["zone_id"] == "W2"
    assert g["w2"]["value"] == pytest.approx(0.5)
    assert "near_boundary" in g["w2"]["flags"]


def test_w2_stacking_local_first(tmp_path, layer_722, w2_layer):
    local = write_w2(tmp_path / "local.geojson", [
        {"zone_id": "L1", "rule": "fixed", "w2": 0.62, "geometry": cell(1, 0)}])  # fmt: skip
    lat, lon = centre(1, 0)
    g = resolve_site(lat, lon, layers=[local, layer_722, w2_layer],
                     elevation="500ft").to_json()["ground"]  # fmt: skip
    assert g["w2"]["value"] == pytest.approx(0.62) and g["w2"]["zone_id"] == "L1"
    assert g["w2"]["layer"]["name"] == "W2 local"
    assert g["layer"]["name"] == "fixture 7-22"  # the ground layer is not displaced by W2
    lat, lon = centre(0, 0)  # outside the local W2 layer: the next W2 layer governs
    g = resolve_site(lat, lon, layers=[local, layer_722, w2_layer]).to_json()["ground"]
    assert g["w2"]["zone_id"] == "W1"


def test_w2_study_and_missing_flags(layer_722, w2_layer):
    lat, lon = centre(2, 0)  # W3 study
    g = resolve_site(lat, lon, layers=[layer_722, w2_layer]).to_json()["ground"]
    assert g["w2"]["value"] is None
    assert "w2_study_required" in g["w2"]["flags"] and "w2_study_required" in g["flags"]
    lat, lon = centre(0, 1)  # in no W2 zone
    g = resolve_site(lat, lon, layers=[layer_722, w2_layer], elevation="500ft").to_json()["ground"]
    assert g["w2"]["value"] is None
    assert "w2_missing" in g["flags"] and "w2_study_required" not in g["flags"]
    assert g["status"] == "ok"  # W2 does not change the ground status


def test_w2_flag_bits():
    bits = {f.name: (f.bit, f.kind) for f in FLAG_TABLE}
    assert bits["w2_study_required"] == (14, "site")
    assert bits["w2_missing"] == (15, "site")
    assert bits["edition_mismatch"] == (22, "site")


def test_w2_raster(tmp_path, layer_722):
    from tests.geo.conftest import FIXTURE_META

    path = _raster(tmp_path / "w2.tif", 0.45)  # every cell 0.45 except the nodata corner
    meta = {k: v for k, v in FIXTURE_META.items() if k != "value_units"}
    meta.update(quantity="w2", standard="ASCE 7-22", name="W2 grid")
    (tmp_path / "w2.tif.toml").write_text(_toml(meta), encoding="utf-8")
    lat, lon = centre(1, 1)
    g = resolve_site(lat, lon, layers=[layer_722, path]).to_json()["ground"]
    assert g["w2"]["value"] == pytest.approx(0.45) and g["w2"]["zone_id"] == "cell:0.45"
    lat, lon = centre(0, 2)  # nodata: missing
    g = resolve_site(lat, lon, layers=[layer_722, path]).to_json()["ground"]
    assert g["w2"]["value"] is None and "w2_missing" in g["flags"]


def test_w2_sidecar_takes_no_value_units_and_values_above_one_are_defects(tmp_path, layer_722):
    with pytest.raises(LayerError, match="value_units"):
        load_layer(write_layer(tmp_path / "w.geojson", w2_rows(),
                               {"quantity": "w2", "standard": "ASCE 7-22"}))  # fmt: skip
    path = write_w2(tmp_path / "big.geojson", w2_rows((1.5, 0.4)))  # W1 = 1.5: no fraction
    lat, lon = centre(0, 0)
    res = resolve([lat], [lon], layers=[layer_722, path])
    assert int(res.flags[0]) & BIT["w2_missing"]
    assert np.isnan(res.value("w2")[0])


def test_only_w2_layers_is_refused(w2_layer):
    from neve.engine.errors import InputError

    with pytest.raises(InputError, match="layer"):
        resolve([LAT0 + D / 2], [LON0 + D / 2], layers=[w2_layer])


@needs_722
def test_w2_reaches_the_engine(layer_722, w2_layer):
    roof = Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})
    lat, lon = centre(0, 0)  # Z1 pg_II = 24 psf, W1 = 0.5 (invented data above)
    with_w2 = resolve_site(lat, lon, layers=[layer_722, w2_layer], roof=roof).to_json()
    without = resolve_site(lat, lon, layers=[layer_722], roof=roof).to_json()
    direct = get_standard("asce7-22").analyze({"pg": 24.0, "w2": 0.5}, roof).to_json()
    assert with_w2["roof"]["cases"] == direct["cases"]
    assert "w2_needed" not in with_w2["roof"]["flags"]
    assert "w2_needed" in without["roof"]["flags"]  # the engine's flag when W2 is unknown


# ----------------------------------------------------------------- the roof standard
@needs_722
def test_explicit_other_edition_is_edition_mismatch(layer_722, grid_layer):
    roof = Roof.from_mapping({"shape": "flat"})
    lat, lon = centre(0, 0)
    d = resolve_site(lat, lon, layers=[layer_722], roof=roof, standard="asce7-16").to_json()
    assert d["roof"] is None
    assert "edition_mismatch" in d["ground"]["flags"]
    assert "roof_standard_unsupported" not in d["ground"]["flags"]
    d = resolve_site(lat, lon, layers=[grid_layer], roof=roof, standard="asce7-22").to_json()
    assert d["roof"] is None and "edition_mismatch" in d["ground"]["flags"]
    # --standard asce7-16 on an ASCE 7-16 layer keeps meaning what it meant
    d = resolve_site(lat, lon, layers=[grid_layer], roof=roof, standard="asce7-16").to_json()
    assert d["roof"]["standard"] == "ASCE 7-16" and "edition_mismatch" not in d["ground"]["flags"]


def test_edition_no_standard_takes_stays_roof_standard_unsupported(tmp_path):
    from tests.geo.conftest import fixture_rows

    # Z1 of the 7-16 fixture grid (fixed 20 psf), as a layer of an edition no standard takes
    path = write_layer(tmp_path / "nbc.geojson", fixture_rows()[:1], {"standard": "NBC 2020"})
    roof = Roof.from_mapping({"shape": "flat"})
    lat, lon = centre(0, 0)
    for std in (None, "asce7-16"):
        d = resolve_site(lat, lon, layers=[path], roof=roof, standard=std).to_json()
        assert d["roof"] is None
        assert "roof_standard_unsupported" in d["ground"]["flags"]
        assert "edition_mismatch" not in d["ground"]["flags"]
        assert d["ground"]["pg"]["psf"] == pytest.approx(20.0)


def test_default_roof_standard_without_layer_edition_is_asce_7_16(grid_layer):
    lat, lon = centre(0, 0)
    d = resolve_site(lat, lon, layers=[grid_layer], roof=Roof.from_mapping({"shape": "flat"}))
    assert d.to_json()["roof"]["standard"] == "ASCE 7-16"


# ----------------------------------------------------------------- demo
def test_demo_722_layers_are_invented_and_marked_demo():
    stack = demo_722_layers()
    assert [ly.quantity for ly in stack] == ["pg", "w2"]
    for ly in stack:
        assert ly.demo and ly.meta["standard"] == "ASCE 7-22"
        assert "Invented" in ly.meta["source"]
    assert stack[0].per_risk
    assert all(ly.meta["standard"] == "ASCE 7-16" for ly in demo_layers())  # default stays


@needs_722
def test_demo_site_with_standard_asce7_22_uses_the_722_demo():
    out = CliRunner().invoke(cli, ["site", "--at", "47.52,-140.05", "--dem", "demo",
                                   "--standard", "asce7-22", "--shape", "flat",
                                   "--format", "json"])  # fmt: skip
    assert out.exit_code == 0, out.output
    d = json.loads(out.output)
    assert "demo_data" in d["ground"]["flags"]
    assert d["ground"]["layer"]["standard"] == "ASCE 7-22"
    assert set(d["ground"]["pg_by_risk"]) == set(CATS)
    assert d["ground"]["w2"]["layer"]["demo"] is True
    assert d["roof"]["standard"] == "ASCE 7-22"
    out = CliRunner().invoke(cli, ["site", "--at", "47.52,-140.05", "--dem", "demo",
                                   "--shape", "flat", "--format", "json"])  # fmt: skip
    d = json.loads(out.output)
    assert d["ground"]["layer"]["standard"] == "ASCE 7-16" and d["roof"]["standard"] == "ASCE 7-16"


# ----------------------------------------------------------------- neve layer check
def test_layer_check_checks_every_category(tmp_path):
    from neve.geo.layers.check import check_layer

    rows = rows_722()
    rows[1]["table_III"] = "[[0, 14], [0, 40]]"  # Z2: elevations not increasing in III only
    path = write_layer(tmp_path / "bad.gpkg", rows, META_722)
    report = check_layer(path)
    assert not report["ok"]
    bad = [p for p in report["problems"] if p["zone_id"] == "Z2"]
    assert [p["risk_category"] for p in bad] == ["III"]
    assert "table_III" in bad[0]["message"]
    assert check_layer(write_layer(tmp_path / "good.gpkg", rows_722(), META_722))["ok"]


def test_layer_check_checks_every_category_raster(tmp_path):
    from neve.geo.layers.check import check_layer

    path = write_risk_rasters(tmp_path)
    assert check_layer(path)["ok"]
    _raster(tmp_path / "pg_IV.tif", -5.0)  # category IV holds negative cells
    report = check_layer(path)
    assert [p["risk_category"] for p in report["problems"]] == ["IV"]
