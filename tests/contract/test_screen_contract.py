"""`neve screen` against docs/contract.md and issue 5: no row lost, order kept, flags, exit codes.

Expected statuses/flags follow the flag tables of docs/contract.md (regression guard of the
contract); layers are invented fixtures.
"""

from __future__ import annotations

import json

import pandas as pd
import pytest

from .conftest import run

SITES = """\
site_id,latitude,longitude,elevation
study,30.005,-39.975,
above,30.005,-39.985,600ft
need,30.005,-39.985,
outside,31,-39.99,
near,30.005,-39.9901,100 ft
swap,-39.995,30.005,
badlat,abc,-39.995,
range,95,-39.995,
badelev,30.015,-39.995,12zz
ok,30.015,-39.995,412 m
ok,30.005,-39.995,1350ft
nolon,30.005,,
"""
EXPECT = {  # site_id -> (status, flags that must be present); docs/contract.md, "Flags"
    "study": ("study_required", {"study_required"}),
    "above": ("study_required", {"above_elevation_limit", "study_required"}),
    "need": ("provisional", {"elevation_needed"}),
    "outside": ("no_data", {"outside_layer"}),
    "near": ("provisional", {"near_boundary"}),
    "swap": ("no_data", {"coordinates_suspect"}),
    "badlat": ("error", set()),
    "range": ("error", set()),
    "badelev": ("error", set()),
    "nolon": ("error", set()),
}


def _flags(cell) -> set[str]:
    return set() if pd.isna(cell) or cell == "" else set(str(cell).split(";"))


@pytest.fixture()
def sites(tmp_path):
    p = tmp_path / "sites.csv"
    p.write_text(SITES, encoding="utf-8")
    return p


def screen(*args):
    return run("screen", *args, "--quiet")


def test_every_row_kept_in_order_with_status_flags_message(tmp_path, sites, grid):
    out = tmp_path / "out.csv"
    res = screen(str(sites), "-o", str(out), "--layer", grid)
    assert res.exit_code == 0, res.output
    df = pd.read_csv(out, dtype=str, keep_default_na=False)
    src = pd.read_csv(sites, dtype=str, keep_default_na=False)
    assert len(df) == len(src)
    assert df["site_id"].tolist() == src["site_id"].tolist()
    for col in ("status", "pg_psf", "pg_kpa", "zone_id", "flags", "message"):
        assert col in df.columns, col
    for col in src.columns:  # every input column kept
        assert col in df.columns
    for _, row in df.iterrows():
        assert row["message"], row["site_id"]
        if row["site_id"] in EXPECT:
            status, flags = EXPECT[row["site_id"]]
            assert row["status"] == status, (row["site_id"], row["status"], row["message"])
            assert flags <= _flags(row["flags"]), (row["site_id"], row["flags"])
    dup = df[df["site_id"] == "ok"]
    assert all("duplicate_site_id" in _flags(f) for f in dup["flags"])


