"""The intensity table every photometric reader fills: :class:`Photometry`, its zonal flux, the expansion of a
type C table's symmetry to the full circle, the readers' error and their size limits."""

from __future__ import annotations

import math
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


def check_size(text: str) -> None:
    if len(text.encode("utf-8", "ignore")) > MAX_FILE_BYTES:
        raise PhotometryError(f"the file is larger than {MAX_FILE_BYTES:,} bytes; a photometric file is far smaller")


def expand_type_c(h: list[float], cd: list[list[float]], line: int | None) -> tuple[list[float], list[list[float]]]:
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
