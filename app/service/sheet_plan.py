"""A tier's dimensioned plan for the printed sheet, as SVG drawn in millimetres at a true scale.

The SVG's width and height are given in mm, so Chromium prints it at the stated ratio (1 user unit = 1 mm
on paper). Text is never smaller than 7.5 pt; labels are placed clear of everything else
(:mod:`app.service.sheet_labels`).
"""

from __future__ import annotations

from dataclasses import dataclass
from html import escape

from app.room.models import Room
from app.room.units import M_PER_FT, M_PER_IN, format_length
from app.service.sheet_dimensions import dimensions
from app.service.sheet_geometry import Tier, entry_span, fixture_shape
from app.service.sheet_labels import FONT, Box, nearest_point_on_box, text_width_mm
from app.service.sheet_svg import ID_MM, INK, TAG_MM, TEXT_MM, ZONE_INK, Svg, rot_box

MARGIN_MM = {"left": 24.0, "right": 6.0, "top": 10.0, "bottom": 36.0}  # room for dimensions, footer
# Drawing scales a tape measure and a scale rule know: architectural (imperial) and metric ratios.
IMPERIAL_SCALES = [(4, "3″ = 1′"), (8, "1½″ = 1′"), (12, "1″ = 1′"), (16, "¾″ = 1′"), (24, "½″ = 1′"),
                   (32, "⅜″ = 1′"), (48, "¼″ = 1′"), (96, "⅛″ = 1′"), (192, "1/16″ = 1′")]  # fmt: skip
METRIC_SCALES = [(5, ""), (10, ""), (20, ""), (25, ""), (30, ""), (40, ""), (50, ""), (75, ""), (100, ""), (200, ""), (500, "")]
CIRCUIT_DASHES = ["", "2.4 1.2", "0.7 0.9", "3 1 0.7 1", "5 1.5", "1.4 1.4"]


@dataclass(frozen=True)
class Scale:
    ratio: int
    name: str  # the imperial equivalent, "½″ = 1′"

    @property
    def mm_per_m(self) -> float:
        return 1000.0 / self.ratio

    @property
    def label(self) -> str:
        return f"1:{self.ratio}" + (f" ({self.name})" if self.name else "")


def choose_scale(room: Room, box_w_mm: float, box_h_mm: float) -> Scale:
    """The largest standard scale at which the room and its dimensions fit the box."""
    scales = IMPERIAL_SCALES if room.display_units == "imperial" else METRIC_SCALES
    m = MARGIN_MM
    for ratio, name in scales:
        k = 1000.0 / ratio
        if room.width_m * k + m["left"] + m["right"] <= box_w_mm and room.length_m * k + m["top"] + m["bottom"] <= box_h_mm:
            return Scale(ratio, name)
    return Scale(*scales[-1])


def scale_bar_length_m(scale: Scale, units: str, target_mm: float = 40.0) -> tuple[float, str, int]:
    """A round length whose bar is near ``target_mm`` on paper: (metres, label, parts)."""
    if units == "imperial":
        options = [(ft * M_PER_FT, f"{ft} ft", 4 if ft % 4 == 0 else 2 if ft % 2 == 0 else 5) for ft in (1, 2, 4, 5, 10, 20, 50)]
        options = [(6 * M_PER_IN, "6 in", 3), *options]
    else:
        options = [(m, f"{m:g} m", 5 if m in (0.5, 5) else 4) for m in (0.2, 0.5, 1, 2, 5, 10, 20)]
        options = [(0.1, "10 cm", 5), *options]
    return min(options, key=lambda o: abs(o[0] * scale.mm_per_m - target_mm))