def test_overlap_dem_nodata_and_mismatch_through_screen(tmp_path, overlap, big, dem):
    p = tmp_path / "s.csv"
    p.write_text("site_id,lat,lon,elevation_m\nov,30.01,-39.985,\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    assert screen(str(p), "-o", str(out), "--layer", overlap).exit_code == 0
    row = pd.read_csv(out).iloc[0]
    assert row["status"] == "provisional" and "overlapping_zones" in _flags(row["flags"])
    assert row["pg_psf"] == pytest.approx(40.0)  # larger value governs (docs/contract.md)
    p.write_text("site_id,lat,lon,elevation_m\nn,30.034,-40.003,\nm,30.015,-39.995,2000\n",
                 encoding="utf-8")  # fmt: skip
    out2 = tmp_path / "o2.csv"
    assert screen(str(p), "-o", str(out2), "--layer", big, "--dem", dem).exit_code == 0
    df = pd.read_csv(out2, keep_default_na=False)
    assert "dem_nodata" in _flags(df.loc[0, "flags"])
    assert "elevation_mismatch" in _flags(df.loc[1, "flags"])


def test_defective_zone_rows_are_error_not_a_crash(tmp_path, sites, defective):
    out = tmp_path / "o.csv"
    res = screen(str(sites), "-o", str(out), "--layer", defective)
    assert res.exit_code == 0, res.output
    assert len(pd.read_csv(out)) == len(pd.read_csv(sites))


def test_demo_data_loud_without_layer(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("lat,lon\n47.52,-140.05\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    res = run("screen", str(p), "-o", str(out))
    assert res.exit_code == 0
    assert "demo" in res.output.lower()
    assert "demo_data" in _flags(pd.read_csv(out).loc[0, "flags"])


def test_cautions_in_summary_text_and_json(tmp_path, sites, grid):
    out, sj = tmp_path / "o.csv", tmp_path / "s.json"
    res = screen(str(sites), "-o", str(out), "--layer", grid, "--summary-json", str(sj))
    text = res.output.lower()
    assert "licensed" in text and "authority having jurisdiction" in text
    assert json.loads(sj.read_text(encoding="utf-8"))["cautions"]


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".gpkg", ".parquet"])
def test_output_formats_keep_rows_and_order(tmp_path, sites, grid, suffix):
    out = tmp_path / f"o{suffix}"
    assert screen(str(sites), "-o", str(out), "--layer", grid).exit_code == 0
    if suffix == ".csv":
        df = pd.read_csv(out, dtype=str)
    elif suffix == ".xlsx":
        df = pd.read_excel(out, sheet_name=0, dtype=str)
    elif suffix == ".gpkg":
        import geopandas as gpd

        df = gpd.read_file(out)
    else:
        df = pd.read_parquet(out)
    assert df["site_id"].astype(str).tolist() == pd.read_csv(sites, dtype=str)["site_id"].tolist()


def test_existing_output_not_overwritten(tmp_path, sites, grid):
    out = tmp_path / "o.csv"
    out.write_text("keep", encoding="utf-8")
    res = screen(str(sites), "-o", str(out), "--layer", grid)
    assert res.exit_code == 2 and "output" in res.stderr
    assert out.read_text(encoding="utf-8") == "keep"
    assert screen(str(sites), "-o", str(out), "--layer", grid, "--overwrite").exit_code == 0
    assert out.read_text(encoding="utf-8") != "keep"


def test_interrupted_write_leaves_no_file(tmp_path, sites, grid, monkeypatch):
    import neve.geo.screen.outputs

    def broken(df, tmp):
        tmp.write_text("partial", encoding="utf-8")
        raise RuntimeError("disk full (simulated)")

    def broken_part(df, fh, **kw):  # the streamed writer (issue 16) appends to an open file
        fh.write(b"partial")
        raise RuntimeError("disk full (simulated)")

    monkeypatch.setattr(neve.geo.screen.outputs, "_write_csv", broken)
    monkeypatch.setattr(neve.geo.screen.outputs, "write_csv_part", broken_part)
    out = tmp_path / "o.csv"
    res = screen(str(sites), "-o", str(out), "--layer", grid)
    assert res.exit_code == 1  # unexpected failure (docs/contract.md, "Exit codes")
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".o.csv")] == []


BAD_FILES = [
    ("empty.csv", b"", "sites"),
    ("header.csv", b"site_id,lat,lon\n", "sites"),
    ("nocoord.csv", b"site_id,x,y\n1,2,3\n", "lat"),
    ("png.csv", b"\x89PNG\r\n\x1a\n\x00\x00garbage", "sites"),
    ("png.xlsx", b"\x89PNG\r\n\x1a\n\x00\x00garbage", "sites"),
    ("png.parquet", b"\x89PNG\r\n\x1a\n\x00\x00garbage", "sites"),
    ("png.gpkg", b"\x89PNG\r\n\x1a\n\x00\x00garbage", "sites"),
]


@pytest.mark.parametrize("name, content, word", BAD_FILES)
def test_bad_sites_file_exit_2(tmp_path, grid, name, content, word):
    p = tmp_path / name
    p.write_bytes(content)
    out = tmp_path / "o.csv"
    res = screen(str(p), "-o", str(out), "--layer", grid)
    assert res.exit_code == 2, res.output
    assert word in res.stderr and "Traceback" not in res.output
    assert not out.exists()


def test_missing_coordinate_column_lists_accepted_names(tmp_path, grid):
    p = tmp_path / "s.csv"
    p.write_text("site_id,x,y\n1,2,3\n", encoding="utf-8")
    res = screen(str(p), "-o", str(tmp_path / "o.csv"), "--layer", grid)
    for name in ("lat", "lon", "latitude", "longitude", "address"):
        assert name in res.stderr, name


def test_missing_sidecar_and_bad_suffix_exit_2(tmp_path, sites, grid):
    import shutil

    lone = tmp_path / "lone.geojson"
    shutil.copy(grid, lone)
    res = screen(str(sites), "-o", str(tmp_path / "o.csv"), "--layer", str(lone))
    assert res.exit_code == 2 and "sidecar" in res.stderr
    res = screen(str(sites), "-o", str(tmp_path / "o.txt"), "--layer", grid)
    assert res.exit_code == 2 and ".csv" in res.stderr


