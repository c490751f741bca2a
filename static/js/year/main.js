// The cycle-and-year page: grow-cycle steps and weeks, greenhouse months, tariff placement, payback.
// Everything shown comes from the page data; every change is saved to the room file (409 if stale) and the
// page is computed again by the server. One level of undo per change, kept for this browser tab.
import { request, fieldText } from "../lib/api.js";
import * as Units from "../lib/units.js";
import { fmt, escapeHtml as esc } from "../lib/format.js";
import { tariff, payback } from "./money.js";

const page = JSON.parse(document.getElementById("page-data").textContent);
const $ = (id) => document.getElementById(id);
const units = page.display_units;
const cur = page.currency;
const doc = page.room_file;
const room = doc.room;
const undoKey = `leafcast-year-undo-${page.room_id}`;
const len = (m) => (m === null || m === undefined ? "as hung" : Units.length(m, units));
const clock = (h) => { const m = Math.round(((h % 24) + 24) % 24 * 60); return `${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`; };
const perArea = (v) => v * page.per_area_factor;  // a figure per m², shown per ft² for imperial rooms
const DAYS = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];
const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];
const PLOT = { displaylogo: false, responsive: true };
const zoneOf = (id) => room.zones.find((z) => z.id === id);

function banner(html) {
  const b = $("banner"); b.innerHTML = html; b.hidden = !html;
  // No inline handlers (the CSP allows no inline script): a reload button is wired here.
  const reload = b.querySelector("[data-reload]");
  if (reload) reload.addEventListener("click", () => location.reload());
}

// ------------------------------------------------------------ saving and undo
async function save(mutate, what, { record = true, onSaved = null } = {}) {
  const before = JSON.parse(JSON.stringify(doc));
  const next = JSON.parse(JSON.stringify(doc));
  try { mutate(next); } catch (e) { banner(`<p>${esc(e.message)}</p>`); return; }
  banner(`<p>Saving ${esc(what)} and computing the plan again…</p>`);
  const res = await request(`/api/rooms/${page.room_id}`, { method: "PUT", body: next });
  const body = res.body || {};
  if (res.ok) {
    if (record) {
      const stack = JSON.parse(sessionStorage.getItem(undoKey) || "[]");
      stack.push({ what, doc: before });
      sessionStorage.setItem(undoKey, JSON.stringify(stack.slice(-20)));
    }
    if (onSaved) onSaved();
    location.reload();
  } else if (res.status === 409) {
    banner(`<p>${esc(body.message)}</p><button type="button" data-reload>Reload the room</button>`);
  } else {
    const list = (body.problems || []).map((p) => `<li>${esc(fieldText(p.field, page.room_file))}: ${esc(p.message)}</li>`).join("");
    banner(`<p>Not saved: ${esc(body.message || `HTTP ${res.status}`)}</p>${list ? `<ul>${list}</ul>` : ""}`);
  }
}
const undoStack = JSON.parse(sessionStorage.getItem(undoKey) || "[]");
if (undoStack.length) { $("undo").disabled = false; $("undo").title = `Undo: ${undoStack[undoStack.length - 1].what}`; }
$("undo").addEventListener("click", () => {
  const stack = JSON.parse(sessionStorage.getItem(undoKey) || "[]");
  const last = stack.pop();
  if (!last) return;
  // Taken off the stack only once the older version is saved (a refused undo stays available).
  save((d) => { Object.assign(d, last.doc, { revision: doc.revision }); }, `undo of ${last.what}`,
    { record: false, onSaved: () => sessionStorage.setItem(undoKey, JSON.stringify(stack)) });
});

function num(input, label, { min = -Infinity, max = Infinity, blank = false } = {}) {
  const t = String(input.value).trim();
  if (input.validity && input.validity.badInput) throw new Error(`${label}: enter a number`);  // text in a number box reads as blank
  if (!t && blank) return null;
  const v = Number(t);
  if (!t || !isFinite(v)) throw new Error(`${label}: enter a number`);
  if (v < min || v > max) throw new Error(`${label}: must be between ${min} and ${max}`);
  return v;
}
function lengthIn(input, label, { positive = false } = {}) {
  const t = String(input.value).trim();
  if (!t) return null;
  let m;
  try { m = Units.parseLength(t, units); } catch (e) { throw new Error(`${label}: ${e.message}`); }
  if (positive ? !(m > 0) : m < 0) throw new Error(`${label}: must be ${positive ? "more than zero" : "zero or more"}`);
  return m;
}
function table(head, rows) {
  return `<table class="figures"><thead><tr>${head.map((h) => `<th>${h}</th>`).join("")}</tr></thead><tbody>${rows.join("")}</tbody></table>`;
}

