// The answer beside the map: per-zone figures, energy and circuits, drawn areas, and the warnings (the server's,
// layout cautions included: app/service/layout_cautions.py), with a one-click Apply for warnings that carry a
// machine-applicable fix.

import * as Units from "../lib/units.js";
import { fmt, pct, share, escapeHtml, stageLabel } from "../lib/format.js";
import { $, state, room, emit } from "./state.js";
import { commit } from "./history.js";

export function renderFigures(a) {
  const u = state.units;
  let html = `<div class="table-wrap"><table class="figures"><caption>Per zone, at each zone's photoperiod</caption><thead><tr><th scope="col">Zone</th><th scope="col">PPFD avg / min / max</th><th scope="col">min/avg · CV</th><th scope="col">DLI avg (band)</th><th scope="col">In band</th><th scope="col">Dark · hot</th><th scope="col">Hours for band</th></tr></thead><tbody>`;
  for (const z of a.zones) {
    html += `<tr data-zone-row="${escapeHtml(z.id)}"><th scope="row">${escapeHtml(z.name)}<br><span class="small">${escapeHtml(z.crop_name)}, ${stageLabel(z.stage).toLowerCase()}, ${z.photoperiod_h} h</span></th>` +
      `<td><span data-figure="ppfd-avg">${fmt(z.ppfd.avg)}</span> / ${fmt(z.ppfd.min)} / ${fmt(z.ppfd.max)}</td>` +
      `<td>${fmt(z.ppfd.min_over_avg, 2)} · ${fmt(z.ppfd.cv, 2)}</td>` +
      `<td>${fmt(z.dli.avg, 1)} (${z.target.dli_min}–${z.target.dli_max})</td><td>${pct(z.share_in_band)}</td>` +
      `<td>${Units.area(z.dark.area_m2, u)} · ${Units.area(z.hot.area_m2, u)}</td><td>${fmt(z.photoperiod_for_target_h, 1)} h</td></tr>`;
  }
  html += "</tbody></table></div>";
  const e = a.energy, h = a.heat;
  html += `<div class="table-wrap"><table class="figures"><caption>Energy, heat and circuits</caption><tbody>` +
    `<tr><th scope="row">Power drawn</th><td>${fmt(e.power_w)} W · ${fmt(e.layout_umol_per_j, 2)} µmol/J</td></tr>` +
    `<tr><th scope="row">Energy</th><td>${fmt(e.kwh_per_day, 2)} kWh/day · ${fmt(e.kwh_per_month)} kWh/month</td></tr>` +
    `<tr><th scope="row">Cost</th><td>${fmt(e.cost_per_day, 2)} ${escapeHtml(e.currency)}/day · ${fmt(e.cost_per_month, 2)} ${escapeHtml(e.currency)}/month</td></tr>` +
    `<tr><th scope="row">Heat to remove</th><td>${fmt(h.w)} W · ${fmt(h.btu_h)} BTU/h</td></tr>` +
    `<tr><th scope="row">Photons on canopy</th><td>${pct(e.canopy_share_of_emitted)} of emitted · ${fmt(e.canopy_mol_per_kwh, 2)} mol per kWh</td></tr>`;
  for (const c of a.circuits) {
    html += `<tr class="${c.ok ? "" : "bad"}"><th scope="row">Circuit ${escapeHtml(c.name)}</th><td>${fmt(c.load_w)} W of ${fmt(c.limit_w)} W · ${fmt(c.current_a, 1)} A of ${fmt(c.continuous_limit_a, 1)} A continuous (${c.breaker_a} A breaker)${c.ok ? "" : " · <strong>⚠ over the limit</strong>"}</td></tr>`;
  }
  html += "</tbody></table></div>";
  $("figures").innerHTML = html;
}

export function renderRegions(a) {
  const host = $("regions");
  if (!state.regions.length) { host.innerHTML = ""; return; }
  const names = Object.fromEntries(room().zones.map((z) => [z.id, z.name]));
  const rows = (a.regions || []).map((r) => `<tr><th scope="row">${escapeHtml(r.name)} · ${escapeHtml(names[r.zone_id] || r.zone_name || "")}</th>
    <td>${fmt(r.ppfd.avg)} / ${fmt(r.ppfd.min)} / ${fmt(r.ppfd.max)}</td><td>${fmt(r.ppfd.min_over_avg, 2)}</td><td>${Units.area(r.area_m2, state.units)}</td></tr>`).join("");
  host.innerHTML = `<div class="table-wrap"><table class="figures"><caption>Drawn areas (PPFD) <button type="button" id="clear-areas">Clear areas</button></caption>
    <thead><tr><th scope="col">Area · zone</th><th scope="col">avg / min / max</th><th scope="col">min/avg</th><th scope="col">Canopy area</th></tr></thead>
    <tbody>${rows || "<tr><td colspan='4'>The areas cover no canopy.</td></tr>"}</tbody></table></div>`;
  $("clear-areas").addEventListener("click", () => { state.regions = []; emit("regions"); });
}

