"""The one colour scale for PPFD and DLI maps, taken from plotly's own table so every drawing matches.

The editor's plotly heatmap, its drag preview (painted on a canvas) and the server-drawn SVG of the sheet all
interpolate these same stops linearly in RGB, as plotly.js does for an explicit ``colorscale``.
"""

from __future__ import annotations

from functools import cache

import numpy as np


@cache
def _stops_hex() -> tuple[str, ...]:
    from plotly.colors import sequential  # the Python package ships the same named tables as plotly.js

    return tuple(sequential.Viridis)


def colour_scale() -> list[list]:
    """Plotly ``colorscale``: ``[[0.0, '#440154'], ..., [1.0, '#fde725']]``, stops evenly spaced."""
    stops = _stops_hex()
    n = len(stops) - 1
    return [[i / n, c] for i, c in enumerate(stops)]


def _rgb_stops() -> np.ndarray:
    return np.array([[int(h[i : i + 2], 16) for i in (1, 3, 5)] for h in _stops_hex()], dtype=float)


def colours_at(t) -> np.ndarray:
    """RGB (0-255, float) at positions ``t`` in [0, 1] (clipped), linear between the stops."""
    rgb = _rgb_stops()
    x = np.clip(np.asarray(t, float), 0, 1) * (len(rgb) - 1)
    i = np.minimum(np.floor(x).astype(int), len(rgb) - 2)
    f = (x - i)[..., None]
    return rgb[i] * (1 - f) + rgb[i + 1] * f
