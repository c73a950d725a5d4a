"""Result writers (neve.geo.screen.outputs): formats, atomic replacement, refusal to overwrite."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from neve.geo.screen.outputs import atomic_path, summary_rows, write_results
from neve.geo.screen.sitefile import read_sites


def _results(n: int = 5) -> pd.DataFrame:
    return pd.DataFrame(
        {
            "site_id": [f"R{i}" for i in range(n)],
            "status": ["ok"] * (n - 1) + ["error"],
            "pg_psf": [25.0] * (n - 1) + [np.nan],
            "flags": [""] * n,
            "message": [""] * (n - 1) + ["lat: missing"],
            "site_lat": [45.5] * (n - 1) + [np.nan],
            "site_lon": [-109.5] * (n - 1) + [np.nan],
        }
    )


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".gpkg", ".parquet"])
def test_each_format_reads_back(tmp_path, suffix):
    df = _results()
    path = write_results(df, tmp_path / f"out{suffix}", summary={"rows": 5, "status": {"ok": 4}})
    back, geom = read_sites(path)
    assert list(back["site_id"]) == list(df["site_id"])
    assert list(back["status"]) == list(df["status"])
    pg = pd.to_numeric(back["pg_psf"], errors="coerce")  # CSV cells come back as their text
    np.testing.assert_allclose(pg.to_numpy(dtype=float), df["pg_psf"], equal_nan=True)
    if suffix == ".gpkg":
        assert geom is not None and geom.iloc[0].x == pytest.approx(-109.5)
        assert geom.iloc[4] is None or geom.iloc[4].is_empty
    assert [p.name for p in tmp_path.iterdir()] == [f"out{suffix}"]  # no temp file left


def test_xlsx_has_summary_sheet(tmp_path):
    summary = {
        "rows": 5,
        "status": {"ok": 4, "error": 1},
        "flags": {"demo_data": 4},
        "pg_psf": {"min": 25.0, "max": 25.0},
        "demo": True,
        "cautions": ["aid to a licensed professional"],
    }
    path = write_results(_results(), tmp_path / "o.xlsx", summary=summary)
    sheets = pd.read_excel(path, sheet_name=None)
    assert set(sheets) == {"results", "summary"}
    items = dict(zip(sheets["summary"]["item"], sheets["summary"]["value"], strict=True))
    assert items["status: error"] == 1 and items["flag: demo_data"] == 4
    assert "DEMO" in items and items["caution"] == "aid to a licensed professional"


def test_existing_output_is_not_overwritten(tmp_path):
    target = tmp_path / "o.csv"
    target.write_text("keep me")
    with pytest.raises(InputError, match="already exists.*--overwrite"):
        write_results(_results(), target)
    assert target.read_text() == "keep me"
    write_results(_results(), target, overwrite=True)
    assert "site_id" in target.read_text()


@pytest.mark.parametrize("suffix", [".csv", ".gpkg", ".parquet", ".xlsx"])
def test_interrupted_write_leaves_nothing(tmp_path, suffix):
    def interrupt(tmp):
        assert tmp.exists() and tmp.stat().st_size > 0  # the table was being written
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        write_results(_results(), tmp_path / f"o{suffix}", _writer_hook=interrupt)
    assert list(tmp_path.iterdir()) == []


def test_interrupted_overwrite_keeps_old_file(tmp_path):
    target = tmp_path / "o.csv"
    target.write_text("old")
    with pytest.raises(RuntimeError):
        with atomic_path(target, overwrite=True) as tmp:
            tmp.write_text("half")
            raise RuntimeError("disk full")
    assert target.read_text() == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["o.csv"]


def test_unknown_suffix_and_missing_folder(tmp_path):
    with pytest.raises(InputError, match=r"\.csv, \.xlsx, \.gpkg, \.parquet"):
        write_results(_results(), tmp_path / "o.json")
    with pytest.raises(InputError, match="does not exist"):
        write_results(_results(), tmp_path / "nope" / "o.csv")


def test_xlsx_row_limit_is_a_clear_error(tmp_path, monkeypatch):
    import neve.geo.screen.outputs as outputs

    monkeypatch.setattr(outputs, "XLSX_MAX_ROWS", 3)
    with pytest.raises(InputError, match="do not fit in one XLSX sheet"):
        write_results(_results(), tmp_path / "o.xlsx")
    assert list(tmp_path.iterdir()) == []


def test_summary_rows_lists_layers():
    rows = summary_rows({"rows": 1, "layers": [{"name": "L", "sha256": "ab", "demo": False}]})
    assert ("layer 1", "L") in list(rows.itertuples(index=False, name=None))
