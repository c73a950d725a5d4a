"""Recipe: a published table of zone values + an open boundary file -> a neve layer.

Jurisdictions often publish ground snow loads as a table by town, county or
district: a value, perhaps an elevation limit, perhaps an elevation rule.
This recipe joins such a table (CSV) to a boundary file you obtain (any
vector format GDAL reads, in any CRS) on a shared key, and writes a zone
layer (GeoPackage by default) with its sidecar, then runs
``neve layer check`` on the result.

CSV columns: the key column (``--csv-key``), ``rule`` (``fixed``, ``study``,
``elevation_table``, ``formula``; default ``fixed`` where a ``pg`` is
given), and any of ``pg``, ``elev_max``, ``table`` (JSON pairs), ``expr``,
``pg_min``, ``note``, ``source`` and extra numeric columns used by
formulas.  Keys are compared as trimmed text.  Boundary features with no
row in the table are left out and listed; table rows with no boundary are
listed too; nothing is matched by guesswork.  Several features with the
same key are merged into one zone.

Example::

    python data_recipes/table_to_layer.py --boundaries towns.gpkg --boundary-key CODE \\
        --table values.csv --csv-key code --out my_layer.gpkg \\
        --name "My county ground snow loads" --jurisdiction "My County" \\
        --standard "ASCE 7-16" --value-units psf --elevation-units ft \\
        --source "County code, Table 3 (2024)" --license "public record" --date 2024-05-01

The exit code is that of ``neve layer check`` (0 clean, 1 problems, 2 unreadable).
"""

from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

ATTRS = ("rule", "pg", "elev_max", "table", "expr", "pg_min", "note", "source")


def build_layer(args: argparse.Namespace) -> Path:
    """Join the table to the boundaries and write the layer and its sidecar."""
    import geopandas as gpd
    import pandas as pd

    bounds = gpd.read_file(args.boundaries, engine="pyogrio")
    if args.boundary_key not in bounds.columns:
        sys.exit(
            f"boundary file has no column {args.boundary_key!r}; columns: {list(bounds.columns)}"
        )
    table = pd.read_csv(args.table, dtype={args.csv_key: str})
    if args.csv_key not in table.columns:
        sys.exit(f"table has no column {args.csv_key!r}; columns: {list(table.columns)}")
    table["zone_id"] = table[args.csv_key].astype(str).str.strip()
    dup = table["zone_id"][table["zone_id"].duplicated()].unique()
    if len(dup):
        sys.exit(f"table lists these keys more than once: {', '.join(map(str, dup))}")
    if "rule" not in table.columns:
        table["rule"] = None
    table["rule"] = table["rule"].where(table["rule"].notna(), None)
    if "pg" in table.columns:
        table.loc[table["rule"].isna() & table["pg"].notna(), "rule"] = "fixed"
    bounds["zone_id"] = bounds[args.boundary_key].astype(str).str.strip()
    zones = bounds[["zone_id", "geometry"]].dissolve(by="zone_id", as_index=False)
    merged = zones.merge(table.drop(columns=[args.csv_key]), on="zone_id", how="inner")
    lost_b = sorted(set(zones["zone_id"]) - set(table["zone_id"]))
    lost_t = sorted(set(table["zone_id"]) - set(zones["zone_id"]))
    if lost_b:
        print(f"boundaries with no table row (left out): {', '.join(lost_b)}")
    if lost_t:
        print(f"table rows with no boundary (left out): {', '.join(lost_t)}")
    out = Path(args.out)
    out.unlink(missing_ok=True)
    merged.to_file(out, engine="pyogrio")
    write_sidecar(out, sidecar_meta(args))
    print(f"wrote {out} ({len(merged)} zones) and {out.name}.toml")
    return out


def write_sidecar(path: Path, meta: dict) -> Path:
    """Write ``<path>.toml`` from a dict of plain values."""
    import tomli_w

    side = Path(str(path) + ".toml")
    side.write_text(tomli_w.dumps(meta), encoding="utf-8")
    return side


def sidecar_meta(args: argparse.Namespace) -> dict:
    """The sidecar keys from the options that :func:`sidecar_args` adds."""
    return {
        "name": args.name,
        "jurisdiction": args.jurisdiction,
        "standard": args.standard,
        "value_units": args.value_units,
        "elevation_units": args.elevation_units,
        "source": args.source,
        "license": args.license,
        "date": args.date,
        "boundary_tolerance_m": args.tolerance,
        "demo": args.demo,
    }


def sidecar_args(ap: argparse.ArgumentParser) -> None:
    """Add the sidecar options shared by the recipes."""
    ap.add_argument("--name", required=True)
    ap.add_argument("--jurisdiction", required=True)
    ap.add_argument("--standard", required=True, help='e.g. "ASCE 7-16"')
    ap.add_argument("--value-units", required=True, choices=["psf", "kPa"])
    ap.add_argument("--elevation-units", required=True, choices=["ft", "m"])
    ap.add_argument("--source", required=True, help="citation of the published table or map")
    ap.add_argument("--license", required=True)
    ap.add_argument("--date", required=True, help="date of the published data")
    ap.add_argument("--tolerance", type=float, default=100.0, help="boundary tolerance [m]")
    ap.add_argument("--demo", action="store_true", help="mark the layer as invented data")


def run_check(path: Path) -> int:
    """Run ``neve layer check`` on the result and return its exit code."""
    return subprocess.call([sys.executable, "-m", "neve.cli", "layer", "check", str(path)])


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--boundaries", required=True, help="boundary file (any vector format)")
    ap.add_argument("--boundary-key", required=True, help="key column in the boundary file")
    ap.add_argument("--table", required=True, help="CSV of zone values")
    ap.add_argument("--csv-key", required=True, help="key column in the CSV")
    ap.add_argument("--out", required=True, help="output layer (.gpkg, .geojson, .fgb)")
    sidecar_args(ap)
    args = ap.parse_args(argv)
    return run_check(build_layer(args))


if __name__ == "__main__":
    sys.exit(main())
