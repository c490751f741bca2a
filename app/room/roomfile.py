"""Reading, checking and writing room files.

A room file is one JSON document: ``{"format": "leafcast-room", "version": 1,
"revision": N, "room": {...}, "custom_crops": [...]}`` with every fixture type
the room uses embedded, so it opens on another machine with nothing else.

:func:`parse_room_file` turns bytes or a decoded object into a
:class:`~app.room.models.RoomFile` or raises :class:`RoomFileError` listing every
problem with its field path (``room.fixtures[2].dimming_pct``) and reason.
"""

from __future__ import annotations

import json
import math
import re
from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from pydantic import ValidationError

from app.room import layout, limits
from app.room.library import crops_for
from app.room.models import FORMAT_NAME, FORMAT_VERSION, Room, RoomFile
from app.room.year_checks import year_problems

_EDGE_TOLERANCE_M = 0.001  # a fixture's edge may touch a wall


@dataclass(frozen=True)
class Problem:
    field: str
    message: str

    def as_dict(self) -> dict[str, str]:
        return {"field": self.field, "message": self.message}


class RoomFileError(ValueError):
    """The document is not a usable room file. ``kind`` says which way."""

    def __init__(self, problems: list[Problem], kind: str = "invalid_room_file") -> None:
        self.problems = problems
        self.kind = kind
        super().__init__("; ".join(f"{p.field}: {p.message}" for p in problems))


def field_path(loc: Iterable[Any]) -> str:
    """('room', 'fixtures', 2, 'x_m') -> 'room.fixtures[2].x_m'."""
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + str(part)
    return out or "(document)"


def _pydantic_problems(err: ValidationError) -> list[Problem]:
    problems = []
    for e in err.errors(include_url=False):
        # Drop pydantic's tagged-union and "function-after" noise from the path.
        loc = [p for p in e["loc"] if not (isinstance(p, str) and ("[" in p or p.startswith("function-")))]
        msg = e["msg"].removeprefix("Value error, ")
        if e["type"] == "finite_number":
            msg = "must be a finite number (NaN and infinity are not allowed)"
        problems.append(Problem(field_path(loc), msg))
    return problems


_STRING_RE = re.compile(r'"(?:[^"\\]|\\.)*"')
_BRACKET_RE = re.compile(r"[\[\]{}]")
_LONG_DIGITS_RE = re.compile(rf"\d{{{limits.MAX_NUMBER_DIGITS + 1},}}")
_CONTROL_RE = re.compile(r"[\x00-\x1f\x7f-\x9f]")


def nesting_depth(text: str, strings_removed: bool = False) -> int:
    """Deepest nesting of arrays and objects in JSON text, counted outside strings, without parsing it."""
    depth = deepest = 0
    for ch in _BRACKET_RE.findall(text if strings_removed else _STRING_RE.sub("", text)):
        if ch in "[{":
            depth += 1
            deepest = max(deepest, depth)
        else:
            depth -= 1
    return deepest


def _parse_int(text: str) -> int:
    if len(text.lstrip("-")) > limits.MAX_NUMBER_DIGITS:
        raise _NumberTooLong(text)
    return int(text)


def _parse_float(text: str) -> float:
    value = float(text)
    if len(text) > limits.MAX_NUMBER_CHARS or not math.isfinite(value):
        raise _NumberTooLong(text)
    return value


class _NumberTooLong(ValueError):
    def __init__(self, text: str) -> None:
        self.text = text
        what = f"a number {len(text):,} characters long ({text[:12]}...)" if len(text) > 20 else f"the number {text}"
        super().__init__(
            f"{what} is not allowed; room files use numbers of at most {limits.MAX_NUMBER_DIGITS} digits, "
            "within the range of ordinary measurements"
        )


def json_shape_problem(text: str) -> str | None:
    """Why JSON text is refused before parsing (too deeply nested, a number too long), or None."""
    stripped = _STRING_RE.sub('""', text)
    depth = nesting_depth(stripped, strings_removed=True)
    if depth > limits.MAX_NESTING_DEPTH:
        return f"arrays and objects are nested {depth:,} deep; Leafcast accepts at most {limits.MAX_NESTING_DEPTH}"
    long_number = _LONG_DIGITS_RE.search(stripped)
    if long_number:
        return (
            f"a number of {len(long_number.group()):,} digits is not allowed; numbers have at most "
            f"{limits.MAX_NUMBER_DIGITS} digits"
        )
    return None


