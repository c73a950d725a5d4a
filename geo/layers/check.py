"""``neve layer check``: find the defects of a zone layer before it is used.

:func:`check_layer` reads the layer file and its sidecar separately, so that
a missing or wrong sidecar is reported alongside the data's own defects
rather than stopping the check.  Only a file that cannot be read at all is
an error (:class:`~neve.engine.errors.LayerError`, exit 2).

Problem kinds:

- the sidecar: ``missing_sidecar``, ``units`` (an unknown ``value_units`` or
  ``elevation_units``), ``sidecar`` (any other sidecar defect, with ``key``);
- the coordinates: ``crs`` (none declared), ``crs_area`` (coordinates outside
  the declared CRS's area of use, from pyproj: projected metres labelled as
  degrees, swapped latitude and longitude, a wrong EPSG code);
- the zones: ``empty_layer``, ``empty_geometry``, ``geometry_type``,
  ``invalid_geometry`` (shapely's reason, with the zone id), ``overlap``
  (with ``area_m2``, geodesic, from pyproj), ``duplicate_id``,
  ``missing_id``, ``missing_column``;
- the rules: ``rule``, ``parameter``, ``table``, ``expression``,
  ``implausible_value`` (a value beyond the plausibility bound, 2000 psf),
  ``formula_range`` and ``table_range`` (a formula or table that divides by
  zero, overflows, is undefined or negative somewhere in the elevation range
  the zone claims, with ``cause`` and ``elevation``; see
  :mod:`neve.geo.layers.rule_checks`);
- grids: ``raster_value`` (negative or infinite cells), ``study_mask``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from neve.engine.errors import LayerError
from neve.geo.layers.model import RASTER_SUFFIXES, file_sha256
from neve.geo.layers.rule_checks import range_problems
from neve.geo.layers.rules import ZoneTable, plausible_limit
from neve.geo.layers.sidecar import OPTIONAL, SidecarError, read_sidecar

#: overlaps smaller than this are ignored (shared edges, rounding) [m2]
MIN_OVERLAP_M2 = 1.0
#: how far beyond its CRS's area of use a layer may reach unreported [degrees]
AREA_MARGIN_DEG = 1.0
#: zone ids listed in one message
MAX_IDS_SHOWN = 10


def _problem(kind: str, message: str, zone_id=None, **extra) -> dict:
    out = {"kind": kind, "zone_id": zone_id, "message": message}
    out.update(extra)
    return out


def _meta(path: Path, problems: list[dict]) -> dict:
    try:
        return read_sidecar(path)
    except SidecarError as exc:
        extra = {"key": exc.key} if exc.key else {}
        problems.append(_problem(exc.kind, str(exc), **extra))
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


def _inside(lon, lat, area, margin: float) -> np.ndarray:
    """Whether lon/lat points lie in an area of use grown by ``margin`` [degrees]."""
    w, s, e, n = area.west, area.south, area.east, area.north
    ok_lat = (lat >= s - margin) & (lat <= n + margin)
    if w <= e:
        ok_lon = (lon >= w - margin) & (lon <= e + margin)
    else:  # the area crosses the antimeridian
        ok_lon = (lon >= w - margin) | (lon <= e + margin)
    return np.isfinite(lon) & np.isfinite(lat) & ok_lon & ok_lat & (np.abs(lon) <= 180)


def area_of_use_problems(bounds: np.ndarray, crs, ids) -> list[dict]:
    """Zones whose bounding boxes fall outside the declared CRS's area of use.

    Parameters
    ----------
    bounds : numpy.ndarray, shape (n, 4)
        ``minx, miny, maxx, maxy`` of each zone in the layer's CRS.
    crs : pyproj.CRS or anything pyproj accepts
    ids : sequence of str
        Zone ids (for the message).

    Notes
    -----
    The area of use is pyproj's (``CRS.area_of_use``, west/south/east/north in
    degrees), grown by :data:`AREA_MARGIN_DEG` because layers legitimately
    reach a little beyond a projection's nominal zone.  Each zone's corners
    are transformed to longitude/latitude (``always_xy``); a corner that does
    not transform, or lands outside, puts the zone outside.  When swapping x
    and y would bring every outside zone in, the message says the axes look
    swapped.
    """
    from pyproj import CRS, Transformer

    crs = CRS.from_user_input(crs)
    if crs.area_of_use is None and crs.to_epsg() is not None:
        crs = CRS.from_epsg(crs.to_epsg())  # a CRS read from WKT (rasterio) may drop its area
    area = crs.area_of_use
    b = np.asarray(bounds, dtype=float).reshape(-1, 4)
    if area is None or b.size == 0:
        return []
    has = np.isfinite(b).all(axis=1)
    corners_x = b[:, [0, 2, 0, 2]]
    corners_y = b[:, [1, 1, 3, 3]]

    def lonlat(x, y):
        if crs.is_geographic:
            return np.asarray(x, dtype=float), np.asarray(y, dtype=float)
        t = Transformer.from_crs(crs, 4326, always_xy=True)
        with np.errstate(all="ignore"):
            lo, la = t.transform(x.ravel(), y.ravel(), errcheck=False)
        return np.asarray(lo, float).reshape(x.shape), np.asarray(la, float).reshape(x.shape)

    lon, lat = lonlat(corners_x, corners_y)
    outside = has & ~_inside(lon, lat, area, AREA_MARGIN_DEG).all(axis=1)
    if not outside.any():
        return []
    bad = np.flatnonzero(outside)
    slon, slat = lonlat(corners_y[bad], corners_x[bad])
    swapped = bool(_inside(slon, slat, area, AREA_MARGIN_DEG).all())
    if swapped:
        hint = (
            "x and y look swapped (latitude stored as x); write longitude as x "
            "(GeoJSON: [longitude, latitude])"
        )
    elif crs.is_geographic and (np.nanmax(np.abs(b[bad][:, [0, 2]])) > 180
                                or np.nanmax(np.abs(b[bad][:, [1, 3]])) > 90):  # fmt: skip
        hint = (
            "the coordinates are beyond +-180/+-90 degrees: they look like projected "
            "metres (e.g. UTM) labelled with a geographic CRS; declare the CRS they are in"
        )
    else:
        hint = "check that the declared CRS is the one the coordinates are in"
    shown = [str(ids[j]) for j in bad[:MAX_IDS_SHOWN]]
    more = f" and {bad.size - len(shown)} more" if bad.size > len(shown) else ""
    name = crs.to_string()
    return [
        _problem(
            "crs_area",
            f"{bad.size} of {len(b)} zone(s) ({', '.join(shown)}{more}) lie outside the area "
            f"of use of {name} ({area.name}: longitude {area.west:g} to {area.east:g}, "
            f"latitude {area.south:g} to {area.north:g}, allowing {AREA_MARGIN_DEG:g} degree); "
            + hint,
            str(ids[bad[0]]) if bad.size == 1 else None,
            zone_ids=[str(ids[j]) for j in bad],
            swapped=swapped,
        )
    ]


def _check_vector(path: Path, meta: dict, problems: list[dict]) -> int:
    import shapely

    from neve.geo.layers.model import read_vector

    gdf = read_vector(path, require_crs=False)  # the same reader (and warnings) as look-ups
    if len(gdf) == 0:
        problems.append(_problem("empty_layer", "the layer has no zones"))
        return 0
    if gdf.crs is None:
        problems.append(_problem("crs", "the layer declares no coordinate reference system"))
    vu, eu = meta.get("value_units", "psf"), meta.get("elevation_units", "ft")
    from neve.geo.layers.sidecar import RISK_CATEGORIES, is_per_risk

    # a per-risk layer (ASCE 7-22): each risk category's columns are checked, shared
    # defects (ids, geometry) once
    cats = RISK_CATEGORIES if is_per_risk(meta) else (None,)
    seen: set = set()
    for cat in cats:
        zt = ZoneTable.from_frame(gdf, meta.get("quantity", "pg"), vu, cat)
        for p in [*zt.problems, *range_problems(zt, vu, eu)]:  # with invalid geometries
            key = (p["kind"], p["zone_id"], p["message"])
            if key not in seen:
                seen.add(key)
                problems.append(p if cat is None else dict(p, risk_category=cat))
    ids = zt.zone_id
    geoms = gdf.geometry.values
    empty = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    if gdf.crs is not None:
        labels = [zid or f"row {j}" for j, zid in enumerate(ids)]
        problems.extend(area_of_use_problems(shapely.bounds(geoms), gdf.crs, labels))
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
    valid = shapely.is_valid(geoms)  # invalid ones are reported by ZoneTable.from_frame
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
    if crs is not None:
        from rasterio.transform import array_bounds

        bounds = np.array([array_bounds(shape[0], shape[1], transform)])  # w, s, e, n
        problems.extend(area_of_use_problems(bounds, crs, [path.name]))
    vals = np.ma.filled(band.astype(float), np.nan)
    finite = np.isfinite(vals)
    if not (finite | np.isinf(vals)).any():
        problems.append(_problem("empty_layer", "every cell is nodata"))
    vu = meta.get("value_units", "psf")
    limit = plausible_limit(vu)
    neg = int(np.sum(finite & (vals < 0)))
    if neg:
        low = float(np.min(vals[finite]))
        problems.append(
            _problem(
                "raster_value",
                f"{neg} cell(s) hold negative values (lowest {low:.6g} {vu}; accepted: 0 to "
                f"{limit:.4g} {vu}); sites in them get status error",
            )
        )
    inf = int(np.sum(np.isinf(vals)))
    if inf:
        problems.append(
            _problem(
                "raster_value",
                f"{inf} cell(s) hold infinite values; sites in them get status error",
            )
        )
    big = int(np.sum(finite & (vals > limit)))
    if big:
        high = float(np.max(vals[finite]))
        problems.append(
            _problem(
                "implausible_value",
                f"{big} cell(s) hold values above {limit:.4g} {vu} (highest {high:.6g} {vu}); "
                "check the values and their units; sites in them get status error",
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


def rasterio_open(path):
    import rasterio

    return rasterio.open(path)


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
        for cat, name in (meta.get("risk_rasters") or {}).items():  # per risk category (7-22)
            q = p.with_name(name)
            if not q.is_file():
                problems.append(_problem("risk_rasters", f"risk category {cat}: {name!r} not found",
                                         key="risk_rasters", risk_category=cat))  # fmt: skip
                continue
            own: list[dict] = []
            _check_raster(q, dict(meta, study_mask=None), own)
            with rasterio_open(q) as a, rasterio_open(p) as b:
                if (a.height, a.width, a.transform, a.crs) != (
                    b.height,
                    b.width,
                    b.transform,
                    b.crs,
                ):
                    own.append(_problem("risk_rasters", f"{name!r} is not on the layer's grid"))
            for prob in own:
                prob["message"] = f"risk category {cat} ({name}): {prob['message']}"
                problems.append(dict(prob, risk_category=cat))
    else:
        if meta.get("study_mask"):
            problems.append(
                _problem("study_mask", "study_mask is only for raster layers", key="study_mask")
            )
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
