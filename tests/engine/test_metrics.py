"""DLI arithmetic and uniformity figures against their published definitions."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine import metrics as mx


@pytest.mark.parametrize(
    "ppfd, hours, dli",
    [
        # DLI = PPFD × h × 3600 / 10⁶ (Faust J.E. & Logan J. (2018), HortScience 53(9):1250-1257).
        (200, 16, 11.52),
        (250, 18, 16.2),  # the Cornell CEA lettuce target of about 17 needs a little more than 250 at 18 h
        (1000, 12, 43.2),
        (295.1, 16, 17.0),  # 17 mol m⁻² d⁻¹ (Brechner & Both, Cornell CEA lettuce handbook) over 16 h
    ],
)
def test_dli_worked_examples(ppfd, hours, dli):
    assert_allclose(mx.dli_mol_m2_d(ppfd, hours), dli, rtol=1e-3)
    assert_allclose(mx.ppfd_for_dli(dli, hours), ppfd, rtol=1e-3)
    assert_allclose(mx.photoperiod_for_dli_h(dli, ppfd), hours, rtol=1e-3)


def test_uniformity_definitions():
    # U₀ = E_min/E_avg (EN 12464-1); min/max and CV (Ashdown & Descoteaux 2022).
    v = np.array([[100.0, 200.0], [300.0, 400.0]])
    s = mx.area_weighted_stats(v, np.ones_like(v))
    assert_allclose([s["avg"], s["min"], s["max"]], [250, 100, 400])
    assert_allclose(s["min_over_avg"], 0.4)
    assert_allclose(s["min_over_max"], 0.25)
    assert_allclose(s["cv"], np.std(v) / 250)


def test_area_weighting():
    v = np.array([[100.0, 300.0]])
    s = mx.area_weighted_stats(v, np.array([[3.0, 1.0]]))
    assert_allclose(s["avg"], 150.0)


def test_outline_of_a_single_cell_is_a_square():
    m = np.zeros((3, 3), bool)
    m[1, 1] = True
    segs = mx.mask_outline(m, [0, 1, 2], [0, 1, 2])
    assert sorted(segs) == sorted(
        [[0.5, 0.5, 1.5, 0.5], [0.5, 1.5, 1.5, 1.5], [0.5, 0.5, 0.5, 1.5], [1.5, 0.5, 1.5, 1.5]]
    )
    area, share = mx.share_of_area(m, np.ones((3, 3)))
    assert (area, share) == (1.0, 1 / 9)


def test_outline_merges_runs():
    m = np.ones((2, 4), bool)
    assert len(mx.mask_outline(m, [0, 1, 2, 3], [0, 1])) == 4


def test_value_at_area_share_weights_by_area():
    v = np.array([[10.0, 20.0, 30.0, 40.0]])
    assert mx.value_at_area_share(v, np.ones_like(v), 0.10) == 10.0
    assert mx.value_at_area_share(v, np.ones_like(v), 0.50) == 20.0  # half the area lies at or below 20
    # A small cell barely counts: 10 % of the area lies within the large cell of value 20.
    assert mx.value_at_area_share(v, np.array([[0.01, 1.0, 1.0, 1.0]]), 0.10) == 20.0
