"""Model against meter: residuals, outliers, and the output factor that best explains the readings.

The model is linear in the fixtures' outputs: the PPFD at reading i is
E_i = Σ_t k_t · A_it, where A_it is what fixture type t gives there at its
modelled output (direct and reflected light together) and k_t scales that
output. Given meter readings m_i, the factors follow by ordinary least squares,

    k = argmin ‖A k − m‖²,   s² = ‖A k − m‖² / (n − p),   cov(k) = s² (AᵀA)⁻¹,

with n readings and p unknowns; the standard error of k_t is √cov_tt.

References
----------
- Ordinary least squares and the covariance of its estimates: Draper N.R. &
  Smith H. (1998), "Applied Regression Analysis", 3rd ed., Wiley, ch. 5
  (s² = RSS / (n − p), Var(b) = s² (XᵀX)⁻¹). Checked against numpy.linalg.lstsq
  and scipy.optimize.curve_fit in tests/engine/test_readings.py.
- Lux to PPFD: Thimijan R.W. & Heins R.D. (1983), HortScience 18(6):818-822;
  the factor comes from :func:`app.engine.spectrum.spectrum_figures`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

OUTLIER_FACTOR = 1.3
"""A reading this many times off both its neighbours and the model is flagged (Leafcast's default, no source)."""
NEIGHBOURS = 4
"""Nearest readings a point is compared with."""


class FitError(ValueError):
    """The least-squares fit refuses to run."""


def lux_to_ppfd(lux, lux_per_ppfd: float):
    """PPFD [µmol m⁻² s⁻¹] from illuminance [lx] with a spectrum's lux per µmol m⁻² s⁻¹ factor."""
    if not lux_per_ppfd > 0:
        raise ValueError("the lux-per-PPFD factor must be > 0")
    return np.asarray(lux, float) / lux_per_ppfd


def residual_figures(measured, model) -> dict:
    """Measured minus model per point (µmol m⁻² s⁻¹ and % of the model), their RMS and the worst point."""
    m = np.asarray(measured, float)
    e = np.asarray(model, float)
    diff = m - e
    with np.errstate(divide="ignore", invalid="ignore"):
        pct = np.where(e > 0, 100.0 * diff / e, np.nan)
    worst = int(np.argmax(np.abs(diff))) if diff.size else None
    finite = pct[np.isfinite(pct)]
    return {
        "diff_umol": diff,
        "diff_pct": pct,
        "rms_umol": float(np.sqrt(np.mean(diff**2))) if diff.size else 0.0,
        "rms_pct": float(np.sqrt(np.mean(finite**2))) if finite.size else float("nan"),
        "mean_pct": float(np.mean(finite)) if finite.size else float("nan"),
        "worst_index": worst,
    }


def outliers(x_m, y_m, measured, model, factor: float = OUTLIER_FACTOR, neighbours: int = NEIGHBOURS):
    """Readings more than ``factor`` times off both their neighbours and the model.

    Each reading's ratio to the model q_i = m_i / E_i is compared with the median
    ratio of its nearest readings: a meter slip (a hand over the sensor, a digit
    typed wrong) is off both, while a real difference between model and room is
    shared by neighbouring readings and is not flagged.
    """
    x, y = np.asarray(x_m, float), np.asarray(y_m, float)
    m, e = np.asarray(measured, float), np.asarray(model, float)
    n = m.size
    flags = np.zeros(n, dtype=bool)
    if n < 3 or factor <= 1:
        return flags
    ok = (e > 0) & (m > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(ok, m / np.where(ok, e, 1.0), np.nan)
    d2 = (x[:, None] - x[None, :]) ** 2 + (y[:, None] - y[None, :]) ** 2
    np.fill_diagonal(d2, np.inf)
    k = min(neighbours, n - 1)
    near = np.argsort(d2, axis=1)[:, :k]
    lim = np.log(factor)
    for i in range(n):
        qn = q[near[i]]
        qn = qn[np.isfinite(qn)]
        if not qn.size:
            continue
        if not ok[i]:
            # A zero reading where the model and the neighbours see light is a slip too.
            flags[i] = m[i] <= 0 < e[i]
            continue
        off_neighbours = abs(np.log(q[i] / np.median(qn))) > lim
        off_model = abs(np.log(q[i])) > lim
        flags[i] = bool(off_neighbours and off_model)
    return flags


@dataclass(frozen=True)
class FactorFit:
    """Least-squares output factors with their standard errors (None when n == p)."""

    factors: np.ndarray
    std_errors: np.ndarray | None
    residual_rms: float
    dof: int


def fit_output_factors(columns, measured, names: list[str] | None = None) -> FactorFit:
    """Factors k minimising ‖A k − m‖², A (n, p): column t is the model of unknown t at each reading.

    Refuses fewer readings than unknowns, and an unknown that contributes nothing at the readings.
    """
    a = np.asarray(columns, float)
    if a.ndim == 1:
        a = a[:, None]
    m = np.asarray(measured, float)
    n, p = a.shape
    names = names or [f"unknown {j + 1}" for j in range(p)]
    if m.shape != (n,):
        raise FitError("one measured value per reading is needed")
    if not (np.all(np.isfinite(a)) and np.all(np.isfinite(m))):
        raise FitError("readings and model must be finite numbers")
    if n < p:
        raise FitError(f"{n} reading(s) cannot fit {p} unknown factor(s): take at least {p} readings")
    dead = [names[j] for j in range(p) if not np.any(a[:, j] > 0)]
    if dead:
        raise FitError(f"{', '.join(dead)} gives no light at any reading point, so its factor cannot be fitted")
    if np.linalg.matrix_rank(a) < p:
        raise FitError(
            "the readings cannot tell these fixture types apart (they light the points in the same proportion)"
        )
    k, _, _, _ = np.linalg.lstsq(a, m, rcond=None)
    r = a @ k - m
    dof = n - p
    se = None
    if dof > 0:
        s2 = float(r @ r) / dof
        cov = s2 * np.linalg.inv(a.T @ a)
        se = np.sqrt(np.diag(cov))
    return FactorFit(k, se, float(np.sqrt(np.mean(r**2))), dof)
