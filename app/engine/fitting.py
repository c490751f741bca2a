"""A fixture from a published PPFD map, and whether that map can be true.

The fit uses the engine itself: for each candidate beam exponent n and square
emitter side a, the engine's open-air map of a unit-flux emitter at the stated
hanging height is compared with the readings, and the PPF follows by linear
least squares (PPF = Σ m·r / Σ m²). The best (n, a) on a coarse grid is then
refined by a compass search in (ln n, a).

References
----------
- Photon ceiling from the Planck relation: see :mod:`app.engine.spectrum`;
  no PAR photon carries fewer joules than one at 700 nm, so no fixture can
  exceed 700 × 0.0083593 = 5.85 µmol/J whatever its spectrum.
- Best measured fixture efficacies: Kusuma P., Pattison P.M. & Bugbee B. (2020),
  "From physics to fixtures to food: current and potential LED efficacy",
  Horticulture Research 7:56 (about 3 µmol/J for the best fixtures then; the
  exact figure here is from memory).
"""

from __future__ import annotations

import numpy as np

from app.engine.direct import direct_patch
from app.engine.distributions import cosine_power
from app.engine.scene import Emitter, Grid
from app.engine.spectrum import umol_per_joule

PAR_CEILING_UMOL_J = float(umol_per_joule(700.0))
BEST_MEASURED_UMOL_J = 3.1  # from memory of Kusuma, Pattison & Bugbee (2020); see module references
SUSPICIOUS_MARGIN = 0.10
# The one efficacy threshold Leafcast flags above: 10 % over the best measured fixtures (the margin is Leafcast's
# own allowance for measurement spread, common practice, no source). The page and the README quote this value.
SUSPICIOUS_ABOVE_UMOL_J = round(BEST_MEASURED_UMOL_J * (1 + SUSPICIOUS_MARGIN), 2)
EXPONENT_RANGE = (0.3, 30.0)
"""Beam exponents the fit tries: cos^0.3 is a 168° beam, cos^30 a 25° one (half-power angles)."""
BOUND_SHARE = 0.02  # a fitted figure within this share of its range's edge stopped there


def map_grid(shape: tuple[int, int], cell_m: float) -> Grid:
    """Points at the centres of the map's cells, the fixture straight above the middle."""
    ny, nx = shape
    return Grid(
        "map", -(nx - 1) * cell_m / 2, -(ny - 1) * cell_m / 2, (nx - 1) * cell_m, (ny - 1) * cell_m, 0.0, cell_m
    )


def model_map(shape, cell_m: float, height_m: float, exponent: float, side_m: float, flux_umol_s: float = 1.0):
    """Open-air PPFD map [µmol m⁻² s⁻¹] of a square cosⁿ panel (side 0: a point) hung at height_m."""
    g = map_grid(shape, cell_m)
    shape_kind = "panel" if side_m > 1e-6 else "point"
    e = Emitter("fit", 0.0, 0.0, height_m, flux_umol_s, cosine_power(exponent), shape_kind, side_m, side_m)
    out = np.zeros((g.ny, g.nx))
    p = direct_patch(e, g, dtype=np.float64)
    if p is not None:
        p.add_into(out)
    return out


def _score(readings, cell_m, height_m, n, a):
    m = model_map(readings.shape, cell_m, height_m, n, a)
    mm = float((m * m).sum())
    ppf = float((m * readings).sum()) / mm if mm > 0 else 0.0
    resid = readings - ppf * m
    return float(np.sqrt(np.mean(resid**2))), ppf, resid


