"""Rooms on disk: one room file per room in a data folder, saved atomically.

Each save writes a temporary file in the same folder, flushes and fsyncs it,
keeps the current file as ``<slug>.prev.json`` and renames the new one into
place, so a crash or a full disk never leaves a half-written or lost room.
A save names the revision it was based on; a stale one is refused.
"""

from __future__ import annotations

import os
import re
import tempfile
import threading
import unicodedata
from dataclasses import dataclass
from pathlib import Path

from app.room.models import RoomFile
from app.room.roomfile import RoomFileError, dump_room_file, parse_room_file, to_json_bytes

SUFFIX = ".json"
PREV_SUFFIX = ".prev.json"


_ID_RE = re.compile(r"[a-z0-9]+(?:-[a-z0-9]+)*")


class RoomNotFound(KeyError):
    pass


class StaleRevision(Exception):
    def __init__(self, current: int, given: int) -> None:
        self.current, self.given = current, given
        super().__init__(f"the room is at revision {current}; this save was based on revision {given}")


@dataclass(frozen=True)
class RoomSummary:
    id: str
    name: str
    revision: int
    fixtures: int
    zones: int


def slugify(text: str, max_len: int = 48) -> str:
    """A file-safe id from any string: ascii letters, digits and '-', never empty, never a path."""
    norm = "".join(
        c if c.isascii() else ("" if unicodedata.combining(c) else "-") for c in unicodedata.normalize("NFKD", text)
    )
    slug = re.sub(r"[^a-z0-9]+", "-", norm.lower()).strip("-")[:max_len].strip("-")
    return slug or "room"


class RoomStore:
    def __init__(self, data_dir: Path) -> None:
        self.rooms_dir = Path(data_dir) / "rooms"
        self.rooms_dir.mkdir(parents=True, exist_ok=True)
        self._lock = threading.Lock()

    # -- paths ---------------------------------------------------------
    def _path(self, room_id: str, suffix: str = SUFFIX) -> Path:
        if not _ID_RE.fullmatch(room_id):
            raise RoomNotFound(room_id)
        path = (self.rooms_dir / f"{room_id}{suffix}").resolve()
        if path.parent != self.rooms_dir.resolve():  # belt and braces: never leave the folder
            raise RoomNotFound(room_id)
        return path

    def exists(self, room_id: str) -> bool:
        try:
            return self._path(room_id).is_file()
        except RoomNotFound:
            return False

    # -- reading -------------------------------------------------------
    def load(self, room_id: str) -> RoomFile:
        path = self._path(room_id)
        if not path.is_file():
            raise RoomNotFound(room_id)
        return parse_room_file(path.read_bytes())

    def load_previous(self, room_id: str) -> RoomFile:
        path = self._path(room_id, PREV_SUFFIX)
        if not path.is_file():
            raise RoomNotFound(room_id)
        return parse_room_file(path.read_bytes())

    def list(self) -> list[RoomSummary]:
        out = []
        for path in sorted(self.rooms_dir.glob(f"*{SUFFIX}")):
            if path.name.endswith(PREV_SUFFIX):
                continue
            try:
                rf = parse_room_file(path.read_bytes())
            except RoomFileError:
                continue  # a damaged file is skipped in the list, never deleted
            out.append(RoomSummary(path.stem, rf.room.name, rf.revision, len(rf.room.fixtures), len(rf.room.zones)))
        return out

    # -- writing -------------------------------------------------------
    def _write_atomic(self, path: Path, data: bytes) -> None:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.stem}.", suffix=".tmp")
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
            if path.exists():
                os.replace(path, path.with_name(path.stem + PREV_SUFFIX))
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            if not path.exists() and path.with_name(path.stem + PREV_SUFFIX).exists():
                # The old file was moved aside but the new one never landed: put it back.
                os.replace(path.with_name(path.stem + PREV_SUFFIX), path)
            raise

    def unique_id(self, name: str) -> str:
        base = slugify(name)
        candidate, n = base, 2
        while self.exists(candidate):
            candidate, n = f"{base}-{n}", n + 1
        return candidate

    def create(self, room_file: RoomFile) -> tuple[str, RoomFile]:
        """Store a new room under a fresh id from its name; never overwrites."""
        with self._lock:
            room_id = self.unique_id(room_file.room.name)
            stored = room_file.model_copy(update={"revision": 1})
            self._write_atomic(self._path(room_id), to_json_bytes(dump_room_file(stored)))
            return room_id, stored

    def save(self, room_id: str, room_file: RoomFile) -> RoomFile:
        """Replace a room if ``room_file.revision`` is the stored revision; returns it at revision + 1."""
        with self._lock:
            current = self.load(room_id)
            if room_file.revision != current.revision:
                raise StaleRevision(current.revision, room_file.revision)
            stored = room_file.model_copy(update={"revision": current.revision + 1})
            self._write_atomic(self._path(room_id), to_json_bytes(dump_room_file(stored)))
            return stored

    def delete(self, room_id: str) -> None:
        with self._lock:
            path = self._path(room_id)
            if not path.is_file():
                raise RoomNotFound(room_id)
            path.unlink()
            self._path(room_id, PREV_SUFFIX).unlink(missing_ok=True)
