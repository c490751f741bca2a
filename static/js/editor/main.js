// The room editor: wires the plan, the map, the panels, live analysis, undo and autosave together.

import * as Units from "../lib/units.js";
import { escapeHtml } from "../lib/format.js";
import { request, abort, isAbort, problemsText } from "../lib/api.js";
import { $, state, on, emit, room, fixture, clampInside, round4, stacked, zonesBottomUp, zoneOf, rememberUnits } from "./state.js";
import { remember, undo, redo, canUndo, canRedo, reloadHistory, saveHistory, moveHistory } from "./history.js";
import { scheduleSave, flush, showBanner, hideBanner } from "./autosave.js";
import { createPlan } from "./plan.js";
import { drawMap, markStale } from "./map.js";
import { renderFigures, renderRegions, renderWarnings } from "./results.js";
import { clearAllFieldErrors, showFieldError, clearFieldError } from "./fields.js";
import { renderFixturePanel, wireFixturePanel, removeSelected, rotateSelected, duplicateSelected, nudgeSelected } from "./panels/fixture.js";
import { renderRoomPanel, renderCircuits, wireRoomPanel } from "./panels/room.js";
import { renderZones, renderObstacles, wireZonePanels } from "./panels/zones.js";
import { wireDrawer, showTab } from "./drawer.js";
import { renderTypes } from "./panels/types.js";
import { prefetch, startPreview, previewDrag, endPreview } from "./preview.js";
import "./meter_links.js";

window.leafcast = state; // a read-only handle for the browser tests, the benchmark and the curious

// Stacked tiers drawn together hide each other: start on the lowest tier when zones overlap on the plan.
if (stacked()) { state.tier = zonesBottomUp()[0].id; state.mapZone = state.tier; }

// ---------------------------------------------------------------- analysis (latest wins)
let seq = 0, applied = 0, inFlight = false, again = false, lastMoveAt = 0;
function analysisUrl() {
  const q = new URLSearchParams();
  for (const r of state.regions) q.append("region", [r.name.replace(/,/g, " "), r.x_m, r.y_m, r.width_m, r.length_m].join(","));
  return `/api/analyze?${q}`;
}
/** Ask for the exact answer. urgent: abort an answer still computing for an older room (a drop). */
async function requestAnalysis(urgent = false) {
  if (inFlight && !urgent) { again = true; return; }
  if (urgent) { abort("analysis"); again = false; }
  inFlight = true;
  state.analysing = (state.analysing || 0) + 1;
  const mine = ++seq, started = performance.now(), moveAt = lastMoveAt;
  const sentWhileDragging = !!state.dragging;
  let handedOver = false;
  try {
    const res = await request(analysisUrl(), { method: "POST", body: state.doc, key: "analysis" });
    if (mine > applied) {            // never let an older answer overwrite a newer one
      if (res.ok) {
        applied = mine;
        state.analysis = res.body;
        markStale(null);
        paintAnswer(started, moveAt, sentWhileDragging);   // it counts the request done once painted
        handedOver = true;
      } else {
        markStale(`${problemsText(res.body, 4, state.doc)}.`);
        $("map-status").textContent = "Not computed.";
      }
    }
  } catch (err) {
    if (!isAbort(err)) { markStale("Leafcast could not be reached."); $("map-status").textContent = `Lost contact with Leafcast: ${err}`; }
  } finally {
    if (!handedOver) state.analysing -= 1;
    if (seq === mine) inFlight = false;
    if (again && !inFlight) { again = false; requestAnalysis(); }
  }
}

// Figures first, in this frame; the map (plotly's repaint, the slow part) in the next one.
function paintAnswer(started, moveAt, duringDrag) {
  const a = state.analysis;
  fillMapZones(a);
  renderFigures(a);
  renderRegions(a);
  renderWarnings(a, plan);
  const figuresAt = performance.now();
  $("map-status").textContent = `Answer in ${(figuresAt - started).toFixed(0)} ms (engine ${a.compute_ms.toFixed(0)} ms).`;
  requestAnimationFrame(() => {
    drawMap();
    plan.render(state.doc, state.analysis, planOpts());
    renderFixturePanel();
    const mapAt = performance.now();
    state.timing.push({ request_ms: figuresAt - started, since_move_ms: figuresAt - moveAt, map_ms: mapAt - moveAt, during_drag: duringDrag });
    state.analysing -= 1;
  });
}

function fillMapZones(a) {
  const zsel = $("map-zone");
  if (!a.zones.some((z) => z.id === state.mapZone)) state.mapZone = a.zones[0] && a.zones[0].id;
  const html = a.zones.map((z) => `<option value="${escapeHtml(z.id)}">${escapeHtml(z.name)}</option>`).join("");
  if (zsel.innerHTML !== html) zsel.innerHTML = html;
  zsel.value = state.mapZone;
}