// ------------------------------------------------------------ grow cycle
function stepRow(zone, s, k) {
  const stages = Object.keys(page.crops[zone.crop_id].stages);
  const v = (m) => (m === null || m === undefined ? "" : Units.lengthInput(m, units));
  return `<tr data-step="${k}"><td><input aria-label="First week" name="week" type="number" min="1" value="${s.week}"></td>
    <td><select aria-label="Stage" name="stage">${stages.map((x) => `<option ${x === s.stage ? "selected" : ""}>${x}</option>`).join("")}</select></td>
    <td><input aria-label="Photoperiod (h)" name="photoperiod_h" type="number" step="0.25" min="0.25" max="24" value="${s.photoperiod_h}"></td>
    <td><input aria-label="Canopy height" name="canopy_height_m" value="${v(s.canopy_height_m)}" placeholder="zone's"></td>
    <td><input aria-label="Fixture height" name="fixture_height_m" value="${v(s.fixture_height_m)}" placeholder="as hung"></td>
    <td><input aria-label="Dimming (%)" name="dimming_pct" type="number" min="10" max="100" value="${s.dimming_pct ?? ""}" placeholder="as set"></td>
    <td><input aria-label="Ramp to the next step" name="ramp" type="checkbox" ${s.ramp ? "checked" : ""}></td>
    <td><button type="button" data-remove-step="${k}" aria-label="Remove step ${k + 1}">×</button></td></tr>`;
}
function readSteps(box) {
  return [...box.querySelectorAll("tr[data-step]")].map((tr, k) => {
    const f = (n) => tr.querySelector(`[name=${n}]`);
    const at = `step ${k + 1}`;
    return {
      week: num(f("week"), `${at} week`, { min: 1, max: 104 }), stage: f("stage").value,
      photoperiod_h: num(f("photoperiod_h"), `${at} photoperiod`, { min: 0.25, max: 24 }),
      canopy_height_m: lengthIn(f("canopy_height_m"), `${at} canopy height`),
      fixture_height_m: lengthIn(f("fixture_height_m"), `${at} fixture height`, { positive: true }),
      dimming_pct: num(f("dimming_pct"), `${at} dimming`, { min: 10, max: 100, blank: true }), ramp: f("ramp").checked,
    };
  });
}
function fixText(f, w) {
  if (!f && w.dli_natural > w.band.dli_max) return `the sun alone gives ${fmt(w.dli_natural, 1)} at the bench, above the band: shade the glazing`;
  if (!f) return "no setting of these fixtures reaches the band: add fixtures or change the plan";
  const what = { dimming: `dim to ${fmt(f.dimming_pct)} %`, photoperiod: `set the photoperiod to ${fmt(f.photoperiod_h, 2)} h`,
    height: `hang the fixtures at ${len(f.fixture_height_m)} and dim to ${fmt(f.dimming_pct)} %` }[f.kind];
  return `${what} → DLI ${fmt(f.verified.dli_avg, 1)}, peak ${fmt(f.verified.ppfd_max)} µmol m⁻² s⁻¹ (computed again)`;
}
// The schedule as one step per run of identical weeks (no ramps), each fixed week taking its verified fix:
// every week keeps exactly the settings it was computed with.
function stepsWithFixes(weeks) {
  const steps = [];
  for (const w of weeks) {
    const f = w.fix;
    const s = { week: w.week, stage: w.stage, photoperiod_h: f ? f.photoperiod_h : w.photoperiod_h, canopy_height_m: w.canopy_height_m,
      fixture_height_m: f ? f.fixture_height_m : w.fixture_height_m, dimming_pct: f ? f.dimming_pct : w.dimming_pct, ramp: false };
    const last = steps[steps.length - 1];
    const same = last && ["stage", "photoperiod_h", "canopy_height_m", "fixture_height_m", "dimming_pct"].every((k) => last[k] === s[k]);
    if (!same) steps.push(s);
  }
  return steps;
}
function drawCycle(c, i) {
  if (c.problem) return;
  const zone = zoneOf(c.zone_id);
  const wk = c.weeks.map((w) => w.week);
  const flagged = c.weeks.filter((w) => w.status.length);
  window.Plotly.newPlot(`cycle-plot-${i}`, [
    { x: wk, y: c.weeks.map((w) => w.band.dli_min), mode: "lines", line: { width: 0, shape: "hv" }, showlegend: false, hoverinfo: "skip" },
    { x: wk, y: c.weeks.map((w) => w.band.dli_max), mode: "lines", fill: "tonexty", fillcolor: "rgba(60,140,80,0.18)", line: { width: 0, shape: "hv" }, name: "crop's band" },
    { x: wk, y: c.weeks.map((w) => w.dli_avg), mode: "lines+markers", name: "DLI average", line: { color: "#2f6d3a" } },
    { x: wk, y: c.weeks.map((w) => w.dli_min), mode: "lines", name: "DLI lowest point", line: { color: "#2f6d3a", dash: "dot" } },
    { x: flagged.map((w) => w.week), y: flagged.map((w) => w.dli_avg), mode: "markers", name: "off the band or stressed", marker: { color: "#b3261e", size: 11, symbol: "x" } },
  ].concat(c.weeks.some((w) => w.dli_natural > 0) ? [{ x: wk, y: c.weeks.map((w) => w.dli_natural), type: "bar", name: "of which the sun", marker: { color: "rgba(143,191,106,0.6)" } }] : []), { margin: { t: 10, r: 10, b: 40, l: 50 }, xaxis: { title: { text: "week" }, dtick: 1 }, yaxis: { title: { text: "DLI (mol m⁻² d⁻¹)" }, rangemode: "tozero" }, legend: { orientation: "h", y: -0.35 } }, PLOT);
  const steps = zone.cycle.steps;
  $(`cycle-steps-${i}`).innerHTML = `<h4>Steps</h4>${table(["From week", "Stage", "Photoperiod (h)", `Canopy height (${Units.inputUnit(units)})`, `Fixture height (${Units.inputUnit(units)})`, "Dimming (%)", "Ramp", ""], steps.map((s, k) => stepRow(zone, s, k)))}
    <div class="row"><button type="button" data-add-step>Add a step</button>
    <label>Cycle length (weeks) <input name="weeks" type="number" min="1" max="104" value="${zone.cycle.weeks}"></label>
    <label>Harvests per cycle <input name="harvests" type="number" min="0.1" step="0.1" value="${zone.cycle.harvests}"></label>
    <label>Starts in <select name="start_month"><option value="">(no month)</option>${MONTHS.map((m, k) => `<option value="${k + 1}" ${zone.cycle.start_month === k + 1 ? "selected" : ""}>${m}</option>`).join("")}</select></label>
    <button type="button" data-save-cycle>Save the cycle</button><button type="button" data-drop-cycle>Remove the cycle</button></div>`;
  const box = $(`cycle-steps-${i}`);
  box.addEventListener("click", (ev) => {
    const t = ev.target;
    if (t.dataset.addStep !== undefined) {
      const rows = readSafe(box) || steps;
      const last = rows[rows.length - 1];
      box.querySelector("tbody").insertAdjacentHTML("beforeend", stepRow(zone, { ...last, week: last.week + 1, ramp: false }, rows.length));
    } else if (t.dataset.removeStep !== undefined) {
      t.closest("tr").remove();
    } else if (t.dataset.saveCycle !== undefined) {
      save((d) => {
        const z = d.room.zones.find((q) => q.id === zone.id);
        z.cycle = { weeks: num(box.querySelector("[name=weeks]"), "cycle length", { min: 1, max: 104 }),
          harvests: num(box.querySelector("[name=harvests]"), "harvests per cycle", { min: 0.001 }), steps: readSteps(box),
          start_month: box.querySelector("[name=start_month]").value ? Number(box.querySelector("[name=start_month]").value) : null };
      }, `the cycle of ${zone.name}`);
    } else if (t.dataset.dropCycle !== undefined) {
      save((d) => { d.room.zones.find((q) => q.id === zone.id).cycle = null; }, `removing the cycle of ${zone.name}`);
    }
  });
  function readSafe(b) { try { return readSteps(b); } catch (e) { return null; } }
  $(`cycle-weeks-${i}`).innerHTML = `<h4>Weeks</h4>${table(["Week", "Stage", "Hours", "Canopy", "Fixtures", "Dimming", "PPFD avg / peak", "DLI avg (lowest)", "of which sun", "Band", "Check"],
    c.weeks.map((w) => `<tr class="${w.status.length ? "flag" : ""}"><td>${w.week}</td><td>${esc(w.stage)}</td><td>${fmt(w.photoperiod_h, 2)}${w.photoperiod_ok ? "" : ` ⚠ ${esc(w.photoperiod_rule.why)}`}</td>
      <td>${len(w.canopy_height_m)}</td><td>${len(w.fixture_height_m)}</td><td>${w.dimming_pct === null ? "as set" : fmt(w.dimming_pct) + " %"}</td>
      <td>${fmt(w.ppfd_avg)} / ${fmt(w.ppfd_max)}</td><td>${fmt(w.dli_avg, 1)} (${fmt(w.dli_min, 1)})</td><td>${w.dli_natural ? fmt(w.dli_natural, 1) : "–"}</td><td>${w.band.dli_min}–${w.band.dli_max}</td>
      <td>${w.status.length ? `${w.status.map((s) => ({ below: "below the band", above: "above the band", stress: `above ${w.band.ppfd_stress} µmol m⁻² s⁻¹` }[s])).join(", ")}: ${esc(fixText(w.fix, w))}` : "in the band"}</td></tr>`))}`;
  if (c.weeks.some((w) => w.fix)) {
    $(`cycle-weeks-${i}`).insertAdjacentHTML("beforeend", `<button type="button" data-apply-fixes>Apply every fix to the schedule</button>`);
    $(`cycle-weeks-${i}`).querySelector("[data-apply-fixes]").addEventListener("click", () => save((d) => {
      d.room.zones.find((q) => q.id === zone.id).cycle.steps = stepsWithFixes(c.weeks);
    }, `the fixes for ${zone.name}`));
  }
  const t = c.totals;
  $(`cycle-totals-${i}`).innerHTML = `<h4>Over the cycle (${t.weeks} weeks, ${t.harvests} harvest${t.harvests === 1 ? "" : "s"})</h4>
    <p>${fmt(t.kwh, 1)} kWh · ${fmt(t.cost, 2)} ${esc(cur)} (mean ${fmt(t.mean_price_per_kwh, 3)} ${esc(cur)}/kWh) · heat ${fmt(t.heat_kwh, 1)} kWh = ${fmt(t.heat_btu / 1e6, 2)} million BTU to remove<br>
    ${fmt(t.canopy_mol)} mol of photons from the fixtures to the canopy (${fmt(perArea(t.canopy_mol_per_m2), 1)} mol per ${page.area_unit})${t.natural_mol ? `, and ${fmt(t.natural_mol)} mol from the sun` : ""} · ${fmt(t.cost_per_mol * 100, 2)} ${esc(cur)} per 100 mol<br>
    per harvest ${fmt(t.kwh_per_harvest, 1)} kWh, ${fmt(t.cost_per_harvest, 2)} ${esc(cur)} · per ${page.area_unit} of canopy ${fmt(perArea(t.kwh_per_m2), 2)} kWh, ${fmt(perArea(t.cost_per_m2), 2)} ${esc(cur)}</p>`;
}
page.cycles.forEach(drawCycle);
$("cycle-add").innerHTML = room.zones.filter((z) => !z.cycle).map((z) => `<button type="button" data-new-cycle="${esc(z.id)}">Plan a cycle for ${esc(z.name)}</button>`).join("");
$("cycle-add").addEventListener("click", (ev) => {
  const id = ev.target.dataset.newCycle;
  if (!id) return;
  const z = zoneOf(id);
  save((d) => {
    d.room.zones.find((q) => q.id === id).cycle = { weeks: 6, harvests: 1, steps: [{ week: 1, stage: z.stage, photoperiod_h: z.photoperiod_h || room.schedule.photoperiod_h, canopy_height_m: null, fixture_height_m: null, dimming_pct: null, ramp: false }] };
  }, `a new cycle for ${z.name}`);
});

