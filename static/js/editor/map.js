// The canopy map: plotly's heatmap of one zone on a colour range fixed by the crops' bands, contour lines at
// round values, dark and hot cells hatched. While a fixture is dragged, the values are painted on a canvas laid
// over plotly's heatmap in the same colours (plotly's full repaint would trail the pointer); plotly redraws on drop.

import * as Units from "../lib/units.js";
import { $, state, room, halfExtent, zoneOf } from "./state.js";
import { COLOURSCALE, colourRange, colourAt, masks, cellRuns } from "./scale.js";

const HATCH = { dark: { shape: "/", fg: "rgba(255,255,255,0.85)", line: "#3b4cc0", dash: "dot" },
                hot: { shape: "x", fg: "rgba(20,20,20,0.85)", line: "#c2188f", dash: "solid" } };

function mapHeight() {
  const host = $("map");
  const w = host.clientWidth || 400;
  return Math.round(Math.min(Math.max(w * 0.72, 220), Math.max(window.innerHeight * 0.5, 240), 420));
}

/** The range in use: the grower's lock, or the one fixed by the crops of every zone in the answer. */
export function currentRange(analysis = state.analysis) {
  return colourRange(analysis.zones, state.quantity, state.lockedMax && state.lockedMax[state.quantity]);
}

function edges(v) {
  const mid = v.slice(1).map((x, i) => (x + v[i]) / 2);
  return [v[0] - (mid[0] - v[0]), ...mid, v[v.length - 1] + (v[v.length - 1] - mid[mid.length - 1])];
}

/** Paint values over plotly's axes area; false when plotly has not drawn this zone yet. */
export function paintPreview(xs, ys, values, range) {
  const gd = $("map"), fl = gd._fullLayout;
  if (!fl || !fl.xaxis || !gd.data || xs.length < 2 || ys.length < 2) return false;
  let cv = $("map-preview");
  if (!cv) { cv = document.createElement("canvas"); cv.id = "map-preview"; cv.className = "map-preview"; cv.setAttribute("aria-hidden", "true"); gd.appendChild(cv); }
  const xa = fl.xaxis, ya = fl.yaxis;
  Object.assign(cv.style, { left: "0px", top: "0px", width: `${fl.width}px`, height: `${fl.height}px`, display: "block" });
  if (cv.width !== fl.width) cv.width = fl.width;
  if (cv.height !== fl.height) cv.height = fl.height;
  const ctx = cv.getContext("2d");
  ctx.save();
  ctx.clearRect(0, 0, cv.width, cv.height);
  ctx.beginPath();
  ctx.rect(xa._offset, ya._offset, xa._length, ya._length);  // the axes' own area, as plotly clips it
  ctx.clip();
  const xe = edges(xs).map((v) => xa._offset + xa.l2p(v)), ye = edges(ys).map((v) => ya._offset + ya.l2p(v));
  for (let j = 0; j < ys.length; j++) {
    for (let i = 0; i < xs.length; i++) {
      const [r, g, b] = colourAt(values[j][i], range);
      ctx.fillStyle = `rgb(${r},${g},${b})`;
      ctx.fillRect(xe[i], ye[j + 1], xe[i + 1] - xe[i] + 0.6, ye[j] - ye[j + 1] + 0.6);
    }
  }
  ctx.restore();
  return true;
}
export function hidePreview() { const cv = $("map-preview"); if (cv) cv.style.display = "none"; }

// Dark or hot cells as one scatter trace of closed rectangles (separated by gaps), filled with a hatch pattern.
function hatchTrace(xs, ys, mask, kind, u) {
  const px = [], py = [];
  for (const [x0, y0, x1, y1] of cellRuns(xs, ys, mask)) {
    px.push(x0, x1, x1, x0, x0, null);
    py.push(y0, y0, y1, y1, y0, null);
  }
  if (!px.length) return null;
  const h = HATCH[kind];
  return { type: "scatter", mode: "lines", x: px.map((v) => (v === null ? null : Units.axisValue(v, u))),
           y: py.map((v) => (v === null ? null : Units.axisValue(v, u))), fill: "toself", connectgaps: false,
           fillcolor: "rgba(0,0,0,0)", fillpattern: { shape: h.shape, fgcolor: h.fg, bgcolor: "rgba(0,0,0,0)", size: 7, solidity: 0.25 },
           line: { width: 0 }, hoverinfo: "skip", name: kind, showlegend: false, meta: kind };
}

