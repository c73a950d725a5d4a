"""Writing screening results (CSV, XLSX with a summary sheet, GeoPackage, Parquet) and the summary.

Every writer goes through :mod:`neve.safe_write`: the table goes to a
temporary file beside the target, which is renamed into place only once it is
complete, so an interrupted or failed run never leaves a partial output
behind.  An existing output is replaced only when ``overwrite=True``.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError
from neve.engine.printable import printable
from neve.engine.roof import CAUTIONS
from neve.engine.units import KPA_PER_PSF

#: accepted result suffixes -> format name
RESULT_FORMATS = {
    ".csv": "csv",
    ".xlsx": "xlsx",
    ".gpkg": "gpkg",
    ".parquet": "parquet",
}
#: the most data rows an XLSX sheet holds (one row is the header)
XLSX_MAX_ROWS = 1_048_575
#: every status a screened row can have
STATUSES = ("ok", "provisional", "study_required", "no_data", "error")
#: statuses whose ground value feeds the roof engine
ROOF_STATUSES = ("ok", "provisional")
#: columns that hold the coordinates used for each site [deg, WGS 84]
LAT_COLUMN, LON_COLUMN = "site_lat", "site_lon"


def result_format(path: str | Path, field: str = "output") -> str:
    """The format name of a result file from its suffix (an InputError lists the accepted ones)."""
    suffix = Path(path).suffix.lower()
    if suffix not in RESULT_FORMATS:
        raise InputError(
            field,
            f"cannot write {str(path)!r}: unknown suffix {suffix or '(none)'!r}",
            ", ".join(RESULT_FORMATS),
        )
    return RESULT_FORMATS[suffix]


def check_target(path: str | Path, overwrite: bool, field: str = "output") -> Path:
    """Refuse an existing target unless ``overwrite``; check its folder exists.

    :func:`neve.safe_write.check_target` for a file (stale temporary names of
    killed runs are removed on the way).
    """
    from neve.safe_write import check_target as check

    return check(path, overwrite=overwrite, field=field)


def _same_file(a: Path, b: Path) -> bool:
    import os

    if os.path.normcase(os.path.realpath(a)) == os.path.normcase(os.path.realpath(b)):
        return True
    try:
        return a.exists() and b.exists() and os.path.samefile(a, b)  # hard links
    except OSError:
        return False


def check_distinct(outputs: dict, inputs: dict | None = None) -> None:
    """Refuse two outputs of one run on the same file, or an output on an input file.

    Paths are compared after resolving ``..``, relative paths and symbolic links
    (and hard links, for files that exist), before any work is done.

    Parameters
    ----------
    outputs : dict
        Option name (``output``, ``summary-json``, ``map``, ``geocode-cache``) -> path or None.
    inputs : dict, optional
        Option name (``sites``, ``gazetteer``, ``layer``, ``dem``, ``roof``) -> path,
        list of paths, or None.
    """
    outs = [(name, Path(p)) for name, p in outputs.items() if p]
    for k, (name, path) in enumerate(outs):
        for other, other_path in outs[:k]:
            if _same_file(path, other_path):
                raise InputError(
                    name,
                    f"{str(path)!r} is also the --{other} file of this run",
                    "a different file for each output",
                )
    ins = []
    for name, value in (inputs or {}).items():
        for p in value if isinstance(value, (list, tuple)) else [value]:
            if p and str(p) != "demo":
                ins.append((name, Path(p)))
    for name, path in outs:
        for other, in_path in ins:
            if _same_file(path, in_path):
                raise InputError(
                    name,
                    f"{str(path)!r} is the {other} input of this run; it would be replaced",
                    "an output path that is not one of the input files",
                )


def atomic_path(path: str | Path, *, overwrite: bool = False, field: str = "output"):
    """Yield a temporary path for ``path``; move it into place on success.

    :func:`neve.safe_write.atomic_file`: the temporary path is ``path``'s own name
    inside a hidden folder beside it (``.NAME.neve-HOST-PID-RANDOM.part/NAME``);
    on success the file is moved into place without replacing anything unless
    ``overwrite``; on any exception everything is removed.
    """
    from neve.safe_write import atomic_file

    return atomic_file(path, overwrite=overwrite, field=field)


def _points(df: pd.DataFrame, geometry=None):
    import geopandas as gpd

    if geometry is not None:
        geom = gpd.GeoSeries(geometry, crs="EPSG:4326").reset_index(drop=True)
    else:
        lon = df[LON_COLUMN].to_numpy(dtype=float, na_value=np.nan)
        lat = df[LAT_COLUMN].to_numpy(dtype=float, na_value=np.nan)
        geom = gpd.GeoSeries(gpd.points_from_xy(lon, lat), crs="EPSG:4326")
        geom[np.isnan(lon) | np.isnan(lat)] = None
    return gpd.GeoDataFrame(df.reset_index(drop=True), geometry=geom, crs="EPSG:4326")


def _remove(path: Path) -> None:
    for leftover in (path, *(Path(f"{path}{s}") for s in ("-wal", "-shm", "-journal"))):
        try:
            leftover.unlink()
        except FileNotFoundError:
            pass


#: first characters that make a spreadsheet read a text cell as a formula
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
_FORMULA_START = r"^[=+\-@\t\r]"
#: a text cell that is a plain decimal number (``-140.05``, ``+3``, ``-1e5``) is no formula
_PLAIN_NUMBER = r"^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$"


def _write_csv(df: pd.DataFrame, tmp: Path, *, raw: bool = False) -> int:
    """CSV through Arrow's writer (several times faster than pandas); pandas as fallback.

    Unless ``raw``, every text cell that a spreadsheet would read as a formula
    (it starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return and is
    not a plain number) is written with a leading ``'``.  Numbers (neve's numeric
    columns, and text cells such as ``-140.05``) are written as they are.

    Returns
    -------
    int
        The number of cells given a leading ``'``.
    """
    with open(tmp, "wb") as fh:
        return write_csv_part(df, fh, raw=raw, header=True)


def write_csv_part(df: pd.DataFrame, fh, *, raw: bool = False, header: bool = True) -> int:
    """Rows of results appended to an open binary file as CSV (see :func:`_write_csv`).

    ``header``: write the column names first (the first part of a file).  Returns
    the number of cells given a leading ``'``.
    """
    import pyarrow as pa
    import pyarrow.csv as pcsv

    start = fh.tell()
    try:
        table = _csv_table(df)
        changed = 0
        if not raw:
            table, changed = _neutralise_table(table)
        options = pcsv.WriteOptions(quoting_style="needed", include_header=header)
        pcsv.write_csv(table, fh, write_options=options)
        return changed
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError):
        fh.seek(start)
        fh.truncate()
    out, changed = (df, 0) if raw else _neutralise_frame(df)
    out.to_csv(fh, index=False, header=header, encoding="utf-8")
    return changed


def _csv_table(df: pd.DataFrame):
    """The results as an Arrow table; cells Arrow cannot hold or write as CSV become text."""
    import pyarrow as pa

    df = _dictionary_encoded(df)
    try:
        table = pa.Table.from_pandas(df, preserve_index=False)
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        table = pa.Table.from_pandas(_arrow_safe(df), preserve_index=False)
    for i, f in enumerate(table.schema):
        t = f.type
        if pa.types.is_nested(t) or pa.types.is_binary(t) or pa.types.is_large_binary(t):
            text = pa.array([None if v is None else str(v) for v in table.column(i).to_pylist()],
                            type=pa.string())  # fmt: skip
            table = table.set_column(i, f.name, text)
    return table


def _formula_mask(arr):
    """True where a text cell starts like a formula and is not a plain number."""
    import pyarrow.compute as pc

    mask = pc.and_(
        pc.match_substring_regex(arr, _FORMULA_START),
        pc.invert(pc.match_substring_regex(arr, _PLAIN_NUMBER)),
    )
    return pc.fill_null(mask, False)


def _neutralise_array(arr):
    """One Arrow text array with formula-like cells given a leading ``'`` (and how many)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    if pa.types.is_dictionary(arr.type):
        words = arr.dictionary
        if not (pa.types.is_string(words.type) or pa.types.is_large_string(words.type)):
            return arr, 0
        mask = _formula_mask(words)
        if not pc.any(mask).as_py():
            return arr, 0
        n = int(pc.sum(pc.fill_null(pc.take(mask, arr.indices), False)).as_py() or 0)
        quoted = pc.binary_join_element_wise(
            pa.scalar("'", words.type), words, pa.scalar("", words.type)
        )
        return pa.DictionaryArray.from_arrays(arr.indices, pc.if_else(mask, quoted, words)), n
    if not (pa.types.is_string(arr.type) or pa.types.is_large_string(arr.type)):
        return arr, 0
    mask = _formula_mask(arr)
    n = int(pc.sum(mask).as_py() or 0)
    if not n:
        return arr, 0
    quoted = pc.binary_join_element_wise(pa.scalar("'", arr.type), arr, pa.scalar("", arr.type))
    return pc.if_else(mask, quoted, arr), n


