"""The typed resolution result (neve.geo.site.result): flag table, bits to names, edges.

Expected ground values come from the invented fixture grid of ``conftest.py``
(Z1 fixed 20 psf, Z2 fixed 30 psf up to 500 ft, Z3 study, Z4 table, Z5
formula, Z6 fixed 20 psf); the flag names and their meaning are neve's own
contract (README, "neve site and neve layer"; docs/contract.md).
"""

from __future__ import annotations

import ast
import itertools
import json
import math
import pickle
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import NeveError
from neve.geo.site import result as R
from neve.geo.site.one import resolve_site
from neve.geo.site.resolve import resolve, resolve_points
from neve.geo.site.result import (
    BIT,
    FLAG_TABLE,
    STATUSES,
    Resolution,
    bits_of,
    flag_names,
    flags_text,
)

from .conftest import LAT0, LON0, D, centre, fixture_rows, write_dem, write_layer

ROOT = Path(__file__).resolve().parents[2]

#: the ground flags the README lists for `neve site` (neve's contract)
README_FLAGS = {
    "study_required", "above_elevation_limit", "elevation_needed", "outside_layer",
    "near_boundary", "overlapping_zones", "dem_nodata", "coordinates_suspect",
    "elevation_mismatch", "demo_data", "study_area_nearby", "dem_implausible",
    "roof_standard_unsupported", "non_finite_value", "duplicate_site_id", "multiline_field",
}  # fmt: skip


def _sites():
    """Sites in every fixture cell, on the Z1|Z2 edge, near Z3, outside, and two bad rows."""
    pts = [centre(i, j) for j in range(2) for i in range(3)]
    pts += [(LAT0 + D / 2, LON0 + D), (LAT0 + D / 2, LON0 + 2 * D - 0.0003)]
    pts += [(10.0, 10.0), (LON0 + D / 2, LAT0 + D / 2), (95.0, 0.0), (math.nan, 1.0)]
    lat, lon = (np.array(v) for v in zip(*pts, strict=True))
    return lat, lon


# --- the flag table -------------------------------------------------------------


def test_flag_table_has_unique_names_and_bits_within_64():
    names = [f.name for f in FLAG_TABLE]
    bits = [f.bit for f in FLAG_TABLE]
    assert len(set(names)) == len(names) and len(set(bits)) == len(bits)
    assert all(0 <= b < 64 for b in bits)
    assert all(re.fullmatch(r"[a-z][a-z0-9_]*", n) for n in names)
    assert {f.kind for f in FLAG_TABLE} <= {"site", "row", "roof", "note"}
    assert all(BIT[f.name] == 1 << f.bit for f in FLAG_TABLE)
    assert all(f.meaning for f in FLAG_TABLE)


def test_flag_positions_of_the_resolver_are_kept():
    # regression guard: the twelve resolver flags keep the bit positions they always had
    assert R.FLAGS == (
        "study_required", "above_elevation_limit", "elevation_needed", "outside_layer",
        "near_boundary", "overlapping_zones", "dem_nodata", "coordinates_suspect",
        "elevation_mismatch", "demo_data", "study_area_nearby", "dem_implausible",
    )  # fmt: skip
    assert [BIT[f] for f in R.FLAGS] == [1 << i for i in range(12)]


def test_every_documented_flag_is_in_the_table_and_notes_are_never_shown():
    shown = {f.name for f in FLAG_TABLE if f.shown}
    assert README_FLAGS <= shown
    notes = [f for f in FLAG_TABLE if f.kind == "note"]
    assert notes and all(not f.shown for f in notes)
    every = np.array([sum(f.mask for f in FLAG_TABLE)], dtype=np.uint64)
    assert flags_text(every)[0] == ";".join(sorted(shown))


def test_status_codes():
    # regression guard: the documented code table of Resolution.status
    assert STATUSES == ("ok", "provisional", "study_required", "no_data", "error")
    assert (R.OK, R.PROVISIONAL, R.STUDY, R.NO_DATA, R.ERROR) == (0, 1, 2, 3, 4)
    assert R.ELEVATION_ORIGINS == ("input", "dem", "none")


