// The meter page: enter readings, compare them with the model, fit and apply the output, the fixtures'
// age and maintenance; the fixture card lives in card.js.
import { $, page, roomId, units, len, inputLen, parseLen, ax, axUnit, json, post, failed, zoneName } from "./common.js";
import { fmt, escapeHtml as esc } from "../lib/format.js";
import "./card.js";

let room = page.room_file.room;
let revision = page.room_file.revision;
let lastCompare = null;

function roomChanged(body) {
  room = body.room_file.room; revision = body.room_file.revision;
  page.output_basis = body.output_basis || page.output_basis;
}

// ------------------------------------------------------------ reading sets
function fillSetPick(select) {
  const pick = $("set-pick");
  pick.innerHTML = room.readings.map((r) => `<option value="${esc(r.id)}">${esc(r.id)} · ${esc(zoneName(r.zone_id))} · ${esc(r.taken_on)}</option>`).join("") +
    `<option value="">(a new set)</option>`;
  pick.value = select !== undefined ? select : (room.readings.length ? room.readings[0].id : "");
  loadSet();
}
function showFor(cls, on) { document.querySelectorAll(cls).forEach((el) => { el.hidden = !on; }); }
function syncForm() {
  showFor(".lux-only", $("rs-sensor").value === "lux");
  showFor(".grid-only", $("rs-layout").value === "grid");
  showFor(".points-only", $("rs-layout").value === "points");
}
function loadSet() {
  const r = room.readings.find((q) => q.id === $("set-pick").value);
  $("set-editor").open = !r;
  if (!r) {
    $("rs-id").value = `readings-${room.readings.length + 1}`;
    $("rs-date").value = new Date().toISOString().slice(0, 10);
    $("rs-paste").value = ""; $("rs-notes").value = ""; $("rs-dim").value = "";
    $("rs-ox").value = inputLen(0.1524); $("rs-oy").value = inputLen(0.1524);
    $("rs-sx").value = inputLen(units === "imperial" ? 0.3048 : 0.3); $("rs-sy").value = $("rs-sx").value;
    syncForm();
    return;
  }
  $("rs-id").value = r.id; $("rs-zone").value = r.zone_id; $("rs-date").value = r.taken_on;
  $("rs-sensor").value = r.sensor; $("rs-lux").value = r.lux_per_ppfd || "";
  $("rs-dim").value = r.dimming_pct === null || r.dimming_pct === undefined ? "" : r.dimming_pct;
  $("rs-notes").value = r.notes || "";
  if (r.grid) {
    $("rs-layout").value = "grid";
    $("rs-ox").value = inputLen(r.grid.origin_x_m); $("rs-oy").value = inputLen(r.grid.origin_y_m);
    $("rs-sx").value = inputLen(r.grid.spacing_x_m); $("rs-sy").value = inputLen(r.grid.spacing_y_m);
    $("rs-paste").value = r.grid.values.map((row) => row.map((v) => (v === null ? "-" : v)).join("\t")).join("\n");
  } else {
    $("rs-layout").value = "points";
    $("rs-paste").value = r.points.map((p) => `${inputLen(p.x_m)}\t${inputLen(p.y_m)}\t${p.value}`).join("\n");
  }
  syncForm();
}
function cells(line) {
  const t = line.includes("\t") ? line.split("\t") : line.includes(";") ? line.split(";") : line.includes(",") ? line.split(",") : line.trim().split(/\s+/);
  return t.map((c) => c.trim());
}
function number(text, where) {
  const v = Number(text.replace(/\s/g, ""));
  if (text === "" || !isFinite(v)) throw new Error(`${where}: “${text}” is not a number`);
  return v;
}
// The room file's rules for a reading set (app/room/meter_models.py), said with the box's name before sending.
const SET_NAME = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$/;
function within(v, lo, hi, what) {
  if (v < lo || v > hi) throw new Error(`${what} must be from ${lo} to ${hi}`);
  return v;
}
function reading(text, where) {
  const v = number(text, where);
  if (v < 0) throw new Error(`${where}: a reading cannot be negative`);
  return v;
}
function readForm() {
  const lines = $("rs-paste").value.split(/\r?\n/).filter((l) => l.trim() !== "");
  if (!lines.length) throw new Error("paste the readings first");
  const set = { id: $("rs-id").value.trim(), zone_id: $("rs-zone").value, taken_on: $("rs-date").value, sensor: $("rs-sensor").value, notes: $("rs-notes").value };
  if (!SET_NAME.test(set.id)) throw new Error("the name must start with a letter or digit and hold only letters, digits, -, _ or . (at most 40)");
  if (!set.taken_on) throw new Error("enter the date the readings were taken");
  if (set.sensor === "lux") {
    set.lux_per_ppfd = number($("rs-lux").value, "lux per µmol m⁻² s⁻¹");
    if (!(set.lux_per_ppfd > 1 && set.lux_per_ppfd <= 200)) throw new Error("lux per µmol m⁻² s⁻¹ must be above 1 and at most 200");
    const preset = page.lux_presets.find((p) => p.id === $("rs-lux-preset").value);
    set.lux_factor_source = preset && preset.lux_per_ppfd === set.lux_per_ppfd ? `${preset.label}, ${preset.source}` : "entered by the grower";
  }
  if ($("rs-dim").value !== "") set.dimming_pct = within(number($("rs-dim").value, "dimming"), 10, 100, "the dimming when read (%)");
  if ($("rs-layout").value === "grid") {
    const rows = lines.map((l, r) => cells(l).map((c, k) => (c === "" || c === "-" ? null : reading(c, `row ${r + 1}, column ${k + 1}`))));
    const L = (id, what, positive) => {
      let m;
      try { m = parseLen($(id).value); } catch (e) { throw new Error(`${what}: ${e.message}`); }
      if (positive ? !(m > 0) : m < 0) throw new Error(`${what} must be ${positive ? "more than zero" : "zero or more"}`);
      return m;
    };
    set.grid = { origin_x_m: L("rs-ox", "the first reading from the left wall"), origin_y_m: L("rs-oy", "the first reading from the front wall"),
      spacing_x_m: L("rs-sx", "the spacing across", true), spacing_y_m: L("rs-sy", "the spacing front to back", true), values: rows };
  } else {
    set.points = lines.map((l, i) => {
      const c = cells(l);
      if (c.length < 3) throw new Error(`line ${i + 1}: expected x, y and a value`);
      const at = (text, what) => { try { return parseLen(text); } catch (e) { throw new Error(`line ${i + 1}, ${what}: ${e.message}`); } };
      return { x_m: at(c[0], "x"), y_m: at(c[1], "y"), value: reading(c[2], `line ${i + 1}`) };
    });
  }
  return set;
}
$("rs-sensor").addEventListener("change", syncForm);
$("rs-layout").addEventListener("change", syncForm);
$("set-pick").addEventListener("change", loadSet);
$("rs-lux-preset").innerHTML = page.lux_presets.map((p) => `<option value="${p.id}">${esc(p.label)}: ${p.lux_per_ppfd}</option>`).join("");
$("rs-lux-preset").addEventListener("change", () => { const p = page.lux_presets.find((q) => q.id === $("rs-lux-preset").value); if (p) $("rs-lux").value = p.lux_per_ppfd; });
$("rs-save").addEventListener("click", async () => {
  let set;
  try { set = readForm(); } catch (e) { $("rs-message").textContent = `Not saved: ${e.message}`; return; }
  try {
    const body = await post(`/api/rooms/${roomId}/readings`, { revision, reading_set: set });
    roomChanged(body);
    fillSetPick(set.id);
    $("rs-message").textContent = `Saved ${set.id} (revision ${revision}).`;
  } catch (e) {
    const more = e.problems.length > 1 ? ` (${e.problems.map((p) => p.message).slice(1, 4).join("; ")})` : "";
    failed($("rs-message"), "Not saved", { ...e, message: e.message + more, status: e.status });
  }
});
$("rs-delete").addEventListener("click", async () => {
  const id = $("set-pick").value;
  if (!id) { $("rs-message").textContent = "Nothing to delete: this set is not saved yet (pick a saved set above)."; return; }
  try {
    const body = await json(`/api/rooms/${roomId}/readings/${encodeURIComponent(id)}?revision=${revision}`, { method: "DELETE" });
    roomChanged(body); fillSetPick();
    $("rs-message").textContent = `Deleted ${id}.`;
  } catch (e) { failed($("rs-message"), "Not deleted", e); }
});

