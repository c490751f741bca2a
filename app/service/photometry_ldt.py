"""The EULUMDAT reader (``.ldt``: a fixed line layout, intensities in cd per 1000 lm), each error naming its
line."""

from __future__ import annotations

import math

from app.service.photometry_table import MAX_ANGLES, Photometry, PhotometryError, check_size, expand_type_c


class _Lines:
    """The file's lines by their 1-based number, read as text, numbers or whole numbers."""

    def __init__(self, text: str) -> None:
        self.lines = text.splitlines()

    def at(self, n: int) -> str:
        if n > len(self.lines):
            raise PhotometryError("the file ends early (truncated EULUMDAT)", len(self.lines))
        return self.lines[n - 1].strip()

    def num(self, n: int, what: str) -> float:
        try:
            v = float(self.at(n).replace(",", "."))
        except ValueError:
            raise PhotometryError(f"{what}: {self.at(n)!r} is not a number", n) from None
        if not math.isfinite(v):
            raise PhotometryError(f"{what} is not finite", n)
        return v

    def whole(self, n: int, what: str, lo: int, hi: int) -> int:
        v = self.num(n, what)
        if v != int(v) or not lo <= v <= hi:
            raise PhotometryError(f"{what} must be a whole number from {lo} to {hi}, got {v:g}", n)
        return int(v)


def parse_ldt(text: str) -> Photometry:
    """Read a EULUMDAT file (fixed line layout; intensities in cd per 1000 lm)."""
    check_size(text)
    f = _Lines(text)
    isym = f.whole(3, "symmetry indicator Isym", 0, 4)
    mc = f.whole(4, "number of C planes", 1, MAX_ANGLES)
    ng = f.whole(6, "number of gamma angles", 2, MAX_ANGLES)
    name = f.at(9)
    length_mm, width_mm = f.num(16, "luminous area length"), f.num(17, "luminous area width")
    lorl = f.num(23, "light output ratio")
    conv = f.num(24, "conversion factor")
    flux_lamps, watts, row = _lamp_sets(f)
    row += 10  # direct ratios for ten room indices
    c_angles = [f.num(row + i, "C angle") for i in range(mc)]
    row += mc
    g_angles = [f.num(row + i, "gamma angle") for i in range(ng)]
    row += ng
    planes = {0: mc, 1: 1, 2: mc // 2 + 1, 3: mc // 2 + 1, 4: mc // 4 + 1}[isym]
    first_plane = {0: 0, 1: 0, 2: 0, 3: mc // 4, 4: 0}[isym]
    values, row = _intensities(f, row, planes, g_angles)
    extra = [ln for ln in f.lines[row - 1 :] if ln.strip()]
    if extra:
        raise PhotometryError(f"unexpected line {extra[0][:40]!r} after the intensity table (wrong counts?)", row)
    if any(b <= a for a, b in zip(g_angles, g_angles[1:], strict=False)) or g_angles[0] < 0 or g_angles[-1] > 180:
        raise PhotometryError("gamma angles must rise within 0-180", row - planes * ng - ng)
    scale = flux_lamps / 1000.0 * (conv if conv > 0 else 1.0)
    rows = [[x * scale for x in r] for r in values]
    used = c_angles[first_plane : first_plane + planes] if isym != 1 else [0.0]
    az, rows = (used, rows) if isym == 0 else expand_type_c(used, rows, None)
    declared = flux_lamps * lorl / 100.0 if flux_lamps > 0 else None
    return Photometry(
        "ldt",
        g_angles,
        az,
        rows,
        declared,
        width_mm / 1000.0,
        length_mm / 1000.0,
        watts or None,
        name,
        [f"EULUMDAT, symmetry {isym}"],
    )


def _lamp_sets(f: _Lines) -> tuple[float, float, int]:
    """The lamp sets' total flux [lm] and wattage [W], and the line after the last set."""
    sets = f.whole(26, "number of lamp sets", 1, 20)
    flux_lamps, watts = 0.0, 0.0
    row = 27
    for s in range(sets):
        f.num(row, f"lamp set {s + 1} count")  # read for its line; the set's flux is already its total
        # EULUMDAT gives each lamp set's *total* luminous flux (all its lamps together), so it is never
        # multiplied by the lamp count (format description, from memory: "total luminous flux of lamps").
        flux_lamps += f.num(row + 2, f"lamp set {s + 1} flux")
        watts += f.num(row + 5, f"lamp set {s + 1} wattage")
        row += 6
    return flux_lamps, watts, row


def _intensities(f: _Lines, row: int, planes: int, g_angles: list[float]) -> tuple[list[list[float]], int]:
    """The intensity table [cd/klm] from `row`, one list per C plane, and the line after it."""
    ng = len(g_angles)
    values = []
    for p in range(planes):
        plane = [f.num(row + i, f"intensity (plane {p + 1}, gamma {g_angles[i]:g})") for i in range(ng)]
        for i, v in enumerate(plane):
            if v < 0:  # refused as LM-63 files are: a luminous intensity cannot be negative
                raise PhotometryError(
                    f"negative intensity {v:g} cd/klm (plane {p + 1}, gamma {g_angles[i]:g})", row + i
                )
        values.append(plane)
        row += ng
    return values, row