def test_unknown_roof_profile_is_a_row_error(tmp_path, grid):
    prof = tmp_path / "p.toml"
    prof.write_text('[profile.warehouse]\nshape = "flat"\n', encoding="utf-8")
    p = tmp_path / "s.csv"
    p.write_text("site_id,lat,lon,roof\n1,30.005,-39.995,warehouse\n2,30.005,-39.995,shed\n",
                 encoding="utf-8")  # fmt: skip
    out = tmp_path / "o.csv"
    assert screen(str(p), "-o", str(out), "--layer", grid, "--roof", str(prof)).exit_code == 0
    df = pd.read_csv(out)
    assert df["status"].tolist() == ["ok", "error"]
    assert "shed" in df.loc[1, "message"]
    # ASCE 7-16 Eq. 7.3-1 and Sec. 7.3.4: pg 20 psf, flat, defaults Ce = Ct = Is = 1:
    # pf = 14 psf, pm = Is pg = 20 psf governs (hand calculation)
    assert df.loc[0, "design_uniform_psf"] == pytest.approx(20.0)


@pytest.mark.parametrize("header, cell, ft", [("elevation_ft", "1350", 1350.0),
                                               ("elevation_m", "412", 412 / 0.3048),
                                               ("elevation", "412m", 412 / 0.3048)])  # fmt: skip
def test_elevation_units_in_column_or_cell(tmp_path, grid, header, cell, ft):
    # 1 ft = 0.3048 m exactly (international foot, common practice)
    p = tmp_path / "s.csv"
    p.write_text(f"lat,lon,{header}\n30.015,-39.995,{cell}\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    assert screen(str(p), "-o", str(out), "--layer", grid).exit_code == 0
    assert pd.read_csv(out).loc[0, "site_elevation_ft"] == pytest.approx(ft, rel=1e-4)


def test_screen_api_mirrors_cli(tmp_path, sites, grid):
    from neve.geo.screen.run import screen as api_screen

    out = tmp_path / "o.csv"
    assert screen(str(sites), "-o", str(out), "--layer", grid).exit_code == 0
    cli = pd.read_csv(out, dtype=str, keep_default_na=False)
    api = api_screen(pd.read_csv(sites, dtype=str, keep_default_na=False), layers=[grid])
    assert api["status"].tolist() == cli["status"].tolist()


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".parquet"])
def test_input_formats_give_the_same_rows(tmp_path, sites, grid, suffix):
    src = pd.read_csv(sites, dtype=str, keep_default_na=False)
    p = tmp_path / f"in{suffix}"
    if suffix == ".xlsx":
        src.to_excel(p, index=False)
    elif suffix == ".parquet":
        src.to_parquet(p, index=False)
    else:
        p = sites
    out = tmp_path / "o.csv"
    assert screen(str(p), "-o", str(out), "--layer", grid).exit_code == 0
    df = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert df["site_id"].tolist() == src["site_id"].tolist()
    for sid, status in zip(df["site_id"], df["status"], strict=True):
        if sid in EXPECT:
            assert status == EXPECT[sid][0], (sid, status)


def test_screen_and_site_agree_row_for_row(tmp_path, grid, overlap, dem):
    # the two commands are one pipeline (docs/contract.md, "Site resolution result"); invented random sites over the grid
    import numpy as np

    rng = np.random.default_rng(3)
    n = 15
    lat = 30.0 + rng.uniform(-0.002, 0.022, n)
    lon = -40.0 + rng.uniform(-0.002, 0.032, n)
    elev = rng.choice(["", "100ft", "300m", "900ft", "1200ft"], n)
    p = tmp_path / "rand.csv"
    pd.DataFrame({"site_id": range(n), "lat": lat, "lon": lon, "elevation": elev}).to_csv(
        p, index=False
    )
    out = tmp_path / "o.csv"
    layers = ["--layer", grid, "--layer", overlap]
    assert screen(str(p), "-o", str(out), *layers, "--dem", dem).exit_code == 0
    df = pd.read_csv(out, keep_default_na=False)
    for i, row in df.iterrows():
        args = ["site", *layers, "--at", f"{lat[i]},{lon[i]}", "--dem", dem]
        if elev[i]:
            args += ["--elevation", str(elev[i])]
        res = run(*args, "--format", "json")
        g = json.loads(res.stdout)["ground"]
        assert g["status"] == row["status"], i
        assert set(g["flags"]) == _flags(row["flags"]) - {"duplicate_site_id"}, i
        if g["pg"] is None:
            assert row["pg_psf"] == ""
        else:
            assert g["pg"]["psf"] == pytest.approx(float(row["pg_psf"]), abs=0.01)