def _neutralise_table(table):
    """Every text column of an Arrow table through :func:`_neutralise_array`."""
    import pyarrow as pa

    total = 0
    for i, f in enumerate(table.schema):
        col = table.column(i)
        chunks, changed = [], 0
        for chunk in col.chunks:
            new, n = _neutralise_array(chunk)
            chunks.append(new)
            changed += n
        if changed:
            table = table.set_column(i, f.name, pa.chunked_array(chunks, type=chunks[0].type))
            total += changed
    return table, total


def _neutralise_frame(df: pd.DataFrame) -> tuple[pd.DataFrame, int]:
    """The pandas twin of :func:`_neutralise_table` (used when Arrow cannot write the table)."""
    import re

    start, number = re.compile(_FORMULA_START), re.compile(_PLAIN_NUMBER)

    def risky(v) -> bool:
        return isinstance(v, str) and bool(start.match(v)) and not number.match(v)

    out, total = None, 0
    for col in df.columns:
        if df[col].dtype.kind in "biufcmM":
            continue
        mask = df[col].map(risky).to_numpy(dtype=bool)
        if mask.any():
            out = df.copy() if out is None else out
            values = out[col].astype(object).to_numpy(copy=True)
            values[mask] = ["'" + v for v in values[mask]]
            out[col] = values
            total += int(mask.sum())
    return (df if out is None else out), total


