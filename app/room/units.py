"""Display units for the sheet and the CLI. Stored values are always SI."""

from __future__ import annotations

M_PER_IN = 0.0254
M_PER_FT = 0.3048
FT2_PER_M2 = 1 / (M_PER_FT * M_PER_FT)
_EIGHTHS = {0: "", 1: "⅛", 2: "¼", 3: "⅜", 4: "½", 5: "⅝", 6: "¾", 7: "⅞"}


def format_length(m: float | None, system: str, fine: bool = False) -> str:
    """4′ 6½″ (imperial, to ½″ or ⅛″ when fine) or 1.37 m / 45.0 cm (metric)."""
    if m is None:
        return "–"
    if system == "imperial":
        sign = "−" if m < 0 else ""
        step = 8 if fine else 2
        inches = round(abs(m) / M_PER_IN * step) / step
        ft = int(inches // 12)
        rest = inches - 12 * ft
        whole = int(rest + 1e-9)
        text = f"{whole}{_EIGHTHS[round((rest - whole) * 8)]}"
        return f"{sign}{ft}′ {text}″" if ft else f"{sign}{text}″"
    if abs(round(m * 100, 1)) < 100:  # on the rounded value: 0.99996 m is "1 m", never "100 cm"
        return f"{round(m * 100, 1):g} cm"
    return f"{round(m, 3):g} m"


def format_area(m2: float, system: str) -> str:
    return f"{m2 * FT2_PER_M2:.1f} ft²" if system == "imperial" else f"{m2:.2f} m²"
