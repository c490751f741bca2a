// The plan view: the room seen from above, drawn to scale in SVG, with zoom, pan and dragging (mouse, pen and
// touch through pointer events). It draws what it is given and reports gestures; the editor owns the state.

import * as Units from "../lib/units.js";
import { masks, cellRuns } from "./scale.js";
import { defs, drawDimensions, drawHangingGrid, el, fitLabel } from "./plan_marks.js";

const FIT_SHARE = 0.86;            // the room fills this share of the drawing area when fitted
const DRAG_THRESHOLD_PX = 2;

export function createPlan(svg, cb) {
  const view = { cx: null, cy: null, scale: null }; // centre in metres, px per metre
  let drag = null, last = null, highlight = null, areaMode = false, userMoved = false;

  function size() {
    const r = svg.getBoundingClientRect();
    return { w: Math.max(r.width, 100), h: Math.max(r.height, 100) };
  }
  function fit(room) {
    const { w, h } = size();
    view.scale = FIT_SHARE * Math.min(w / room.width_m, h / room.length_m);
    view.cx = room.width_m / 2;
    view.cy = room.length_m / 2;
  }
  function toScreen(x, y) {
    const { w, h } = size();
    return [w / 2 + (x - view.cx) * view.scale, h / 2 - (y - view.cy) * view.scale];
  }
  function toRoom(px, py) {
    const { w, h } = size();
    return [view.cx + (px - w / 2) / view.scale, view.cy - (py - h / 2) / view.scale];
  }
  function local(ev) {
    const r = svg.getBoundingClientRect();
    return [ev.clientX - r.left, ev.clientY - r.top];
  }
  function rect(x0, y0, x1, y1, attrs, parent) {
    const [px, py] = toScreen(x0, y1);
    return el("rect", Object.assign({ x: px, y: py, width: Math.max((x1 - x0) * view.scale, 0), height: Math.max((y1 - y0) * view.scale, 0) }, attrs), parent);
  }

  function fixtureShape(g, f, t, selected, zoneName) {
    const s = view.scale, geo = t.geometry;
    const [px, py] = toScreen(f.x_m, f.y_m);
    const grp = el("g", {
      class: "fixture" + (selected ? " selected" : "") + (f.on ? "" : " off"),
      transform: `translate(${px},${py}) rotate(${-f.rotation_deg})`,
      "data-fixture-id": f.id, tabindex: "0", role: "button", "aria-pressed": selected ? "true" : "false",
      "aria-label": `Fixture ${f.id}, ${t.name}, dimming ${f.dimming_pct} %${f.on ? "" : ", switched off"}${zoneName ? `, over ${zoneName}` : ""}`,
    }, g);
    const L = geo.length_m * s, W = geo.width_m * s;
    if (geo.kind === "point") {
      el("circle", { r: Math.max(6, 0.06 * s), class: "body" }, grp);
    } else if (geo.kind === "panel") {
      el("rect", { x: -L / 2, y: -W / 2, width: L, height: W, class: "body" }, grp);
    } else if (geo.kind === "bar") {
      const bw = Math.max(geo.bar_width_m * s, 3);
      el("rect", { x: -L / 2, y: -bw / 2, width: L, height: bw, class: "body" }, grp);
    } else {
      el("rect", { x: -L / 2, y: -W / 2, width: L, height: W, class: "frame" }, grp);
      const n = geo.bar_count, bw = Math.max(geo.bar_width_m * s, 2);
      const pitch = n > 1 ? (geo.width_m - geo.bar_width_m) / (n - 1) * s : 0;
      for (let k = 0; k < n; k++) el("rect", { x: -L / 2, y: -W / 2 + k * pitch, width: L, height: bw, class: "body" }, grp);
    }
    if (selected) {
      // Selection: a dashed ring with corner handles, so it reads without colour.
      const hw = Math.max(L, geo.kind === "point" ? 12 : 6) / 2 + 4, hh = Math.max(geo.kind === "bar" ? 3 : W, geo.kind === "point" ? 12 : 6) / 2 + 4;
      el("rect", { x: -hw, y: -hh, width: 2 * hw, height: 2 * hh, class: "select-ring" }, grp);
      for (const [cx, cy] of [[-hw, -hh], [hw, -hh], [-hw, hh], [hw, hh]]) el("rect", { x: cx - 3, y: cy - 3, width: 6, height: 6, class: "select-handle" }, grp);
    }
    const label = el("text", { class: "fixture-label", x: 0, y: 4, "text-anchor": "middle", transform: `rotate(${f.rotation_deg})` }, grp);
    label.textContent = f.id;
    return grp;
  }

  function drawZoneLight(z, a, opts) {
    if (!a.grid || a.grid.x_m.length < 2 || a.grid.y_m.length < 2) return;
    const m = masks(a);
    for (const kind of ["dark", "hot"]) {
      const runs = cellRuns(a.grid.x_m, a.grid.y_m, m[kind]);
      if (!runs.length) continue;
      const grp = el("g", { class: `hatch-${kind}`, "data-hatch": `${z.id}:${kind}` }, svg);
      for (const [x0, y0, x1, y1] of runs) rect(x0, y0, x1, y1, {}, grp);
    }
    for (const [kind, cls] of [["dark", "outline-dark"], ["hot", "outline-hot"]]) {
      const segs = a[kind].outline;
      if (!segs.length) continue;
      let d = "";
      for (const [sx0, sy0, sx1, sy1] of segs) {
        const [p1, q1] = toScreen(sx0, sy0), [p2, q2] = toScreen(sx1, sy1);
        d += `M${p1.toFixed(1)},${q1.toFixed(1)}L${p2.toFixed(1)},${q2.toFixed(1)}`;
      }
      el("path", { d, class: cls, "data-outline": `${z.id}:${kind}` }, svg);
    }
    if (opts.readout) drawReadout(a);
  }

  function render(doc, analysis, opts) {
    last = { doc, analysis, opts };
    const room = doc.room, units = opts.units, tier = opts.tier;
    if (view.scale === null) fit(room);
    while (svg.firstChild) svg.removeChild(svg.firstChild);
    const { w, h } = size();
    svg.setAttribute("viewBox", `0 0 ${w} ${h}`);
    defs(svg);
    const L = (m) => Units.length(m, units);
    rect(0, 0, room.width_m, room.length_m, { class: "room" }, svg);
    const sides = { front: [0, 0, room.width_m, 0], back: [0, room.length_m, room.width_m, room.length_m],
                    left: [0, 0, 0, room.length_m], right: [room.width_m, 0, room.width_m, room.length_m] };
    for (const [side, [a, b, c, d]] of Object.entries(sides)) {
      const [p1, q1] = toScreen(a, b), [p2, q2] = toScreen(c, d);
      el("line", { x1: p1, y1: q1, x2: p2, y2: q2, class: room.open_sides.includes(side) ? "wall open" : "wall" }, svg);
    }
    const zonesById = Object.fromEntries((analysis && opts.current ? analysis.zones : []).map((z) => [z.id, z]));
    for (const z of room.zones) {
      if (tier && tier !== z.id) continue;
      rect(z.x_m, z.y_m, z.x_m + z.width_m, z.y_m + z.length_m, { class: "zone", "data-zone-id": z.id }, svg);
      if (zonesById[z.id]) drawZoneLight(z, zonesById[z.id], opts);
    }
    // With one tier shown, draw only the obstacles between its canopy and the shelf right above it.
    const shown = tier ? room.zones.find((z) => z.id === tier) : null;
    const cover = shown ? Math.min(...room.obstacles.filter((o) => o.z_m >= shown.canopy_height_m).map((o) => o.z_m), Infinity) : Infinity;
    const labelsAt = new Map(), labels = [];   // obstacle labels are drawn over the fixtures, like zone labels
    for (const o of room.obstacles) {
      if (shown && (o.z_m + o.height_m < shown.canopy_height_m - 0.1 || o.z_m > cover + 1e-6)) continue;
      rect(o.x_m, o.y_m, o.x_m + o.width_m, o.y_m + o.length_m, { class: "obstacle" }, svg);
      const [ox, oy] = toScreen(o.x_m, o.y_m);
      const spot = `${ox.toFixed(0)},${oy.toFixed(0)}`, stackedLabels = labelsAt.get(spot) || 0;
      labelsAt.set(spot, stackedLabels + 1);   // shelves one above another: their labels one above another
      labels.push([ox + 4, oy - 4 - 12 * stackedLabels, "obstacle-label", `${o.name} (${L(o.z_m)}–${L(o.z_m + o.height_m)})`]);
    }
    if (room.hanging_grid) drawHangingGrid(svg, toScreen, room);
    const types = Object.fromEntries(room.fixture_types.map((t) => [t.id, t]));
    const zoneNames = Object.fromEntries(room.zones.map((zz) => [zz.id, zz.name]));
    const fg = el("g", { class: "fixtures" }, svg);
    for (const f of room.fixtures) {
      const z = opts.zoneOf(f), zid = z ? z.id : null;
      if (tier && zid !== tier) continue;
      fixtureShape(fg, f, types[f.type_id], opts.selection.has(f.id), zoneNames[zid]);
    }
    for (const [lx, ly, cls, text] of labels) el("text", { x: lx, y: ly, class: cls }, svg).textContent = text;
    for (const z of room.zones) {   // over the fixtures, so a fixture hung at the zone's edge does not hide its name
      if (tier && tier !== z.id) continue;
      const [zx, zy] = toScreen(z.x_m, z.y_m + z.length_m);
      const t = el("text", { x: zx + 4, y: zy + 14, class: "zone-label" }, svg);
      fitLabel(t, `${z.name} · canopy ${L(z.canopy_height_m)}`, toScreen(z.x_m + z.width_m, z.y_m)[0] - zx - 8);
    }
    drawDimensions(svg, toScreen, view, room, units, h);
    for (const r of opts.regions || []) {
      rect(r.x_m, r.y_m, r.x_m + r.width_m, r.y_m + r.length_m, { class: "region" }, svg);
      const [rx, ry] = toScreen(r.x_m, r.y_m + r.length_m);
      el("text", { x: rx + 3, y: ry - 3, class: "region-label" }, svg).textContent = r.name;
    }
    if (drag && drag.kind === "area") {
      const [x0, y0] = drag.start, [x1, y1] = drag.end;
      rect(Math.min(x0, x1), Math.min(y0, y1), Math.max(x0, x1), Math.max(y0, y1), { class: "region drawing" }, svg);
    }
    if (highlight) {
      const [bx0, by0, bx1, by1] = highlight, pad = 0.03;
      const r = rect(bx0 - pad, by0 - pad, bx1 + pad, by1 + pad, { class: "highlight" }, svg);
      r.setAttribute("width", Math.max(+r.getAttribute("width"), 8)); r.setAttribute("height", Math.max(+r.getAttribute("height"), 8));
    }
  }

  function drawReadout(a) {
    const g = a.grid, nx = g.x_m.length, ny = g.y_m.length;
    const every = Math.max(1, Math.ceil(36 / (g.spacing_m * view.scale)));
    const grp = el("g", { class: "readout" }, svg);
    for (let j = Math.floor(every / 2); j < ny; j += every) {
      for (let i = Math.floor(every / 2); i < nx; i += every) {
        const [px, py] = toScreen(g.x_m[i], g.y_m[j]);
        el("text", { x: px, y: py, "text-anchor": "middle" }, grp).textContent = Math.round(g.ppfd[j][i]);
      }
    }
  }

  // -- gestures ------------------------------------------------------
  svg.addEventListener("pointerdown", (ev) => {
    const target = ev.target.closest("[data-fixture-id]");
    svg.setPointerCapture(ev.pointerId);
    const [px, py] = local(ev);
    if (areaMode) {
      drag = { kind: "area", start: toRoom(px, py), end: toRoom(px, py), moved: false };
    } else if (target) {
      const id = target.getAttribute("data-fixture-id");
      cb.onPick(id, ev.shiftKey || ev.ctrlKey || ev.metaKey);
      drag = { kind: "fixture", id, start: toRoom(px, py), moved: false };
    } else {
      drag = { kind: "pan", start: [px, py], centre: [view.cx, view.cy], moved: false };
      if (!ev.shiftKey) cb.onPick(null, false);
    }
    ev.preventDefault();
    // preventDefault keeps the page from selecting text, and also from moving the focus: move it here, so the
    // arrow keys act on the plan and not on the box that had the focus before.
    svg.focus({ preventScroll: true });
  });
  svg.addEventListener("pointermove", (ev) => {
    if (!drag) return;
    const [px, py] = local(ev);
    if (drag.kind === "area") { drag.end = toRoom(px, py); drag.moved = true; rerender(); return; }
    if (drag.kind === "fixture") {
      const [x, y] = toRoom(px, py);
      const dx = x - drag.start[0], dy = y - drag.start[1];
      if (!drag.moved && Math.hypot(dx, dy) * view.scale < DRAG_THRESHOLD_PX) return;
      if (!drag.moved) { drag.moved = true; cb.onDragStart(drag.id); }
      cb.onDrag(dx, dy);
    } else {
      drag.moved = true;
      userMoved = true;
      view.cx = drag.centre[0] - (px - drag.start[0]) / view.scale;
      view.cy = drag.centre[1] + (py - drag.start[1]) / view.scale;
      rerender();
    }
  });
  function endDrag(ev) {
    if (!drag) return;
    if (drag.kind === "fixture" && drag.moved) cb.onDragEnd();
    if (drag.kind === "area" && drag.moved) {
      const [x0, y0] = drag.start, [x1, y1] = drag.end;
      cb.onArea(Math.min(x0, x1), Math.min(y0, y1), Math.abs(x1 - x0), Math.abs(y1 - y0));
    }
    drag = null;
    try { svg.releasePointerCapture(ev.pointerId); } catch (e) { /* already released */ }
  }
  svg.addEventListener("pointerup", endDrag);
  svg.addEventListener("pointercancel", endDrag);
  svg.addEventListener("wheel", (ev) => { ev.preventDefault(); zoomAt(local(ev), ev.deltaY < 0 ? 1.15 : 1 / 1.15); }, { passive: false });

  function zoomAt(point, factor) {
    userMoved = true;
    const before = toRoom(point[0], point[1]);
    view.scale *= factor;
    const after = toRoom(point[0], point[1]);
    view.cx += before[0] - after[0];
    view.cy += before[1] - after[1];
    rerender();
  }
  function rerender() { if (last) render(last.doc, last.analysis, last.opts); }
  // Refit when the drawing area changes size, until the grower zooms or pans by hand.
  new ResizeObserver(() => { if (last) { if (!userMoved) fit(last.doc.room); rerender(); } }).observe(svg);

  return {
    render,
    zoom(f) { const { w, h } = size(); zoomAt([w / 2, h / 2], f); },
    fit() { userMoved = false; if (last) { fit(last.doc.room); rerender(); } },
    highlight(bounds) { highlight = bounds; rerender(); setTimeout(() => { highlight = null; rerender(); }, 2500); },
    get scale() { return view.scale; },
    set areaMode(on) { areaMode = on; svg.classList.toggle("area-mode", on); },
  };
}