def _dictionary_encoded(df: pd.DataFrame) -> pd.DataFrame:
    """Text columns with few distinct values as categoricals (Parquet dictionary columns).

    Status, flags, messages, zone ids and layer names repeat across a
    portfolio; encoding each distinct text once makes the file smaller and
    the write several times faster.  Readers get the same text back.
    """
    out = None
    for col in df.columns:
        if df[col].dtype != object or len(df) < 1000:
            continue
        try:
            codes, uniques = pd.factorize(df[col])
        except TypeError:  # unhashable cells: leave the column as it is
            continue
        if len(uniques) > len(df) // 4 or not all(isinstance(u, str) for u in uniques[:1000]):
            continue
        out = df.copy(deep=False) if out is None else out
        out[col] = pd.Categorical.from_codes(codes, categories=pd.Index(uniques, dtype=object))
    return df if out is None else out


def _write_parquet(df: pd.DataFrame, tmp: Path) -> None:
    """The results as GeoParquet: one conversion to Arrow, then the site points added."""
    import pyarrow.parquet as pq

    pq.write_table(geoparquet_table(df), tmp)


def arrow_table(df: pd.DataFrame):
    """The results as an Arrow table (columns of mixed types made text only if needed)."""
    import pyarrow as pa

    df = _dictionary_encoded(df)
    try:
        return pa.Table.from_pandas(df, preserve_index=False)
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return pa.Table.from_pandas(_arrow_safe(df), preserve_index=False)


#: the point geometry column of Parquet results (a taken name moves to the next one)
GEOMETRY_COLUMNS = ("geometry", "site_geometry")
#: the GeoParquet specification version the ``geo`` metadata follows
GEOPARQUET_VERSION = "1.0.0"


def geometry_column(columns) -> str:
    """The name of the results' geometry column: the first of :data:`GEOMETRY_COLUMNS`
    no input column holds (``site_geometry_2`` ... after them)."""
    taken = {str(c) for c in columns}
    for name in GEOMETRY_COLUMNS:
        if name not in taken:
            return name
    k = 2
    while f"site_geometry_{k}" in taken:
        k += 1
    return f"site_geometry_{k}"


def point_wkb(lon: np.ndarray, lat: np.ndarray):
    """Points as an Arrow binary array of ISO WKB (null where a coordinate is NaN).

    A WKB point is 21 bytes: byte order (1, little-endian), the geometry type as
    a uint32 (1, Point), then x and y as float64 (OGC Simple Features, Part 1,
    well-known binary; the encoding the GeoParquet specification names ``WKB``).  Built in
    one numpy pass: shapely's ``to_wkb`` gives the same bytes (the tests compare
    them) about 50 times slower.

    Parameters
    ----------
    lon, lat : numpy.ndarray
        Coordinates [deg, WGS 84]; NaN where the row has no point.
    """
    import pyarrow as pa

    lon = np.asarray(lon, dtype=float)
    lat = np.asarray(lat, dtype=float)
    ok = np.isfinite(lon) & np.isfinite(lat)
    rec = np.empty(
        int(ok.sum()), dtype=np.dtype([("o", "u1"), ("t", "<u4"), ("x", "<f8"), ("y", "<f8")])
    )
    rec["o"], rec["t"], rec["x"], rec["y"] = 1, 1, lon[ok], lat[ok]
    offsets = np.zeros(len(ok) + 1, dtype=np.int32)
    np.cumsum(np.where(ok, rec.itemsize, 0), out=offsets[1:])
    valid = None if ok.all() else pa.py_buffer(np.packbits(ok, bitorder="little"))
    return pa.Array.from_buffers(
        pa.binary(), len(ok), [valid, pa.py_buffer(offsets), pa.py_buffer(rec)],
        null_count=int(len(ok) - len(rec)),
    )  # fmt: skip