// ------------------------------------------------------------ compare
const diverging = [[0, "#2166ac"], [0.5, "#f7f7f7"], [1, "#b2182b"]];
// The colour scale spans the readings that are not outliers, so one slip does not wash out the rest.
function colourLimit(r) {
  const kept = r.points.filter((p) => !p.outlier && p.diff_pct !== null).map((p) => Math.abs(p.diff_pct));
  return Math.max(5, ...kept);
}
function planFigure(r) {
  const z = room.zones.find((q) => q.id === r.zone_id);
  const shapes = room.zones.map((q) => ({ type: "rect", x0: ax(q.x_m), y0: ax(q.y_m), x1: ax(q.x_m + q.width_m), y1: ax(q.y_m + q.length_m),
    line: { color: q.id === r.zone_id ? "#333" : "#bbb", width: q.id === r.zone_id ? 2 : 1 } }));
  shapes.push({ type: "rect", x0: 0, y0: 0, x1: ax(room.width_m), y1: ax(room.length_m), line: { color: "#888", dash: "dot" } });
  const pts = r.points;
  const lim = colourLimit(r);
  const traces = [
    { type: "scatter", mode: "markers", name: "fixtures", x: room.fixtures.map((f) => ax(f.x_m)), y: room.fixtures.map((f) => ax(f.y_m)),
      marker: { symbol: "square", size: 9, color: "#444" }, text: room.fixtures.map((f) => f.id), hoverinfo: "text" },
    { type: "scatter", mode: "markers", name: "readings", x: pts.map((p) => ax(p.x_m)), y: pts.map((p) => ax(p.y_m)),
      marker: { size: 13, color: pts.map((p) => p.diff_pct), cmin: -lim, cmax: lim, colorscale: diverging, line: { color: pts.map((p) => (p.outlier ? "#000" : "#999")), width: pts.map((p) => (p.outlier ? 3 : 1)) },
        symbol: pts.map((p) => (p.outlier ? "x" : "circle")), colorbar: { title: { text: "measured − model, %" } } },
      text: pts.map((p) => `${fmt(p.measured)} measured, ${fmt(p.model)} model: ${fmt(p.diff_umol)} µmol m⁻² s⁻¹ (${fmt(p.diff_pct, 1)} %)${p.outlier ? " · outlier" : ""}`), hoverinfo: "text" },
  ];
  const layout = { title: { text: `On the plan: ${esc(z ? z.name : r.zone_id)}`, font: { size: 13 } }, shapes, showlegend: false, margin: { l: 45, r: 10, t: 30, b: 40 },
    xaxis: { title: { text: axUnit }, range: [0, ax(room.width_m)] }, yaxis: { title: { text: axUnit }, range: [0, ax(room.length_m)], scaleanchor: "x" } };
  return { traces, layout };
}
function mapFigure(r) {
  const rs = r.reading_set;
  if (rs.grid) {
    const rows = rs.grid.values.length, cols = rs.grid.values[0].length;
    const z = Array.from({ length: rows }, () => Array(cols).fill(null));
    const t = Array.from({ length: rows }, () => Array(cols).fill(""));
    r.points.forEach((p) => { z[p.row][p.col] = p.diff_pct; t[p.row][p.col] = `${fmt(p.diff_umol)} µmol m⁻² s⁻¹`; });
    const xs = [...Array(cols).keys()].map((c) => ax(rs.grid.origin_x_m + c * rs.grid.spacing_x_m));
    const ys = [...Array(rows).keys()].map((k) => ax(rs.grid.origin_y_m + k * rs.grid.spacing_y_m));
    const lim = colourLimit(r);
    return { traces: [{ type: "heatmap", x: xs, y: ys, z, text: t, zmin: -lim, zmax: lim, colorscale: diverging, texttemplate: "%{z:.0f} %", hovertemplate: "%{z:.1f} % · %{text}<extra></extra>", colorbar: { title: { text: "%" } } }],
      layout: { title: { text: "Residual map (measured − model, %)", font: { size: 13 } }, margin: { l: 45, r: 10, t: 30, b: 40 }, xaxis: { title: { text: axUnit } }, yaxis: { title: { text: axUnit }, scaleanchor: "x" } } };
  }
  return { traces: [{ type: "bar", x: r.points.map((p, i) => `#${i + 1}`), y: r.points.map((p) => p.diff_umol), marker: { color: r.points.map((p) => (p.outlier ? "#000" : p.diff_umol < 0 ? "#2166ac" : "#b2182b")) } }],
    layout: { title: { text: "Measured − model per reading (µmol m⁻² s⁻¹)", font: { size: 13 } }, margin: { l: 45, r: 10, t: 30, b: 40 } } };
}
function renderCompare(r) {
  lastCompare = r;
  const f = r.fit;
  const w = r.worst_index !== null ? r.points[r.worst_index] : null;
  const outl = r.points.map((p, i) => (p.outlier ? i : -1)).filter((i) => i >= 0);
  const factors = f.error ? `<p class="warning">No fit: ${esc(f.error)}</p>` : `<table class="figures" id="fit-table"><thead><tr><th>Fitted</th><th>Output factor</th><th>Standard error</th></tr></thead><tbody>${
    f.factors.map((k) => `<tr><td>${esc(k.label)}</td><td>${fmt(k.factor, 3)}</td><td>${k.std_error === null ? "– (as many readings as unknowns)" : `± ${fmt(k.std_error, 4)}`}</td></tr>`).join("")}</tbody></table>
    <p class="small">Least squares over ${f.used_points} readings${f.left_out ? `, ${f.left_out} outlier(s) left out` : ""}; residual RMS after the fit ${fmt(f.residual_rms_umol, 1)} µmol m⁻² s⁻¹.</p>`;
  $("compare-figures").innerHTML = `<ul class="figures-list">
    <li>Average measured <b>${fmt(r.measured_avg)}</b>, model <b>${fmt(r.model_avg)}</b> µmol m⁻² s⁻¹ (mean difference ${fmt(r.mean_pct, 1)} %)</li>
    <li id="rms">RMS difference <b>${fmt(r.rms_umol, 1)}</b> µmol m⁻² s⁻¹ (${fmt(r.rms_pct, 1)} %)</li>
    <li>Worst reading: ${w ? `#${r.worst_index + 1} at ${len(w.x_m)}, ${len(w.y_m)}: ${fmt(w.measured)} measured against ${fmt(w.model)} (${fmt(w.diff_pct, 1)} %)` : "–"}</li>
    <li id="outliers">Outliers (more than ${r.outlier_factor}× off their neighbours and the model): ${outl.length ? outl.map((i) => `#${i + 1}`).join(", ") : "none"}</li></ul>${factors}`;
  $("compare-table").innerHTML = `<table class="figures"><thead><tr><th>#</th><th>x</th><th>y</th><th>Meter</th><th>Measured</th><th>Model</th><th>Difference</th><th>%</th></tr></thead><tbody>${
    r.points.map((p, i) => `<tr${p.outlier ? ' class="outlier"' : ""}><td>${i + 1}</td><td>${len(p.x_m)}</td><td>${len(p.y_m)}</td><td>${fmt(p.raw)}${r.reading_set.sensor === "lux" ? " lx" : ""}</td><td>${fmt(p.measured)}</td><td>${fmt(p.model)}</td><td>${fmt(p.diff_umol)}</td><td>${fmt(p.diff_pct, 1)}</td></tr>`).join("")}</tbody></table>`;
  const a = planFigure(r), b = mapFigure(r);
  window.Plotly.react("residual-plan", a.traces, a.layout, { displaylogo: false, responsive: true });
  window.Plotly.react("residual-map", b.traces, b.layout, { displaylogo: false, responsive: true });
  $("apply-fit").disabled = !!f.error || !f.factors.length;
}
$("compare-run").addEventListener("click", async () => {
  const id = $("set-pick").value;
  if (!id) { $("compare-message").textContent = "Save a reading set first."; return; }
  $("compare-message").textContent = "Comparing…";
  try {
    const q = new URLSearchParams({ fit: $("fit-kind").value, outlier_factor: $("outlier-factor").value || "1.3" });
    renderCompare(await json(`/api/rooms/${roomId}/readings/${encodeURIComponent(id)}/compare?${q}`));
    $("compare-message").textContent = `${lastCompare.points.length} readings compared with the model (${page.output_basis.words}).`;
  } catch (e) { failed($("compare-message"), "Not compared", e); }
});
$("apply-fit").addEventListener("click", async () => {
  const id = $("set-pick").value;
  try {
    const body = await post(`/api/rooms/${roomId}/readings/${encodeURIComponent(id)}/apply`, { revision, fit: $("fit-kind").value });
    roomChanged(body);
    $("apply-message").textContent = body.changed.map((c) => `${c.type_id}: ${fmt(c.old_ppf_umol_s)} → ${fmt(c.new_ppf_umol_s)} µmol/s`).join("; ") + ` (saved, revision ${revision}).`;
    $("apply-fit").disabled = true;
  } catch (e) { failed($("apply-message"), "Not applied", e); }
});

// ------------------------------------------------------------ maintained output
function fillAge() {
  const a = room.output_age || {};
  const keep = $("mp-type").value;
  $("mp-type").innerHTML = room.fixture_types.map((t) => `<option value="${esc(t.id)}">${esc(t.name)}</option>`).join("");
  if (keep) $("mp-type").value = keep;
  $("age-hours").value = a.hours_in_service_h === null || a.hours_in_service_h === undefined ? "" : a.hours_in_service_h;
  $("age-dirt").value = a.dirt_factor === undefined ? 1 : a.dirt_factor;
  $("age-shown").value = a.shown_at || "recorded_age";
  $("age-chosen").value = a.chosen_age_h === null || a.chosen_age_h === undefined ? "" : a.chosen_age_h;
  const basis = Object.fromEntries(page.output_basis.types.map((b) => [b.type_id, b]));
  $("maint-table").querySelector("tbody").innerHTML = room.fixture_types.map((t) => {
    const m = t.maintenance || {};
    const b = basis[t.id] || { factor: 1, source: "" };
    const measured = m.points && m.points.length;
    const shown = `${fmt(100 * b.factor, 1)} % of rated${b.beyond_limit ? " (held at the projection limit)" : ""}${b.l70_h ? `; L70 ${b.l70_capped ? "> " : ""}${fmt(b.l70_h)} h` : ""}`;
    return `<tr data-type="${esc(t.id)}"><td>${esc(t.name)}</td><td>${measured ? `measured points (${m.points.length}), kept <label><input type="checkbox" class="m-clear"> clear</label>` :
      `L <input class="m-pct" type="number" min="1" max="99" step="1" value="${m.rated_percent || ""}" aria-label="${esc(t.name)} rated percent"> at <input class="m-hours" type="number" min="1" step="1000" value="${m.rated_hours_h || ""}" aria-label="${esc(t.name)} rated hours"> h`}</td>
      <td><input class="m-test" type="number" min="1" step="1000" value="${m.test_duration_h || ""}" aria-label="${esc(t.name)} test duration" ${measured ? "disabled" : ""}></td>
      <td><input class="m-source" maxlength="300" value="${esc(m.source || "")}" aria-label="${esc(t.name)} source"></td><td title="${esc(b.source)}">${shown}</td></tr>`;
  }).join("");
}
$("age-save").addEventListener("click", async () => {
  const num = (v) => (v === "" ? null : Number(v));
  const output_age = { hours_in_service_h: num($("age-hours").value), dirt_factor: num($("age-dirt").value) ?? 1, shown_at: $("age-shown").value, chosen_age_h: num($("age-chosen").value) };
  const maintenance = {};
  document.querySelectorAll("#maint-table tbody tr").forEach((tr) => {
    const t = room.fixture_types.find((q) => q.id === tr.dataset.type);
    if (t.maintenance && t.maintenance.points && t.maintenance.points.length) {
      maintenance[t.id] = tr.querySelector(".m-clear").checked ? null : { ...t.maintenance, source: tr.querySelector(".m-source").value };
      return;
    }
    const pct = num(tr.querySelector(".m-pct").value), hours = num(tr.querySelector(".m-hours").value);
    maintenance[t.id] = pct === null && hours === null ? null : { rated_percent: pct, rated_hours_h: hours, test_duration_h: num(tr.querySelector(".m-test").value), source: tr.querySelector(".m-source").value };
  });
  const pasted = $("mp-paste").value.split(/\r?\n/).filter((l) => l.trim() !== "");
  if (pasted.length) {
    try {
      const points = pasted.map((l, i) => {
        const c = cells(l);
        if (c.length < 2) throw new Error(`line ${i + 1}: expected hours and a %`);
        return { hours_h: number(c[0], `line ${i + 1}`), share: number(c[1].replace("%", ""), `line ${i + 1}`) / 100 };
      });
      const tid = $("mp-type").value;
      const tr = document.querySelector(`#maint-table tr[data-type="${CSS.escape(tid)}"]`);
      maintenance[tid] = { points, source: tr ? tr.querySelector(".m-source").value : "" };
    } catch (e) { $("age-message").textContent = `Not saved: ${e.message}`; return; }
  }
  try {
    const body = await post(`/api/rooms/${roomId}/output-age`, { revision, output_age, maintenance });
    roomChanged(body); fillAge(); $("mp-paste").value = "";
    $("age-message").textContent = `Saved: every figure is now shown ${body.output_basis.words}.`;
  } catch (e) { failed($("age-message"), "Not saved", e); }
});

fillSetPick();
fillAge();
