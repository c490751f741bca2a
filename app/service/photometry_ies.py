"""The IES LM-63 reader (ANSI/IES LM-63, 1995, 2002 and 2019 revisions; files without the identification line
are read as 1991): keywords, tilt data, the header, the angles and the candela table, each error naming the line
of the value at fault."""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from app.service.photometry_table import MAX_ANGLES, Photometry, PhotometryError, check_size, expand_type_c


class _Tokens:
    """Whitespace- or comma-separated numbers, each remembering its line."""

    def __init__(self, lines: list[tuple[int, str]]) -> None:
        self.items = [(n, t) for n, line in lines for t in re.split(r"[,\s]+", line.strip()) if t]
        self.pos = 0

    def number(self, what: str) -> float:
        if self.pos >= len(self.items):
            last = self.items[-1][0] if self.items else None
            raise PhotometryError(f"the file ends where {what} was expected (truncated table?)", last)
        n, t = self.items[self.pos]
        self.pos += 1
        try:
            v = float(t)
        except ValueError:
            raise PhotometryError(f"{what}: {t!r} is not a number", n) from None
        if not math.isfinite(v):
            raise PhotometryError(f"{what}: {t!r} is not a finite number", n)
        return v

    def count(self, what: str, lo: int, hi: int) -> int:
        line = self.items[self.pos][0] if self.pos < len(self.items) else None
        v = self.number(what)
        if v != int(v) or not lo <= v <= hi:
            raise PhotometryError(f"{what} must be a whole number from {lo} to {hi}, got {v:g}", line)
        return int(v)

    def numbers(self, k: int, what: str) -> list[float]:
        return [self.number(f"{what} {i + 1} of {k}") for i in range(k)]

    def line_now(self) -> int | None:
        return self.items[min(self.pos, len(self.items) - 1)][0] if self.items else None

    def line_of(self, pos: int) -> int:
        return self.items[pos][0]


@dataclass(frozen=True)
class _Header:
    """The numbers between the tilt data and the angles (lengths already in metres)."""

    lamps: float
    lumens_per_lamp: float
    multiplier: float
    line_v: int | None  # the line of the angle counts, named when the symmetry is unknown
    nv: int
    nh: int
    width_m: float
    length_m: float
    ballast: float
    ballast_lamp: float
    watts: float


def parse_ies(text: str) -> Photometry:
    """Read an IES LM-63 file (1991/1995/2002/2019), refusing what it cannot place."""
    check_size(text)
    lines = [(n, raw.rstrip("\r")) for n, raw in enumerate(text.splitlines(), start=1)]
    if not lines:
        raise PhotometryError("the file is empty")
    version = _version(lines)
    keywords, tilt_at = _keywords_and_tilt(lines)
    notes = [f"IES {version}"]
    toks = _Tokens([(n, line) for n, line in lines[tilt_at:]])
    _read_tilt(toks, lines[tilt_at - 1][1].split("=", 1)[-1].strip().upper(), tilt_at, notes)
    head = _read_header(toks, version)
    v, h = _read_angles(toks, head.nv, head.nh)
    lamp_factor = head.ballast_lamp if version == "LM-63-1995" else 1.0
    rows = _read_candela(toks, v, h, head, lamp_factor)
    if v[0] > 0:  # tables starting below nadir: start the interpolant at nadir with the first value
        v = [0.0, *v]
        rows = [[r[0], *r] for r in rows]
    az, rows = expand_type_c(h, rows, head.line_v)
    declared = head.lamps * head.lumens_per_lamp * head.multiplier if head.lumens_per_lamp > 0 else None
    if head.lumens_per_lamp <= 0:
        notes.append("absolute photometry (lumens per lamp = -1): the file declares no total")
    return Photometry(
        "ies",
        v,
        az,
        rows,
        declared,
        head.width_m,
        head.length_m,
        head.watts if head.watts > 0 else None,
        keywords.get("LUMINAIRE", keywords.get("TEST", "")),
        notes,
    )


def _version(lines: list[tuple[int, str]]) -> str:
    first = lines[0][1].strip().upper()
    if first.startswith("IESNA:LM-63-1995") or first.startswith("IESNA91"):
        return "LM-63-1995"
    if first.startswith("IESNA:LM-63-2002"):
        return "LM-63-2002"
    if first.startswith("IES:LM-63-2019"):
        return "LM-63-2019"
    if first.startswith("IES") and ":" in first:
        raise PhotometryError(f"unknown IES revision {lines[0][1].strip()!r}", 1)
    return "LM-63-1991"


