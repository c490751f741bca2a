// Checks run in the browser before an edit is applied (the same rules the server enforces, worded with names
// and the grower's units), and layout cautions the server does not give: fixtures touching or overlapping.

import * as Units from "../lib/units.js";
import { halfExtent } from "./state.js";

const EDGE_TOLERANCE_M = 0.001;        // the room file's own tolerance at the walls
const MIN_ABOVE_CANOPY_M = 0.01;       // a fixture hangs at least 1 cm above the canopy it is over
const MAX_GRID_POINTS = 5_000_000;     // app/room/limits.py
const TOUCH_GAP_M = 0.005;             // closer than 5 mm counts as touching
const SAME_LEVEL_M = 0.05;             // fixtures within 5 cm of height can collide

/** Every reason the room cannot be saved, each as {message}: names, not ids; lengths in the chosen units. */
export function roomProblems(r, units) {
  const L = (m) => Units.length(m, units, { fine: true });
  const out = [];
  const size = `${L(r.width_m)} × ${L(r.length_m)}`;
  for (const [key, label] of [["width_m", "width"], ["length_m", "length"], ["height_m", "ceiling height"]]) {
    if (!(r[key] > 0)) out.push(`the room's ${label} must be more than zero`);
  }
  for (const z of r.zones) {
    if (!(z.width_m > 0 && z.length_m > 0)) out.push(`${z.name} needs a width and a length above zero`);
    if (z.x_m < -EDGE_TOLERANCE_M || z.y_m < -EDGE_TOLERANCE_M || z.x_m + z.width_m > r.width_m + EDGE_TOLERANCE_M ||
        z.y_m + z.length_m > r.length_m + EDGE_TOLERANCE_M) {
      out.push(`${z.name} (${L(z.width_m)} × ${L(z.length_m)} from ${L(z.x_m)}, ${L(z.y_m)}) would reach outside the room (${size})`);
    }
    if (z.canopy_height_m >= r.height_m) out.push(`the canopy of ${z.name} (${L(z.canopy_height_m)}) must be below the ceiling (${L(r.height_m)})`);
  }
  for (const o of r.obstacles) {
    if (o.x_m + o.width_m > r.width_m + EDGE_TOLERANCE_M || o.y_m + o.length_m > r.length_m + EDGE_TOLERANCE_M ||
        o.z_m + o.height_m > r.height_m + EDGE_TOLERANCE_M) out.push(`${o.name} would reach outside the room`);
  }
  const types = Object.fromEntries(r.fixture_types.map((t) => [t.id, t]));
  for (const f of r.fixtures) {
    if (!types[f.type_id]) { out.push(`fixture ${f.id} has no fixture type`); continue; }
    const [hx, hy] = halfExtent(f, types);
    if (f.x_m - hx < -EDGE_TOLERANCE_M || f.x_m + hx > r.width_m + EDGE_TOLERANCE_M || f.y_m - hy < -EDGE_TOLERANCE_M ||
        f.y_m + hy > r.length_m + EDGE_TOLERANCE_M) out.push(`fixture ${f.id} would reach beyond the walls`);
    if (!(f.hanging_height_m > 0)) out.push(`fixture ${f.id}'s hanging height must be above the floor (more than zero)`);
    if (f.hanging_height_m > r.height_m + EDGE_TOLERANCE_M) out.push(`fixture ${f.id} (${L(f.hanging_height_m)}) would hang above the ceiling (${L(r.height_m)})`);
    for (const z of r.zones) {
      const over = z.x_m <= f.x_m && f.x_m <= z.x_m + z.width_m && z.y_m <= f.y_m && f.y_m <= z.y_m + z.length_m;
      if (over && Math.abs(f.hanging_height_m - z.canopy_height_m) < MIN_ABOVE_CANOPY_M) {
        out.push(`fixture ${f.id} would be less than ${L(MIN_ABOVE_CANOPY_M)} from the canopy of ${z.name}`);
      }
    }
    for (const o of r.obstacles) {
      if (o.x_m < f.x_m && f.x_m < o.x_m + o.width_m && o.y_m < f.y_m && f.y_m < o.y_m + o.length_m &&
          o.z_m < f.hanging_height_m && f.hanging_height_m < o.z_m + o.height_m) out.push(`fixture ${f.id} would be inside ${o.name}`);
    }
  }
  const points = r.zones.reduce((n, z) => n + (Math.floor(z.width_m / r.grid_spacing_m) + 1) * (Math.floor(z.length_m / r.grid_spacing_m) + 1), 0);
  if (points > MAX_GRID_POINTS) out.push(`the map would have ${points.toLocaleString("en")} points (limit ${MAX_GRID_POINTS.toLocaleString("en")}): use a coarser map spacing`);
  return out;
}

