"""Resolving sites on a Dask cluster.

The sites are staged as plain Parquet partitions of their row numbers,
coordinates and given elevations (no geometry: the resolver takes lat/lon)
that the workers read themselves (only paths travel in the task graph), the zone layers are
scattered once to every worker (without their look-up caches, which each
worker builds for itself), and each partition is resolved on its worker
by the same :func:`neve.geo.site.resolve.resolve` the local engine uses, so both
engines give the same rows.  A worker sends back its partition's
:class:`neve.geo.site.result.Resolution` compacted (each text array as codes
and its distinct values, :func:`_compact`) with the partition's row numbers;
this process expands and puts them
together in input order (:meth:`Resolution.concat`).  Memory per worker is
bounded by the partition size.

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

from neve.engine.errors import InputError, NeveError

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


def _compact(res):
    """A result with each text (object) array replaced by codes; the codes and values apart.

    Statuses, flags and numbers are numpy arrays already; messages, zone ids and
    rules repeat across a partition, so each distinct text travels once.
    """
    import copy

    out = copy.copy(res)
    packed = {}
    for name, value in res._arrays():
        if isinstance(value, np.ndarray) and value.dtype == object:
            codes, uniques = pd.factorize(value, use_na_sentinel=False)
            packed[name] = (codes.astype(np.int32), np.asarray(uniques, dtype=object))
            setattr(out, name, None)
    return out, packed


def _expand(res, packed):
    """The result :func:`_compact` made, whole again."""
    for name, (codes, uniques) in packed.items():
        values = np.empty(len(codes), dtype=object)
        values[:] = uniques[codes] if len(codes) else []
        setattr(res, name, values)
    return res


def _resolve_staged(path, layers, dem, dem_units, elevation_source="larger"):
    """Resolve one staged partition file (runs on a worker): its rows and compact result."""
    import pyarrow.parquet as pq

    return _resolve_partition(pq.read_table(path).to_pandas(), layers, dem, dem_units,
                              elevation_source)  # fmt: skip


def _resolve_partition(part, layers, dem, dem_units, elevation_source="larger"):
    """Resolve one partition of sites (runs on a worker): its row numbers and compact result."""
    from neve.geo.site.resolve import resolve

    lat = part["lat"].to_numpy(dtype=float)
    lon = part["lon"].to_numpy(dtype=float)
    elev = part["elevation_ft"].to_numpy(dtype=float)
    res = resolve(
        lat,
        lon,
        layers=layers,
        elevation_ft=elev if np.isfinite(elev).any() else None,
        dem=dem,
        dem_units=dem_units,
        elevation_source=elevation_source,
    )
    return part["row"].to_numpy(dtype=np.int64), *_compact(res)


def _bounds(n: int, nparts: int) -> np.ndarray:
    return np.linspace(0, n, nparts + 1).astype(int)


def _stage(frame: pd.DataFrame, folder: Path, nparts: int) -> list[Path]:
    """Write the partitions as plain Parquet files (row, lat, lon, elevation_ft)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    bounds = _bounds(len(frame), nparts)
    paths = []
    for i in range(nparts):
        chunk = frame.iloc[bounds[i] : bounds[i + 1]]
        path = folder / f"part.{i:05d}.parquet"
        pq.write_table(pa.Table.from_pandas(chunk, preserve_index=False), path)
        paths.append(path)
    return paths


def resolve_dask_result(
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
    progress: bool = False,
    elevation_source: str = "larger",
):
    """Resolve sites on a Dask cluster; one result entry per site, in input order.

    Parameters
    ----------
    lat, lon : array_like
        Site coordinates [deg, WGS 84].
    elevation_ft : array_like, optional
        Given elevations [ft] (NaN where none).
    layers : list of Layer
        Zone layers, most local first (scattered to every worker).
    dem, dem_units, elevation_source
        As for :func:`neve.geo.site.resolve.resolve`; the DEM path must be
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

    Returns
    -------
    neve.geo.site.result.Resolution
        The partitions' results put together in input order.
    """
    import dask

    from neve.geo.site.result import Resolution

    lat = np.asarray(lat, dtype=float)
    lon = np.asarray(lon, dtype=float)
    n = len(lat)
    elev = np.full(n, np.nan) if elevation_ft is None else np.asarray(elevation_ft, dtype=float)
    if partitions is not None and (int(partitions) != partitions or partitions < 1):
        raise InputError(
            "partitions", f"{partitions!r} is not a positive whole number", "1, 2, ..."
        )
    frame = pd.DataFrame({"row": np.arange(n), "lat": lat, "lon": lon, "elevation_ft": elev})
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
            paths = _stage(frame, folder, nparts)
            work, task = [str(p) for p in paths], _resolve_staged
        else:  # no shared folder: the partitions' plain columns sent from here
            bounds = _bounds(n, nparts)
            parts = [frame.iloc[bounds[i] : bounds[i + 1]] for i in range(nparts)]
            work, task = client.scatter(parts), _resolve_partition
        # pickling empties the layers' look-up caches (Layer.__getstate__): each worker
        # builds its own prepared geometries and trees on first use
        [layers_future] = client.scatter([list(layers)], broadcast=True)
        tasks = [
            dask.delayed(task)(part, layers_future, dem, dem_units, elevation_source)
            for part in work
        ]
        done = _compute(client, tasks, n, progress)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
        if own_tmp is not None:
            shutil.rmtree(own_tmp, ignore_errors=True)
    rows = np.concatenate([r for r, _ in done]) if done else np.empty(0, dtype=np.int64)
    if len(rows) != n:
        raise NeveError(f"the cluster returned {len(rows)} results for {n} sites")
    order = np.argsort(rows, kind="stable")
    if not np.array_equal(rows[order], np.arange(n)):
        raise NeveError(f"the cluster did not return each of the {n} sites once")
    result = Resolution.concat([res for _, res in done])
    return result if np.array_equal(order, np.arange(n)) else result.take(order)


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
    """:func:`resolve_dask_result` as a table: one row per site, in input order.

    ``columns`` names the resolver columns to give (all when omitted); the
    other parameters are those of :func:`resolve_dask_result`.
    """
    res = resolve_dask_result(
        lat, lon, elevation_ft, layers=layers, dem=dem, dem_units=dem_units,
        scheduler=scheduler, partitions=partitions, staging=staging, progress=progress,
        elevation_source=elevation_source,
    )  # fmt: skip
    return res.to_frame(columns)


def _compute(client, tasks, n: int, progress: bool) -> list:
    """Run the partition tasks; their (rows, result) pairs in partition order."""
    from distributed import as_completed

    from neve.geo.screen.local import progress_bar

    futures = client.compute(tasks)
    bar = progress_bar(n, progress, "resolving (dask)")
    done = {}
    try:
        for fut in as_completed(futures):
            rows, res, packed = fut.result()
            done[fut.key] = (rows, _expand(res, packed))
            bar.update(len(rows))
    finally:
        bar.close()
    return [done[f.key] for f in futures]
