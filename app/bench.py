"""Benchmark: ``python -m app.bench`` times the engine on fixed scenes.

For each scene it prints the median compute time (cold, full recompute, and
moving one fixture), the peak memory traced during a full compute, and the
speed-up over a brute-force reference (fine direct summation: about 32 × 32 nodes per
fixture, every mirror image on the fine grid, no culling, no stamps) together
with the RMS difference between the two, so the speed-up is at equal accuracy.
"""

from __future__ import annotations

import argparse
import json
import resource
import statistics
import time
import tracemalloc
from dataclasses import replace
from pathlib import Path

import numpy as np

from app.assets import asset_dir
from app.bench_scenes import rack_beside_floor, sample, side_lit_rack, tent_with_filter_and_fan, white_room
from app.engine import cache as engine_cache
from app.engine import compute, direct
from app.engine.aim import aim_matrix
from app.engine.compute import compute_scene
from app.engine.direct import irradiance_from_nodes
from app.engine.emitters import local_nodes
from app.engine.mirror_images import image_list, mirror_coordinate
from app.engine.scene import Box
from app.engine.tier_cover import covering_box
from app.room.roomfile import parse_room_file
from app.service.farm import vertical_farm
from app.service.scene_builder import EngineScene, build_scene


def clear_fixture_caches() -> None:
    compute.fixture_on_grid.cache_clear()
    compute._fixture_on_patches.cache_clear()
    direct._stamp.cache_clear()
    compute._local_sideways.cache_clear()
    compute._images_reach.cache_clear()


def clear_all_caches() -> None:
    engine_cache.clear_all()


def run(scene: EngineScene):
    return compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes)


def median_ms(fn, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t) * 1000)
    return statistics.median(times)


def _dense_nodes(e, n=32):
    """Brute force: about 32 × 32 Gauss-Legendre nodes over the emitter, whatever its distance."""
    if e.shape == "point":
        return np.array([[e.x_m, e.y_m, e.z_m]]), np.array([e.flux_umol_s])
    u, v, w = local_nodes(e, e.largest_dimension_m / n / 0.5 / 2)  # segments ≈ n per dimension
    m = aim_matrix(e.rotation_deg, e.tilt_deg, e.aim_deg)  # the face turned (and tilted) about its centre
    xyz = np.array([e.x_m, e.y_m, e.z_m]) + np.outer(u, m[:, 0]) + np.outer(v, m[:, 1])
    return xyz, w * e.flux_umol_s


def brute_force(scene: EngineScene) -> list[np.ndarray]:
    """Reference maps by fine direct summation (direct light and mirror images; diffuse walls as the engine)."""
    out = []
    for g in scene.grids:
        gx, gy = np.meshgrid(g.x_m, g.y_m)
        pts = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, g.z_m)])
        total = np.zeros(pts.shape[0])
        for e in scene.emitters:
            if not compute.lights_grid(e, g, covering_box(g, scene.boxes), scene.enclosure):
                continue
            nodes, flux = _dense_nodes(e)
            near = direct.relevant_boxes(e, g, scene.boxes, 1e9)
            aim = {"tilt_deg": e.tilt_deg, "aim_deg": e.aim_deg}
            total += irradiance_from_nodes(pts, nodes, flux, e.distribution, e.rotation_deg, boxes=near, **aim)
            if scene.enclosure.has_specular:
                enc = scene.enclosure
                for i, j, w in image_list(e, g, enc):
                    # Every image with the dense nodes (the far ones with its centre) and every box copy crossed.
                    src, fl = (nodes, flux) if max(abs(i), abs(j)) <= 1 else (nodes.mean(axis=0)[None], [flux.sum()])
                    img = src.copy()
                    img[:, 0] = mirror_coordinate(src[:, 0], i, enc.width_m)
                    img[:, 1] = mirror_coordinate(src[:, 1], j, enc.length_m)
                    mirror = (-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0)
                    total += irradiance_from_nodes(
                        pts,
                        img,
                        w * np.asarray(fl),
                        e.distribution,
                        e.rotation_deg,
                        boxes=near,
                        mirror=mirror,
                        fold_m=(enc.width_m, enc.length_m),
                        **aim,
                    )
        out.append(total.reshape(g.ny, g.nx))
    if scene.enclosure.has_diffuse:
        engine = run(scene)
        out = [o + z.reflected for o, z in zip(out, engine, strict=True)]
    return out


