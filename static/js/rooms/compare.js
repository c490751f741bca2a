// Two rooms side by side: per-zone figures in the chosen units and both maps on one colour range.

import * as Units from "../lib/units.js";
import { fmt, pct, escapeHtml } from "../lib/format.js";

const page = JSON.parse(document.getElementById("page-data").textContent);
let units = "imperial";
try { units = localStorage.getItem("leafcast-units") || page.rooms[0].units; } catch (e) { units = page.rooms[0].units; }

function figures(r) {
  const rows = r.zones.map((z) => `<tr><th scope="row">${escapeHtml(z.name)}<br><span class="small">${escapeHtml(z.crop)}</span></th>
    <td>${fmt(z.ppfd.avg)} / ${fmt(z.ppfd.min)} / ${fmt(z.ppfd.max)}</td><td>${fmt(z.ppfd.min_over_avg, 2)}</td>
    <td>${fmt(z.dli.avg, 1)} (${z.target.dli_min}–${z.target.dli_max})</td><td>${pct(z.share_in_band)}</td>
    <td>${Units.area(z.dark_m2, units)} · ${Units.area(z.hot_m2, units)}</td></tr>`).join("");
  const e = r.energy, h = r.heat;
  return `<table class="figures"><caption>Per zone</caption><thead><tr><th scope="col">Zone</th><th scope="col">PPFD avg / min / max</th><th scope="col">min/avg</th><th scope="col">DLI (band)</th><th scope="col">In band</th><th scope="col">Dark · hot</th></tr></thead><tbody>${rows}</tbody></table>
    <table class="figures"><tbody><tr><th scope="row">Power</th><td data-compare="power">${fmt(e.power_w)} W</td></tr>
    <tr><th scope="row">Cost</th><td>${fmt(e.cost_per_month, 2)} ${escapeHtml(e.currency)}/month</td></tr>
    <tr><th scope="row">Heat to remove</th><td>${fmt(h.w)} W · ${fmt(h.btu_h)} BTU/h</td></tr></tbody></table>`;
}

page.rooms.forEach((r, i) => {
  document.getElementById(`figures-${i}`).innerHTML = figures(r);
  const z = r.zones.find((zz) => zz.grid);
  if (!z || !window.Plotly) return;
  const ax = (v) => v.map((m) => Units.axisValue(m, units));
  window.Plotly.newPlot(`map-${i}`, [
    { type: "heatmap", x: ax(z.grid.x_m), y: ax(z.grid.y_m), z: z.grid.ppfd, colorscale: page.colour_scale, zmin: page.range.zmin, zmax: page.range.zmax,
      colorbar: { title: { text: "PPFD", side: "top" }, thickness: 10 } },
    { type: "contour", x: ax(z.grid.x_m), y: ax(z.grid.y_m), z: z.grid.ppfd, showscale: false, hoverinfo: "skip",
      contours: { coloring: "none", start: page.range.step, end: page.range.zmax, size: page.range.step, showlabels: true, labelfont: { color: "#fff", size: 10 } },
      line: { color: "rgba(255,255,255,0.55)", width: 1 } },
  ], { height: 300, margin: { l: 48, r: 6, t: 26, b: 38 }, title: { text: escapeHtml(z.name), font: { size: 13 } },
       xaxis: { title: { text: `from the left wall (${Units.axisUnit(units)})` }, constrain: "domain" },
       yaxis: { title: { text: `from the front wall (${Units.axisUnit(units)})` }, scaleanchor: "x", scaleratio: 1 } }, { displaylogo: false, responsive: true });
});
