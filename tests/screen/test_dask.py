"""The Dask engine agrees with the local engine, row for row, on a two-worker LocalCluster."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

pytest.importorskip("dask_geopandas")
distributed = pytest.importorskip("distributed")
pytest.importorskip("neve.geo.site.resolve")

from neve.geo.screen.run import screen  # noqa: E402
from tests.screen.conftest import malformed_portfolio  # noqa: E402

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=":0", silence_logs=40
    ) as c:
        yield c


@pytest.fixture
def portfolio(tmp_path):
    df, _ = malformed_portfolio()
    roof = tmp_path / "roofs.toml"
    roof.write_text(
        'ce = 1.0\nct = 1.0\n[profile.hall]\nrisk = "II"\n[profile.shed]\nrisk = "IV"\n',
        encoding="utf-8",
    )
    far = pd.DataFrame([{**df.iloc[0].to_dict(), "site_id": "FAR", "lat": "10.0", "lon": "10.0"}])
    return pd.concat([df, far], ignore_index=True), roof


def _same(a: pd.DataFrame, b: pd.DataFrame) -> None:
    assert list(a.columns) == list(b.columns)
    assert len(a) == len(b)
    for col in a.columns:
        if pd.api.types.is_float_dtype(a[col]):
            np.testing.assert_array_equal(a[col].to_numpy(), b[col].to_numpy(), err_msg=col)
        else:
            assert (
                a[col].astype(object).fillna("<NA>").tolist()
                == b[col].astype(object).fillna("<NA>").tolist()
            ), col


@pytest.mark.parametrize("staged", [False, True])
def test_dask_matches_local_row_for_row(
    cluster, portfolio, grid_layer, tmp_path, staged, monkeypatch
):
    df, roof = portfolio
    local = screen(df, layers=[grid_layer], roof=roof)
    import neve.geo.screen.dask_runner as de

    staged_calls = []
    original_stage = de._stage
    monkeypatch.setattr(de, "_stage", lambda *a: staged_calls.append(a[1]) or original_stage(*a))
    remote = screen(
        df, layers=[grid_layer], roof=roof, engine="dask", scheduler=cluster.scheduler_address,
        partitions=5, staging=tmp_path if staged else None,
    )  # fmt: skip
    _same(local, remote)
    assert (remote["status"] == "error").sum() == 20
    assert len(staged_calls) == (1 if staged else 0)
    if staged:  # the workers read the staged partitions, which are then removed
        assert staged_calls[0].parent == tmp_path
        assert not [p for p in tmp_path.iterdir() if p.name.startswith("neve-dask-")]


def test_cli_dask_engine_starts_its_own_cluster(tmp_path, grid_layer, sites_frame):
    from click.testing import CliRunner

    from neve.cli import main

    sites = tmp_path / "s.csv"
    sites_frame.to_csv(sites, index=False)
    r1 = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "a.parquet"),
                                   "--layer", str(grid_layer)])  # fmt: skip
    r2 = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "b.parquet"),
                                   "--layer", str(grid_layer), "--engine", "dask",
                                   "--partitions", "3"])  # fmt: skip
    assert r1.exit_code == 0 and r2.exit_code == 0, r2.output
    _same(pd.read_parquet(tmp_path / "a.parquet"), pd.read_parquet(tmp_path / "b.parquet"))


def test_unreachable_scheduler_is_exit_2(tmp_path, grid_layer, sites_frame, monkeypatch):
    from click.testing import CliRunner

    import neve.geo.screen.dask_runner as de

    monkeypatch.setattr(de, "CONNECT_TIMEOUT", "2s")

    from neve.cli import main

    sites = tmp_path / "s.csv"
    sites_frame.to_csv(sites, index=False)
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "a.csv"),
                                  "--layer", str(grid_layer), "--engine", "dask",
                                  "--scheduler", "tcp://127.0.0.1:9"])  # fmt: skip
    assert r.exit_code == 2, r.output
    assert "cannot reach the Dask scheduler" in r.output
    assert not (tmp_path / "a.csv").exists()


def test_dask_reads_the_dem_on_the_workers(cluster, grid_layer, tmp_path):
    import rasterio
    from affine import Affine

    dem_path = tmp_path / "dem.tif"
    data = np.linspace(0, 1500, 100 * 100, dtype=np.float32).reshape(100, 100)  # metres
    with rasterio.open(
        dem_path, "w", driver="GTiff", width=100, height=100, count=1, dtype="float32",
        crs="EPSG:4326", transform=Affine(0.02, 0, -110, 0, -0.02, 46), nodata=-9999,
    ) as dst:  # fmt: skip
        dst.write(data, 1)
    rng = np.random.default_rng(4)
    df = pd.DataFrame(
        {"lat": rng.uniform(44.01, 45.99, 300), "lon": rng.uniform(-109.99, -108.01, 300)}
    )
    df.loc[::7, "elevation_ft"] = 2500.0
    local = screen(df, layers=[grid_layer], dem=dem_path, dem_units="m")
    remote = screen(df, layers=[grid_layer], dem=dem_path, dem_units="m", engine="dask",
                    scheduler=cluster.scheduler_address, partitions=3)  # fmt: skip
    _same(local, remote)
    assert set(remote["site_elevation_source"]) == {"dem", "input"}
