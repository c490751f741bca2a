"""Schemathesis (from PyPI) drives the app's own OpenAPI schema: no 5xx, no answer outside the schema."""

import math
import os

import pytest
import schemathesis
from hypothesis import HealthCheck, given, settings

from app.settings import Settings
from app.web import create_app


@pytest.fixture(scope="module")
def api(tmp_path_factory):
    # The in-process ASGI client calls itself "testserver"; allow that name here only.
    app = create_app(
        Settings(data_dir=tmp_path_factory.mktemp("schemathesis"), extra_allowed_hosts=frozenset({"testserver"}))
    )
    return schemathesis.openapi.from_asgi("/openapi.json", app)


def test_no_server_errors_and_responses_match_schema(api):
    from schemathesis.checks import not_a_server_error
    from schemathesis.specs.openapi.checks import response_schema_conformance, status_code_conformance

    failures, calls = [], []
    for op in api.get_all_operations():
        operation = op.ok()

        @settings(
            max_examples=int(os.environ.get("LEAFCAST_SCHEMATHESIS_EXAMPLES", "40")),
            deadline=None,
            suppress_health_check=list(HealthCheck),
            database=None,
        )
        @given(case=operation.as_strategy())
        def run(case):
            response = case.call(headers={"Host": "127.0.0.1"})
            calls.append(response.status_code)
            case.validate_response(
                response, checks=[not_a_server_error, response_schema_conformance, status_code_conformance]
            )

        try:
            run()
        except Exception as exc:  # collect every operation's failure before reporting
            failures.append(f"{operation.method.upper()} {operation.path}: {exc}")
    assert not failures, "\n\n".join(failures)
    assert len(calls) > 100 and all(c < 500 for c in calls)


# -- valid input: every operation reached with a 2xx answer ----------------------------------------------

# Generous: check-my-setup and the planner are real searches, and CI shares two cores.
CALL_TIMEOUT_S = 180

LAMBERTIAN_IES = "\n".join(
    [
        "IESNA:LM-63-2002",
        "[TEST] Lambertian test source written for the tests",
        "TILT=NONE",
        "1 1000 1 7 1 1 2 0.3 0.3 0",
        "1 1 100",
        "0 15 30 45 60 75 90",
        "0",
        " ".join(f"{318.31 * math.cos(math.radians(a)):.3f}" for a in (0, 15, 30, 45, 60, 75, 90)),
    ]
)


def _check(case, response):
    from schemathesis.checks import not_a_server_error
    from schemathesis.specs.openapi.checks import response_schema_conformance, status_code_conformance

    case.validate_response(response, checks=[not_a_server_error, response_schema_conformance, status_code_conformance])


def test_every_operation_answers_2xx_with_valid_input(api):
    """Built from valid rooms (tests/strategies.py), each of the API's operations is reached and answers 2xx,
    within its documented response schema."""
    from tests.strategies import valid_room_docs

    @settings(max_examples=3, deadline=None, suppress_health_check=list(HealthCheck), database=None)
    @given(room_doc=valid_room_docs(names=("hobby-tent-peppers", "research-chamber-metric")))
    def run(room_doc):
        _every_operation(api, room_doc)

    run()


