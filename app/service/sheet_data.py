"""The layout sheet's data: tiers with their plans and maps, fixtures to hang, bill of materials, circuit loads.

Every figure is formatted here with the one rounding rule of :mod:`app.room.units`, so the page, its JSON
(``?format=json``) and the editor print the same strings.
"""

from __future__ import annotations

import re
from typing import Any

from app.engine import electrical as elec
from app.room.models import SURFACES, Room
from app.room.units import fmt_current, fmt_number, format_area, format_length, format_weight
from app.service.sheet_geometry import hanging_points_local, lit_zone, tiers
from app.service.sheet_maps import hatch_key_svg, heatmap_svg, legend_svg, shared_scale
from app.service.sheet_plan import choose_scale, plan_svg

PRINT_WIDTH_MM = 186.0  # A4's printable width with 12 mm margins; Letter's is 191.9
PLAN_BOX_H_MM = {"single": 140.0, "columns": 120.0, "rows": 128.0}  # height a plan may take
MAX_TIER_COLUMNS = 3  # up to three tiers side by side
MAP_W_MM, MAP_H_MM = 62.0, 110.0  # a rack tier's map beside its plan; the tallest map
MIN_MAP_W_MM = 28.0  # narrower than this beside the plan: the maps go under it
GAP_MM = 3.0
DEFINITIONS = (
    "Heights are to the emitting face of each fixture (its lowest light-giving surface) and to the top of the "
    "canopy, from the floor. Rotation 0° means the fixture's length runs left to right (along the front wall); "
    "angles turn counter-clockwise seen from above. Positions are to the fixture's centre."
)


def _finish_words(kind: str, reflectance: float, label: str) -> str:
    if kind == "open":
        return "open"
    if kind == "absorbing":
        return f"{label} (absorbing)" if label and label.lower() != "absorbing" else "absorbing"
    return f"{label} ({kind}, {reflectance:g})" if label else f"{kind}, {reflectance:g}"


def walls_text(room: Room) -> str:
    """The walls and ceiling as the sheet states them: one finish for all, or each surface's own (grouped)."""
    if not room.surface_finishes:
        wf = room.wall_finish
        words = f"{wf.label or wf.kind} ({wf.kind}, {wf.reflectance:g})"
        return words + (f"; open: {', '.join(room.open_sides)}" if room.open_sides else "")
    groups: dict[str, list[str]] = {}
    for s in (*SURFACES, "floor") if "floor" in room.surface_finishes else SURFACES:
        f = room.finish_of(s)
        groups.setdefault(_finish_words(f.kind, f.reflectance, f.label), []).append(s)
    return "; ".join(f"{', '.join(names)}: {words}" for words, names in groups.items())


def _circuit_order(room: Room) -> list[str]:
    names = [c.name for c in room.circuits]
    return names + sorted({f.circuit for f in room.fixtures} - set(names))


