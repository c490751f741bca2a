// Checks run in the browser before an edit is applied: the same rules the server enforces, worded with names
// and the grower's units. Layout cautions (touching fixtures, walls, shelves) come from the server.

import * as Units from "../lib/units.js";
import { halfExtent } from "./state.js";

const EDGE_TOLERANCE_M = 0.001;        // the room file's own tolerance at the walls
const MIN_ABOVE_CANOPY_M = 0.01;       // a fixture hangs at least 1 cm above the canopy it is over
const MAX_GRID_POINTS = 5_000_000;     // app/room/limits.py

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

