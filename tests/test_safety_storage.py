"""Saves with no gap: a real server killed (SIGKILL) after each step of a save, a full disk, concurrent use.

The kill is made by the storage's own test hook (LEAFCAST_FAULT_AFTER_STEP), so it lands exactly between two
steps; the server is then started again on the same data folder and every room must be there, at the
acknowledged revision or at the one being written.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import threading
import time
import urllib.error
import urllib.request

import pytest

from app.room.roomfile import parse_room_file, to_json_bytes
from app.room.storage import ORPHAN_AGE_S, PREV_SUFFIX, SAVE_STEPS, RoomNotFound, RoomStore
from tests.conftest import sample_doc
from tests.servers import start_server, stop_server

_start, _stop = start_server, stop_server


def _call(base: str, method: str, path: str, body: bytes | None = None):
    req = urllib.request.Request(base + path, data=body, method=method, headers={"Content-Type": "application/json"})
    try:
        with urllib.request.urlopen(req, timeout=30) as r:
            return r.status, json.loads(r.read() or b"null")
    except urllib.error.HTTPError as exc:
        return exc.code, json.loads(exc.read() or b"null")


def _rooms(base: str) -> dict[str, int]:
    status, rooms = _call(base, "GET", "/api/rooms")
    assert status == 200
    return {r["id"]: r["revision"] for r in rooms}


@pytest.mark.slow
@pytest.mark.parametrize("step", SAVE_STEPS)
def test_sigkill_after_each_save_step_loses_no_room(tmp_path, step):
    data = tmp_path / "data"
    proc, base = _start(data)  # seeds the sample rooms
    before = _rooms(base)
    room_id = sorted(before)[0]
    _, doc = _call(base, "GET", f"/api/rooms/{room_id}")
    _stop(proc)
    assert before, "the sample rooms were not seeded"

    # A save killed after `step`: the client never hears back.
    proc, base = _start(data, fault=step)
    doc["room"]["name"] = "Renamed while the power went out"
    with pytest.raises((ConnectionError, urllib.error.URLError, OSError)):
        _call(base, "PUT", f"/api/rooms/{room_id}", json.dumps(doc).encode())
    assert proc.wait(10) == -signal.SIGKILL

    # A create killed after `step` (a new room has no previous revision to keep: that step never comes).
    proc, base = _start(data, fault=step)
    new = sample_doc("hobby-tent-peppers")
    new["room"]["name"] = "Brand new room"
    if step == "previous_kept":
        assert _call(base, "POST", "/api/rooms", json.dumps(new).encode())[0] == 201
        _stop(proc)
    else:
        with pytest.raises((ConnectionError, urllib.error.URLError, OSError)):
            _call(base, "POST", "/api/rooms", json.dumps(new).encode())
        assert proc.wait(10) == -signal.SIGKILL

    proc, base = _start(data)
    try:
        after = _rooms(base)
        for rid, revision in before.items():
            assert rid in after, f"room {rid} lost after a kill at '{step}'"
            if rid == room_id:
                # The acknowledged revision, or the one being written once it is in place.
                expected = revision if step in ("temp_written", "previous_kept") else revision + 1
                assert after[rid] == expected
                status, got = _call(base, "GET", f"/api/rooms/{rid}")
                assert status == 200
                assert (got["room"]["name"] == doc["room"]["name"]) == (expected == revision + 1)
            else:
                assert after[rid] == revision
        created = {rid for rid in after if rid not in before}
        assert len(created) == (0 if step == "temp_written" else 1)
    finally:
        _stop(proc)


@pytest.fixture
def store(tmp_path):
    return RoomStore(tmp_path)


@pytest.fixture
def tent():
    return parse_room_file(to_json_bytes(sample_doc("hobby-tent-peppers")))


def test_a_room_with_only_its_previous_revision_is_restored_on_start(store, tent):
    room_id, stored = store.create(tent)
    store.save(room_id, stored)  # revision 2; revision 1 kept as .prev.json
    (store.rooms_dir / f"{room_id}.json").unlink()  # what the old two-rename save could leave after a crash
    again = RoomStore(store.rooms_dir.parent)
    assert again.recover() == [room_id]
    assert again.load(room_id).revision == 1
    assert again.recover() == []


def test_orphaned_temporary_files_older_than_a_minute_are_removed(store, tent):
    room_id, _ = store.create(tent)
    old = store.rooms_dir / f".{room_id}.abc123.tmp"
    young = store.rooms_dir / f".{room_id}.def456.tmp"
    old.write_bytes(b"half")
    young.write_bytes(b"half")
    past = time.time() - 2 * ORPHAN_AGE_S
    os.utime(old, (past, past))
    store.recover()
    assert not old.exists() and young.exists()  # a young one may belong to a save still running
    assert store.load(room_id).revision == 1


def test_previous_revision_is_a_hard_link_and_can_be_restored(store, tent):
    room_id, stored = store.create(tent)
    changed = stored.model_copy(deep=True)
    changed.room.name = "Second"
    store.save(room_id, changed)
    prev = store.rooms_dir / f"{room_id}{PREV_SUFFIX}"
    assert prev.stat().st_nlink == 1  # the link was renamed over .prev.json; the old name is now the new file
    assert store.load_previous(room_id).room.name == tent.room.name
    back = store.restore_previous(room_id)
    assert (back.revision, back.room.name) == (3, tent.room.name)
    assert store.load_previous(room_id).room.name == "Second"  # the restore can itself be undone


def test_delete_removes_the_previous_revision_first(store, tent):
    room_id, stored = store.create(tent)
    store.save(room_id, stored)
    store.delete(room_id)
    assert RoomStore(store.rooms_dir.parent).recover() == []  # a deleted room never comes back
    with pytest.raises(RoomNotFound):
        store.load(room_id)


def test_restore_previous_over_http(client, tent_doc):
    created = client.post("/api/rooms", json=tent_doc).json()
    assert client.post(f"/api/rooms/{created['id']}/restore-previous").status_code == 404
    doc = client.get(f"/api/rooms/{created['id']}").json()
    doc["room"]["name"] = "Renamed"
    assert client.put(f"/api/rooms/{created['id']}", json=doc).status_code == 200
    r = client.post(f"/api/rooms/{created['id']}/restore-previous")
    assert r.status_code == 200 and r.json()["name"] == tent_doc["room"]["name"] and r.json()["revision"] == 3


@pytest.fixture
def tiny_disk(tmp_path):
    """A real 256 KiB tmpfs (root only): writes to it fail with ENOSPC as on a full disk."""
    mnt = tmp_path / "tiny"
    mnt.mkdir()
    if os.geteuid() != 0 or shutil.which("mount") is None:
        pytest.skip("needs root to mount a small tmpfs")
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=256k", "tmpfs", str(mnt)], capture_output=True)
    if done.returncode != 0:
        pytest.skip("cannot mount a tmpfs here: " + done.stderr.decode(errors="replace"))
    try:
        yield mnt
    finally:
        subprocess.run(["umount", "-l", str(mnt)], check=False)


def test_full_disk_answers_507_and_keeps_the_room(tiny_disk, tent_doc):
    from fastapi.testclient import TestClient

    from app.settings import Settings
    from app.web import create_app

    app = create_app(Settings(data_dir=tiny_disk, seed_samples=False))
    with TestClient(app, base_url="http://127.0.0.1") as c:
        created = c.post("/api/rooms", json=tent_doc).json()
        doc = c.get(f"/api/rooms/{created['id']}").json()
        filler = tiny_disk / "filler"
        fd = os.open(filler, os.O_WRONLY | os.O_CREAT)
        try:  # fill the disk to the last byte
            for size in (4096, 512, 1):
                try:
                    while True:
                        os.write(fd, b"\0" * size)
                except OSError:
                    pass
        finally:
            os.close(fd)
        doc["room"]["name"] = "Will not fit"
        r = c.put(f"/api/rooms/{created['id']}", json=doc)
        assert r.status_code == 507, r.text
        assert r.json()["error"] == "storage_full" and "full" in r.json()["message"]
        got = c.get(f"/api/rooms/{created['id']}").json()
        assert (got["revision"], got["room"]["name"]) == (1, tent_doc["room"]["name"])
        assert c.post("/api/rooms", json=tent_doc).status_code == 507
        assert not list((tiny_disk / "rooms").glob(".*.tmp"))
        filler.unlink()
        assert c.put(f"/api/rooms/{created['id']}", json=doc).status_code == 200


def test_concurrent_saves_and_reads_never_404_or_500(live_server):
    base = live_server
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["name"] = "Concurrency check"
    status, created = _call(base, "POST", "/api/rooms", json.dumps(doc).encode())
    assert status == 201
    room_id = created["id"]
    bad: list[str] = []
    stop = threading.Event()

    def saver():
        for _ in range(60):
            _, cur = _call(base, "GET", f"/api/rooms/{room_id}")
            status, _ = _call(base, "PUT", f"/api/rooms/{room_id}", json.dumps(cur).encode())
            if status not in (200, 409):
                bad.append(f"PUT {status}")
        stop.set()

    def reader(path):
        while not stop.is_set():
            status, _ = _call(base, "GET", path)
            if status != 200:
                bad.append(f"GET {path} {status}")

    threads = [threading.Thread(target=saver)] + [
        threading.Thread(target=reader, args=(p,)) for p in ("/api/rooms", f"/api/rooms/{room_id}", "/api/rooms")
    ]
    for t in threads:
        t.start()
    for t in threads:
        t.join(120)
    assert not bad, bad[:5]
    _, final = _call(base, "GET", f"/api/rooms/{room_id}")
    assert final["revision"] > 1