def _every_operation(api, room_doc):
    ops = {(o.method.upper(), o.path): o for o in (op.ok() for op in api.get_all_operations())}

    def call(method, path, **kw):
        case = ops[(method, path)].Case(**kw)
        response = case.call(headers={"Host": "127.0.0.1"}, timeout=CALL_TIMEOUT_S)
        _check(case, response)
        assert 200 <= response.status_code < 300, (method, path, response.status_code, response.text[:300])
        reached.add((method, path))
        return response

    reached: set[tuple[str, str]] = set()
    created = call("POST", "/api/rooms", body=room_doc, media_type="application/json").json()
    rid = {"room_id": created["id"]}
    call("GET", "/api/rooms")
    stored = call("GET", "/api/rooms/{room_id}", path_parameters=rid).json()
    call("PUT", "/api/rooms/{room_id}", path_parameters=rid, body=stored, media_type="application/json")
    call("POST", "/api/rooms/import", body=room_doc, media_type="application/json")
    call("GET", "/api/rooms/{room_id}/file", path_parameters=rid)
    call("GET", "/api/rooms/{room_id}/analysis", path_parameters=rid)
    call("POST", "/api/analyze", body=room_doc, media_type="application/json")
    zid = {**rid, "zone_id": room_doc["room"]["zones"][0]["id"]}
    call("GET", "/api/rooms/{room_id}/zones/{zone_id}/grid.csv", path_parameters=zid)
    call("GET", "/api/rooms/{room_id}/zones/{zone_id}/map.svg", path_parameters=zid)
    call("GET", "/api/rooms/{room_id}/check", path_parameters=rid)
    call("POST", "/api/rooms/{room_id}/check-jobs", path_parameters=rid)
    call("GET", "/api/rooms/{room_id}/curves", path_parameters=rid, query={"zone": zid["zone_id"]})
    job = call("POST", "/api/rooms/{room_id}/plan", path_parameters=rid, body={}, media_type="application/json")
    jid = {"job_id": job.json()["job_id"]}
    call("GET", "/api/plan-jobs/{job_id}", path_parameters=jid)
    call("DELETE", "/api/plan-jobs/{job_id}", path_parameters=jid)
    call(
        "POST",
        "/api/photometry/import",
        query={"kind": "ies", "flux_unit": "photon"},
        body=LAMBERTIAN_IES.encode(),
        media_type="application/octet-stream",
    )
    call(
        "POST",
        "/api/photometry/spectrum",
        body={"peaks": [{"nm": 450, "fwhm_nm": 20, "weight": 1}, {"nm": 660, "fwhm_nm": 20, "weight": 2}]},
        media_type="application/json",
    )
    readings = [[100.0 + 10 * (2 - abs(i - 2)) + 10 * (2 - abs(j - 2)) for i in range(5)] for j in range(5)]
    call(
        "POST",
        "/api/photometry/fit",
        body={"readings": readings, "cell_m": 0.1, "hanging_height_m": 0.5},
        media_type="application/json",
    )
    library = call("GET", "/api/library/fixtures").json()
    call("GET", "/api/library/crops")
    _meter_and_year(call, rid, room_doc, library)
    call("POST", "/api/rooms/{room_id}/restore-previous", path_parameters=rid)
    call("GET", "/api/rooms/{room_id}/plan.dxf", path_parameters=rid)
    check_job = call("POST", "/api/rooms/{room_id}/check-jobs", path_parameters=rid).json()
    call("DELETE", "/api/plan-jobs/{job_id}", path_parameters={"job_id": check_job["job_id"]})
    call("POST", "/api/footprints", body=room_doc, media_type="application/json")
    call("POST", "/api/fixture-types/check", body=room_doc["room"]["fixture_types"][0], media_type="application/json")
    variant = call(
        "POST",
        "/api/rooms/{room_id}/duplicate",
        path_parameters=rid,
        body={"name": "Variant B"},
        media_type="application/json",
    ).json()
    moved = call(
        "POST",
        "/api/rooms/{room_id}/rename",
        path_parameters={"room_id": variant["id"]},
        body={"name": "Variant C"},
        media_type="application/json",
    ).json()
    call("POST", "/api/rooms/{room_id}/trash", path_parameters={"room_id": moved["id"]})
    call("GET", "/api/trash")
    call("POST", "/api/trash/{room_id}/restore", path_parameters={"room_id": moved["id"]})
    call("DELETE", "/api/rooms/{room_id}", path_parameters=rid)
    missing = set(ops) - reached
    assert not missing, f"operations not reached with a 2xx answer: {sorted(missing)}"


def _model_readings(call, rid, zone, factor):
    """A 2 x 3 grid of readings 10 cm apart from 10 cm inside the zone: the model's own map times a factor."""
    a = call("GET", "/api/rooms/{room_id}/analysis", path_parameters=rid).json()
    g = next(z for z in a["zones"] if z["id"] == zone["id"])["grid"]

    def at(x, y):
        j = min(range(len(g["y_m"])), key=lambda k: abs(g["y_m"][k] - y))
        i = min(range(len(g["x_m"])), key=lambda k: abs(g["x_m"][k] - x))
        return max(round(factor * g["ppfd"][j][i], 1), 1.0)

    return [[at(zone["x_m"] + 0.1 * (c + 1), zone["y_m"] + 0.1 * (r + 1)) for c in range(3)] for r in range(2)]


def _meter_and_year(call, rid, room_doc, library):
    """Readings, their comparison and fit, output age, the fixture card, nested squares, the cycle and year."""
    zone = room_doc["room"]["zones"][0]
    revision = call("GET", "/api/rooms/{room_id}", path_parameters=rid).json()["revision"]
    reading_set = {
        "id": "check",
        "zone_id": zone["id"],
        "taken_on": "2026-11-30",
        "grid": {
            "origin_x_m": zone["x_m"] + 0.1,
            "origin_y_m": zone["y_m"] + 0.1,
            "spacing_x_m": 0.1,
            "spacing_y_m": 0.1,
            "values": _model_readings(call, rid, zone, 0.9),
        },
    }
    saved = call(
        "POST",
        "/api/rooms/{room_id}/readings",
        path_parameters=rid,
        body={"revision": revision, "reading_set": reading_set},
        media_type="application/json",
    ).json()
    sid = {**rid, "set_id": "check"}
    call("GET", "/api/rooms/{room_id}/readings/{set_id}/compare", path_parameters=sid)
    applied = call(
        "POST",
        "/api/rooms/{room_id}/readings/{set_id}/apply",
        path_parameters=sid,
        body={"revision": saved["revision"], "fit": "room"},
        media_type="application/json",
    ).json()
    aged = call(
        "POST",
        "/api/rooms/{room_id}/output-age",
        path_parameters=rid,
        body={"revision": applied["revision"], "output_age": {"hours_in_service_h": 12000}},
        media_type="application/json",
    ).json()
    call("DELETE", "/api/rooms/{room_id}/readings/{set_id}", path_parameters=sid, query={"revision": aged["revision"]})
    call("GET", "/api/fixture-card", query={"type_id": library[0]["id"], "height_m": 0.45})
    call(
        "GET",
        "/api/rooms/{room_id}/zones/{zone_id}/squares",
        path_parameters={**rid, "zone_id": zone["id"]},
        query={"x_m": zone["x_m"] + zone["width_m"] / 2, "y_m": zone["y_m"] + zone["length_m"] / 2},
    )
    call("GET", "/api/rooms/{room_id}/year", path_parameters=rid)


