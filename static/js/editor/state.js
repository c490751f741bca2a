// The editor's state: the working copy of the room file (SI units), the selection and view settings,
// helpers that read the room, and a small event hub the modules use instead of reaching into each other.

export const page = JSON.parse(document.getElementById("page-data").textContent);
export const roomId = page.room_id;
export const $ = (id) => document.getElementById(id);

const UNITS_KEY = "leafcast-units";

export const state = {
  roomId,                          // follows a rename (the old address redirects)
  doc: page.room_file,             // the working copy (SI units)
  savedRevision: page.room_file.revision,
  analysis: page.analysis,
  analysisCurrent: true,           // the analysis shown was computed for the room as it is now
  selection: new Set(),
  units: storedUnits() || page.room_file.room.display_units,
  dirty: false,                    // differs from what the server has
  conflict: false,
  quantity: "ppfd",
  mapZone: page.room_file.room.zones[0] ? page.room_file.room.zones[0].id : null,
  tier: "",
  snap: false, snapStep: 0.0254,
  regions: [],                     // areas drawn to compare (not saved in the room file)
  lockedMax: null,                 // colour range the grower locked, per quantity, or null
  dragging: null,
  timing: [],                      // exact answers: request, since the last move, map painted
  previewFrames: [],               // composed drag previews: paint time, since the pointer moved
  ready: false,
};

function storedUnits() {
  try { const u = localStorage.getItem(UNITS_KEY); return u === "imperial" || u === "metric" ? u : null; } catch (e) { return null; }
}
export function rememberUnits(units) {
  try { localStorage.setItem(UNITS_KEY, units); } catch (e) { /* private mode: the choice lasts for this page */ }
}

// ---------------------------------------------------------------- event hub
const listeners = new Map();
export function on(event, fn) {
  if (!listeners.has(event)) listeners.set(event, []);
  listeners.get(event).push(fn);
}
export function emit(event, ...args) { for (const fn of listeners.get(event) || []) fn(...args); }

// ---------------------------------------------------------------- reading the room
export const room = () => state.doc.room;
export const typeOf = (f) => room().fixture_types.find((t) => t.id === f.type_id);
export const fixture = (id) => room().fixtures.find((f) => f.id === id);
export const zoneById = (id) => room().zones.find((z) => z.id === id);
export const round4 = (v) => Math.round(v * 1e4) / 1e4;

export function nextId(prefix, taken) {
  for (let k = 1; ; k++) if (!taken.has(`${prefix}${k}`)) return `${prefix}${k}`;
}

/** A slug id from a name, unique among taken ids (room-file ids: letters, digits, '-', at most 40). */
export function idFromName(name, taken, fallback) {
  const base = String(name).normalize("NFKD").replace(/[\u0300-\u036f]/g, "").toLowerCase()
    .replace(/[^a-z0-9]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 34) || fallback;
  if (!taken.has(base)) return base;
  return nextId(`${base}-`, taken);
}

/** Half the fixture's extent along x and y once rotated (metres). */
export function halfExtent(f, types) {
  const t = types ? types[f.type_id] : typeOf(f);
  const g = t.geometry, a = f.rotation_deg * Math.PI / 180;
  const c = Math.abs(Math.cos(a)), s = Math.abs(Math.sin(a));
  const L = g.kind === "point" ? 0.06 : g.length_m, W = g.kind === "point" ? 0.06 : g.width_m;
  return [0.5 * (L * c + W * s), 0.5 * (L * s + W * c)];
}

export function clampInside(f, r = room()) {
  const types = Object.fromEntries(r.fixture_types.map((t) => [t.id, t]));
  const [hx, hy] = halfExtent(f, types);
  f.x_m = round4(Math.min(Math.max(f.x_m, hx), Math.max(hx, r.width_m - hx)));
  f.y_m = round4(Math.min(Math.max(f.y_m, hy), Math.max(hy, r.length_m - hy)));
}

/**
 * The zone a fixture lights. The analysis sends the server's own answer (fixture_zones) with each result;
 * while a move is not yet analysed, the nearest zone below the fixture's centre stands in.
 */
export function zoneOf(f) {
  const fz = state.analysis && state.analysis.fixture_zones;
  if (fz && state.analysisCurrent && Object.prototype.hasOwnProperty.call(fz, f.id)) {
    return fz[f.id] === null ? null : zoneById(fz[f.id]) || null;
  }
  const below = room().zones.filter((z) => z.canopy_height_m < f.hanging_height_m && f.x_m >= z.x_m &&
    f.x_m <= z.x_m + z.width_m && f.y_m >= z.y_m && f.y_m <= z.y_m + z.length_m);
  return below.sort((a, b) => b.canopy_height_m - a.canopy_height_m)[0] || null;
}

/** Zones ordered from the lowest canopy up (stacked tiers read bottom to top). */
export function zonesBottomUp() {
  return [...room().zones].sort((a, b) => a.canopy_height_m - b.canopy_height_m);
}

/** Do zones overlap on the plan (a stacked rack)? */
export function stacked(zs = room().zones) {
  return zs.some((a, i) => zs.some((b, j) => j > i && a.x_m < b.x_m + b.width_m && b.x_m < a.x_m + a.width_m
    && a.y_m < b.y_m + b.length_m && b.y_m < a.y_m + a.length_m));
}
