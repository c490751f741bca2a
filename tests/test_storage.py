"""Storage: atomic saves that keep the previous revision, stale saves refused, no path escapes."""

import errno
import os

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from app.room.models import RoomFile
from app.room.roomfile import dump_room_file, parse_room_file, to_json_bytes
from app.room.storage import RoomNotFound, RoomStore, StaleRevision, slugify
from tests.conftest import sample_doc


@pytest.fixture
def store(tmp_path):
    return RoomStore(tmp_path)


@pytest.fixture
def tent():
    return parse_room_file(to_json_bytes(sample_doc("hobby-tent-peppers")))


def test_create_save_and_revisions(store, tent):
    room_id, stored = store.create(tent)
    assert stored.revision == 1
    changed = stored.model_copy(deep=True)
    changed.room.fixtures[0].dimming_pct = 50
    saved = store.save(room_id, changed)
    assert saved.revision == 2
    assert store.load(room_id).room.fixtures[0].dimming_pct == 50
    assert store.load_previous(room_id).revision == 1


def test_stale_revision_refused(store, tent):
    room_id, stored = store.create(tent)
    mine = stored.model_copy(deep=True)
    theirs = stored.model_copy(deep=True)
    theirs.room.fixtures[0].dimming_pct = 40
    store.save(room_id, theirs)
    mine.room.fixtures[0].dimming_pct = 90
    with pytest.raises(StaleRevision) as exc:
        store.save(room_id, mine)
    assert (exc.value.current, exc.value.given) == (2, 1)
    assert store.load(room_id).room.fixtures[0].dimming_pct == 40


@pytest.mark.parametrize("name", ["../../etc/passwd", "..", "/abs/path", "a/../../b", "C:\\x", "\x00", "ünïcode ✿"])
def test_names_stay_inside_the_data_folder(store, tent, name):
    rf = tent.model_copy(update={"room": tent.room.model_copy(update={"name": name if name.strip("\x00") else "x"})})
    room_id, _ = store.create(rf)
    assert "/" not in room_id and "\\" not in room_id and ".." not in room_id
    files = list(store.rooms_dir.iterdir())
    assert all(f.parent == store.rooms_dir for f in files)
    with pytest.raises(RoomNotFound):
        store.load("../" + room_id)


def test_slugify_never_empty():
    assert slugify("...") == "room"
    assert slugify("Tent 4×4 ft, peppers!") == "tent-4-4-ft-peppers"


@pytest.mark.parametrize("fail_at", ["write", "fsync", "replace"])
def test_failed_write_keeps_the_old_revision(store, tent, monkeypatch, fail_at):
    room_id, stored = store.create(tent)
    before = (store.rooms_dir / f"{room_id}.json").read_bytes()
    changed = stored.model_copy(deep=True)
    changed.room.name = "Changed"

    def disk_full(*a, **k):
        raise OSError(errno.ENOSPC, "No space left on device")

    if fail_at == "write":
        real_fdopen = os.fdopen

        class Half:
            def __init__(self, fh):
                self.fh = fh

            def __enter__(self):
                return self

            def __exit__(self, *exc):
                self.fh.close()

            def write(self, data):
                self.fh.write(data[: len(data) // 2])
                raise OSError(errno.ENOSPC, "No space left on device")

        monkeypatch.setattr(os, "fdopen", lambda fd, mode: Half(real_fdopen(fd, mode)))
    elif fail_at == "fsync":
        monkeypatch.setattr(os, "fsync", disk_full)
    else:
        real_replace = os.replace
        calls = []

        def second_replace_fails(src, dst):
            calls.append(dst)
            if len(calls) == 2:
                disk_full()
            return real_replace(src, dst)

        monkeypatch.setattr(os, "replace", second_replace_fails)
    with pytest.raises(OSError):
        store.save(room_id, changed)
    monkeypatch.undo()
    assert (store.rooms_dir / f"{room_id}.json").read_bytes() == before
    assert store.load(room_id).room.name == tent.room.name
    assert not list(store.rooms_dir.glob(".*.tmp"))


def test_damaged_file_is_skipped_not_deleted(store, tent):
    store.create(tent)
    (store.rooms_dir / "broken.json").write_text("{half a fi")
    assert [s.name for s in store.list()] == [tent.room.name]
    assert (store.rooms_dir / "broken.json").exists()


numbers = st.floats(min_value=0.05, max_value=0.95)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    fx=numbers,
    fy=numbers,
    dim=st.floats(10, 100),
    rot=st.sampled_from([0.0, 90.0, 180.0, 270.0]),
    photo=st.one_of(st.none(), st.floats(1, 24)),
    # Names as a grower types them: no control characters (refused with their own message), not blank.
    name=st.text(st.characters(blacklist_categories=("Cc", "Cs")), min_size=1, max_size=60).filter(str.strip),
    units=st.sampled_from(["imperial", "metric"]),
)
def test_round_trip_save_load_export_import(tmp_path_factory, fx, fy, dim, rot, photo, name, units):
    store = RoomStore(tmp_path_factory.mktemp("rt"))
    doc = sample_doc("hobby-tent-peppers")
    room = doc["room"]
    room["name"] = name
    room["display_units"] = units
    room["zones"][0]["photoperiod_h"] = photo
    f = room["fixtures"][0]
    f.update(dimming_pct=dim, rotation_deg=rot)
    # Keep the footprint inside whatever the rotation.
    f["x_m"] = 0.31 + fx * (room["width_m"] - 0.62)
    f["y_m"] = 0.31 + fy * (room["length_m"] - 0.62)
    rf = parse_room_file(to_json_bytes(doc))
    room_id, stored = store.create(rf)
    loaded = store.load(room_id)
    exported = to_json_bytes(dump_room_file(loaded))
    imported = parse_room_file(exported)
    assert imported == loaded
    assert imported.room == rf.room
    assert isinstance(imported, RoomFile)
