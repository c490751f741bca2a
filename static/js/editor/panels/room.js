// The room tab: size, walls (one finish, or each its own: surfaces.js), map spacing, the room's own units,
// schedule, hanging grid and circuits.
// Resizing the room carries the first canopy zone (and any zone or shelf laid out like it) with it.

import * as Units from "../../lib/units.js";
import { escapeHtml } from "../../lib/format.js";
import { $, page, state, room, round4 } from "../state.js";
import { rename } from "../autosave.js";
import { setIfIdle, tryCommit, lengthOf, numberOf, showFieldError, clearFieldError } from "../fields.js";
import { renderSurfaces, wireSurfaces } from "./surfaces.js";

const SAME_M = 0.01;            // edges within 1 cm are "the same"
const MIN_ZONE_M = 0.05;

/**
 * Resize the room along one axis and carry what was laid out against the far wall: the first zone and every
 * zone or obstacle with the same extent keep their margins; anything else that would poke out is trimmed.
 */
export function resizeRoom(r, key, value) {
  const [pos, len] = key === "width_m" ? ["x_m", "width_m"] : ["y_m", "length_m"];
  const old = r[key];
  r[key] = round4(value);
  if (key === "height_m") return;
  const first = r.zones[0];
  const like = (b) => first && Math.abs(b[pos] - first[pos]) < SAME_M && Math.abs(b[len] - first[len]) < SAME_M;
  for (const b of [...r.zones, ...r.obstacles]) {
    const far = old - (b[pos] + b[len]);
    if (b === first || like(b) || (Math.abs(b[pos]) < SAME_M && Math.abs(far) < SAME_M)) {
      b[len] = round4(Math.max(MIN_ZONE_M, value - b[pos] - Math.max(far, 0)));
    }
    if (b[pos] + b[len] > value) b[len] = round4(Math.max(MIN_ZONE_M, value - b[pos]));
  }
}

export function renderRoomPanel() {
  const r = room(), u = state.units;
  for (const input of document.querySelectorAll("[data-room-length]")) setIfIdle(input, Units.lengthInput(r[input.dataset.roomLength], u));
  const key = Object.entries(page.wall_finishes).find(([, v]) => v.kind === r.wall_finish.kind && v.reflectance === r.wall_finish.reflectance);
  $("r-finish").value = key ? key[0] : "";
  setIfIdle($("r-refl"), r.wall_finish.reflectance);
  for (const b of document.querySelectorAll("#r-open input")) b.checked = r.open_sides.includes(b.value);
  renderSurfaces();
  for (const input of document.querySelectorAll("[data-schedule]")) setIfIdle(input, r.schedule[input.dataset.schedule]);
  setIfIdle($("s-cur"), r.schedule.currency);
  setIfIdle($("room-name"), r.name);
  $("r-units").value = r.display_units;
  setIfIdle($("snap-step"), Units.lengthInput(state.snapStep, u));
  for (const el of document.querySelectorAll("[data-unit]")) el.textContent = `(${Units.inputUnit(u)})`;
  const g = r.hanging_grid;
  if (g) gridDraft = {};
  for (const input of document.querySelectorAll("[data-hanging]")) {
    const v = g ? g[input.dataset.hanging] : null;
    setIfIdle(input, g ? (v === null || v === undefined ? "" : Units.lengthInput(v, u)) : (gridDraft[input.dataset.hanging] || ""));
  }
}

let gridDraft = {}; // boxes typed before the grid has a pitch (nothing to save yet)

/** The hanging grid from its four boxes: null (no grid) when both pitches are blank, else the field. */
function hangingGridFromBoxes(current) {
  const out = {};
  for (const input of document.querySelectorAll("[data-hanging]")) {
    const key = input.dataset.hanging;
    if (!input.value.trim()) { clearFieldError(input); out[key] = key.startsWith("pitch") ? null : 0; continue; }
    const m = lengthOf(input, { positive: key.startsWith("pitch") });
    if (m === null) return undefined;
    clearFieldError(input);
    out[key] = round4(m);
  }
  if (out.pitch_x_m === null && out.pitch_y_m === null) return null;
  return Object.assign({ label: (current && current.label) || "" }, out);
}

