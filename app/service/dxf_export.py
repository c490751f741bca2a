"""The sheet's plans as DXF for CAD, written with ezdxf: one layer per tier and per circuit, in the room's units.

Imperial rooms are drawn in inches, metric rooms in millimetres (the units CAD users of each system draw in);
``$INSUNITS`` says which. Plan coordinates are the room file's: x from the left wall, y from the front wall.
Each entity's elevation is its real height (zones at the canopy, fixtures at their emitting face), so a 3D
view shows the tiers stacked; in plan they overlap as they do in the room, and layers switch them.

Layers: ``ROOM`` (walls, entry), ``TIER-n`` (zones and dimensions of tier n), ``TIER-n-CIRCUIT-<name>``
(fixtures and their bars), ``TIER-n-HANGING`` (hanging points).
"""

from __future__ import annotations

import io
import re

import ezdxf
from ezdxf import units as dxf_units

from app.room.models import Room
from app.room.units import M_PER_IN
from app.service.sheet_geometry import Tier, chain, entry_span, fixture_shape, tiers

TEXT_HEIGHT_M = 0.03  # 3 cm text in the model (about 1.2 in)
HANGING_MARK_R_M = 0.01
DIM_OFFSET_M = (0.12, 0.25)  # chained and overall dimension lines, out from the wall
_BAD_LAYER_CHARS = re.compile(r'[<>/\\":;?*|=`,\s]+')


def unit_factor(room: Room) -> tuple[float, int]:
    """Drawing units per metre, and the DXF $INSUNITS code."""
    return (1 / M_PER_IN, dxf_units.IN) if room.display_units == "imperial" else (1000.0, dxf_units.MM)


def layer_name(*parts: str) -> str:
    return "-".join(_BAD_LAYER_CHARS.sub("_", p).upper() for p in parts)


def tier_layers(t: Tier) -> dict[str, str]:
    n = str(t.index + 1)
    return {"tier": layer_name("TIER", n), "hanging": layer_name("TIER", n, "HANGING")}


def circuit_layer(t: Tier, circuit: str) -> str:
    return layer_name("TIER", str(t.index + 1), "CIRCUIT", circuit)


def plan_dxf(room: Room, tier_number: int | None = None) -> bytes:
    """The plan of every tier (or only tier ``tier_number``, 1-based) as a DXF file."""
    all_tiers = tiers(room)
    chosen = all_tiers if tier_number is None else [all_tiers[tier_number - 1]]
    k, code = unit_factor(room)
    doc = ezdxf.new("R2010", setup=True)
    doc.units = code
    doc.header["$MEASUREMENT"] = 0 if room.display_units == "imperial" else 1
    msp = doc.modelspace()
    doc.layers.add("ROOM", color=7)
    _room(msp, room, k)
    for t in chosen:
        names = tier_layers(t)
        doc.layers.add(names["tier"], color=3)
        doc.layers.add(names["hanging"], color=1)
        for c in sorted({f.circuit for f in t.fixtures}):
            if circuit_layer(t, c) not in doc.layers:
                doc.layers.add(circuit_layer(t, c), color=2 + len(doc.layers) % 5)
        _tier(msp, room, t, k, names)
    out = io.StringIO()
    doc.write(out)
    return out.getvalue().encode("utf-8")


def _room(msp, room: Room, k: float) -> None:
    W, L = room.width_m * k, room.length_m * k
    msp.add_lwpolyline([(0, 0), (W, 0), (W, L), (0, L)], close=True, dxfattribs={"layer": "ROOM"})
    e = room.entry
    side, a, b = entry_span(room)
    a, b = a * k, b * k
    p, q = {
        "front": ((a, 0), (b, 0)),
        "back": ((a, L), (b, L)),
        "left": ((0, a), (0, b)),
        "right": ((W, a), (W, b)),
    }[side]
    msp.add_line(p, q, dxfattribs={"layer": "ROOM", "lineweight": 50})
    mid = ((p[0] + q[0]) / 2, (p[1] + q[1]) / 2)
    msp.add_text(e.label, height=TEXT_HEIGHT_M * k, dxfattribs={"layer": "ROOM"}).set_placement(
        mid, align=ezdxf.enums.TextEntityAlignment.TOP_CENTER
    )


def _tier(msp, room: Room, t: Tier, k: float, names: dict[str, str]) -> None:
    for z in t.zones:
        x0, y0, x1, y1 = z.x_m * k, z.y_m * k, (z.x_m + z.width_m) * k, (z.y_m + z.length_m) * k
        msp.add_lwpolyline(
            [(x0, y0), (x1, y0), (x1, y1), (x0, y1)],
            close=True,
            dxfattribs={"layer": names["tier"], "elevation": z.canopy_height_m * k},
        )
        msp.add_text(z.name, height=TEXT_HEIGHT_M * k, dxfattribs={"layer": names["tier"]}).set_placement(
            (x0 + 0.02 * k, y1 - 0.02 * k), align=ezdxf.enums.TextEntityAlignment.TOP_LEFT
        )
    for f in t.fixtures:
        sh = fixture_shape(room, f)
        layer = circuit_layer(t, f.circuit)
        z = f.hanging_height_m * k
        if sh.outline:
            msp.add_lwpolyline([(x * k, y * k) for x, y in sh.outline], close=True, dxfattribs={"layer": layer, "elevation": z})
        else:
            msp.add_circle((f.x_m * k, f.y_m * k), HANGING_MARK_R_M * 2 * k, dxfattribs={"layer": layer})
        for bar in sh.bars if sh.type.geometry.kind == "bar_array" else []:
            msp.add_lwpolyline([(x * k, y * k) for x, y in bar], close=True, dxfattribs={"layer": layer, "elevation": z})
        msp.add_text(f.id, height=TEXT_HEIGHT_M * 1.5 * k, dxfattribs={"layer": layer}).set_placement(
            (f.x_m * k, f.y_m * k), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER
        )
        for hx, hy in sh.hanging:
            msp.add_circle((hx * k, hy * k), HANGING_MARK_R_M * k, dxfattribs={"layer": names["hanging"]})
            msp.add_point((hx * k, hy * k, z), dxfattribs={"layer": names["hanging"]})
    _dimensions(msp, room, t, k, names["tier"])


def _dimensions(msp, room: Room, t: Tier, k: float, layer: str) -> None:
    """Chained dimensions to the fixture centres and the overall room, as DXF dimension entities."""
    rows = []
    if t.fixtures:
        rows.append((chain([f.x_m for f in t.fixtures], room.width_m), True, DIM_OFFSET_M[0]))
        rows.append((chain([f.y_m for f in t.fixtures], room.length_m), False, DIM_OFFSET_M[0]))
    rows.append(([(0.0, room.width_m)], True, DIM_OFFSET_M[1]))
    rows.append(([(0.0, room.length_m)], False, DIM_OFFSET_M[1]))
    for segments, along_x, offset in rows:
        for a, b in segments:
            if along_x:
                p1, p2, base, angle = (a * k, 0), (b * k, 0), (0, -offset * k), 0
            else:
                p1, p2, base, angle = (0, a * k), (0, b * k), (-offset * k, 0), 90
            dim = msp.add_linear_dim(
                base=base, p1=p1, p2=p2, angle=angle, dimstyle="EZDXF", dxfattribs={"layer": layer},
                override={"dimtxt": TEXT_HEIGHT_M * k, "dimasz": TEXT_HEIGHT_M * 0.6 * k, "dimlunit": 4 if k != 1000.0 else 2},
            )  # fmt: skip
            dim.render()


def tier_count(room: Room) -> int:
    return len(tiers(room))