def _engine_flag_literals() -> set[str]:
    """Every string literal the roof engine appends to a ``flags`` list."""
    found = set()
    for path in (ROOT / "engine").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if (
                isinstance(node, ast.Call)
                and getattr(node.func, "attr", None) == "append"
                and getattr(node.func.value, "id", None) == "flags"
                and node.args
                and isinstance(node.args[0], ast.Constant)
                and isinstance(node.args[0].value, str)
            ):
                found.add(node.args[0].value)
    return found


def test_every_roof_engine_flag_has_a_bit():
    literals = _engine_flag_literals()
    assert {"shape_assumed", "exposure_assumed", "roof_cases_not_screened"} <= literals
    missing = literals - set(BIT) - {"non_finite_value"}
    assert missing == set(), f"add these roof flags to FLAG_TABLE: {sorted(missing)}"


@pytest.mark.parametrize(
    "roof",
    [
        {},
        {"shape": "flat"},
        {"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"},
        {"shape": "monoslope", "slope": "3:12", "surface": "slippery", "ct": 1.2},
        {"shape": "hip", "slope": "1:12", "thermal": "heated", "risk": "IV", "terrain": "B",
         "exposure": "fully"},
    ],
)  # fmt: skip
def test_screening_flags_of_a_roof_become_bits(roof):
    from neve.engine import Roof, screening_flags

    names = screening_flags(Roof.from_mapping(roof))
    assert flag_names(bits_of(names)) == sorted(names)


# --- bits to names, only at the edge ---------------------------------------------


def test_bits_and_names_round_trip():
    shown = [f.name for f in FLAG_TABLE if f.shown]
    rng = np.random.default_rng(4)
    for _ in range(200):
        pick = sorted(rng.choice(shown, size=rng.integers(0, 6), replace=False).tolist())
        bits = bits_of(pick)
        assert flag_names(bits) == pick
        assert flags_text(np.array([bits], dtype=np.uint64))[0] == ";".join(pick)
    assert flag_names(0) == [] and flags_text(np.zeros(3, dtype=np.uint64)).tolist() == [""] * 3


def test_unknown_flag_name_is_refused():
    with pytest.raises(NeveError, match="not_a_flag"):
        bits_of(["demo_data", "not_a_flag"])


def test_flags_text_is_made_once_per_combination():
    bits = np.array([BIT["demo_data"], 0, BIT["demo_data"] | BIT["near_boundary"]] * 1000,
                    dtype=np.uint64)  # fmt: skip
    text = flags_text(bits)
    assert text.dtype == object and len({id(t) for t in text}) == 3
    assert text[:3].tolist() == ["demo_data", "", "demo_data;near_boundary"]


@pytest.mark.parametrize(
    "module",
    ["geo/site/resolve.py", "geo/site/one.py", "geo/site/result.py", "geo/screen/run.py",
     "geo/screen/local.py", "geo/screen/dask_runner.py"],
)  # fmt: skip
def test_no_flag_text_is_split_back(module):
    """Flags stay bits until printed: nothing in resolution or screening splits flag text."""
    text = (ROOT / module).read_text(encoding="utf-8")
    assert not re.search(r"flag\w*[^\n]*\.split\(", text), module
    assert "_merge_flags" not in text


# --- the result and its edges ------------------------------------------------------


def test_many_sites_result_and_its_table(grid_layer):
    lat, lon = _sites()
    res = resolve(lat, lon, layers=[grid_layer], elevation_ft=np.full(lat.size, 300.0))
    assert len(res) == lat.size
    assert res.status.dtype == np.int8 and res.flags.dtype == np.uint64
    assert res.layer.dtype == np.intp and set(res.values) == {"pg"}
    # the invented fixture's mapped values (conftest.py): Z1 20, Z2 30 (300 ft < 500 ft),
    # Z3 study, Z4 table at 300 ft (20 + 300/1000 * 20 = 26), Z5 10 + 0.01 * 300 = 13 raised
    # to its pg_min 15, Z6 20 [psf]
    np.testing.assert_allclose(res.values["pg"][:6], [20.0, 30.0, math.nan, 26.0, 15.0, 20.0])
    assert [STATUSES[s] for s in res.status[:6]] == ["ok", "ok", "study_required", "ok", "ok",
                                                     "ok"]  # fmt: skip
    assert STATUSES[res.status[-1]] == "error" and STATUSES[res.status[-2]] == "error"
    assert res.layer[8] == -1 and res.flags[8] & BIT["outside_layer"]
    df = res.to_frame()
    pd.testing.assert_frame_equal(
        df, resolve_points(lat, lon, layers=[grid_layer], elevation_ft=np.full(lat.size, 300.0))
    )
    assert list(df.columns) == R.COLUMNS
    assert df["flags"].tolist() == [";".join(flag_names(b)) for b in res.flags]
    assert df["status"].tolist() == [STATUSES[s] for s in res.status]
    assert df["layer_name"].tolist()[:6] == ["fixture grid"] * 6 and df["layer_name"][8] == ""
    for col in ("status", "flags", "zone_id", "message", "elevation_source", "alt_status"):
        assert df[col].dtype == object, col
    assert R.Resolution.row(res, 1)["pg_psf"] == 30.0


