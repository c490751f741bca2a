"""Shadow tests against an explicit reference: every mirror copy of every box, slab-tested pair by pair.

The reference builds the lattice copies itself (a point x in cell i of the unfolded mirror lattice
is the image i·W + x for even i, i·W + W − x for odd i) and uses the slab method (Kay & Kajiya,
"Ray tracing complex scenes", SIGGRAPH 1986) in float64; nothing here calls the engine's geometry.
"""

import numpy as np
import pytest

from app.engine.scene import Box
from app.engine.shadows import boxes_blocked, shadow_candidates


def _image(x, i, size):
    return i * size + (x if i % 2 == 0 else size - x)


def reference_blocked(q, p, boxes, i, j, W, L):
    out = np.zeros((len(q), len(p)), dtype=bool)
    for a in range(min(0, i), max(0, i) + 1):
        for b in range(min(0, j), max(0, j) + 1):
            for bx in boxes:
                xa, xb = sorted((_image(bx.x0_m, a, W), _image(bx.x1_m, a, W)))
                ya, yb = sorted((_image(bx.y0_m, b, L), _image(bx.y1_m, b, L)))
                lo, hi = np.array([xa, ya, bx.z0_m]), np.array([xb, yb, bx.z1_m])
                for n, qn in enumerate(q):
                    d = p - qn
                    with np.errstate(divide="ignore", invalid="ignore"):
                        t1, t2 = (lo - qn) / d, (hi - qn) / d
                    inside = (qn > lo) & (qn < hi)
                    t1 = np.where(d == 0, np.where(inside, -np.inf, np.inf), t1)
                    t2 = np.where(d == 0, np.inf, t2)
                    tmin = np.max(np.minimum(t1, t2), axis=1)
                    tmax = np.min(np.maximum(t1, t2), axis=1)
                    out[n] |= (tmax > tmin + 1e-9) & (tmax > 1e-9) & (tmin < 1 - 1e-9)
    return out


def _random_boxes(rng, W, L, n=2):
    out = []
    for _ in range(n):
        x0, y0, z0 = rng.uniform(0, W - 0.3), rng.uniform(0, L - 0.3), rng.uniform(0.3, 1.2)
        out.append(
            Box(x0, y0, z0, x0 + rng.uniform(0.02, 0.3), y0 + rng.uniform(0.02, 0.3), z0 + rng.uniform(0.02, 0.4))
        )
    return tuple(out)


@pytest.mark.parametrize("seed", range(6))
def test_folded_segments_match_explicit_mirror_copies(seed):
    # Image nodes up to 6 cells away, far (folded walk) and near (explicit copies) alike.
    rng = np.random.default_rng(seed)
    W, L = 1.2, 0.9
    boxes = _random_boxes(rng, W, L)
    i, j = (int(v) for v in rng.integers(-6, 7, 2))
    for count in (1, 12):
        nodes = np.column_stack([rng.uniform(0, W, count), rng.uniform(0, L, count), np.full(count, 1.5)])
        img = np.column_stack([_image(nodes[:, 0], i, W), _image(nodes[:, 1], j, L), nodes[:, 2]])
        pts = np.column_stack([rng.uniform(0, W, 200), rng.uniform(0, L, 200), np.full(200, rng.uniform(0, 0.4))])
        ref = reference_blocked(img, pts, boxes, i, j, W, L)
        ours = boxes_blocked(img, pts, boxes, (W, L))
        # float32 slab near grazing contacts may differ in a handful of pairs out of thousands.
        assert np.mean(ours != ref) < 2e-3, (i, j, count)
        # The candidate filter never misses a shaded point.
        cand = shadow_candidates(img, pts, boxes, (W, L))
        assert not np.any(ref.any(axis=0) & ~cand)


def test_unfolded_segments_match_reference():
    rng = np.random.default_rng(42)
    nodes = np.column_stack([rng.uniform(0, 1, 30), rng.uniform(0, 1, 30), rng.uniform(1, 1.5, 30)])
    pts = rng.uniform(0, 1, (400, 3)) * [1, 1, 0.4]
    boxes = (Box(0.2, 0.2, 0.5, 0.6, 0.5, 0.7), Box(0.5, 0.1, 0.2, 0.9, 0.3, 0.9))
    ref = reference_blocked(nodes, pts, boxes, 0, 0, 1.0, 1.0)
    assert ref.mean() > 0.2
    assert np.mean(boxes_blocked(nodes, pts, boxes) != ref) < 2e-3
