// The planner page: check the setup, propose layouts in the background (progress, cancel), apply one, curves.
"use strict";
(function () {
  const page = JSON.parse(document.getElementById("page-data").textContent);
  const $ = (id) => document.getElementById(id);
  const roomId = page.room_id;
  const fmt = (v, d = 0) => (v === null || v === undefined || !isFinite(v) ? "–" : Number(v).toFixed(d));
  const esc = (s) => String(s).replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" }[c]));
  let job = null, timer = null, lastApplied = null;

  async function json(url, opts) {
    const res = await fetch(url, opts);
    const body = await res.json().catch(() => ({ message: res.statusText }));
    if (!res.ok) { const e = new Error(body.message || res.statusText); e.status = res.status; throw e; }
    return body;
  }

  // ------------------------------------------------------------ check my setup
  $("check-run").addEventListener("click", async () => {
    $("check-message").textContent = "Checking…";
    try {
      const r = await json(`/api/rooms/${roomId}/check`);
      $("check-message").textContent = r.meets_target ? "Every zone meets its target." : "Some zones miss their target:";
      $("check-report").innerHTML = r.zones.map((z) => `<div class="proposal"><h3>${esc(z.name)}: ${z.meets_target ? "meets the target" : "misses it"}</h3>
        <p>DLI ${fmt(z.dli_avg, 1)} against ${z.band[0]}–${z.band[1]}; ${fmt(100 * z.dark_share)} % below the band, ${fmt(100 * z.hot_share)} % above the stress level.</p>
        ${z.fixes.length ? `<ol>${z.fixes.map((f) => `<li>${esc(f.text)}</li>`).join("")}</ol>` : ""}</div>`).join("");
    } catch (e) { $("check-message").textContent = `Not checked: ${e.message}`; }
  });

  // ------------------------------------------------------------ propose layouts
  function card(p, i) {
    const e = p.figures.energy;
    return `<div class="proposal" data-proposal="${i}"><h3>Layout ${i + 1}: ${p.fixtures} fixtures, ${fmt(e.power_w)} W</h3>
      <ul>${p.layouts.map((l) => `<li>${esc(l)}</li>`).join("")}</ul>
      <table class="figures"><thead><tr><th>Zone</th><th>PPFD avg / min / max</th><th>min/avg</th><th>DLI (band)</th></tr></thead><tbody>
      ${p.figures.zones.map((z) => `<tr><td>${esc(z.name)}</td><td>${fmt(z.ppfd.avg)} / ${fmt(z.ppfd.min)} / ${fmt(z.ppfd.max)}</td><td>${fmt(z.ppfd.min_over_avg, 2)}</td><td>${fmt(z.dli.avg, 1)} (${z.target.dli_min}–${z.target.dli_max})</td></tr>`).join("")}
      </tbody></table>
      <p>${fmt(e.kwh_per_month)} kWh/month · ${fmt(e.cost_per_month, 2)} ${esc(e.currency)}/month · ${fmt(p.figures.heat.btu_h)} BTU/h</p>
      <button type="button" data-apply="${i}">Apply to the room</button></div>`;
  }
  async function poll() {
    try {
      const j = await json(`/api/plan-jobs/${job}`);
      $("plan-progress").value = j.progress;
      $("plan-message").textContent = j.done ? "" : `Searching ${j.zone}… ${j.found} layouts meet the target so far (${fmt(100 * j.progress)} %)` +
        (j.best_so_far ? `; best so far: ${j.best_so_far}.` : ".");
      if (!j.done) { timer = setTimeout(poll, 300); return; }
      $("plan-cancel").disabled = true; $("plan-run").disabled = false;
      if (j.cancelled) { $("plan-message").textContent = "Cancelled."; return; }
      if (j.error) { $("plan-message").textContent = j.error; return; }
      const r = j.result;
      window.leafcastPlan = r;
      $("plan-message").textContent = r.proposals.length
        ? `${r.proposals.length} layouts meet every zone's target (searched in ${fmt(r.elapsed_s, 1)} s).`
        : `No layout meets every target${r.unmet_zones.length ? ` (nothing fits ${r.unmet_zones.join(", ")})` : ""}: try other fixture types, a larger budget or a longer photoperiod.`;
      $("proposals").innerHTML = r.proposals.map(card).join("");
    } catch (e) { $("plan-message").textContent = `Lost the planner: ${e.message}`; $("plan-run").disabled = false; }
  }
  $("plan-run").addEventListener("click", async () => {
    const types = [...document.querySelectorAll("input[name=type]:checked")].map((b) => b.value);
    if (!types.length) { $("plan-message").textContent = "Tick at least one fixture type."; return; }
    const body = { type_ids: types, objective: $("objective").value, min_clearance_m: (parseFloat($("clearance").value) || 15) / 100 };
    if ($("budget").value) body.max_power_w = parseFloat($("budget").value);
    try {
      const r = await json(`/api/rooms/${roomId}/plan`, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) });
      job = r.job_id;
      $("proposals").innerHTML = "";
      $("plan-run").disabled = true; $("plan-cancel").disabled = false;
      poll();
    } catch (e) { $("plan-message").textContent = `Not started: ${e.message}`; }
  });
  $("plan-cancel").addEventListener("click", async () => { if (job) await json(`/api/plan-jobs/${job}`, { method: "DELETE" }); });

  // Apply: a normal save with the room's revision, and one click to undo it.
  $("proposals").addEventListener("click", async (ev) => {
    const i = ev.target.getAttribute && ev.target.getAttribute("data-apply");
    if (i === null || i === undefined) return;
    const proposal = window.leafcastPlan.proposals[Number(i)];
    try {
      const current = await json(`/api/rooms/${roomId}`);
      const doc = Object.assign({}, proposal.room_file, { revision: current.revision });
      const saved = await json(`/api/rooms/${roomId}`, { method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify(doc) });
      lastApplied = { before: current, revision: saved.revision };
      banner(`Layout ${Number(i) + 1} applied (revision ${saved.revision}).`, [["Undo", undoApply], ["Open the editor", () => { window.location.href = `/rooms/${roomId}`; }]]);
    } catch (e) { banner(`Not applied: ${e.message}`, [["Dismiss", () => { $("banner").hidden = true; }]]); }
  });
  async function undoApply() {
    if (!lastApplied) return;
    try {
      const doc = Object.assign({}, lastApplied.before, { revision: lastApplied.revision });
      const saved = await json(`/api/rooms/${roomId}`, { method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify(doc) });
      lastApplied = null;
      banner(`Undone: the room is back as it was (revision ${saved.revision}).`, [["Dismiss", () => { $("banner").hidden = true; }]]);
    } catch (e) { banner(`Could not undo: ${e.message} (the room was changed since).`, [["Dismiss", () => { $("banner").hidden = true; }]]); }
  }
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
      $("curve-message").textContent = `Fixtures ${c.fixtures.join(", ")}: now ${fmt(100 * c.current_above_canopy_m)} cm above the canopy at ${fmt(c.current_dimming_pct)} %. The band is shaded; the red line is the stress level.`;
      const band = (xs) => ({ type: "rect", xref: "paper", x0: 0, x1: 1, y0: c.band_ppfd[0], y1: c.band_ppfd[1], fillcolor: "rgba(76,153,92,0.18)", line: { width: 0 } });
      const stress = { type: "line", xref: "paper", x0: 0, x1: 1, y0: c.stress_ppfd, y1: c.stress_ppfd, line: { color: "#d1342b", dash: "dot" } };
      const lay = (title) => ({ height: 280, margin: { l: 50, r: 10, t: 10, b: 42 }, shapes: [band(), stress], xaxis: { title: { text: title } },
                                yaxis: { title: { text: "PPFD µmol m⁻² s⁻¹" } }, legend: { orientation: "h" } });
      const lines = (rows, key, scale = 1) => ["avg", "max", "min"].map((k) => ({ type: "scatter", mode: "lines+markers", name: { avg: "average", max: "peak", min: "lowest" }[k],
        x: rows.map((r) => r[key] * scale), y: rows.map((r) => r[k]) }));
      Plotly.react("curve-height", lines(c.heights, "above_canopy_m", 100), lay("height above canopy (cm)"), { displaylogo: false });
      Plotly.react("curve-dim", lines(c.dimming, "dimming_pct"), lay("dimming (%)"), { displaylogo: false });
    } catch (e) { $("curve-message").textContent = `Not drawn: ${e.message}`; }
  });
})();