// ---------------------------------------------------------------- rendering
function planOpts() {
  return { units: state.units, selection: state.selection, tier: state.tier, readout: $("readout").checked,
           regions: state.regions, zoneOf, current: state.analysisCurrent };
}
function render() {
  $("undo").disabled = !canUndo();
  $("redo").disabled = !canRedo();
  renderFixturePanel();
  renderRoomPanel();
  fillTiers();
  plan.render(state.doc, state.analysis, planOpts());
}
function fillTiers() {
  const opts = `<option value="">all zones</option>` + zonesBottomUp().map((z) => `<option value="${escapeHtml(z.id)}">${escapeHtml(z.name)}</option>`).join("");
  if ($("tier").innerHTML !== opts) $("tier").innerHTML = opts;
  if (state.tier && !room().zones.some((z) => z.id === state.tier)) state.tier = "";
  $("tier").value = state.tier;
}
function renderAll() {
  render(); renderZones(); renderObstacles(); renderCircuits(); renderTypes();
  if (state.analysis) { fillMapZones(state.analysis); renderFigures(state.analysis); renderRegions(state.analysis); renderWarnings(state.analysis, plan); drawMap(); }
}

on("changed", (opts = {}) => {
  state.dirty = true;
  if (opts.history) clearAllFieldErrors();
  const ids = new Set(room().fixtures.map((f) => f.id));
  for (const id of [...state.selection]) if (!ids.has(id)) state.selection.delete(id);
  render(); renderZones(); renderObstacles(); renderCircuits(); renderTypes();
  saveHistory();
  requestAnalysis();
  if (!opts.noSave) scheduleSave();
});
on("selection", () => { render(); if (state.selection.size) { showTab("fixture", false); prefetch(state.selection); } });
on("regions", () => { render(); requestAnalysis(); });
on("map-zone", () => { fillMapZones(state.analysis); drawMap(); });
on("moved", (id) => {
  history.replaceState(null, "", `/rooms/${id}`);
  $("plan-link").href = `/rooms/${id}/plan`;
  $("sheet-link").href = `/rooms/${id}/sheet`;
  moveHistory(id);
});

// ---------------------------------------------------------------- plan and dragging
const plan = createPlan($("plan"), {
  onPick(id, additive) {
    if (id === null) state.selection.clear();
    else if (additive) state.selection.has(id) ? state.selection.delete(id) : state.selection.add(id);
    else if (!state.selection.has(id)) state.selection = new Set([id]);
    emit("selection");
  },
  onDragStart(id) {
    if (!state.selection.has(id)) state.selection = new Set([id]);
    remember();
    state.dragging = { origin: Object.fromEntries([...state.selection].map((sid) => [sid, [fixture(sid).x_m, fixture(sid).y_m]])) };
    startPreview(state.selection);
  },
  onDrag(dx, dy) {
    if (!state.dragging) return;
    for (const [sid, [x0, y0]] of Object.entries(state.dragging.origin)) {
      const f = fixture(sid);
      let x = x0 + dx, y = y0 + dy;
      if (state.snap && state.snapStep > 0) { x = Math.round(x / state.snapStep) * state.snapStep; y = Math.round(y / state.snapStep) * state.snapStep; }
      f.x_m = round4(x); f.y_m = round4(y);
      clampInside(f);
    }
    lastMoveAt = performance.now();
    state.dirty = true;
    plan.render(state.doc, state.analysis, planOpts());
    if (!previewDrag()) requestAnalysis();
  },
  onDragEnd() {
    state.dragging = null;
    lastMoveAt = performance.now();
    endPreview();
    state.dirty = true;
    render(); saveHistory();
    requestAnalysis(true);
    scheduleSave();
  },
  onArea(x, y, w, l) {
    if (w < 0.02 || l < 0.02) return;
    if (state.regions.length >= 4) state.regions.shift();
    const n = (state.regionCount = (state.regionCount || 0) + 1);
    state.regions.push({ name: `Area ${n}`, x_m: round4(x), y_m: round4(y), width_m: round4(w), length_m: round4(l) });
    emit("regions");
  },
});
$("area-mode").addEventListener("change", () => { plan.areaMode = $("area-mode").checked; });

