// Marks on the plan view that need none of its state: SVG helpers, hatching patterns, labels cut to fit, the
// hanging grid and the room's dimensions with a scale bar (plan.js draws the rest).

import * as Units from "../lib/units.js";

const NS = "http://www.w3.org/2000/svg";
const MAX_GRID_LINES = 200;        // rails or hook rows drawn along one axis at most (a finer grid is drawn in part)

export function el(name, attrs, parent) {
  const e = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs || {})) e.setAttribute(k, v);
  if (parent) parent.appendChild(e);
  return e;
}
function niceStep(metres) {
  const p = 10 ** Math.floor(Math.log10(metres));
  for (const k of [1, 2, 5, 10]) if (k * p >= metres) return k * p;
  return 10 * p;
}
function niceFeet(m) {
  const ft = m / Units.M_PER_FT;
  for (const k of [0.5, 1, 2, 5, 10, 20, 50, 100]) if (k >= ft) return k * Units.M_PER_FT;
  return 100 * Units.M_PER_FT;
}

/** Text no wider than maxPx: cut with an ellipsis when it would run over its neighbour; the full text on hover. */
export function fitLabel(text, full, maxPx) {
  text.textContent = full;
  el("title", {}, text).textContent = full;
  const width = text.getComputedTextLength();
  if (!(width > maxPx) || !(maxPx > 0)) return;
  let keep = Math.max(1, Math.floor(full.length * maxPx / width) - 1);
  for (; keep > 1; keep--) {
    text.firstChild.textContent = `${full.slice(0, keep).trimEnd()}…`;
    if (text.getComputedTextLength() <= maxPx) break;
  }
}

// Hatching: diagonal lines for dark areas, cross-hatching for hot ones (a shape cue besides the colour).
export function defs(svg) {
  const d = el("defs", {}, svg);
  const dark = el("pattern", { id: "hatch-dark", width: 7, height: 7, patternUnits: "userSpaceOnUse", patternTransform: "rotate(45)" }, d);
  el("line", { x1: 0, y1: 0, x2: 0, y2: 7, class: "hatch-dark-line" }, dark);
  const hot = el("pattern", { id: "hatch-hot", width: 7, height: 7, patternUnits: "userSpaceOnUse", patternTransform: "rotate(45)" }, d);
  el("path", { d: "M0,0V7M0,0H7", class: "hatch-hot-line" }, hot);
}

// The hanging grid: rails (one pitch) as lines, hook points (both pitches) as dots, where fixture centres go.
export function drawHangingGrid(svg, toScreen, room) {
  const g = room.hanging_grid, grp = el("g", { class: "hanging-grid", "data-hanging-grid": "" }, svg);
  const lines = (origin, pitch, extent) => {
    if (!(pitch > 0)) return null;
    const out = [];
    for (let k = Math.ceil((0 - origin) / pitch - 1e-9); origin + k * pitch <= extent + 1e-9 && out.length < MAX_GRID_LINES; k++) {
      out.push(origin + k * pitch);
    }
    return out;
  };
  const xs = lines(g.origin_x_m, g.pitch_x_m, room.width_m), ys = lines(g.origin_y_m, g.pitch_y_m, room.length_m);
  if (xs && ys) {
    for (const x of xs) for (const y of ys) {
      const [px, py] = toScreen(x, y);
      el("circle", { cx: px, cy: py, r: 2.5, class: "hook" }, grp);
    }
    return;
  }
  for (const x of xs || []) { const [p1, q1] = toScreen(x, 0), [p2, q2] = toScreen(x, room.length_m); el("line", { x1: p1, y1: q1, x2: p2, y2: q2, class: "rail" }, grp); }
  for (const y of ys || []) { const [p1, q1] = toScreen(0, y), [p2, q2] = toScreen(room.width_m, y); el("line", { x1: p1, y1: q1, x2: p2, y2: q2, class: "rail" }, grp); }
}

export function drawDimensions(svg, toScreen, view, room, units, h) {
  const [x0, y0] = toScreen(0, room.length_m);
  const W = room.width_m * view.scale, H = room.length_m * view.scale;
  el("text", { x: x0 + W / 2, y: y0 + H + 18, "text-anchor": "middle", class: "dim" }, svg).textContent = `width ${Units.length(room.width_m, units)}`;
  el("text", { x: x0 - 8, y: y0 + H / 2, "text-anchor": "middle", class: "dim", transform: `rotate(-90 ${x0 - 8} ${y0 + H / 2})` }, svg)
    .textContent = `length ${Units.length(room.length_m, units)}`;
  const stepM = units === "imperial" ? niceFeet(120 / view.scale) : niceStep(120 / view.scale);
  // The scale bar goes top left when the room reaches down to it, so it never runs through the width.
  const bx = 12, by = y0 + H + 18 > h - 34 ? 22 : h - 14;
  el("line", { x1: bx, y1: by, x2: bx + stepM * view.scale, y2: by, class: "scalebar" }, svg);
  el("text", { x: bx, y: by - 5, class: "dim" }, svg).textContent = Units.length(stepM, units);
  el("text", { x: x0 + W - 4, y: y0 + H - 4, "text-anchor": "end", class: "side-label" }, svg).textContent = "front";  // obstacle labels start at the left
}