// A dark or hot area smaller than 1 % of the zone and than one map cell is noise, not advice.
const MIN_SHARE = 0.01;
function meaningful(w, a) {
  if (w.code !== "dark_zone" && w.code !== "hot_spot") return true;
  const z = a.zones.find((zz) => zz.id === w.zone_id);
  if (!z) return true;
  const part = w.code === "dark_zone" ? z.dark : z.hot;
  const cell = z.grid ? z.grid.spacing_m ** 2 : 0;
  return part.share >= MIN_SHARE || part.area_m2 >= cell;
}

/**
 * The fix's words and the first verified structured fix the server sent with the warning (``w.fixes``,
 * app/service/advice.py), or null. ``w.fix`` is the sentence; layout cautions carry only words.
 */
export function fixOf(w) {
  const text = typeof w.fix === "string" ? w.fix : (w.fix && w.fix.text) || "";
  const machine = (w.fixes || []).find((f) => f && f.verified && f.action in FIX_ACTIONS) || null;
  return { text: text || (machine ? machine.text || "" : ""), machine };
}

// Each action edits the room exactly as apply_fix in app/service/advice.py does (the same keys).
const PER_FIXTURE = { set_dimming: "dimming_pct", set_height: "hanging_height_m", set_circuit: "circuit" };
const perFixture = (fix) => (r) => {
  const key = PER_FIXTURE[fix.action], values = fix.fixtures || {};
  for (const f of r.fixtures) if (Object.prototype.hasOwnProperty.call(values, f.id)) f[key] = values[f.id];
};
const FIX_ACTIONS = {
  set_photoperiod: (fix) => (r) => { for (const z of r.zones) if (z.id === fix.zone) z.photoperiod_h = fix.hours; },
  set_dimming: perFixture,
  set_height: perFixture,
  set_circuit: perFixture,
  add_fixtures: (fix) => (r) => {
    const gone = new Set(fix.remove || []);
    r.fixtures = r.fixtures.filter((f) => !gone.has(f.id)).concat((fix.fixtures || []).map((f) => ({ ...f })));
    const known = new Set(r.fixture_types.map((t) => t.id));
    for (const t of fix.fixture_types || []) if (!known.has(t.id)) r.fixture_types.push(JSON.parse(JSON.stringify(t)));
  },
};

/** Apply a structured fix as one undoable edit; returns the refusal reasons ([] when applied), null if unknown. */
export function applyFix(fix) {
  const make = FIX_ACTIONS[fix && fix.action];
  return make ? commit(make(fix)) : null;
}

/** The Apply button for a verified fix: one undoable edit, refused (with the reasons) if the room has moved on. */
function applyButton(machine, zoneId) {
  const apply = document.createElement("button");
  apply.type = "button"; apply.className = "apply-fix"; apply.textContent = "Apply";
  apply.dataset.fixAction = machine.action;
  if (zoneId) apply.dataset.fixZone = zoneId;
  apply.setAttribute("aria-label", `Apply the fix: ${Units.localise(machine.text || machine.action, state.units)}`);
  apply.addEventListener("click", () => {
    if (!state.analysisCurrent || state.analysing) {
      apply.title = "The room changed since this fix was checked: wait for the new analysis.";
      apply.textContent = "Checking again…";
      return;
    }
    const refused = applyFix(machine);
    if (refused === null) { apply.disabled = true; apply.textContent = "Cannot apply here"; }
    else if (refused.length) { apply.textContent = "Not applied"; apply.title = refused.join("; "); }
    else { apply.disabled = true; apply.textContent = "Applied"; }
  });
  return apply;
}

export function renderWarnings(a, plan) {
  const ul = $("warnings");
  ul.innerHTML = "";
  const list = a.warnings.filter((w) => meaningful(w, a));
  if (!list.length) { ul.innerHTML = "<li class='ok'>No warnings: every zone is in its band.</li>"; return; }
  const offered = new Set();
  for (const w of list) {
    const li = document.createElement("li");
    li.className = `warning ${w.severity}`;
    const fix = fixOf(w);
    const btn = document.createElement("button");
    btn.type = "button";
    btn.className = "warning-show";
    btn.innerHTML = `<strong>${w.severity}</strong> ${escapeHtml(Units.localise(w.message, state.units))}` +
      (fix.text ? `<br><span class="fix">Fix: ${escapeHtml(Units.localise(fix.text, state.units))}</span>` : "");
    btn.title = "Show where on the plan";
    btn.addEventListener("click", () => {
      if (w.zone_id) { state.mapZone = w.zone_id; emit("map-zone"); }
      if (w.fixture_id) { state.selection = new Set([w.fixture_id]); emit("selection"); }
      let bounds = w.where;
      if (!bounds && w.zone_id) { const z = room().zones.find((zz) => zz.id === w.zone_id); if (z) bounds = [z.x_m, z.y_m, z.x_m + z.width_m, z.y_m + z.length_m]; }
      if (bounds) plan.highlight(bounds);
    });
    li.appendChild(btn);
    const key = fix.machine && JSON.stringify(fix.machine);
    if (fix.machine && !offered.has(key)) {   // a zone's warnings share its fixes: one button for each fix
      offered.add(key);
      li.appendChild(applyButton(fix.machine, w.zone_id));
    }
    ul.appendChild(li);
  }
}
