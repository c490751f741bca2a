// The plan view: the room seen from above, drawn to scale in SVG, with zoom, pan and dragging.
// It draws what it is given and reports pointer gestures; the editor owns the state.
"use strict";
const Plan = (function () {
  const NS = "http://www.w3.org/2000/svg";

  function el(name, attrs, parent) {
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

  function create(svg, cb) {
    const view = { cx: null, cy: null, scale: null }; // centre in metres, px per metre
    let drag = null;
    let last = null;
    let highlight = null;
    let areaMode = false;

    function size() {
      const r = svg.getBoundingClientRect();
      return { w: Math.max(r.width, 100), h: Math.max(r.height, 100) };
    }
    function fit(room) {
      const { w, h } = size();
      view.scale = 0.86 * Math.min(w / room.width_m, h / room.length_m);
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

    function fixtureShape(g, f, t, selected) {
      const s = view.scale;
      const geo = t.geometry;
      const [px, py] = toScreen(f.x_m, f.y_m);
      const grp = el("g", {
        class: "fixture" + (selected ? " selected" : "") + (f.on ? "" : " off"),
        transform: `translate(${px},${py}) rotate(${-f.rotation_deg})`,
        "data-fixture-id": f.id, tabindex: "0", role: "button",
        "aria-label": `Fixture ${f.id}, ${t.name}, dimming ${f.dimming_pct} %${selected ? ", selected" : ""}`,
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
        const pitch = (geo.width_m - geo.bar_width_m) / (n - 1) * s;
        for (let k = 0; k < n; k++) {
          const v = -W / 2 + bw / 2 + k * pitch;
          el("rect", { x: -L / 2, y: v - bw / 2, width: L, height: bw, class: "body" }, grp);
        }
      }
      const label = el("text", { class: "fixture-label", x: 0, y: 4, "text-anchor": "middle", transform: `rotate(${f.rotation_deg})` }, grp);
      label.textContent = f.id;
      return grp;
    }

    function render(doc, analysis, opts) {
      last = { doc, analysis, opts };
      const room = doc.room;
      if (view.scale === null) fit(room);
      while (svg.firstChild) svg.removeChild(svg.firstChild);
      const { w, h } = size();
      svg.setAttribute("viewBox", `0 0 ${w} ${h}`);
      const units = opts.units;
      const tier = opts.tier;
      const [x0, y0] = toScreen(0, room.length_m);
      el("rect", { x: x0, y: y0, width: room.width_m * view.scale, height: room.length_m * view.scale, class: "room" }, svg);
      // Open sides drawn dashed.
      const sides = { front: [0, 0, room.width_m, 0], back: [0, room.length_m, room.width_m, room.length_m],
                      left: [0, 0, 0, room.length_m], right: [room.width_m, 0, room.width_m, room.length_m] };
      for (const [side, [a, b, c, d]] of Object.entries(sides)) {
        const [p1, q1] = toScreen(a, b), [p2, q2] = toScreen(c, d);
        el("line", { x1: p1, y1: q1, x2: p2, y2: q2, class: room.open_sides.includes(side) ? "wall open" : "wall" }, svg);
      }
      const zonesById = Object.fromEntries((analysis ? analysis.zones : []).map((z) => [z.id, z]));
      for (const z of room.zones) {
        if (tier && tier !== z.id) continue;
        const [zx, zy] = toScreen(z.x_m, z.y_m + z.length_m);
        el("rect", { x: zx, y: zy, width: z.width_m * view.scale, height: z.length_m * view.scale, class: "zone", "data-zone-id": z.id }, svg);
        const t = el("text", { x: zx + 4, y: zy + 14, class: "zone-label" }, svg);
        t.textContent = `${z.name} · canopy ${Units.length(z.canopy_height_m, units)}`;
        const a = zonesById[z.id];
        if (a) {
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
          if (opts.readout && a.grid) drawReadout(a);
        }
      }
      // With one tier shown, draw only the obstacles between its canopy and the shelf right above it.
      const shown = tier ? room.zones.find((z) => z.id === tier) : null;
      const cover = shown ? Math.min(...room.obstacles.filter((o) => o.z_m >= shown.canopy_height_m).map((o) => o.z_m), Infinity) : Infinity;
      for (const o of room.obstacles) {
        if (shown && (o.z_m + o.height_m < shown.canopy_height_m - 0.1 || o.z_m > cover + 1e-6)) continue;
        const [ox, oy] = toScreen(o.x_m, o.y_m + o.length_m);
        el("rect", { x: ox, y: oy, width: o.width_m * view.scale, height: o.length_m * view.scale, class: "obstacle" }, svg);
        const t = el("text", { x: ox + 4, y: oy + o.length_m * view.scale - 4, class: "obstacle-label" }, svg);
        t.textContent = `${o.name} (${Units.length(o.z_m, units)}–${Units.length(o.z_m + o.height_m, units)})`;
      }
      const types = Object.fromEntries(room.fixture_types.map((t) => [t.id, t]));
      const fg = el("g", { class: "fixtures" }, svg);
      for (const f of room.fixtures) {
        if (tier && !fixtureLightsZone(f, room, tier)) continue;
        fixtureShape(fg, f, types[f.type_id], opts.selection.has(f.id));
      }
      // Dimensions of the room and a scale bar.
      const dimW = el("text", { x: x0 + room.width_m * view.scale / 2, y: y0 + room.length_m * view.scale + 18, "text-anchor": "middle", class: "dim" }, svg);
      dimW.textContent = `width ${Units.length(room.width_m, units)}`;
      const dimL = el("text", { x: x0 - 8, y: y0 + room.length_m * view.scale / 2, "text-anchor": "middle", class: "dim",
                                transform: `rotate(-90 ${x0 - 8} ${y0 + room.length_m * view.scale / 2})` }, svg);
      dimL.textContent = `length ${Units.length(room.length_m, units)}`;
      const stepM = units === "imperial" ? niceFeet(120 / view.scale) : niceStep(120 / view.scale);
      const bx = 12, by = h - 14;
      el("line", { x1: bx, y1: by, x2: bx + stepM * view.scale, y2: by, class: "scalebar" }, svg);
      const sl = el("text", { x: bx, y: by - 5, class: "dim" }, svg);
      sl.textContent = Units.length(stepM, units);
      const front = el("text", { x: x0 + 4, y: y0 + room.length_m * view.scale - 4, class: "side-label" }, svg);
      front.textContent = "front";
      for (const r of opts.regions || []) {
        const [rx, ry] = toScreen(r.x_m, r.y_m + r.length_m);
        el("rect", { x: rx, y: ry, width: r.width_m * view.scale, height: r.length_m * view.scale, class: "region" }, svg);
        const t = el("text", { x: rx + 3, y: ry - 3, class: "region-label" }, svg);
        t.textContent = r.name;
      }
      if (drag && drag.kind === "area") {
        const [x0, y0] = drag.start, [x1, y1] = drag.end;
        const [rx, ry] = toScreen(Math.min(x0, x1), Math.max(y0, y1));
        el("rect", { x: rx, y: ry, width: Math.abs(x1 - x0) * view.scale, height: Math.abs(y1 - y0) * view.scale, class: "region drawing" }, svg);
      }
      if (highlight) drawHighlight(highlight);
    }

    function niceFeet(m) {
      const ft = m / Units.M_PER_FT;
      for (const k of [0.5, 1, 2, 5, 10, 20, 50, 100]) if (k >= ft) return k * Units.M_PER_FT;
      return 100 * Units.M_PER_FT;
    }

    function drawReadout(a) {
      const g = a.grid, nx = g.x_m.length, ny = g.y_m.length;
      const every = Math.max(1, Math.ceil(36 / (g.spacing_m * view.scale)));
      const grp = el("g", { class: "readout" }, svg);
      for (let j = Math.floor(every / 2); j < ny; j += every) {
        for (let i = Math.floor(every / 2); i < nx; i += every) {
          const [px, py] = toScreen(g.x_m[i], g.y_m[j]);
          const t = el("text", { x: px, y: py, "text-anchor": "middle" }, grp);
          t.textContent = Math.round(g.ppfd[j][i]);
        }
      }
    }

    function drawHighlight(bounds) {
      const [bx0, by0, bx1, by1] = bounds;
      const pad = 0.03;
      const [p1, q1] = toScreen(bx0 - pad, by1 + pad), [p2, q2] = toScreen(bx1 + pad, by0 - pad);
      el("rect", { x: p1, y: q1, width: Math.max(p2 - p1, 8), height: Math.max(q2 - q1, 8), class: "highlight" }, svg);
    }

    function fixtureLightsZone(f, room, zoneId) {
      const z = room.zones.find((zz) => zz.id === zoneId);
      if (!z || f.hanging_height_m <= z.canopy_height_m) return false;
      // Fixtures above a higher zone (a shelf above) do not light this tier.
      const higher = room.zones.filter((o) => o.canopy_height_m > z.canopy_height_m && o.canopy_height_m < f.hanging_height_m);
      return !higher.some((o) => f.x_m >= o.x_m && f.x_m <= o.x_m + o.width_m && f.y_m >= o.y_m && f.y_m <= o.y_m + o.length_m);
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
    });
    svg.addEventListener("pointermove", (ev) => {
      if (!drag) return;
      const [px, py] = local(ev);
      if (drag.kind === "area") {
        drag.end = toRoom(px, py);
        drag.moved = true;
        rerender();
        return;
      }
      if (drag.kind === "fixture") {
        const [x, y] = toRoom(px, py);
        const dx = x - drag.start[0], dy = y - drag.start[1];
        if (!drag.moved && Math.hypot(dx, dy) * view.scale < 2) return;
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
    svg.addEventListener("wheel", (ev) => {
      ev.preventDefault();
      zoomAt(local(ev), ev.deltaY < 0 ? 1.15 : 1 / 1.15);
    }, { passive: false });

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
    let userMoved = false;
    new ResizeObserver(() => { if (last) { if (!userMoved) fit(last.doc.room); rerender(); } }).observe(svg);

    return {
      render,
      zoom(f) { const { w, h } = size(); zoomAt([w / 2, h / 2], f); },
      fit() { userMoved = false; if (last) { fit(last.doc.room); rerender(); } },
      highlight(bounds) { highlight = bounds; rerender(); setTimeout(() => { highlight = null; rerender(); }, 2500); },
      fixtureScreenPoint(id) {
        const f = last && last.doc.room.fixtures.find((ff) => ff.id === id);
        if (!f) return null;
        const r = svg.getBoundingClientRect();
        const [px, py] = toScreen(f.x_m, f.y_m);
        return [r.left + px, r.top + py];
      },
      get scale() { return view.scale; },
      set areaMode(on) { areaMode = on; svg.classList.toggle("area-mode", on); },
    };
  }
  return { create };
})();
