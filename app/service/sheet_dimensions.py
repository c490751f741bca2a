"""Chained dimensions on the sheet's plans: from the left and front walls through each fixture centre."""

from __future__ import annotations

from app.room.models import Room
from app.room.units import format_length
from app.service.sheet_geometry import Tier, chain
from app.service.sheet_labels import text_width_mm
from app.service.sheet_svg import DIM_INK, TEXT_MM, Svg, rot_box

ROW1_MM, ROW2_MM = 7.0, 16.0  # chained and overall dimension lines, out from the wall


def dim_row(s: Svg, segments, along_x: bool, offset: float, P, units: str, cls: str) -> None:
    """A chain of dimensions on a line ``offset`` mm outside the front (along_x) or left wall."""
    if not segments:
        return
    stops = [segments[0][0]] + [b for _, b in segments]

    def at(v: float) -> tuple[float, float]:
        p = P(v, 0) if along_x else P(0, v)
        return (p[0], p[1] + offset) if along_x else (p[0] - offset, p[1])

    wall = (lambda v: (P(v, 0)[0], P(v, 0)[1] + 1.0)) if along_x else (lambda v: (P(0, v)[0] - 1.0, P(0, v)[1]))
    s.line(at(stops[0]), at(stops[-1]), cls + " sp-dim-line", stroke=DIM_INK, width=0.2)
    for v in stops:
        a, b = wall(v), at(v)
        b2 = (b[0], b[1] + 1.2) if along_x else (b[0] - 1.2, b[1])
        s.line(a, b2, "sp-dim-ext", stroke=DIM_INK, width=0.15)
        m = at(v)
        # The tick sits on the dimension line, which is already kept clear.
        s.line((m[0] - 1.0, m[1] + 1.0), (m[0] + 1.0, m[1] - 1.0), "sp-dim-tick", stroke=DIM_INK, width=0.35, register=False)
    for a, b in segments:
        dim_text(s, at(a), at(b), b - a, along_x, units)


def dim_text(s: Svg, pa, pb, length_m: float, along_x: bool, units: str) -> None:
    text = format_length(length_m, units, fine=True)
    w = text_width_mm(text, TEXT_MM)
    gap = abs(pb[0] - pa[0]) if along_x else abs(pb[1] - pa[1])
    mid = ((pa[0] + pb[0]) / 2, (pa[1] + pb[1]) / 2)
    extra = f' data-length-m="{length_m:.6f}"'
    cands = []
    # In the gap when it fits; else beside the far end, then the near end, one row further out.
    if along_x:
        if w + 2.2 < gap:
            cands += [(mid[0], mid[1] - 0.9, False), (mid[0], mid[1] + 0.9 + 0.95 * TEXT_MM, False)]
        for dy in (-0.9, 0.9 + 0.95 * TEXT_MM, 4.5):
            cands += [(max(pa[0], pb[0]) + 1.2 + w / 2, mid[1] + dy, True), (min(pa[0], pb[0]) - 1.2 - w / 2, mid[1] + dy, True)]
    else:
        if w + 2.2 < gap:
            cands += [(mid[0] - 0.9, mid[1], False), (mid[0] + 0.9 + 0.95 * TEXT_MM, mid[1], False)]
        for dx in (-0.9, 0.9 + 0.95 * TEXT_MM, -4.5):
            cands += [(mid[0] + dx, min(pa[1], pb[1]) - 1.2 - w / 2, True), (mid[0] + dx, max(pa[1], pb[1]) + 1.2 + w / 2, True)]
    for x, y, _leader in cands:
        b = rot_box(x, y, text, along_x)
        if s.occ.free(b, gap=0.15):
            s.text(x, y, text, TEXT_MM, "sp-dim-text", rotate=not along_x, fill=DIM_INK, extra=extra)
            return
    x, y, _ = cands[-1]
    s.text(x, y, text, TEXT_MM, "sp-dim-text", rotate=not along_x, fill=DIM_INK, extra=extra)


def dimensions(s: Svg, room: Room, tier: Tier, P, units: str) -> None:
    xs = [f.x_m for f in tier.fixtures]
    ys = [f.y_m for f in tier.fixtures]
    if xs:
        dim_row(s, chain(xs, room.width_m), True, ROW1_MM, P, units, "sp-dim-chain-x")
        dim_row(s, chain(ys, room.length_m), False, ROW1_MM, P, units, "sp-dim-chain-y")
    dim_row(s, [(0.0, room.width_m)], True, ROW2_MM, P, units, "sp-dim-overall-x")
    dim_row(s, [(0.0, room.length_m)], False, ROW2_MM, P, units, "sp-dim-overall-y")
