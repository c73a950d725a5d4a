"""Portfolio screening (neve.geo.screen.run) on the invented fixture grid of conftest.py."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from tests.screen.conftest import GRID, malformed_portfolio, zone_of

pytest.importorskip("neve.geo.site.resolve")

from neve.geo.screen.run import RESULT_COLUMNS, run_screen, screen  # noqa: E402

M_PER_FT = 0.3048  # exact (NIST SP 811, App. B)
KPA_PER_PSF = 0.04788025898  # NIST SP 811, App. B (1 lbf/ft2 = 47.88026 Pa)


def _table_pg(elev_ft):
    """NE zone of the fixture: linear interpolation in [[0, 20], [5000, 60]] (docs/contract.md, "Vector columns and rules")."""
    return np.interp(elev_ft, [0.0, 5000.0], [20.0, 60.0])


def test_values_match_an_independent_point_in_polygon(grid_layer, sites_frame):
    res = screen(sites_frame, layers=[grid_layer])
    ref_zone = zone_of(sites_frame["lat"].to_numpy(), sites_frame["lon"].to_numpy())
    assert list(res["zone_id"]) == list(ref_zone)  # reference: shapely.contains_xy
    elev = np.array([float(e[:-2]) for e in sites_frame["elevation"]])
    for i, z in enumerate(ref_zone):
        rule = GRID[z]["rule"]
        if rule == "fixed":
            assert res["status"][i] == "ok"
            assert res["pg_psf"][i] == GRID[z]["pg"]
        elif rule == "study":
            assert res["status"][i] == "study_required"
            assert np.isnan(res["pg_psf"][i])
            assert "study_required" in res["flags"][i]
        else:
            assert res["pg_psf"][i] == pytest.approx(_table_pg(elev[i]), rel=1e-9)
    ok = res["status"] == "ok"
    np.testing.assert_allclose(res["pg_kpa"][ok], res["pg_psf"][ok] * KPA_PER_PSF, rtol=1e-9)
    np.testing.assert_allclose(res["site_elevation_ft"], elev, rtol=1e-12)
    np.testing.assert_allclose(res["site_elevation_m"], elev * M_PER_FT, rtol=1e-12)


def test_outside_the_layer_is_no_data(grid_layer):
    df = pd.DataFrame({"lat": [30.0], "lon": [-100.0], "elevation": ["100ft"]})
    res = screen(df, layers=[grid_layer])
    assert res["status"][0] == "no_data"
    assert "outside_layer" in res["flags"][0]


def test_above_elevation_limit_is_flagged(grid_layer):
    # SE zone carries elev_max = 6000 ft in the fixture
    df = pd.DataFrame(
        {"lat": [44.5, 44.5], "lon": [-108.5, -108.5], "elevation": ["5000ft", "7000ft"]}
    )
    res = screen(df, layers=[grid_layer])
    assert res["status"][0] == "ok" and res["pg_psf"][0] == 40.0
    assert "above_elevation_limit" in res["flags"][1]
    assert res["status"][1] != "ok"


def test_no_row_lost_and_order_kept_with_malformed_rows(grid_layer, tmp_path):
    df, expected = malformed_portfolio()
    roof = tmp_path / "roofs.toml"
    roof.write_text(
        'ce = 1.0\nct = 1.0\n[profile.hall]\nrisk = "II"\n[profile.shed]\nrisk = "I"\n',
        encoding="utf-8",
    )
    path = tmp_path / "sites.csv"
    df.to_csv(path, index=False)
    res = screen(path, layers=[grid_layer], roof=roof)
    assert len(res) == len(df) == 200
    assert list(res["site_id"]) == list(df["site_id"])
    for col in df.columns:  # every input column kept, as read
        assert col in res.columns
    for col in RESULT_COLUMNS:
        assert col in res.columns
    for sid, fragment in expected.items():
        row = res.loc[res["site_id"] == sid].iloc[0]
        assert row["status"] == "error", sid
        assert fragment in row["message"], (sid, row["message"])
        assert np.isnan(row["design_uniform_psf"])
    good = ~res["site_id"].str.startswith("X")
    assert (res.loc[good, "status"] != "error").all()


def test_roof_loads_follow_eq_7_3_1(grid_layer, sites_frame):
    # ASCE 7-16 Eq. 7.3-1: pf = 0.7 Ce Ct Is pg; Is = 1.10 for risk III (Table 1.5-2, from memory)
    res = screen(sites_frame, layers=[grid_layer], roof={"ce": 1.0, "ct": 1.0, "risk": "III"})
    usable = res["status"].isin(["ok", "provisional"]).to_numpy()
    assert usable.any() and (~usable).any()
    np.testing.assert_allclose(
        res["pf_psf"][usable], 0.7 * 1.0 * 1.0 * 1.1 * res["pg_psf"][usable], rtol=1e-9
    )
    assert res["pf_psf"][~usable].isna().all()
    assert (res["design_uniform_psf"][usable] >= res["pf_psf"][usable] - 1e-9).all()
    np.testing.assert_allclose(
        res["pf_kpa"][usable], res["pf_psf"][usable] * KPA_PER_PSF, rtol=1e-9
    )


def test_profiles_chosen_per_row(grid_layer, sites_frame):
    df = sites_frame.assign(roof=["a" if i % 2 else " B" for i in range(len(sites_frame))])
    profiles = {
        "profile": {
            "a": {"ce": 1.0, "ct": 1.0, "risk": "I"},
            "b": {"ce": 1.0, "ct": 1.0, "risk": "IV"},
        }
    }
    res = screen(df, layers=[grid_layer], roof=profiles)
    ok = res["status"] == "ok"
    is_a = (df["roof"] == "a") & ok
    is_b = (df["roof"] == " B") & ok  # matched case- and space-blind
    # ASCE 7-16 Table 1.5-2 (from memory): Is = 0.80 (I), 1.20 (IV)
    np.testing.assert_allclose(res["pf_psf"][is_a], 0.7 * 0.8 * res["pg_psf"][is_a], rtol=1e-9)
    np.testing.assert_allclose(res["pf_psf"][is_b], 0.7 * 1.2 * res["pg_psf"][is_b], rtol=1e-9)


def test_profiles_need_a_roof_column(grid_layer, sites_frame):
    with pytest.raises(InputError, match="no 'roof' column"):
        screen(sites_frame, layers=[grid_layer], roof={"profile": {"a": {"shape": "flat"}}})


def test_bad_profile_names_its_field(grid_layer, sites_frame):
    with pytest.raises(InputError, match=r"profile\.a\.shape"):
        screen(
            sites_frame.assign(roof="a"),
            layers=[grid_layer],
            roof={"profile": {"a": {"shape": "onion"}}},
        )
    with pytest.raises(InputError, match=r"profile\.a\.rise"):  # issue 12: a dome needs its rise
        screen(
            sites_frame.assign(roof="a"),
            layers=[grid_layer],
            roof={"profile": {"a": {"shape": "dome", "diameter": "80ft"}}},
        )


def test_duplicate_site_ids_flagged_not_dropped(grid_layer, sites_frame):
    df = sites_frame.copy()
    df.loc[5, "site_id"] = df.loc[3, "site_id"]
    res = screen(df, layers=[grid_layer])
    assert len(res) == len(df)
    dup = res["flags"].str.contains("duplicate_site_id")
    assert list(np.flatnonzero(dup)) == [3, 5]


def test_input_column_named_like_a_result_is_kept(grid_layer, sites_frame):
    res = screen(sites_frame.assign(status="planned"), layers=[grid_layer])
    assert (res["input_status"] == "planned").all()
    assert set(res["status"]) <= {"ok", "provisional", "study_required", "no_data", "error"}


def test_dem_fills_missing_elevations(grid_layer, tmp_path):
    import rasterio
    from affine import Affine

    dem_path = tmp_path / "dem.tif"
    data = np.linspace(0, 1500, 200 * 200, dtype=np.float32).reshape(200, 200)  # metres
    with rasterio.open(
        dem_path, "w", driver="GTiff", width=200, height=200, count=1, dtype="float32",
        crs="EPSG:4326", transform=Affine(2 / 200, 0, -110, 0, -2 / 200, 46), nodata=-9999,
    ) as dst:  # fmt: skip
        dst.write(data, 1)
    lat, lon = np.array([45.3, 45.7, 45.55]), np.array([-108.7, -108.2, -108.4])  # NE zone
    res = screen(
        pd.DataFrame({"lat": lat, "lon": lon}), layers=[grid_layer], dem=dem_path, dem_units="m"
    )
    with rasterio.open(dem_path) as src:  # reference: rasterio's own point sampling
        ref_m = np.array([v[0] for v in src.sample(zip(lon, lat, strict=True))], dtype=float)
    np.testing.assert_allclose(res["site_elevation_ft"], ref_m / M_PER_FT, rtol=1e-6)
    assert (res["site_elevation_source"] == "dem").all()
    np.testing.assert_allclose(res["pg_psf"], _table_pg(ref_m / M_PER_FT), rtol=1e-6)


def test_empty_table_is_an_input_error(grid_layer):
    with pytest.raises(InputError, match="no rows"):
        screen(pd.DataFrame({"lat": [], "lon": []}), layers=[grid_layer])


def test_summary_counts(grid_layer, sites_frame):
    run = run_screen(sites_frame, layers=[grid_layer])
    s = run.summary
    assert s["rows"] == len(sites_frame)
    assert sum(s["status"].values()) == len(sites_frame)
    for status, count in s["status"].items():
        assert count == int((run.results["status"] == status).sum())
    valued = run.results.loc[run.results["status"].isin(["ok", "provisional"]), "pg_psf"]
    assert s["pg_psf"] == {"min": valued.min(), "max": valued.max()}
    assert s["layers"][0]["name"] == "fixture grid" and len(s["layers"][0]["sha256"]) == 64
    assert s["demo"] is False


def test_demo_layers_by_default_say_so():
    from neve.geo.layers.model import DEMO_DIR, DEMO_LAYER_FILES

    if not all((DEMO_DIR / f).is_file() for f in DEMO_LAYER_FILES):
        pytest.skip("the embedded demo data is not built yet")
    run = run_screen(pd.DataFrame({"lat": [0.0], "lon": [0.0]}))
    assert run.summary["demo"] is True


def test_progress_bar_only_when_asked(grid_layer, sites_frame, capsys):
    run_screen(sites_frame, layers=[grid_layer], progress=False)
    assert capsys.readouterr().err == ""
    run_screen(sites_frame, layers=[grid_layer], progress=True)
    assert "resolving" in capsys.readouterr().err


def test_dask_engine_name_is_validated(grid_layer, sites_frame):
    with pytest.raises(InputError, match="engine.*accepted: local, dask"):
        screen(sites_frame, layers=[grid_layer], engine="spark")


def test_blank_coordinates_with_address_but_no_geocoder(grid_layer, monkeypatch):
    monkeypatch.delenv("NEVE_GEOCODER_URL", raising=False)
    df = pd.DataFrame({"lat": [45.5, None], "lon": [-109.5, None], "address": ["", "2 Mill Ln"]})
    res = screen(df, layers=[grid_layer])
    assert res["status"][0] == "study_required"  # NW zone of the fixture
    assert res["status"][1] == "error" and "--gazetteer" in res["message"][1]


def test_given_elevation_wins_and_is_checked_against_the_dem(grid_layer, tmp_path):
    import rasterio
    from affine import Affine

    dem_path = tmp_path / "flat.tif"
    with rasterio.open(
        dem_path, "w", driver="GTiff", width=20, height=20, count=1, dtype="float32",
        crs="EPSG:4326", transform=Affine(2 / 20, 0, -110, 0, -2 / 20, 46), nodata=-9999,
    ) as dst:  # fmt: skip
        dst.write(np.full((20, 20), 1000.0, dtype=np.float32), 1)  # 1000 m everywhere
    df = pd.DataFrame({"lat": [45.5, 45.5], "lon": [-108.5, -108.5], "elevation_m": [1005, 1400]})
    res = screen(df, layers=[grid_layer], dem=dem_path, dem_units="m")
    assert (res["site_elevation_source"] == "input").all()
    np.testing.assert_allclose(res["site_elevation_m"], [1005, 1400], rtol=1e-12)
    # docs/contract.md, "Site flags": given and DEM elevations more than 15 m apart are flagged
    assert "elevation_mismatch" not in res["flags"][0]
    assert "elevation_mismatch" in res["flags"][1]


def test_geodataframe_in_a_projected_crs(grid_layer, sites_frame):
    import geopandas as gpd

    gdf = gpd.GeoDataFrame(
        sites_frame.drop(columns=["lat", "lon"]),
        geometry=gpd.points_from_xy(sites_frame["lon"], sites_frame["lat"]),
        crs="EPSG:4326",
    ).to_crs("EPSG:32612")
    res = screen(gdf, layers=[grid_layer])
    ref = screen(sites_frame, layers=[grid_layer])
    assert list(res["zone_id"]) == list(ref["zone_id"])
    np.testing.assert_allclose(res["site_lat"], sites_frame["lat"], atol=1e-9)  # pyproj round trip


def test_threaded_local_engine_gives_the_same_rows(grid_layer, monkeypatch):
    import neve.geo.screen.local as le

    df, _ = malformed_portfolio()
    monkeypatch.setenv("NEVE_THREADS", "1")
    serial = screen(df, layers=[grid_layer])
    monkeypatch.setenv("NEVE_THREADS", "2")
    monkeypatch.setattr(le, "CHUNK_SIZE", 17)  # many small chunks, finished out of order
    threaded = screen(df, layers=[grid_layer])
    pd.testing.assert_frame_equal(serial, threaded)


@pytest.mark.parametrize("value", ["0", "two", "-1"])
def test_thread_count_must_be_positive(grid_layer, sites_frame, monkeypatch, value):
    monkeypatch.setenv("NEVE_THREADS", value)
    with pytest.raises(InputError, match="NEVE_THREADS"):
        screen(sites_frame, layers=[grid_layer])
