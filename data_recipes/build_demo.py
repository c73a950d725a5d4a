"""Build neve's embedded demo data: the invented jurisdiction of Skerrow Island.

Skerrow Island does not exist.  It is placed in the open North Pacific
(around 47.5 N, 140 W), far from any real jurisdiction, so that nobody can
mistake its map for a real one.  Every value here is invented for
demonstration; every sidecar says ``demo = true``.

Outputs (in ``geo/demo/`` unless ``--out`` is given):

``skerrow_base.gpkg`` (+ ``.toml``)
    The island-wide base layer, stored in UTM zone 7N (EPSG:32607) to show
    that layers may use any CRS; values in psf, elevations in ft.  Zones of
    every rule kind: ``fixed`` (with and without ``elev_max``), ``study``
    (two study areas), ``elevation_table``, ``formula`` with a ``Z`` column,
    and a ``pg_min`` floor.
``port_hallin_amendment.geojson`` (+ ``.toml``)
    A local amendment of the (invented) town of Port Hallin, in EPSG:4326,
    values in kPa and elevations in m, to stack above the base layer; one of
    its zones is elevation-limited.
``skerrow_722_pg.gpkg`` (+ ``.toml``)
    The island's invented ASCE 7-22 ground load layer (``standard = "ASCE
    7-22"``): the base layer's zones with one value per risk category
    (``pg_I`` .. ``pg_IV``, ``table_I`` .. ``table_IV``, ``expr_I`` ..
    ``expr_IV``, ``pg_min_I`` .. ``pg_min_IV``), UTM 7N, psf, ft.  Not in the
    default demo stack: neve uses it when ``--standard asce7-22`` is asked
    without ``--layer``.
``skerrow_722_w2.geojson`` (+ ``.toml``)
    The island's invented winter wind parameter W2 (``quantity = "w2"``,
    a fraction, no ``value_units``), EPSG:4326: windward west, sheltered
    east, and a study area on Cape Gale.
``skerrow_en_sk.gpkg`` (+ ``.toml``)
    The island's invented metric district for EN 1991-1-3 (``standard =
    "EN 1991-1-3"``, ``quantity = "sk"``): characteristic ground snow loads sk
    in kPa by altitude in m, on the base layer's zone shapes, with every rule
    kind: ``fixed`` (one with ``elev_max``), ``elevation_table``, two
    ``formula`` zones of the invented district formula
    ``sk = (0.4 + 0.3 * Z) * (1 + (A / 650) ** 2)`` in the zone number ``Z``
    and the site altitude ``A`` with an ``sk_min`` floor, and two ``study``
    zones.  UTM 7N.  Used with ``--standard en1991-1-3`` when no ``--layer`` is
    given.  Values and coefficients are invented: no country's annex.
``skerrow_dem.tif``
    A synthetic DEM of the island (two summits), UTM 7N, 200 m cells,
    float32 metres (band unit metadata ``metre``), nodata over the sea.

The build is deterministic (fixed geometry, no randomness, a fixed
GeoPackage timestamp), so rebuilding gives the same files.

Run: ``python data_recipes/build_demo.py [--out DIR]``
"""

from __future__ import annotations

import argparse
import math
import os
from pathlib import Path

import numpy as np

CENTER_LAT, CENTER_LON = 47.5, -140.0
UTM = "EPSG:32607"
KM = 1000.0
#: coordinate grid of the demo zones [m]
GRID_M = 0.01
HERE = Path(__file__).resolve().parent
DEFAULT_OUT = HERE.parent / "geo" / "demo"

SOURCE = (
    "Invented for the neve demo by data_recipes/build_demo.py; not a published map; "
    "never for design"
)
COMMON = {
    "standard": "ASCE 7-16",
    "source": SOURCE,
    "license": "CC0-1.0",
    "date": "2026-01-01",
    "demo": True,
}

#: summits of the synthetic island: (x [km], y [km], height [m], spread [km])
SUMMITS = ((4.0, 2.0, 1700.0, 4.5), (-10.0, 6.0, 900.0, 3.0))


