"""Command line: ``leafcast serve``, ``check FILE``, ``report FILE``, ``export FILE --dxf DIR``."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from app import __version__
from app.room.roomfile import RoomFileError, parse_room_file


def _serve(args) -> int:
    import uvicorn

    from app.settings import Settings, default_data_dir
    from app.web import create_app

    settings = Settings(
        data_dir=Path(args.data_dir) if args.data_dir else default_data_dir(),
        host=args.host,
        port=args.port,
        seed_samples=not args.no_samples,
        max_analysis_s=args.max_analysis_s,
        analysis_workers=args.analysis_workers,
    )
    app = create_app(settings)
    print(f"Leafcast {__version__}: rooms in {settings.data_dir}")
    for room_id in app.state.restored:
        print(f"Room '{room_id}' had no file after a crash: restored from its previous revision.")
    print(f"Open http://{args.host}:{args.port}/ in a browser (Ctrl+C stops).", flush=True)
    uvicorn.run(app, host=args.host, port=args.port, log_level="warning")
    return 0


def _positive_seconds(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = float("nan")
    if not 0 < value <= 3600:
        raise argparse.ArgumentTypeError(f"'{text}' is not a number of seconds between 0 and 3600")
    return value


def _load(path: str):
    p = Path(path)
    if not p.is_file():
        raise RoomFileError([], kind="missing")
    return parse_room_file(p.read_bytes(), strict_text=False)  # files saved before the name rule still open


def _check(args) -> int:
    try:
        rf = _load(args.file)
    except RoomFileError as exc:
        if exc.kind == "missing":
            print(f"{args.file}: no such file", file=sys.stderr)
            return 2
        print(f"{args.file}: not a valid room file ({exc.kind}):", file=sys.stderr)
        for p in exc.problems:
            print(f"  {p.field}: {p.message}", file=sys.stderr)
        return 1
    r = rf.room
    print(f"{args.file}: ok: '{r.name}', {len(r.zones)} zone(s), {len(r.fixtures)} fixture(s), revision {rf.revision}")
    return 0


def _fmt(v, digits=1):
    return "-" if v is None else f"{v:.{digits}f}"


def _report(args) -> int:
    from app.service.analysis import analyse
    from app.service.exports import grid_csv
    from app.service.sheet_data import walls_text

    try:
        rf = _load(args.file)
    except RoomFileError as exc:
        print(
            f"{args.file}: cannot report: " + ("no such file" if exc.kind == "missing" else str(exc)), file=sys.stderr
        )
        return 1
    result = analyse(rf, with_budget=True, include_grids=bool(args.grid_csv) or args.json)
    if args.grid_csv:
        out = Path(args.grid_csv)
        out.mkdir(parents=True, exist_ok=True)
        for z in result["zones"]:
            (out / f"{z['id']}.csv").write_text(grid_csv(z), encoding="utf-8")
    if args.json:
        json.dump(result, sys.stdout, indent=1, allow_nan=False)
        print()
        return 0
    r = rf.room
    print(
        f"{r.name}  ({r.width_m:.2f} x {r.length_m:.2f} m, height {r.height_m:.2f} m; walls: {walls_text(r)})"
    )
    print(f"{len(r.fixtures)} fixture(s), {len(r.zones)} zone(s), revision {rf.revision}\n")
    head = f"{'zone':<18}{'crop':<22}{'h/day':>6}{'PPFD avg':>10}{'min':>7}{'max':>7}{'min/avg':>8}{'DLI avg':>8}{'band':>10}{'in band':>8}{'dark':>7}{'hot':>7}"
    print(head)
    print("-" * len(head))
    for z in result["zones"]:
        t = z["target"]
        print(
            f"{z['id'][:17]:<18}{(z['crop_name'] + ', ' + z['stage'])[:21]:<22}{z['photoperiod_h']:>6g}"
            f"{z['ppfd']['avg']:>10.0f}{z['ppfd']['min']:>7.0f}{z['ppfd']['max']:>7.0f}{z['ppfd']['min_over_avg']:>8.2f}"
            f"{z['dli']['avg']:>8.1f}{t['dli_min']:>5g}-{t['dli_max']:<4g}{z['share_in_band']:>8.0%}"
            f"{z['dark']['share']:>7.0%}{z['hot']['share']:>7.0%}"
        )
    e, h = result["energy"], result["heat"]
    print(
        f"\nPower {e['power_w']:.0f} W; {e['kwh_per_day']:.2f} kWh/day, {e['kwh_per_month']:.0f} kWh/month; "
        f"cost {e['cost_per_month']:.2f} {e['currency']}/month"
    )
    print(
        f"Heat {h['w']:.0f} W = {h['btu_h']:.0f} BTU/h; layout {e['layout_umol_per_j']:.2f} µmol/J; "
        f"{e['canopy_share_of_emitted']:.0%} of photons land on canopy; {e['canopy_mol_per_kwh']:.2f} mol per kWh"
    )
    for c in result["circuits"]:
        print(
            f"Circuit {c['name']}: {c['current_a']:.1f} A of {c['continuous_limit_a']:.1f} A continuous "
            f"({c['breaker_a']:g} A breaker) {'ok' if c['ok'] else 'OVER'}"
        )
    b = result["budget"]
    print(
        f"\nPhoton budget (µmol/s): emitted {b['emitted_umol_s']:.0f}; canopy "
        + ", ".join(f"{k} {v:.0f}" for k, v in b["zones_umol_s"].items())
        + f"; floor {b['floor_umol_s']:.0f}; obstacles {b['obstacles_umol_s']:.0f}; walls {b['walls_absorbed_umol_s']:.0f}; "
        f"escaped {b['escaped_umol_s']:.0f}"
    )
    if result["warnings"]:
        print("\nWarnings:")
        for w in result["warnings"]:
            print(f"  [{w['severity']}] {w['message']}\n      fix: {w['fix']}")
    print("\nCautions:")
    for c in result["cautions"]:
        print(f"  - {c}")
    return 0


def _export(args) -> int:
    from app.service.dxf_export import plan_dxf, tier_count
    from app.web.routes.sheet import dxf_filename

    try:
        rf = _load(args.file)
    except RoomFileError as exc:
        print(f"{args.file}: cannot export: " + ("no such file" if exc.kind == "missing" else str(exc)), file=sys.stderr)
        return 1
    out = Path(args.dxf)
    if out.exists() and not out.is_dir():
        print(f"--dxf {args.dxf}: not a folder", file=sys.stderr)
        return 2
    out.mkdir(parents=True, exist_ok=True)
    for n in range(1, tier_count(rf.room) + 1):
        path = out / dxf_filename(rf.room.name, n)
        tmp = path.with_suffix(".dxf.tmp")
        tmp.write_bytes(plan_dxf(rf.room, n))
        tmp.replace(path)  # atomic: a reader never sees half a file
        print(path)
    return 0


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="leafcast", description="Lay out grow-room lighting.")
    ap.add_argument("--version", action="version", version=f"leafcast {__version__}")
    sub = ap.add_subparsers(dest="command", required=True)
    s = sub.add_parser("serve", help="start the web app")
    s.add_argument("--host", default="127.0.0.1")
    s.add_argument("--port", type=int, default=8000)
    s.add_argument("--data-dir", default=None, help="where rooms are stored (default: the user data folder)")
    s.add_argument("--no-samples", action="store_true", help="do not copy the sample rooms into an empty data folder")
    s.add_argument(
        "--max-analysis-s",
        type=_positive_seconds,
        default=20.0,
        help="time budget of one analysis in seconds: longer ones are refused up front or stopped (default 20)",
    )
    s.add_argument(
        "--analysis-workers",
        type=int,
        choices=range(1, 9),
        default=2,
        metavar="N",
        help="analyses computed at once, 1-8 (default 2); pages and the room list never wait for them",
    )
    s.set_defaults(func=_serve)
    c = sub.add_parser("check", help="validate a room file")
    c.add_argument("file")
    c.set_defaults(func=_check)
    r = sub.add_parser("report", help="print a room's light, energy and circuit figures")
    r.add_argument("file")
    r.add_argument("--json", action="store_true", help="machine-readable output")
    r.add_argument("--grid-csv", metavar="DIR", help="write each zone's PPFD and DLI grid as CSV into DIR")
    r.set_defaults(func=_report)
    x = sub.add_parser("export", help="write the sheet's plan of each tier as DXF for CAD")
    x.add_argument("file")
    x.add_argument("--dxf", metavar="DIR", required=True, help="folder for one DXF per tier (created if missing)")
    x.set_defaults(func=_export)
    args = ap.parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    raise SystemExit(main())