def decode(raw: bytes | str) -> Any:
    if isinstance(raw, bytes):
        if len(raw) > limits.MAX_BODY_BYTES:
            raise RoomFileError(
                [Problem("(document)", f"file is {len(raw):,} bytes; the limit is {limits.MAX_BODY_BYTES:,}")],
                kind="too_large",
            )
        try:
            raw = raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise RoomFileError([Problem("(document)", f"not UTF-8 text ({exc.reason})")], "not_a_room_file") from exc
    depth = nesting_depth(raw)
    if depth > limits.MAX_NESTING_DEPTH:
        raise RoomFileError(
            [
                Problem(
                    "(document)",
                    f"arrays and objects are nested {depth:,} deep; a room file needs at most "
                    f"{limits.MAX_NESTING_DEPTH}: this is not a Leafcast room file",
                )
            ],
            kind="not_a_room_file",
        )
    try:
        return json.loads(raw, parse_constant=_refuse_constant, parse_int=_parse_int, parse_float=_parse_float)
    except json.JSONDecodeError as exc:
        raise RoomFileError(
            [Problem("(document)", f"not valid JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}")],
            kind="not_a_room_file",
        ) from exc
    except _NumberTooLong as exc:
        raise RoomFileError([Problem("(document)", str(exc))], kind="invalid_room_file") from exc
    except (ValueError, RecursionError) as exc:
        raise RoomFileError([Problem("(document)", str(exc)[:200])], kind="invalid_room_file") from exc


def _refuse_constant(name: str) -> None:
    raise ValueError(f"{name} is not allowed in a room file; use finite numbers")


def parse_room_file(data: bytes | str | Any, strict_text: bool = True) -> RoomFile:
    """Validate a room file completely, or raise :class:`RoomFileError`.

    ``strict_text`` refuses control characters and blank names (new input); rooms already on disk are read
    without it, so a file saved before the rule still opens.
    """
    if isinstance(data, bytes | str):
        data = decode(data)
    if not isinstance(data, dict) or data.get("format") != FORMAT_NAME:
        found = data.get("format") if isinstance(data, dict) else type(data).__name__
        raise RoomFileError(
            [Problem("format", f"not a Leafcast room file (expected format '{FORMAT_NAME}', found {found!r})")],
            kind="not_a_room_file",
        )
    version = data.get("version")
    if "version" in data and (not isinstance(version, int) or isinstance(version, bool) or version < 1):
        raise RoomFileError(
            [
                Problem(
                    "version",
                    f"the version must be a whole number such as {FORMAT_VERSION}, found {str(version)[:40]!r}: "
                    "this is not a Leafcast room file, or it was made by a newer Leafcast (update Leafcast to "
                    "open it)",
                )
            ],
            kind="not_a_room_file",
        )
    if isinstance(version, int) and not isinstance(version, bool) and version > FORMAT_VERSION:
        raise RoomFileError(
            [
                Problem(
                    "version",
                    f"this room file is version {version}, made by a newer Leafcast; "
                    f"this app reads versions up to {FORMAT_VERSION}. Update Leafcast to open it.",
                )
            ],
            kind="newer_version",
        )
    text_problems = list(_text_problems(data, "")) if strict_text else []
    if text_problems:
        raise RoomFileError(text_problems)
    try:
        room_file = RoomFile.model_validate(data)
    except ValidationError as exc:
        raise RoomFileError(_pydantic_problems(exc)) from exc
    problems = consistency_problems(room_file)
    if problems:
        raise RoomFileError(problems)
    return room_file


_NAME_KEYS = frozenset({"name", "label"})


def _text_problems(node: Any, path: str):
    """Control characters in any text of the file, and names that are only spaces."""
    if isinstance(node, dict):
        for key, value in node.items():
            sub = f"{path}.{key}" if path else str(key)
            if isinstance(value, str) and key in _NAME_KEYS and value and not value.strip():
                yield Problem(sub, "must not be blank (only spaces)")
            yield from _text_problems(value, sub)
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _text_problems(value, f"{path}[{i}]")
    elif isinstance(node, str) and _CONTROL_RE.search(node):
        bad = _CONTROL_RE.search(node).group()
        yield Problem(path, f"contains a control character (U+{ord(bad):04X}); use plain text")


def _duplicates(prefix: str, ids: list[str]) -> list[Problem]:
    counts = Counter(ids)
    return [
        Problem(f"{prefix}[{i}].id", f"duplicate id '{v}'")
        for i, v in enumerate(ids)
        if counts[v] > 1 and ids.index(v) != i
    ]


# Kept for callers of the old name; the rule itself lives in app.room.layout.
fixture_half_extent_m = layout.rotated_half_extent_m


