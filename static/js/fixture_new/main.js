// New fixture type: from a photometric file or a published PPFD map; spectrum figures; add to a room.
import { request } from "../lib/api.js";
import * as Units from "../lib/units.js";
import { fmt, escapeHtml as esc } from "../lib/format.js";
import { showFieldError, clearFieldError } from "../lib/fieldmsg.js";

const $ = (id) => document.getElementById(id);
let units = "imperial";
let ftype = null;   // the fixture type ready to add
let spectrum = null; // figures of the last spectrum

function say(id, text, bad) { $(id).textContent = text; $(id).className = bad ? "error" : "ok"; }
// The JSON answer, or an Error carrying the server's message.
async function call(url, opts = {}) {
const res = await request(url, opts);
if (!res.ok) throw new Error((res.body && res.body.message) || `HTTP ${res.status}`);
return res.body;
}
const post = (url, body, headers) => call(url, { method: "POST", body, headers });
function offer(t) {
  ftype = t;
  $("ftype-json").textContent = JSON.stringify(t, null, 1);
  $("add-none").hidden = true;
  $("add-fields").hidden = false;
}
for (const r of document.querySelectorAll("input[name=units]")) r.addEventListener("change", () => { units = r.value; });

// ------------------------------------------------------------ photometric file
$("ph-read").addEventListener("click", () => {
  const file = $("ph-file").files[0];
  if (!file) return say("ph-message", "Choose a .ies or .ldt file first.", true);
  const kind = /\.ldt$/i.test(file.name) ? "ldt" : "ies";
  const unit = document.querySelector("input[name=ph-unit]:checked").value;
  const params = new URLSearchParams({ kind, flux_unit: unit });
  const factor = parseFloat($("ph-factor").value) || (spectrum ? spectrum.umol_per_lumen : NaN);
  if (unit === "lumen" && isFinite(factor)) params.set("umol_per_lumen", factor);
  if ($("ph-power").value) params.set("power_w", $("ph-power").value);
  if ($("ph-name").value) params.set("name", $("ph-name").value);
  const reader = new FileReader();
  reader.onload = async () => {
    try {
      const out = await post(`/api/photometry/import?${params}`, reader.result, { "Content-Type": "application/octet-stream" });
      const r = out.report;
      say("ph-message", `Read ${file.name}.`, false);
      $("ph-report").innerHTML = `<table class="figures"><tbody>
        <tr><th scope="row">Total flux by the zonal method</th><td>${fmt(r.zonal_flux)} ${r.flux_unit === "photon" ? "µmol/s" : "lm"}</td></tr>
        <tr><th scope="row">Flux the file declares</th><td>${r.declared_flux ? fmt(r.declared_flux) : "none (absolute photometry)"}${r.zonal_over_declared ? ` · zonal/declared ${fmt(r.zonal_over_declared, 3)}` : ""}</td></tr>
        <tr><th scope="row">Downward share (towards the canopy when hung level)</th><td>${fmt(100 * r.downward_share, 1)} %</td></tr>
        <tr><th scope="row">Upward share (lights the walls and ceiling)</th><td>${fmt(100 * r.upward_share, 1)} %</td></tr>
        <tr><th scope="row">PPF of the fixture type</th><td>${fmt(r.ppf_umol_s)} µmol/s · ${fmt(r.umol_per_j, 2)} µmol/J</td></tr>
        <tr><th scope="row">Notes</th><td>${r.notes.map(esc).join("; ")}</td></tr></tbody></table>
        <ul class="warnings">${r.findings.map((x) => `<li class="${x.level}"><strong>${x.level}</strong> ${esc(x.message)}</li>`).join("")}</ul>`;
      const b = out.fixture_type.beam;
      const traces = b.azimuth_deg.filter((a, i) => i === 0 || Math.abs(a - 90) < 1e-6).map((a) => ({
        type: "scatter", mode: "lines", name: `plane ${a}°`, x: b.polar_deg,
        y: b.relative_intensity[b.azimuth_deg.indexOf(a)],
      }));
      window.Plotly.react("ph-plot", traces, { height: 260, margin: { l: 50, r: 10, t: 10, b: 40 },
        xaxis: { title: { text: "angle from nadir (°)" } }, yaxis: { title: { text: "intensity" } } }, { displaylogo: false });
      offer(out.fixture_type);
    } catch (e) { say("ph-message", `${file.name} was not read: ${e.message}`, true); }
  };
  reader.readAsText(file);
});

