// The planner page: check the setup and propose layouts in the background (progress, best so far, cancel),
// apply a proposal against the revision its job started from (a newer room gets a conflict banner), curves.
import { request } from "../lib/api.js";
import { fmt, escapeHtml as esc } from "../lib/format.js";
import * as Units from "../lib/units.js";
import { showFieldError, clearFieldError } from "../lib/fieldmsg.js";

const page = JSON.parse(document.getElementById("page-data").textContent);
const $ = (id) => document.getElementById(id);
const roomId = page.room_id;
const units = page.room_file.room.display_units;
const L = (m) => Units.length(m, units);
const plural = (n, one, many) => `${n} ${n === 1 ? one : many}`;
// The planner's layout lines give the height in cm; the fixture type's own name is left as it is.
const heightsInUnits = (text) => String(text).replace(/(\d+(?:\.\d+)?) cm above the canopy/g, (all, cm) => `${L(Number(cm) / 100)} above the canopy`);
let planJob = null, checkJob = null, lastApplied = null, planResult = null;

// The JSON answer, or an Error with the server's message, status and body (a 409 names the current revision).
async function json(url, opts) {
  const res = await request(url, opts);
  if (!res.ok) {
    const e = new Error((res.body && res.body.message) || `HTTP ${res.status}`);
    e.status = res.status; e.body = res.body; throw e;
  }
  return res.body;
}
const put = (doc) => json(`/api/rooms/${roomId}`, { method: "PUT", body: doc });
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

// One poller for both kinds of job: progress, best so far, done.
async function follow(jobId, onProgress) {
  for (;;) {
    const j = await json(`/api/plan-jobs/${jobId}`);
    onProgress(j);
    if (j.done) return j;
    await sleep(250);
  }
}

// ------------------------------------------------------------ check my setup
function fixItem(f) {
  return `<li>${esc(f.text)}</li>`;
}
function checkReport(r) {
  return r.zones.map((z) => `<div class="proposal"><h3>${esc(z.name)}: ${z.meets_target ? "meets the target" : "misses it"}</h3>
    <p>DLI ${fmt(z.dli_avg, 1)} against ${z.band[0]}–${z.band[1]}; ${fmt(100 * z.dark_share)} % below the band (allowance ${fmt(100 * r.verdict.dark_allowance)} %), ${fmt(100 * z.hot_share)} % above the stress level. Fixtures lighting it: ${esc(z.fixtures.join(", ") || "none")}.</p>
    ${z.fixes.length ? `<ol>${z.fixes.map(fixItem).join("")}</ol>` : ""}
    ${!z.meets_target && !z.fixes.length ? `<p>No checked change found: ${esc(z.no_fix_because.join("; "))}.</p>` : ""}</div>`).join("");
}
$("check-run").addEventListener("click", async () => {
  $("check-message").textContent = "Checking…";
  $("check-report").innerHTML = "";
  try {
    const r = await json(`/api/rooms/${roomId}/check-jobs`, { method: "POST" });
    checkJob = r.job_id; $("check-run").disabled = true; $("check-cancel").disabled = false;
    const j = await follow(checkJob, (p) => {
      $("check-progress").value = p.progress;
      if (!p.done) $("check-message").textContent = `Checking ${p.zone || "the room"}… (${fmt(100 * p.progress)} %)`;
    });
    if (j.cancelled) $("check-message").textContent = "Cancelled.";
    else if (j.error) $("check-message").textContent = j.error;
    else {
      $("check-message").textContent = j.result.meets_target ? "Every zone meets its target." : "Some zones miss their target:";
      $("check-report").innerHTML = checkReport(j.result);
    }
  } catch (e) { $("check-message").textContent = `Not checked: ${e.message}`; }
  $("check-run").disabled = false; $("check-cancel").disabled = true;
});
$("check-cancel").addEventListener("click", async () => { if (checkJob) await json(`/api/plan-jobs/${checkJob}`, { method: "DELETE" }); });