def plan_svg(room: Room, tier: Tier, scale: Scale, circuits: list[str]) -> tuple[str, float, float]:
    """One tier's plan: walls, entry, zones, fixtures with bars and hanging points, ids, dimensions, scale bar."""
    units = room.display_units
    k = scale.mm_per_m
    ox, oy = MARGIN_MM["left"], MARGIN_MM["top"]
    W, L = room.width_m, room.length_m

    def P(x: float, y: float) -> tuple[float, float]:
        return ox + x * k, oy + (L - y) * k

    s = Svg()
    s.add(f'<rect class="sp-area sp-floor" x="{ox:.2f}" y="{oy:.2f}" width="{W * k:.2f}" height="{L * k:.2f}" fill="#fff"/>')
    for z in tier.zones:
        x0, y0 = P(z.x_m, z.y_m + z.length_m)
        s.add(
            f'<rect class="sp-area sp-zone" data-zone="{escape(z.id)}" x="{x0:.2f}" y="{y0:.2f}" width="{z.width_m * k:.2f}" '
            f'height="{z.length_m * k:.2f}" fill="#eef6ef"/>'
        )
    _walls(s, room, P)
    for z in tier.zones:
        corners = [P(z.x_m, z.y_m), P(z.x_m + z.width_m, z.y_m), P(z.x_m + z.width_m, z.y_m + z.length_m), P(z.x_m, z.y_m + z.length_m)]
        for a, b in zip(corners, corners[1:] + corners[:1], strict=True):
            if not _on_wall(a, b, P(0, 0), P(W, L)):
                s.line(a, b, "sp-zone-edge", stroke=ZONE_INK, width=0.35)
    shapes = [fixture_shape(room, f) for f in tier.fixtures]
    for sh in shapes:
        _fixture_body(s, sh, P, circuits)
    dimensions(s, room, tier, P, units)
    for sh in shapes:
        _fixture_label(s, sh, P, circuits, k)
    _zone_labels(s, tier, P, units)
    _entry_label(s, room, P)
    bounds = s.occ.bounds()
    _footer(s, room, tier, scale, circuits, bounds, units)
    b = s.occ.bounds().grow(1.0)
    w, h = b.x1 - b.x0, b.y1 - b.y0
    head = (
        f'<svg xmlns="http://www.w3.org/2000/svg" class="sheet-plan" data-tier="{tier.key}" data-ratio="{scale.ratio}" '
        f'viewBox="{b.x0:.2f} {b.y0:.2f} {w:.2f} {h:.2f}" width="{w:.2f}mm" height="{h:.2f}mm" '
        f'font-family="{FONT}" role="img" aria-label="Plan of {escape(tier.title)} at {scale.label}">'
    )
    return head + "".join(s.parts) + "</svg>", w, h


def _on_wall(a, b, lo, hi) -> bool:
    """Is the segment a-b on the room's outline (so the wall line already draws it)?"""
    return (abs(a[0] - b[0]) < 1e-6 and (abs(a[0] - lo[0]) < 1e-6 or abs(a[0] - hi[0]) < 1e-6)) or (
        abs(a[1] - b[1]) < 1e-6 and (abs(a[1] - lo[1]) < 1e-6 or abs(a[1] - hi[1]) < 1e-6)
    )


def _walls(s: Svg, room: Room, P) -> None:
    W, L = room.width_m, room.length_m
    side, a, b = entry_span(room)
    ends = {"front": ((0, 0), (W, 0)), "back": ((0, L), (W, L)), "left": ((0, 0), (0, L)), "right": ((W, 0), (W, L))}
    for name, (p, q) in ends.items():
        dash = "3 2" if room.finish_of(name).kind == "open" else ""
        width = 0.5 if dash else 0.9
        pieces = [(p, q)]
        if name == side:  # a gap where the entry is, with an arrow pointing in
            along = 0 if name in ("front", "back") else 1

            def at(t, p=p, along=along):
                return (t, p[1]) if along == 0 else (p[0], t)

            pieces = [(p, at(a)), (at(b), q)]
            mid = at((a + b) / 2)
            inward = {"front": (0, 1), "back": (0, -1), "left": (1, 0), "right": (-1, 0)}[name]
            m = P(*mid)
            tip = (m[0] + inward[0] * 4.0, m[1] - inward[1] * 4.0)
            perp = (inward[1] * 1.6, inward[0] * 1.6)
            pts = [(m[0] + perp[0], m[1] + perp[1]), tip, (m[0] - perp[0], m[1] - perp[1])]
            s.add(
                '<polygon class="sp-entry" points="' + " ".join(f"{x:.2f},{y:.2f}" for x, y in pts) + f'" fill="{INK}"/>'
            )
            s.occ.add_box(Box(min(x for x, _ in pts), min(y for _, y in pts), max(x for x, _ in pts), max(y for _, y in pts)))
            for end in (a, b):  # door jambs
                j0 = P(*at(end))
                s.line((j0[0] - perp[0], j0[1] - perp[1]), (j0[0] + perp[0], j0[1] + perp[1]), "sp-jamb", width=0.5)
        for u, v in pieces:
            if abs(u[0] - v[0]) + abs(u[1] - v[1]) > 1e-9:
                s.line(P(*u), P(*v), "sp-wall", width=width, dash=dash)


