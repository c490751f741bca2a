// The fixture tab: add a fixture, edit the selected ones, arrange them in rows, snapping.

import * as Units from "../../lib/units.js";
import { escapeHtml } from "../../lib/format.js";
import { $, page, state, room, typeOf, fixture, zoneOf, nextId, clampInside, round4, emit } from "../state.js";
import { setIfIdle, tryCommit, lengthOf, numberOf, showFieldError, clearFieldError } from "../fields.js";

const DEFAULT_ABOVE_CANOPY_M = 0.45;     // a first hanging height for a new fixture (common practice, no source)
const NEW_FIXTURE_OFFSET_M = 0.15;

/** The room's own fixture types first (imported, fitted or typed in), then the library's. */
export function palette() {
  const seen = new Set();
  return [...room().fixture_types, ...page.fixture_library].filter((t) => !seen.has(t.id) && seen.add(t.id));
}

function fillPalette() {
  const html = palette().map((t) => `<option value="${escapeHtml(t.id)}">${escapeHtml(t.name)} · ${t.ppf_umol_s} µmol/s · ${t.power_w} W</option>`).join("");
  const sel = $("add-type");
  if (sel.innerHTML !== html) { const keep = sel.value; sel.innerHTML = html; if (keep) sel.value = keep; }
}

const byId = (r, id) => r.fixtures.find((f) => f.id === id);
// The room file's ranges (app/room/models.py Fixture): [low, high, name in the message].
const NUMBER_FIELDS = {
  dimming_pct: [10, 100, "dimming"],
  rotation_deg: [0, 359.999, "rotation"],
  tilt_deg: [0, 180, "tilt"],
  aim_deg: [0, 359.999, "tilt direction"],
};

export function renderFixturePanel() {
  fillPalette();
  const zsel = $("arr-zone"), zopts = room().zones.map((zz) => `<option value="${escapeHtml(zz.id)}">${escapeHtml(zz.name)}</option>`).join("");
  if (zsel.innerHTML !== zopts) zsel.innerHTML = zopts;
  const sel = [...state.selection].map(fixture).filter(Boolean);
  $("sel-none").hidden = sel.length > 0;
  $("sel-fields").hidden = sel.length === 0;
  if (!sel.length) return;
  const f = sel[0], t = typeOf(f), z = zoneOf(f), u = state.units;
  $("sel-summary").textContent = sel.length > 1
    ? `${sel.length} fixtures selected: the boxes show ${f.id}; moves and edits apply to all.`
    : `${f.id}: ${t.name}, ${t.ppf_umol_s} µmol/s at ${t.power_w} W (${(t.ppf_umol_s / t.power_w).toFixed(2)} µmol/J)` +
      (t.weight_kg ? `, ${Units.mass(t.weight_kg, u)}` : "") + (z ? `, over ${z.name}` : ", not over a zone");
  for (const input of document.querySelectorAll("#sel-fields [data-length]")) setIfIdle(input, Units.lengthInput(f[input.dataset.length], u));
  setIfIdle($("f-hc"), z ? Units.lengthInput(f.hanging_height_m - z.canopy_height_m, u) : "");
  $("f-hc").disabled = !z;
  for (const input of document.querySelectorAll("#sel-fields [data-num]")) setIfIdle(input, f[input.dataset.num] ?? 0);
  $("f-aim").disabled = !f.tilt_deg;  // a fixture hung straight down has no direction to lean
  const circ = $("f-circuit");
  const opts = room().circuits.map((c) => `<option>${escapeHtml(c.name)}</option>`).join("");
  if (circ.innerHTML !== opts) circ.innerHTML = opts;
  circ.value = f.circuit;
  $("f-on").checked = f.on;
}

export function removeSelected() {
  if (!state.selection.size) return;
  const ids = new Set(state.selection);
  state.selection.clear();
  tryCommit($("delete"), (r) => { r.fixtures = r.fixtures.filter((f) => !ids.has(f.id)); });
}
export function rotateSelected() {
  tryCommit($("rotate"), (r) => { for (const id of state.selection) { const f = byId(r, id); f.rotation_deg = (f.rotation_deg + 90) % 360; clampInside(f, r); } });
}
export function duplicateSelected() {
  const fresh = new Set();
  const ok = tryCommit($("duplicate"), (r) => {
    const taken = new Set(r.fixtures.map((f) => f.id));
    for (const id of state.selection) {
      const f = byId(r, id);
      const c = Object.assign({}, f, { id: nextId("F", taken), x_m: round4(f.x_m + NEW_FIXTURE_OFFSET_M), y_m: round4(f.y_m - NEW_FIXTURE_OFFSET_M) });
      taken.add(c.id); clampInside(c, r); r.fixtures.push(c); fresh.add(c.id);
    }
  });
  if (ok) { state.selection = fresh; emit("selection"); }
}
/** Move the selection by (dx, dy) metres as one edit. */
export function nudgeSelected(dx, dy) {
  tryCommit($("plan"), (r) => { for (const id of state.selection) { const f = byId(r, id); f.x_m = round4(f.x_m + dx); f.y_m = round4(f.y_m + dy); clampInside(f, r); } });
}