def island_outline():
    """Coast of the island in local km (east, north) around the centre."""
    from shapely.geometry import Polygon

    t = np.linspace(0.0, 2.0 * math.pi, 181)[:-1]
    r = 1.0 + 0.06 * np.sin(3 * t) + 0.04 * np.cos(5 * t + 0.7)
    return Polygon(np.column_stack([24.0 * r * np.cos(t), 15.0 * r * np.sin(t)]))


def base_zones():
    """(attributes, geometry in UTM 7N metres) of the base layer's zones.

    Shapes are drawn in local km, moved to UTM, and cut with overlay
    operations on a 1 cm grid, so that neighbouring zones share their edges
    exactly (no gaps, no slivers of overlap).
    """
    import shapely
    from shapely.geometry import Point, box

    def cut(a, b, op):
        return getattr(shapely, op)(a, b, grid_size=GRID_M)

    isl = _to_utm(island_outline())
    big = 100.0
    summit = cut(_to_utm(Point(SUMMITS[0][0], SUMMITS[0][1]).buffer(3.0, 64)), isl, "intersection")
    cape = cut(_to_utm(Point(-19.0, -7.0).buffer(3.0, 64)), isl, "intersection")
    west = cut(cut(_to_utm(box(-big, -big, -8.0, 3.0)), isl, "intersection"), cape, "difference")
    north = cut(_to_utm(box(-big, 3.0, 0.0, big)), isl, "intersection")
    high = cut(cut(_to_utm(box(-8.0, -big, 14.0, 3.0)), isl, "intersection"), summit, "difference")
    northeast = cut(
        cut(_to_utm(box(0.0, 3.0, 14.0, big)), isl, "intersection"), summit, "difference"
    )
    east = cut(_to_utm(box(14.0, -big, big, big)), isl, "intersection")
    table = "[[0, 30], [1000, 40], [2500, 70], [4500, 120]]"
    rows = [
        ("SK-W", "fixed", 25.0, 1000.0, None, None, None, None, west,
         "West coast lowland; mapped value valid up to 1000 ft"),
        ("SK-N", "formula", None, None, None, "Z + 0.015 * max(A - 800, 0)", 28.0, 30.0, north,
         "North valley; value rises with elevation above 800 ft"),
        ("SK-H", "elevation_table", None, None, table, None, None, None, high,
         "Central highlands; table by elevation, study above 4500 ft"),
        ("SK-NE", "fixed", 45.0, 2000.0, None, None, None, None, northeast,
         "North-east slopes; mapped value valid up to 2000 ft"),
        ("SK-E", "fixed", 35.0, None, None, None, None, None, east, "East coast plain"),
        ("SK-S1", "study", None, None, None, None, None, None, summit,
         "Summit massif; no mapped value"),
        ("SK-S2", "study", None, None, None, None, None, None, cape,
         "Cape Gale; wind-scoured headland, drifting too variable to map"),
    ]  # fmt: skip
    for r in rows:
        if not r[8].is_valid:
            raise RuntimeError(f"demo zone {r[0]} is invalid: {shapely.is_valid_reason(r[8])}")
    return rows


def town_zones():
    """(attributes, geometry in local km) of the Port Hallin amendment layer."""
    from shapely.geometry import box

    return [
        ("PH-1", "fixed", 1.45, None, box(-16.0, -3.5, -12.0, -0.5),
         "Port Hallin town centre (amended value)"),
        ("PH-2", "fixed", 1.90, 180.0, box(-16.0, -0.5, -12.0, 2.0),
         "Hallin Heights; amended value valid up to 180 m"),
    ]  # fmt: skip


def _to_utm(geom):
    import shapely
    from pyproj import Transformer

    cx, cy = Transformer.from_crs(4326, UTM, always_xy=True).transform(CENTER_LON, CENTER_LAT)
    return shapely.set_precision(shapely.transform(geom, lambda xy: xy * KM + [cx, cy]), GRID_M)


