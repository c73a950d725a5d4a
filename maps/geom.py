"""Geometry helpers shared by the maps: local projected CRS, zones near a site.

Distances and scale bars are computed in a projected CRS chosen for the site:
the UTM zone that pyproj's database gives for the site's longitude and
latitude, or a local azimuthal equidistant projection where UTM does not
apply (polar sites).
"""

from __future__ import annotations

import functools
import math

from neve.engine.errors import InputError, LayerError

#: columns every zone frame handed to maps must have
ZONE_COLUMNS = ("zone_id", "rule", "pg", "geometry")
#: optional columns filled in when a view lacks them
OPTIONAL_COLUMNS = {"pg_psf": math.nan, "elev_max": math.nan, "note": "", "source": ""}


def site_lat_lon(site_json: dict) -> tuple[float, float]:
    """Latitude and longitude [degrees] of the site in a ``neve site`` JSON object."""
    site = (site_json or {}).get("site") or {}
    try:
        lat, lon = float(site["lat"]), float(site["lon"])
    except (KeyError, TypeError, ValueError):
        raise InputError(
            "site", "no usable lat/lon in the site object", "numbers in degrees"
        ) from None
    if not (-90.0 <= lat <= 90.0 and -180.0 <= lon <= 180.0):
        raise InputError(
            "site.lat/lon", f"({lat}, {lon}) is outside the globe", "-90..90, -180..180 degrees"
        )
    return lat, lon


def local_crs(lat: float, lon: float):
    """A projected CRS in metres for a site: its UTM zone, or local azimuthal equidistant.

    Looked up once per site (pyproj's database query is slow): see :func:`_local_crs`.

    Parameters
    ----------
    lat, lon : float
        Site latitude and longitude [degrees, WGS 84].

    Returns
    -------
    pyproj.CRS
    """
    return _local_crs(float(lat), float(lon))


@functools.lru_cache(maxsize=64)
def _local_crs(lat: float, lon: float):
    from pyproj import CRS
    from pyproj.aoi import AreaOfInterest
    from pyproj.database import query_utm_crs_info

    if -80.0 <= lat <= 84.0:
        infos = query_utm_crs_info(
            datum_name="WGS 84",
            area_of_interest=AreaOfInterest(lon, lat, lon, lat),
        )
        if infos:
            # the zone whose central meridian is nearest the site
            best = min(
                infos, key=lambda i: abs((i.area_of_use.west + i.area_of_use.east) / 2 - lon)
            )
            return CRS.from_epsg(int(best.code))
    return CRS.from_proj4(f"+proj=aeqd +lat_0={lat} +lon_0={lon} +datum=WGS84 +units=m")


def check_zones(view: dict):
    """The view's zones as a GeoDataFrame in EPSG:4326 with every column maps use.

    Raises
    ------
    LayerError
        When ``zones`` is missing or lacks a required column.
    """
    import geopandas as gpd

    zones = view.get("zones") if isinstance(view, dict) else None
    name = view.get("name", "?") if isinstance(view, dict) else "?"
    if zones is None or not isinstance(zones, gpd.GeoDataFrame):
        raise LayerError(f"view {name!r}: 'zones' must be a GeoDataFrame of zone polygons")
    missing = [c for c in ZONE_COLUMNS if c not in zones.columns]
    if missing:
        raise LayerError(
            f"view {name!r}: zones lack column(s) {', '.join(missing)}; "
            f"required: {', '.join(ZONE_COLUMNS)}"
        )
    if zones.crs is None:
        zones = zones.set_crs(4326)
    elif zones.crs.to_epsg() != 4326:
        zones = zones.to_crs(4326)
    zones = zones.copy()
    for col, default in OPTIONAL_COLUMNS.items():
        if col not in zones.columns:
            zones[col] = default
    if "study" not in zones.columns:
        zones["study"] = zones["rule"].astype(str) == "study"
    zones = zones[zones.geometry.notna() & ~zones.geometry.is_empty]
    return zones


def zones_near(zones, lat: float, lon: float, radius_m: float, keep_ids=()):
    """Zones within ``radius_m`` of the site, clipped to a window around it.

    Parameters
    ----------
    zones : GeoDataFrame
        EPSG:4326 zones (see :func:`check_zones`).
    lat, lon : float
        Site [degrees].
    radius_m : float
        Search radius [m].
    keep_ids : iterable of str
        Zone ids kept whatever their distance (the governing zones).

    Returns
    -------
    GeoDataFrame
        In EPSG:4326 with an added ``distance_m`` column [m]; geometries are
        clipped to a square of side ``4 radius_m`` centred on the site.
    """
    import geopandas as gpd
    import pandas as pd
    from shapely.geometry import Point, box

    crs = local_crs(lat, lon)
    site = gpd.GeoSeries([Point(lon, lat)], crs=4326).to_crs(crs)
    window = gpd.GeoSeries([site.iloc[0].buffer(2.0 * radius_m).envelope], crs=crs)
    window_ll = window.to_crs(4326).iloc[0]
    keep = {str(k) for k in keep_ids if k is not None}
    idx = zones.sindex.query(window_ll, predicate="intersects")
    near = zones.iloc[sorted(set(idx))]
    extra = zones[zones["zone_id"].astype(str).isin(keep) & ~zones.index.isin(near.index)]
    if len(extra):
        near = gpd.GeoDataFrame(pd.concat([near, extra]), geometry="geometry", crs=4326)
    if near.empty:
        near = near.copy()
        near["distance_m"] = []
        return near
    projected = near.geometry.to_crs(crs)
    near = near.copy()
    near["distance_m"] = projected.distance(site.iloc[0]).to_numpy()
    near = near[(near["distance_m"] <= radius_m) | near["zone_id"].astype(str).isin(keep)]
    minx, miny, maxx, maxy = window.iloc[0].bounds
    clip = gpd.GeoSeries([box(minx, miny, maxx, maxy)], crs=crs).to_crs(4326).iloc[0]
    clipped = near.geometry.intersection(clip)
    kept = near["zone_id"].astype(str).isin(keep).to_numpy()
    # a zone asked for by id stays whole when it lies outside the window
    near["geometry"] = clipped.where(~(clipped.is_empty.to_numpy() & kept), near.geometry)
    near = near[~near.geometry.is_empty]
    return near