// ------------------------------------------------------------ PPFD map
function readGrid(text) {
  const rows = text.trim().split(/\n+/).map((line) => line.trim().split(/[\s,;]+/).filter(Boolean).map(Number));
  rows.forEach((r, i) => { if (r.some((v) => !isFinite(v) || v < 0)) throw new Error(`row ${i + 1}: readings must be numbers ≥ 0`); });
  if (rows.length < 3 || new Set(rows.map((r) => r.length)).size !== 1 || rows[0].length < 3) {
    throw new Error("paste at least 3 rows of 3 readings, every row the same length");
  }
  return rows;
}
// Each box read on its own: a refused one is explained beside it, by name; null when any was refused.
function fitBody() {
  let ok = true;
  const refuse = (id, text) => { showFieldError($(id), text, ""); ok = false; return null; };
  const field = (id, read) => { try { const v = read($(id)); clearFieldError($(id)); return v; } catch (e) { return refuse(id, e.message); } };
  const len = (what) => (box) => {
    const m = Units.parseLength(box.value, units);
    if (!(m > 0)) throw new Error(`${what} must be more than zero`);
    return m;
  };
  const optional = (what) => (box) => {
    const text = String(box.value).trim();
    if (box.validity && box.validity.badInput) throw new Error(`${what} must be a number above zero, or left blank`);
    if (!text) return null;
    const v = Number(text.replace(",", "."));
    if (!Number.isFinite(v) || v <= 0) throw new Error(`${what} must be a number above zero, or left blank`);
    return v;
  };
  const body = { readings: field("fit-readings", (box) => readGrid(box.value)),
                 cell_m: field("fit-cell", len("the distance between readings")),
                 hanging_height_m: field("fit-height", len("the hanging height above the map")) };
  const ppf = field("fit-ppf", optional("the claimed PPF (µmol/s)")), power = field("fit-power", optional("the claimed power (W)"));
  if (ppf !== null) body.claimed_ppf_umol_s = ppf;
  if (power !== null) body.power_w = power;
  return ok ? body : null;
}
$("fit-run").addEventListener("click", async () => {
  const body = fitBody();
  if (!body) return say("fit-message", "Not fitted: correct the box marked above.", true);
  if (spectrum) body.ceiling_umol_j = spectrum.ceiling_umol_j;
  say("fit-message", "Fitting…", false);
  try {
    const out = await post("/api/photometry/fit", body);
    const f = out.fit;
    say("fit-message", `Fitted: the map's RMS error is ${fmt(100 * f.rms_error, 1)} % of its mean.`, false);
    $("fit-findings").innerHTML = out.findings.map((x) => `<li class="${x.level}"><strong>${x.level}</strong> ${esc(Units.localise(x.message, units))}</li>`).join("");
    $("fit-report").innerHTML = `<table class="figures"><tbody>
      <tr><th scope="row">PPF that fits the map</th><td>${fmt(f.ppf_umol_s)} µmol/s</td></tr>
      <tr><th scope="row">Beam angle (cosⁿ, half intensity)</th><td>${fmt(f.beam_angle_deg)}° (n = ${fmt(f.exponent, 2)})</td></tr>
      <tr><th scope="row">Emitting area (square side)</th><td>${Units.length(f.side_m, units)}</td></tr>
      <tr><th scope="row">Largest error in a cell</th><td>${fmt(f.max_abs_error_umol_m2_s, 1)} µmol m⁻² s⁻¹</td></tr></tbody></table>
      <table class="figures"><caption>The fitted fixture at other heights</caption><thead><tr><th>Height</th><th>Average</th><th>Centre</th><th>Peak</th></tr></thead><tbody>
      ${out.predictions.map((p) => `<tr><td>${Units.length(p.height_m, units)}</td><td>${fmt(p.avg)}</td><td>${fmt(p.centre)}</td><td>${fmt(p.max)}</td></tr>`).join("")}</tbody></table>`;
    window.Plotly.react("fit-resid", [{ type: "heatmap", z: f.residuals, colorscale: "RdBu", zmid: 0, colorbar: { title: { text: "reading − fit" } } }],
      { height: 260, margin: { l: 30, r: 10, t: 24, b: 30 }, title: { text: "Residual per cell", font: { size: 12 } }, yaxis: { scaleanchor: "x" } }, { displaylogo: false });
    window.Plotly.react("fit-heights", [
      { type: "scatter", mode: "lines+markers", name: "average", x: out.predictions.map((p) => Units.axisValue(p.height_m, units)), y: out.predictions.map((p) => p.avg) },
      { type: "scatter", mode: "lines+markers", name: "centre", x: out.predictions.map((p) => Units.axisValue(p.height_m, units)), y: out.predictions.map((p) => p.centre) },
    ], { height: 260, margin: { l: 50, r: 10, t: 24, b: 40 }, title: { text: "PPFD over the map area", font: { size: 12 } },
         xaxis: { title: { text: `hanging height (${Units.axisUnit(units)})` } } }, { displaylogo: false });
    // The type carries the PPF that fits the map (the map is what was measured); power is never guessed.
    const ppf = f.ppf_umol_s;
    if (!body.power_w) {
      $("add-none").hidden = false;
      $("add-fields").hidden = true;
      $("add-none").textContent = "Enter the fixture's claimed input power (W) and fit again to add it as a type: Leafcast does not guess the power, so its µmol/J stays unknown.";
      return;
    }
    offer({ id: "fitted-map", name: "Fitted from a PPFD map",
            geometry: f.side_m > 0.005 ? { kind: "panel", length_m: +f.side_m.toFixed(4), width_m: +f.side_m.toFixed(4) } : { kind: "point" },
            beam: { kind: "cosine_power", beam_angle_deg: +Math.min(170, Math.max(10, f.beam_angle_deg)).toFixed(2) },
            ppf_umol_s: +ppf.toFixed(1), power_w: body.power_w, weight_kg: null,
            notes: `Fitted to a ${body.readings.length} × ${body.readings[0].length} PPFD map (RMS error ${fmt(100 * f.rms_error, 1)} %); PPF from the fit` +
                   (body.claimed_ppf_umol_s ? `, ${fmt(body.claimed_ppf_umol_s)} µmol/s claimed.` : ".") });
  } catch (e) { say("fit-message", `Not fitted: ${e.message}`, true); }
});

