"""Planner and check-my-setup timings for ``python -m app.bench``: medians, cold (every cache cleared) and warm.

Rooms: the four samples, a 1.5 × 3 m tent with matt white walls (reflectance 0.90) and the same tent in
reflective film with a carbon filter (a 30 × 30 × 50 cm box) hung from its top bars. Candidate types: each
room's own types plus two small library types that hang in every sample with the default 10 cm gaps (the
samples' own fixtures hang 4 cm or less apart, so most of them alone cannot be re-hung with 10 cm gaps).
"""

from __future__ import annotations

import statistics
import time

from app.assets import asset_dir
from app.room.models import WALL_FINISHES, Obstacle, RoomFile
from app.room.roomfile import parse_room_file

SAMPLES = ("hobby-tent-peppers", "basement-two-benches", "research-chamber-metric", "three-tier-greens-rack")
EXTRA_TYPES = ("spot-90", "strip-0.6")


def empty_tent(name: str, finish: str, obstacles=()) -> RoomFile:
    """The sample tent's crop and types in a 1.5 × 3 m tent with the given finish and no fixtures."""
    rf = parse_room_file((asset_dir("sample_rooms") / "hobby-tent-peppers.json").read_bytes())
    r = rf.room
    zone = r.zones[0].model_copy(update={"width_m": 1.5, "length_m": 3.0})
    room = r.model_copy(
        update={
            "name": name,
            "width_m": 1.5,
            "length_m": 3.0,
            "wall_finish": WALL_FINISHES[finish],
            "zones": [zone],
            "fixtures": [],
            "obstacles": list(obstacles),
        }
    )
    return rf.model_copy(update={"room": room})


def white_tent() -> RoomFile:
    return empty_tent("White tent 1.5 x 3 m", "white_paint")


def film_tent_with_filter() -> RoomFile:
    height = 2.032  # the sample tent's own height: the filter hangs 10 cm under its top bars
    carbon_filter = Obstacle(
        id="filter", name="Carbon filter", x_m=0.6, y_m=1.35, z_m=height - 0.6, width_m=0.3, length_m=0.3, height_m=0.5
    )
    return empty_tent("Film tent 1.5 x 3 m with a carbon filter", "reflective_film", [carbon_filter])


def rooms() -> dict[str, RoomFile]:
    out = {n: parse_room_file((asset_dir("sample_rooms") / f"{n}.json").read_bytes()) for n in SAMPLES}
    out["white tent 1.5 x 3 m"] = white_tent()
    out["film tent 1.5 x 3 m + carbon filter"] = film_tent_with_filter()
    return out


def _median_s(fn, repeats: int, clear) -> float:
    times = []
    for _ in range(repeats):
        if clear:
            clear()
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def planner_bench(repeats: int, clear_all) -> list[dict]:
    """Median seconds to the planner's final answer and to check-my-setup's report, cold and warm."""
    from app.service.planner import PlanOptions, check_setup, plan

    out = []
    for name, rf in rooms().items():
        types = tuple(dict.fromkeys([t.id for t in rf.room.fixture_types] + list(EXTRA_TYPES)))
        opts = PlanOptions(type_ids=types)
        last = plan(rf, opts)
        row = {
            "scene": f"planner {name}",
            "types": types,
            "proposals": len(last["proposals"]),
            "plan_cold_s": _median_s(lambda rf=rf, o=opts: plan(rf, o), repeats, clear_all),
            "plan_warm_s": _median_s(lambda rf=rf, o=opts: plan(rf, o), repeats, None),
            "check_cold_s": _median_s(lambda rf=rf: check_setup(rf), repeats, clear_all),
            "check_warm_s": _median_s(lambda rf=rf: check_setup(rf), repeats, None),
            "best_power_w": last["proposals"][0]["figures"]["energy"]["power_w"] if last["proposals"] else None,
        }
        print(
            f"planner, {name} ({', '.join(types)}): {row['proposals']} proposals; final answer cold "
            f"{row['plan_cold_s']:.2f} s, warm {row['plan_warm_s']:.2f} s; check my setup cold "
            f"{row['check_cold_s']:.2f} s, warm {row['check_warm_s']:.2f} s",
            flush=True,
        )
        out.append(row)
    return out