def build(out: Path = DEFAULT_OUT) -> list[Path]:
    """Write the demo layers, sidecars and DEM into ``out``; return the paths."""
    import geopandas as gpd

    os.environ["OGR_CURRENT_DATE"] = "2026-01-01T00:00:00Z"  # fixed GeoPackage timestamp
    out.mkdir(parents=True, exist_ok=True)
    rows = base_zones()
    cols = ["zone_id", "rule", "pg", "elev_max", "table", "expr", "Z", "pg_min"]
    data = {c: [r[i] for r in rows] for i, c in enumerate(cols)}
    data["note"] = [r[9] for r in rows]
    data["source"] = ["Skerrow Island demo map (invented), sheet 1"] * len(rows)
    base = gpd.GeoDataFrame(data, geometry=[r[8] for r in rows], crs=UTM)
    for c in ("pg", "elev_max", "Z", "pg_min"):
        base[c] = base[c].astype(float)
    base_path = out / "skerrow_base.gpkg"
    base_path.unlink(missing_ok=True)
    base.to_file(base_path, layer="zones", driver="GPKG", engine="pyogrio")
    _sidecar(
        base_path,
        name="Skerrow Island ground snow load map (DEMO)",
        jurisdiction="Skerrow Island Building Office (fictional)",
        value_units="psf",
        elevation_units="ft",
        boundary_tolerance_m=250,
    )
    town = town_zones()
    tgdf = gpd.GeoDataFrame(
        {
            "zone_id": [r[0] for r in town],
            "rule": [r[1] for r in town],
            "pg": [r[2] for r in town],
            "elev_max": [float("nan") if r[3] is None else r[3] for r in town],
            "note": [r[5] for r in town],
            "source": ["Port Hallin amendment no. 1 (invented)"] * len(town),
        },
        geometry=[_to_utm(r[4]) for r in town],
        crs=UTM,
    ).to_crs(4326)
    town_path = out / "port_hallin_amendment.geojson"
    town_path.unlink(missing_ok=True)
    tgdf.to_file(town_path, driver="GeoJSON", engine="pyogrio", layer_options={
        "COORDINATE_PRECISION": 7, "WRITE_NAME": "NO"})  # fmt: skip
    _sidecar(
        town_path,
        name="Port Hallin local amendment (DEMO)",
        jurisdiction="Town of Port Hallin, Skerrow Island (fictional)",
        value_units="kPa",
        elevation_units="m",
        boundary_tolerance_m=100,
    )
    dem_path = out / "skerrow_dem.tif"
    build_dem(dem_path)
    (out / "README.md").write_text(_README, encoding="utf-8")
    return [base_path, town_path, dem_path, *build_722(out), *build_en(out)]


#: invented ASCE 7-22 values per zone of the base layer, by risk category I, II, III, IV.
#: fixed zones: pg [psf]; SK-N: the formula's coefficient on A; SK-H: table values at its points
PG_722 = {
    "SK-W": (24.0, 28.0, 32.0, 35.0),
    "SK-NE": (42.0, 50.0, 56.0, 61.0),
    "SK-E": (33.0, 39.0, 44.0, 48.0),
}
#: SK-N: pg = Zc + slope * max(A - 800, 0) with Zc and slope per category (invented)
FORMULA_722 = {"I": (27.0, 0.014), "II": (32.0, 0.017), "III": (36.0, 0.019), "IV": (39.0, 0.021)}
#: SK-H: table [[elevation ft, pg psf], ...] per category (invented)
TABLE_722 = {
    "I": [[0, 29], [1000, 39], [2500, 68], [4500, 115]],
    "II": [[0, 34], [1000, 46], [2500, 80], [4500, 136]],
    "III": [[0, 38], [1000, 52], [2500, 90], [4500, 152]],
    "IV": [[0, 42], [1000, 57], [2500, 98], [4500, 166]],
}
#: the pg_min floor of SK-N per category [psf] (invented)
FLOOR_722 = {"I": 29.0, "II": 34.0, "III": 38.0, "IV": 41.0}
CATEGORIES = ("I", "II", "III", "IV")


