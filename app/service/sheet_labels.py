"""Label placement for the sheet's drawings: text sizes on paper, and a first-free-spot search.

Everything here is in millimetres on paper. A label is tried at its candidate spots in order and takes the
first one that overlaps nothing drawn before it (other labels, fixtures, hanging points, dimension lines);
a label set away from what it names gets a leader line, which must not cross anything either.
"""

from __future__ import annotations

from dataclasses import dataclass

PT_MM = 25.4 / 72  # one typographic point in millimetres
FONT = "Liberation Sans, Arial, Helvetica, sans-serif"
# Advance widths of Liberation Sans (metric-compatible with Arial), in em; others take the widest class.
_NARROW = set("iljtfI.,:;'!|()[]′″ ·")
_WIDE = set("mwMW@%")
_UPPER = set("ABCDEFGHJKLNOPQRSTUVXYZ&")
ASCENT_EM, DESCENT_EM = 0.95, 0.28  # glyph box above and below the baseline, with a little room


def text_width_mm(text: str, size_mm: float, bold: bool = False) -> float:
    em = 0.0
    for ch in text:
        if ch in _NARROW:
            em += 0.30
        elif ch in _WIDE:
            em += 0.86
        elif ch in _UPPER:
            em += 0.70
        elif ch == " ":
            em += 0.28
        else:
            em += 0.57
    return em * size_mm * (1.08 if bold else 1.0)


@dataclass(frozen=True)
class Box:
    x0: float
    y0: float
    x1: float
    y1: float

    def hits(self, o: Box, gap: float = 0.0) -> bool:
        return self.x0 < o.x1 + gap and o.x0 < self.x1 + gap and self.y0 < o.y1 + gap and o.y0 < self.y1 + gap

    def inside(self, o: Box) -> bool:
        return self.x0 >= o.x0 and self.y0 >= o.y0 and self.x1 <= o.x1 and self.y1 <= o.y1

    def grow(self, d: float) -> Box:
        return Box(self.x0 - d, self.y0 - d, self.x1 + d, self.y1 + d)


def text_box(x: float, y: float, text: str, size_mm: float, anchor: str = "middle", bold: bool = False) -> Box:
    """The box a horizontal text takes, with (x, y) its anchor point on the baseline."""
    w = text_width_mm(text, size_mm, bold)
    x0 = {"start": x, "middle": x - w / 2, "end": x - w}[anchor]
    return Box(x0, y - ASCENT_EM * size_mm, x0 + w, y + DESCENT_EM * size_mm)


def segment_hits_box(p: tuple[float, float], q: tuple[float, float], b: Box) -> bool:
    """Does the segment p-q pass through the box? (Liang-Barsky clipping.)"""
    (x0, y0), (x1, y1) = p, q
    dx, dy = x1 - x0, y1 - y0
    t0, t1 = 0.0, 1.0
    for den, num in ((-dx, x0 - b.x0), (dx, b.x1 - x0), (-dy, y0 - b.y0), (dy, b.y1 - y0)):
        if den == 0:
            if num < 0:
                return False
            continue
        t = num / den
        if den < 0:
            t0 = max(t0, t)
        else:
            t1 = min(t1, t)
        if t0 > t1:
            return False
    return True


def segments_cross(p, q, a, b) -> bool:
    """Do segments p-q and a-b intersect (touching counts)?"""

    def orient(u, v, w) -> float:
        return (v[0] - u[0]) * (w[1] - u[1]) - (v[1] - u[1]) * (w[0] - u[0])

    d1, d2, d3, d4 = orient(a, b, p), orient(a, b, q), orient(p, q, a), orient(p, q, b)
    if ((d1 > 0) != (d2 > 0)) and ((d3 > 0) != (d4 > 0)) and d1 * d2 < 0 and d3 * d4 < 0:
        return True

    def on(u, v, w) -> bool:
        return min(u[0], v[0]) - 1e-9 <= w[0] <= max(u[0], v[0]) + 1e-9 and min(u[1], v[1]) - 1e-9 <= w[1] <= max(u[1], v[1]) + 1e-9

    return any(
        abs(d) < 1e-12 and on(u, v, w) for d, u, v, w in ((d1, a, b, p), (d2, a, b, q), (d3, p, q, a), (d4, p, q, b))
    )


@dataclass
class Item:
    box: Box
    owner: str = ""
    segment: tuple[tuple[float, float], tuple[float, float]] | None = None  # thin lines test exactly


class Occupancy:
    """What is drawn so far, to keep labels clear of it."""

    def __init__(self) -> None:
        self.items: list[Item] = []

    def add_box(self, b: Box, owner: str = "") -> None:
        self.items.append(Item(b, owner))

    def add_line(self, p, q, owner: str = "", width: float = 0.3) -> None:
        b = Box(min(p[0], q[0]), min(p[1], q[1]), max(p[0], q[0]), max(p[1], q[1])).grow(width / 2)
        self.items.append(Item(b, owner, (p, q)))

    def free(self, b: Box, owner: str = "", gap: float = 0.4) -> bool:
        for it in self.items:
            if owner and it.owner == owner:
                continue
            if it.segment is not None:
                if b.grow(gap).hits(it.box) and segment_hits_box(*it.segment, b.grow(gap)):
                    return False
            elif b.hits(it.box, gap):
                return False
        return True

    def line_free(self, p, q, owner: str = "") -> bool:
        """Does a new line p-q cross nothing (boxes, and other lines) drawn so far?"""
        for it in self.items:
            if owner and it.owner == owner:
                continue
            if it.segment is not None:
                if segments_cross(p, q, *it.segment):
                    return False
            elif segment_hits_box(p, q, it.box):
                return False
        return True

    def bounds(self) -> Box:
        xs0 = [i.box.x0 for i in self.items]
        ys0 = [i.box.y0 for i in self.items]
        xs1 = [i.box.x1 for i in self.items]
        ys1 = [i.box.y1 for i in self.items]
        return Box(min(xs0), min(ys0), max(xs1), max(ys1))


def nearest_point_on_box(b: Box, p: tuple[float, float]) -> tuple[float, float]:
    return min(max(p[0], b.x0), b.x1), min(max(p[1], b.y0), b.y1)
