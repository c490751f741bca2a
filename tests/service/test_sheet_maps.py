"""The sheet's map drawing on a made-up zone whose dark and hot cells are known by construction."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np

from app.service.sheet_maps import ColourScale, heatmap_svg, legend_svg

SVG = "{http://www.w3.org/2000/svg}"


def _zone(ppfd: np.ndarray, spacing: float = 0.1) -> dict:
    ny, nx = ppfd.shape
    xs, ys = np.arange(nx) * spacing + spacing / 2, np.arange(ny) * spacing + spacing / 2
    dli = ppfd * 16 * 3600 / 1e6  # DLI = PPFD × photoperiod × 3600 / 10⁶ (Faust & Logan 2018)
    return {
        "id": "z",
        "name": "Test zone",
        "rect": [0.0, 0.0, nx * spacing, ny * spacing],
        "grid": {"x_m": xs.tolist(), "y_m": ys.tolist(), "spacing_m": spacing, "ppfd": ppfd.tolist(), "dli": dli.tolist()},
        "target": {"dli_min": 10.0, "ppfd_stress": 600.0, "ppfd_min": 173.6, "ppfd_max": 300.0},
        "ppfd": {"min": float(ppfd.min()), "max": float(ppfd.max())},
    }


def test_hatches_cover_exactly_the_dark_and_hot_cells():
    ppfd = np.full((4, 5), 250.0)
    ppfd[0, :2] = 100.0  # DLI 5.76 < 10: dark (two cells in one run)
    ppfd[3, 4] = 700.0  # above 600: hot
    ppfd[2, 0] = 150.0  # DLI 8.64 < 10: dark
    svg = ET.fromstring(heatmap_svg(_zone(ppfd), "metric", ColourScale(100.0, 700.0), 60, 60))
    groups = {g.get("class"): g for g in svg.iter(SVG + "g")}
    dark = list(groups["map-hatch-dark"])
    hot = list(groups["map-hatch-hot"])
    assert len(dark) == 2 and len(hot) == 1
    widths = sorted(float(r.get("width")) for r in dark)
    assert abs(widths[1] / widths[0] - 2) < 0.01  # a run of two cells is twice as wide as one


def test_scale_steps_and_ends():
    sc = ColourScale(100.0, 700.0)
    # The maximum itself is in the top step, the minimum in the bottom one; each step is one colour.
    assert sc.step_of(np.array([100.0, 159.9, 160.0, 699.9, 700.0])).tolist() == [0, 0, 1, 9, 9]
    legend = ET.fromstring(legend_svg(sc))
    texts = {t.get("class"): t.text for t in legend.iter(SVG + "text")}
    assert texts["legend-min"] == "100" and texts["legend-max"] == "700"
    fills = [r.get("fill") for r in legend.iter(SVG + "rect") if r.get("class") == "legend-step"]
    assert len(fills) == len(set(fills)) == 10
