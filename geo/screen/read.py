"""Site files on disk into tables, for ``neve screen``.

:func:`read_sites` reads a CSV, XLSX, GeoPackage or Parquet (GeoParquet too)
site file into a DataFrame of its columns as written, plus its point
geometry in WGS 84 when the file carries one (a GeoPackage or GeoParquet
geometry, or WKT text in a ``geometry`` column of a CSV or XLSX file).  The
column names neve looks for are defined here; turning the rows into arrays
is :mod:`neve.geo.screen.sitefile`'s job.  A file that cannot be read as a table is an
:class:`neve.engine.errors.InputError`.

Cells come back as they are stored: every CSV cell is text, exactly as
written (:mod:`neve.geo.screen.csv_records`; ``NA``, ``null``, ``02134`` and empty cells stay
text); XLSX cells keep the value type of the sheet (text, number, date,
boolean; empty cells are missing); Parquet and GeoPackage columns keep their
own types (integer columns with missing values stay integers).  Problems of
single records (a CSV row with a stray quote, an extra comma or a byte that is
not UTF-8; an XLSX value outside the named columns) make those rows errors;
they travel with the table as :class:`ReadNotes` in ``frame.attrs``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError

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
#: (site_lat/site_lon: the coordinates in neve's own results, used when no other is given)
GIVEN_LAT_NAMES = ("lat", "latitude")
GIVEN_LON_NAMES = ("lon", "longitude", "lng", "long")
LAT_NAMES = (*GIVEN_LAT_NAMES, "site_lat")
LON_NAMES = (*GIVEN_LON_NAMES, "site_lon")
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


#: key of :class:`ReadNotes` in a site table's ``attrs``
READ_NOTES = "neve_read_notes"


@dataclass
class ReadNotes:
    """What reading a site file found about single rows, and how the file was laid out.

    Attributes
    ----------
    errors : dict
        Row index -> why the row could not be read as written (an error row).
    multiline : dict
        Row index -> (first, last) physical line of a CSV record whose quoted
        cells hold line breaks (flagged ``multiline_field``).
    info : dict
        How the file was laid out: ``format``, ``records`` and, for CSV,
        ``lines``, ``header_line``, ``blank_lines``, ``multiline_records``,
        ``records_with_read_errors`` (XLSX: ``sheet``, ``sheet_rows``,
        ``header_row``, ``blank_rows``, ``records_with_read_errors``).
    """

    errors: dict = field(default_factory=dict)
    multiline: dict = field(default_factory=dict)
    info: dict = field(default_factory=dict)

    def __deepcopy__(self, memo):  # pandas copies attrs on every operation: share instead
        return self


def read_notes(frame: pd.DataFrame) -> ReadNotes | None:
    """The :class:`ReadNotes` a site table was read with, if any."""
    notes = frame.attrs.get(READ_NOTES) if hasattr(frame, "attrs") else None
    return notes if isinstance(notes, ReadNotes) else None


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
    from neve.geo.postgis import is_db_url

    geometry = None
    notes = ReadNotes()
    if is_db_url(path):  # a PostGIS table or query (neve.geo.postgis)
        from neve.geo.postgis import parse_db_url, read_db_sites

        shown = parse_db_url(str(path), "sites").shown  # the URL as messages show it
        frame, geometry = read_db_sites(str(path))
        return _finish(frame, geometry, notes, "postgis", shown)
    p = Path(path)
    if not p.is_file():
        raise InputError("sites", f"file {str(p)!r} not found", "a CSV, XLSX, GPKG or Parquet file")
    fmt = site_format(p)
    try:
        if fmt == "csv":
            from neve.geo.screen.csv_records import read_csv_records

            rec = read_csv_records(p)
            frame = rec.frame
            notes = ReadNotes(rec.errors, rec.multiline, rec.info)
        elif fmt == "xlsx":
            frame, notes = _read_xlsx(p)
        elif fmt == "gpkg":
            frame, geometry = split_geometry(_read_gpkg(p))
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
    return _finish(frame, geometry, notes, fmt, str(p))


def _finish(frame, geometry, notes, fmt: str, label: str):
    """The checks and notes every site reader ends with."""
    frame.columns = [str(c) for c in frame.columns]
    if geometry is None and fmt in ("csv", "xlsx"):
        geometry = _wkt_geometry(frame)
    if len(frame.columns) == 0:
        raise InputError("sites", f"{label!r} has no columns", ACCEPTED_COORDS)
    if len(frame) == 0:
        raise InputError("sites", f"{label!r} has no rows", "a table with at least one site")
    frame = frame.reset_index(drop=True)
    notes.info.setdefault("format", fmt)
    notes.info.setdefault("records", int(len(frame)))
    frame.attrs[READ_NOTES] = notes
    return frame, geometry


def iter_site_chunks(path: str | Path, chunk_rows: int):
    """Read a site file in chunks of about ``chunk_rows`` rows, in order.

    Yields ``(frame, geometry)`` pairs as :func:`read_sites` returns them for the
    whole file, with :class:`ReadNotes` in each frame's ``attrs`` (row indices
    within the chunk, the chunk's part of the layout ``info``).  CSV files are
    read by :func:`neve.geo.screen.csv_records.iter_csv_records`, Parquet files by
    row batches (a GeoParquet file's WKB geometry decoded per batch) and
    GeoPackages by feature ranges; XLSX files, and GeoParquet files with another
    geometry encoding or more than one geometry column, are read whole, as one chunk.
    """
    p = Path(path)
    if not p.is_file():
        raise InputError("sites", f"file {str(p)!r} not found", "a CSV, XLSX, GPKG or Parquet file")
    fmt = site_format(p)
    chunk_rows = max(1, int(chunk_rows))
    if fmt == "xlsx" or (fmt == "parquet" and _is_geoparquet(p) and _wkb_column(p) is None):
        yield read_sites(p)
        return
    if fmt == "csv":
        parts = _csv_parts(p, chunk_rows)
    elif fmt == "parquet" and _is_geoparquet(p):
        parts = _geoparquet_parts(p, chunk_rows)
    else:
        parts = _table_parts(p, fmt, chunk_rows)
    first = True
    for frame, geometry, notes in _readable(p, fmt, parts):
        frame.columns = [str(c) for c in frame.columns]
        if first and len(frame.columns) == 0:
            raise InputError("sites", f"{str(p)!r} has no columns", ACCEPTED_COORDS)
        if geometry is None and fmt == "csv":
            geometry = _wkt_geometry(frame)
        frame = frame.reset_index(drop=True)
        notes.info.setdefault("format", fmt)
        notes.info.setdefault("records", int(len(frame)))
        frame.attrs[READ_NOTES] = notes
        yield frame, geometry  # an empty chunk too: its lines count in the layout
        first = False


def iter_site_column(path: str | Path, column: str, chunk_rows: int):
    """One column of a site file, chunk by chunk (pandas Series), every record in order.

    The records are those of :func:`iter_site_chunks` (only the one column is
    converted: a first pass, e.g. for the site ids of the whole file).
    """
    p = Path(path)
    fmt = site_format(p)
    if fmt == "csv":
        from neve.geo.screen.csv_records import iter_csv_records

        for rec in iter_csv_records(p, chunk_rows, columns=[column]):
            yield rec.frame[column]
        return
    if fmt == "parquet" and not _is_geoparquet(p):
        import pyarrow.parquet as pq

        keep = {"types_mapper": _integers_stay_integers}
        for batch in pq.ParquetFile(p).iter_batches(batch_size=chunk_rows, columns=[column]):
            yield batch.to_pandas(**keep)[column]
        return
    for frame, _ in iter_site_chunks(p, chunk_rows):
        yield frame[column]


def _readable(p: Path, fmt: str, parts):
    """The parts of a reader, a failure of the file turned into an InputError."""
    try:
        yield from parts
    except InputError:
        raise
    except Exception as exc:  # a corrupt file, or not a table at all
        raise InputError(
            "sites",
            f"{str(p)!r} is not a readable {fmt} table ({type(exc).__name__}: {str(exc).strip()})",
            "a CSV, XLSX, GPKG or Parquet table with one row per site",
        ) from None


def _is_geoparquet(p: Path) -> bool:
    import pyarrow.parquet as pq

    try:
        return b"geo" in (pq.read_schema(p).metadata or {})
    except Exception:  # not a Parquet file: read_sites says so
        return True


def _wkb_column(p: Path) -> tuple[str, object] | None:
    """(name, CRS) of a GeoParquet file's one geometry column when it is WKB, else None."""
    import json

    import pyarrow.parquet as pq

    try:
        meta = json.loads(pq.read_schema(p).metadata[b"geo"])
        (name, col), *others = meta["columns"].items()
    except Exception:  # read whole: read_sites says what is wrong
        return None
    if others or name != meta.get("primary_column") or col.get("encoding", "WKB") != "WKB":
        return None
    return name, col.get("crs", "OGC:CRS84")  # the specification's default CRS


def _geoparquet_parts(p: Path, chunk_rows: int):
    """A GeoParquet file by row batches, its WKB geometry decoded per batch (as geopandas)."""
    import geopandas as gpd
    import pyarrow as pa
    import pyarrow.parquet as pq
    import shapely

    name, crs = _wkb_column(p)
    keep = {"types_mapper": _integers_stay_integers}
    pf = pq.ParquetFile(p)
    meta = pf.schema_arrow.metadata
    for batch in pf.iter_batches(batch_size=chunk_rows):
        table = pa.Table.from_batches([batch])
        wkb = table.column(name).to_numpy(zero_copy_only=False)
        frame = table.drop_columns([name]).replace_schema_metadata(meta).to_pandas(**keep)
        geometry = gpd.GeoSeries(shapely.from_wkb(wkb), crs=crs)
        yield (*split_geometry(gpd.GeoDataFrame(frame, geometry=geometry)), ReadNotes())


def _csv_parts(p: Path, chunk_rows: int):
    from neve.geo.screen.csv_records import iter_csv_records

    for rec in iter_csv_records(p, chunk_rows):
        yield rec.frame, None, ReadNotes(rec.errors, rec.multiline, rec.info)


def _table_parts(p: Path, fmt: str, chunk_rows: int):
    keep = {"types_mapper": _integers_stay_integers}
    if fmt == "parquet":
        import pyarrow as pa
        import pyarrow.parquet as pq

        pf = pq.ParquetFile(p)
        batches = pf.iter_batches(batch_size=chunk_rows)
        empty = True
        for batch in batches:
            empty = False
            table = pa.Table.from_batches([batch]).replace_schema_metadata(pf.schema_arrow.metadata)
            yield table.to_pandas(**keep), None, ReadNotes()
        if empty:
            yield pf.schema_arrow.empty_table().to_pandas(**keep), None, ReadNotes()
        return
    import pyogrio

    total = int(pyogrio.read_info(p)["features"])
    for start in range(0, max(total, 1), chunk_rows):
        try:
            gdf = pyogrio.read_dataframe(p, skip_features=start, max_features=chunk_rows,
                                         use_arrow=True, arrow_to_pandas_kwargs=keep)  # fmt: skip
        except (ImportError, NotImplementedError, TypeError):  # a GDAL without Arrow support
            gdf = pyogrio.read_dataframe(p, skip_features=start, max_features=chunk_rows)
        frame, geometry = split_geometry(gdf)
        yield frame, geometry, ReadNotes()


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


def _read_xlsx(p: Path) -> tuple[pd.DataFrame, ReadNotes]:
    """The first sheet, each cell the value stored in it (openpyxl, values not formulas).

    The first row that is not empty names the columns; empty rows are skipped
    and counted.  A value in a column the header does not name makes its row an
    error row (the value is quoted in the message).
    """
    import openpyxl

    wb = openpyxl.load_workbook(p, read_only=True, data_only=True)
    try:
        ws = wb.worksheets[0]
        ws.reset_dimensions()  # read every stored row, whatever the sheet claims its size is
        header: list[str] | None = None
        header_row = 0
        blank = 0
        last = 0
        rows: list[tuple] = []
        errors: dict[int, str] = {}
        for number, values in enumerate(ws.iter_rows(values_only=True), start=1):
            last = number
            if all(v is None or (isinstance(v, str) and v == "") for v in values):
                blank += 1
                continue
            if header is None:
                cells = list(values)
                while cells and cells[-1] is None:
                    cells.pop()
                header = ["" if v is None else str(v) for v in cells]
                header_row = number
                continue
            width = len(header)
            extra = [(k, v) for k, v in enumerate(values[width:], start=width) if v is not None]
            if extra:
                from openpyxl.utils import get_column_letter

                k, v = extra[0]
                errors[len(rows)] = (
                    f"row {number}: a value in column {get_column_letter(k + 1)}, which the "
                    f"header (row {header_row}) does not name: {v!r}"
                )
            cells = tuple(values[:width])
            rows.append(cells + (None,) * (width - len(cells)))
    finally:
        wb.close()
    if header is None:
        return pd.DataFrame(), ReadNotes()
    _refuse_repeated(p, header)
    frame = pd.DataFrame(
        {k: pd.Series([r[k] for r in rows], dtype=object) for k in range(len(header))}
    )
    frame.columns = header
    info = {
        "format": "xlsx",
        "sheet": ws.title,
        "sheet_rows": last,
        "header_row": header_row,
        "records": len(rows),
        "blank_rows": blank - (header_row - 1 if header_row else 0),
        "records_with_read_errors": len(errors),
    }
    return frame, ReadNotes(errors=errors, info=info)


def _refuse_repeated(p: Path, names) -> None:
    seen: dict[str, int] = {}
    for name in names:
        seen[str(name)] = seen.get(str(name), 0) + 1
    twice = [n for n, c in seen.items() if c > 1]
    if twice:
        raise InputError(
            "sites",
            f"{str(p)!r}: the header names column(s) {', '.join(map(repr, twice))} more than once",
            "a header row whose column names are all different",
        )


def _integers_stay_integers(pa_type):
    """Arrow -> pandas: integer columns become nullable integers (a missing value keeps 7 as 7)."""
    import pyarrow as pa

    if pa.types.is_integer(pa_type):
        return pd.api.types.pandas_dtype(str(pa_type).replace("uint", "UInt").replace("int", "Int"))
    return None


def _read_gpkg(p: Path):
    import pyogrio

    try:
        return pyogrio.read_dataframe(
            p, use_arrow=True, arrow_to_pandas_kwargs={"types_mapper": _integers_stay_integers}
        )
    except (ImportError, NotImplementedError, TypeError):  # a GDAL without Arrow support
        return pyogrio.read_dataframe(p)


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
    keep = {"types_mapper": _integers_stay_integers}
    if b"geo" in meta:
        import geopandas as gpd

        return split_geometry(gpd.read_parquet(p, to_pandas_kwargs=keep))
    return pq.read_table(p).to_pandas(**keep), None
