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
from collections.abc import Iterable
from typing import Any

from pydantic import ValidationError

from app.room import layout, limits
from app.room.consistency import consistency_problems
from app.room.consistency import grid_point_count as grid_point_count
from app.room.consistency import reading_problems as reading_problems
from app.room.models import FORMAT_NAME, FORMAT_VERSION, RoomFile
from app.room.problems import Problem, RoomFileError

# Problem, RoomFileError (app/room/problems.py) and consistency_problems, grid_point_count, reading_problems
# (app/room/consistency.py) are imported from here by most callers: this module is the room file's front door.


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


# Kept for callers of the old name; the rule itself lives in app.room.layout.
fixture_half_extent_m = layout.rotated_half_extent_m


def dump_room_file(room_file: RoomFile) -> dict[str, Any]:
    """The room file as a JSON-ready dict, with every fixture type and custom crop the room carries."""
    return room_file.model_dump(mode="json")


def to_json_bytes(doc: dict[str, Any]) -> bytes:
    return (json.dumps(doc, indent=1, ensure_ascii=False, allow_nan=False) + "\n").encode("utf-8")
