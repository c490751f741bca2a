// The meter page's fixture card of nested-square averages, and the squares around one spot.
import { $, roomId, units, len, inputLen, parseLen, ax, axUnit, json, failed, zoneName, page } from "./common.js";
import { fmt, escapeHtml as esc } from "../lib/format.js";
import * as Units from "../lib/units.js";

const room = page.room_file.room;
const MIN_CARD_HEIGHT_M = 0.02, MAX_CARD_HEIGHT_M = 5;   // the fixture card's heights above the canopy (app/web/routes/meter.py)
// ------------------------------------------------------------ fixture card and spots
function squaresTable(rows, threshold) {
  return `<table class="figures squares"><thead><tr><th>Square</th><th>Average</th><th>Min</th><th>Max</th><th>min/avg</th><th>Share ≥ ${fmt(threshold)}</th><th>Share of the output landing in it</th></tr></thead><tbody>${
    rows.map((r) => `<tr><td>${len(r.side_m)} × ${len(r.side_m)}</td><td>${fmt(r.avg)}</td><td>${fmt(r.min)}</td><td>${fmt(r.max)}</td><td>${fmt(r.min_over_avg, 2)}</td><td>${r.share_above === null ? "–" : `${fmt(100 * r.share_above)} %`}</td><td>${r.share_of_output === undefined || r.share_of_output === null ? "–" : `${fmt(100 * r.share_of_output)} %`}</td></tr>`).join("")}</tbody></table>
    <p class="small">PPFD in µmol m⁻² s⁻¹, area-weighted over each square.</p>`;
}
function lengthField(id, what) {
  try { return parseLen($(id).value); } catch (e) { throw new Error(`${what}: ${e.message}`); }
}
$("card-height").value = inputLen(units === "imperial" ? 0.4572 : 0.45);
$("card-run").addEventListener("click", async () => {
  let h;
  try { h = lengthField("card-height", "the height above the canopy"); } catch (e) { $("card-message").textContent = e.message; return; }
  if (!(h > MIN_CARD_HEIGHT_M && h <= MAX_CARD_HEIGHT_M)) {
    $("card-message").textContent = `No card: the height above the canopy must be more than ${Units.length(MIN_CARD_HEIGHT_M, units, { fine: true })} and at most ${len(MAX_CARD_HEIGHT_M)}.`;
    return;
  }
  const q = new URLSearchParams({ type_id: $("card-type").value, room_id: roomId, height_m: h, threshold_umol: $("card-threshold").value || "400", dimming_pct: $("card-dim").value || "100", units });
  $("card-message").textContent = "Computing…";
  try {
    const c = await json(`/api/fixture-card?${q}`);
    const t = c.fixture_type;
    $("card-body").innerHTML = `<h3>${esc(t.name)}</h3><p>${fmt(t.ppf_umol_s)} µmol/s · ${fmt(t.power_w)} W · ${fmt(t.ppf_umol_s / t.power_w, 2)} µmol/J · at ${len(c.height_m)} above the canopy, ${fmt(c.dimming_pct)} % · ${esc(c.basis)} · peak ${fmt(c.peak_umol)} µmol m⁻² s⁻¹</p>` + squaresTable(c.squares, c.threshold_umol);
    const shapes = c.squares.map((r) => ({ type: "rect", x0: ax(-r.side_m / 2), y0: ax(-r.side_m / 2), x1: ax(r.side_m / 2), y1: ax(r.side_m / 2), line: { color: "#fff", width: 1 } }));
    window.Plotly.react("card-map", [{ type: "heatmap", x: c.map.x_m.map(ax), y: c.map.y_m.map(ax), z: c.map.ppfd, colorscale: "Viridis", colorbar: { title: { text: "µmol m⁻² s⁻¹" } } }],
      { title: { text: "PPFD under the fixture, with the nested squares", font: { size: 13 } }, shapes, margin: { l: 45, r: 10, t: 30, b: 40 }, xaxis: { title: { text: axUnit } }, yaxis: { title: { text: axUnit }, scaleanchor: "x" } },
      { displaylogo: false, staticPlot: false, responsive: true });
    $("card-message").textContent = "";
    $("card-map").hidden = false;
    $("card-print").disabled = false;
  } catch (e) { failed($("card-message"), "No card", e); }
});
$("card-print").addEventListener("click", () => window.print());
$("spot-run").addEventListener("click", async () => {
  let x, y;
  try { x = lengthField("spot-x", "centre from the left wall"); y = lengthField("spot-y", "centre from the front wall"); } catch (e) { $("spot-message").textContent = e.message; return; }
  const zone = $("spot-zone").value;
  const z = room.zones.find((q) => q.id === zone);
  if (z && (x < z.x_m || x > z.x_m + z.width_m || y < z.y_m || y > z.y_m + z.length_m)) {
    $("spot-message").textContent = `Not averaged: the centre (${len(x)}, ${len(y)}) is outside ${z.name}, which runs ${len(z.x_m)} to ${len(z.x_m + z.width_m)} from the left wall and ${len(z.y_m)} to ${len(z.y_m + z.length_m)} from the front wall.`;
    return;
  }
  const q = new URLSearchParams({ x_m: x, y_m: y, threshold_umol: $("card-threshold").value || "400" });
  try {
    const r = await json(`/api/rooms/${roomId}/zones/${encodeURIComponent(zone)}/squares?${q}`);
    $("spot-body").innerHTML = squaresTable(r.squares, r.threshold_umol);
    $("spot-message").textContent = `Centred at ${len(x)}, ${len(y)} in ${zoneName(zone)} (${r.basis}).`;
  } catch (e) { failed($("spot-message"), "Not averaged", e); }
});
const firstZone = room.zones[0];
if (firstZone) { $("spot-x").value = inputLen(firstZone.x_m + firstZone.width_m / 2); $("spot-y").value = inputLen(firstZone.y_m + firstZone.length_m / 2); }
const params = new URLSearchParams(location.search);
if (params.get("zone") && params.get("x_m") && params.get("y_m")) {
  // Arriving from the editor's "nested squares from here".
  $("spot-zone").value = params.get("zone");
  $("spot-x").value = inputLen(Number(params.get("x_m"))); $("spot-y").value = inputLen(Number(params.get("y_m")));
  setTimeout(() => $("spot-run").click(), 0);
}
