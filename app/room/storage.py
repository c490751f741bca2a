"""Rooms on disk: one room file per room in a data folder, saved with no moment where the room is missing.

A save goes in four steps, each safe to be killed after:

1. ``temp_written``: the new revision is written to a temporary file in the same folder, flushed and fsynced;
2. ``previous_kept``: the current file is hard-linked (copied where links are not possible) to a temporary
   name and renamed over ``<id>.prev.json`` (the previous revision, kept for a restore);
3. ``replaced``: one ``os.replace`` puts the new file in place of ``<id>.json`` (atomic on POSIX: a reader sees
   the old file or the new one, never neither);
4. ``folder_synced``: the folder is fsynced so the renames survive a power cut.

On start (:meth:`RoomStore.recover`) a room whose file is missing but whose ``.prev.json`` exists is restored,
and temporary files older than a minute (left by a crash) are removed. A full disk raises :class:`StorageFull`
and leaves the room as it was. A save names the revision it was based on; a stale one is refused.

For tests only: ``LEAFCAST_FAULT_AFTER_STEP=<step>`` kills the process with SIGKILL right after that step of a
write, to prove a crash at any point loses nothing.
"""

from __future__ import annotations

import errno
import json
import logging
import os
import re
import shutil
import signal
import tempfile
import threading
import time
import unicodedata
from dataclasses import dataclass
from pathlib import Path

from app.room.models import RoomFile
from app.room.roomfile import RoomFileError, dump_room_file, parse_room_file, to_json_bytes

SUFFIX = ".json"
PREV_SUFFIX = ".prev.json"
TMP_SUFFIX = ".tmp"
MAX_ID_CHARS = 80  # ids are slugs of at most 48 characters plus a "-N" suffix; longer is never a room
ORPHAN_AGE_S = 60.0  # a temporary file older than this belongs to no running save
FAULT_ENV = "LEAFCAST_FAULT_AFTER_STEP"  # tests only: SIGKILL after the named save step
SAVE_STEPS = ("temp_written", "previous_kept", "replaced", "folder_synced")
_FULL_ERRNOS = {errno.ENOSPC, errno.EDQUOT, errno.EFBIG}

log = logging.getLogger("leafcast.storage")


_ID_RE = re.compile(r"[a-z0-9]+(?:-[a-z0-9]+)*")


class RoomNotFound(KeyError):
    pass