def tier_sections(room: Room, analysis: dict[str, Any]) -> tuple[str, list[dict[str, Any]]]:
    ts = tiers(room)
    circuits = _circuit_order(room)
    layout = "single" if len(ts) == 1 else "columns" if len(ts) <= MAX_TIER_COLUMNS else "rows"
    if layout == "single":
        scale = choose_scale(room, PRINT_WIDTH_MM, PLAN_BOX_H_MM["single"])
    elif layout == "columns":  # a rack's tiers side by side, each map under its plan
        scale = choose_scale(room, PRINT_WIDTH_MM / len(ts) - GAP_MM, PLAN_BOX_H_MM["columns"])
    else:  # many tiers: one row each, the map beside the plan
        scale = choose_scale(room, PRINT_WIDTH_MM - MAP_W_MM - 2 * GAP_MM, PLAN_BOX_H_MM["rows"])
    zones_a = {z["id"]: z for z in analysis["zones"]}
    colour = shared_scale(analysis["zones"]) if analysis["zones"] else None
    u = room.display_units
    out = []
    for t in ts:
        facts = [f"canopy {format_length(min(z.canopy_height_m for z in t.zones), u, True)}"]
        if len({z.canopy_height_m for z in t.zones}) > 1:
            facts = ["canopies " + ", ".join(format_length(z.canopy_height_m, u, True) for z in t.zones)]
        if t.shelf_below is not None:
            facts.insert(0, f"shelf top {format_length(t.shelf_below.z_m + t.shelf_below.height_m, u, True)}")
        hang = sorted({f.hanging_height_m for f in t.fixtures})
        if hang:
            facts.append("fixtures at " + ", ".join(format_length(h, u, True) for h in hang))
        if t.shelf_above is not None:
            facts.append(f"under {t.shelf_above.name} at {format_length(t.shelf_above.z_m, u, True)}")
        n = len(ts)
        title = f"Tier {t.index + 1} of {n}: " + ", ".join(z.name for z in t.zones) if t.stacked else "Plan"
        svg, plan_w, plan_h = plan_svg(room, t, scale, circuits)
        mapped = [z for z in t.zones if z.id in zones_a and "grid" in zones_a[z.id]]
        n_maps = max(1, len(mapped))
        beside = (PRINT_WIDTH_MM - plan_w - GAP_MM * n_maps - 2.0) / n_maps
        maps_beside = beside >= MIN_MAP_W_MM and layout != "columns"
        if layout == "columns":
            map_w, map_h = PRINT_WIDTH_MM / len(ts) - GAP_MM, 62.0
        elif maps_beside:
            map_w, map_h = min(beside, 90.0), min(plan_h - 6, MAP_H_MM)
        else:
            map_w, map_h = min((PRINT_WIDTH_MM - GAP_MM * (n_maps - 1)) / n_maps, 90.0), 80.0
        maps = [
            {
                "zone_id": z.id,
                "name": z.name,
                "svg": heatmap_svg(zones_a[z.id], u, colour, map_w, map_h),
                "max": fmt_number(zones_a[z.id]["ppfd"]["max"], 0),
                "min": fmt_number(zones_a[z.id]["ppfd"]["min"], 0),
            }
            for z in mapped
        ]
        out.append(
            {
                "key": t.key,
                "title": title,
                "facts": "; ".join(facts),
                "scale": scale.label,
                "ratio": scale.ratio,
                "plan_svg": svg,
                "plan_mm": [round(plan_w, 2), round(plan_h, 2)],
                "zone_ids": [z.id for z in t.zones],
                "fixture_ids": [f.id for f in t.fixtures],
                "unlit_ids": [f.id for f in t.unlit_fixtures],
                "maps": maps,
                "maps_beside": maps_beside,
            }
        )
    return layout, out


def colour_legend(analysis: dict[str, Any]) -> dict[str, Any] | None:
    if not analysis["zones"]:
        return None
    sc = shared_scale(analysis["zones"])
    dark, hot = hatch_key_svg()
    return {"svg": legend_svg(sc), "min": fmt_number(sc.lo, 0), "max": fmt_number(sc.hi, 0), "dark_key": dark, "hot_key": hot}


def fixtures_to_hang(room: Room) -> list[dict[str, Any]]:
    types = {t.id: t for t in room.fixture_types}
    zones = {z.id: z for z in room.zones}
    tier_of = {f.id: t.index + 1 for t in tiers(room) for f in t.fixtures}
    u = room.display_units
    out = []
    for f in room.fixtures:
        top = lit_zone(room, f)
        out.append(
            {
                "id": f.id,
                "type_name": types[f.type_id].name,
                "tier": tier_of.get(f.id),
                "from_left": format_length(f.x_m, u, True),
                "from_front": format_length(f.y_m, u, True),
                "rotation": f"{fmt_number(f.rotation_deg, 0)}°"
                + (f", tilted {fmt_number(f.tilt_deg, 0)}° toward {fmt_number(f.aim_deg, 0)}°" if f.tilt_deg else ""),
                "height": format_length(f.hanging_height_m, u, True),
                "above_canopy": format_length(f.hanging_height_m - top.canopy_height_m, u, True) if top else "–",
                "zone_name": zones[top.id].name if top else "",
                "dimming": f"{fmt_number(f.dimming_pct, 0)} %" + ("" if f.on else " (off)"),
                "circuit": f.circuit,
            }
        )
    return out