_CRS_JSON: dict = {}


def _crs_4326() -> dict:
    """EPSG:4326 as PROJJSON (pyproj), as GeoParquet's ``crs`` takes it."""
    if not _CRS_JSON:
        import pyproj

        _CRS_JSON.update(pyproj.CRS.from_epsg(4326).to_json_dict())
    return dict(_CRS_JSON)


def geo_metadata(column: str, types=("Point",)) -> bytes:
    """The GeoParquet ``geo`` file metadata of a WKB column in EPSG:4326 (JSON bytes)."""
    import json

    meta = {
        "version": GEOPARQUET_VERSION,
        "primary_column": column,
        "columns": {column: {"encoding": "WKB", "geometry_types": list(types), "crs": _crs_4326()}},
    }
    return json.dumps(meta).encode()


def geoparquet_table(df: pd.DataFrame, column: str | None = None):
    """The results as an Arrow table with the site points and the GeoParquet ``geo`` metadata.

    The point of each row is (``site_lon``, ``site_lat``), the coordinates used;
    rows without them (``error`` rows) have a null geometry.  Every other column
    is as :func:`arrow_table` gives it.  ``column``: the geometry column's name
    (:func:`geometry_column` of the table's columns when omitted).
    """
    table = arrow_table(df)
    column = column or geometry_column(df.columns)
    lon = df[LON_COLUMN].to_numpy(dtype=float, na_value=np.nan)
    lat = df[LAT_COLUMN].to_numpy(dtype=float, na_value=np.nan)
    table = table.append_column(column, point_wkb(lon, lat))
    meta = dict(table.schema.metadata or {})
    meta[b"geo"] = geo_metadata(column)
    return table.replace_schema_metadata(meta)


def _arrow_safe(df: pd.DataFrame) -> pd.DataFrame:
    """Input columns of mixed types (text and numbers in one column) become text."""
    import pyarrow as pa

    mixed = []
    for col in df.columns:
        if df[col].dtype == object:
            try:
                pa.array(df[col], from_pandas=True)
            except (pa.ArrowInvalid, pa.ArrowTypeError):
                mixed.append(col)
    if not mixed:
        return df
    out = df.copy()
    for col in mixed:
        out[col] = out[col].map(lambda v: None if pd.isna(v) else str(v)).astype("string")
    return out


def summary_rows(summary: dict) -> pd.DataFrame:
    """A two-column table (item, value) of a screening summary for the XLSX sheet."""
    rows: list[tuple[str, object]] = [("sites", summary.get("rows"))]
    rows.extend(("input", line.strip()) for line in input_lines(summary.get("input")))
    for status, count in summary.get("status", {}).items():
        rows.append((f"status: {status}", count))
    for flag, count in summary.get("flags", {}).items():
        rows.append((f"flag: {flag}", count))
    if "sk_kpa" in summary:  # a run on sk layers (EN 1991-1-3)
        sk = summary.get("sk_kpa") or {}
        rows.append(("sk min [kPa]", sk.get("min")))
        rows.append(("sk max [kPa]", sk.get("max")))
    else:
        pg = summary.get("pg_psf") or {}
        rows.append(("pg min [psf]", pg.get("min")))
        rows.append(("pg max [psf]", pg.get("max")))
    rec = summary.get("on_record")
    if rec:  # the existing-roof check
        rows.append(("loads on record given", rec["given"]))
        rows.append((f"loads on record compared with {rec['compared_with']}", rec["compared"]))
        rows.append(("exceeds_record (load_ratio above 1.0)", rec["exceeds_record"]))
        ratio = rec.get("load_ratio") or {}
        rows.append(("load_ratio min", ratio.get("min")))
        rows.append(("load_ratio max", ratio.get("max")))
    for i, layer in enumerate(summary.get("layers", [])):
        rows.append((f"layer {i + 1}", layer.get("name")))
        rows.append((f"layer {i + 1} sha256", layer.get("sha256")))
        rows.append((f"layer {i + 1} demo", layer.get("demo")))
    if summary.get("demo"):
        rows.append(("DEMO", "invented demo data: never use these results for design"))
    for caution in summary.get("cautions", []):
        rows.append(("caution", caution))
    return pd.DataFrame(rows, columns=["item", "value"])