# -- stateful: create, update, analyse, plan, delete, in any order hypothesis picks -------------------------


def test_stateful_room_lifecycle_has_no_server_error(api):
    from hypothesis import strategies as st
    from hypothesis.stateful import (
        Bundle,
        RuleBasedStateMachine,
        initialize,
        invariant,
        rule,
        run_state_machine_as_test,
    )

    from tests.strategies import valid_room_docs

    ops = {(o.method.upper(), o.path): o for o in (op.ok() for op in api.get_all_operations())}
    small = ("hobby-tent-peppers", "three-tier-greens-rack")

    class Lifecycle(RuleBasedStateMachine):
        rooms = Bundle("rooms")

        def __init__(self) -> None:
            super().__init__()
            self.revisions: dict[str, int] = {}
            self.statuses: list[int] = []

        def call(self, method, path, **kw):
            case = ops[(method, path)].Case(**kw)
            response = case.call(headers={"Host": "127.0.0.1"}, timeout=CALL_TIMEOUT_S)
            _check(case, response)
            self.statuses.append(response.status_code)
            return response

        @initialize(target=rooms, doc=valid_room_docs(names=small))
        def first_room(self, doc):
            return self._create(doc)

        @rule(target=rooms, doc=valid_room_docs(names=small))
        def create(self, doc):
            return self._create(doc)

        def _create(self, doc):
            r = self.call("POST", "/api/rooms", body=doc, media_type="application/json")
            assert r.status_code == 201, r.text
            self.revisions[r.json()["id"]] = r.json()["revision"]
            return r.json()["id"]

        @rule(rid=rooms, doc=valid_room_docs(names=small), stale=st.booleans())
        def update(self, rid, doc, stale):
            if rid not in self.revisions:
                return
            doc = {**doc, "revision": self.revisions[rid] - (1 if stale else 0)}
            r = self.call(
                "PUT", "/api/rooms/{room_id}", path_parameters={"room_id": rid}, body=doc, media_type="application/json"
            )
            if stale:
                assert r.status_code == 409, r.text  # a stale save is refused, never applied
            else:
                assert r.status_code == 200, r.text
                self.revisions[rid] = r.json()["revision"]

        @rule(rid=rooms)
        def analyse(self, rid):
            r = self.call(
                "GET", "/api/rooms/{room_id}/analysis", path_parameters={"room_id": rid}, query={"grids": False}
            )
            assert r.status_code == (200 if rid in self.revisions else 404)
            if r.status_code == 200:
                assert r.json()["room"]["revision"] == self.revisions[rid]

        @rule(rid=rooms)
        def plan_and_cancel(self, rid):
            r = self.call(
                "POST",
                "/api/rooms/{room_id}/plan",
                path_parameters={"room_id": rid},
                body={},
                media_type="application/json",
            )
            assert r.status_code == (202 if rid in self.revisions else 404)
            if r.status_code == 202:
                jid = {"job_id": r.json()["job_id"]}
                assert self.call("DELETE", "/api/plan-jobs/{job_id}", path_parameters=jid).status_code == 200

        @rule(rid=rooms)
        def restore_previous(self, rid):
            r = self.call("POST", "/api/rooms/{room_id}/restore-previous", path_parameters={"room_id": rid})
            known = self.revisions.get(rid)
            # A room has a previous revision once it was saved at least once after its creation.
            assert r.status_code == (200 if known is not None and known > 1 else 404), r.text
            if r.status_code == 200:
                assert r.json()["revision"] == known + 1
                self.revisions[rid] = known + 1

        @rule(rid=rooms)
        def delete(self, rid):
            r = self.call("DELETE", "/api/rooms/{room_id}", path_parameters={"room_id": rid})
            assert r.status_code == (204 if self.revisions.pop(rid, None) is not None else 404)

        @invariant()
        def no_server_error(self):
            assert all(s < 500 for s in self.statuses)

    Lifecycle.TestCase.settings = settings(
        max_examples=int(os.environ.get("LEAFCAST_STATEFUL_EXAMPLES", "6")),
        stateful_step_count=8,
        deadline=None,
        suppress_health_check=list(HealthCheck),
        database=None,
    )
    run_state_machine_as_test(Lifecycle, settings=Lifecycle.TestCase.settings)