def bench_scene(name: str, scene: EngineScene, repeats: int, brute: bool, rng: np.random.Generator) -> dict:
    clear_all_caches()
    t = time.perf_counter()
    run(scene)
    cold_ms = (time.perf_counter() - t) * 1000

    def full():
        clear_fixture_caches()
        run(scene)

    full_ms = median_ms(full, repeats)
    tracemalloc.start()
    full()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    run(scene)  # warm every fixture's cached contribution
    emitters = list(scene.emitters)
    k = 0

    def drag():
        nonlocal k
        k += 1
        e = scene.emitters[0]
        dx, dy = rng.uniform(-0.02, 0.02, 2)
        emitters[0] = replace(e, x_m=e.x_m + dx, y_m=e.y_m + dy)
        compute_scene(tuple(emitters), scene.grids, scene.enclosure, scene.boxes)

    drag_ms = median_ms(drag, repeats)
    result = {
        "scene": name,
        "points": int(sum(g.nx * g.ny for g in scene.grids)),
        "fixtures": len(scene.emitters),
        "cold_ms": cold_ms,
        "full_ms": full_ms,
        "drag_ms": drag_ms,
        "peak_mib": peak / 2**20,
    }
    if brute:
        t = time.perf_counter()
        ref = brute_force(scene)
        brute_ms = (time.perf_counter() - t) * 1000
        ours = run(scene)
        diff = np.concatenate([(z.ppfd - r).ravel() for z, r in zip(ours, ref, strict=True)])
        mean = np.mean(np.concatenate([r.ravel() for r in ref]))
        result.update(
            brute_ms=brute_ms, speedup=brute_ms / full_ms, rms_vs_brute=float(np.sqrt(np.mean(diff**2)) / mean)
        )
    return result


def bench_year() -> dict:
    """The cycle-and-year page of the greenhouse sample: first call (pvlib import and the year of sun), then cold
    analysis caches (the sun model stays cached for the process, as it does in the server)."""
    from app.service.year import year_view

    rf = parse_room_file((asset_dir("sample_rooms") / "greenhouse-lettuce-bench.json").read_bytes())
    clear_all_caches()
    t0 = time.perf_counter()
    year_view("bench", rf)
    first = time.perf_counter() - t0
    runs = []
    for _ in range(3):
        clear_all_caches()
        t0 = time.perf_counter()
        year_view("bench", rf)
        runs.append(time.perf_counter() - t0)
    cold = statistics.median(runs)
    print(
        f"cycle-and-year page, greenhouse-lettuce-bench: first call {first:.2f} s, then {cold:.2f} s with cold caches"
    )
    return {"scene": "year page greenhouse-lettuce-bench", "first_s": first, "cold_s": cold}


def one_obstacle_ratio(name: str, repeats: int) -> dict:
    """Full-compute time of a sample with one 15 cm box added, over the same without (target <= 3x)."""
    s = sample(name)
    g = s.grids[0]
    # A clip fan: 15 cm, at the zone's front-left corner, its bottom 15 cm above the canopy.
    fan = Box(g.x0_m + 0.03, g.y0_m + 0.03, g.z_m + 0.15, g.x0_m + 0.18, g.y0_m + 0.18, g.z_m + 0.30)
    with_box = replace(s, boxes=(*s.boxes, fan))

    def full(scene):
        clear_fixture_caches()
        run(scene)

    run(s)
    run(with_box)  # warm the shared (cold) caches
    base, boxed = median_ms(lambda: full(s), repeats), median_ms(lambda: full(with_box), repeats)
    return {"scene": f"{name} + one 15 cm box", "full_ms": boxed, "without_ms": base, "ratio": boxed / base}


def _arguments(argv: list[str] | None) -> argparse.Namespace:
    ap = argparse.ArgumentParser(prog="python -m app.bench", description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=9)
    ap.add_argument("--no-farm", action="store_true", help="skip the 1,000-fixture vertical farm")
    ap.add_argument("--json", type=Path, help="also write the figures to this file")
    ap.add_argument("--no-planner", action="store_true", help="skip the planner and check-my-setup timings")
    ap.add_argument("--planner-repeats", type=int, default=3, help="runs per planner timing (median)")
    ap.add_argument("--browser", action="store_true", help="also time pointer move to repainted map in Chromium")
    ap.add_argument(
        "--safety",
        action="store_true",
        help="also: the cost model against measured times, and small requests beside the heaviest accepted one",
    )
    ap.add_argument("--no-year", action="store_true", help="skip the cycle-and-year page timing")
    return ap.parse_args(argv)


# The engine scenes timed against the brute-force reference: (name, scene builder), in the order they print.
ENGINE_SCENES = (
    ("tent 4x4 ft, 2 bar arrays, reflective film, 1 in grid", lambda: sample("hobby-tent-peppers")),
    ("room 10x12 ft, 6 panels, 2 benches, matt walls, 1 in grid", lambda: sample("basement-two-benches")),
    ("rack 2x4 ft, 3 tiers, 6 strips, 1 in grid", lambda: sample("three-tier-greens-rack")),
    ("tent 4x4 ft + carbon filter + clip fan, reflective film", tent_with_filter_and_fan),
    ("white-painted room 3 x 3.6 m, open doorway, 2.5 cm grid", white_room),
    ("film tent 1.2 x 1.2 m, 2-shelf rack beside open floor, bar array over the floor", rack_beside_floor),
    ("rack 1.2 x 0.6 m, 3 tiers lit from the front by bars tilted 55 deg, film bay", side_lit_rack),
)