def fit_ppfd_map(readings, cell_m: float, height_m: float, max_side_m: float | None = None) -> dict:
    """Fit PPF, beam exponent (and beam angle) and emitter size to a map of readings.

    readings : (ny, nx) PPFD at the centres of square cells of side cell_m, fixture above the centre.
    Returns the fitted figures, the residual per cell and the fit's RMS error relative to the mean.
    """
    r = np.asarray(readings, dtype=float)
    if r.ndim != 2 or min(r.shape) < 3:
        raise ValueError("the map needs at least 3 × 3 readings")
    if np.any(r < 0) or not np.all(np.isfinite(r)) or r.max() <= 0:
        raise ValueError("readings must be finite, non-negative, and not all zero")
    if cell_m <= 0 or height_m <= 0:
        raise ValueError("cell size and hanging height must be > 0")
    span = max_side_m if max_side_m is not None else min(r.shape) * cell_m

    ln_lo, ln_hi = np.log(EXPONENT_RANGE)

    def cost(log_n, side):
        return _score(r, cell_m, height_m, float(np.exp(log_n)), side)[0]

    grid = [(cost(ln, a), ln, a) for ln in np.linspace(ln_lo, ln_hi, 20) for a in np.linspace(0.0, span, 13)]
    best, ln, a = min(grid, key=lambda t: t[0])
    # Compass search: try the four neighbours, move on improvement, halve the steps when none improves.
    step_ln, step_a = 0.25, span / 12
    for _ in range(200):
        if step_ln < 1e-4 and step_a < 1e-5:
            break
        moves = [
            (min(ln + step_ln, ln_hi), a),
            (max(ln - step_ln, ln_lo), a),
            (ln, min(a + step_a, span)),
            (ln, max(a - step_a, 0.0)),
        ]
        scored = min(((cost(cl, ca), cl, ca) for cl, ca in moves), key=lambda t: t[0])
        if scored[0] < best:
            best, ln, a = scored
        else:
            step_ln, step_a = step_ln / 2, step_a / 2
    n, a = float(np.exp(ln)), a
    rms, ppf, resid = _score(r, cell_m, height_m, n, a)
    half = np.degrees(np.arccos(0.5 ** (1 / n)))
    at_bound = []
    if ln - ln_lo < BOUND_SHARE * (ln_hi - ln_lo):
        at_bound.append("widest_beam")
    if ln_hi - ln < BOUND_SHARE * (ln_hi - ln_lo):
        at_bound.append("narrowest_beam")
    if span - a < BOUND_SHARE * span:
        at_bound.append("largest_emitter")
    return {
        "ppf_umol_s": ppf,
        "exponent": float(n),
        "beam_angle_deg": float(2 * half),
        "side_m": float(a),
        "rms_error": rms / float(r.mean()),
        "max_abs_error_umol_m2_s": float(np.abs(resid).max()),
        "residuals": np.round(resid, 2).tolist(),
        "at_bound": at_bound,
    }


def fit_findings(fit: dict, cell_m: float, shape: tuple[int, int]) -> list[dict]:
    """Warnings when the fit stopped at the edge of what it tries: its figures are then not a fixture's."""
    span = min(shape) * cell_m
    words = {
        "widest_beam": f"the beam came out as wide as the fit allows ({fit['beam_angle_deg']:.0f}°)",
        "narrowest_beam": f"the beam came out as narrow as the fit allows ({fit['beam_angle_deg']:.0f}°)",
        "largest_emitter": f"the emitter came out as large as the map ({fit['side_m']:.2f} m across a "
        f"{span:.2f} m map)",
    }
    if not fit["at_bound"]:
        return []
    reasons = "; ".join(words[k] for k in fit["at_bound"])
    return [
        {
            "level": "suspicious",
            "code": "fit_at_bound",
            "message": f"The fit is not a trustworthy fixture: {reasons}. The map may be measured with "
            "reflectors, cropped, or not of one fixture in open air; check the fitted map against the readings "
            "before using this type.",
        }
    ]