def build_722(out: Path = DEFAULT_OUT) -> list[Path]:
    """Write the invented ASCE 7-22 demo layers (pg per risk category; W2) into ``out``."""
    import json

    import geopandas as gpd
    from shapely.geometry import box

    os.environ["OGR_CURRENT_DATE"] = "2026-01-01T00:00:00Z"
    rows = base_zones()
    data: dict = {"zone_id": [r[0] for r in rows], "rule": [r[1] for r in rows]}
    data["elev_max"] = [float("nan") if r[3] is None else float(r[3]) for r in rows]
    for k, cat in enumerate(CATEGORIES):
        data[f"pg_{cat}"] = [PG_722[r[0]][k] if r[0] in PG_722 else float("nan") for r in rows]
        data[f"table_{cat}"] = [json.dumps(TABLE_722[cat]) if r[0] == "SK-H" else None
                                for r in rows]  # fmt: skip
        data[f"expr_{cat}"] = [
            f"Zc_{cat} + {FORMULA_722[cat][1]:g} * max(A - 800, 0)" if r[0] == "SK-N" else None
            for r in rows
        ]
        data[f"Zc_{cat}"] = [FORMULA_722[cat][0] if r[0] == "SK-N" else float("nan")
                             for r in rows]  # fmt: skip
        data[f"pg_min_{cat}"] = [FLOOR_722[cat] if r[0] == "SK-N" else float("nan")
                                 for r in rows]  # fmt: skip
    data["note"] = [r[9] for r in rows]
    data["source"] = ["Skerrow Island ASCE 7-22 demo map (invented), sheet 1"] * len(rows)
    gdf = gpd.GeoDataFrame(data, geometry=[r[8] for r in rows], crs=UTM)
    pg_path = out / "skerrow_722_pg.gpkg"
    pg_path.unlink(missing_ok=True)
    gdf.to_file(pg_path, layer="zones", driver="GPKG", engine="pyogrio")
    _sidecar(
        pg_path,
        name="Skerrow Island ASCE 7-22 ground snow loads by risk category (DEMO)",
        jurisdiction="Skerrow Island Building Office (fictional)",
        standard="ASCE 7-22",
        value_units="psf",
        elevation_units="ft",
        boundary_tolerance_m=250,
        notes="Invented strength-level values, one per risk category; never for design.",
    )
    big = 40.0
    w2 = [
        ("W2-W", "fixed", 0.55, box(-big, -big, -6.0, big), "Windward west (invented)"),
        ("W2-E", "fixed", 0.42, box(-6.0, -big, big, big), "Sheltered east (invented)"),
    ]
    cape = _to_utm(box(-22.5, -10.5, -15.5, -3.5))
    wgdf = gpd.GeoDataFrame(
        {
            "zone_id": [r[0] for r in w2] + ["W2-CAPE"],
            "rule": [r[1] for r in w2] + ["study"],
            "w2": [r[2] for r in w2] + [float("nan")],
            "note": [r[4] for r in w2] + ["Cape Gale: winter wind too variable to map (invented)"],
            "source": ["Skerrow Island W2 demo map (invented)"] * 3,
        },
        geometry=[_to_utm(r[3]).difference(cape) for r in w2] + [cape],
        crs=UTM,
    ).to_crs(4326)
    w2_path = out / "skerrow_722_w2.geojson"
    w2_path.unlink(missing_ok=True)
    wgdf.to_file(w2_path, driver="GeoJSON", engine="pyogrio", layer_options={
        "COORDINATE_PRECISION": 7, "WRITE_NAME": "NO"})  # fmt: skip
    _sidecar(
        w2_path,
        name="Skerrow Island winter wind parameter W2 (DEMO)",
        jurisdiction="Skerrow Island Building Office (fictional)",
        standard="ASCE 7-22",
        quantity="w2",
        elevation_units="ft",
        boundary_tolerance_m=250,
        notes="Invented W2 fractions; never for design.",
    )
    return [pg_path, w2_path]


