"""The zone-box grid (neve.geo.layers.vector.BoxGrid) against shapely's STRtree.

Reference: ``shapely.STRtree.query`` of point geometries (a general-purpose
library) gives the (point, box) pairs whose bounding box holds the point; the
grid must give the same pairs, each point's zones in file order.  Boxes and
points are random (no map data); points are also put exactly on box edges and
corners, where a ``floor`` on either side would lose a pair.
"""

from __future__ import annotations

import numpy as np
import pytest
import shapely

from neve.geo.layers.vector import GRID_MAX_ENTRIES_PER_ZONE, BoxGrid


def _reference(geoms, x, y):
    si, zi = shapely.STRtree(geoms).query(shapely.points(x, y))
    order = np.lexsort((zi, si))
    return si[order], zi[order]


def _boxes(rng, n, size=1.0):
    x0, y0 = rng.uniform(0, 50, n), rng.uniform(0, 30, n)
    w, h = rng.uniform(0.05, size, n), rng.uniform(0.05, size, n)
    return shapely.box(x0, y0, x0 + w, y0 + h)


def _points_on_edges(geoms):
    b = shapely.bounds(geoms)
    xs = np.concatenate([b[:, 0], b[:, 2], b[:, 0], (b[:, 0] + b[:, 2]) / 2])
    ys = np.concatenate([b[:, 1], b[:, 3], b[:, 3], b[:, 1]])
    return xs, ys


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_grid_pairs_equal_strtree_pairs(seed):
    rng = np.random.default_rng(seed)
    geoms = _boxes(rng, 400)
    ex, ey = _points_on_edges(geoms)
    x = np.concatenate([rng.uniform(-5, 55, 20_000), ex, [np.nan, 1.0]])
    y = np.concatenate([rng.uniform(-5, 35, 20_000), ey, [1.0, np.nan]])
    grid = BoxGrid(shapely.bounds(geoms))
    assert grid.usable
    got = grid.candidates(x, y)
    want = _reference(geoms, np.nan_to_num(x, nan=1e9), np.nan_to_num(y, nan=1e9))
    np.testing.assert_array_equal(got[0], want[0])
    np.testing.assert_array_equal(got[1], want[1])


def test_empty_zones_are_never_candidates():
    geoms = np.array([shapely.box(0, 0, 1, 1), shapely.Polygon(), shapely.box(2, 2, 3, 3)])
    grid = BoxGrid(shapely.bounds(geoms))
    si, zi = grid.candidates(np.array([0.5, 2.5, 5.0]), np.array([0.5, 2.5, 5.0]))
    assert si.tolist() == [0, 1] and zi.tolist() == [0, 2]


def test_zones_on_one_line_and_a_single_point():
    line = np.array([[0.0, 5.0, 1.0, 5.0], [1.0, 5.0, 3.0, 5.0]])  # boxes of zero height
    grid = BoxGrid(line)
    si, zi = grid.candidates(np.array([1.0, 2.0, 2.0]), np.array([5.0, 5.0, 5.1]))
    assert si.tolist() == [0, 0, 1] and zi.tolist() == [0, 1, 1]
    point = BoxGrid(np.array([[4.0, 4.0, 4.0, 4.0]]))
    si, zi = point.candidates(np.array([4.0, 4.0]), np.array([4.0, 4.1]))
    assert si.tolist() == [0] and zi.tolist() == [0]


class _Zones:
    """What bbox_candidates asks of a layer: its zones, their geometries, a tree, a cache."""

    def __init__(self, geoms):
        self.geoms, self.zones, self._cache = geoms, list(range(len(geoms))), {}

    def prepared(self):
        return self.geoms

    def tree(self):
        return shapely.STRtree(self.geoms)


def test_very_uneven_zones_fall_back_to_the_tree():
    """Many zones over everything and many tiny ones: too many grid entries, so the tree."""
    from neve.geo.layers.vector import bbox_candidates, box_grid

    rng = np.random.default_rng(5)
    big = [shapely.box(-1 - k * 0.01, -1, 51, 31) for k in range(100)]
    boxes = np.concatenate([big, _boxes(rng, 100, size=0.06)])
    layer = _Zones(boxes)
    assert not box_grid(layer).usable
    x, y = rng.uniform(-2, 52, 5000), rng.uniform(-2, 32, 5000)
    got = bbox_candidates(layer, x, y)
    want = _reference(boxes, x, y)
    np.testing.assert_array_equal(got[0], want[0])
    np.testing.assert_array_equal(got[1], want[1])


def test_a_usable_grid_keeps_its_entry_bound():
    rng = np.random.default_rng(6)
    boxes = _boxes(rng, 3000, size=3.0)
    grid = BoxGrid(shapely.bounds(boxes))
    assert grid.usable and grid.zone.size <= GRID_MAX_ENTRIES_PER_ZONE * len(boxes)