def test_chunks_concatenate_and_pickle_to_the_whole(grid_layer, tmp_path):
    lat, lon = _sites()
    dem = write_dem(tmp_path / "dem.tif")
    elev = np.linspace(0.0, 2000.0, lat.size)  # several disagree with the DEM: alternatives
    kw = dict(layers=[grid_layer], elevation_ft=elev, dem=dem)
    whole = resolve(lat, lon, **kw)
    assert (whole.alt_source >= 0).any()
    parts = [
        resolve(lat[a:b], lon[a:b], layers=[grid_layer], elevation_ft=elev[a:b], dem=dem)
        for a, b in ((0, 5), (5, 9), (9, lat.size))
    ]
    back = Resolution.concat([pickle.loads(pickle.dumps(p)) for p in parts])  # as from workers
    pd.testing.assert_frame_equal(back.to_frame(), whole.to_frame())
    assert back == whole  # every array field equal (detail is not compared)
    order = np.arange(lat.size)[::-1]
    pd.testing.assert_frame_equal(
        back.take(order).to_frame(), whole.to_frame().iloc[order].reset_index(drop=True)
    )
    two = resolve(lat[:2], lon[:2], layers=[grid_layer], elevation_ft=[300.0, 300.0])
    placed = two.placed(np.array([3, 1]), 5)
    assert [STATUSES[s] for s in placed.status] == ["error", "ok", "error", "ok", "error"]
    assert placed.values["pg"][3] == 20.0 and placed.values["pg"][1] == 30.0


def test_concat_refuses_results_of_other_layers(grid_layer, tmp_path):
    other = write_layer(tmp_path / "o.gpkg", fixture_rows(), {"name": "other"})
    a = resolve([LAT0 + D / 2], [LON0 + D / 2], layers=[grid_layer])
    b = resolve([LAT0 + D / 2], [LON0 + D / 2], layers=[other])
    with pytest.raises(NeveError, match="different layers"):
        Resolution.concat([a, b])


def test_one_site_json_is_the_resolution_at_the_edge(grid_layer):
    lat, lon = LAT0 + D / 2, LON0 + D + 0.0003  # Z2, 30 m from Z1: near_boundary
    cli = CliRunner().invoke(
        main, ["site", "--at", f"{lat},{lon}", "--layer", str(grid_layer), "--elevation", "100ft",
               "--format", "json"],
    )  # fmt: skip
    assert cli.exit_code == 0, cli.output
    g = json.loads(cli.output)["ground"]
    res = resolve([lat], [lon], layers=[grid_layer], elevation_ft=[100.0], search_m=1000.0)
    assert g["status"] == STATUSES[res.status[0]] == "provisional"
    assert g["flags"] == flag_names(res.flags[0]) == ["near_boundary"]
    # Z2 is fixed 30 psf and Z1's 20 psf is smaller: the site's own value (fixture)
    assert g["pg"]["psf"] == res.values["pg"][0] == 30.0
    assert g["zone_id"] == res.zone_id[0] == "Z2" and g["rule"] == res.rule[0]
    assert g["elevation"]["ft"] == res.elevation_ft[0] and g["elevation_source"] == "input"
    assert g["layer"]["sha256"] == res.layers[res.layer[0]].sha256
    site = resolve_site(lat, lon, layers=[grid_layer], elevation="100ft")
    assert site.resolution == res.without_detail() and site.row["pg_psf"] == 30.0
    assert site.to_json()["ground"] == g