#: the invented altitude formula of the metric district: sk [kPa] from the zone number Z and
#: the site altitude A [m] (its shape and coefficients are made up for the demo)
FORMULA_EN = "(0.4 + 0.3 * Z) * (1 + (A / 650) ** 2)"
#: the metric district's zones on the base layer's shapes (invented sk [kPa], altitudes [m]):
#: base zone -> (zone_id, rule, sk, elev_max, table, Z, sk_min, note)
ZONES_EN = {
    "SK-W": ("EN-W", "fixed", 0.85, 300.0, None, None, None,
             "West coast lowland; sk valid up to 300 m altitude (invented)"),
    "SK-N": ("EN-Z2", "formula", None, None, None, 2.0, 1.0,
             "North valley, snow load zone 2 of the district formula (invented)"),
    "SK-H": ("EN-H", "elevation_table", None, None,
             "[[0, 1.1], [500, 1.7], [1000, 2.9], [1400, 4.2]]", None, None,
             "Central highlands; sk by altitude, study above 1400 m (invented)"),
    "SK-NE": ("EN-Z3", "formula", None, 1200.0, None, 3.0, 1.4,
              "North-east slopes, snow load zone 3; valid up to 1200 m (invented)"),
    "SK-E": ("EN-E", "fixed", 1.25, None, None, None, None, "East coast plain (invented)"),
    "SK-S1": ("EN-S1", "study", None, None, None, None, None, "Summit massif; no mapped sk"),
    "SK-S2": ("EN-S2", "study", None, None, None, None, None,
              "Cape Gale; drifting too variable to map"),
}  # fmt: skip


def build_en(out: Path = DEFAULT_OUT) -> list[Path]:
    """Write the invented EN 1991-1-3 layer of the island's metric district into ``out``."""
    import geopandas as gpd

    os.environ["OGR_CURRENT_DATE"] = "2026-01-01T00:00:00Z"
    base = base_zones()
    rows = [ZONES_EN[r[0]] for r in base]
    nan = float("nan")
    gdf = gpd.GeoDataFrame(
        {
            "zone_id": [r[0] for r in rows],
            "rule": [r[1] for r in rows],
            "sk": [nan if r[2] is None else r[2] for r in rows],
            "elev_max": [nan if r[3] is None else r[3] for r in rows],
            "table": [r[4] for r in rows],
            "expr": [FORMULA_EN if r[1] == "formula" else None for r in rows],
            "Z": [nan if r[5] is None else r[5] for r in rows],
            "sk_min": [nan if r[6] is None else r[6] for r in rows],
            "note": [r[7] for r in rows],
            "source": ["Skerrow Island metric district snow map (invented), sheet E"] * len(rows),
        },
        geometry=[r[8] for r in base],
        crs=UTM,
    )
    path = out / "skerrow_en_sk.gpkg"
    path.unlink(missing_ok=True)
    gdf.to_file(path, layer="zones", driver="GPKG", engine="pyogrio")
    _sidecar(
        path,
        name="Skerrow Island metric district, EN 1991-1-3 ground snow loads (DEMO)",
        jurisdiction="Skerrow Island Building Office, metric district (fictional)",
        standard="EN 1991-1-3",
        quantity="sk",
        value_units="kPa",
        elevation_units="m",
        boundary_tolerance_m=250,
        notes="Invented characteristic ground snow loads sk and an invented altitude formula "
        f"sk = {FORMULA_EN} (Z: zone number, A: site altitude [m]); no country's national "
        "annex; never for design.",
    )
    return [path]


def _sidecar(path: Path, **keys) -> None:
    meta = {"name": keys.pop("name"), "jurisdiction": keys.pop("jurisdiction")}
    meta.update(COMMON)
    meta.update(keys)  # e.g. standard = "ASCE 7-22" for the 7-22 demo layers
    import tomli_w

    head = "# Sidecar of an invented demo layer: never for design.\n"
    Path(str(path) + ".toml").write_text(head + tomli_w.dumps(meta), encoding="utf-8")