def grid_point_count(room: Room) -> int:
    s = room.grid_spacing_m
    return sum((math.floor(z.width_m / s) + 1) * (math.floor(z.length_m / s) + 1) for z in room.zones)


def _entry_problems(room: Room) -> list[Problem]:
    """The entry must fit on its wall."""
    e = room.entry
    wall = room.width_m if e.side in ("front", "back") else room.length_m
    out = []
    if e.width_m is not None and e.width_m > wall + _EDGE_TOLERANCE_M:
        out.append(Problem("room.entry.width_m", f"{e.width_m:g} m is wider than the {e.side} wall ({wall:g} m)"))
    if e.offset_m is not None and e.offset_m > wall + _EDGE_TOLERANCE_M:
        out.append(
            Problem("room.entry.offset_m", f"{e.offset_m:g} m is past the end of the {e.side} wall ({wall:g} m)")
        )
    return out


def _hanging_grid_problems(room: Room) -> list[Problem]:
    """The hanging grid's origin must lie inside the room."""
    g = room.hanging_grid
    if g is None:
        return []
    out = []
    for name, value, side, wall in (
        ("origin_x_m", g.origin_x_m, "width", room.width_m),
        ("origin_y_m", g.origin_y_m, "length", room.length_m),
    ):
        if value > wall + _EDGE_TOLERANCE_M:
            out.append(
                Problem(f"room.hanging_grid.{name}", f"{value:g} m is outside the room (its {side} is {wall:g} m)")
            )
    return out


def consistency_problems(room_file: RoomFile) -> list[Problem]:
    """Checks that need the whole room. Returns every problem found."""
    room = room_file.room
    p: list[Problem] = []
    p += _duplicates("room.zones", [z.id for z in room.zones])
    p += _duplicates("room.fixtures", [f.id for f in room.fixtures])
    p += _duplicates("room.fixture_types", [t.id for t in room.fixture_types])
    p += _duplicates("room.obstacles", [o.id for o in room.obstacles])
    circuits = [c.name for c in room.circuits]
    for i, c in enumerate(circuits):
        if circuits.index(c) != i:
            p.append(Problem(f"room.circuits[{i}].name", f"duplicate circuit name '{c}'"))
    if len(set(room.open_sides)) != len(room.open_sides):
        p.append(Problem("room.open_sides", "each side may be listed once"))
    p += _entry_problems(room)
    p += _hanging_grid_problems(room)

    W, L, H = room.width_m, room.length_m, room.height_m
    tol = _EDGE_TOLERANCE_M
    crops = crops_for(room_file)
    for i, z in enumerate(room.zones):
        at = f"room.zones[{i}]"
        if z.x_m + z.width_m > W + tol or z.y_m + z.length_m > L + tol:
            p.append(Problem(at, f"zone '{z.id}' reaches outside the room ({W:g} x {L:g} m)"))
        if z.canopy_height_m >= H:
            p.append(
                Problem(
                    f"{at}.canopy_height_m", f"canopy at {z.canopy_height_m:g} m is not below the ceiling ({H:g} m)"
                )
            )
        crop = crops.get(z.crop_id)
        if crop is None:
            p.append(
                Problem(f"{at}.crop_id", f"unknown crop '{z.crop_id}' (not in the library or the file's custom crops)")
            )
        elif z.stage not in crop.stages:
            p.append(
                Problem(f"{at}.stage", f"crop '{z.crop_id}' has no '{z.stage}' stage; it has {sorted(crop.stages)}")
            )

    for i, o in enumerate(room.obstacles):
        at = f"room.obstacles[{i}]"
        if o.x_m + o.width_m > W + tol or o.y_m + o.length_m > L + tol or o.z_m + o.height_m > H + tol:
            p.append(Problem(at, f"obstacle '{o.id}' reaches outside the room"))

    types = {t.id: t for t in room.fixture_types}
    for i, f in enumerate(room.fixtures):
        at = f"room.fixtures[{i}]"
        t = types.get(f.type_id)
        if t is None:
            p.append(
                Problem(
                    f"{at}.type_id", f"unknown fixture type '{f.type_id}': the file must embed it in room.fixture_types"
                )
            )
            continue
        x0, y0, x1, y1 = layout.fixture_extent(f, t)
        if x0 < -tol or x1 > W + tol or y0 < -tol or y1 > L + tol:
            p.append(Problem(at, f"fixture '{f.id}' is outside the room: its footprint reaches beyond the walls"))
        if f.hanging_height_m > H + tol:
            p.append(Problem(f"{at}.hanging_height_m", f"{f.hanging_height_m:g} m is above the ceiling ({H:g} m)"))
        if f.circuit not in circuits:
            p.append(Problem(f"{at}.circuit", f"unknown circuit '{f.circuit}'; the room has {circuits}"))
        lit = layout.zone_lit_by(room.zones, f)
        if lit is not None and f.hanging_height_m < lit.canopy_height_m + layout.MIN_FIXTURE_CLEARANCE_M:
            p.append(
                Problem(f"{at}.hanging_height_m", f"fixture '{f.id}' is less than 1 cm above the canopy of '{lit.id}'")
            )
        for z in layout.zones_under(room.zones, f):
            if abs(f.hanging_height_m - z.canopy_height_m) < 1e-9:
                p.append(Problem(f"{at}.hanging_height_m", f"fixture '{f.id}' sits in the canopy of '{z.id}'"))
        for o in room.obstacles:
            if (
                o.x_m < f.x_m < o.x_m + o.width_m
                and o.y_m < f.y_m < o.y_m + o.length_m
                and o.z_m < f.hanging_height_m < o.z_m + o.height_m
            ):
                p.append(Problem(at, f"fixture '{f.id}' is inside obstacle '{o.id}'"))

    p += reading_problems(room)

    p += [Problem(field, reason) for field, reason in year_problems(room_file)]
    points = grid_point_count(room)
    if points > limits.MAX_GRID_POINTS:
        p.append(
            Problem(
                "room.grid_spacing_m",
                f"the canopy grid would have {points:,} points; the limit is "
                f"{limits.MAX_GRID_POINTS:,}: use a coarser spacing",
            )
        )
    return p


