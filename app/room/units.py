"""Display units and the one rounding rule for every figure Leafcast shows. Stored values are always SI.

The rule (``static/js/lib/units.js`` follows the same one):

- a figure is rounded **half away from zero** on its shortest decimal form (what ``repr`` prints), so
  5.25 shows as 5.3 and −5.25 as −5.3, whatever the binary float underneath;
- a **current** is always rounded **up** (towards the larger load): 5.21 A shows as 5.3 A. Rounding a load
  down would make a circuit look safer than it is.

Lengths, areas and weights use the same rule on the displayed unit (inches to the ½″ or ⅛″, centimetres,
feet², pounds).
"""

from __future__ import annotations

from decimal import ROUND_CEILING, ROUND_HALF_UP, Decimal

M_PER_IN = 0.0254
M_PER_FT = 0.3048
FT2_PER_M2 = 1 / (M_PER_FT * M_PER_FT)
KG_PER_LB = 0.45359237  # exact, by the 1959 international yard and pound agreement
_EIGHTHS = {0: "", 1: "⅛", 2: "¼", 3: "⅜", 4: "½", 5: "⅝", 6: "¾", 7: "⅞"}
_NOISE_DIGITS = 12  # significant digits kept before rounding up, so 0.1 + 0.2 is not rounded up as 0.30000000000000004


_D_M_PER_IN = Decimal("0.0254")  # exact, 1959
_D_M_PER_FT = Decimal("0.3048")
_D_KG_PER_LB = Decimal("0.45359237")


def _dec(value: float | Decimal) -> Decimal:
    return value if isinstance(value, Decimal) else Decimal(repr(float(value)))


def round_half_away(value: float | Decimal, digits: int = 0) -> float:
    """Round half away from zero to ``digits`` decimals, on the number's shortest decimal form.

    A unit conversion is done on that decimal form too (``format_length`` divides by exactly 0.0254), so a
    value that is exactly halfway in the displayed unit is not pushed below half by binary floating point.
    """
    q = Decimal(1).scaleb(-digits)
    return float(_dec(value).quantize(q, rounding=ROUND_HALF_UP))


def round_up(value: float, digits: int = 0) -> float:
    """Round towards +infinity to ``digits`` decimals, ignoring float noise past 12 significant digits."""
    d = Decimal(f"{float(value):.{_NOISE_DIGITS}g}")
    return float(d.quantize(Decimal(1).scaleb(-digits), rounding=ROUND_CEILING))


def fmt_number(value: float | Decimal | None, digits: int = 0) -> str:
    """A figure with a fixed number of decimals, rounded half away from zero ("–" for none)."""
    if value is None:
        return "–"
    r = round_half_away(value, digits)
    if r == 0:
        r = 0.0  # no "-0"
    return f"{r:.{digits}f}"


def fmt_current(amps: float | None, digits: int = 1) -> str:
    """A current in amperes, always rounded up: "5.3 A"."""
    if amps is None:
        return "–"
    return f"{round_up(amps, digits):.{digits}f} A"


def format_length(m: float | None, system: str, fine: bool = False) -> str:
    """4′ 6½″ (imperial, to ½″ or ⅛″ when fine) or 1.37 m / 45 cm (metric)."""
    if m is None:
        return "–"
    if system == "imperial":
        sign = "−" if m < 0 else ""
        step = 8 if fine else 2
        inches = round_half_away(abs(_dec(m)) / _D_M_PER_IN * step) / step
        ft = int(inches // 12)
        rest = inches - 12 * ft
        whole = int(rest + 1e-9)
        text = f"{whole}{_EIGHTHS[round((rest - whole) * 8)]}"
        return f"{sign}{ft}′ {text}″" if ft else f"{sign}{text}″"
    if abs(round_half_away(_dec(m) * 100, 1)) < 100:  # on the rounded value: 0.99996 m is "1 m", not "100 cm"
        return f"{round_half_away(_dec(m) * 100, 1):g} cm"
    return f"{round_half_away(m, 3):g} m"


def format_area(m2: float, system: str) -> str:
    if system == "imperial":
        return f"{fmt_number(_dec(m2) / (_D_M_PER_FT * _D_M_PER_FT), 1)} ft²"
    return f"{fmt_number(m2, 2)} m²"


def format_weight(kg: float | None, system: str) -> str:
    """Pounds first on imperial sheets ("13.2 lb (6.0 kg)"), kilograms on metric ones."""
    if kg is None:
        return "–"
    if system == "imperial":
        return f"{fmt_number(_dec(kg) / _D_KG_PER_LB, 1)} lb ({fmt_number(kg, 1)} kg)"
    return f"{fmt_number(kg, 1)} kg"


def axis_value(m: float, system: str) -> float:
    """A room coordinate in the unit of a drawing's axes (feet or metres)."""
    return m / M_PER_FT if system == "imperial" else m


def axis_unit(system: str) -> str:
    return "ft" if system == "imperial" else "m"