def predict_at_heights(fit: dict, shape, cell_m: float, heights_m) -> list[dict]:
    """The fitted fixture's map at other hanging heights, with its average, peak and centre values."""
    out = []
    for h in heights_m:
        m = model_map(shape, cell_m, float(h), fit["exponent"], fit["side_m"], fit["ppf_umol_s"])
        ny, nx = m.shape
        out.append(
            {
                "height_m": float(h),
                "avg": float(m.mean()),
                "max": float(m.max()),
                "centre": float(m[ny // 2, nx // 2]),
                "map": np.round(m, 1).tolist(),
            }
        )
    return out


def plausibility(
    readings,
    cell_m: float,
    claimed_ppf_umol_s: float | None,
    power_w: float | None,
    fitted_ppf_umol_s: float | None = None,
    ceiling_umol_j: float | None = None,
) -> list[dict]:
    """Checks a published map against physics; each finding says why in numbers.

    A map measured in open air cannot hold more photons than the fixture emits
    (Σ PPFD × cell area ≤ PPF); PPF per watt cannot exceed the photon ceiling of
    the spectrum (or 5.85 µmol/J for any PAR spectrum).
    """
    r = np.asarray(readings, dtype=float)
    integral = float(r.sum() * cell_m * cell_m)
    area = r.size * cell_m * cell_m
    out = [
        {
            "level": "info",
            "code": "map_integral",
            "message": f"The map holds {integral:.0f} µmol/s over its {area:.2f} m².",
        }
    ]
    if claimed_ppf_umol_s:
        if integral > claimed_ppf_umol_s * 1.02:
            out.append(
                {
                    "level": "impossible",
                    "code": "more_photons_than_emitted",
                    "message": f"The map holds {integral:.0f} µmol/s, {integral / claimed_ppf_umol_s:.0%} of the "
                    f"{claimed_ppf_umol_s:.0f} µmol/s the fixture is said to emit: in open air a map "
                    "cannot hold more photons than the fixture emits (measured with reflectors?).",
                }
            )
        if fitted_ppf_umol_s and fitted_ppf_umol_s > claimed_ppf_umol_s * (1 + SUSPICIOUS_MARGIN):
            out.append(
                {
                    "level": "suspicious",
                    "code": "map_brighter_than_ppf",
                    "message": f"Fitting the map needs {fitted_ppf_umol_s:.0f} µmol/s, "
                    f"{fitted_ppf_umol_s / claimed_ppf_umol_s - 1:.0%} more than the claimed PPF.",
                }
            )
    if claimed_ppf_umol_s and power_w:
        # The claim's efficacy may be plausible while the map is not: never let the one read as the other.
        map_impossible = any(f["level"] == "impossible" for f in out)
        out += efficacy_findings(claimed_ppf_umol_s, power_w, ceiling_umol_j, map_impossible=map_impossible)
    return out


def efficacy_findings(
    ppf_umol_s: float, power_w: float, ceiling_umol_j: float | None = None, *, map_impossible: bool = False
) -> list[dict]:
    """PPF per watt against the photon ceiling (Planck relation) and the best measured fixtures."""
    out = []
    eff = ppf_umol_s / power_w
    ceiling = ceiling_umol_j or PAR_CEILING_UMOL_J
    basis = "this spectrum" if ceiling_umol_j else "any PAR spectrum (every photon at 700 nm)"
    if eff > ceiling:
        out.append(
            {
                "level": "impossible",
                "code": "above_photon_ceiling",
                "message": f"{eff:.2f} µmol/J is above the {ceiling:.2f} µmol/J that a perfectly efficient "
                f"source of {basis} could give (Planck relation).",
            }
        )
    elif eff > SUSPICIOUS_ABOVE_UMOL_J:
        out.append(
            {
                "level": "suspicious",
                "code": "above_best_measured",
                "message": f"{eff:.2f} µmol/J is above {SUSPICIOUS_ABOVE_UMOL_J:g} µmol/J, 10 % over the best "
                f"measured fixtures (about {BEST_MEASURED_UMOL_J:g} µmol/J, Kusuma, Pattison & Bugbee 2020; "
                "from memory).",
            }
        )
    else:
        out.append(
            {
                "level": "info",
                "code": "efficacy",
                "message": (
                    f"The claimed figures alone give {eff:.2f} µmol/J: within what measured fixtures reach, "
                    "but the map above does not fit them."
                    if map_impossible
                    else f"{eff:.2f} µmol/J: within what measured fixtures reach."
                ),
            }
        )
    return out
