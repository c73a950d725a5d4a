"""The local engine (neve.geo.screen.local), layer pickling, and the names kept after the split."""

from __future__ import annotations

import copy
import pickle

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from neve.geo.layers.model import load_layer
from neve.geo.layers.vector import layer_hits
from neve.geo.screen.local import (
    THREADED_FROM,
    portable_layer,
    progress_bar,
    resolve_local,
    worker_threads,
)
from tests.screen.conftest import zone_of


def _sites(n: int = 400, seed: int = 5):
    rng = np.random.default_rng(seed)
    return rng.uniform(44.0, 46.0, n), rng.uniform(-110.0, -108.0, n)


def _warm(layer) -> None:
    lat, lon = _sites(2500)  # above the prefilter size: builds every cache kind
    layer_hits(layer, lon, lat, np.full(lat.size, 1000.0))


def test_pickled_layer_has_empty_caches_and_the_same_answers(grid_layer):
    layer = load_layer(grid_layer)
    _warm(layer)
    kinds = set(map(str, layer._cache))
    assert {"prepared", "tree_m"} <= kinds  # the caches exist before pickling
    back = pickle.loads(pickle.dumps(layer))
    assert back._cache == {}
    assert len(layer._cache) == len(kinds)  # pickling leaves the original's caches alone
    assert back.sha256 == layer.sha256 and back.meta == layer.meta
    lat, lon = _sites()
    a = layer_hits(layer, lon, lat, np.full(lat.size, 1000.0))
    b = layer_hits(back, lon, lat, np.full(lat.size, 1000.0))
    np.testing.assert_array_equal(a.zone_id, b.zone_id)
    np.testing.assert_array_equal(a.value_psf, b.value_psf)
    np.testing.assert_array_equal(a.dist_other_m, b.dist_other_m)
    # reference: shapely's point-in-polygon on the invented fixture grid (regression guard
    # for the unpickled layer rebuilding its prepared geometries correctly)
    ref = zone_of(lat, lon)
    inside = ref != None  # noqa: E711
    np.testing.assert_array_equal(b.zone_id[inside], ref[inside].astype(str))


def test_built_caches_add_nothing_to_the_pickle(grid_layer):
    layer = load_layer(grid_layer)
    cold = len(pickle.dumps(layer))
    _warm(layer)
    assert len(pickle.dumps(layer)) == cold  # built caches add nothing to the payload


def test_portable_layer_is_a_shallow_copy_with_its_own_cache(grid_layer):
    layer = load_layer(grid_layer)
    _warm(layer)
    clone = portable_layer(layer)
    assert clone is not layer
    assert clone._cache == {} and clone._cache is not layer._cache
    assert clone.frame is layer.frame and clone.zones is layer.zones  # zones are shared
    assert layer._cache  # the original keeps its caches
    assert copy.copy(layer)._cache == {}  # what portable_layer relies on
    marker = object()
    assert portable_layer(marker) is marker  # not a Layer: passed through


@pytest.mark.parametrize(
    "n, expected", [(0, 1), (10, 1), (THREADED_FROM - 1, 1), (THREADED_FROM, 2)]
)
def test_worker_threads_by_portfolio_size(n, expected, monkeypatch):
    monkeypatch.delenv("NEVE_THREADS", raising=False)
    monkeypatch.setattr("os.cpu_count", lambda: 2)
    assert worker_threads(n) == expected


def test_worker_threads_never_exceed_the_cores(monkeypatch):
    monkeypatch.delenv("NEVE_THREADS", raising=False)
    monkeypatch.setattr("os.cpu_count", lambda: 1)
    assert worker_threads(THREADED_FROM * 10) == 1


@pytest.mark.parametrize("value, expected", [("1", 1), ("3", 3), (" 2 ", 2)])
def test_worker_threads_environment_override(value, expected, monkeypatch):
    monkeypatch.setenv("NEVE_THREADS", value)
    assert worker_threads(5) == expected


