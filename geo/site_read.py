"""Site files on disk into tables, for ``neve screen``.

:func:`read_sites` reads a CSV, XLSX, GeoPackage or Parquet (GeoParquet too)
site file into a DataFrame of its columns as written, plus its point
geometry in WGS 84 when the file carries one (a GeoPackage or GeoParquet
geometry, or WKT text in a ``geometry`` column of a CSV or XLSX file).  The
column names neve looks for are defined here; turning the rows into arrays
is :mod:`geo.sitefile`'s job.  A file that cannot be read as a table is an
:class:`engine.errors.InputError`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from engine.errors import InputError

#: accepted site-file suffixes -> format name
SITE_FORMATS = {
    ".csv": "csv",
    ".txt": "csv",
    ".xlsx": "xlsx",
    ".xlsm": "xlsx",
    ".gpkg": "gpkg",
    ".parquet": "parquet",
    ".geoparquet": "parquet",
    ".pq": "parquet",
}
#: accepted latitude / longitude column names (matched case-blind)
LAT_NAMES = ("lat", "latitude", "site_lat")  # site_lat/site_lon: neve's own results
LON_NAMES = ("lon", "longitude", "lng", "long", "site_lon")
#: text columns of WKT points (EPSG:4326) accepted in CSV and XLSX files
WKT_NAMES = ("geometry", "wkt")
ADDRESS_NAMES = ("address",)
SITE_ID_NAMES = ("site_id",)
ROOF_NAMES = ("roof",)
ACCEPTED_COORDS = (
    "columns lat and lon (or latitude and longitude, lng), or an address column, "
    "or a point geometry (GeoPackage, GeoParquet, or WKT text in a geometry column)"
)


def site_format(path: str | Path, field_name: str = "sites") -> str:
    """The format name of a site or result file from its suffix."""
    suffix = Path(path).suffix.lower()
    if suffix not in SITE_FORMATS:
        raise InputError(
            field_name,
            f"cannot tell the format of {str(path)!r} from its suffix {suffix or '(none)'!r}",
            ", ".join(sorted(SITE_FORMATS)),
        )
    return SITE_FORMATS[suffix]


def find_column(columns, names) -> str | None:
    lower = {str(c).strip().lower(): c for c in columns}
    for name in names:
        if name in lower:
            return lower[name]
    return None


def read_sites(path: str | Path) -> tuple[pd.DataFrame, object]:
    """Read a site file into a DataFrame plus its point geometry (or None).

    Parameters
    ----------
    path : str or Path
        CSV, XLSX, GeoPackage or Parquet file.

    Returns
    -------
    frame : pandas.DataFrame
        Every input column; a geometry column is returned separately.
    geometry : geopandas.GeoSeries or None
        The rows' geometry in WGS 84 when the file carries one.
    """
    p = Path(path)
    if not p.is_file():
        raise InputError("sites", f"file {str(p)!r} not found", "a CSV, XLSX, GPKG or Parquet file")
    fmt = site_format(p)
    geometry = None
    try:
        if fmt == "csv":
            frame = _read_csv(p)
        elif fmt == "xlsx":
            frame = pd.read_excel(p, sheet_name=0, engine="openpyxl")
        elif fmt == "gpkg":
            import pyogrio

            gdf = pyogrio.read_dataframe(p)
            frame, geometry = split_geometry(gdf)
        else:
            frame, geometry = _read_parquet(p)
    except InputError:
        raise
    except Exception as exc:  # a corrupt file, or not a table at all
        raise InputError(
            "sites",
            f"{str(p)!r} is not a readable {fmt} table ({type(exc).__name__}: {str(exc).strip()})",
            "a CSV, XLSX, GPKG or Parquet table with one row per site",
        ) from None
    frame.columns = [str(c) for c in frame.columns]
    if geometry is None and fmt in ("csv", "xlsx"):
        geometry = _wkt_geometry(frame)
    if len(frame.columns) == 0:
        raise InputError("sites", f"{str(p)!r} has no columns", ACCEPTED_COORDS)
    if len(frame) == 0:
        raise InputError("sites", f"{str(p)!r} has no rows", "a table with at least one site")
    return frame.reset_index(drop=True), geometry


def _wkt_geometry(frame: pd.DataFrame):
    """Points from a WKT text column (WGS 84) when the table has no lat/lon columns."""
    if find_column(frame.columns, LAT_NAMES) is not None:
        return None
    col = find_column(frame.columns, WKT_NAMES)
    if col is None or len(frame) == 0:
        return None
    import geopandas as gpd
    import shapely

    text = frame[col].astype(object).where(frame[col].notna(), None).to_numpy()
    text = np.array([t if isinstance(t, str) and t.strip() else None for t in text], dtype=object)
    geoms = shapely.from_wkt(text, on_invalid="ignore")
    return gpd.GeoSeries(geoms, crs="EPSG:4326")


def _read_csv(p: Path) -> pd.DataFrame:
    head = pd.read_csv(p, nrows=0, encoding="utf-8-sig")
    text_cols = {
        c: str
        for c in head.columns
        if str(c).strip().lower() in SITE_ID_NAMES + ADDRESS_NAMES + ROOF_NAMES + ("elevation",)
    }
    try:  # the multi-threaded Arrow reader first; the C reader for what it refuses
        return pd.read_csv(p, dtype=text_cols, encoding="utf-8-sig", engine="pyarrow")
    except Exception:
        return pd.read_csv(p, dtype=text_cols, encoding="utf-8-sig", skipinitialspace=True)


def split_geometry(gdf) -> tuple[pd.DataFrame, object]:
    import geopandas as gpd

    if not isinstance(gdf, gpd.GeoDataFrame) or gdf.geometry.name not in gdf.columns:
        return pd.DataFrame(gdf), None
    geom = gdf.geometry
    if geom.crs is not None and not geom.crs.equals("EPSG:4326"):
        geom = geom.to_crs("EPSG:4326")
    frame = pd.DataFrame(gdf.drop(columns=[gdf.geometry.name]))
    return frame, geom.reset_index(drop=True)


def _read_parquet(p: Path) -> tuple[pd.DataFrame, object]:
    import pyarrow.parquet as pq

    meta = pq.read_schema(p).metadata or {}
    if b"geo" in meta:
        import geopandas as gpd

        return split_geometry(gpd.read_parquet(p))
    return pd.read_parquet(p), None
