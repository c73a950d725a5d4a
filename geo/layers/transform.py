"""Coordinate transformers, made once per pair of CRSs and thread (pyproj).

Making a :class:`pyproj.Transformer` costs about a millisecond; a site
look-up needs several (layer, World Mercator, DEM), which dominated one
``neve site`` request of ``neve serve``.  :func:`transformer` keeps them per
thread (a Transformer is not shared between threads) and per pair of CRSs.
"""

from __future__ import annotations

import threading

_LOCAL = threading.local()

#: transformers kept per thread (the oldest go first beyond it)
MAX_KEPT = 32


def _key(crs) -> str:
    if isinstance(crs, (int, str)):
        return str(crs)
    srs = getattr(crs, "srs", None)  # pyproj.CRS: the text it was made from
    if isinstance(srs, str) and srs:
        return srs
    return crs.to_wkt()  # e.g. rasterio's CRS


def transformer(src, dst):
    """``Transformer.from_crs(src, dst, always_xy=True)``, kept for the next call."""
    kept = getattr(_LOCAL, "kept", None)
    if kept is None:
        kept = _LOCAL.kept = {}
    key = (_key(src), _key(dst))
    t = kept.get(key)
    if t is None:
        from pyproj import Transformer

        t = Transformer.from_crs(src, dst, always_xy=True)
        if len(kept) >= MAX_KEPT:
            kept.pop(next(iter(kept)))
        kept[key] = t
    return t