def _poly(points, cls, fill, stroke, width, dash="", owner="") -> str:
    d = f' stroke-dasharray="{dash}"' if dash else ""
    return (
        f'<polygon class="{cls}" data-owner="{escape(owner)}" points="'
        + " ".join(f"{x:.2f},{y:.2f}" for x, y in points)
        + f'" fill="{fill}" stroke="{stroke}" stroke-width="{width}"{d}/>'
    )


def _fixture_body(s: Svg, sh, P, circuits: list[str]) -> None:
    f = sh.fixture
    dash = CIRCUIT_DASHES[circuits.index(f.circuit) % len(CIRCUIT_DASHES)] if f.circuit in circuits else ""
    fill = "#ffe9a8" if f.on else "#e4e4e4"
    pts = [P(*p) for p in sh.outline]
    if pts:
        kind = sh.type.geometry.kind
        body_fill = "none" if kind == "bar_array" else fill
        s.add(_poly(pts, "sp-fixture-body", body_fill, "#6b5200", 0.45, dash, f.id))
        s.occ.add_box(Box(min(x for x, _ in pts), min(y for _, y in pts), max(x for x, _ in pts), max(y for _, y in pts)), f.id)
        if kind == "bar_array":
            for bar in sh.bars:
                s.add(_poly([P(*p) for p in bar], "sp-fixture-bar", fill, "#6b5200", 0.2, owner=f.id))
    else:
        c = P(f.x_m, f.y_m)
        s.add(f'<circle class="sp-fixture-body" data-owner="{escape(f.id)}" cx="{c[0]:.2f}" cy="{c[1]:.2f}" r="1.8" '
              f'fill="{fill}" stroke="#6b5200" stroke-width="0.45"/>')  # fmt: skip
        s.occ.add_box(Box(c[0] - 1.8, c[1] - 1.8, c[0] + 1.8, c[1] + 1.8), f.id)
    for hx, hy in sh.hanging:
        x, y = P(hx, hy)
        r = 0.75
        s.add(
            f'<g class="sp-hanging" data-owner="{escape(f.id)}"><circle cx="{x:.2f}" cy="{y:.2f}" r="{r}" fill="#fff" '
            f'stroke="{INK}" stroke-width="0.3"/><circle cx="{x:.2f}" cy="{y:.2f}" r="0.3" fill="{INK}"/></g>'
        )
        s.occ.add_box(Box(x - r, y - r, x + r, y + r), f"hang:{f.id}")


def _label_shapes(f) -> list[tuple[float, float, bool]]:
    """(width, height, stacked) of the id label: id and circuit tag side by side, or the tag under the id."""
    id_w = text_width_mm(f.id, ID_MM, bold=True)
    tag_w = text_width_mm(f.circuit, TAG_MM) + 1.2
    side = (id_w + 1.0 + tag_w + 0.8, ID_MM * 1.25, False)
    stacked = (max(id_w, tag_w) + 0.8, ID_MM * 1.15 + TAG_MM * 1.35, True)
    return [side, stacked]


def _label_candidates(c, body: Box, w: float, h: float) -> list[tuple[float, float, bool]]:
    out = [(c[0], c[1], False)]
    for d in (1.5, 4.0, 8.0, 13.0, 19.0, 26.0):
        out += [
            (body.x1 + d + w / 2, c[1], True),
            (body.x0 - d - w / 2, c[1], True),
            (c[0], body.y0 - d - h / 2, True),
            (c[0], body.y1 + d + h / 2, True),
            (body.x1 + d + w / 2, body.y0 - d - h / 2, True),
            (body.x0 - d - w / 2, body.y1 + d + h / 2, True),
        ]
    return out


def _fixture_label(s: Svg, sh, P, circuits: list[str], k: float) -> None:
    """The id (and its circuit tag) on the fixture when it fits there, else beside it with a leader line."""
    f = sh.fixture
    c = P(f.x_m, f.y_m)
    x0, y0, x1, y1 = sh.extent
    body = Box(*P(x0, y1), *P(x1, y0))
    shapes = _label_shapes(f)
    tries = [(shape, cand) for shape in shapes for cand in _label_candidates(c, body, shape[0], shape[1]) if not cand[2]]
    tries += [(shape, cand) for shape in shapes for cand in _label_candidates(c, body, shape[0], shape[1]) if cand[2]]
    chosen = None
    # First a spot whose leader crosses nothing; failing that, one whose leader only crosses lines.
    for strict in (True, False):
        for (w, h, stacked), (cx, cy, leader) in tries:
            box = Box(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)
            if not leader and not box.inside(body.grow(0.01)):
                continue
            if not s.occ.free(box, owner=f.id):
                continue
            end = nearest_point_on_box(box, c)
            if leader and strict and not s.occ.line_free(end, c, owner=f.id):
                continue
            chosen = (box, leader, end, stacked)
            break
        if chosen:
            break
    if chosen is None:  # crowded: the last spot far out, still with its leader
        (w, h, stacked), (cx, cy, _) = tries[-1]
        box = Box(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)
        chosen = (box, True, nearest_point_on_box(box, c), stacked)
    box, leader, end, stacked = chosen
    _draw_label(s, f, box, leader, end, stacked, c)