export function drawMap() {
  const a = state.analysis;
  const z = a && a.zones.find((zz) => zz.id === state.mapZone);
  if (!z || !z.grid || !window.Plotly) return;
  const u = state.units, q = state.quantity;
  const range = currentRange(a);
  const xs = z.grid.x_m.map((v) => Units.axisValue(v, u)), ys = z.grid.y_m.map((v) => Units.axisValue(v, u));
  const values = q === "ppfd" ? z.grid.ppfd : z.grid.dli;
  if (state.dragging && paintPreview(xs, ys, values, range)) return;
  hidePreview();
  const title = q === "ppfd" ? "PPFD<br>µmol m⁻² s⁻¹" : "DLI<br>mol m⁻² d⁻¹";
  const traces = [{
    type: "heatmap", x: xs, y: ys, z: values, colorscale: COLOURSCALE, zmin: range.zmin, zmax: range.zmax, zsmooth: false,
    colorbar: { title: { text: title, side: "top" }, thickness: 12, dtick: range.step * Math.ceil((range.zmax / range.step) / 6) },
    showlegend: false,
    hovertemplate: `%{x:.2f} ${Units.axisUnit(u)}, %{y:.2f} ${Units.axisUnit(u)}<br>%{z:.${q === "ppfd" ? 0 : 1}f}<extra></extra>`,
  }, {
    type: "contour", x: xs, y: ys, z: values, showscale: false, hoverinfo: "skip", name: "levels",
    contours: { coloring: "none", start: range.step, end: range.zmax, size: range.step, showlabels: true,
                labelformat: range.step < 1 ? ".1f" : ".0f", labelfont: { color: "#ffffff", size: 10 } },
    line: { color: "rgba(255,255,255,0.55)", width: 1 },
  }];
  const m = masks(z);
  for (const kind of ["dark", "hot"]) {
    const t = hatchTrace(z.grid.x_m, z.grid.y_m, m[kind], kind, u);
    if (t) traces.push(t);
  }
  const shapes = room().fixtures.filter((f) => f.on && zoneOf(f) && zoneOf(f).id === z.id).map((f) => {
    const [hx, hy] = halfExtent(f);
    return { type: "rect", x0: Units.axisValue(f.x_m - hx, u), x1: Units.axisValue(f.x_m + hx, u), y0: Units.axisValue(f.y_m - hy, u),
             y1: Units.axisValue(f.y_m + hy, u), line: { color: "rgba(255,255,255,0.8)", width: 1 } };
  });
  const layout = {
    margin: { l: 46, r: 6, t: 6, b: 38 }, height: mapHeight(), shapes, showlegend: false,
    xaxis: { title: { text: `from left wall (${Units.axisUnit(u)})` }, constrain: "domain" },
    yaxis: { title: { text: `from front wall (${Units.axisUnit(u)})` }, scaleanchor: "x", scaleratio: 1 },
    uirevision: `${state.mapZone}-${u}-${q}`,
  };
  window.Plotly.react("map", traces, layout, { displaylogo: false, responsive: true, modeBarButtonsToRemove: ["select2d", "lasso2d"] });
  $("map-range").textContent = `Colours 0–${range.zmax} ${q === "ppfd" ? "µmol m⁻² s⁻¹" : "mol m⁻² d⁻¹"}` +
    (state.lockedMax && state.lockedMax[q] ? " (locked)" : ", set by the crops' stress levels") + `; lines every ${range.step}.`;
}

/** Mark the map as not matching the room (a refused or failed analysis), or clear the mark. */
export function markStale(reason) {
  const box = $("map-stale");
  state.analysisCurrent = !reason;
  box.hidden = !reason;
  $("map").classList.toggle("stale", !!reason);
  if (reason) box.textContent = `⚠ Out of date: ${reason} The map and figures show the last room that could be computed.`;
}
