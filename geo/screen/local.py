"""The local screening engine: many sites resolved in chunks on this machine.

:func:`resolve_local_result` cuts the sites into chunks of at most
:data:`CHUNK_SIZE`, resolves each with :func:`neve.geo.site.resolve.resolve`
(one spatial join per layer and chunk) and puts the chunks back in input
order, as one :class:`neve.geo.site.result.Resolution`
(:func:`resolve_local` gives it as a table).  Large portfolios are resolved by :func:`worker_threads` threads:
shapely and numpy release the GIL for the heavy work, so two threads use two
cores without copying the sites to other processes.  Each thread works on its
own copy of the layers (:func:`portable_layer`).

The Dask engine (:mod:`neve.geo.screen.dask_runner`) resolves the same way on a cluster
and shares :func:`progress_bar` with this module.
"""

from __future__ import annotations

import copy
import os

import numpy as np
import pandas as pd

from neve.engine.errors import InputError

#: sites resolved per call of the resolver (bounds memory, paces the progress bar)
CHUNK_SIZE = 262_144
#: environment variable setting the local engine's thread count (1: no threads)
THREADS_ENV = "NEVE_THREADS"
#: portfolios from this size on are resolved by two threads
THREADED_FROM = 200_000


def portable_layer(layer):
    """A shallow copy of a layer with empty look-up caches.

    The copy shares the layer's zones and metadata but builds its own prepared
    geometries and trees on first use: GEOS prepared geometries and trees are
    built lazily and are not safe to share between threads.  (Pickling, as
    for a Dask worker, empties the caches by itself: see
    :meth:`neve.geo.layers.model.Layer.__getstate__`.)

    Parameters
    ----------
    layer : neve.geo.layers.model.Layer or object
        Objects without look-up caches are returned as they are.
    """
    if not hasattr(layer, "_cache"):
        return layer
    return copy.copy(layer)  # Layer.__getstate__ leaves the copy an empty cache


def worker_threads(n_sites: int) -> int:
    """Threads for the local engine: up to two on large portfolios.

    Parameters
    ----------
    n_sites : int
        Number of sites to resolve [-].

    Returns
    -------
    int
        1 below :data:`THREADED_FROM` sites, else up to two (never more
        than the machine's cores); the ``NEVE_THREADS`` environment variable,
        a positive whole number, overrides both.
    """
    env = os.environ.get(THREADS_ENV, "").strip()
    if env:
        if not env.isdigit() or int(env) < 1:
            raise InputError(THREADS_ENV, f"{env!r} is not a positive whole number", "1, 2, ...")
        return int(env)
    if n_sites < THREADED_FROM:
        return 1
    return max(1, min(2, os.cpu_count() or 1))


def progress_bar(total: int, enabled: bool, desc: str):
    """A tqdm progress bar on stderr counting sites (a silent one when not ``enabled``)."""
    from tqdm.auto import tqdm

    return tqdm(total=total, disable=not enabled, desc=desc, unit="site", leave=False)


def resolve_local_result(
    lat: np.ndarray,
    lon: np.ndarray,
    elevation_ft: np.ndarray | None,
    *,
    layers: list,
    dem=None,
    dem_units: str | None = None,
    progress: bool = False,
    elevation_source: str = "larger",
):
    """Resolve sites in chunks on this machine; one result entry per site, in order.

    Parameters
    ----------
    lat, lon : numpy.ndarray
        Site coordinates [deg, WGS 84], all finite.
    elevation_ft : numpy.ndarray or None
        Given elevations [ft] (NaN where none), or None when no row gives one.
    layers : list of neve.geo.layers.model.Layer
        Zone layers, most local first.
    dem, dem_units, elevation_source
        As for :func:`neve.geo.site.resolve.resolve`.
    progress : bool
        Show a progress bar on stderr.

    Returns
    -------
    neve.geo.site.result.Resolution or None
        The chunks' results put together in input order (None for no sites).
    """
    import queue
    from concurrent.futures import ThreadPoolExecutor

    from neve.geo.site.resolve import resolve
    from neve.geo.site.result import Resolution

    n = len(lat)
    threads = worker_threads(n)
    size = CHUNK_SIZE if threads == 1 else max(1, min(CHUNK_SIZE, -(-n // (4 * threads))))
    chunks = [(start, min(start + size, n)) for start in range(0, n, size)]
    pool: queue.Queue = queue.Queue()
    pool.put(list(layers))
    for _ in range(threads - 1):
        pool.put([portable_layer(layer) for layer in layers])

    def run(chunk):
        start, stop = chunk
        own = pool.get()  # a layer set no other thread is using
        try:
            return resolve(
                lat[start:stop],
                lon[start:stop],
                layers=own,
                elevation_ft=None if elevation_ft is None else elevation_ft[start:stop],
                dem=dem,
                dem_units=dem_units,
                elevation_source=elevation_source,
            )
        finally:
            pool.put(own)

    parts = []
    bar = progress_bar(n, progress, "resolving")
    try:
        if threads == 1:
            for chunk in chunks:
                parts.append(run(chunk))
                bar.update(chunk[1] - chunk[0])
        else:
            with ThreadPoolExecutor(threads, thread_name_prefix="neve-resolve") as ex:
                for chunk, part in zip(chunks, ex.map(run, chunks), strict=True):
                    parts.append(part)  # map keeps the input order
                    bar.update(chunk[1] - chunk[0])
    finally:
        bar.close()
    return Resolution.concat(parts) if parts else None


def resolve_local(
    lat: np.ndarray,
    lon: np.ndarray,
    elevation_ft: np.ndarray | None,
    *,
    layers: list,
    dem=None,
    dem_units: str | None = None,
    progress: bool = False,
    elevation_source: str = "larger",
) -> pd.DataFrame | None:
    """:func:`resolve_local_result` as a table: the resolver's columns, one row per site.

    Returns None for no sites.
    """
    res = resolve_local_result(
        lat, lon, elevation_ft, layers=layers, dem=dem, dem_units=dem_units,
        progress=progress, elevation_source=elevation_source,
    )  # fmt: skip
    return None if res is None else res.to_frame()
