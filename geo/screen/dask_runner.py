"""Resolving sites on a Dask cluster through dask-geopandas.

The sites are staged as a partitioned GeoParquet dataset that the workers
read themselves (only paths travel in the task graph), the zone layers are
scattered once to every worker (without their look-up caches, which each
worker builds for itself), and each partition is resolved on its worker
by the same :func:`neve.geo.site.resolve.resolve_points` the local engine uses, so both
engines give the same rows.  Memory per worker is bounded by the partition
size.

Without a ``scheduler`` address a :class:`distributed.LocalCluster` is started
for the run (two worker processes, one thread each, on a 2-core machine).
With an address, the workers must be able to read the staging folder: pass
``staging=`` a folder they share (an NFS path, say); without one the
partitions are sent from this process instead (slower, but needs no shared
disk).  The layers and any DEM must be readable at the same path on the
workers.
"""

from __future__ import annotations

import math
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError

#: sites per partition when ``partitions`` is not given
PARTITION_SIZE = 250_000
#: how long to wait for a remote scheduler to answer
CONNECT_TIMEOUT = "10s"
#: environment variable naming a shared staging folder for remote clusters
STAGING_ENV = "NEVE_DASK_STAGING"


def _client(scheduler: str | None):
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            return Client(scheduler, timeout=CONNECT_TIMEOUT), None
        except (OSError, TimeoutError) as exc:
            raise InputError(
                "scheduler",
                f"cannot reach the Dask scheduler at {scheduler!r} ({exc})",
                "an address such as tcp://host:8786",
            ) from None
    workers = max(1, min(2, os.cpu_count() or 1))
    cluster = LocalCluster(
        n_workers=workers,
        threads_per_worker=1,
        processes=True,
        dashboard_address=":0",
        silence_logs=40,
    )
    return Client(cluster), cluster


def _resolve_partition(part, layers, dem, dem_units, columns=None, elevation_source="larger"):
    """Resolve one partition of staged sites (runs on a worker)."""
    from neve.geo.site.resolve import resolve_points

    lat = part["lat"].to_numpy(dtype=float)
    lon = part["lon"].to_numpy(dtype=float)
    elev = part["elevation_ft"].to_numpy(dtype=float)
    res = resolve_points(
        lat,
        lon,
        layers=layers,
        elevation_ft=elev if np.isfinite(elev).any() else None,
        dem=dem,
        dem_units=dem_units,
        elevation_source=elevation_source,
    )
    res = pd.DataFrame(res).reset_index(drop=True)
    if columns is not None:
        res = res[list(columns)]
    res.insert(0, "row", part["row"].to_numpy())
    res.index = part.index
    return res


def _stage(frame: pd.DataFrame, folder: Path, nparts: int) -> list[Path]:
    import geopandas as gpd

    bounds = np.linspace(0, len(frame), nparts + 1).astype(int)
    paths = []
    for i in range(nparts):
        chunk = frame.iloc[bounds[i] : bounds[i + 1]]
        gdf = gpd.GeoDataFrame(
            chunk,
            geometry=gpd.points_from_xy(chunk["lon"], chunk["lat"]),
            crs="EPSG:4326",
        )
        path = folder / f"part.{i:05d}.parquet"
        gdf.to_parquet(path, index=False)
        paths.append(path)
    return paths