class StorageFull(OSError):
    """The disk (or quota) is full: nothing was changed."""


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
        if len(room_id) > MAX_ID_CHARS or not _ID_RE.fullmatch(room_id):
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
    def _read(self, room_id: str, suffix: str = SUFFIX) -> bytes:
        """The file's bytes; a file that is missing (or deleted while we read) is the room's 404."""
        path = self._path(room_id, suffix)
        try:
            return path.read_bytes()
        except (FileNotFoundError, IsADirectoryError, NotADirectoryError) as exc:
            raise RoomNotFound(room_id) from exc

    def load(self, room_id: str) -> RoomFile:
        return parse_room_file(self._read(room_id), strict_text=False)

    def load_previous(self, room_id: str) -> RoomFile:
        return parse_room_file(self._read(room_id, PREV_SUFFIX), strict_text=False)

    def list(self) -> list[RoomSummary]:
        out = []
        for path in sorted(self.rooms_dir.glob(f"*{SUFFIX}")):
            if path.name.endswith(PREV_SUFFIX):
                continue
            try:
                rf = parse_room_file(path.read_bytes(), strict_text=False)
            except (RoomFileError, FileNotFoundError):
                continue  # a damaged file is skipped in the list, never deleted; a deleted one is gone
            out.append(RoomSummary(path.stem, rf.room.name, rf.revision, len(rf.room.fixtures), len(rf.room.zones)))
        return out

    # -- writing -------------------------------------------------------
    def _write_atomic(self, path: Path, data: bytes) -> None:
        """Write ``data`` as ``path`` keeping the current file as the previous revision; ``path`` never vanishes."""
        tmp = None
        try:
            tmp = self._temp_file(path, data)
            _fault_point("temp_written")
            if path.exists():
                self._keep_previous(path)
                _fault_point("previous_kept")
            os.replace(tmp, path)
            tmp = None
            _fault_point("replaced")
            _fsync_dir(path.parent)
            _fault_point("folder_synced")
        except OSError as exc:
            if exc.errno in _FULL_ERRNOS:
                raise StorageFull(
                    exc.errno, f"the disk holding {path.parent} is full; the room was not changed"
                ) from exc
            raise
        finally:
            if tmp is not None:
                Path(tmp).unlink(missing_ok=True)

    def _temp_file(self, path: Path, data: bytes) -> str:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.stem}.", suffix=TMP_SUFFIX)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
        return tmp

    def _keep_previous(self, path: Path) -> None:
        """The current file becomes ``<id>.prev.json`` by a hard link renamed into place (a copy if no links)."""
        prev = path.with_name(path.stem + PREV_SUFFIX)
        link = path.with_name(f".{path.stem}.prev-{os.getpid()}-{threading.get_ident()}{TMP_SUFFIX}")
        link.unlink(missing_ok=True)
        try:
            os.link(path, link)
        except OSError as exc:
            if exc.errno in _FULL_ERRNOS:
                raise
            shutil.copy2(path, link)  # a filesystem without hard links
        try:
            os.replace(link, prev)
        except BaseException:
            link.unlink(missing_ok=True)
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

    def restore_previous(self, room_id: str) -> RoomFile:
        """Make the previous revision current again, as a new revision (so the restore itself can be undone)."""
        with self._lock:
            current = self.load(room_id)
            previous = self.load_previous(room_id)
            stored = previous.model_copy(update={"revision": current.revision + 1})
            self._write_atomic(self._path(room_id), to_json_bytes(dump_room_file(stored)))
            return stored

    def delete(self, room_id: str) -> None:
        """Remove a room. The previous revision goes first, so a crash half-way never brings a deleted room back."""
        with self._lock:
            path = self._path(room_id)
            if not path.is_file():
                raise RoomNotFound(room_id)
            self._path(room_id, PREV_SUFFIX).unlink(missing_ok=True)
            try:
                path.unlink()
            except FileNotFoundError as exc:
                raise RoomNotFound(room_id) from exc
            _fsync_dir(path.parent)

    # -- the room list's actions: trash and restore, rename (old id kept as an alias), ------------
    # -- duplicate is create() with a new name -----------------------------------------------------
    @property
    def trash_dir(self) -> Path:
        return self.rooms_dir.parent / "trash"

    def trash(self, room_id: str) -> None:
        """Move a room to the trash (restorable); its previous revision is dropped."""
        with self._lock:
            path = self._path(room_id)
            if not path.is_file():
                raise RoomNotFound(room_id)
            self.trash_dir.mkdir(exist_ok=True)
            os.replace(path, self.trash_dir / path.name)
            self._path(room_id, PREV_SUFFIX).unlink(missing_ok=True)
            _fsync_dir(self.rooms_dir)

    def trashed(self) -> list[RoomSummary]:
        out = []
        for path in sorted(self.trash_dir.glob(f"*{SUFFIX}")) if self.trash_dir.is_dir() else []:
            try:
                rf = parse_room_file(path.read_bytes(), strict_text=False)
            except (RoomFileError, FileNotFoundError):
                continue
            out.append(RoomSummary(path.stem, rf.room.name, rf.revision, len(rf.room.fixtures), len(rf.room.zones)))
        return out

    def restore(self, room_id: str) -> str:
        """Bring a room back from the trash; under a fresh id if its own was taken meanwhile."""
        with self._lock:
            if len(room_id) > MAX_ID_CHARS or not _ID_RE.fullmatch(room_id):
                raise RoomNotFound(room_id)
            src = self.trash_dir / f"{room_id}{SUFFIX}"
            if not src.is_file():
                raise RoomNotFound(room_id)
            new_id = (
                room_id if not self.exists(room_id) else self.unique_id(parse_room_file(src.read_bytes()).room.name)
            )
            os.replace(src, self._path(new_id))
            _fsync_dir(self.rooms_dir)
            return new_id

    @property
    def _aliases_path(self) -> Path:
        return self.rooms_dir.parent / "renamed.json"

    def renamed_to(self, room_id: str) -> str | None:
        """The id a renamed room has now (following a chain of renames), or None."""
        try:
            aliases = json.loads(self._aliases_path.read_text(encoding="utf-8"))
        except (FileNotFoundError, ValueError):
            return None
        seen, current = set(), room_id
        while current in aliases and current not in seen:
            seen.add(current)
            current = aliases[current]
        return current if current != room_id and self.exists(current) else None

    def rename(self, room_id: str, name: str) -> tuple[str, RoomFile]:
        """Give a room a new name; its id follows the name and the old id is remembered for redirects."""
        with self._lock:
            current = self.load(room_id)
            stored = current.model_copy(
                update={"revision": current.revision + 1, "room": current.room.model_copy(update={"name": name})}
            )
            new_id = room_id if slugify(name) == slugify(current.room.name) else self.unique_id(name)
            self._write_atomic(self._path(new_id), to_json_bytes(dump_room_file(stored)))
            if new_id != room_id:
                try:
                    aliases = json.loads(self._aliases_path.read_text(encoding="utf-8"))
                except (FileNotFoundError, ValueError):
                    aliases = {}
                aliases = {k: v for k, v in aliases.items() if k != new_id} | {room_id: new_id}
                tmp = self._aliases_path.with_suffix(".tmp")
                tmp.write_text(json.dumps(aliases, indent=1), encoding="utf-8")
                os.replace(tmp, self._aliases_path)
                self._path(room_id, PREV_SUFFIX).unlink(missing_ok=True)
                self._path(room_id).unlink(missing_ok=True)
                _fsync_dir(self.rooms_dir)
            return new_id, stored

    # -- start-up --------------------------------------------------------
    def recover(self, now: float | None = None) -> list[str]:
        """Restore rooms whose file is missing but whose previous revision exists; drop stale temporary files.

        Returns the ids restored (the caller tells the user).
        """
        restored = []
        with self._lock:
            for prev in sorted(self.rooms_dir.glob(f"*{PREV_SUFFIX}")):
                room_id = prev.name[: -len(PREV_SUFFIX)]
                main = prev.with_name(room_id + SUFFIX)
                if not _ID_RE.fullmatch(room_id) or main.exists():
                    continue
                tmp = self._temp_file(main, prev.read_bytes())  # bytes as they were: no re-encoding
                os.replace(tmp, main)
                restored.append(room_id)
                log.warning("room '%s' was missing after a crash: restored from its previous revision", room_id)
            now = time.time() if now is None else now
            for tmp in self.rooms_dir.glob(f".*{TMP_SUFFIX}"):
                try:
                    if now - tmp.stat().st_mtime > ORPHAN_AGE_S:
                        tmp.unlink()
                except FileNotFoundError:
                    pass
            if restored:
                _fsync_dir(self.rooms_dir)
        return restored


def _fsync_dir(folder: Path) -> None:
    """Make renames in ``folder`` durable (POSIX; a no-op where folders cannot be opened)."""
    try:
        fd = os.open(folder, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass  # some filesystems refuse fsync on a folder; the file itself was fsynced
    finally:
        os.close(fd)


def _fault_point(step: str) -> None:
    """Tests only: die here, as a crash or a power cut would, if LEAFCAST_FAULT_AFTER_STEP names this step."""
    if os.environ.get(FAULT_ENV) == step:
        os.kill(os.getpid(), signal.SIGKILL)