export function renderCircuits() {
  const host = $("circuits");
  if (host.contains(document.activeElement)) return;
  host.innerHTML = "";
  room().circuits.forEach((c, idx) => {
    const row = document.createElement("div"); row.className = "field-grid";
    row.innerHTML = `<label for="c${idx}-name">Circuit name</label><input id="c${idx}-name" value="${escapeHtml(c.name)}">` +
      `<label for="c${idx}-a">Breaker (A)</label><input id="c${idx}-a" type="number" min="1" max="400" value="${c.breaker_a}">`;
    row.querySelector(`#c${idx}-name`).addEventListener("change", (ev) => {
      const v = ev.target.value.trim();
      if (!v || room().circuits.some((o, k) => k !== idx && o.name === v)) return showFieldError(ev.target, "circuit names must be unique and not empty");
      tryCommit(ev.target, (rr) => { const old = rr.circuits[idx].name; rr.circuits[idx].name = v; for (const f of rr.fixtures) if (f.circuit === old) f.circuit = v; });
    });
    row.querySelector(`#c${idx}-a`).addEventListener("change", (ev) => {
      const v = numberOf(ev.target, 1, 400, "the breaker rating (A)");
      if (v !== null) tryCommit(ev.target, (rr) => { rr.circuits[idx].breaker_a = v; });
    });
    host.appendChild(row);
  });
}

export function wireRoomPanel() {
  $("room-name").addEventListener("change", () => {
    const v = $("room-name").value.trim();
    if (!v) return showFieldError($("room-name"), "a room needs a name");
    clearFieldError($("room-name"));
    if (v !== room().name) rename(v.slice(0, 120));
  });
  for (const input of document.querySelectorAll("[data-room-length]")) {
    input.addEventListener("change", () => {
      const m = lengthOf(input, { positive: true });
      if (m === null) return;
      const key = input.dataset.roomLength;
      tryCommit(input, (r) => { if (key === "grid_spacing_m") r.grid_spacing_m = round4(m); else resizeRoom(r, key, m); });
    });
  }
  $("r-finish").innerHTML = Object.entries(page.wall_finishes).map(([k, v]) => `<option value="${k}">${escapeHtml(v.label)} (${v.kind}, ${v.reflectance})</option>`).join("");
  $("r-finish").addEventListener("change", () => tryCommit($("r-finish"), (r) => { r.wall_finish = Object.assign({}, page.wall_finishes[$("r-finish").value]); }));
  $("r-refl").addEventListener("change", () => {
    const v = numberOf($("r-refl"), 0, 1, "reflectance");
    if (v !== null) tryCommit($("r-refl"), (r) => { r.wall_finish = Object.assign({}, r.wall_finish, { reflectance: v, label: "Custom" }); });
  });
  wireSurfaces();
  for (const box of document.querySelectorAll("#r-open input")) {
    box.addEventListener("change", () => tryCommit(box, (r) => {
      r.open_sides = [...document.querySelectorAll("#r-open input")].filter((b) => b.checked).map((b) => b.value);
    }));
  }
  const scheduleRange = { photoperiod_h: [0.25, 24, "the photoperiod (h)"], supply_voltage_v: [1, 1000, "the supply voltage (V)"],
                          electricity_price_per_kwh: [0, 100, "the price per kWh"] };
  for (const input of document.querySelectorAll("[data-schedule]")) {
    input.addEventListener("change", () => {
      const key = input.dataset.schedule, [lo, hi, what] = scheduleRange[key];
      const v = numberOf(input, lo, hi, what);
      if (v !== null) tryCommit(input, (r) => { r.schedule[key] = v; });
    });
  }
  for (const input of document.querySelectorAll("[data-hanging]")) {
    input.addEventListener("change", () => {
      gridDraft[input.dataset.hanging] = input.value;
      const grid = hangingGridFromBoxes(room().hanging_grid);
      if (grid === undefined || (grid === null && !room().hanging_grid)) return;
      tryCommit(input, (r) => { r.hanging_grid = grid; });
    });
  }
  $("s-cur").addEventListener("change", () => tryCommit($("s-cur"), (r) => { r.schedule.currency = $("s-cur").value.trim().slice(0, 8) || "USD"; }));
  $("r-units").addEventListener("change", () => tryCommit($("r-units"), (r) => { r.display_units = $("r-units").value; }));
  $("add-circuit").addEventListener("click", () => {
    tryCommit($("add-circuit"), (r) => { const taken = new Set(r.circuits.map((c) => c.name)); let k = 0, n; do { n = String.fromCharCode(65 + k++); } while (taken.has(n)); r.circuits.push({ name: n, breaker_a: 15 }); });
    clearFieldError($("add-circuit"));
  });
}