#: the most characters an XLSX cell holds
XLSX_MAX_CELL = 32_767
#: characters an XLSX file cannot hold (XML 1.0 forbids them; openpyxl refuses them)
_XLSX_ILLEGAL = r"[\x00-\x08\x0b\x0c\x0e-\x1f]"
#: GeoPackage text ends at a NUL character (GDAL's strings are C strings)
_GPKG_ILLEGAL = r"\x00"


def _picture(match) -> str:
    """A control character as its visible Unicode control picture (NUL -> U+2400)."""
    return chr(0x2400 + ord(match.group(0)))


def _fit_text(df: pd.DataFrame, illegal: str, limit: int | None, fmt: str):
    """Text cells a format cannot hold, made to fit, with each changed row flagged.

    Control characters the format refuses are replaced by their visible control
    pictures (NUL -> U+2400, ...) and flagged ``cell_escaped``; text longer than
    ``limit`` characters is cut and flagged ``cell_truncated``.  The row's message
    says which columns were changed.  Returns the frame to write and the flag counts.
    """
    import re

    pattern = re.compile(illegal)
    n = len(df)
    escaped = np.zeros(n, dtype=bool)
    cut = np.zeros(n, dtype=bool)
    notes: dict[int, list[str]] = {}
    out = None
    for col in df.columns:
        if df[col].dtype.kind in "biufcmM":
            continue
        values = df[col].to_numpy(dtype=object)
        is_text = np.fromiter((isinstance(v, str) for v in values), dtype=bool, count=n)
        if not is_text.any():
            continue
        text = pd.Series(values[is_text], dtype=object)
        bad = text.str.contains(illegal, regex=True).to_numpy(dtype=bool)
        long = (text.str.len() > limit).to_numpy(dtype=bool) if limit else np.zeros(len(text), bool)
        if not (bad.any() or long.any()):
            continue
        rows = np.flatnonzero(is_text)
        new = values.copy()
        for k in np.flatnonzero(bad | long):
            i, v = rows[k], text.iloc[k]
            if bad[k]:
                v = pattern.sub(_picture, v)
                escaped[i] = True
                notes.setdefault(i, []).append(f"control characters in {col} shown as symbols")
            if limit and len(v) > limit:
                notes.setdefault(i, []).append(f"{col} cut to {limit:,} of {len(v):,} characters")
                v = v[:limit]
                cut[i] = True
            new[i] = v
        out = df.copy() if out is None else out
        out[col] = new
    counts = {"cell_escaped": int(escaped.sum()), "cell_truncated": int(cut.sum())}
    if out is None:
        return df, counts
    if "flags" in out.columns and "message" in out.columns:
        flags = out["flags"].astype(object).where(out["flags"].notna(), "").to_numpy(copy=True)
        message = (
            out["message"].astype(object).where(out["message"].notna(), "").to_numpy(copy=True)
        )
        for i, texts in notes.items():
            extra = [f for f, m in (("cell_escaped", escaped), ("cell_truncated", cut)) if m[i]]
            have = [f for f in str(flags[i]).split(";") if f]
            flags[i] = ";".join(sorted(set(have) | set(extra)))
            note = f"{fmt}: " + "; ".join(texts) + "."
            message[i] = f"{message[i]} {note}".strip()
        out["flags"] = flags
        out["message"] = message
    return out, counts


def _count_flags(summary: dict | None, counts: dict) -> None:
    """Add the flags the writer set to the run summary's counts (printed after writing)."""
    if summary is None or not any(counts.values()):
        return
    flags = summary.setdefault("flags", {})
    for name, count in counts.items():
        if count:
            flags[name] = int(flags.get(name, 0)) + count
    summary["flags"] = dict(sorted(flags.items()))