@pytest.mark.parametrize("value", ["0", "1.5", "many", "-2"])
def test_worker_threads_bad_environment_names_the_variable(value, monkeypatch):
    monkeypatch.setenv("NEVE_THREADS", value)
    with pytest.raises(InputError) as exc:
        worker_threads(5)
    assert "NEVE_THREADS" in str(exc.value) and "1, 2" in str(exc.value)


def test_resolve_local_no_sites_gives_none(grid_layer):
    empty = np.empty(0)
    assert resolve_local(empty, empty, None, layers=[load_layer(grid_layer)]) is None


def test_resolve_local_threads_and_chunks_keep_input_order(grid_layer, monkeypatch):
    import neve.geo.screen.local as le

    layer = load_layer(grid_layer)
    lat, lon = _sites(1000, seed=11)
    monkeypatch.setenv("NEVE_THREADS", "1")
    serial = resolve_local(lat, lon, None, layers=[layer])
    monkeypatch.setenv("NEVE_THREADS", "2")
    monkeypatch.setattr(le, "CHUNK_SIZE", 37)
    threaded = resolve_local(lat, lon, None, layers=[layer])
    assert len(threaded) == 1000
    pd.testing.assert_frame_equal(serial, threaded)
    ref = zone_of(lat, lon)  # shapely point-in-polygon reference on the fixture grid
    inside = ref != None  # noqa: E711
    assert (threaded["zone_id"].to_numpy()[inside] == ref[inside]).all()


def test_progress_bar_counts_sites_and_is_silent_when_off(capsys):
    bar = progress_bar(10, True, "resolving")
    bar.update(4)
    assert bar.n == 4 and bar.total == 10 and bar.unit == "site"
    bar.close()
    assert "resolving" in capsys.readouterr().err
    off = progress_bar(10, False, "resolving")
    off.update(4)
    off.close()
    assert off.disable and capsys.readouterr().err == ""


def test_names_stay_importable_from_their_old_modules():
    """After the split, the names README and callers use still import from where they were."""
    import neve.geo.screen.geocode_rows as sg
    import neve.geo.screen.local as le
    import neve.geo.screen.read as sr
    import neve.geo.screen.run as gs
    import neve.geo.screen.sitefile as sf

    for name in ("portable_layer", "worker_threads", "resolve_local", "CHUNK_SIZE",
                 "THREADS_ENV", "THREADED_FROM"):  # fmt: skip
        assert getattr(gs, name) is getattr(le, name), name
    for name in ("CachedGeocoder", "GeocodeMiss", "make_geocoder", "geocode_rows",
                 "load_geocode_cache", "save_geocode_cache"):  # fmt: skip
        assert getattr(sf, name) is getattr(sg, name), name
    for name in ("read_sites", "site_format", "SITE_FORMATS", "LAT_NAMES", "LON_NAMES",
                 "ACCEPTED_COORDS"):  # fmt: skip
        assert getattr(sf, name) is getattr(sr, name), name
    assert callable(gs.screen) and callable(gs.run_screen) and callable(sf.load_sites)


def test_the_prefilter_union_is_built_once_for_every_thread(grid_layer, monkeypatch):
    """Issue 16: copies of a layer (one per thread) share the grown union, each prepared
    on its own (a copy of the geometry: GEOS prepared geometries are not shared)."""
    import shapely

    from neve.geo.layers.model import load_layer
    from neve.geo.screen.local import portable_layer

    calls = []
    union_all = shapely.union_all
    monkeypatch.setattr(shapely, "union_all", lambda g, **kw: calls.append(1) or union_all(g, **kw))
    layer = load_layer(grid_layer)
    copies = [portable_layer(layer) for _ in range(3)]
    covers = [ly.coverage_m(250.0) for ly in [layer, *copies]]
    assert len(calls) == 1
    assert len({id(c) for c in covers}) == 4  # each its own prepared geometry
    assert all(shapely.equals_exact(c, covers[0], tolerance=0.0) for c in covers)
    shrunk = [ly.shrunk_m(250.0) for ly in [layer, *copies]]
    assert all(shapely.equals_exact(s, shrunk[0], tolerance=0.0).all() for s in shrunk)
