"""Payback of a lighting change: purchase against the running costs saved, year by year.

Output falls as LEDs age (the projection of IES TM-21, :mod:`app.engine.maintenance`).
Photons to the canopy in each year are the photons of new fixtures times the mean
maintained share over that year's hours, so the cost per mole rises with age.

References
----------
- IES TM-21-11, "Projecting Long Term Lumen Maintenance of LED Light Sources":
  the projection Φ(t) = B exp(−α t); Lp life is the time to p % (form from memory;
  B taken as 1 here).
- Simple payback = purchase cost ÷ yearly saving, and the discounted form with
  present values at a rate r (any engineering-economics text; common practice).
"""

from __future__ import annotations

import math

import numpy as np


def mean_maintained_share(alpha_per_h: float, start_h, end_h):
    """Mean of exp(−α t) over [start, end] hours of operation (closed form)."""
    a, b = np.asarray(start_h, dtype=float), np.asarray(end_h, dtype=float)
    if alpha_per_h == 0:
        return np.ones(np.broadcast(a, b).shape)
    return (np.exp(-alpha_per_h * a) - np.exp(-alpha_per_h * b)) / (alpha_per_h * (b - a))


def yearly_mean_share(share_at, start_h: float, hours_per_year: float, horizon_years: int, samples: int = 201):
    """Mean maintained share in each year 1..horizon for any curve ``share_at(hours)`` (trapezoid rule).

    A curve held flat beyond a projection limit (IES TM-21) is integrated as it is given.
    """
    out = np.empty(horizon_years)
    for k in range(horizon_years):
        t = np.linspace(start_h + k * hours_per_year, start_h + (k + 1) * hours_per_year, samples)
        out[k] = np.trapezoid(share_at(t), t) / (t[-1] - t[0]) if t[-1] > t[0] else float(share_at(t[:1])[0])
    return out


def payback(
    purchase_cost: float,
    yearly_cost_now: float,
    yearly_cost_variant: float,
    horizon_years: int,
    discount_rate: float = 0.0,
) -> dict[str, object]:
    """Years until the saving pays for the purchase, and the cash over the horizon.

    Parameters
    ----------
    purchase_cost : money spent now on the variant (fixtures, installation).
    yearly_cost_now, yearly_cost_variant : running cost per year of each (energy, demand).
    horizon_years : years compared.
    discount_rate : per year (0 for simple payback).

    Returns
    -------
    dict with ``years`` (None if the horizon ends first; fractional within the
    year the balance turns, saving spread evenly over that year), ``simple_years``
    (purchase ÷ yearly saving, None without a saving), ``cumulative`` (balance at
    the end of each year, purchase included) and ``net_at_horizon``.
    """
    if horizon_years < 1:
        raise ValueError("horizon_years must be at least 1")
    saving = yearly_cost_now - yearly_cost_variant
    factors = (1.0 + discount_rate) ** -np.arange(1, horizon_years + 1)
    flows = saving * factors
    balance = -purchase_cost + np.cumsum(flows)
    years = None
    if purchase_cost <= 0:
        years = 0.0
    else:
        turned = np.flatnonzero(balance >= 0)
        if turned.size:
            k = int(turned[0])
            before = -purchase_cost if k == 0 else balance[k - 1]
            years = float(k + (-before) / flows[k])
    return {
        "years": years,
        "simple_years": purchase_cost / saving if saving > 0 else None,
        "yearly_saving": saving,
        "cumulative": balance.tolist(),
        "net_at_horizon": float(balance[-1]),
    }


def cost_per_mol(purchase_cost: float, yearly_cost, yearly_mol) -> float:
    """(purchase + running costs over the horizon) ÷ photons delivered over it [money / mol]."""
    mol = float(np.sum(yearly_mol))
    return (purchase_cost + float(np.sum(yearly_cost))) / mol if mol > 0 else math.inf