def _write_xlsx(df: pd.DataFrame, tmp: Path, summary: dict | None) -> None:
    if len(df) > XLSX_MAX_ROWS:
        raise InputError(
            "output",
            f"{len(df):,} rows do not fit in one XLSX sheet ({XLSX_MAX_ROWS:,} at most)",
            "a .csv, .gpkg or .parquet output for large portfolios",
        )
    df, counts = _fit_text(df, _XLSX_ILLEGAL, XLSX_MAX_CELL, "XLSX")
    _count_flags(summary, counts)
    names = [str(c) for c in df.columns]
    fitted = [_fit_name(c) for c in names]
    if fitted != names:
        df = df.set_axis(fitted, axis=1)
    sheet2, _ = _fit_text(summary_rows(summary or {}), _XLSX_ILLEGAL, XLSX_MAX_CELL, "XLSX")
    with open(tmp, "wb") as fh, pd.ExcelWriter(fh, engine="openpyxl") as xw:
        df.to_excel(xw, sheet_name="results", index=False)
        sheet2.to_excel(xw, sheet_name="summary", index=False)
        for sheet in xw.sheets.values():
            _defuse_formulas(sheet)


def _fit_name(name: str) -> str:
    import re

    return re.sub(_XLSX_ILLEGAL, _picture, name)[:XLSX_MAX_CELL]


def _defuse_formulas(sheet) -> None:
    """Store text that looks like a formula (``=HYPERLINK(...)``) as text.

    openpyxl writes any string starting with ``=`` as a live formula; a site
    file must never be able to put one into a results workbook.
    """
    for row in sheet.iter_rows():
        for cell in row:
            if cell.data_type == "f":
                cell.data_type = "s"


def write_gpkg_part(df: pd.DataFrame, geometry, tmp: Path, *, append: bool = False) -> dict:
    """Rows of results written to (or, ``append``, added to) the ``results`` layer of a
    GeoPackage, in one transaction; returns the counts of the flags the fitting set."""
    import pyogrio

    df, counts = _fit_text(df, _GPKG_ILLEGAL, None, "GPKG")
    gdf = _points(df, geometry)
    try:  # Arrow I/O is much faster for large tables
        pyogrio.write_dataframe(gdf, tmp, driver="GPKG", layer="results", use_arrow=True,
                                append=append)  # fmt: skip
    except Exception:
        if not append:
            _remove(tmp)
        pyogrio.write_dataframe(gdf, tmp, driver="GPKG", layer="results", append=append)
    return counts


def input_geometry_table(df: pd.DataFrame, geometry):
    """The results with the input's own geometry (WGS 84) as a GeoParquet Arrow table.

    The geometry replaces a ``geometry`` column of the table, as geopandas does for
    the whole-file write; its ``geometry_types`` are those the rows hold.
    """
    import pyarrow as pa
    import shapely

    geoms = np.asarray(geometry, dtype=object)
    table = arrow_table(df.drop(columns=["geometry"], errors="ignore"))
    table = table.append_column("geometry", pa.array(shapely.to_wkb(geoms), type=pa.binary()))
    names = ("Point", "LineString", "Polygon", "MultiPoint", "MultiLineString",
             "MultiPolygon", "GeometryCollection")  # fmt: skip
    kinds = np.unique(shapely.get_type_id(geoms))
    types = sorted(names[k] for k in kinds if 0 <= k < len(names)) or []
    meta = dict(table.schema.metadata or {})
    meta[b"geo"] = geo_metadata("geometry", types)
    return table.replace_schema_metadata(meta)


def _for_text(df: pd.DataFrame, geometry) -> pd.DataFrame:
    if geometry is None:
        return df
    import shapely

    out = df.copy()
    out["geometry"] = shapely.to_wkt(np.asarray(geometry, dtype=object))
    return out


def write_results(
    df: pd.DataFrame,
    path: str | Path,
    *,
    overwrite: bool = False,
    summary: dict | None = None,
    geometry=None,
    csv_raw: bool = False,
    _writer_hook: Callable | None = None,
) -> Path:
    """Write a results table atomically in the format its suffix names.

    Parameters
    ----------
    df : pandas.DataFrame
        The screening results (one row per input site).
    path : str or Path
        Target ``.csv``, ``.xlsx``, ``.gpkg`` or ``.parquet``.
    overwrite : bool
        Replace an existing file.
    summary : dict, optional
        The screening summary, written as the XLSX ``summary`` sheet.
    geometry : array of shapely geometries, optional
        The input's own geometry (GeoPackage / GeoParquet input), written as
        the output geometry (or as WKT text in CSV/XLSX); otherwise points
        are made from ``site_lat``/``site_lon``.
    csv_raw : bool
        CSV only: write text cells as they are.  By default a text cell that a
        spreadsheet would take for a formula (it starts with ``=``, ``+``, ``-``,
        ``@``, a tab or a carriage return and is not a plain number such as
        ``-140.05``) gets a leading ``'``; the count is ``summary["csv_cells_neutralised"]``.
        XLSX always stores such cells as text; XLSX cells the format cannot hold
        (control characters, over 32,767 characters) and GeoPackage text with NUL
        are made to fit and flagged ``cell_escaped`` / ``cell_truncated``.

    Returns
    -------
    Path
        The written file.
    """
    from neve.safe_write import atomic_file

    fmt = result_format(path)
    target = Path(path)
    with atomic_file(target, overwrite=overwrite, field="output") as tmp:
        if fmt == "csv":
            changed = _write_csv(_for_text(df, geometry), tmp, raw=csv_raw)
            if summary is not None:
                summary["csv_cells_neutralised"] = changed
        elif fmt == "xlsx":
            _write_xlsx(_for_text(df, geometry), tmp, summary)
        elif fmt == "parquet":
            if geometry is not None:
                _points(_arrow_safe(df), geometry).to_parquet(tmp, index=False)
            else:
                _write_parquet(df, tmp)
        else:
            _count_flags(summary, write_gpkg_part(df, geometry, tmp))
        if _writer_hook is not None:  # tests: simulate an interruption after writing
            _writer_hook(tmp)
    return target


