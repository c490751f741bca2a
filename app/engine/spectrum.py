"""Spectra: photon counts, band shares, the photon-efficacy ceiling and the lux-to-PPFD factor.

References
----------
- Photon energy E = h c / λ (Planck relation), with the exact SI constants
  h = 6.62607015e-34 J s, c = 299792458 m/s, N_A = 6.02214076e23 mol⁻¹ (CODATA 2018).
  A perfectly efficient source of wavelength λ gives λ / (h c N_A) mol/J,
  i.e. µmol/J = λ[nm] × 0.0083593.
- Lux to PPFD: Thimijan R.W. & Heins R.D. (1983), "Photometric, radiometric, and
  quantum light units of measure: a review of procedures for interconversion",
  HortScience 18(6):818-822: factor = ∫E(λ) λ/(h c N_A) dλ over 400-700 nm ÷
  (683 lm/W · ∫E(λ) V(λ) dλ), V(λ) the CIE 1924 photopic luminosity function.
"""

from __future__ import annotations

import json
from functools import cache
from importlib import resources

import numpy as np

PLANCK_J_S = 6.62607015e-34
LIGHT_SPEED_M_S = 299792458.0
AVOGADRO_PER_MOL = 6.02214076e23
LUMENS_PER_WATT_555 = 683.0  # maximum luminous efficacy (683 lm/W at 555 nm, the SI candela definition)
BANDS_NM = {
    "blue_400_500": (400, 500),
    "green_500_600": (500, 600),
    "red_600_700": (600, 700),
    "far_red_700_750": (700, 750),
}


def umol_per_joule(wavelength_nm):
    """Photons per joule at a wavelength [µmol/J]: λ / (h c N_A) × 10⁶."""
    return np.asarray(wavelength_nm) * 1e-9 / (PLANCK_J_S * LIGHT_SPEED_M_S * AVOGADRO_PER_MOL) * 1e6


@cache
def _v_lambda() -> tuple[np.ndarray, np.ndarray]:
    data = json.loads(resources.files("app").joinpath("data", "cie_v_lambda.json").read_text())
    return np.array(data["wavelength_nm"], float), np.array(data["v"], float)


def v_lambda(wavelength_nm):
    """CIE 1924 photopic V(λ), linearly interpolated from its 5 nm table; 0 outside 380-780 nm."""
    wl, v = _v_lambda()
    return np.interp(wavelength_nm, wl, v, left=0.0, right=0.0)


WAVELENGTH_RANGE_NM = (200.0, 3000.0)  # ultraviolet to short-wave infrared: what a spectroradiometer reports


def _grid(wavelength_nm, power):
    """Resample a spectrum onto a 1 nm grid over its own range (linear); bands beyond the data hold nothing."""
    wl = np.asarray(wavelength_nm, float)
    p = np.asarray(power, float)
    order = np.argsort(wl)
    wl, p = wl[order], p[order]
    if wl.size < 2 or np.any(p < 0) or not np.all(np.isfinite(p)) or p.max() <= 0:
        raise ValueError("a spectrum needs at least two wavelengths, non-negative finite power and some light")
    if wl[0] < WAVELENGTH_RANGE_NM[0] or wl[-1] > WAVELENGTH_RANGE_NM[1]:
        lo, hi = WAVELENGTH_RANGE_NM
        raise ValueError(f"wavelengths must lie within {lo:g}-{hi:g} nm")
    # The grid spans exactly the data (1 nm steps plus its own ends), so power outside the visible (an 850 nm
    # peak) counts in the radiant watts of the efficacy ceiling, and nothing is added beyond the data's ends.
    fine = np.unique(np.concatenate(([wl[0]], np.arange(np.ceil(wl[0]), np.floor(wl[-1]) + 1.0, 1.0), [wl[-1]])))
    return fine, np.interp(fine, wl, p)