// ------------------------------------------------------------ propose layouts
function card(p, i) {
  const e = p.figures.energy, c = p.cost;
  return `<div class="proposal" data-proposal="${i}"><h3>Layout ${i + 1}: ${plural(p.fixtures, "fixture", "fixtures")}, ${fmt(e.power_w)} W</h3>
    <ul>${p.layouts.map((l) => `<li>${esc(heightsInUnits(l))}</li>`).join("")}</ul>
    <table class="figures"><thead><tr><th>Zone</th><th>PPFD avg / min / max</th><th>min/avg</th><th>DLI (band)</th><th>below band</th></tr></thead><tbody>
    ${p.figures.zones.map((z) => `<tr><td>${esc(z.name)}</td><td>${fmt(z.ppfd.avg)} / ${fmt(z.ppfd.min)} / ${fmt(z.ppfd.max)}</td><td>${fmt(z.ppfd.min_over_avg, 2)}</td><td>${fmt(z.dli.avg, 1)} (${z.target.dli_min}–${z.target.dli_max})</td><td>${fmt(100 * z.dark_share)} %</td></tr>`).join("")}
    </tbody></table>
    <details><summary>Fixtures and circuits</summary>
    <div class="table-wrap"><table class="figures"><thead><tr><th>Name</th><th>Type</th><th>From left, front wall</th><th>Height</th><th>Dimming</th><th>Circuit</th></tr></thead><tbody>
    ${p.fixture_list.map((f) => `<tr><td>${esc(f.name)}</td><td>${esc(f.type)}</td><td>${L(f.x_m)}, ${L(f.y_m)}</td><td>${L(f.hanging_height_m)}</td><td>${fmt(f.dimming_pct)} %</td><td>${esc(f.circuit)}</td></tr>`).join("")}
    </tbody></table></div>
    <p>${p.figures.circuits_at_full.map((k) => `Circuit ${esc(k.name)}: ${fmt(k.full_current_a, 1)} A at 100 % output against ${fmt(k.continuous_limit_a, 1)} A continuous (${k.breaker_a} A breaker)`).join("; ")}. Planning figures only: follow local codes and have a licensed electrician do the wiring.</p></details>
    <p>${fmt(e.kwh_per_month)} kWh/month · ${fmt(e.cost_per_month, 2)} ${esc(e.currency)}/month · ${fmt(p.figures.heat.btu_h)} BTU/h ·
    over ${fmt(c.years, 1)} years: fixtures ${fmt(c.purchase)} + electricity ${fmt(c.energy)} = ${fmt(c.total)} ${esc(c.currency)}${c.unpriced ? ` (${plural(c.unpriced, "fixture", "fixtures")} without a price)` : ""}</p>
    <button type="button" data-apply="${i}">Apply to the room</button></div>`;
}
function progressText(j) {
  const b = j.best_so_far;
  return `Searching ${j.zone || ""}… ${j.found} layouts meet the target so far (${fmt(100 * j.progress)} %)` + (b ? `; best so far: ${b.text} (${fmt(b.power_w)} W).` : ".");
}
// The search's options from the boxes, each refused beside its box (by name, in the room's units) or null.
function planBody(types) {
  let ok = true;
  const num = (id, what, lo, hi, blank) => {
    const box = $(id), text = String(box.value).trim().replace(",", ".");
    if (!text && blank !== undefined && !(box.validity && box.validity.badInput)) { clearFieldError(box); return blank; }
    const v = Number(text);
    if (!text || !Number.isFinite(v) || v < lo || v > hi) { showFieldError(box, `${what} must be a number from ${lo} to ${hi}`, ""); ok = false; return null; }
    clearFieldError(box); return v;
  };
  const len = (id, what, lo, hi) => {
    const box = $(id);
    let m;
    try { m = Units.parseLength(box.value, units); } catch (e) { showFieldError(box, `${what}: ${e.message}`, ""); ok = false; return null; }
    if (m < lo - 1e-9 || m > hi + 1e-9) { showFieldError(box, `${what} must be from ${L(lo)} to ${L(hi)}`, ""); ok = false; return null; }
    clearFieldError(box); return m;
  };
  const body = { type_ids: types, objective: $("objective").value, target: $("target").value,
    years: num("years", "the cost horizon (years)", 0.5, 30),
    min_clearance_m: len("clearance", "the least height above the canopy", 0.02, 3),
    min_gap_m: len("gap", "the least gap", 0, 1) };
  const budget = num("budget", "the power budget (W)", 1, 1e7, null);
  if (budget !== null) body.max_power_w = budget;
  return ok ? body : null;
}
$("plan-run").addEventListener("click", async () => {
  const types = [...document.querySelectorAll("input[name=type]:checked")].map((b) => b.value);
  if (!types.length) { $("plan-message").textContent = "Tick at least one fixture type."; return; }
  const body = planBody(types);
  if (!body) { $("plan-message").textContent = "Not started: correct the box marked above."; return; }
  try {
    const r = await json(`/api/rooms/${roomId}/plan`, { method: "POST", body });
    planJob = r.job_id;
    $("proposals").innerHTML = "";
    $("plan-run").disabled = true; $("plan-cancel").disabled = false;
    const j = await follow(planJob, (p) => { $("plan-progress").value = p.progress; if (!p.done) $("plan-message").textContent = progressText(p); });
    if (j.cancelled) $("plan-message").textContent = "Cancelled.";
    else if (j.error) $("plan-message").textContent = j.error;
    else {
      planResult = j.result;
      const res = j.result;
      $("plan-message").textContent = res.proposals.length
        ? `${res.proposals.length} layouts meet every zone's target (searched in ${fmt(res.elapsed_s, 1)} s, from revision ${res.revision}).`
        : `No layout meets every target${res.unmet_zones.length ? ` (nothing fits ${res.unmet_zones.join(", ")} with these types and a ${L(body.min_gap_m)} gap${res.hanging_grid ? " on the hanging grid" : ""})` : ""}${res.not_offered.length ? `: ${res.not_offered[0]}` : ""}. Try other fixture types, a smaller gap or a larger budget.`;
      if (res.hanging_grid) $("plan-message").textContent += ` ${res.hanging_grid}`;
      $("proposals").innerHTML = res.proposals.map(card).join("");
    }
  } catch (e) { $("plan-message").textContent = `Planner: ${e.message}`; }
  $("plan-run").disabled = false; $("plan-cancel").disabled = true;
});
$("plan-cancel").addEventListener("click", async () => { if (planJob) await json(`/api/plan-jobs/${planJob}`, { method: "DELETE" }); });

