"""``neve layer check``: find the defects of a zone layer before it is used.

:func:`check_layer` reads the layer file and its sidecar separately, so that
a missing or wrong sidecar is reported alongside the data's own defects
rather than stopping the check.  Only a file that cannot be read at all is
an error (:class:`~engine.errors.LayerError`, exit 2).

Problem kinds: ``missing_sidecar``, ``sidecar``, ``units``, ``crs``,
``empty_layer``, ``empty_geometry``, ``geometry_type``, ``invalid_geometry``,
``overlap`` (with ``area_m2``, geodesic, from pyproj), ``duplicate_id``,
``missing_id``, ``missing_column``, ``rule``, ``parameter``, ``table``,
``expression``, ``raster_value``, ``study_mask``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from engine.errors import LayerError
from geo.layers import RASTER_SUFFIXES, file_sha256
from geo.rules import ZoneTable, plausible_limit
from geo.sidecar import OPTIONAL, read_sidecar, sidecar_path

#: overlaps smaller than this are ignored (shared edges, rounding) [m2]
MIN_OVERLAP_M2 = 1.0


def _problem(kind: str, message: str, zone_id=None, **extra) -> dict:
    out = {"kind": kind, "zone_id": zone_id, "message": message}
    out.update(extra)
    return out


def _meta(path: Path, problems: list[dict]) -> dict:
    try:
        return read_sidecar(path)
    except LayerError as exc:
        text = str(exc)
        if not sidecar_path(path).is_file():
            problems.append(_problem("missing_sidecar", text))
        elif "unit" in text:
            problems.append(_problem("units", text))
        else:
            problems.append(_problem("sidecar", text))
    meta = dict(OPTIONAL)
    meta.update({"value_units": "psf", "elevation_units": "ft", "name": path.name})
    return meta


def geodesic_area_m2(geoms, crs) -> np.ndarray:
    """Geodesic area of polygons in any CRS [m2] (pyproj.Geod on WGS 84)."""
    import geopandas as gpd
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    g4326 = gpd.GeoSeries(list(geoms), crs=crs).to_crs(4326)
    return np.array([abs(geod.geometry_area_perimeter(g)[0]) for g in g4326])


def _check_vector(path: Path, meta: dict, problems: list[dict]) -> int:
    import geopandas as gpd
    import shapely

    try:
        gdf = gpd.read_file(path, engine="pyogrio")
    except Exception as exc:
        raise LayerError(f"layer {str(path)!r} cannot be read as a vector file ({exc})") from None
    if len(gdf) == 0:
        problems.append(_problem("empty_layer", "the layer has no zones"))
        return 0
    if gdf.crs is None:
        problems.append(_problem("crs", "the layer declares no coordinate reference system"))
    zt = ZoneTable.from_frame(gdf, meta.get("quantity", "pg"), meta.get("value_units", "psf"))
    problems.extend(zt.problems)
    ids = zt.zone_id
    geoms = gdf.geometry.values
    empty = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    for j in np.flatnonzero(empty):
        problems.append(
            _problem("empty_geometry", f"zone {ids[j]} has no geometry", ids[j] or None)
        )
    types = shapely.get_type_id(geoms)
    poly = np.isin(types, (3, 6))  # Polygon, MultiPolygon
    for j in np.flatnonzero(~poly & ~empty):
        problems.append(
            _problem(
                "geometry_type",
                f"zone {ids[j]} is a {geoms[j].geom_type} geometry; "
                "accepted: Polygon, MultiPolygon",
                ids[j] or None,
            )
        )
    valid = shapely.is_valid(geoms)
    for j in np.flatnonzero(~valid & ~empty):
        problems.append(
            _problem(
                "invalid_geometry",
                f"zone {ids[j]}: {shapely.is_valid_reason(geoms[j])}",
                ids[j] or None,
            )
        )
    seen: dict[str, int] = {}
    for zid in ids:
        if zid:
            seen[zid] = seen.get(zid, 0) + 1
    for zid, count in seen.items():
        if count > 1:
            problems.append(_problem("duplicate_id", f"zone_id {zid} is used {count} times", zid))
    good = np.flatnonzero(poly & valid & ~empty)
    if good.size > 1 and gdf.crs is not None:
        tree = shapely.STRtree(geoms[good])
        a, b = tree.query(geoms[good], predicate="intersects")
        keep = a < b
        a, b = good[a[keep]], good[b[keep]]
        if a.size:
            inter = shapely.intersection(geoms[a], geoms[b])
            areal = shapely.area(inter) > 0
            a, b, inter = a[areal], b[areal], inter[areal]
        if a.size:
            area = geodesic_area_m2(inter, gdf.crs)
            for i, j, ar in zip(a, b, area, strict=True):
                if ar >= MIN_OVERLAP_M2:
                    problems.append(
                        _problem(
                            "overlap",
                            f"zones {ids[i]} and {ids[j]} overlap over {ar:,.0f} m2",
                            ids[i] or None,
                            other_zone_id=ids[j] or None,
                            area_m2=float(ar),
                        )
                    )
    return len(gdf)


def _check_raster(path: Path, meta: dict, problems: list[dict]) -> int:
    import rasterio

    try:
        with rasterio.open(path) as ds:
            band = ds.read(1, masked=True)
            crs, transform, shape = ds.crs, ds.transform, (ds.height, ds.width)
    except rasterio.errors.RasterioIOError as exc:
        raise LayerError(f"layer {str(path)!r} cannot be read as a raster ({exc})") from None
    if crs is None:
        problems.append(_problem("crs", "the raster declares no coordinate reference system"))
    vals = np.ma.filled(band.astype(float), np.nan)
    finite = np.isfinite(vals)
    if not finite.any():
        problems.append(_problem("empty_layer", "every cell is nodata"))
    neg = int(np.sum(finite & (vals < 0)))
    if neg:
        problems.append(_problem("raster_value", f"{neg} cell(s) hold negative values"))
    limit = plausible_limit(meta.get("value_units", "psf"))
    big = int(np.sum(finite & (vals > limit)))
    if big:
        problems.append(
            _problem(
                "implausible_value",
                f"{big} cell(s) hold values above {limit:.4g} {meta.get('value_units', 'psf')}",
            )
        )
    mask = meta.get("study_mask")
    if mask:
        mp = path.with_name(mask)
        if not mp.is_file():
            problems.append(_problem("study_mask", f"study_mask {mask!r} not found"))
        else:
            with rasterio.open(mp) as ms:
                if (ms.height, ms.width, ms.transform, ms.crs) != (*shape, transform, crs):
                    problems.append(_problem("study_mask", f"{mask!r} is not on the layer's grid"))
    return int(finite.sum())


def check_layer(path: str | Path) -> dict:
    """Check a layer file and its sidecar.

    Returns
    -------
    dict
        ``{"layer", "sha256", "kind", "zones", "ok", "problems"}``; ``zones`` is
        the number of zones (vector) or valued cells (raster).

    Raises
    ------
    LayerError
        When the file is missing or cannot be read at all.
    """
    p = Path(path)
    if not p.is_file():
        raise LayerError(f"layer file {str(p)!r} not found")
    problems: list[dict] = []
    meta = _meta(p, problems)
    is_raster = p.suffix.lower() in RASTER_SUFFIXES
    if is_raster:
        count = _check_raster(p, meta, problems)
    else:
        if meta.get("study_mask"):
            problems.append(_problem("sidecar", "study_mask is only for raster layers"))
        count = _check_vector(p, meta, problems)
    return {
        "layer": str(p),
        "sha256": file_sha256(p),
        "kind": "raster" if is_raster else "vector",
        "zones": count,
        "ok": not problems,
        "problems": problems,
    }


def check_text(report: dict) -> str:
    """Readable lines of a check report."""
    head = f"{report['layer']}: {report['kind']} layer, {report['zones']} zone(s)"
    if report["ok"]:
        return head + "\nOK: no problems found."
    lines = [head, f"{len(report['problems'])} problem(s):"]
    for pr in report["problems"]:
        lines.append(f"  [{pr['kind']}] {pr['message']}")
    return "\n".join(lines)