def engine_results(repeats: int, farm: bool, rng: np.random.Generator) -> list[dict]:
    """Every engine scene, the one-obstacle ratios and (with `farm`) the vertical farm and one of its rows."""
    results = [bench_scene(name, build(), repeats, True, rng) for name, build in ENGINE_SCENES]
    for name in ("hobby-tent-peppers", "basement-two-benches", "three-tier-greens-rack"):
        results.append(one_obstacle_ratio(name, repeats))
    if farm:
        farm_scene = build_scene(vertical_farm().room)
        results.append(
            bench_scene("vertical farm 964 m2, 5 tiers, 1,000 fixtures, 5 cm grid", farm_scene, 3, False, rng)
        )
        one_row = build_scene(vertical_farm(rows=1).room)
        results.append(bench_scene("one farm row (100 fixtures), for the brute-force ratio", one_row, 3, True, rng))
    return results


def print_engine_table(results: list[dict]) -> None:
    print(
        f"{'scene':<62}{'points':>9}{'fix':>6}{'cold ms':>10}{'full ms':>10}{'drag ms':>9}{'peak MiB':>10}"
        f"{'brute ms':>10}{'speed-up':>9}{'RMS diff':>9}"
    )
    for r in results:
        if "ratio" in r:
            print(
                f"{r['scene']:<62} full {r['full_ms']:.1f} ms, without the box {r['without_ms']:.1f} ms: {r['ratio']:.1f}x"
            )
            continue
        print(
            f"{r['scene']:<62}{r['points']:>9,}{r['fixtures']:>6}{r['cold_ms']:>10.1f}{r['full_ms']:>10.1f}"
            f"{r['drag_ms']:>9.1f}{r['peak_mib']:>10.1f}"
            + (f"{r['brute_ms']:>10.0f}{r['speedup']:>8.1f}x{r['rms_vs_brute']:>9.2%}" if "brute_ms" in r else "")
        )


def browser_figures() -> list[dict]:
    """Drag preview and drop latency in Chromium on the sample tent and basement room (:mod:`app.bench_browser`)."""
    from app.bench_browser import browser_latency

    results = []
    for r in browser_latency(["hobby-tent-4-x-4-ft-peppers", "basement-room-10-x-12-ft-two-benches"]):
        print(
            f"browser {r['room']}: drag preview, pointer move to painted frame median {r['frame_ms']:.1f} ms "
            f"(at most {r['frames_per_s_bound']:.0f} frames/s by latency; paint {r['paint_ms']:.1f} ms, max {r['max_frame_ms']:.0f} ms); "
            f"mouse-up to exact figures median {r['drop_ms']:.0f} ms (max {r['max_drop_ms']:.0f}), "
            f"to the redrawn map {r['drop_map_ms']:.0f} ms"
        )
        results.append({"scene": "browser " + r["room"], **r})
    return results


def main(argv: list[str] | None = None) -> int:
    args = _arguments(argv)
    results = engine_results(args.repeats, not args.no_farm, np.random.default_rng(1))
    print_engine_table(results)
    if not args.no_planner:
        from app.bench_planner import planner_bench

        results += planner_bench(args.planner_repeats, clear_all_caches)
    if not args.no_year:
        results.append(bench_year())
    if args.browser:
        results += browser_figures()
    if args.safety:
        results += safety_figures()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak resident memory of this whole run: {rss:.0f} MiB (traced numpy peak per scene in the table)")
    if args.json:
        args.json.write_text(json.dumps(results, indent=1))
    return 0


def safety_figures(budget_s: float = 20.0) -> list[dict]:
    """Cost model estimate against measured seconds; small-request latency while a heavy analysis runs."""
    from app.bench_safety import cost_model_table, heavy_beside_small

    rows = cost_model_table()
    print(f"\n{'cost model: scene':<44}{'points':>9}{'estimate s':>12}{'measured s':>12}{'ratio':>7}")
    for r in rows:
        ratio = r["estimate_s"] / max(r["measured_s"], 1e-9)
        print(f"{r['scene']:<44}{r['points']:>9,}{r['estimate_s']:>12.2f}{r['measured_s']:>12.2f}{ratio:>7.2f}")
    h = heavy_beside_small(budget_s)
    print(
        f"\nheavy request ({h['heavy_points']:,} points, {h['heavy_fixtures']} fixtures, budget {budget_s:g} s): "
        f"answered {h['heavy_status']} in {h['heavy_s']:.1f} s\n"
        f"small requests (room list API and page): alone p50 {h['alone_p50_ms']:.0f} ms, p95 {h['alone_p95_ms']:.0f} ms; "
        f"beside it ({h['beside_n']} requests) p50 {h['beside_p50_ms']:.0f} ms, p95 {h['beside_p95_ms']:.0f} ms, "
        f"max {h['beside_max_ms']:.0f} ms"
    )
    return [{"scene": "cost model " + r["scene"], **r} for r in rows] + [{"scene": "heavy beside small", **h}]


if __name__ == "__main__":
    raise SystemExit(main())