// ------------------------------------------------------------ spectrum
async function runSpectrum(body) {
  try {
    spectrum = await post("/api/photometry/spectrum", body);
    const s = spectrum;
    say("spec-message", "Spectrum read; its figures are used by the file import and the map check above.", false);
    $("spec-report").innerHTML = `<table class="figures"><tbody>
      <tr><th scope="row">Photons 400–500 / 500–600 / 600–700 nm</th><td>${fmt(100 * s.blue_400_500, 1)} / ${fmt(100 * s.green_500_600, 1)} / ${fmt(100 * s.red_600_700, 1)} % of PPF</td></tr>
      <tr><th scope="row">Far red 700–750 nm</th><td>${fmt(100 * s.far_red_700_750, 1)} % of PPF (not counted in PPF)</td></tr>
      <tr><th scope="row">Photon ceiling (a perfectly efficient source)</th><td>${fmt(s.ceiling_umol_j, 2)} µmol/J of PAR photons per radiant watt</td></tr>
      <tr><th scope="row">Lux meter conversion</th><td>1 µmol m⁻² s⁻¹ = ${fmt(s.lux_per_ppfd, 1)} lux · 1,000 lux = ${fmt(s.ppfd_per_klux, 1)} µmol m⁻² s⁻¹ · ${fmt(s.umol_per_lumen, 4)} µmol per lumen</td></tr></tbody></table>`;
  } catch (e) { say("spec-message", `Not read: ${e.message}`, true); }
}
$("spec-csv-run").addEventListener("click", () => runSpectrum({ csv: $("spec-csv").value }));
$("spec-mix-run").addEventListener("click", () => {
  const v = (id) => Math.max(0, parseFloat($(id).value) || 0);
  const white = v("spec-white");
  const peaks = [
    { nm: 450, fwhm_nm: 20, weight: v("spec-blue") + 0.3 * white },
    { nm: 660, fwhm_nm: 20, weight: v("spec-red") },
    { nm: 580, fwhm_nm: 120, weight: 0.7 * white },
    { nm: 730, fwhm_nm: 25, weight: v("spec-fr") },
  ].filter((p) => p.weight > 0);
  runSpectrum({ peaks });
});

// ------------------------------------------------------------ add to a room
$("add-go").addEventListener("click", async () => {
  const roomId = $("add-room").value;
  if (!ftype || !roomId) return;
  try {
    const doc = await call(`/api/rooms/${roomId}`);
    const taken = new Set(doc.room.fixture_types.map((t) => t.id));
    const t = Object.assign({}, ftype);
    let k = 2;
    while (taken.has(t.id)) t.id = `${ftype.id}-${k++}`.slice(0, 40);
    doc.room.fixture_types.push(t);
    const res = await fetch(`/api/rooms/${roomId}`, { method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify(doc) });
    const out = await res.json();
    if (!res.ok) throw new Error(out.message);
    $("add-message").innerHTML = `Added as “${esc(t.name)}” (${esc(t.id)}). <a href="/rooms/${roomId}">Open the room</a> and pick it under “Add a fixture”.`;
  } catch (e) { say("add-message", `Not added: ${e.message}`, true); }
});

