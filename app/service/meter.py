"""Model against meter: the room's readings beside the model, the fitted output factor, and applying it.

The model is the one the room's figures show (each fixture type at its output at
the shown age, :mod:`app.service.maintained`), with every fixture at the dimming
recorded with the readings. It is evaluated at the reading points by bilinear
interpolation of the zone's PPFD map (the room's grid, 1 inch by default; the
error this adds is measured in tests/test_meter.py). Lux readings are converted
with the set's lux-per-µmol factor (Thimijan & Heins 1983).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from app.engine import readings as rd
from app.engine.compute import compute_scene
from app.engine.scene import Grid
from app.room.models import FixtureType, ReadingSet, Room, RoomFile
from app.service.scene_builder import build_scene

MAX_APPLIED_FACTOR = 3.0  # a fitted factor beyond 1/3-3 × is a setup error, not a fixture's output
PPF_LIMIT_UMOL_S = 20000.0  # the model's own upper bound on a fixture type's PPF


class MeterError(ValueError):
    """The readings cannot be compared or fitted; ``field`` names what to fix."""

    def __init__(self, field: str, message: str) -> None:
        self.field = field
        super().__init__(message)


def reading_set(room: Room, set_id: str) -> ReadingSet:
    for r in room.readings:
        if r.id == set_id:
            return r
    raise MeterError(
        "reading_set_id", f"no reading set '{set_id}' in this room; it has {[r.id for r in room.readings]}"
    )


def reading_points(rs: ReadingSet) -> dict[str, np.ndarray]:
    """Positions [m], raw meter values, PPFD [µmol m⁻² s⁻¹] and grid row/column (-1 for points)."""
    if rs.grid is not None:
        g = rs.grid
        rows, cols, raw = [], [], []
        for r, line in enumerate(g.values):
            for c, v in enumerate(line):
                if v is not None:
                    rows.append(r)
                    cols.append(c)
                    raw.append(v)
        row, col = np.array(rows, int), np.array(cols, int)
        x = g.origin_x_m + col * g.spacing_x_m
        y = g.origin_y_m + row * g.spacing_y_m
        values = np.array(raw, float)
    else:
        x = np.array([p.x_m for p in rs.points], float)
        y = np.array([p.y_m for p in rs.points], float)
        values = np.array([p.value for p in rs.points], float)
        row = col = np.full(x.size, -1)
    ppfd = rd.lux_to_ppfd(values, rs.lux_per_ppfd) if rs.sensor == "lux" else values
    return {"x_m": x, "y_m": y, "raw": values, "ppfd": ppfd, "row": row, "col": col}


def bilinear(grid: Grid, values: np.ndarray, x_m: np.ndarray, y_m: np.ndarray) -> np.ndarray:
    """Values of a grid map at points, bilinear inside, held at the edge value in the margin outside the points."""
    xs, ys = grid.x_m, grid.y_m

    def weights(axis: np.ndarray, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if axis.size == 1:
            return np.zeros(p.size, int), np.zeros(p.size)
        i = np.clip(np.searchsorted(axis, p) - 1, 0, axis.size - 2)
        t = np.clip((p - axis[i]) / (axis[i + 1] - axis[i]), 0.0, 1.0)
        return i, t

    i, tx = weights(xs, np.asarray(x_m, float))
    j, ty = weights(ys, np.asarray(y_m, float))
    v = np.asarray(values, float)
    i1 = np.minimum(i + 1, xs.size - 1)
    j1 = np.minimum(j + 1, ys.size - 1)
    return v[j, i] * (1 - tx) * (1 - ty) + v[j, i1] * tx * (1 - ty) + v[j1, i] * (1 - tx) * ty + v[j1, i1] * tx * ty


def model_columns(room: Room, rs: ReadingSet, pts: dict[str, np.ndarray]) -> tuple[np.ndarray, list[FixtureType]]:
    """(n, p) model PPFD at the reading points, one column per fixture type that is on in the room."""
    scene = build_scene(room, dimming_pct=rs.dimming_pct)
    zone_index = next(k for k, z in enumerate(room.zones) if z.id == rs.zone_id)
    type_of = {f.id: f.type_id for f in room.fixtures}
    used = [t for t in room.fixture_types if any(type_of[e.id] == t.id for e in scene.emitters)]
    cols = []
    for t in used:
        mine = tuple(e for e in scene.emitters if type_of[e.id] == t.id)
        zl = compute_scene(mine, scene.grids, scene.enclosure, scene.boxes)[zone_index]
        cols.append(bilinear(zl.grid, zl.ppfd, pts["x_m"], pts["y_m"]))
    a = np.column_stack(cols) if cols else np.zeros((pts["x_m"].size, 0))
    return a, used


def zone_light(room_file: RoomFile, zone_id: str):
    """The zone's computed light (direct and reflected) as the room's figures show it."""
    room = room_file.room
    scene = build_scene(room)
    k = next(i for i, z in enumerate(room.zones) if z.id == zone_id)
    return compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes)[k]


def compare(room_file: RoomFile, set_id: str, fit: str = "room", outlier_factor: float = rd.OUTLIER_FACTOR) -> dict:
    """Readings against the model: residuals, RMS, worst point, outliers and the fitted factor(s).

    fit : 'room' (one factor for every fixture) or 'type' (one per fixture type).
    Outliers are left out of the fit and said so.
    """
    room = room_file.room
    rs = reading_set(room, set_id)
    pts = reading_points(rs)
    a, types = model_columns(room, rs, pts)
    if not types:
        raise MeterError("room.fixtures", "no fixture is on in this room, so there is no model to compare with")
    model = a.sum(axis=1)
    res = rd.residual_figures(pts["ppfd"], model)
    flags = rd.outliers(pts["x_m"], pts["y_m"], pts["ppfd"], model, outlier_factor)
    keep = ~flags
    fit_out: dict[str, Any] = {"kind": fit, "used_points": int(keep.sum()), "left_out": int(flags.sum())}
    try:
        if fit == "type":
            # Types that give no light at any reading cannot be fitted here: they are left as they are.
            lit = [j for j in range(len(types)) if np.any(a[:, j] > 0)]
            types = [types[j] for j in lit]
            names = [f"fixture type '{t.name}'" for t in types]
            f = rd.fit_output_factors(a[keep][:, lit], pts["ppfd"][keep], names=names)
            ids = [t.id for t in types]
        else:
            f = rd.fit_output_factors(model[keep], pts["ppfd"][keep], names=["the room's fixtures"])
            ids = [t.id for t in types]
        se = f.std_errors
        fit_out["factors"] = [
            {
                "type_ids": [ids[j]] if fit == "type" else ids,
                "label": types[j].name if fit == "type" else "all fixtures",
                "factor": float(k),
                "std_error": None if se is None else float(se[j]),
            }
            for j, k in enumerate(f.factors)
        ]
        fit_out["residual_rms_umol"] = f.residual_rms
        fit_out["dof"] = f.dof
        fit_out["error"] = None
    except rd.FitError as exc:
        fit_out.update(factors=[], error=str(exc))
    worst = res["worst_index"]
    return {
        "reading_set": rs.model_dump(mode="json"),
        "zone_id": rs.zone_id,
        "points": [
            {
                "x_m": float(pts["x_m"][i]),
                "y_m": float(pts["y_m"][i]),
                "row": int(pts["row"][i]),
                "col": int(pts["col"][i]),
                "raw": float(pts["raw"][i]),
                "measured": float(pts["ppfd"][i]),
                "model": float(model[i]),
                "diff_umol": float(res["diff_umol"][i]),
                "diff_pct": None if not np.isfinite(res["diff_pct"][i]) else float(res["diff_pct"][i]),
                "outlier": bool(flags[i]),
            }
            for i in range(model.size)
        ],
        "rms_umol": res["rms_umol"],
        "rms_pct": None if not np.isfinite(res["rms_pct"]) else res["rms_pct"],
        "mean_pct": None if not np.isfinite(res["mean_pct"]) else res["mean_pct"],
        "measured_avg": float(np.mean(pts["ppfd"])) if model.size else 0.0,
        "model_avg": float(np.mean(model)) if model.size else 0.0,
        "worst_index": worst,
        "outlier_factor": outlier_factor,
        "fit": fit_out,
    }


def apply_factors(room_file: RoomFile, set_id: str, fit: str = "room") -> tuple[RoomFile, list[dict]]:
    """The room file with each fitted fixture type's PPF scaled by its factor (its measured output).

    Refuses a failed fit and a factor outside 1/3-3 (a wrong sensor, zone or dimming, not an output).
    """
    result = compare(room_file, set_id, fit)
    if result["fit"]["error"]:
        raise MeterError("fit", result["fit"]["error"])
    rs = reading_set(room_file.room, set_id)
    by_type: dict[str, dict] = {}
    for f in result["fit"]["factors"]:
        k = f["factor"]
        if not 1 / MAX_APPLIED_FACTOR <= k <= MAX_APPLIED_FACTOR:
            raise MeterError(
                "fit",
                f"the fitted factor {k:.2f} for {f['label']} is outside 1/{MAX_APPLIED_FACTOR:g}-{MAX_APPLIED_FACTOR:g}: "
                "check the sensor kind, the lux factor, the zone and the dimming before applying it",
            )
        for tid in f["type_ids"]:
            by_type[tid] = f
    changed, types = [], []
    for t in room_file.room.fixture_types:
        f = by_type.get(t.id)
        if f is None:
            types.append(t)
            continue
        new_ppf = min(t.ppf_umol_s * f["factor"], PPF_LIMIT_UMOL_S)
        se = f"± {f['std_error']:.3f} " if f["std_error"] is not None else ""
        note = f"PPF scaled by {f['factor']:.3f} {se}from readings '{rs.id}' ({rs.taken_on.isoformat()})."
        notes = (t.notes + " " + note).strip()[-1000:]
        types.append(t.model_copy(update={"ppf_umol_s": new_ppf, "notes": notes}))
        changed.append({"type_id": t.id, "old_ppf_umol_s": t.ppf_umol_s, "new_ppf_umol_s": new_ppf, **f})
    room = room_file.room.model_copy(update={"fixture_types": types})
    return room_file.model_copy(update={"room": room}), changed


SHEET_MAX_POINTS = 48  # a sheet lists at most this many readings per set (it must fit one or two pages)


def sheet_summary(room_file: RoomFile) -> list[dict[str, Any]]:
    """Each reading set beside the model, compact enough for the layout sheet."""
    out = []
    for rs in room_file.room.readings:
        row: dict[str, Any] = {"id": rs.id, "zone_id": rs.zone_id, "taken_on": rs.taken_on.isoformat()}
        row.update(sensor=rs.sensor, lux_per_ppfd=rs.lux_per_ppfd, dimming_pct=rs.dimming_pct)
        try:
            c = compare(room_file, rs.id)
        except MeterError as exc:
            row["error"] = str(exc)
            out.append(row)
            continue
        row.update(error=None, rms_umol=c["rms_umol"], rms_pct=c["rms_pct"], mean_pct=c["mean_pct"])
        row["factor"] = c["fit"]["factors"][0] if c["fit"]["factors"] else None
        row["outliers"] = sum(p["outlier"] for p in c["points"])
        row["points"] = c["points"][:SHEET_MAX_POINTS]
        row["points_left_out"] = max(0, len(c["points"]) - SHEET_MAX_POINTS)
        out.append(row)
    return out
