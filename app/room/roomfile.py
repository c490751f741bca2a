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
from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from pydantic import ValidationError

from app.room import layout, limits
from app.room.library import crops_for
from app.room.models import FORMAT_NAME, FORMAT_VERSION, Room, RoomFile

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
    try:
        return json.loads(raw, parse_constant=_refuse_constant)
    except json.JSONDecodeError as exc:
        raise RoomFileError(
            [Problem("(document)", f"not valid JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}")],
            kind="not_a_room_file",
        ) from exc
    except ValueError as exc:
        raise RoomFileError([Problem("(document)", str(exc))], kind="invalid_room_file") from exc


def _refuse_constant(name: str) -> None:
    raise ValueError(f"{name} is not allowed in a room file; use finite numbers")


def parse_room_file(data: bytes | str | Any) -> RoomFile:
    """Validate a room file completely, or raise :class:`RoomFileError`."""
    if isinstance(data, bytes | str):
        data = decode(data)
    if not isinstance(data, dict) or data.get("format") != FORMAT_NAME:
        found = data.get("format") if isinstance(data, dict) else type(data).__name__
        raise RoomFileError(
            [Problem("format", f"not a Leafcast room file (expected format '{FORMAT_NAME}', found {found!r})")],
            kind="not_a_room_file",
        )
    version = data.get("version")
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
    try:
        room_file = RoomFile.model_validate(data)
    except ValidationError as exc:
        raise RoomFileError(_pydantic_problems(exc)) from exc
    problems = consistency_problems(room_file)
    if problems:
        raise RoomFileError(problems)
    return room_file


def _duplicates(prefix: str, ids: list[str]) -> list[Problem]:
    counts = Counter(ids)
    return [
        Problem(f"{prefix}[{i}].id", f"duplicate id '{v}'")
        for i, v in enumerate(ids)
        if counts[v] > 1 and ids.index(v) != i
    ]


# The planner still imports the old name; the rule itself lives in app.room.layout.
fixture_half_extent_m = layout.rotated_half_extent_m


def grid_point_count(room: Room) -> int:
    s = room.grid_spacing_m
    return sum((math.floor(z.width_m / s) + 1) * (math.floor(z.length_m / s) + 1) for z in room.zones)


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


def dump_room_file(room_file: RoomFile) -> dict[str, Any]:
    """The room file as a JSON-ready dict, with every fixture type and custom crop the room carries."""
    return room_file.model_dump(mode="json")


def to_json_bytes(doc: dict[str, Any]) -> bytes:
    return (json.dumps(doc, indent=1, ensure_ascii=False, allow_nan=False) + "\n").encode("utf-8")