// ------------------------------------------------------------ greenhouse
// Altitude in feet in an imperial room, metres otherwise (the room file keeps metres).
const ALT_FT = units === "imperial";
const altShown = (m) => (ALT_FT ? Math.round(m / Units.M_PER_FT) : m);
const altMetres = (v) => (ALT_FT ? Math.round(v * Units.M_PER_FT * 10) / 10 : v);

function ghForm(z, i) {
  const g = z.greenhouse;
  const opt = (v, label, sel) => `<option value="${esc(v)}" ${sel ? "selected" : ""}>${esc(label)}</option>`;
  const typed = g.outdoor_dli_by_month || Array(12).fill("");
  return `<div class="field-grid wide">
    <label for="gh-glazing-${i}">Glazing</label><select id="gh-glazing-${i}" name="glazing">${Object.entries(page.glazings).map(([k, v]) => opt(k, `${k.replace(/_/g, " ")} · ${Math.round(v.transmission * 100)} % (${v.note})`, g.glazing === k)).join("")}${opt("custom", "custom: type the transmission", g.glazing === "custom")}</select>
    <label for="gh-trans-${i}">Transmission (%, blank: the glazing's typical value)</label><input id="gh-trans-${i}" name="transmission" type="number" min="1" max="100" value="${g.transmission === null ? "" : Math.round(g.transmission * 1000) / 10}">
    <label for="gh-place-${i}">Place</label><select id="gh-place-${i}" name="place">${opt("", "latitude and longitude below", !g.place)}${Object.keys(page.places).map((p) => opt(p, p, g.place === p)).join("")}</select>
    <label for="gh-lat-${i}">Latitude (°, north +)</label><input id="gh-lat-${i}" name="latitude_deg" type="number" step="0.01" value="${g.latitude_deg}">
    <label for="gh-lon-${i}">Longitude (°, east +)</label><input id="gh-lon-${i}" name="longitude_deg" type="number" step="0.01" value="${g.longitude_deg}">
    <label for="gh-alt-${i}">Altitude (${ALT_FT ? "ft" : "m"})</label><input id="gh-alt-${i}" name="altitude_m" type="number" value="${altShown(g.altitude_m)}" data-metres="${g.altitude_m}">
    <label for="gh-sky-${i}">Share of clear-sky sun reaching the site (%; clouds)</label><input id="gh-sky-${i}" name="sky_share" type="number" min="1" max="100" value="${Math.round(g.sky_share * 100)}">
    <label for="gh-target-${i}">Target DLI (blank: the bottom of the crop's band)</label><input id="gh-target-${i}" name="target_dli" type="number" min="0.1" max="80" step="0.1" value="${g.target_dli ?? ""}">
    </div><p class="small">Or type the outdoor DLI of each month (mol m⁻² d⁻¹, all twelve; leave all empty to use the sun model):</p>
    <div class="row">${typed.map((v, m) => `<label>${MONTHS[m]} <input name="typed" data-month="${m}" type="number" min="0" max="80" step="0.1" value="${v}" style="width:4.5rem"></label>`).join("")}</div>
    <div class="row"><button type="button" data-save-gh>Save the greenhouse settings</button><button type="button" data-drop-gh>Not under glazing</button></div>`;
}
function altitudeOf(input) {
  const v = num(input, "altitude", ALT_FT ? { min: -1312, max: 16404 } : { min: -400, max: 5000 });
  // Unchanged on screen: keep the stored metres exactly (feet shown are rounded).
  const stored = Number(input.dataset.metres);
  return input.dataset.metres !== undefined && v === altShown(stored) ? stored : altMetres(v);
}
function readGh(box) {
  const f = (n) => box.querySelector(`[name=${n}]`);
  const typed = [...box.querySelectorAll("[name=typed]")].map((el) => el.value.trim());
  const filled = typed.filter(Boolean).length;
  if (filled && filled < 12) throw new Error(`monthly outdoor DLI: type all twelve months or none (${filled} typed)`);
  const trans = num(f("transmission"), "transmission", { min: 1, max: 100, blank: true });
  return {
    glazing: f("glazing").value, transmission: trans === null ? null : trans / 100, place: f("place").value,
    latitude_deg: num(f("latitude_deg"), "latitude", { min: -66, max: 66 }), longitude_deg: num(f("longitude_deg"), "longitude", { min: -180, max: 180 }),
    altitude_m: altitudeOf(f("altitude_m")), sky_share: num(f("sky_share"), "share of clear-sky sun", { min: 1, max: 100 }) / 100,
    outdoor_dli_by_month: filled ? typed.map((v, m) => num({ value: v }, `outdoor DLI month ${m + 1}`, { min: 0, max: 80 })) : null,
    target_dli: num(f("target_dli"), "target DLI", { min: 0.1, max: 80, blank: true }),
  };
}
page.greenhouses.forEach((g, i) => {
  const z = zoneOf(g.zone_id);
  const box = $(`gh-form-${i}`);
  box.innerHTML = ghForm(z, i);
  box.addEventListener("click", (ev) => {
    if (ev.target.dataset.saveGh !== undefined) save((d) => { d.room.zones.find((q) => q.id === z.id).greenhouse = readGh(box); }, `the greenhouse settings of ${z.name}`);
    if (ev.target.dataset.dropGh !== undefined) save((d) => { d.room.zones.find((q) => q.id === z.id).greenhouse = null; }, `${z.name} not under glazing`);
  });
  box.querySelector("[name=place]").addEventListener("change", (ev) => {
    const p = page.places[ev.target.value];
    if (p) { box.querySelector("[name=latitude_deg]").value = p[0]; box.querySelector("[name=longitude_deg]").value = p[1]; const alt = box.querySelector("[name=altitude_m]"); alt.value = altShown(p[2]); alt.dataset.metres = p[2]; }
  });
  if (g.problem) return;
  window.Plotly.newPlot(`gh-plot-${i}`, [
    { x: g.months, y: g.inside_dli, type: "bar", name: "natural, at the bench", marker: { color: "#8fbf6a" } },
    { x: g.months, y: g.supplemental_dli, type: "bar", name: "from the fixtures", marker: { color: "#e0a030" } },
    { x: g.months, y: g.months.map(() => g.target_dli), mode: "lines", name: `target ${g.target_dli}`, line: { color: "#b3261e", dash: "dash" } },
  ], { barmode: "stack", margin: { t: 10, r: 10, b: 40, l: 50 }, yaxis: { title: { text: "DLI (mol m⁻² d⁻¹)" } }, legend: { orientation: "h", y: -0.2 } }, PLOT);
  window.Plotly.newPlot(`gh-energy-${i}`, [
    { x: g.months, y: g.kwh_by_month, type: "bar", name: "kWh", marker: { color: "#6b8bb5" } },
    { x: g.months, y: g.cost_by_month, mode: "lines+markers", name: cur, yaxis: "y2", line: { color: "#444" } },
  ], { margin: { t: 10, r: 50, b: 40, l: 50 }, yaxis: { title: { text: "kWh per month" } }, yaxis2: { title: { text: cur }, overlaying: "y", side: "right" }, legend: { orientation: "h", y: -0.2 } }, PLOT);
  $(`gh-table-${i}`).innerHTML = `<p class="small">${esc(g.source)}; glazing ${fmt(g.transmission * 100)} % (${esc(g.transmission_note)}); target ${g.target_dli} (${esc(g.target_note)}); the fixtures give ${fmt(g.fixture_ppfd_avg)} µmol m⁻² s⁻¹ at the bench as set, at most ${fmt(g.max_hours, 2)} h a day${g.max_hours_why ? ` (${esc(g.max_hours_why)})` : ""}.</p>
    ${g.short_months.length ? `<p class="bad">Even at ${fmt(g.max_hours, 2)} h the fixtures fall short in ${g.short_months.join(", ")}: add fixtures or raise their dimming.</p>` : ""}
    ${table(["Month", "Natural at the bench", "Top-up needed", "Fixtures: hours a day", `or dimming at ${fmt(g.photoperiod_h, 2)} h`, "kWh", cur],
      g.months.map((m, k) => `<tr><td>${m}</td><td>${fmt(g.inside_dli[k], 1)}</td><td>${fmt(g.supplemental_need_dli[k], 1)}</td><td>${fmt(g.hours_per_day[k], 2)}</td><td>${g.dimming_at_photoperiod_pct[k] ? fmt(g.dimming_at_photoperiod_pct[k]) + " %" : "off"}</td><td>${fmt(g.kwh_by_month[k], 1)}</td><td>${fmt(g.cost_by_month[k], 2)}</td></tr>`))}
    <p>Year: ${fmt(g.kwh_year)} kWh, ${fmt(g.cost_year, 2)} ${esc(cur)}.</p>`;
});
$("gh-add").innerHTML = room.zones.filter((z) => !z.greenhouse).map((z) => `<button type="button" data-new-gh="${esc(z.id)}">${esc(z.name)} is under glazing</button>`).join("");
$("gh-add").addEventListener("click", (ev) => {
  const id = ev.target.dataset.newGh;
  if (!id) return;
  save((d) => { d.room.zones.find((q) => q.id === id).greenhouse = { glazing: "glass_single", transmission: null, place: "", latitude_deg: 40, longitude_deg: -75, altitude_m: 0, sky_share: 0.6, outdoor_dli_by_month: null, target_dli: null }; }, `${zoneOf(id).name} under glazing`);
});

// ------------------------------------------------------------ tariff
tariff(page, { $, fmt, esc, clock, table, num, save, banner, DAYS, PLOT });
payback(page, { $, fmt, esc, table, num, save, PLOT });