// Apply: saved with the revision the job started from, so edits made since are never overwritten silently.
async function apply(i, overRevision) {
  const proposal = planResult.proposals[i];
  const doc = Object.assign({}, proposal.room_file, overRevision === undefined ? {} : { revision: overRevision });
  try {
    const before = await json(`/api/rooms/${roomId}`);
    const saved = await put(doc);
    lastApplied = { before, revision: saved.revision };
    banner(`Layout ${i + 1} applied (revision ${saved.revision}).`, [["Undo", undoApply], ["Open the editor", () => { window.location.href = `/rooms/${roomId}`; }]]);
  } catch (e) {
    if (e.status === 409) {
      const now = e.body && e.body.current_revision;
      banner(`The room was changed since this search started (revision ${planResult.revision}, now ${now}): applying would overwrite those changes.`,
        [["Load theirs", () => { window.location.reload(); }], ["Apply over theirs", () => apply(i, now)], ["Dismiss", hideBanner]]);
    } else banner(`Not applied: ${e.message}`, [["Dismiss", hideBanner]]);
  }
}
$("proposals").addEventListener("click", (ev) => {
  const i = ev.target.getAttribute && ev.target.getAttribute("data-apply");
  if (i !== null && i !== undefined) apply(Number(i));
});
async function undoApply() {
  if (!lastApplied) return;
  try {
    const saved = await put(Object.assign({}, lastApplied.before, { revision: lastApplied.revision }));
    lastApplied = null;
    banner(`Undone: the room is back as it was (revision ${saved.revision}).`, [["Dismiss", hideBanner]]);
  } catch (e) { banner(`Could not undo: ${e.message} (the room was changed since).`, [["Dismiss", hideBanner]]); }
}
function hideBanner() { $("banner").hidden = true; }
function banner(text, actions) {
  const b = $("banner"); b.innerHTML = `<p>${esc(text)}</p>`;
  for (const [label, fn] of actions) { const btn = document.createElement("button"); btn.type = "button"; btn.textContent = label; btn.addEventListener("click", fn); b.appendChild(btn); }
  b.hidden = false;
}

// ------------------------------------------------------------ curves
$("curve-run").addEventListener("click", async () => {
  $("curve-message").textContent = "Computing…";
  try {
    const c = await json(`/api/rooms/${roomId}/curves?zone=${encodeURIComponent($("curve-zone").value)}`);
    $("curve-message").textContent = `${c.zone_name}: fixtures ${c.fixtures.join(", ")}, now ${L(c.current_above_canopy_m)} above the canopy at ${fmt(c.current_dimming_pct)} %. The band is shaded; the red line is the stress level.`;
    const band = { type: "rect", xref: "paper", x0: 0, x1: 1, y0: c.band_ppfd[0], y1: c.band_ppfd[1], fillcolor: "rgba(76,153,92,0.18)", line: { width: 0 } };
    const stress = { type: "line", xref: "paper", x0: 0, x1: 1, y0: c.stress_ppfd, y1: c.stress_ppfd, line: { color: "#d1342b", dash: "dot" } };
    const lay = (title) => ({ height: 280, margin: { l: 50, r: 10, t: 30, b: 42 }, shapes: [band, stress], xaxis: { title: { text: title } },
                              yaxis: { title: { text: "PPFD µmol m⁻² s⁻¹" } }, legend: { orientation: "h", x: 0, y: 1.02, yanchor: "bottom" } });
    const lines = (rows, key, scale = 1) => ["avg", "max", "min"].map((k) => ({ type: "scatter", mode: "lines+markers", name: { avg: "average", max: "peak", min: "lowest" }[k],
      x: rows.map((r) => r[key] * scale), y: rows.map((r) => r[k]) }));
    window.Plotly.react("curve-height", lines(c.heights, "above_canopy_m", units === "imperial" ? 1 / Units.M_PER_IN : 100), lay(`height above canopy (${Units.bareUnit(units)})`), { displaylogo: false });
    window.Plotly.react("curve-dim", lines(c.dimming, "dimming_pct"), lay("dimming of these fixtures (%)"), { displaylogo: false });
  } catch (e) { $("curve-message").textContent = `Not drawn: ${e.message}`; }
});

