// The new-room dialog: name, size, ceiling, units, crop and stage, and the fixture to start with (or none).
// Every box is checked where it stands; the room is created only when all of them make sense together.

import * as Units from "../lib/units.js";
import { escapeHtml, stagesInOrder, stageLabel } from "../lib/format.js";
import { request, problemsText } from "../lib/api.js";
import { showFieldError, clearAllFieldErrors } from "../lib/fieldmsg.js";

const $ = (id) => document.getElementById(id);
const MAX_SIDE_M = 300, MAX_HEIGHT_M = 30;               // app/room/limits.py
const ABOVE_CANOPY_M = 0.45;                             // a first hanging height (common practice, no source)
const CEILING_GAP_M = 0.05;                              // room for the hanger above a fixture
const DEFAULT_GRID_M = 0.0254;                           // one map point per inch
const LARGE_ROOM_GRID_M = 0.05;                          // coarser for big rooms, so the map stays quick

function units() { return document.querySelector("input[name=nr-units]:checked").value; }

function fillStages(crops) {
  const crop = crops.find((c) => c.id === $("nr-crop").value);
  const keep = $("nr-stage").value;
  $("nr-stage").innerHTML = stagesInOrder(Object.fromEntries(crop.stages.map((s) => [s, 1])))
    .map((s) => `<option value="${s}">${stageLabel(s)}</option>`).join("");
  if (crop.stages.includes(keep)) $("nr-stage").value = keep;
}

function readLength(id, what, lo, hi) {
  let m;
  try { m = Units.parseLength($(id).value, units()); } catch (e) { showFieldError($(id), e.message, ""); return null; }
  if (!(m > lo && m <= hi)) { showFieldError($(id), `${what} must be more than ${Units.length(lo, units())} and at most ${Units.length(hi, units())}`, ""); return null; }
  return m;
}

/** The room file for what was typed, or null when a box needs fixing (each one explained beside it). */
export function roomFromForm(page) {
  clearAllFieldErrors($("new-room-form"));
  const name = $("nr-name").value.trim();
  if (!name) showFieldError($("nr-name"), "a room needs a name", "");
  const w = readLength("nr-width", "the width", 0, MAX_SIDE_M);
  const l = readLength("nr-length", "the length", 0, MAX_SIDE_M);
  const h = readLength("nr-height", "the ceiling height", 0, MAX_HEIGHT_M);
  const c = readLength("nr-canopy", "the canopy height", -1e-9, MAX_HEIGHT_M);
  if (!name || w === null || l === null || h === null || c === null) return null;
  if (c >= h - CEILING_GAP_M - 0.01) { showFieldError($("nr-canopy"), `the canopy must be well below the ceiling (${Units.length(h, units())})`, ""); return null; }
  const crop = page.crops.find((cc) => cc.id === $("nr-crop").value);
  const stage = $("nr-stage").value;
  const type = page.fixture_library.find((t) => t.id === $("nr-fixture").value) || null;
  const r4 = (v) => Math.round(v * 1e4) / 1e4;
  const fixtures = [];
  if (type) {
    const g = type.geometry, reach = Math.max(g.length_m, g.width_m) / 2;
    if (reach * 2 > Math.min(w, l)) { showFieldError($("nr-fixture"), `this fixture (${Units.length(g.length_m, units())} long) does not fit in the room`, ""); return null; }
    fixtures.push({ id: "F1", type_id: type.id, x_m: r4(w / 2), y_m: r4(l / 2), hanging_height_m: r4(Math.min(c + ABOVE_CANOPY_M, h - CEILING_GAP_M)),
                    rotation_deg: 0, dimming_pct: 100, on: true, circuit: "A" });
  }
  const grid = (w * l) / (DEFAULT_GRID_M ** 2) > 200000 ? LARGE_ROOM_GRID_M : DEFAULT_GRID_M;
  const shortNights = crop.daylength === "short_day" && stage === "flowering";
  return {
    format: "leafcast-room", version: 1, revision: 0, custom_crops: [],
    room: {
      name: name.slice(0, 120), width_m: r4(w), length_m: r4(l), height_m: r4(h),
      wall_finish: { kind: "diffuse", reflectance: 0.8, label: "Flat white paint" }, open_sides: [],
      zones: [{ id: "canopy-1", name: `${crop.name}, ${stageLabel(stage).toLowerCase()}`.slice(0, 120), x_m: 0, y_m: 0,
                width_m: r4(w), length_m: r4(l), canopy_height_m: r4(c), crop_id: crop.id, stage, photoperiod_h: null }],
      fixture_types: type ? [type] : [], fixtures, obstacles: [], circuits: [{ name: "A", breaker_a: units() === "imperial" ? 15 : 16 }],
      schedule: { photoperiod_h: shortNights ? 12 : 16, electricity_price_per_kwh: 0.15, currency: units() === "imperial" ? "USD" : "EUR",
                  supply_voltage_v: units() === "imperial" ? 120 : 230 },
      grid_spacing_m: grid, display_units: units(),
    },
  };
}

// Switching units restates what is typed, so nobody has to convert by hand.
function restate(from, to) {
  for (const input of document.querySelectorAll("#new-room-form [data-length]")) {
    try { input.value = Units.lengthInput(Units.parseLength(input.value, from), to); } catch (e) { /* leave it for the check */ }
  }
}

export function wireNewRoom(page) {
  const dlg = $("new-room-dialog");
  $("nr-crop").innerHTML = page.crops.map((c) => `<option value="${escapeHtml(c.id)}">${escapeHtml(c.name)}</option>`).join("");
  $("nr-crop").value = page.crops.some((c) => c.id === "lettuce") ? "lettuce" : page.crops[0].id;
  fillStages(page.crops);
  $("nr-crop").addEventListener("change", () => fillStages(page.crops));
  $("nr-fixture").innerHTML = `<option value="">None for now</option>` + page.fixture_library.map((t) =>
    `<option value="${escapeHtml(t.id)}">${escapeHtml(t.name)} · ${t.ppf_umol_s} µmol/s · ${t.power_w} W</option>`).join("");
  let shown = units();
  for (const radio of document.querySelectorAll("input[name=nr-units]")) {
    radio.addEventListener("change", () => { restate(shown, units()); shown = units(); });
  }
  $("new-room").addEventListener("click", () => { dlg.showModal(); $("nr-name").select(); });
  $("nr-cancel").addEventListener("click", () => dlg.close());
  $("new-room-form").addEventListener("submit", async (ev) => {
    ev.preventDefault();
    const doc = roomFromForm(page);
    if (!doc) return;
    $("nr-create").disabled = true;
    const res = await request("/api/rooms", { method: "POST", body: doc }).catch(() => ({ ok: false, body: { message: "Leafcast could not be reached" } }));
    $("nr-create").disabled = false;
    if (!res.ok) { $("nr-message").hidden = false; $("nr-message").textContent = `⚠ Not created: ${problemsText(res.body)}`; return; }
    window.location.href = `/rooms/${res.body.id}`;
  });
}