def bill_of_materials(room: Room) -> dict[str, Any]:
    u = room.display_units
    rows, totals = [], {"count": 0, "weight_kg": 0.0, "weight_known": True, "hanging": 0, "price": 0.0, "priced": True}
    for t in room.fixture_types:
        ids = [f.id for f in room.fixtures if f.type_id == t.id]
        if not ids:
            continue
        g = t.geometry
        n, hp = len(ids), len(hanging_points_local(t))
        size = "point source" if g.kind == "point" else f"{format_length(g.length_m, u, True)} × " + format_length(
            g.bar_width_m if g.kind == "bar" else g.width_m, u, True
        )
        if g.kind == "bar_array":
            size += f", {g.bar_count} bars"
        rows.append(
            {
                "type_name": t.name,
                "size": size,
                "count": n,
                "ppf": f"{fmt_number(t.ppf_umol_s, 0)} µmol/s",
                "power": f"{fmt_number(t.power_w, 0)} W",
                "weight_each": format_weight(t.weight_kg, u),
                "weight_total": format_weight(t.weight_kg * n, u) if t.weight_kg is not None else "–",
                "hanging_each": hp,
                "hanging_total": hp * n,
                "hanging_recorded": bool(t.hanging_points_m),
                "notes": "; ".join(x for x in (t.cord_note and f"cord: {t.cord_note}", t.driver_note and f"driver: {t.driver_note}") if x),
                "price_each": fmt_number(t.price, 2) if t.price is not None else "–",
                "price_total": fmt_number(t.price * n, 2) if t.price is not None else "–",
                "ids": ", ".join(ids),
            }
        )
        totals["count"] += n
        totals["hanging"] += hp * n
        if t.weight_kg is None:
            totals["weight_known"] = False
        else:
            totals["weight_kg"] += t.weight_kg * n
        if t.price is None:
            totals["priced"] = False
        else:
            totals["price"] += t.price * n
    return {
        "rows": rows,
        "count": totals["count"],
        "hanging_points": totals["hanging"],
        "weight_total": format_weight(totals["weight_kg"], u) + ("" if totals["weight_known"] else " (some types have no weight)"),
        "weight_total_kg": totals["weight_kg"],
        "price_total": fmt_number(totals["price"], 2) if totals["priced"] and rows else None,
        "currency": room.schedule.currency,
    }


def circuit_loads(room: Room, analysis: dict[str, Any]) -> list[dict[str, Any]]:
    """Each circuit at the set dimming (the analysis) and with every fixture on at 100 % output."""
    types = {t.id: t for t in room.fixture_types}
    v = room.schedule.supply_voltage_v
    out = []
    for c in analysis["circuits"]:
        full_w = sum(types[f.type_id].power_w for f in room.fixtures if f.circuit == c["name"])
        full_a = float(elec.current_a(full_w, v))
        out.append(
            {
                "name": c["name"],
                "breaker": f"{fmt_number(c['breaker_a'], 0)} A",
                "limit": fmt_current(c["continuous_limit_a"]),
                "set_w": f"{fmt_number(c['load_w'], 0)} W",
                "set_a": fmt_current(c["current_a"]),
                "set_ok": c["ok"],
                "full_w": f"{fmt_number(full_w, 0)} W",
                "full_a": fmt_current(full_a),
                "full_ok": full_a <= c["continuous_limit_a"],
                "voltage": f"{fmt_number(v, 0)} V",
            }
        )
    return out


def zone_rows(room: Room, analysis: dict[str, Any]) -> list[dict[str, Any]]:
    u = room.display_units
    return [
        {
            "name": z["name"],
            "crop": f"{z['crop_name']}, {z['stage']}",
            "avg": fmt_number(z["ppfd"]["avg"], 0),
            "min": fmt_number(z["ppfd"]["min"], 0),
            "max": fmt_number(z["ppfd"]["max"], 0),
            "min_over_avg": fmt_number(z["ppfd"]["min_over_avg"], 2),
            "min_over_max": fmt_number(z["ppfd"]["min_over_max"], 2),
            "dli_avg": fmt_number(z["dli"]["avg"], 1),
            "band": f"{z['target']['dli_min']:g}–{z['target']['dli_max']:g}",
            "in_band": f"{fmt_number(100 * z['share_in_band'], 0)} %",
            "dark_area": format_area(z["dark"]["area_m2"], u),
            "hot_area": format_area(z["hot"]["area_m2"], u),
            "photoperiod": f"{z['photoperiod_h']:g} h",
            "stress": f"{z['target']['ppfd_stress']:g}",
        }
        for z in analysis["zones"]
    ]


_M2 = re.compile(r"(\d+(?:\.\d+)?) m²")


def sheet_warnings(analysis: dict[str, Any], units: str) -> list[dict[str, Any]]:
    """The analysis warnings, with their areas in the room's units (the analysis words them in m²)."""
    if units != "imperial":
        return analysis["warnings"]
    return [
        {**w, "message": _M2.sub(lambda m: format_area(float(m.group(1)), units), w["message"])}
        for w in analysis["warnings"]
    ]


def energy_rows(analysis: dict[str, Any]) -> dict[str, str]:
    e, h = analysis["energy"], analysis["heat"]
    return {
        "power": f"{fmt_number(e['power_w'], 0)} W ({fmt_number(e['layout_umol_per_j'], 2)} µmol/J)",
        "heat": f"{fmt_number(h['w'], 0)} W = {fmt_number(h['btu_h'], 0)} BTU/h",
        "energy": f"{fmt_number(e['kwh_per_day'], 2)} kWh/day, {fmt_number(e['kwh_per_month'], 0)} kWh/month",
        "cost": f"{fmt_number(e['cost_per_month'], 2)} {e['currency']}/month at {e['price_per_kwh']:g} per kWh",
    }