def reading_problems(room: Room) -> list[Problem]:
    """Readings name a zone of the room and lie inside it (a grid must fit, every point too)."""
    p = _duplicates("room.readings", [r.id for r in room.readings])
    zones = {z.id: z for z in room.zones}
    tol = _EDGE_TOLERANCE_M
    for i, r in enumerate(room.readings):
        at = f"room.readings[{i}]"
        z = zones.get(r.zone_id)
        if z is None:
            p.append(
                Problem(
                    f"{at}.zone_id",
                    f"unknown zone '{r.zone_id}'; the room has {sorted(zones)} "
                    f"(delete reading set '{r.id}' on the meter page, or keep the zone)",
                )
            )
            continue
        x0, x1, y0, y1 = z.x_m - tol, z.x_m + z.width_m + tol, z.y_m - tol, z.y_m + z.length_m + tol
        if r.grid is not None:
            g = r.grid
            rows, cols = len(g.values), len(g.values[0])
            far_x = g.origin_x_m + (cols - 1) * g.spacing_x_m
            far_y = g.origin_y_m + (rows - 1) * g.spacing_y_m
            if not (x0 <= g.origin_x_m and far_x <= x1 and y0 <= g.origin_y_m and far_y <= y1):
                p.append(
                    Problem(
                        f"{at}.grid",
                        f"the grid of {rows} rows x {cols} columns does not fit zone '{z.id}': it spans "
                        f"x {g.origin_x_m:.3g}-{far_x:.3g} m, y {g.origin_y_m:.3g}-{far_y:.3g} m, the zone "
                        f"x {z.x_m:.3g}-{z.x_m + z.width_m:.3g} m, y {z.y_m:.3g}-{z.y_m + z.length_m:.3g} m "
                        f"(fix reading set '{r.id}' on the meter page, or move the zone back)",
                    )
                )
            if all(v is None for row in g.values for v in row):
                p.append(Problem(f"{at}.grid.values", "the grid holds no reading"))
        for j, pt in enumerate(r.points):
            if not (x0 <= pt.x_m <= x1 and y0 <= pt.y_m <= y1):
                p.append(
                    Problem(
                        f"{at}.points[{j}]",
                        f"reading at ({pt.x_m:.3g}, {pt.y_m:.3g}) m is outside zone '{z.id}' "
                        f"(x {z.x_m:.3g}-{z.x_m + z.width_m:.3g} m, y {z.y_m:.3g}-{z.y_m + z.length_m:.3g} m; "
                        f"fix reading set '{r.id}' on the meter page, or move the zone back)",
                    )
                )
    return p


def dump_room_file(room_file: RoomFile) -> dict[str, Any]:
    """The room file as a JSON-ready dict, with every fixture type and custom crop the room carries."""
    return room_file.model_dump(mode="json")


def to_json_bytes(doc: dict[str, Any]) -> bytes:
    return (json.dumps(doc, indent=1, ensure_ascii=False, allow_nan=False) + "\n").encode("utf-8")
