"""The sheet's PPFD maps: one colour scale for every map, axes in room units, dark and hot areas hatched.

Drawn in millimetres on paper like the plans (see :mod:`app.service.sheet_plan`). The scale runs from the
lowest to the highest of the crops' PPFD bands and the maps' own values, in equal steps; each step is one
colour, drawn once in the legend, and a cell takes the colour of the step its value falls in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from html import escape
from typing import Any

import numpy as np

from app.room.units import axis_unit, axis_value, fmt_number
from app.service.colours import colours_at
from app.service.sheet_labels import FONT, PT_MM

TEXT_MM = 7.5 * PT_MM
STEPS = 10
MAX_CELLS = 60  # cells across the longest side of a printed map (block averages beyond that)
HATCH = {"dark": ("#ffffff", 45), "hot": ("#d7191c", -45)}  # stroke colour and angle of each hatch


@dataclass(frozen=True)
class ColourScale:
    lo: float
    hi: float
    steps: int = STEPS

    @property
    def edges(self) -> list[float]:
        return [self.lo + (self.hi - self.lo) * i / self.steps for i in range(self.steps + 1)]

    def step_of(self, v: np.ndarray) -> np.ndarray:
        """Step index 0..steps-1 of each value; the maximum itself falls in the top step."""
        span = self.hi - self.lo if self.hi > self.lo else 1.0
        return np.clip(np.floor((np.asarray(v, float) - self.lo) / span * self.steps), 0, self.steps - 1).astype(int)

    def colour(self, i: int) -> str:
        r, g, b = (int(round(c)) for c in colours_at(np.array((i + 0.5) / self.steps)))
        return f"#{r:02x}{g:02x}{b:02x}"


def shared_scale(zones: list[dict[str, Any]]) -> ColourScale:
    """From the lowest band bottom or map minimum to the highest band top or map maximum over all zones."""
    lo = min(min(z["target"]["ppfd_min"], z["ppfd"]["min"]) for z in zones)
    hi = max(max(z["target"]["ppfd_max"], z["ppfd"]["max"]) for z in zones)
    return ColourScale(max(0.0, lo), hi)


def _nice_step(span: float, target_ticks: int = 4) -> float:
    raw = span / max(target_ticks, 1)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1
    return next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)


def _coarsen(a: np.ndarray, step: int) -> np.ndarray:
    ny, nx = a.shape
    return np.array([[a[j : j + step, i : i + step].mean() for i in range(0, nx, step)] for j in range(0, ny, step)])


def _runs(mask: np.ndarray):
    """Horizontal runs of True cells: (row, first column, last column + 1)."""
    for j, row in enumerate(mask):
        i = 0
        while i < len(row):
            if row[i]:
                k = i
                while k < len(row) and row[k]:
                    k += 1
                yield j, i, k
                i = k
            else:
                i += 1


def heatmap_svg(zone: dict[str, Any], units: str, scale: ColourScale, width_mm: float, max_height_mm: float) -> str:
    """One zone's PPFD map on the shared scale, with axes from the room's walls."""
    g = zone["grid"]
    ppfd, dli = np.asarray(g["ppfd"], float), np.asarray(g["dli"], float)
    xs, ys, d = np.asarray(g["x_m"]), np.asarray(g["y_m"]), g["spacing_m"]
    x0, y0, w_m, l_m = zone["rect"]
    left, bottom = 8.5, 9.0  # axis labels
    k = min((width_mm - left - 2) / w_m, (max_height_mm - bottom - 2) / l_m)
    pw, ph = w_m * k, l_m * k
    zid = escape(zone["id"])

    def X(x):
        return left + (x - x0) * k

    def Y(y):
        return 2 + (y0 + l_m - y) * k

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="sheet-map" data-zone="{zid}" viewBox="0 0 {left + pw + 2:.2f} {ph + bottom + 2:.2f}" '
        f'width="{left + pw + 2:.2f}mm" height="{ph + bottom + 2:.2f}mm" font-family="{FONT}" role="img" '
        f'aria-label="PPFD map of {escape(zone["name"])}">',
        "<defs>",
    ]
    for kind, (stroke, angle) in HATCH.items():
        out.append(
            f'<pattern id="hatch-{kind}-{zid}" width="1.6" height="1.6" patternUnits="userSpaceOnUse" '
            f'patternTransform="rotate({angle})"><line x1="0" y1="0" x2="0" y2="1.6" stroke="{stroke}" stroke-width="0.45"/></pattern>'
        )
    out.append("</defs>")
    step = max(1, math.ceil(max(ppfd.shape) / MAX_CELLS))
    v = _coarsen(ppfd, step)
    xc = np.array([xs[i : i + step].mean() for i in range(0, len(xs), step)])
    yc = np.array([ys[j : j + step].mean() for j in range(0, len(ys), step)])
    idx = scale.step_of(v)
    cw = step * d * k
    for j in range(v.shape[0]):
        for i in range(v.shape[1]):
            out.append(
                f'<rect x="{X(xc[i]) - cw / 2:.2f}" y="{Y(yc[j]) - cw / 2:.2f}" width="{cw + 0.05:.2f}" '
                f'height="{cw + 0.05:.2f}" fill="{scale.colour(int(idx[j, i]))}"/>'
            )
    masks = {"dark": dli < zone["target"]["dli_min"], "hot": ppfd > zone["target"]["ppfd_stress"]}
    for kind, mask in masks.items():
        rects = [
            f'<rect x="{X(xs[a]) - d * k / 2:.2f}" y="{Y(ys[j]) - d * k / 2:.2f}" width="{(b - a) * d * k + 0.02:.2f}" height="{d * k + 0.02:.2f}"/>'
            for j, a, b in _runs(mask)
        ]
        if rects:
            out.append(f'<g class="map-hatch-{kind}" fill="url(#hatch-{kind}-{zid})">' + "".join(rects) + "</g>")
    out.append(f'<rect x="{left:.2f}" y="2" width="{pw:.2f}" height="{ph:.2f}" fill="none" stroke="#1a1a1a" stroke-width="0.3"/>')
    out += _axes(zone, units, X, Y, left, ph)
    out.append("</svg>")
    return "".join(out)


def _axes(zone, units, X, Y, left, ph) -> list[str]:
    x0, y0, w_m, l_m = zone["rect"]
    unit = axis_unit(units)
    out = []
    for lo_m, hi_m, horizontal in ((x0, x0 + w_m, True), (y0, y0 + l_m, False)):
        a, b = axis_value(lo_m, units), axis_value(hi_m, units)
        st = _nice_step(b - a, 3)
        t = math.ceil(a / st - 1e-9) * st
        while t <= b + 1e-9:
            m = t * (0.3048 if units == "imperial" else 1.0)
            label = f"{t:g}"
            if horizontal:
                x = X(m)
                out.append(f'<line x1="{x:.2f}" y1="{2 + ph:.2f}" x2="{x:.2f}" y2="{3.2 + ph:.2f}" stroke="#1a1a1a" stroke-width="0.25"/>')
                out.append(f'<text class="map-axis" x="{x:.2f}" y="{3.4 + ph + 0.95 * TEXT_MM:.2f}" font-size="{TEXT_MM:.3f}" text-anchor="middle">{label}</text>')
            else:
                y = Y(m)
                out.append(f'<line x1="{left - 1.2:.2f}" y1="{y:.2f}" x2="{left:.2f}" y2="{y:.2f}" stroke="#1a1a1a" stroke-width="0.25"/>')
                out.append(f'<text class="map-axis" x="{left - 1.6:.2f}" y="{y + 0.35 * TEXT_MM:.2f}" font-size="{TEXT_MM:.3f}" text-anchor="end">{label}</text>')
            t += st
    out.append(
        f'<text class="map-axis-title" x="{left:.2f}" y="{3.4 + ph + 2.1 * TEXT_MM:.2f}" font-size="{TEXT_MM:.3f}">'
        f"{unit} from the left wall →</text>"
    )
    return out


def legend_svg(scale: ColourScale, width_mm: float = 120.0) -> str:
    """The shared colour scale: each step once, every step edge labelled (minimum and maximum included)."""
    sw = (width_mm - 4) / scale.steps
    h = 4.0
    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="sheet-map-legend" viewBox="0 0 {width_mm:.2f} {h + 9:.2f}" '
        f'width="{width_mm:.2f}mm" height="{h + 9:.2f}mm" font-family="{FONT}" role="img" aria-label="PPFD colour scale">'
    ]
    for i in range(scale.steps):
        out.append(
            f'<rect class="legend-step" data-step="{i}" x="{2 + i * sw:.2f}" y="1" width="{sw:.2f}" height="{h:.2f}" fill="{scale.colour(i)}"/>'
        )
    out.append(f'<rect x="2" y="1" width="{sw * scale.steps:.2f}" height="{h:.2f}" fill="none" stroke="#1a1a1a" stroke-width="0.25"/>')
    edges = scale.edges
    for i, e in enumerate(edges):
        cls = "legend-min" if i == 0 else "legend-max" if i == scale.steps else "legend-edge"
        if 0 < i < scale.steps and i % 2:
            continue  # every other inner edge, so the numbers never touch
        x = 2 + i * sw
        anchor = "start" if i == 0 else "end" if i == scale.steps else "middle"
        x_text = x - 0.0 if anchor != "middle" else x
        out.append(f'<line x1="{x:.2f}" y1="{1 + h:.2f}" x2="{x:.2f}" y2="{2.2 + h:.2f}" stroke="#1a1a1a" stroke-width="0.25"/>')
        out.append(
            f'<text class="{cls}" data-value="{e:.3f}" x="{x_text:.2f}" y="{2.4 + h + 0.95 * TEXT_MM:.2f}" font-size="{TEXT_MM:.3f}" '
            f'text-anchor="{anchor}">{fmt_number(e, 0)}</text>'
        )
    out.append("</svg>")
    return "".join(out)


def hatch_key_svg() -> str:
    """Swatches that say what the two hatches mean."""
    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="sheet-hatch-key" viewBox="0 0 8 4" width="8mm" height="4mm">'
        '<defs><pattern id="key-dark" width="1.6" height="1.6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">'
        '<line x1="0" y1="0" x2="0" y2="1.6" stroke="#ffffff" stroke-width="0.45"/></pattern></defs>'
        f'<rect width="8" height="4" fill="{ColourScale(0, 1).colour(0)}"/><rect width="8" height="4" fill="url(#key-dark)"/></svg>',
        '<svg xmlns="http://www.w3.org/2000/svg" class="sheet-hatch-key" viewBox="0 0 8 4" width="8mm" height="4mm">'
        '<defs><pattern id="key-hot" width="1.6" height="1.6" patternUnits="userSpaceOnUse" patternTransform="rotate(-45)">'
        '<line x1="0" y1="0" x2="0" y2="1.6" stroke="#d7191c" stroke-width="0.45"/></pattern></defs>'
        f'<rect width="8" height="4" fill="{ColourScale(0, 1).colour(9)}"/><rect width="8" height="4" fill="url(#key-hot)"/></svg>',
    ]
    return out[0], out[1]