def _keywords_and_tilt(lines: list[tuple[int, str]]) -> tuple[dict[str, str], int]:
    """The [KEYWORD] lines above the TILT= line, and the TILT= line's number."""
    keywords: dict[str, str] = {}
    for n, line in lines:
        s = line.strip()
        if s.upper().startswith("TILT"):
            return keywords, n
        m = re.match(r"\[(\w+)\]\s*(.*)", s)
        if m:
            keywords[m.group(1).upper()] = m.group(2)
    raise PhotometryError("no TILT= line: this is not an IES LM-63 photometric file")


def _read_tilt(toks: _Tokens, tilt: str, tilt_at: int, notes: list[str]) -> None:
    """Read past included tilt data (the fixture is placed level, as measured); refuse a separate tilt file."""
    if tilt == "INCLUDE":
        geometry = toks.count("lamp-to-luminaire geometry", 1, 3)
        k = toks.count("number of tilt angles", 1, MAX_ANGLES)
        toks.numbers(k, "tilt angle")
        toks.numbers(k, "tilt multiplying factor")
        notes.append(f"tilt data included (geometry {geometry}, {k} angles); the fixture is placed level, as measured")
    elif tilt != "NONE":
        raise PhotometryError(
            f"TILT={tilt} names a separate tilt file; include the tilt data (TILT=INCLUDE) or use TILT=NONE", tilt_at
        )


def _read_header(toks: _Tokens, version: str) -> _Header:
    lamps = toks.number("number of lamps")
    lumens_per_lamp = toks.number("lumens per lamp")
    multiplier = toks.number("candela multiplier")
    line_v = toks.line_now()
    nv = toks.count("number of vertical angles", 2, MAX_ANGLES)
    nh = toks.count("number of horizontal angles", 1, MAX_ANGLES)
    ptype_line = toks.line_now()
    ptype = toks.count("photometric type", 1, 3)
    if ptype != 1:
        raise PhotometryError(
            f"photometric type {'B' if ptype == 2 else 'A'} is not supported: only type C "
            "(luminaires aimed down, as grow lights are) can be placed",
            ptype_line,
        )
    units = toks.count("units type", 1, 2)
    to_m = 0.3048 if units == 1 else 1.0
    width, length, _height = (abs(toks.number(w)) * to_m for w in ("width", "length", "height"))
    ballast = toks.number("ballast factor")
    ballast_lamp = toks.number("ballast-lamp photometric factor" if version == "LM-63-1995" else "future use")
    watts = toks.number("input watts")
    return _Header(lamps, lumens_per_lamp, multiplier, line_v, nv, nh, width, length, ballast, ballast_lamp, watts)


def _read_angles(toks: _Tokens, nv: int, nh: int) -> tuple[list[float], list[float]]:
    """The vertical and horizontal angles; each error names the line of the value at fault, not the line the
    table started on."""
    v_at = toks.pos
    v = toks.numbers(nv, "vertical angle")
    h_at = toks.pos
    h = toks.numbers(nh, "horizontal angle")
    bad_v = next((i for i, a in enumerate(v) if a < 0 or a > 180 or (i and a <= v[i - 1])), None)
    if bad_v is not None:
        raise PhotometryError(
            f"vertical angles must rise within 0-180 (angle {bad_v + 1} is {v[bad_v]:g})", toks.line_of(v_at + bad_v)
        )
    if v[0] >= 90:
        raise PhotometryError(
            "the table holds only upward light (vertical angles from 90); a grow light aims down", toks.line_of(v_at)
        )
    bad_h = next((i for i in range(1, nh) if h[i] <= h[i - 1]), None)
    if bad_h is not None:
        raise PhotometryError(
            f"horizontal angles must rise (angle {bad_h + 1} is {h[bad_h]:g} after {h[bad_h - 1]:g})",
            toks.line_of(h_at + bad_h),
        )
    return v, h


def _read_candela(
    toks: _Tokens, v: list[float], h: list[float], head: _Header, lamp_factor: float
) -> list[list[float]]:
    """The candela table, one row per horizontal angle, scaled by the multiplier and ballast factors; nothing may
    follow it and no value may be negative."""
    nv = head.nv
    cd_at = toks.pos
    rows = []
    for i in range(head.nh):
        rows.append(
            [
                c * head.multiplier * head.ballast * lamp_factor
                for c in toks.numbers(nv, f"candela value (horizontal angle {h[i]:g})")
            ]
        )
    if toks.pos < len(toks.items):
        n, t = toks.items[toks.pos]
        raise PhotometryError(f"unexpected value {t!r} after the candela table (wrong counts?)", n)
    bad_cd = next(((i, j) for i, r in enumerate(rows) for j, c in enumerate(r) if c < 0), None)
    if bad_cd is not None:
        i, j = bad_cd
        raise PhotometryError(
            f"negative candela value {rows[i][j]:g} (horizontal angle {h[i]:g}, vertical angle {v[j]:g})",
            toks.line_of(cd_at + i * nv + j),
        )
    return rows
