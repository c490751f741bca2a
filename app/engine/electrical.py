"""Energy, cost, heat and circuit load: planning figures, not an electrical design.

References
----------
- 1 W = 3.41214 BTU/h, from 1 Btu_IT = 1055.05585262 J (NIST SP 811).
- US National Electrical Code 210.19(A)(1) and 210.20(A): a continuous load
  (3 h or more) may use at most 80 % of the branch-circuit rating (conductors
  and breaker sized at 125 % of the continuous load). Article numbers shift
  between editions; local codes and a licensed electrician decide.
"""

from __future__ import annotations

import numpy as np

BTU_IT_J = 1055.05585262
BTU_H_PER_W = 3600.0 / BTU_IT_J  # 3.41214...
CONTINUOUS_LOAD_SHARE = 0.8
DAYS_PER_MONTH = 30.0


def energy_kwh(power_w, hours):
    return np.asarray(power_w) * np.asarray(hours) / 1000.0


def heat_btu_h(power_w):
    """All input power ends as heat in the room (light included, once absorbed)."""
    return np.asarray(power_w) * BTU_H_PER_W


def current_a(power_w, voltage_v, power_factor: float = 1.0):
    """Line current of a single-phase load: I = P / (V · pf)."""
    return np.asarray(power_w) / (np.asarray(voltage_v) * power_factor)


def continuous_limit_a(breaker_a):
    """Largest continuous load a breaker of this rating should carry (80 % rule)."""
    return CONTINUOUS_LOAD_SHARE * np.asarray(breaker_a)


def photon_efficacy_umol_j(ppf_umol_s, power_w):
    return np.asarray(ppf_umol_s) / np.asarray(power_w)
