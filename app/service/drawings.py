"""Server-drawn SVG of a zone heatmap for exports (the sheet draws its own: :mod:`app.service.sheet_plan`).

Drawn from the same analysis the editor shows, so sheet and editor cannot disagree.
"""

from __future__ import annotations

import math
from html import escape
from typing import Any

import numpy as np

from app.room.units import fmt_number
from app.service.colours import colours_at


def viridis(t: np.ndarray) -> np.ndarray:
    """Map colours from the one colour scale (:mod:`app.service.colours`)."""
    return colours_at(t)


def _hex(rgb) -> str:
    r, g, b = (int(round(v)) for v in rgb)
    return f"#{r:02x}{g:02x}{b:02x}"


def heatmap_svg(
    zone: dict[str, Any],
    units: str,
    quantity: str = "ppfd",
    width_px: float = 300,
    max_cells: int = 70,
    max_height_px: float = 260,
) -> str:
    """A zone's PPFD (or DLI) heatmap with a colour scale and its dark/hot outlines."""
    g = zone["grid"]
    values = np.asarray(g[quantity], float)
    xs, ys = np.asarray(g["x_m"]), np.asarray(g["y_m"])
    step = max(1, math.ceil(max(values.shape) / max_cells))
    # Coarsen by block averages so a large zone stays a small drawing.
    ny, nx = values.shape
    v = np.array([[values[j : j + step, i : i + step].mean() for i in range(0, nx, step)] for j in range(0, ny, step)])
    xc = np.array([xs[i : i + step].mean() for i in range(0, nx, step)])
    yc = np.array([ys[j : j + step].mean() for j in range(0, ny, step)])
    x0, y0, w, l = zone["rect"]
    scale = width_px / w
    h_px = l * scale
    if h_px > max_height_px:
        scale = max_height_px / l
        h_px, width_px = max_height_px, w * scale
    vmin, vmax = float(values.min()), float(values.max())
    span = vmax - vmin if vmax > vmin else 1.0
    colours = viridis((v - vmin) / span)
    cw = step * g["spacing_m"] * scale
    bar_w = 70
    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width_px + bar_w:.0f} {h_px + 16:.0f}" '
        f'width="100%" role="img" aria-label="{escape(quantity.upper())} heatmap of {escape(zone["name"])}">'
    ]
    for j in range(v.shape[0]):
        for i in range(v.shape[1]):
            px = (xc[i] - x0) * scale - cw / 2
            py = h_px - (yc[j] - y0) * scale - cw / 2
            out.append(
                f'<rect x="{px:.1f}" y="{py:.1f}" width="{cw + 0.4:.1f}" height="{cw + 0.4:.1f}" fill="{_hex(colours[j, i])}"/>'
            )
    for kind, colour, dash in (("dark", "#ffffff", "2 2"), ("hot", "#ff3b30", "")):
        for sx0, sy0, sx1, sy1 in zone[kind]["outline"]:
            out.append(
                f'<line x1="{(sx0 - x0) * scale:.1f}" y1="{h_px - (sy0 - y0) * scale:.1f}" x2="{(sx1 - x0) * scale:.1f}" '
                f'y2="{h_px - (sy1 - y0) * scale:.1f}" stroke="{colour}" stroke-width="1.5" stroke-dasharray="{dash}"/>'
            )
    out.append(f'<rect x="0" y="0" width="{width_px:.1f}" height="{h_px:.1f}" fill="none" stroke="#222"/>')
    # The colour bar: ten slots, slot k drawn in the colour at its middle; the ends are labelled with the
    # map's minimum and maximum, at the bar's bottom and top edges, inside the drawing.
    slots = 10
    for k in range(slots):
        out.append(
            f'<rect x="{width_px + 8:.1f}" y="{h_px * (1 - (k + 1) / slots):.2f}" width="12" height="{h_px / slots + 0.3:.2f}" '
            f'fill="{_hex(viridis(np.array((k + 0.5) / slots)))}"/>'
        )
    for t, dy in ((0.0, 0.0), (0.5, 3.0), (1.0, 9.0)):
        out.append(
            f'<text x="{width_px + 24:.1f}" y="{h_px * (1 - t) + dy:.1f}" font-size="9">{fmt_number(vmin + t * span, 0)}</text>'
        )
    out.append("</svg>")
    return "".join(out)