def dem_heights(x_km: np.ndarray, y_km: np.ndarray) -> np.ndarray:
    """Synthetic terrain height [m] at local km coordinates (before the coast mask)."""
    z = np.full(np.shape(x_km), 15.0)
    for sx, sy, h, s in SUMMITS:
        z = z + h * np.exp(-((x_km - sx) ** 2 + (y_km - sy) ** 2) / (2.0 * s**2))
    return z


def build_dem(path: Path, cell_m: float = 200.0) -> None:
    """Write the synthetic DEM (float32 metres, nodata -9999 over the sea)."""
    import rasterio
    import shapely
    from pyproj import Transformer
    from rasterio.transform import from_origin

    cx, cy = Transformer.from_crs(4326, UTM, always_xy=True).transform(CENTER_LON, CENTER_LAT)
    x0, y0 = round(cx - 28_000.0, -2), round(cy + 19_000.0, -2)
    width, height = int(56_000 / cell_m), int(38_000 / cell_m)
    cols = (np.arange(width) + 0.5) * cell_m + x0
    rows = y0 - (np.arange(height) + 0.5) * cell_m
    xx, yy = np.meshgrid(cols, rows)
    xk, yk = (xx - cx) / KM, (yy - cy) / KM
    isl = island_outline()
    land = shapely.contains_xy(isl, xk, yk)
    dist_coast = shapely.distance(isl.exterior, shapely.points(xk, yk))
    z = dem_heights(xk, yk) * np.clip(dist_coast / 2.0, 0.0, 1.0) + 2.0
    z = np.where(land, z, -9999.0).astype("float32")
    profile = {
        "driver": "GTiff",
        "width": width,
        "height": height,
        "count": 1,
        "dtype": "float32",
        "crs": UTM,
        "transform": from_origin(x0, y0, cell_m, cell_m),
        "nodata": -9999.0,
        "compress": "deflate",
        "predictor": 3,
        "tiled": False,
    }
    path.unlink(missing_ok=True)
    with rasterio.open(path, "w", **profile) as ds:
        ds.write(z, 1)
        ds.set_band_unit(1, "metre")
        ds.set_band_description(1, "synthetic elevation of Skerrow Island (invented)")
        ds.update_tags(demo="true", note="Invented terrain for the neve demo; not a real place")


_README = """\
# neve demo data: Skerrow Island (invented)

Skerrow Island, the town of Port Hallin and every value in these files are
invented for demonstrating neve.  They are not a real jurisdiction's map and
must never be used for design.  Every sidecar says `demo = true`, and neve
flags every result from them with `demo_data`.

Built by `python data_recipes/build_demo.py` (deterministic).

- `skerrow_base.gpkg`: base layer (UTM 7N, psf, ft), zones of every rule kind
- `port_hallin_amendment.geojson`: local amendment (EPSG:4326, kPa, m)
- `skerrow_722_pg.gpkg`: ASCE 7-22 layer, one value per risk category (UTM 7N, psf, ft);
  used with `--standard asce7-22` when no `--layer` is given
- `skerrow_722_w2.geojson`: ASCE 7-22 winter wind parameter W2 (EPSG:4326, a fraction)
- `skerrow_en_sk.gpkg`: EN 1991-1-3 layer of the island's metric district: sk in kPa by
  altitude in m, an invented altitude formula (UTM 7N); used with `--standard en1991-1-3`
  when no `--layer` is given
- `skerrow_dem.tif`: synthetic DEM (UTM 7N, metres, nodata over the sea)
- `skerrow_basemap.mbtiles`: invented raster basemap (sea, coast, terrain tints, roads,
  towns; zooms 8-13), built by `python data_recipes/build_demo_basemap.py`
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=DEFAULT_OUT, help="output folder")
    args = ap.parse_args()
    for p in build(args.out):
        print(p)


if __name__ == "__main__":
    main()
