"""Photometric files (IES LM-63 and EULUMDAT) into fixture types the engine can place.

Both formats are open and public: ANSI/IES LM-63 (1995, 2002 and 2019 revisions;
older files without the first identification line are read as 1991) and
EULUMDAT (``.ldt``). Only photometric type C (luminaires aimed down, vertical
angle 0 at nadir) can be placed; types A and B are refused.

A file in lumens and candela is turned into photons with a µmol-per-lumen
factor, from the fixture's spectrum (:mod:`app.engine.spectrum`) or given by
the grower; some horticultural makers publish files whose numbers already
are µmol/s and µmol s⁻¹ sr⁻¹, which the grower says with ``flux_unit='photon'``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

MAX_FILE_BYTES = 2 * 1024 * 1024
MAX_ANGLES = 361


class PhotometryError(ValueError):
    """A file that cannot be read, with the line where it went wrong."""

    def __init__(self, message: str, line: int | None = None) -> None:
        self.line = line
        super().__init__(f"line {line}: {message}" if line else message)


@dataclass
class Photometry:
    format: str
    polar_deg: list[float]
    azimuth_deg: list[float]  # expanded to cover 0-360 (or a single 0 for symmetric)
    candela: list[list[float]]  # rows per azimuth, columns per polar angle, absolute
    declared_flux: float | None  # lumens (or photons) the file states for the luminaire
    width_m: float = 0.0
    length_m: float = 0.0
    input_watts: float | None = None
    name: str = ""
    notes: list[str] = field(default_factory=list)

    @property
    def zonal_flux(self) -> float:
        return zonal_flux(self.polar_deg, self.azimuth_deg, self.candela)

    @property
    def downward_flux(self) -> float:
        return zonal_flux(self.polar_deg, self.azimuth_deg, self.candela, upper_deg=90.0)


def zonal_flux(polar_deg, azimuth_deg, candela, upper_deg: float = 180.0) -> float:
    """Total flux of an intensity table by the zonal method.

    Φ = Σ_zones Ī · 2π (cos θ₁ − cos θ₂), Ī the zone's mean intensity (the mean
    of its two boundary values, averaged over azimuth with trapezoid weights
    round the full circle).
    """
    th = np.radians(np.asarray(polar_deg, float))
    cd = np.asarray(candela, float)
    az = np.asarray(azimuth_deg, float)
    if az.size == 1:
        ring = cd[0]
    else:
        ext = np.append(az, az[0] + 360.0)
        w = np.diff(ext)
        weights = 0.5 * (w + np.roll(w, 1))  # trapezoid weight of each azimuth on the circle
        ring = (cd * weights[:, None]).sum(axis=0) / 360.0
    upper = math.radians(upper_deg)
    total = 0.0
    for i in range(th.size - 1):
        a, b = th[i], min(th[i + 1], upper)
        if a >= upper:
            break
        frac = (b - a) / (th[i + 1] - a)
        ib = ring[i] + frac * (ring[i + 1] - ring[i])
        total += 0.5 * (ring[i] + ib) * 2 * math.pi * (math.cos(a) - math.cos(b))
    return float(total)


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


def _check_size(text: str) -> None:
    if len(text.encode("utf-8", "ignore")) > MAX_FILE_BYTES:
        raise PhotometryError(f"the file is larger than {MAX_FILE_BYTES:,} bytes; a photometric file is far smaller")


def _expand_type_c(h: list[float], cd: list[list[float]], line: int | None) -> tuple[list[float], list[list[float]]]:
    """Expand a type C table's horizontal symmetry to azimuths over 0-360."""
    if len(h) == 1:
        return [0.0], cd
    first, last = h[0], h[-1]

    def mirror(angles, rows, axis_deg):
        # Reflection about the plane at axis_deg: I(2·axis − φ) = I(φ).
        extra = [(2 * axis_deg - a, r) for a, r in zip(angles, rows, strict=True) if abs(a - axis_deg) > 1e-9]
        merged = dict(zip(angles, rows, strict=True))
        for a, r in extra:
            merged.setdefault(round(a % 360, 9), r)
        keys = sorted(merged)
        return keys, [merged[k] for k in keys]

    if first == 0 and last == 90:
        a, r = mirror(h, cd, 90.0)
        a, r = mirror(a, r, 180.0)
    elif first == 0 and last == 180:
        a, r = mirror(h, cd, 180.0)
    elif first == 90 and last == 270:
        a, r = mirror(h, cd, 90.0)
    elif first == 0 and last == 360:
        a, r = h[:-1], cd[:-1]
    elif first == 0 and last > 180:
        a, r = h, cd
    else:
        raise PhotometryError(
            f"horizontal angles {first:g}-{last:g} are not a type C symmetry this app knows "
            "(0, 0-90, 0-180, 90-270 or 0-360)",
            line,
        )
    return [float(x) for x in a], r