function addFixture() {
  const lib = palette().find((t) => t.id === $("add-type").value);
  if (!lib) return;
  let id;
  const ok = tryCommit($("add-type"), (r) => {
    if (!r.fixture_types.some((t) => t.id === lib.id)) r.fixture_types.push(JSON.parse(JSON.stringify(lib)));
    const z = r.zones[0];
    id = nextId("F", new Set(r.fixtures.map((f) => f.id)));
    const f = { id, type_id: lib.id, x_m: round4(z ? z.x_m + z.width_m / 2 : r.width_m / 2), y_m: round4(z ? z.y_m + z.length_m / 2 : r.length_m / 2),
                hanging_height_m: round4(Math.min(r.height_m - 0.05, (z ? z.canopy_height_m : 0) + DEFAULT_ABOVE_CANOPY_M)), rotation_deg: 0, dimming_pct: 100,
                on: true, circuit: r.circuits[0].name };
    r.fixtures.push(f);
    clampInside(f, r);
  });
  if (ok) { state.selection = new Set([id]); emit("selection"); }
}

function arrange() {
  const rows = parseInt($("arr-rows").value, 10), cols = parseInt($("arr-cols").value, 10);
  const zid = $("arr-zone").value;
  if (!state.selection.size) return showFieldError($("arrange"), "select a fixture first: the array copies it");
  if (!(rows >= 1 && cols >= 1 && rows * cols <= 400)) return showFieldError($("arr-cols"), "rows × columns must be between 1 and 400");
  clearFieldError($("arr-cols"));
  const fresh = new Set();
  const ok = tryCommit($("arrange"), (r) => {
    const z = r.zones.find((zz) => zz.id === zid);
    const sel = [...state.selection].map((id) => byId(r, id));
    const taken = new Set(r.fixtures.map((f) => f.id));
    for (let k = 0; k < rows * cols; k++) {
      const i = k % cols, j = Math.floor(k / cols);
      let f = sel[k];
      if (!f) { f = Object.assign({}, sel[0], { id: nextId("F", taken) }); taken.add(f.id); r.fixtures.push(f); }
      f.x_m = round4(z.x_m + (i + 0.5) * z.width_m / cols);
      f.y_m = round4(z.y_m + (j + 0.5) * z.length_m / rows);
      clampInside(f, r);
      fresh.add(f.id);
    }
  });
  if (ok) { state.selection = fresh; emit("selection"); }
}

export function wireFixturePanel() {
  for (const input of document.querySelectorAll("#sel-fields [data-length]")) {
    input.addEventListener("change", () => {
      const m = lengthOf(input);
      if (m === null) return;
      const key = input.dataset.length;
      tryCommit(input, (r) => { for (const id of state.selection) { const f = byId(r, id); f[key] = round4(m); if (key !== "hanging_height_m") clampInside(f, r); } });
    });
  }
  $("f-hc").addEventListener("change", () => {
    const m = lengthOf($("f-hc"), { positive: true });
    if (m === null) return;
    const zones = Object.fromEntries([...state.selection].map((id) => [id, zoneOf(fixture(id))]));
    tryCommit($("f-hc"), (r) => { for (const id of state.selection) { const z = zones[id]; if (z) byId(r, id).hanging_height_m = round4(z.canopy_height_m + m); } });
  });
  for (const input of document.querySelectorAll("#sel-fields [data-num]")) {
    input.addEventListener("change", () => {
      const key = input.dataset.num;
      const [lo, hi, what] = NUMBER_FIELDS[key];
      const v = numberOf(input, lo, hi, what);
      if (v === null) return;
      tryCommit(input, (r) => { for (const id of state.selection) { const f = byId(r, id); f[key] = v; clampInside(f, r); } });
    });
  }
  $("f-circuit").addEventListener("change", () => tryCommit($("f-circuit"), (r) => { for (const id of state.selection) byId(r, id).circuit = $("f-circuit").value; }));
  $("f-on").addEventListener("change", () => tryCommit($("f-on"), (r) => { for (const id of state.selection) byId(r, id).on = $("f-on").checked; }));
  $("rotate").addEventListener("click", rotateSelected);
  $("duplicate").addEventListener("click", duplicateSelected);
  $("delete").addEventListener("click", removeSelected);
  $("add-fixture").addEventListener("click", addFixture);
  $("arrange").addEventListener("click", arrange);
  $("snap-on").addEventListener("change", () => { state.snap = $("snap-on").checked; });
  $("snap-step").addEventListener("change", () => {
    const m = lengthOf($("snap-step"), { positive: true });
    if (m !== null) { state.snapStep = m; clearFieldError($("snap-step")); }
  });
}