def summarize(
    results: pd.DataFrame, layers=(), *, engine="local", seconds=None, input_info=None
) -> dict:
    """Counts by status and by flag, the range of pg, the layers used and the cautions.

    ``input_info`` (how the site file was laid out: physical lines against
    records, see :class:`neve.geo.screen.read.ReadNotes`) is kept as ``input``.
    """
    status_counts = results["status"].value_counts()
    statuses = {s: int(status_counts.get(s, 0)) for s in STATUSES}
    for s, c in status_counts.items():
        statuses.setdefault(str(s), int(c))
    combos = results["flags"].value_counts()  # few distinct combinations, counted once
    counter: dict[str, int] = {}
    for combo, count in combos.items():
        for flag in str(combo).split(";") if isinstance(combo, str) else ():
            if flag:
                counter[flag] = counter.get(flag, 0) + int(count)
    flags = dict(sorted(counter.items()))
    sk_run = "pg_psf" not in results.columns and "sk_kpa" in results.columns  # EN 1991-1-3
    column = "sk_kpa" if sk_run else "pg_psf"
    valued = results.loc[results["status"].isin(ROOF_STATUSES), column].dropna()
    pg = None
    if len(valued):
        pg = {"min": float(valued.min()), "max": float(valued.max())}
    layer_info = []
    for layer in layers:
        info = layer.info() if hasattr(layer, "info") else {}
        layer_info.append(
            {
                "name": info.get("name") or str(getattr(layer, "path", "")),
                "sha256": info.get("sha256", getattr(layer, "sha256", None)),
                "source": info.get("source"),
                "demo": bool(getattr(layer, "demo", False)),
            }
        )
    return {
        "rows": int(len(results)),
        "status": statuses,
        "flags": {str(k): int(v) for k, v in flags.items() if k},
        "pg_psf": None if sk_run else pg,
        **({"sk_kpa": pg} if sk_run else {}),
        "layers": layer_info,
        "demo": any(info["demo"] for info in layer_info),
        "engine": engine,
        "seconds": None if seconds is None else round(float(seconds), 3),
        "cautions": list(CAUTIONS),
        **({"input": dict(input_info)} if input_info else {}),
        **({"on_record": on_record_summary(results)} if "load_ratio" in results.columns else {}),
    }


def on_record_summary(results: pd.DataFrame) -> dict:
    """The existing-roof check of a run: loads on record given, compared, exceeded.

    ``given``: rows with a load on record; ``compared``: rows with a ``load_ratio``
    (today's ``design_uniform`` / the load on record); ``exceeds_record``: rows whose
    ratio is above 1.0; ``load_ratio``: its ``min`` and ``max`` (null without any);
    ``roof_given``: whether the run had a roof (without one nothing is compared).
    """
    from neve.engine.on_record import COMPARED_WITH, load_ratio

    record = pd.to_numeric(results["on_record_psf"], errors="coerce").to_numpy(dtype=float)
    ratio = pd.to_numeric(results["load_ratio"], errors="coerce").to_numpy(dtype=float)
    compared = np.isfinite(ratio)
    _, above = load_ratio(ratio[compared], 1.0)  # the one threshold, as on the rows
    return {
        "given": int(np.isfinite(record).sum()),
        "compared": int(compared.sum()),
        "exceeds_record": int(above.sum()),
        "compared_with": COMPARED_WITH,
        "roof_given": f"{COMPARED_WITH}_psf" in results.columns,
        "load_ratio": (
            {"min": float(ratio[compared].min()), "max": float(ratio[compared].max())}
            if compared.any()
            else None
        ),
    }