def parse_ies(text: str) -> Photometry:
    """Read an IES LM-63 file (1991/1995/2002/2019), refusing what it cannot place."""
    _check_size(text)
    lines = [(n, raw.rstrip("\r")) for n, raw in enumerate(text.splitlines(), start=1)]
    if not lines:
        raise PhotometryError("the file is empty")
    first = lines[0][1].strip().upper()
    version = "LM-63-1991"
    if first.startswith("IESNA:LM-63-1995") or first.startswith("IESNA91"):
        version = "LM-63-1995"
    elif first.startswith("IESNA:LM-63-2002"):
        version = "LM-63-2002"
    elif first.startswith("IES:LM-63-2019"):
        version = "LM-63-2019"
    elif first.startswith("IES") and ":" in first:
        raise PhotometryError(f"unknown IES revision {lines[0][1].strip()!r}", 1)
    keywords: dict[str, str] = {}
    tilt_at = None
    for n, line in lines:
        s = line.strip()
        if s.upper().startswith("TILT"):
            tilt_at = n
            break
        m = re.match(r"\[(\w+)\]\s*(.*)", s)
        if m:
            keywords[m.group(1).upper()] = m.group(2)
    if tilt_at is None:
        raise PhotometryError("no TILT= line: this is not an IES LM-63 photometric file")
    tilt = lines[tilt_at - 1][1].split("=", 1)[-1].strip().upper()
    notes = [f"IES {version}"]
    toks = _Tokens([(n, line) for n, line in lines[tilt_at:]])
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
    v_at = toks.pos
    v = toks.numbers(nv, "vertical angle")
    h_at = toks.pos
    h = toks.numbers(nh, "horizontal angle")

    def line_of(pos: int) -> int:
        return toks.items[pos][0]

    # Each error names the line of the value at fault, not the line the table started on.
    bad_v = next((i for i, a in enumerate(v) if a < 0 or a > 180 or (i and a <= v[i - 1])), None)
    if bad_v is not None:
        raise PhotometryError(
            f"vertical angles must rise within 0-180 (angle {bad_v + 1} is {v[bad_v]:g})", line_of(v_at + bad_v)
        )
    if v[0] >= 90:
        raise PhotometryError(
            "the table holds only upward light (vertical angles from 90); a grow light aims down", line_of(v_at)
        )
    bad_h = next((i for i in range(1, nh) if h[i] <= h[i - 1]), None)
    if bad_h is not None:
        raise PhotometryError(
            f"horizontal angles must rise (angle {bad_h + 1} is {h[bad_h]:g} after {h[bad_h - 1]:g})",
            line_of(h_at + bad_h),
        )
    cd_at = toks.pos
    rows = []
    for i in range(nh):
        rows.append(
            [
                c * multiplier * ballast * (ballast_lamp if version == "LM-63-1995" else 1.0)
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
            line_of(cd_at + i * nv + j),
        )
    if v[0] > 0:  # tables starting below nadir: start the interpolant at nadir with the first value
        v = [0.0, *v]
        rows = [[r[0], *r] for r in rows]
    az, rows = _expand_type_c(h, rows, line_v)
    declared = lamps * lumens_per_lamp * multiplier if lumens_per_lamp > 0 else None
    if lumens_per_lamp <= 0:
        notes.append("absolute photometry (lumens per lamp = -1): the file declares no total")
    return Photometry(
        "ies",
        v,
        az,
        rows,
        declared,
        width,
        length,
        watts if watts > 0 else None,
        keywords.get("LUMINAIRE", keywords.get("TEST", "")),
        notes,
    )


def parse_ldt(text: str) -> Photometry:
    """Read a EULUMDAT file (fixed line layout; intensities in cd per 1000 lm)."""
    _check_size(text)
    lines = text.splitlines()

    def at(n: int) -> str:
        if n > len(lines):
            raise PhotometryError("the file ends early (truncated EULUMDAT)", len(lines))
        return lines[n - 1].strip()

    def num(n: int, what: str) -> float:
        try:
            v = float(at(n).replace(",", "."))
        except ValueError:
            raise PhotometryError(f"{what}: {at(n)!r} is not a number", n) from None
        if not math.isfinite(v):
            raise PhotometryError(f"{what} is not finite", n)
        return v

    def whole(n: int, what: str, lo: int, hi: int) -> int:
        v = num(n, what)
        if v != int(v) or not lo <= v <= hi:
            raise PhotometryError(f"{what} must be a whole number from {lo} to {hi}, got {v:g}", n)
        return int(v)

    isym = whole(3, "symmetry indicator Isym", 0, 4)
    mc = whole(4, "number of C planes", 1, MAX_ANGLES)
    ng = whole(6, "number of gamma angles", 2, MAX_ANGLES)
    name = at(9)
    length_mm, width_mm = num(16, "luminous area length"), num(17, "luminous area width")
    lorl = num(23, "light output ratio")
    conv = num(24, "conversion factor")
    sets = whole(26, "number of lamp sets", 1, 20)
    flux_lamps, watts = 0.0, 0.0
    row = 27
    for s in range(sets):
        num(row, f"lamp set {s + 1} count")  # read for its line; the set's flux is already its total
        # EULUMDAT gives each lamp set's *total* luminous flux (all its lamps together), so it is never
        # multiplied by the lamp count (format description, from memory: "total luminous flux of lamps").
        flux_lamps += num(row + 2, f"lamp set {s + 1} flux")
        watts += num(row + 5, f"lamp set {s + 1} wattage")
        row += 6
    row += 10  # direct ratios for ten room indices
    c_angles = [num(row + i, "C angle") for i in range(mc)]
    row += mc
    g_angles = [num(row + i, "gamma angle") for i in range(ng)]
    row += ng
    planes = {0: mc, 1: 1, 2: mc // 2 + 1, 3: mc // 2 + 1, 4: mc // 4 + 1}[isym]
    first_plane = {0: 0, 1: 0, 2: 0, 3: mc // 4, 4: 0}[isym]
    values = []
    for p in range(planes):
        plane = [num(row + i, f"intensity (plane {p + 1}, gamma {g_angles[i]:g})") for i in range(ng)]
        for i, v in enumerate(plane):
            if v < 0:  # refused as LM-63 files are: a luminous intensity cannot be negative
                raise PhotometryError(
                    f"negative intensity {v:g} cd/klm (plane {p + 1}, gamma {g_angles[i]:g})", row + i
                )
        values.append(plane)
        row += ng
    extra = [ln for ln in lines[row - 1 :] if ln.strip()]
    if extra:
        raise PhotometryError(f"unexpected line {extra[0][:40]!r} after the intensity table (wrong counts?)", row)
    if any(b <= a for a, b in zip(g_angles, g_angles[1:], strict=False)) or g_angles[0] < 0 or g_angles[-1] > 180:
        raise PhotometryError("gamma angles must rise within 0-180", row - planes * ng - ng)
    scale = flux_lamps / 1000.0 * (conv if conv > 0 else 1.0)
    rows = [[x * scale for x in r] for r in values]
    used = c_angles[first_plane : first_plane + planes] if isym != 1 else [0.0]
    az, rows = (used, rows) if isym == 0 else _expand_type_c(used, rows, None)
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


def fixture_type_from(
    ph: Photometry,
    *,
    type_id: str,
    name: str,
    power_w: float | None,
    flux_unit: str = "lumen",
    umol_per_lumen: float | None = None,
) -> tuple[dict, dict]:
    """A fixture type (as room-file JSON) and a report of the conversion.

    The fixture's PPF is the table's whole photon flux and the table is kept whole: the engine sends the
    downward share to the canopy and the upward share to the walls and ceiling (app/engine/distributions.py).
    Both shares are reported.
    """
    total = ph.zonal_flux
    down = ph.downward_flux
    if total <= 0:
        raise PhotometryError("the table sends no light")
    if flux_unit == "photon":
        factor = 1.0
    elif umol_per_lumen and umol_per_lumen > 0:
        factor = umol_per_lumen
    else:
        raise PhotometryError(
            "a file in lumens needs a µmol-per-lumen factor: give the fixture's spectrum or the factor"
        )
    ppf = total * factor
    power = power_w or ph.input_watts
    if not power:
        raise PhotometryError("the file gives no input watts: enter the fixture's power")
    polar = list(ph.polar_deg)
    table = [[max(v, 0.0) for v in r] for r in ph.candela]
    # LM-63 (and EULUMDAT) give the opening's length along the C0-C180 photometric axis and its width along
    # C90-C270; the engine's local x is azimuth 0, so the length goes there even when it is the shorter side
    # (laying the longer side along x would turn the opening 90 deg against its own candela table).
    geometry = (
        {"kind": "panel", "length_m": round(ph.length_m, 4), "width_m": round(ph.width_m, 4)}
        if min(ph.length_m, ph.width_m) > 0
        else {"kind": "point"}
    )
    ftype = {
        "id": type_id,
        "name": name[:120] or "Imported fixture",
        "geometry": geometry,
        "beam": {"kind": "tabulated", "polar_deg": polar, "azimuth_deg": ph.azimuth_deg, "relative_intensity": table},
        "ppf_umol_s": round(ppf, 3),
        "power_w": round(float(power), 3),
        "weight_kg": None,
        "notes": f"Imported from a {ph.format.upper()} file; " + "; ".join(ph.notes),
    }
    report = {
        "zonal_flux": total,
        "downward_flux": down,
        "upward_share": 1 - down / total if total > 0 else 0.0,
        "downward_share": down / total if total > 0 else 0.0,
        "declared_flux": ph.declared_flux,
        "zonal_over_declared": total / ph.declared_flux if ph.declared_flux else None,
        "flux_unit": flux_unit,
        "umol_per_unit": factor,
        "ppf_umol_s": ppf,
        "umol_per_j": ppf / float(power),
        "notes": ph.notes,
    }
    return ftype, report


DECLARED_FLUX_TOLERANCE = 0.05
"""Share by which a file's declared flux may differ from its table's zonal integral before Leafcast says so
(rounding of the table and coarse angle steps stay well inside it; common practice, no source)."""


def flux_findings(report: dict) -> list[dict]:
    """A finding when the flux a file declares disagrees with the integral of its own candela table."""
    ratio = report.get("zonal_over_declared")
    if ratio is None or abs(ratio - 1.0) <= DECLARED_FLUX_TOLERANCE:
        return []
    return [
        {
            "level": "suspicious",
            "code": "declared_flux_disagrees",
            "message": f"The file declares {report['declared_flux']:,.0f} but its candela table integrates (zonal "
            f"method) to {report['zonal_flux']:,.0f}, {ratio:.0%} of it. Leafcast uses the table's own integral "
            "(what reaches the canopy follows the table); check the file's lamp count, multiplier and units.",
        }
    ]
