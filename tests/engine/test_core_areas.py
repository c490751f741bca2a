"""Nested-square averages of a Lambertian panel against the Howell B-3 configuration factor integrated
over each square with SciPy."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate

from app.engine.compute import compute_scene
from app.engine.core_areas import FT_SIDES_M, METRIC_SIDES_M, cell_centred_areas, cell_centred_grid, nested_square_stats
from app.engine.distributions import lambertian
from app.engine.scene import Emitter, Enclosure
from tests.engine.test_direct import rect_factor


def panel_map(h, step_m, length_m=0.6, width_m=0.3, flux=420.0, cells=6):
    centre = 3.0
    e = Emitter("p", centre, centre, h, flux, lambertian(), "panel", length_m, width_m)
    g = cell_centred_grid(centre, centre, 0.0, step_m, cells, 5)
    (zl,) = compute_scene((e,), (g,), Enclosure(6.0, 6.0, 3.0))
    return g, zl.ppfd.astype(float), centre


def howell_square_average(side, h, length_m=0.6, width_m=0.3, flux=420.0):
    # E(x, y) = M · F(x, y), M = Φ / (L W), F by Howell B-3 corner rectangles; averaged by scipy dblquad.
    m = flux / (length_m * width_m)
    half = side / 2

    def e(y, x):
        return m * rect_factor(-length_m / 2 - x, length_m / 2 - x, -width_m / 2 - y, width_m / 2 - y, h)

    val, _ = integrate.dblquad(e, -half, half, -half, half, epsabs=1e-6, epsrel=1e-7)
    return val / side**2


@pytest.mark.parametrize("h, sides, step", [(0.3, FT_SIDES_M, 0.1524), (0.6, METRIC_SIDES_M, 0.15)])
def test_nested_square_averages_match_howell_b3_integrated(h, sides, step):
    g, ppfd, c = panel_map(h, step)
    rows = nested_square_stats(g.x_m, g.y_m, ppfd, cell_centred_areas(g), c, c, sides, threshold=200.0)
    for row, side in zip(rows, sides, strict=True):
        assert_allclose(row["side_m"], side)
        assert_allclose(row["area_m2"], side * side, rtol=1e-9)  # the cells tile each square exactly
        assert_allclose(row["avg"], howell_square_average(side, h), rtol=0.005)
    # The averages fall as the square grows; a panel's peak is under its centre.
    avgs = [r["avg"] for r in rows]
    assert all(a > b for a, b in zip(avgs, avgs[1:], strict=False))
    assert rows[0]["max"] == pytest.approx(ppfd.max())


def test_min_over_avg_and_share_above_against_the_closed_form():
    h, side = 0.45, 0.9
    g, ppfd, c = panel_map(h, 0.15)
    (row,) = nested_square_stats(g.x_m, g.y_m, ppfd, cell_centred_areas(g), c, c, [side], threshold=300.0)
    # Reference on the same cell centres from the closed form (midpoint rule of the same integral).
    X, Y = np.meshgrid(g.x_m - c, g.y_m - c)
    inside = (np.abs(X) <= side / 2) & (np.abs(Y) <= side / 2)
    ref = 420.0 / 0.18 * rect_factor(-0.3 - X, 0.3 - X, -0.15 - Y, 0.15 - Y, h)
    assert_allclose(row["min"], ref[inside].min(), rtol=0.005)
    assert_allclose(row["min_over_avg"], ref[inside].min() / ref[inside].mean(), rtol=0.007)
    assert abs(row["share_above"] - np.mean(ref[inside] >= 300.0)) <= 0.02


def test_a_square_with_no_point_gives_no_figures():
    rows = nested_square_stats([0.0, 1.0], [0.0, 1.0], np.ones((2, 2)), np.ones((2, 2)), 5.0, 5.0, [0.3])
    assert rows[0]["avg"] is None
