"""A small SVG writer in millimetres that records what it draws, so labels can be kept clear of it."""

from __future__ import annotations

from html import escape

from app.service.sheet_labels import PT_MM, Box, Occupancy, text_box

TEXT_MM = 7.5 * PT_MM  # dimension numbers, zone labels, legend
ID_MM = 10 * PT_MM  # fixture ids
TAG_MM = 7.5 * PT_MM  # circuit tags
INK, DIM_INK, ZONE_INK = "#1a1a1a", "#1d3f8f", "#2f5a39"


class Svg:
    def __init__(self) -> None:
        self.parts: list[str] = []
        self.occ = Occupancy()

    def add(self, s: str) -> None:
        self.parts.append(s)

    def line(self, p, q, cls: str, stroke=INK, width=0.25, dash="", owner="", register=True) -> None:
        d = f' stroke-dasharray="{dash}"' if dash else ""
        o = f' data-owner="{escape(owner)}"' if owner else ""
        self.add(
            f'<line class="{cls}"{o} x1="{p[0]:.2f}" y1="{p[1]:.2f}" x2="{q[0]:.2f}" y2="{q[1]:.2f}" '
            f'stroke="{stroke}" stroke-width="{width}"{d}/>'
        )
        if register:
            self.occ.add_line(p, q, owner, width)

    def text(self, x, y, s, size, cls, anchor="middle", bold=False, fill=INK, rotate=False, extra="", register=True):
        w = " font-weight=\"700\"" if bold else ""
        t = f' transform="rotate(-90 {x:.2f} {y:.2f})"' if rotate else ""
        self.add(
            f'<text class="{cls}" x="{x:.2f}" y="{y:.2f}" font-size="{size:.3f}" text-anchor="{anchor}" '
            f'fill="{fill}"{w}{t}{extra}>{escape(s)}</text>'
        )
        b = text_box(x, y, s, size, anchor, bold)
        if rotate:  # turned a quarter counter-clockwise about (x, y)
            b = Box(x + (b.y0 - y), y - (b.x1 - x), x + (b.y1 - y), y - (b.x0 - x))
        if register:
            self.occ.add_box(b)
        return b


def rot_box(x, y, text, along_x) -> Box:
    b = text_box(x, y, text, TEXT_MM)
    if along_x:
        return b
    return Box(x + (b.y0 - y), y - (b.x1 - x), x + (b.y1 - y), y - (b.x0 - x))