def _integral(wl, y, lo=None, hi=None):
    """Trapezoidal integral of y over wl, exactly over [lo, hi] when given (edge values interpolated)."""
    if lo is None:
        return float(np.trapezoid(y, wl))
    inside = (wl > lo) & (wl < hi)
    x = np.concatenate(([lo], wl[inside], [hi]))
    return float(np.trapezoid(np.interp(x, wl, y, left=0.0, right=0.0), x))


def spectrum_figures(wavelength_nm, relative_power) -> dict[str, float]:
    """Band shares of photon flux, photon-efficacy ceilings and the lux-to-PPFD factor of a spectrum.

    relative_power : spectral power (any scale), per nm.
    Returns shares of the 400-700 nm photon flux per band (far red as a share of it too),
    ``ceiling_umol_j`` (PPF per radiant watt if every watt became light of this spectrum),
    ``ppfd_per_klux`` and ``lux_per_ppfd``.
    """
    wl, p = _grid(wavelength_nm, relative_power)
    photons = p * umol_per_joule(wl)  # µmol s⁻¹ per nm per (W per nm)
    par = _integral(wl, photons, 400, 700)
    out = {name: _integral(wl, photons, lo, hi) / par if par > 0 else 0.0 for name, (lo, hi) in BANDS_NM.items()}
    total_power = _integral(wl, p)
    lumens = LUMENS_PER_WATT_555 * _integral(wl, p * v_lambda(wl))
    out["ceiling_umol_j"] = par / total_power
    out["ceiling_400_750_umol_j"] = _integral(wl, photons, 400, 750) / total_power
    out["umol_per_lumen"] = par / lumens if lumens > 0 else float("inf")
    out["ppfd_per_klux"] = 1000 * out["umol_per_lumen"]
    out["lux_per_ppfd"] = lumens / par if par > 0 else float("inf")
    return out


def led_mix(peaks: list[dict], wavelength_nm=None) -> tuple[np.ndarray, np.ndarray]:
    """A spectrum from LED peaks: each {'nm', 'fwhm_nm', 'weight'} a Gaussian of that radiant weight.

    A white LED is a blue peak (about 450 nm) plus a broad phosphor peak (about 560-600 nm, FWHM 100-130 nm).
    """
    wl = np.arange(380.0, 781.0, 1.0) if wavelength_nm is None else np.asarray(wavelength_nm, float)
    p = np.zeros_like(wl)
    for pk in peaks:
        sigma = pk["fwhm_nm"] / (2 * np.sqrt(2 * np.log(2)))
        g = np.exp(-0.5 * ((wl - pk["nm"]) / sigma) ** 2)
        if g.sum() <= 0:  # a narrow peak far outside the grid would divide by zero
            raise ValueError(f"the peak at {pk['nm']:g} nm lies outside {wl[0]:g}-{wl[-1]:g} nm")
        p += pk["weight"] * g / g.sum()
    return wl, p


def parse_spectrum_csv(text: str) -> tuple[np.ndarray, np.ndarray]:
    """Two columns, wavelength [nm] and relative power; a header line and ';' or tabs allowed.

    Raises ValueError naming the line and the reason.
    """
    wl, pw = [], []
    for n, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        parts = [x for x in line.replace(";", ",").replace("\t", ",").split(",") if x.strip()]
        if len(parts) < 2:
            parts = line.split()
        try:
            a, b = float(parts[0]), float(parts[1])
        except (ValueError, IndexError):
            if not wl:  # a header line
                continue
            raise ValueError(f"line {n}: expected 'wavelength, power', got {line[:60]!r}") from None
        if not (200 <= a <= 1100) or b < 0 or not np.isfinite(b):
            raise ValueError(f"line {n}: wavelength must be 200-1100 nm and power >= 0")
        wl.append(a)
        pw.append(b)
    if len(wl) < 2:
        raise ValueError("the spectrum needs at least two rows of wavelength and power")
    return np.array(wl), np.array(pw)
