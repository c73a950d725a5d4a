"""Benchmark: ``neve screen`` with sites in and results out of PostGIS, beside Parquet.

Run::

    python tests/benchmarks/bench_postgis.py              # 1,000,000 sites
    python tests/benchmarks/bench_postgis.py --sites 100000

It starts a throwaway PostgreSQL + PostGIS cluster (tests/postgis/conftest.py),
builds a synthetic portfolio (invented data: random sites over the invented
fixture grid of tests/screen/conftest.py, a point geometry and an elevation),
loads it into PostGIS (with psql's COPY) and into a Parquet file, then prints,
from one run each and side by side:

* ``neve screen sites.parquet -o results.parquet`` (the file path),
* ``neve screen postgresql://...?table=sites -o postgresql://...?table=results``,

wall time, CPU time of the neve process and peak RSS (a wrapper process reads
``resource.getrusage(RUSAGE_CHILDREN)``), and sites per second.  The floor of
the database path is the file path: the difference is what reading from and
writing to the server costs.  Not collected by pytest and not run by CI.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.postgis.conftest import throwaway_cluster  # noqa: E402
from tests.screen.conftest import interior_points, write_grid_layer  # noqa: E402

WRAP = textwrap.dedent("""
    import json, resource, subprocess, sys, time
    t = time.perf_counter()
    rc = subprocess.run(sys.argv[1:]).returncode
    wall = time.perf_counter() - t
    ru = resource.getrusage(resource.RUSAGE_CHILDREN)
    print(json.dumps({"rc": rc, "wall": wall, "cpu": ru.ru_utime + ru.ru_stime,
                      "rss_mb": ru.ru_maxrss / 1024}))
""")


def _measure(cmd: list[str], env: dict) -> dict:
    out = subprocess.run([sys.executable, "-c", WRAP, *cmd], env=env, capture_output=True,
                         text=True, check=True)  # fmt: skip
    res = json.loads(out.stdout.strip().splitlines()[-1])
    if res["rc"] != 0:
        raise SystemExit(f"{' '.join(cmd[:3])} failed (exit {res['rc']})")
    return res


def main() -> None:
    import geopandas as gpd
    import numpy as np
    import pandas as pd

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sites", type=int, default=1_000_000)
    args = ap.parse_args()
    n = args.sites
    neve = str(Path(sys.executable).parent / "neve")
    with tempfile.TemporaryDirectory() as tmp, throwaway_cluster() as pg:
        tmp = Path(tmp)
        layer = write_grid_layer(tmp)
        lat, lon = interior_points(n, seed=11)
        rng = np.random.default_rng(12)
        frame = pd.DataFrame({"site_id": [f"B{i:07d}" for i in range(n)],
                              "elevation_ft": rng.uniform(100, 4000, n).round(0)})  # fmt: skip
        gdf = gpd.GeoDataFrame(frame, geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")
        gdf.to_parquet(tmp / "sites.parquet", index=False)
        csv = tmp / "rows.csv"
        pd.DataFrame({"site_id": frame["site_id"], "elevation_ft": frame["elevation_ft"],
                      "wkt": gdf.geometry.to_wkt()}).to_csv(csv, index=False, header=False)  # fmt: skip
        env = dict(os.environ, PGPASSWORD=pg["password"])
        psql = [*pg["psql"], "-d", pg["db"]]
        subprocess.run([*psql, "-c", "CREATE TABLE sites (site_id text PRIMARY KEY, elevation_ft "
                        "double precision, wkt text)"], env=env, check=True)  # fmt: skip
        t = time.perf_counter()
        subprocess.run([*psql, "-c", f"\\copy sites FROM '{csv}' WITH (FORMAT csv)"], env=env,
                       check=True)  # fmt: skip
        subprocess.run([*psql, "-c", "ALTER TABLE sites ADD COLUMN geom geometry(Point, 4326); "
                        "UPDATE sites SET geom = ST_GeomFromText(wkt, 4326); "
                        "ALTER TABLE sites DROP COLUMN wkt"], env=env, check=True)  # fmt: skip
        load = time.perf_counter() - t
        base = f"postgresql://{pg['user']}@{pg['host']}:{pg['port']}/{pg['db']}"
        rows = []
        for label, src, dst in (
            ("Parquet in, Parquet out", str(tmp / "sites.parquet"), str(tmp / "results.parquet")),
            ("PostGIS in, PostGIS out", f"{base}?table=sites", f"{base}?table=results"),
        ):
            r = _measure([neve, "screen", src, "--layer", str(layer), "-o", dst, "--quiet",
                          "--overwrite"], env)  # fmt: skip
            rows.append((label, r))
        print(f"\nneve screen, {n:,} sites (one run each; loading the table with psql took {load:.1f} s)")
        print(f"{'path':<26}{'wall s':>9}{'cpu s':>9}{'sites/s':>11}{'peak RSS MB':>13}{'ratio':>8}")
        floor = rows[0][1]["wall"]
        for label, r in rows:
            print(f"{label:<26}{r['wall']:>9.1f}{r['cpu']:>9.1f}{n / r['wall']:>11,.0f}"
                  f"{r['rss_mb']:>13,.0f}{r['wall'] / floor:>8.2f}")  # fmt: skip


if __name__ == "__main__":
    main()
