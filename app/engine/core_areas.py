"""Averages over nested squares centred under one point (a fixture, or a spot the grower picks).

A maker's PPFD map over a wide area hides how fast the light falls off; the
averages over squares of 1, 2, 3, 4 and 5 ft (or 0.3 to 1.5 m) centred under
the fixture show it. Each square's figures are area-weighted over the points
inside it, the way :func:`app.engine.metrics.area_weighted_stats` weights a
zone. :func:`cell_centred_grid` gives a grid whose cells tile every square
exactly, so the average is the midpoint rule of the integral over the square.

References
----------
- The midpoint rule's error for a smooth function over a cell of side s is
  O(s²); checked against the configuration factor of a Lambertian panel (Howell
  J.R., "A Catalog of Radiation Heat Transfer Configuration Factors", case B-3)
  integrated over each square with scipy.integrate.dblquad in
  tests/engine/test_core_areas.py.
"""

from __future__ import annotations

import numpy as np

from app.engine.scene import Grid

FT_SIDES_M = tuple(n * 0.3048 for n in (1, 2, 3, 4, 5))
METRIC_SIDES_M = (0.3, 0.6, 0.9, 1.2, 1.5)
_INSIDE_TOL_M = 1e-9


def cell_centred_grid(
    centre_x_m: float, centre_y_m: float, z_m: float, step_m: float, cells_per_step: int, steps: int, id: str = "core"
) -> Grid:
    """A grid of cell centres tiling the square of side ``steps × step_m`` centred at (x, y).

    ``step_m`` is the growth of the half side from one nested square to the next
    (half the side step); cells of side step_m / cells_per_step tile each square exactly.
    """
    s = step_m / cells_per_step
    half = steps * step_m
    return Grid(id, centre_x_m - half + 0.5 * s, centre_y_m - half + 0.5 * s, 2 * half - s, 2 * half - s, z_m, s)


def cell_centred_areas(grid: Grid) -> np.ndarray:
    """Each point's cell area on a :func:`cell_centred_grid` (s², also at the edges: the points are centres)."""
    return np.full((grid.ny, grid.nx), grid.spacing_m**2)


def nested_square_stats(
    x_m, y_m, values, cell_area_m2, centre_x_m: float, centre_y_m: float, sides_m, threshold=None
) -> list[dict]:
    """Average, min, max, min/avg and share above ``threshold`` over each square of side in ``sides_m``.

    x_m (nx,), y_m (ny,) : axes of the value grid; values and cell_area_m2 (ny, nx).
    A point belongs to a square when it lies inside it (edges included). A square
    that holds no point gives None figures.
    """
    xs, ys = np.asarray(x_m, float), np.asarray(y_m, float)
    v = np.asarray(values, float)
    w = np.asarray(cell_area_m2, float)
    out = []
    for side in sides_m:
        h = 0.5 * side + _INSIDE_TOL_M
        mi = np.abs(xs - centre_x_m) <= h
        mj = np.abs(ys - centre_y_m) <= h
        row = {"side_m": float(side), "avg": None, "min": None, "max": None, "min_over_avg": None, "share_above": None}
        if mi.any() and mj.any():
            sub = v[np.ix_(mj, mi)]
            wt = w[np.ix_(mj, mi)]
            avg = float((sub * wt).sum() / wt.sum())
            row.update(
                avg=avg,
                min=float(sub.min()),
                max=float(sub.max()),
                min_over_avg=float(sub.min() / avg) if avg > 0 else None,
                area_m2=float(wt.sum()),
            )
            if threshold is not None:
                row["share_above"] = float(wt[sub >= threshold].sum() / wt.sum())
        out.append(row)
    return out