def test_elevation_alternatives_come_from_the_result(grid_layer, tmp_path):
    dem = write_dem(tmp_path / "dem.tif")
    lat, lon = centre(1, 0)  # Z2: 30 psf up to 500 ft; the fixture DEM gives about 699 ft there
    out = resolve_site(lat, lon, layers=[grid_layer], dem=dem, elevation="300ft")
    res = out.resolution
    given, at_dem = out.ground["elevation_alternatives"]
    # above the zone's 500 ft limit a study is required: more demanding than the value
    assert at_dem["source"] == "dem" and at_dem["governs"] is True
    assert at_dem["status"] == STATUSES[res.status[0]] == "study_required"
    assert given["source"] == R.ELEVATION_ORIGINS[res.alt_source[0]] == "input"
    # elevation_mismatch limits the value at the given elevation: provisional
    assert given["status"] == STATUSES[res.alt_status[0]] == "provisional"
    assert given["governs"] is False
    assert given["pg"]["psf"] == res.alt_values["pg"][0] == 30.0
    assert out.ground["elevation_source"] == R.ELEVATION_ORIGINS[res.elevation_source[0]]


def test_zone_id_holding_a_semicolon_is_one_zone(tmp_path):
    rows = fixture_rows()
    rows[0]["zone_id"] = "Z1;north"
    path = write_layer(tmp_path / "semi.gpkg", rows)
    g = resolve_site(*centre(0, 0), layers=[path]).ground
    assert g["zone_id"] == "Z1;north" and g["zone_ids"] == ["Z1;north"]


def test_screen_output_is_the_resolution_at_the_edge(grid_layer, tmp_path):
    lat, lon = _sites()
    frame = pd.DataFrame({"site_id": [f"S{i}" for i in range(lat.size)],
                          "lat": [f"{v}" for v in lat], "lon": [f"{v}" for v in lon],
                          "elevation": ["300ft"] * lat.size})  # fmt: skip
    frame.loc[1, "site_id"] = "S0"  # a repeated site id: a row flag added as a bit
    sites = tmp_path / "sites.csv"
    frame.to_csv(sites, index=False)
    out = tmp_path / "out.csv"
    from neve.engine import Roof, screening_flags

    cli = CliRunner().invoke(
        main, ["screen", str(sites), "-o", str(out), "--layer", str(grid_layer), "--shape",
               "flat", "--quiet"],
    )  # fmt: skip
    assert cli.exit_code == 0, cli.output
    got = pd.read_csv(out, dtype=str, keep_default_na=False)
    ok = np.isfinite(lat) & (np.abs(lat) <= 90)
    res = resolve(lat[ok], lon[ok], layers=[grid_layer], elevation_ft=np.full(ok.sum(), 300.0))
    want = res.placed(np.flatnonzero(ok), lat.size)
    want.flags[[0, 1]] |= BIT["duplicate_site_id"]
    usable = np.isin(want.status, (R.OK, R.PROVISIONAL))
    want.flags[usable] |= bits_of(screening_flags(Roof.from_mapping({"shape": "flat"})))
    assert got["status"].tolist() == want.status_text().tolist()
    assert got["flags"].tolist() == flags_text(want.flags).tolist()
    assert got["zone_id"].tolist() == want.zone_id.tolist()
    pg = got["pg_psf"].replace("", "nan").astype(float).to_numpy()
    np.testing.assert_array_equal(pg, want.values["pg"])
    # ASCE 7-16 Eq. 7.3-1 with the default Ce = Ct = Is = 1.0 (Tables 7.3-1, 7.3-2, 1.5-2):
    # pf = 0.7 pg on every usable row
    pf = got["pf_psf"].replace("", "nan").astype(float).to_numpy()
    np.testing.assert_allclose(pf[usable], 0.7 * want.values["pg"][usable])
    assert np.isnan(pf[~usable]).all()


def test_every_flag_combination_prints_sorted():
    names = [f.name for f in FLAG_TABLE if f.kind == "site"]
    for pair in itertools.combinations(names, 2):
        assert flags_text(np.array([bits_of(pair)], dtype=np.uint64))[0] == ";".join(sorted(pair))


def test_demo_dem_by_name():
    from neve.geo.layers.model import demo_dem_path

    at = ([47.52, 47.4822], [-140.05, -140.0269])  # the README's demo sites (invented data)
    named = resolve(*at, dem="demo")
    assert named == resolve(*at, dem=demo_dem_path())
    assert (named.elevation_source == R.FROM_DEM).all() and (named.flags & BIT["demo_data"]).all()
