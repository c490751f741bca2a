"""Exports of analysed zones: the long-format grid CSV (editor download, API and CLI)."""

from __future__ import annotations

import csv
import io
from typing import Any


def grid_csv(zone: dict[str, Any]) -> str:
    """Long-format CSV of one analysed zone: zone_id, x_m, y_m, ppfd_umol_m2_s, dli_mol_m2_d."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["zone_id", "x_m", "y_m", "ppfd_umol_m2_s", "dli_mol_m2_d"])
    g = zone["grid"]
    for j, y in enumerate(g["y_m"]):
        for i, x in enumerate(g["x_m"]):
            w.writerow([zone["id"], x, y, g["ppfd"][j][i], g["dli"][j][i]])
    return buf.getvalue()