function box(f, types) {
  const [hx, hy] = halfExtent(f, types);
  return { x0: f.x_m - hx, x1: f.x_m + hx, y0: f.y_m - hy, y1: f.y_m + hy };
}
function gap(a, b) {  // separation of two boxes on the plan, negative when they overlap
  return Math.max(a.x0 - b.x1, b.x0 - a.x1, a.y0 - b.y1, b.y0 - a.y1);
}

/** Cautions about the layout, as warnings: {severity, message, fix, fixture_id, where}. */
export function layoutCautions(r, units) {
  const types = Object.fromEntries(r.fixture_types.map((t) => [t.id, t]));
  const fx = r.fixtures.filter((f) => types[f.type_id]);
  const out = [];
  for (let i = 0; i < fx.length; i++) {
    const a = fx[i], ba = box(a, types);
    for (let j = i + 1; j < fx.length; j++) {
      const b = fx[j];
      if (Math.abs(a.hanging_height_m - b.hanging_height_m) > SAME_LEVEL_M) continue;
      const g = gap(ba, box(b, types));
      if (g < TOUCH_GAP_M) {
        out.push({ severity: "warning", source: "layout", fixture_id: b.id,
          message: `Fixtures ${a.id} and ${b.id} ${g < 0 ? "overlap" : "touch"} at the same height.`,
          fix: "Move one of them apart: fixtures cannot share the same space, and drivers need air around them.",
          where: [Math.min(ba.x0, a.x_m), Math.min(ba.y0, a.y_m), Math.max(ba.x1, b.x_m), Math.max(ba.y1, b.y_m)] });
      }
    }
    const wall = Math.min(ba.x0, ba.y0, r.width_m - ba.x1, r.length_m - ba.y1);
    if (wall < TOUCH_GAP_M && !r.open_sides.length) {
      out.push({ severity: "info", source: "layout", fixture_id: a.id,
        message: `Fixture ${a.id} touches a wall (closer than ${Units.length(TOUCH_GAP_M, units, { fine: true })}).`,
        fix: "Leave a gap for air and for hanging hardware; check the fixture's instructions for clearances.",
        where: [ba.x0, ba.y0, ba.x1, ba.y1] });
    }
    for (const o of r.obstacles) {
      const ob = { x0: o.x_m, x1: o.x_m + o.width_m, y0: o.y_m, y1: o.y_m + o.length_m };
      const vertical = Math.max(o.z_m - a.hanging_height_m, a.hanging_height_m - (o.z_m + o.height_m));
      if (gap(ba, ob) < 0 && vertical < TOUCH_GAP_M) {
        out.push({ severity: "warning", source: "layout", fixture_id: a.id,
          message: `Fixture ${a.id} touches ${o.name} (${Units.length(Math.max(vertical, 0), units, { fine: true })} apart).`,
          fix: "Hang it lower or move it: a fixture needs air around its driver and must not rest on a shelf.",
          where: [ba.x0, ba.y0, ba.x1, ba.y1] });
      }
    }
  }
  return out;
}