def _draw_label(s: Svg, f, box: Box, leader: bool, end, stacked: bool, c) -> None:
    o = escape(f.id)
    w, h = box.x1 - box.x0, box.y1 - box.y0
    s.add(f'<g class="sp-label" data-owner="{o}">')
    if leader:
        s.line(end, c, "sp-leader", width=0.25, owner=f.id)
        s.add(f'<circle class="sp-leader-dot" data-owner="{o}" cx="{c[0]:.2f}" cy="{c[1]:.2f}" r="0.45" fill="{INK}"/>')
    s.add(f'<rect class="sp-label-bg" data-owner="{o}" x="{box.x0:.2f}" y="{box.y0:.2f}" width="{w:.2f}" height="{h:.2f}" '
          f'fill="#fff" fill-opacity="0.92" rx="0.6"/>')  # fmt: skip
    id_w = text_width_mm(f.id, ID_MM, bold=True)
    tag_w = text_width_mm(f.circuit, TAG_MM) + 1.2
    if stacked:
        base = box.y0 + 0.95 * ID_MM
        s.text((box.x0 + box.x1) / 2, base, f.id, ID_MM, "sp-fixture-id", bold=True, register=False, extra=f' data-owner="{o}"')
        tx, tbase = (box.x0 + box.x1) / 2 - tag_w / 2, box.y1 - 0.3 * TAG_MM
    else:
        base = box.y0 + h / 2 + 0.34 * ID_MM
        s.text(box.x0 + 0.4, base, f.id, ID_MM, "sp-fixture-id", "start", bold=True, register=False, extra=f' data-owner="{o}"')
        tx, tbase = box.x0 + 0.4 + id_w + 1.0, base
    s.add(f'<rect class="sp-circuit-box" data-owner="{o}" x="{tx:.2f}" y="{tbase - 0.9 * TAG_MM:.2f}" width="{tag_w:.2f}" '
          f'height="{1.2 * TAG_MM:.2f}" fill="none" stroke="{INK}" stroke-width="0.25"/>')  # fmt: skip
    s.text(tx + tag_w / 2, tbase - 0.05, f.circuit, TAG_MM, "sp-circuit-tag", register=False, extra=f' data-owner="{o}"')
    s.add("</g>")
    s.occ.add_box(box, f.id)


def _zone_labels(s: Svg, tier: Tier, P, units: str) -> None:
    for z in tier.zones:
        lines = [z.name, f"canopy {format_length(z.canopy_height_m, units, True)}"]
        w = max(text_width_mm(t, TEXT_MM) for t in lines) + 1.0
        h = 2 * 1.2 * TEXT_MM + 0.6
        tl, br = P(z.x_m, z.y_m + z.length_m), P(z.x_m + z.width_m, z.y_m)
        cands = [
            (tl[0] + 1.0, tl[1] + 1.0, False),
            (br[0] - 1.0 - w, tl[1] + 1.0, False),
            (tl[0] + 1.0, br[1] - 1.0 - h, False),
            (br[0] - 1.0 - w, br[1] - 1.0 - h, False),
            ((tl[0] + br[0] - w) / 2, (tl[1] + br[1] - h) / 2, False),
        ]
        zone_box = Box(tl[0], tl[1], br[0], br[1])
        top = min(it.box.y0 for it in s.occ.items)
        cands += [(tl[0] + dx, top - 1.0 - h - dy, True) for dy in (0, h + 0.8, 2 * h + 1.6) for dx in (0, -w / 2, w / 2)]
        for x, y, outside in cands:
            b = Box(x, y, x + w, y + h)
            if (outside or b.inside(zone_box)) and s.occ.free(b):
                break
        if outside:
            s.line((x + 2, y + h), (x + 2, tl[1] + 1.5), "sp-leader", stroke=ZONE_INK, width=0.2)
        s.text(x + 0.5, y + 0.3 + 0.95 * TEXT_MM, lines[0], TEXT_MM, "sp-zone-label", "start", fill=ZONE_INK, extra=f' data-zone="{escape(z.id)}"')
        s.text(x + 0.5, y + 0.3 + 2.15 * TEXT_MM, lines[1], TEXT_MM, "sp-zone-label", "start", fill=ZONE_INK, extra=f' data-zone="{escape(z.id)}"')
        s.occ.add_box(Box(x, y, x + w, y + h))


