// The drag preview, composed in the browser: the last exact map, minus each moved fixture's own direct light at
// its old place, plus the same light at its new place (shifted by whole grid cells). The server sends that light
// once per fixture type, height above the canopy and turn (POST /api/footprints); the exact answer replaces the
// preview on drop. Painted at most once per display frame.

import * as Units from "../lib/units.js";
import { request, isAbort } from "../lib/api.js";
import { state, fixture, zoneOf } from "./state.js";
import { paintPreview, currentRange } from "./map.js";
import { DLI_PER_PPFD_HOUR } from "./scale.js";

const stamps = new Map();      // key -> {r, n, values: Float64Array (n × n, at 100 %)}
let drag = null;               // what the preview is composed from, set when a drag starts
let frame = 0;

function keyOf(f, zone) {
  return `${f.type_id}|${(f.hanging_height_m - zone.canopy_height_m).toFixed(4)}|${f.rotation_deg}|${f.tilt_deg || 0}|${f.tilt_deg ? f.aim_deg || 0 : 0}`;
}

/** Ask the server for the footprints of these fixtures that are not at hand yet (ahead of a drag). */
export async function prefetch(ids) {
  const missing = [...ids].map(fixture).filter((f) => f && f.on && zoneOf(f) && !stamps.has(keyOf(f, zoneOf(f))));
  if (!missing.length) return;
  const q = new URLSearchParams();
  for (const f of missing) q.append("fixture", f.id);
  try {
    const res = await request(`/api/footprints?${q}`, { method: "POST", body: state.doc, key: "footprints" });
    if (!res.ok) return;
    for (const fp of res.body) {
      if (!fp.ppfd || fp.above_canopy_m === null) continue;
      const f = fixture(fp.fixture_id), zone = f && zoneOf(f);
      if (!zone || zone.id !== fp.zone_id) continue;
      const n = 2 * fp.radius_cells + 1;
      stamps.set(`${fp.type_id}|${fp.above_canopy_m.toFixed(4)}|${fp.rotation_deg}|${fp.tilt_deg || 0}|${fp.tilt_deg ? fp.aim_deg || 0 : 0}`, { r: fp.radius_cells, n, values: Float64Array.from(fp.ppfd.flat()) });
    }
  } catch (err) {
    if (!isAbort(err)) { /* no preview then: the map follows the server's answers */ }
  }
}

/** Remember the exact map the preview starts from; called when a drag begins. */
export function startPreview(ids) {
  drag = null;
  const a = state.analysis, zone = a && state.analysisCurrent && a.zones.find((z) => z.id === state.mapZone);
  if (!zone || !zone.grid || zone.grid.x_m.length < 2 || zone.grid.y_m.length < 2) return;
  const xs = zone.grid.x_m, ys = zone.grid.y_m, nx = xs.length, ny = ys.length;
  const base = new Float64Array(nx * ny);
  zone.grid.ppfd.forEach((row, j) => base.set(row, j * nx));
  const moved = [...ids].map(fixture).filter((f) => f && f.on && zoneOf(f) && zoneOf(f).id === zone.id)
    .map((f) => ({ id: f.id, key: keyOf(f, zoneOf(f)), x0: f.x_m, y0: f.y_m, scale: f.dimming_pct / 100 }));
  drag = { zone, xs, ys, nx, ny, base, moved, s: (xs[xs.length - 1] - xs[0]) / (nx - 1),
           work: new Float64Array(nx * ny), rows: null };
  drag.rows = Array.from({ length: ny }, (_, j) => drag.work.subarray(j * nx, (j + 1) * nx));
}

function addStamp(out, st, x_m, y_m, factor) {
  const { xs, ys, nx, ny, s } = drag;
  const ic = Math.round((x_m - xs[0]) / s), jc = Math.round((y_m - ys[0]) / s);
  const i0 = Math.max(0, ic - st.r), i1 = Math.min(nx, ic + st.r + 1), j0 = Math.max(0, jc - st.r), j1 = Math.min(ny, jc + st.r + 1);
  for (let j = j0; j < j1; j++) {
    const srow = (j - jc + st.r) * st.n - ic + st.r, orow = j * nx;
    for (let i = i0; i < i1; i++) out[orow + i] += factor * st.values[srow + i];
  }
}

function compose() {
  const out = drag.work;
  out.set(drag.base);
  for (const m of drag.moved) {
    const f = fixture(m.id), st = stamps.get(m.key);
    addStamp(out, st, m.x0, m.y0, -m.scale);
    addStamp(out, st, f.x_m, f.y_m, m.scale);
  }
  // Light cannot go below zero; a tiny negative left by the half-cell shift is clipped.
  const k = state.quantity === "ppfd" ? 1 : drag.zone.photoperiod_h * DLI_PER_PPFD_HOUR;
  let sum = 0;
  for (let i = 0; i < out.length; i++) { out[i] = Math.max(out[i], 0) * k; sum += out[i]; }
  state.previewMean = sum / out.length;   // for the tests: the preview's mean against the exact answer's
  return drag.rows;
}

/** Paint the preview for the fixtures' present places; false when it cannot be composed (no footprints yet). */
export function previewDrag() {
  if (!drag || drag.zone.id !== state.mapZone || !drag.moved.length || !drag.moved.every((m) => stamps.has(m.key))) return false;
  const movedAt = performance.now();
  if (!frame) {
    frame = requestAnimationFrame(() => {
      frame = 0;
      if (!drag) return;
      const t0 = performance.now();
      const u = state.units;
      const painted = paintPreview(drag.xs.map((v) => Units.axisValue(v, u)), drag.ys.map((v) => Units.axisValue(v, u)), compose(), currentRange());
      if (painted) state.previewFrames.push({ paint_ms: performance.now() - t0, since_move_ms: performance.now() - movedAt });
    });
  }
  return true;
}

export function endPreview() {
  drag = null;
  if (frame) { cancelAnimationFrame(frame); frame = 0; }
}
