"""Angular intensity distributions of emitters, in each emitter's own frame.

Every distribution is expressed as intensity per unit flux, ``I(θ, φ) / Φ``
[sr⁻¹], with θ the angle from the emitter's own nadir (its aim axis) and φ the
azimuth in the emitter's own frame, so that ∫∫ I dΩ = Φ over the whole sphere
exactly (or to the quadrature tolerance for a table). A cosⁿ beam sends all its
flux into its lower hemisphere (θ < 90°); a table sends there only its own share.

References
----------
- Lambert's cosine law: I(θ) = I₀ cos θ, whose flux is Φ = π I₀.
- A cos^n beam: I(θ) = I₀ cosⁿθ, Φ = 2π I₀ / (n + 1).
- Zonal method: Φ = Σ Ī_zone 2π (cos θ₁ − cos θ₂) for a rotationally symmetric
  distribution; in general Φ = ∫∫ I(θ, φ) sin θ dθ dφ.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class Distribution:
    """An intensity distribution in the emitter's frame; compare and hash by ``key``.

    kind : 'cosine_power' (Lambertian is exponent 1) or 'tabulated'.
    exponent : n of the cosⁿ beam.
    polar_rad, azimuth_rad, table_per_sr : the normalised table (tabulated only);
        rows per azimuth, columns per polar angle, values I/Φ [sr⁻¹].
    """

    kind: str
    exponent: float = 1.0
    key: str = ""
    polar_rad: np.ndarray | None = field(default=None, compare=False, hash=False, repr=False)
    azimuth_rad: np.ndarray | None = field(default=None, compare=False, hash=False, repr=False)
    table_per_sr: np.ndarray | None = field(default=None, compare=False, hash=False, repr=False)


def cosine_exponent_from_beam_angle(beam_angle_deg):
    """n of a cosⁿ beam whose full angle at half intensity is ``beam_angle_deg``.

    cosⁿ(β/2) = 1/2  ⇒  n = ln(1/2) / ln cos(β/2). A Lambertian emitter (n = 1) has β = 120°.
    """
    half = np.radians(np.asarray(beam_angle_deg, dtype=float)) / 2.0
    return np.log(0.5) / np.log(np.cos(half))


def lambertian() -> Distribution:
    return Distribution(kind="cosine_power", exponent=1.0, key="cos^1")


def cosine_power(exponent: float) -> Distribution:
    if exponent <= 0:
        raise ValueError("a cosine-power exponent must be > 0")
    return Distribution(kind="cosine_power", exponent=float(exponent), key=f"cos^{exponent:.9g}")


def _interp_table(polar_rad, azimuth_rad, table, theta, phi):
    """Bilinear interpolation in (φ, θ); φ wraps round 2π; θ beyond the table gives 0."""
    theta = np.asarray(theta, dtype=float)
    phi = np.mod(np.asarray(phi, dtype=float), 2.0 * np.pi)
    it = np.interp(theta, polar_rad, np.arange(polar_rad.size), right=np.nan)
    outside = np.isnan(it)
    it = np.nan_to_num(it, nan=0.0)
    i0 = np.clip(np.floor(it).astype(int), 0, max(polar_rad.size - 2, 0))
    ft = it - i0 if polar_rad.size > 1 else np.zeros_like(it)
    i1 = np.minimum(i0 + 1, polar_rad.size - 1)
    if azimuth_rad.size == 1:
        row = table[0]
        out = row[i0] * (1 - ft) + row[i1] * ft
    else:
        az = np.append(azimuth_rad, azimuth_rad[0] + 2.0 * np.pi)
        tab = np.vstack([table, table[:1]])
        ja = np.interp(phi, az, np.arange(az.size))
        j0 = np.clip(np.floor(ja).astype(int), 0, az.size - 2)
        fa = ja - j0
        j1 = j0 + 1
        out = (tab[j0, i0] * (1 - ft) + tab[j0, i1] * ft) * (1 - fa) + (tab[j1, i0] * (1 - ft) + tab[j1, i1] * ft) * fa
    return np.where(outside, 0.0, out)


def _table_key(polar_rad, azimuth_rad, table) -> str:
    """Content key of a table: its angles as well as its values (two tables alike but on other angles differ)."""
    h = hashlib.sha1()
    for a in (polar_rad, azimuth_rad, table):
        a = np.ascontiguousarray(a, dtype=float)
        h.update(str(a.shape).encode())
        h.update(a.tobytes())
    return "table:" + h.hexdigest()


def tabulated(polar_deg, azimuth_deg, relative_intensity, key: str = "") -> Distribution:
    """A distribution from a table of relative intensities, normalised to unit flux over the whole sphere.

    The table covers azimuths in the emitter's frame over [0, 360) (one azimuth
    means rotationally symmetric) and polar angles from the emitter's nadir up to
    at most 180° (0 beyond its last angle). Light above the emitter's horizon
    (θ > 90°) is kept: the lower hemisphere carries only its true share of the
    flux (an isotropic table sends half of it down), and the rest lights the
    walls and ceiling or, on a tilted fixture, whatever it is aimed at. The
    normalisation integrates the same bilinear interpolant that is later
    evaluated, on a fine midpoint grid, so a table and its interpolation carry
    exactly the stated flux.
    """
    polar = np.radians(np.asarray(polar_deg, dtype=float))
    azim = np.radians(np.asarray(azimuth_deg, dtype=float))
    table = np.asarray(relative_intensity, dtype=float)
    if table.shape != (azim.size, polar.size):
        raise ValueError(f"table shape {table.shape} does not match {azim.size} azimuths x {polar.size} polar angles")
    if np.any(table < 0) or not np.all(np.isfinite(table)):
        raise ValueError("intensities must be finite and >= 0")
    if azim.size > 1 and np.isclose(azim[-1] - azim[0], 2 * np.pi):
        azim, table = azim[:-1], table[:-1]  # 360° repeats 0°
    total = zonal_flux(polar, azim, table)
    if total <= 0:
        raise ValueError("the table emits no light")
    return Distribution(
        kind="tabulated",
        key=key or _table_key(polar, azim, table),
        polar_rad=polar,
        azimuth_rad=azim,
        table_per_sr=table / total,
    )


def zonal_flux(polar_rad, azimuth_rad, table, n_theta: int = 720, n_phi: int = 360, upper_rad: float = np.pi) -> float:
    """∫∫ I(θ, φ) sin θ dθ dφ of the bilinear interpolant over θ ≤ ``upper_rad``, by the midpoint rule.

    With one azimuth (rotational symmetry) this is the zonal method over fine
    zones: Φ = Σ I(θ_mid) 2π (cos θ₁ − cos θ₂). ``upper_rad`` = π/2 gives the
    flux of the lower hemisphere alone.
    """
    top = min(float(upper_rad), float(np.max(polar_rad)))
    if top <= 0:
        return 0.0
    n_theta = max(1, int(np.ceil(n_theta * top / (np.pi / 2))))  # zones as fine as 1/8° whatever the range
    edges = np.linspace(0.0, top, n_theta + 1)
    mids = 0.5 * (edges[1:] + edges[:-1])
    zone_sr = 2.0 * np.pi * (np.cos(edges[:-1]) - np.cos(edges[1:]))
    if np.asarray(azimuth_rad).size == 1:
        return float(np.sum(_interp_table(polar_rad, azimuth_rad, table, mids, 0.0) * zone_sr))
    phis = (np.arange(n_phi) + 0.5) * (2.0 * np.pi / n_phi)
    vals = _interp_table(polar_rad, azimuth_rad, table, mids[None, :], phis[:, None])
    return float(np.sum(vals.mean(axis=0) * zone_sr))


def downward_share(dist: Distribution) -> float:
    """Share of the flux sent into the emitter's lower hemisphere (θ < 90°): 1 for a cosⁿ beam."""
    if dist.kind == "cosine_power":
        return 1.0
    return zonal_flux(dist.polar_rad, dist.azimuth_rad, dist.table_per_sr, upper_rad=np.pi / 2)


def sends_upward(dist: Distribution) -> bool:
    """Whether any light leaves above the emitter's horizon (θ > 90°): never for a cosⁿ beam."""
    if dist.kind == "cosine_power":
        return False
    polar = dist.polar_rad
    return bool(polar.max() > np.pi / 2 + 1e-12 and np.any(dist.table_per_sr[:, polar >= np.pi / 2 - 1e-12] > 0))


def intensity_per_flux(dist: Distribution, cos_theta, phi=0.0):
    """I(θ, φ)/Φ [sr⁻¹] in the direction with cos θ = ``cos_theta`` from the emitter's nadir.

    A cosⁿ beam gives 0 above its horizon (cos θ < 0); a table gives what it holds there.
    """
    c = np.asarray(cos_theta)
    if dist.kind == "cosine_power":
        cc = np.maximum(c, 0.0)
        n = dist.exponent
        # cos^1 is common enough to skip the power call.
        val = cc if n == 1.0 else cc**n
        return val * ((n + 1.0) / (2.0 * np.pi))
    theta = np.arccos(np.clip(c, -1.0, 1.0))
    return _interp_table(dist.polar_rad, dist.azimuth_rad, dist.table_per_sr, theta, phi).astype(c.dtype, copy=False)