def resolve_dask(
    lat,
    lon,
    elevation_ft=None,
    *,
    layers,
    dem=None,
    dem_units=None,
    scheduler: str | None = None,
    partitions: int | None = None,
    staging: str | Path | None = None,
    columns: list[str] | None = None,
    progress: bool = False,
    elevation_source: str = "larger",
) -> pd.DataFrame:
    """Resolve sites on a Dask cluster; one row per site, in input order.

    Parameters
    ----------
    lat, lon : array_like
        Site coordinates [deg, WGS 84].
    elevation_ft : array_like, optional
        Given elevations [ft] (NaN where none).
    layers : list of Layer
        Zone layers, most local first (scattered to every worker).
    dem, dem_units, elevation_source
        As for :func:`neve.geo.site.resolve.resolve_points`; the DEM path must be
        readable on the workers.
    scheduler : str, optional
        Address of a running scheduler (``tcp://host:8786``); a LocalCluster
        is started for the run when omitted.
    partitions : int, optional
        Number of partitions; by default one per 250,000 sites, at least two
        per worker.
    staging : str or Path, optional
        Folder shared with the workers for the staged sites (default: the
        ``NEVE_DASK_STAGING`` environment variable, else a temporary folder
        for a LocalCluster, else the partitions are sent from this process).
    columns : list of str, optional
        Resolver columns to bring back (all when omitted); fewer columns
        means less data sent from the workers.

    Returns
    -------
    pandas.DataFrame
        The resolver's columns, one row per site, in input order.
    """
    import dask_geopandas
    import geopandas as gpd

    from neve.geo.site.resolve import resolve_points

    lat = np.asarray(lat, dtype=float)
    lon = np.asarray(lon, dtype=float)
    n = len(lat)
    elev = np.full(n, np.nan) if elevation_ft is None else np.asarray(elevation_ft, dtype=float)
    if partitions is not None and (int(partitions) != partitions or partitions < 1):
        raise InputError(
            "partitions", f"{partitions!r} is not a positive whole number", "1, 2, ..."
        )
    frame = pd.DataFrame({"row": np.arange(n), "lat": lat, "lon": lon, "elevation_ft": elev})
    meta = resolve_points(
        lat[:1], lon[:1], layers=layers, elevation_ft=None if elevation_ft is None else elev[:1],
        dem=dem, dem_units=dem_units, elevation_source=elevation_source,
    )  # fmt: skip
    meta = pd.DataFrame(meta).iloc[:0].copy()
    if columns is not None:
        meta = meta[list(columns)]
    meta.insert(0, "row", np.zeros(0, dtype=np.int64))
    client, cluster = _client(scheduler)
    staging = staging or os.environ.get(STAGING_ENV)
    own_tmp = None
    try:
        workers = max(1, len(client.scheduler_info().get("workers", {})))
        nparts = int(partitions) if partitions else max(2 * workers, math.ceil(n / PARTITION_SIZE))
        nparts = max(1, min(nparts, n))
        if staging is None and cluster is not None:
            own_tmp = Path(tempfile.mkdtemp(prefix="neve-dask-"))
            staging = own_tmp
        if staging is not None:
            folder = Path(staging)
            if own_tmp is None:
                folder = Path(tempfile.mkdtemp(prefix="neve-dask-", dir=folder))
                own_tmp = folder
            _stage(frame, folder, nparts)
            ddf = dask_geopandas.read_parquet(str(folder))
        else:
            gdf = gpd.GeoDataFrame(frame, geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")
            ddf = dask_geopandas.from_geopandas(gdf, npartitions=nparts)
        # pickling empties the layers' look-up caches (Layer.__getstate__): each worker
        # builds its own prepared geometries and trees on first use
        [layers_future] = client.scatter([list(layers)], broadcast=True)
        resolved = ddf.map_partitions(
            _resolve_partition,
            layers_future,
            dem,
            dem_units,
            None if columns is None else list(columns),
            elevation_source,
            meta=meta,
            align_dataframes=False,
        )
        result = _compute(client, resolved, n, progress)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
        if own_tmp is not None:
            shutil.rmtree(own_tmp, ignore_errors=True)
    result = result.sort_values("row", kind="stable").reset_index(drop=True)
    if len(result) != n or not np.array_equal(result["row"].to_numpy(), np.arange(n)):
        raise RuntimeError(f"the cluster returned {len(result)} rows for {n} sites")
    return result.drop(columns="row")


def _compute(client, resolved, n: int, progress: bool) -> pd.DataFrame:
    from distributed import as_completed

    from neve.geo.screen.local import progress_bar

    parts = resolved.to_delayed()
    futures = client.compute(parts)
    bar = progress_bar(n, progress, "resolving (dask)")
    done = {}
    try:
        for fut in as_completed(futures):
            part = fut.result()
            done[fut.key] = part
            bar.update(len(part))
    finally:
        bar.close()
    frames = [done[f.key] for f in futures]
    return pd.concat(frames, ignore_index=True) if frames else resolved._meta
