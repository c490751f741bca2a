"""Server-drawn SVG for the layout sheet and exports: a dimensioned plan and zone heatmaps.

Drawn from the same analysis the editor shows, so sheet and editor cannot disagree.
"""

from __future__ import annotations

import math
from html import escape
from typing import Any

import numpy as np

from app.room.models import Room
from app.room.units import format_length
from app.service.colours import colours_at


def viridis(t: np.ndarray) -> np.ndarray:
    """Map colours from the one colour scale (:mod:`app.service.colours`)."""
    return colours_at(t)


def _hex(rgb) -> str:
    r, g, b = (int(round(v)) for v in rgb)
    return f"#{r:02x}{g:02x}{b:02x}"


def plan_svg(room: Room, analysis: dict[str, Any], width_px: float = 640, fixture_rows=None) -> str:
    """Plan to scale with zone outlines, fixtures and their ids, and dimension lines to two walls."""
    units = room.display_units
    margin = 56
    scale = (width_px - 2 * margin) / room.width_m
    height_px = room.length_m * scale + 2 * margin
    if height_px > 760:  # long rooms: fit the height instead
        scale = (760 - 2 * margin) / room.length_m
        height_px = 760
        width_px = room.width_m * scale + 2 * margin

    def sx(x):
        return margin + x * scale

    def sy(y):
        return margin + (room.length_m - y) * scale

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="plan-drawing" viewBox="0 0 {width_px:.0f} {height_px:.0f}" '
        f'width="100%" role="img" aria-label="Plan of {escape(room.name)}">'
    ]
    out.append(
        f'<rect x="{sx(0):.1f}" y="{sy(room.length_m):.1f}" width="{room.width_m * scale:.1f}" '
        f'height="{room.length_m * scale:.1f}" fill="#fff" stroke="#222" stroke-width="2.5"/>'
    )
    for side in room.open_sides:
        x0, y0, x1, y1 = {
            "front": (0, 0, room.width_m, 0),
            "back": (0, room.length_m, room.width_m, room.length_m),
            "left": (0, 0, 0, room.length_m),
            "right": (room.width_m, 0, room.width_m, room.length_m),
        }[side]
        out.append(
            f'<line x1="{sx(x0):.1f}" y1="{sy(y0):.1f}" x2="{sx(x1):.1f}" y2="{sy(y1):.1f}" stroke="#fff" '
            f'stroke-width="3" stroke-dasharray="6 5"/>'
        )
    zones_a = {z["id"]: z for z in analysis["zones"]}
    # Stacked tiers share a place on the plan: their labels (and their fixtures' ids) are set one under another.
    label_row: dict[str, int] = {}
    for i, z in enumerate(room.zones):
        label_row[z.id] = sum(1 for o in room.zones[:i] if abs(o.x_m - z.x_m) < 1e-3 and abs(o.y_m - z.y_m) < 1e-3)
    for z in room.zones:
        out.append(
            f'<rect x="{sx(z.x_m):.1f}" y="{sy(z.y_m + z.length_m):.1f}" width="{z.width_m * scale:.1f}" '
            f'height="{z.length_m * scale:.1f}" fill="rgba(76,153,92,0.12)" stroke="#4c995c"/>'
        )
        a = zones_a.get(z.id)
        label = f"{z.name}: {a['crop_name'] if a else z.crop_id}, canopy {format_length(z.canopy_height_m, units)}"
        out.append(
            f'<text x="{sx(z.x_m) + 3:.1f}" y="{sy(z.y_m + z.length_m) + 11 + 10 * label_row[z.id]:.1f}" '
            f'font-size="9" fill="#2f5a39">'
            f"{escape(label)}</text>"
        )
    for o in room.obstacles:
        out.append(
            f'<rect x="{sx(o.x_m):.1f}" y="{sy(o.y_m + o.length_m):.1f}" width="{o.width_m * scale:.1f}" '
            f'height="{o.length_m * scale:.1f}" fill="none" stroke="#786e64" stroke-dasharray="3 3"/>'
        )
    types = {t.id: t for t in room.fixture_types}
    seen_at: dict[tuple[float, float], int] = {}
    for f in room.fixtures:
        g = types[f.type_id].geometry
        stack = seen_at.get((round(f.x_m, 3), round(f.y_m, 3)), 0)
        seen_at[(round(f.x_m, 3), round(f.y_m, 3))] = stack + 1
        L, W = max(g.length_m * scale, 6), max((g.width_m if g.kind != "bar" else g.bar_width_m) * scale, 4)
        cx, cy = sx(f.x_m), sy(f.y_m)
        fill = "#f6d365" if f.on else "#ddd"
        if g.kind == "point":
            out.append(f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="6" fill="{fill}" stroke="#7a5d00"/>')
        else:
            out.append(
                f'<rect x="{-L / 2:.1f}" y="{-W / 2:.1f}" width="{L:.1f}" height="{W:.1f}" fill="{fill}" '
                f'fill-opacity="0.8" stroke="#7a5d00" transform="translate({cx:.1f},{cy:.1f}) rotate({-f.rotation_deg:g})"/>'
            )
        out.append(
            f'<text x="{cx:.1f}" y="{cy + 4 + 12 * stack:.1f}" font-size="11" font-weight="700" text-anchor="middle" '
            f'class="fixture-id">{escape(f.id)}</text>'
        )
        # Dimension lines from the left and the front walls to the fixture centre.
        out.append(
            f'<line x1="{sx(0):.1f}" y1="{cy:.1f}" x2="{cx:.1f}" y2="{cy:.1f}" stroke="#2b59c3" stroke-width="0.7" '
            f'stroke-dasharray="2 2"/>'
        )
        out.append(
            f'<line x1="{cx:.1f}" y1="{sy(0):.1f}" x2="{cx:.1f}" y2="{cy:.1f}" stroke="#2b59c3" stroke-width="0.7" '
            f'stroke-dasharray="2 2"/>'
        )
    out.append(
        f'<text x="{sx(room.width_m / 2):.1f}" y="{sy(0) + 28:.1f}" text-anchor="middle" font-size="11">front wall · '
        f"width {escape(format_length(room.width_m, units))}</text>"
    )
    out.append(
        f'<text x="{sx(0) - 30:.1f}" y="{sy(room.length_m / 2):.1f}" text-anchor="middle" font-size="11" '
        f'transform="rotate(-90 {sx(0) - 30:.1f} {sy(room.length_m / 2):.1f})">left wall · length '
        f"{escape(format_length(room.length_m, units))}</text>"
    )
    out.append("</svg>")
    return "".join(out)


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
    for k in range(11):
        t = k / 10
        out.append(
            f'<rect x="{width_px + 8:.1f}" y="{h_px * (1 - t) - h_px / 10:.1f}" width="12" height="{h_px / 10 + 0.5:.1f}" '
            f'fill="{_hex(viridis(np.array(t)))}"/>'
        )
    for t in (0.0, 0.5, 1.0):
        out.append(
            f'<text x="{width_px + 24:.1f}" y="{h_px * (1 - t) + 4 - (8 if t == 1 else 0) + (0 if t else -4):.1f}" '
            f'font-size="9">{vmin + t * span:.0f}</text>'
        )
    out.append("</svg>")
    return "".join(out)