// ---------------------------------------------------------------- keyboard
document.addEventListener("keydown", (ev) => {
  const inField = ["INPUT", "SELECT", "TEXTAREA"].includes(document.activeElement.tagName);
  const key = ev.key.toLowerCase();
  if ((ev.ctrlKey || ev.metaKey) && key === "z" && !inField) { ev.preventDefault(); ev.shiftKey ? redo() : undo(); return; }
  if ((ev.ctrlKey || ev.metaKey) && key === "y" && !inField) { ev.preventDefault(); redo(); return; }
  if (inField || ev.ctrlKey || ev.metaKey || ev.altKey) return;
  const focused = document.activeElement && document.activeElement.getAttribute && document.activeElement.getAttribute("data-fixture-id");
  if ((ev.key === "Enter" || ev.key === " ") && focused) {
    ev.preventDefault(); state.selection = new Set([focused]); emit("selection"); return;
  }
  if (!state.selection.size) return;
  const step = (state.snap ? state.snapStep : (state.units === "imperial" ? Units.M_PER_IN : 0.01)) * (ev.shiftKey ? 10 : 1);
  const moves = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, step], ArrowDown: [0, -step] };
  if (moves[ev.key]) { ev.preventDefault(); nudgeSelected(...moves[ev.key]); }
  else if (ev.key === "Delete" || ev.key === "Backspace") { ev.preventDefault(); removeSelected(); }
  else if (key === "r") rotateSelected();
  else if (key === "d") duplicateSelected();
  else if (ev.key === "Escape") { state.selection.clear(); emit("selection"); }
});

// ---------------------------------------------------------------- view controls
for (const radio of document.querySelectorAll("input[name=units]")) {
  radio.checked = radio.value === state.units;
  radio.addEventListener("change", () => {
    // A view setting, kept in this browser: stored values stay SI and the room file is not touched.
    state.units = radio.value;
    rememberUnits(state.units);
    clearAllFieldErrors();
    renderAll();
  });
}
$("zoom-in").addEventListener("click", () => plan.zoom(1.25));
$("zoom-out").addEventListener("click", () => plan.zoom(0.8));
$("zoom-fit").addEventListener("click", () => plan.fit());
$("readout").addEventListener("change", render);
$("tier").addEventListener("change", () => { state.tier = $("tier").value; if (state.tier) { state.mapZone = state.tier; emit("map-zone"); } render(); });
$("map-zone").addEventListener("change", () => { state.mapZone = $("map-zone").value; drawMap(); });
for (const radio of document.querySelectorAll("input[name=quantity]")) radio.addEventListener("change", () => { state.quantity = radio.value; syncLock(); drawMap(); });
$("undo").addEventListener("click", undo);
$("redo").addEventListener("click", redo);
function syncLock() {
  const v = state.lockedMax && state.lockedMax[state.quantity];
  $("lock-range").checked = !!v;
  $("lock-max").value = v || "";
}
function lockRange() {
  const box = $("lock-max");
  if (!$("lock-range").checked) { state.lockedMax = Object.assign({}, state.lockedMax, { [state.quantity]: null }); clearFieldError(box); drawMap(); return; }
  const v = parseFloat(box.value);
  if (!(v > 0)) { showFieldError(box, "type the top of the colour range, a number above zero"); return; }
  clearFieldError(box);
  state.lockedMax = Object.assign({}, state.lockedMax, { [state.quantity]: v });
  drawMap();
}
$("lock-range").addEventListener("change", lockRange);
$("lock-max").addEventListener("change", () => { if ($("lock-max").value) $("lock-range").checked = true; lockRange(); });

// ---------------------------------------------------------------- files
$("open-file").addEventListener("change", (ev) => {
  const file = ev.target.files[0];
  ev.target.value = "";
  if (!file) return;
  const reader = new FileReader();
  reader.onload = async () => {
    const res = await request("/api/rooms/import", { method: "POST", body: String(reader.result) }).catch(() => ({ ok: false, body: { message: "Leafcast could not be reached" } }));
    if (!res.ok) { showBanner(`${file.name} was not opened: ${problemsText(res.body)}. This room is unchanged.`, [["Dismiss", hideBanner]]); return; }
    showBanner(`Opened ${file.name} as a new room, “${res.body.name}”.`, [["Go to it", () => { window.location.href = `/rooms/${res.body.id}`; }], ["Stay here", hideBanner]]);
  };
  reader.readAsText(file);
});
$("download").addEventListener("click", async () => {
  await flush();
  window.location.href = `/api/rooms/${state.roomId}/file`;
});

// ---------------------------------------------------------------- start
reloadHistory();
wireDrawer();
wireFixturePanel();
wireRoomPanel();
wireZonePanels();
syncLock();
window.addEventListener("resize", () => { if (!state.dragging) drawMap(); });
renderAll();
state.ready = true;
