"""Figures a grower decides from: averages, uniformity, DLI, areas in and out of band.

References
----------
- DLI [mol m⁻² d⁻¹] = PPFD [µmol m⁻² s⁻¹] × photoperiod [h] × 3600 / 10⁶
  (Faust J.E. & Logan J. (2018), HortScience 53(9):1250-1257; ANSI/ASABE S640 (2017)).
- Uniformity U₀ = E_min / E_avg (EN 12464-1); min/max and the coefficient of
  variation as reported in horticulture (Ashdown I. & Descoteaux A. (2022),
  "Lighting uniformity in horticulture").
"""

from __future__ import annotations

import numpy as np

SECONDS_PER_HOUR = 3600.0
UMOL_PER_MOL = 1e6
#: DLI per unit PPFD and hour of light: 3600 s h⁻¹ / 10⁶ µmol mol⁻¹ (Faust & Logan 2018).
DLI_FACTOR = SECONDS_PER_HOUR / UMOL_PER_MOL


def dli_mol_m2_d(ppfd_umol_m2_s, photoperiod_h):
    """Daily light integral from a constant PPFD over the photoperiod."""
    return np.asarray(ppfd_umol_m2_s) * np.asarray(photoperiod_h) * SECONDS_PER_HOUR / UMOL_PER_MOL


def ppfd_for_dli(dli_mol_m2_d_, photoperiod_h):
    """PPFD that gives a DLI over the photoperiod (inverse of :func:`dli_mol_m2_d`)."""
    return np.asarray(dli_mol_m2_d_) * UMOL_PER_MOL / (np.asarray(photoperiod_h) * SECONDS_PER_HOUR)


def photoperiod_for_dli_h(dli_mol_m2_d_, ppfd_umol_m2_s):
    """Hours of light at a PPFD that give a DLI (inf where the PPFD is 0)."""
    ppfd = np.asarray(ppfd_umol_m2_s, dtype=float)
    with np.errstate(divide="ignore"):
        return np.asarray(dli_mol_m2_d_) * UMOL_PER_MOL / (ppfd * SECONDS_PER_HOUR)


def area_weighted_stats(values, cell_area_m2) -> dict[str, float]:
    """avg, min, max, uniformity (min/avg, min/max) and coefficient of variation, area-weighted."""
    v = np.asarray(values, dtype=float).ravel()
    a = np.asarray(cell_area_m2, dtype=float).ravel()
    total = a.sum()
    avg = float((v * a).sum() / total) if total > 0 else 0.0
    vmin, vmax = float(v.min()), float(v.max())
    std = float(np.sqrt(((v - avg) ** 2 * a).sum() / total)) if total > 0 else 0.0
    return {
        "avg": avg,
        "min": vmin,
        "max": vmax,
        "min_over_avg": vmin / avg if avg > 0 else 0.0,
        "min_over_max": vmin / vmax if vmax > 0 else 0.0,
        "max_over_avg": vmax / avg if avg > 0 else 0.0,
        "cv": std / avg if avg > 0 else 0.0,
    }


def share_of_area(mask, cell_area_m2) -> tuple[float, float]:
    """(area [m²], share of the total) where ``mask`` is true."""
    a = np.asarray(cell_area_m2, dtype=float)
    m = np.asarray(mask, dtype=bool)
    area = float(a[m].sum())
    return area, area / float(a.sum()) if a.sum() > 0 else 0.0


def value_at_area_share(values, cell_area_m2, share: float) -> float:
    """The value below which ``share`` of the area lies (an area-weighted quantile, lower side)."""
    v = np.asarray(values, dtype=float).ravel()
    a = np.asarray(cell_area_m2, dtype=float).ravel()
    order = np.argsort(v)
    cum = np.cumsum(a[order]) / a.sum()
    return float(v[order][min(np.searchsorted(cum, share), v.size - 1)])


def mask_outline(mask, x_m, y_m) -> list[list[float]]:
    """Boundary of the cells where ``mask`` is true, as segments [x0, y0, x1, y1] in metres.

    Each grid point stands for the cell halfway to its neighbours; collinear
    edges are merged so an outline stays small enough to draw on a plan.
    """
    m = np.asarray(mask, dtype=bool)
    if not m.any():
        return []
    x, y = np.asarray(x_m, float), np.asarray(y_m, float)

    def edges(v):
        if v.size == 1:
            return np.array([v[0] - 0.5, v[0] + 0.5])
        mid = 0.5 * (v[1:] + v[:-1])
        return np.concatenate([[v[0] - (mid[0] - v[0])], mid, [v[-1] + (v[-1] - mid[-1])]])

    xe, ye = edges(x), edges(y)
    pad = np.pad(m, 1)
    segs: list[list[float]] = []
    # Horizontal edges: between rows j-1 and j where the mask changes.
    diff_h = pad[1:, 1:-1] != pad[:-1, 1:-1]  # (ny+1, nx)
    for j in range(diff_h.shape[0]):
        row = diff_h[j]
        i = 0
        while i < row.size:
            if row[i]:
                k = i
                while k + 1 < row.size and row[k + 1]:
                    k += 1
                segs.append([float(xe[i]), float(ye[j]), float(xe[k + 1]), float(ye[j])])
                i = k + 1
            else:
                i += 1
    diff_v = pad[1:-1, 1:] != pad[1:-1, :-1]  # (ny, nx+1)
    for i in range(diff_v.shape[1]):
        col = diff_v[:, i]
        j = 0
        while j < col.size:
            if col[j]:
                k = j
                while k + 1 < col.size and col[k + 1]:
                    k += 1
                segs.append([float(xe[i]), float(ye[j]), float(xe[i]), float(ye[k + 1])])
                j = k + 1
            else:
                j += 1
    return segs


def mask_bounds(mask, x_m, y_m) -> list[float] | None:
    """[x0, y0, x1, y1] of the true cells' points, or None."""
    m = np.asarray(mask, dtype=bool)
    if not m.any():
        return None
    jj, ii = np.nonzero(m)
    x, y = np.asarray(x_m), np.asarray(y_m)
    return [float(x[ii.min()]), float(y[jj.min()]), float(x[ii.max()]), float(y[jj.max()])]