def _entry_label(s: Svg, room: Room, P) -> None:
    side, a, b = entry_span(room)
    text = f"{room.entry.label} ({side} wall)"
    m = (a + b) / 2
    if side in ("front", "back"):
        y = 0 if side == "front" else room.length_m
        p = P(m, y)
        outer = max(it.box.y1 for it in s.occ.items) if side == "front" else min(it.box.y0 for it in s.occ.items)
        cands = [(p[0], p[1] - 5.5 if side == "front" else p[1] + 5.5 + TEXT_MM),
                 (p[0], outer + 1.2 + TEXT_MM if side == "front" else outer - 1.2)]  # fmt: skip
        rotate = False
    else:
        x = 0 if side == "left" else room.width_m
        p = P(x, m)
        outer = min(it.box.x0 for it in s.occ.items) if side == "left" else max(it.box.x1 for it in s.occ.items)
        cands = [(p[0] + 5.5 + TEXT_MM if side == "left" else p[0] - 5.5, p[1]),
                 (outer - 1.2 if side == "left" else outer + 1.2 + TEXT_MM, p[1])]  # fmt: skip
        rotate = True
    for x, y in cands:
        bx = rot_box(x, y, text, not rotate)
        if s.occ.free(bx):
            break
    s.text(x, y, text, TEXT_MM, "sp-entry-label", rotate=rotate, bold=True)


def _footer(s: Svg, room: Room, tier: Tier, scale: Scale, circuits: list[str], bounds: Box, units: str) -> None:
    """Scale bar with its ratio, and the circuit legend, under the drawing."""
    room_mm = room.width_m * scale.mm_per_m
    length_m, label, parts = scale_bar_length_m(scale, units, target_mm=min(40.0, max(20.0, room_mm + 12)))
    bar_mm = length_m * scale.mm_per_m
    x0, y = bounds.x0 + 1.0, bounds.y1 + 4.0
    part = bar_mm / parts
    s.add(f'<g class="sp-scale-bar" data-length-m="{length_m:.6f}" data-ratio="{scale.ratio}">')
    s.add(f'<rect class="sp-scale-bar-body" x="{x0:.3f}" y="{y:.2f}" width="{bar_mm:.3f}" height="1.6" fill="#fff" stroke="{INK}" stroke-width="0.2"/>')
    for i in range(0, parts, 2):
        s.add(f'<rect x="{x0 + i * part:.3f}" y="{y:.2f}" width="{part:.3f}" height="1.6" fill="{INK}"/>')
    s.add("</g>")
    s.occ.add_box(Box(x0, y, x0 + bar_mm, y + 1.6))
    s.text(x0, y + 1.6 + 1.2 * TEXT_MM, "0", TEXT_MM, "sp-scale-text")
    s.text(x0 + bar_mm, y + 1.6 + 1.2 * TEXT_MM, label, TEXT_MM, "sp-scale-text")
    y_text = y + 1.6 + 2.6 * TEXT_MM
    s.text(x0, y_text, f"Scale {scale.label} at printed size", TEXT_MM, "sp-scale-ratio", "start", bold=True)
    used = sorted({f.circuit for f in tier.fixtures}, key=lambda c: circuits.index(c) if c in circuits else 99)
    y_leg = y_text + 1.6 * TEXT_MM
    x = x0
    right = max(bounds.x1, x0 + 60)
    for c in used:
        dash = CIRCUIT_DASHES[circuits.index(c) % len(CIRCUIT_DASHES)] if c in circuits else ""
        item = f"circuit {c}"
        w = 9 + text_width_mm(item, TEXT_MM) + 4
        if x + w > right and x > x0:
            x, y_leg = x0, y_leg + 1.5 * TEXT_MM
        s.line((x, y_leg - 0.35 * TEXT_MM), (x + 7, y_leg - 0.35 * TEXT_MM), "sp-legend-line", width=0.45, dash=dash)
        s.text(x + 8.5, y_leg, item, TEXT_MM, "sp-legend-text", "start")
        x += w