def on_record_lines(summary: dict) -> list[str]:
    """The existing-roof check in words, for the printed summary."""
    rec = summary.get("on_record")
    if not rec:
        return []
    lines = [
        f"loads on record: {rec['given']:,} given, {rec['compared']:,} compared with today's "
        f"{rec['compared_with']} (uniform loads only; drifts not included), "
        f"{rec['exceeds_record']:,} above the record (exceeds_record)"
    ]
    if rec.get("load_ratio"):
        r = rec["load_ratio"]
        lines.append(f"  load_ratio range: {r['min']:.3f} to {r['max']:.3f}")
    if rec["given"] and not rec.get("roof_given"):
        lines.append(
            "  no roof given: load_ratio needs today's design_uniform roof load "
            "(give roof options or --roof)"
        )
    if rec["exceeds_record"]:
        lines.append(
            "  a roof above its record needs review of the structure by a licensed design "
            "professional"
        )
    return lines


def input_lines(info: dict | None) -> list[str]:
    """How the site file was read, in words: physical lines (or sheet rows) against records."""
    if not info:
        return []
    records = int(info.get("records", 0))
    bad = int(info.get("records_with_read_errors", 0))
    if info.get("format") == "csv" and "lines" in info:
        multi = int(info.get("multiline_records", 0))
        text = (
            f"input: {info['lines']:,} lines = header (line {info.get('header_line', 1)}) + "
            f"{records:,} records + {info.get('blank_lines', 0):,} blank"
        )
        if info.get("header_line", 1) > 1:
            text += " (blank lines before the header included)"
        out = [text]
        if multi:
            out.append(
                f"  {multi:,} record(s) span several lines (a quoted cell with line breaks; "
                "flagged multiline_field): check them for a stray quote"
            )
        if bad:
            out.append(f"  {bad:,} record(s) could not be read as written: status error")
        return out
    if info.get("format") == "xlsx" and "sheet_rows" in info:
        out = [
            f"input: sheet {info.get('sheet')!r}, {info['sheet_rows']:,} rows = header "
            f"(row {info.get('header_row', 1)}) + {records:,} records + "
            f"{info.get('blank_rows', 0):,} empty"
        ]
        if bad:
            out.append(f"  {bad:,} record(s) could not be read as written: status error")
        return out
    return [f"input: {records:,} records ({info.get('format', 'table')})"]


def format_summary(summary: dict) -> str:
    """The printed summary of a screening run."""
    lines = []
    if summary.get("demo"):
        lines.append("DEMO DATA: the zone layer is invented; never use these results for design.")
    lines.append(f"sites: {summary['rows']:,}")
    width = max(len(s) for s in summary["status"]) if summary["status"] else 0
    for s, c in summary["status"].items():
        lines.append(f"  {s:<{width}}  {c:>10,}")
    if summary["flags"]:
        lines.append("flags:")
        fw = max(len(f) for f in summary["flags"])
        for f, c in summary["flags"].items():
            lines.append(f"  {f:<{fw}}  {c:>10,}")
    pg = summary.get("pg_psf")
    sk = summary.get("sk_kpa")
    if sk:  # a run on sk layers (EN 1991-1-3): kPa first
        lines.append(
            f"sk range: {sk['min']:.2f} to {sk['max']:.2f} kPa "
            f"({sk['min'] / KPA_PER_PSF:.1f} to {sk['max'] / KPA_PER_PSF:.1f} psf)"
        )
    elif "sk_kpa" in summary:
        lines.append("sk range: no site has a usable ground snow load")
    elif pg:
        lines.append(
            f"pg range: {pg['min']:.1f} to {pg['max']:.1f} psf "
            f"({pg['min'] * KPA_PER_PSF:.2f} to {pg['max'] * KPA_PER_PSF:.2f} kPa)"
        )
    else:
        lines.append("pg range: no site has a usable ground snow load")
    lines.extend(input_lines(summary.get("input")))
    lines.extend(on_record_lines(summary))
    if summary.get("csv_cells_neutralised"):
        lines.append(
            f"csv: {summary['csv_cells_neutralised']:,} text cell(s) that a spreadsheet would "
            "take for a formula written with a leading ' (--csv-raw writes them as they are)"
        )
    for layer in summary.get("layers", []):
        sha = (layer.get("sha256") or "")[:12]
        lines.append(f"layer: {layer['name']}" + (f" (sha256 {sha}...)" if sha else ""))
    lines.extend(f"caution: {c}" for c in summary.get("cautions", []))
    return printable("\n".join(lines))
