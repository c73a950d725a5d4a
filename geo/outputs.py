"""Writing screening results (CSV, XLSX with a summary sheet, GeoPackage, Parquet) and the summary.

Every writer is atomic: the table goes to a temporary file in the target's
folder, which is renamed over the target only once it is complete, so an
interrupted or failed run never leaves a partial output behind.  An existing
output is replaced only when ``overwrite=True``.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path

import numpy as np
import pandas as pd

from engine.errors import InputError
from engine.roof import CAUTIONS
from engine.units import KPA_PER_PSF
from geo.printable import printable

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
    """Refuse an existing target unless ``overwrite``; check its folder exists."""
    p = Path(path)
    if p.exists() and not overwrite:
        raise InputError(field, f"{str(p)!r} already exists", "a new path, or --overwrite")
    if p.exists() and p.is_dir():
        raise InputError(field, f"{str(p)!r} is a folder", "a file path")
    if not p.parent.exists():
        raise InputError(
            field, f"folder {str(p.parent)!r} does not exist", "a path in an existing folder"
        )
    return p


@contextmanager
def atomic_path(path: str | Path, *, overwrite: bool = False) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; rename it over ``path`` on success.

    On any exception (including KeyboardInterrupt) the temporary file and any
    side files a driver left (``-wal``, ``-shm``, ``-journal``) are removed.
    """
    target = check_target(path, overwrite)
    fd, tmp_name = tempfile.mkstemp(
        prefix=f".{target.name}.", suffix=f".part{target.suffix}", dir=target.parent
    )
    os.close(fd)
    tmp = Path(tmp_name)
    tmp.unlink()  # writers create the file themselves (some refuse an existing one)
    try:
        yield tmp
        if not tmp.exists():
            raise OSError(f"the writer produced no file for {target}")
        if target.exists() and not overwrite:
            raise InputError("output", f"{str(target)!r} appeared during the run", "--overwrite")
        os.replace(tmp, target)
    finally:
        _remove(tmp)


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


def _write_csv(df: pd.DataFrame, tmp: Path) -> None:
    """CSV through Arrow's writer (several times faster than pandas); pandas as fallback."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    try:
        table = pa.Table.from_pandas(_dictionary_encoded(df), preserve_index=False)
        pcsv.write_csv(table, tmp, write_options=pcsv.WriteOptions(quoting_style="needed"))
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError):
        _remove(tmp)
        df.to_csv(tmp, index=False)


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
    """One conversion to Arrow; columns of mixed types are made text only if it fails."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    df = _dictionary_encoded(df)
    try:
        table = pa.Table.from_pandas(df, preserve_index=False)
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        table = pa.Table.from_pandas(_arrow_safe(df), preserve_index=False)
    pq.write_table(table, tmp)


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
    for status, count in summary.get("status", {}).items():
        rows.append((f"status: {status}", count))
    for flag, count in summary.get("flags", {}).items():
        rows.append((f"flag: {flag}", count))
    pg = summary.get("pg_psf") or {}
    rows.append(("pg min [psf]", pg.get("min")))
    rows.append(("pg max [psf]", pg.get("max")))
    for i, layer in enumerate(summary.get("layers", [])):
        rows.append((f"layer {i + 1}", layer.get("name")))
        rows.append((f"layer {i + 1} sha256", layer.get("sha256")))
        rows.append((f"layer {i + 1} demo", layer.get("demo")))
    if summary.get("demo"):
        rows.append(("DEMO", "invented demo data: never use these results for design"))
    for caution in summary.get("cautions", []):
        rows.append(("caution", caution))
    return pd.DataFrame(rows, columns=["item", "value"])


def _write_xlsx(df: pd.DataFrame, tmp: Path, summary: dict | None) -> None:
    if len(df) > XLSX_MAX_ROWS:
        raise InputError(
            "output",
            f"{len(df):,} rows do not fit in one XLSX sheet ({XLSX_MAX_ROWS:,} at most)",
            "a .csv, .gpkg or .parquet output for large portfolios",
        )
    with pd.ExcelWriter(tmp, engine="openpyxl") as xw:
        df.to_excel(xw, sheet_name="results", index=False)
        summary_rows(summary or {}).to_excel(xw, sheet_name="summary", index=False)
        for sheet in xw.sheets.values():
            _defuse_formulas(sheet)


def _defuse_formulas(sheet) -> None:
    """Store text that looks like a formula (``=HYPERLINK(...)``) as text.

    openpyxl writes any string starting with ``=`` as a live formula; a site
    file must never be able to put one into a results workbook.
    """
    for row in sheet.iter_rows():
        for cell in row:
            if cell.data_type == "f":
                cell.data_type = "s"


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

    Returns
    -------
    Path
        The written file.
    """
    fmt = result_format(path)
    target = Path(path)
    with atomic_path(target, overwrite=overwrite) as tmp:
        if fmt == "csv":
            _write_csv(_for_text(df, geometry), tmp)
        elif fmt == "xlsx":
            _write_xlsx(_for_text(df, geometry), tmp, summary)
        elif fmt == "parquet":
            if geometry is not None:
                _points(_arrow_safe(df), geometry).to_parquet(tmp, index=False)
            else:
                _write_parquet(df, tmp)
        else:
            import pyogrio

            gdf = _points(df, geometry)
            try:  # Arrow I/O is much faster for large tables
                pyogrio.write_dataframe(gdf, tmp, driver="GPKG", layer="results", use_arrow=True)
            except Exception:
                _remove(tmp)
                pyogrio.write_dataframe(gdf, tmp, driver="GPKG", layer="results")
        if _writer_hook is not None:  # tests: simulate an interruption after writing
            _writer_hook(tmp)
    return target


def summarize(results: pd.DataFrame, layers=(), *, engine="local", seconds=None) -> dict:
    """Counts by status and by flag, the range of pg, the layers used and the cautions."""
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
    valued = results.loc[results["status"].isin(ROOF_STATUSES), "pg_psf"].dropna()
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
        "pg_psf": pg,
        "layers": layer_info,
        "demo": any(info["demo"] for info in layer_info),
        "engine": engine,
        "seconds": None if seconds is None else round(float(seconds), 3),
        "cautions": list(CAUTIONS),
    }


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
    if pg:
        lines.append(
            f"pg range: {pg['min']:.1f} to {pg['max']:.1f} psf "
            f"({pg['min'] * KPA_PER_PSF:.2f} to {pg['max'] * KPA_PER_PSF:.2f} kPa)"
        )
    else:
        lines.append("pg range: no site has a usable ground snow load")
    for layer in summary.get("layers", []):
        sha = (layer.get("sha256") or "")[:12]
        lines.append(f"layer: {layer['name']}" + (f" (sha256 {sha}...)" if sha else ""))
    lines.extend(f"caution: {c}" for c in summary.get("cautions", []))
    return printable("\n".join(lines))
