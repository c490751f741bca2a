// The room editor: state, undo/redo, live analysis, autosave with revisions, and the side panels.
"use strict";
(function () {
  const page = JSON.parse(document.getElementById("page-data").textContent);
  const roomId = page.room_id;
  const $ = (id) => document.getElementById(id);

  const state = {
    doc: page.room_file,             // the working copy (SI units)
    savedRevision: page.room_file.revision,
    analysis: page.analysis,
    selection: new Set(),
    units: page.room_file.room.display_units,
    undo: [], redo: [],
    dirty: false,                    // differs from what the server has
    conflict: false,
    quantity: "ppfd",
    mapZone: page.room_file.room.zones[0] ? page.room_file.room.zones[0].id : null,
    tier: "",
    snap: false, snapStep: 0.0254,
    regions: [],                     // areas drawn to compare (not saved in the room file)
  };
  window.leafcast = state; // for the browser tests and the curious
  // Stacked tiers drawn together hide each other: start on the lowest tier when zones overlap on the plan.
  (function pickTier() {
    const zs = page.room_file.room.zones;
    const overlap = zs.some((a, i) => zs.some((b, j) => j > i && a.x_m < b.x_m + b.width_m && b.x_m < a.x_m + a.width_m
      && a.y_m < b.y_m + b.length_m && b.y_m < a.y_m + a.length_m));
    if (overlap) {
      state.tier = [...zs].sort((a, b) => a.canopy_height_m - b.canopy_height_m)[0].id;
      state.mapZone = state.tier;
    }
  })();

  // ---------------------------------------------------------------- history
  function snapshot() { return JSON.stringify({ room: state.doc.room, custom_crops: state.doc.custom_crops }); }
  function restore(text) {
    const snap = JSON.parse(text);
    state.doc.room = snap.room;
    state.doc.custom_crops = snap.custom_crops;
    for (const c of snap.custom_crops) page.crops[c.id] = c;
  }
  function commit(mutate) {
    state.undo.push(snapshot());
    if (state.undo.length > 200) state.undo.shift();
    state.redo = [];
    mutate(state.doc.room);
    changed();
  }
  function undo() {
    if (!state.undo.length) return;
    state.redo.push(snapshot());
    restore(state.undo.pop());
    pruneSelection();
    changed();
  }
  function redo() {
    if (!state.redo.length) return;
    state.undo.push(snapshot());
    restore(state.redo.pop());
    pruneSelection();
    changed();
  }
  function pruneSelection() {
    const ids = new Set(state.doc.room.fixtures.map((f) => f.id));
    for (const id of [...state.selection]) if (!ids.has(id)) state.selection.delete(id);
  }
  function changed(opts = {}) {
    state.dirty = true;
    render();
    renderZones(); renderObstacles(); renderCircuits();
    requestAnalysis();
    if (!opts.noSave) scheduleSave();
  }

  // ---------------------------------------------------------------- analysis (latest wins)
  let seq = 0, applied = 0, inFlight = false, again = false, lastMoveAt = 0;
  state.timing = [];
  async function requestAnalysis() {
    if (inFlight) { again = true; return; }
    inFlight = true;
    const mine = ++seq;
    const started = performance.now();
    try {
      const q = new URLSearchParams();
      for (const r of state.regions) q.append("region", [r.name.replace(/,/g, " "), r.x_m, r.y_m, r.width_m, r.length_m].join(","));
      const res = await fetch(`/api/analyze?${q}`, { method: "POST", headers: { "Content-Type": "application/json" },
                                                    body: JSON.stringify(state.doc) });
      const body = await res.json();
      if (mine > applied) {            // never let an older answer overwrite a newer one
        if (res.ok) {
          applied = mine;
          state.analysis = body;
          renderResults();
          plan.render(state.doc, state.analysis, planOpts());
          state.timing.push({ request_ms: performance.now() - started, since_move_ms: performance.now() - lastMoveAt });
          $("map-status").textContent = `Computed in ${body.compute_ms.toFixed(0)} ms.`;
        } else {
          $("map-status").textContent = `Not computed: ${body.message}`;
        }
      }
    } catch (err) {
      $("map-status").textContent = `Lost contact with Leafcast: ${err}`;
    } finally {
      inFlight = false;
      if (again) { again = false; requestAnalysis(); }
    }
  }

  // ---------------------------------------------------------------- saving with revisions
  let saveTimer = null, saving = false;
  function scheduleSave() {
    clearTimeout(saveTimer);
    status("Unsaved changes…");
    saveTimer = setTimeout(save, 700);
  }
  async function save(force) {
    if (state.conflict && !force) return;
    if (dragging) { scheduleSave(); return; }
    if (saving) { scheduleSave(); return; }
    saving = true;
    const sent = snapshot();
    const doc = Object.assign({}, state.doc, { revision: state.savedRevision });
    status("Saving…");
    try {
      const res = await fetch(`/api/rooms/${roomId}`, { method: "PUT", headers: { "Content-Type": "application/json" },
                                                       body: JSON.stringify(doc) });
      const body = await res.json();
      if (res.ok) {
        state.savedRevision = body.revision;
        state.doc.revision = body.revision;
        if (snapshot() === sent) state.dirty = false;
        status(state.dirty ? "Unsaved changes…" : `Saved · revision ${body.revision}`);
        hideBanner();
      } else if (res.status === 409) {
        state.conflict = true;
        state.theirRevision = body.current_revision;
        showConflict(body.message);
      } else {
        status("Not saved");
        showBanner(`Not saved: ${problemsText(body)}`, [["Dismiss", hideBanner]]);
      }
    } catch (err) {
      status("Not saved (offline)");
    } finally {
      saving = false;
    }
  }
  function status(text) { $("save-status").textContent = text; }
  function problemsText(body) {
    const list = (body.problems || []).slice(0, 4).map((p) => `${p.field}: ${p.message}`);
    return list.length ? list.join("; ") : body.message;
  }
  function showBanner(html, actions) {
    const b = $("banner");
    b.innerHTML = "";
    const p = document.createElement("p");
    p.textContent = html;
    b.appendChild(p);
    for (const [label, fn] of actions || []) {
      const btn = document.createElement("button");
      btn.type = "button"; btn.textContent = label; btn.addEventListener("click", fn);
      b.appendChild(btn);
    }
    b.hidden = false;
  }
  function hideBanner() { $("banner").hidden = true; }
  function showConflict(message) {
    status("Conflict: not saved");
    showBanner(`Someone else saved this room (revision ${state.theirRevision}) while you were editing. ${message} ` +
      "Choose: load their version (yours stays in Undo), or save yours over it.", [
      ["Load their version", async () => {
        const res = await fetch(`/api/rooms/${roomId}`);
        const theirs = await res.json();
        state.undo.push(snapshot());
        state.doc = theirs;
        state.savedRevision = theirs.revision;
        state.conflict = false; state.dirty = false;
        pruneSelection();
        hideBanner(); status(`Saved · revision ${theirs.revision}`);
        render(); requestAnalysis();
      }],
      ["Save mine over theirs", async () => {
        state.savedRevision = state.theirRevision;
        state.conflict = false;
        await save(true);
      }],
    ]);
  }
  window.addEventListener("beforeunload", (ev) => { if (state.dirty) { ev.preventDefault(); ev.returnValue = ""; } });

  // ---------------------------------------------------------------- helpers
  const room = () => state.doc.room;
  const typeOf = (f) => room().fixture_types.find((t) => t.id === f.type_id);
  const fixture = (id) => room().fixtures.find((f) => f.id === id);
  function nextId(prefix, taken) {
    for (let k = 1; ; k++) if (!taken.has(`${prefix}${k}`)) return `${prefix}${k}`;
  }
  function halfExtent(f) {
    const g = typeOf(f).geometry, a = f.rotation_deg * Math.PI / 180;
    const c = Math.abs(Math.cos(a)), s = Math.abs(Math.sin(a));
    return [0.5 * (g.length_m * c + g.width_m * s), 0.5 * (g.length_m * s + g.width_m * c)];
  }
  function clampInside(f) {
    const [hx, hy] = halfExtent(f);
    f.x_m = Math.min(Math.max(f.x_m, hx), room().width_m - hx);
    f.y_m = Math.min(Math.max(f.y_m, hy), room().length_m - hy);
  }
  function zoneUnder(f) {
    const below = room().zones.filter((z) => z.canopy_height_m < f.hanging_height_m && f.x_m >= z.x_m &&
      f.x_m <= z.x_m + z.width_m && f.y_m >= z.y_m && f.y_m <= z.y_m + z.length_m);
    return below.sort((a, b) => b.canopy_height_m - a.canopy_height_m)[0] || null;
  }
  const round4 = (v) => Math.round(v * 1e4) / 1e4;

  // ---------------------------------------------------------------- plan and dragging
  let dragging = null;
  const plan = Plan.create($("plan"), {
    onPick(id, additive) {
      if (id === null) { state.selection.clear(); }
      else if (additive) { state.selection.has(id) ? state.selection.delete(id) : state.selection.add(id); }
      else if (!state.selection.has(id)) { state.selection = new Set([id]); }
      render();
    },
    onDragStart(id) {
      if (!state.selection.has(id)) state.selection = new Set([id]);
      state.undo.push(snapshot()); state.redo = [];
      dragging = { origin: Object.fromEntries([...state.selection].map((sid) => [sid, [fixture(sid).x_m, fixture(sid).y_m]])) };
    },
    onDrag(dx, dy) {
      if (!dragging) return;
      for (const [sid, [x0, y0]] of Object.entries(dragging.origin)) {
        const f = fixture(sid);
        let x = x0 + dx, y = y0 + dy;
        if (state.snap && state.snapStep > 0) { x = Math.round(x / state.snapStep) * state.snapStep; y = Math.round(y / state.snapStep) * state.snapStep; }
        f.x_m = round4(x); f.y_m = round4(y);
        clampInside(f);
      }
      lastMoveAt = performance.now();
      state.dirty = true;
      render();
      requestAnalysis();
    },
    onDragEnd() { dragging = null; changed(); },
    onArea(x, y, w, l) {
      if (w < 0.02 || l < 0.02) return;
      if (state.regions.length >= 4) state.regions.shift();
      const n = (state.regionCount = (state.regionCount || 0) + 1);
      state.regions.push({ name: `Area ${n}`, x_m: round4(x), y_m: round4(y), width_m: round4(w), length_m: round4(l) });
      render();
      requestAnalysis();
    },
  });
  function planOpts() {
    return { units: state.units, selection: state.selection, tier: state.tier, readout: $("readout").checked, regions: state.regions };
  }
  $("area-mode").addEventListener("change", () => { plan.areaMode = $("area-mode").checked; });

  // ---------------------------------------------------------------- keyboard
  document.addEventListener("keydown", (ev) => {
    const inField = ["INPUT", "SELECT", "TEXTAREA"].includes(document.activeElement.tagName);
    if ((ev.ctrlKey || ev.metaKey) && ev.key.toLowerCase() === "z" && !inField) {
      ev.preventDefault(); ev.shiftKey ? redo() : undo(); return;
    }
    if ((ev.ctrlKey || ev.metaKey) && ev.key.toLowerCase() === "y" && !inField) { ev.preventDefault(); redo(); return; }
    if (inField || !state.selection.size) {
      if (!inField && ev.key === "Enter" && document.activeElement.dataset && document.activeElement.dataset.fixtureId) {
        state.selection = new Set([document.activeElement.dataset.fixtureId]); render();
      }
      return;
    }
    const step = (state.snap ? state.snapStep : (state.units === "imperial" ? Units.M_PER_IN : 0.01)) * (ev.shiftKey ? 10 : 1);
    const moves = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, step], ArrowDown: [0, -step] };
    if (moves[ev.key]) {
      ev.preventDefault();
      const [dx, dy] = moves[ev.key];
      commit(() => { for (const id of state.selection) { const f = fixture(id); f.x_m = round4(f.x_m + dx); f.y_m = round4(f.y_m + dy); clampInside(f); } });
    } else if (ev.key === "Delete" || ev.key === "Backspace") { ev.preventDefault(); removeSelected(); }
    else if (ev.key.toLowerCase() === "r") { rotateSelected(); }
    else if (ev.key.toLowerCase() === "d") { duplicateSelected(); }
    else if (ev.key === "Escape") { state.selection.clear(); render(); }
  });
  document.getElementById("plan").addEventListener("keydown", (ev) => {
    if (ev.key === "Enter" || ev.key === " ") {
      const id = document.activeElement.getAttribute && document.activeElement.getAttribute("data-fixture-id");
      if (id) { ev.preventDefault(); state.selection = new Set([id]); render(); }
    }
  });

  function removeSelected() {
    if (!state.selection.size) return;
    commit((r) => { r.fixtures = r.fixtures.filter((f) => !state.selection.has(f.id)); });
    state.selection.clear(); render();
  }
  function rotateSelected() {
    commit(() => { for (const id of state.selection) { const f = fixture(id); f.rotation_deg = (f.rotation_deg + 90) % 360; clampInside(f); } });
  }
  function duplicateSelected() {
    const fresh = new Set();
    commit((r) => {
      const taken = new Set(r.fixtures.map((f) => f.id));
      for (const id of state.selection) {
        const f = fixture(id);
        const c = Object.assign({}, f, { id: nextId("F", taken), x_m: round4(f.x_m + 0.15), y_m: round4(f.y_m - 0.15) });
        taken.add(c.id); clampInside(c); r.fixtures.push(c); fresh.add(c.id);
      }
    });
    state.selection = fresh; render();
  }

  // ---------------------------------------------------------------- side panel: fixture
  function fillSelection() {
    const sel = [...state.selection].map(fixture).filter(Boolean);
    $("sel-none").hidden = sel.length > 0;
    $("sel-fields").hidden = sel.length === 0;
    if (!sel.length) return;
    const f = sel[0], t = typeOf(f);
    const z = zoneUnder(f);
    $("sel-summary").textContent = sel.length > 1
      ? `${sel.length} fixtures selected: fields show ${f.id}; moves and edits apply to all.`
      : `${f.id}: ${t.name}, ${t.ppf_umol_s} µmol/s at ${t.power_w} W (${(t.ppf_umol_s / t.power_w).toFixed(2)} µmol/J)` +
        (t.weight_kg ? `, ${t.weight_kg} kg` : "") + (z ? `, over ${z.name}` : ", not over a zone");
    for (const input of document.querySelectorAll("#sel-fields [data-length]")) setIfIdle(input, Units.toInput(f[input.dataset.length], state.units));
    setIfIdle($("f-hc"), z ? Units.toInput(f.hanging_height_m - z.canopy_height_m, state.units) : "");
    $("f-hc").disabled = !z;
    for (const input of document.querySelectorAll("#sel-fields [data-num]")) setIfIdle(input, f[input.dataset.num]);
    const circ = $("f-circuit");
    circ.innerHTML = room().circuits.map((c) => `<option>${escapeHtml(c.name)}</option>`).join("");
    circ.value = f.circuit;
    $("f-on").checked = f.on;
  }
  function setIfIdle(input, value) { if (document.activeElement !== input) input.value = value; }
  function escapeHtml(s) { return String(s).replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" }[c])); }

  function fieldError(input, message) {
    input.setAttribute("aria-invalid", "true");
    input.title = message;
    $("map-status").textContent = message;
  }
  function fieldOk(input) { input.removeAttribute("aria-invalid"); input.title = ""; }

  for (const input of document.querySelectorAll("#sel-fields [data-length]")) {
    input.addEventListener("change", () => {
      let m;
      try { m = Units.parseLength(input.value, state.units); } catch (e) { return fieldError(input, e.message); }
      fieldOk(input);
      commit(() => { for (const id of state.selection) { const f = fixture(id); f[input.dataset.length] = round4(m); if (input.dataset.length !== "hanging_height_m") clampInside(f); } });
    });
  }
  $("f-hc").addEventListener("change", () => {
    let m;
    try { m = Units.parseLength($("f-hc").value, state.units); } catch (e) { return fieldError($("f-hc"), e.message); }
    if (m <= 0.01) return fieldError($("f-hc"), "a fixture must hang above its canopy (more than 1 cm)");
    fieldOk($("f-hc"));
    commit(() => { for (const id of state.selection) { const f = fixture(id); const z = zoneUnder(f); if (z) f.hanging_height_m = round4(Math.min(z.canopy_height_m + m, room().height_m)); } });
  });
  for (const input of document.querySelectorAll("#sel-fields [data-num]")) {
    input.addEventListener("change", () => {
      const v = parseFloat(input.value), key = input.dataset.num;
      const [lo, hi] = key === "dimming_pct" ? [10, 100] : [0, 359.999];
      if (!isFinite(v) || v < lo || v > hi) return fieldError(input, `${key === "dimming_pct" ? "dimming" : "rotation"} must be between ${lo} and ${Math.round(hi)}`);
      fieldOk(input);
      commit(() => { for (const id of state.selection) { const f = fixture(id); f[key] = v; clampInside(f); } });
    });
  }
  $("f-circuit").addEventListener("change", () => commit(() => { for (const id of state.selection) fixture(id).circuit = $("f-circuit").value; }));
  $("f-on").addEventListener("change", () => commit(() => { for (const id of state.selection) fixture(id).on = $("f-on").checked; }));
  $("rotate").addEventListener("click", rotateSelected);
  $("duplicate").addEventListener("click", duplicateSelected);
  $("delete").addEventListener("click", removeSelected);

  // ---------------------------------------------------------------- adding and arranging
  // The room's own fixture types (imported or fitted ones included) first, then the library.
  function palette() {
    const seen = new Set();
    return [...room().fixture_types, ...page.fixture_library].filter((t) => !seen.has(t.id) && seen.add(t.id));
  }
  function fillPalette() {
    const html = palette().map((t) => `<option value="${t.id}">${escapeHtml(t.name)} · ${t.ppf_umol_s} µmol/s · ${t.power_w} W</option>`).join("");
    if ($("add-type").innerHTML !== html) { const keep = $("add-type").value; $("add-type").innerHTML = html; if (keep) $("add-type").value = keep; }
  }
  $("add-fixture").addEventListener("click", () => {
    const lib = palette().find((t) => t.id === $("add-type").value);
    let id;
    commit((r) => {
      if (!r.fixture_types.some((t) => t.id === lib.id)) r.fixture_types.push(JSON.parse(JSON.stringify(lib)));
      const z = r.zones[0];
      id = nextId("F", new Set(r.fixtures.map((f) => f.id)));
      const f = { id, type_id: lib.id, x_m: round4(z ? z.x_m + z.width_m / 2 : r.width_m / 2), y_m: round4(z ? z.y_m + z.length_m / 2 : r.length_m / 2),
                  hanging_height_m: round4(Math.min(r.height_m - 0.05, (z ? z.canopy_height_m : 0) + 0.45)), rotation_deg: 0, dimming_pct: 100,
                  on: true, circuit: r.circuits[0].name };
      r.fixtures.push(f);
      clampInside(f);
    });
    state.selection = new Set([id]); render();
  });
  $("arrange").addEventListener("click", () => {
    const rows = parseInt($("arr-rows").value, 10), cols = parseInt($("arr-cols").value, 10);
    const z = room().zones.find((zz) => zz.id === $("arr-zone").value);
    if (!state.selection.size) return fieldError($("arrange"), "select a fixture first: the array copies it");
    if (!(rows >= 1 && cols >= 1 && rows * cols <= 400)) return fieldError($("arr-rows"), "rows × columns must be between 1 and 400");
    const fresh = new Set();
    commit((r) => {
      const sel = [...state.selection].map(fixture);
      const taken = new Set(r.fixtures.map((f) => f.id));
      for (let k = 0; k < rows * cols; k++) {
        const i = k % cols, j = Math.floor(k / cols);
        let f = sel[k];
        if (!f) { f = Object.assign({}, sel[0], { id: nextId("F", taken) }); taken.add(f.id); r.fixtures.push(f); }
        f.x_m = round4(z.x_m + (i + 0.5) * z.width_m / cols);
        f.y_m = round4(z.y_m + (j + 0.5) * z.length_m / rows);
        clampInside(f);
        fresh.add(f.id);
      }
    });
    state.selection = fresh; render();
  });
  $("snap-on").addEventListener("change", () => { state.snap = $("snap-on").checked; });
  $("snap-step").addEventListener("change", () => {
    try { state.snapStep = Units.parseLength($("snap-step").value, state.units); fieldOk($("snap-step")); }
    catch (e) { fieldError($("snap-step"), e.message); }
  });

  // ---------------------------------------------------------------- room, zones, obstacles, circuits
  $("room-name").addEventListener("change", () => {
    const v = $("room-name").value.trim();
    if (!v) return fieldError($("room-name"), "a room needs a name");
    commit((r) => { r.name = v.slice(0, 120); });
  });
  for (const input of document.querySelectorAll("[data-room-length]")) {
    input.addEventListener("change", () => {
      let m;
      try { m = Units.parseLength(input.value, state.units); } catch (e) { return fieldError(input, e.message); }
      if (m <= 0) return fieldError(input, "must be more than zero");
      fieldOk(input);
      commit((r) => { r[input.dataset.roomLength] = round4(m); });
    });
  }
  $("r-finish").innerHTML = Object.entries(page.wall_finishes).map(([k, v]) => `<option value="${k}">${escapeHtml(v.label)} (${v.kind}, ${v.reflectance})</option>`).join("");
  $("r-finish").addEventListener("change", () => commit((r) => { r.wall_finish = Object.assign({}, page.wall_finishes[$("r-finish").value]); }));
  $("r-refl").addEventListener("change", () => {
    const v = parseFloat($("r-refl").value);
    if (!(v >= 0 && v <= 1)) return fieldError($("r-refl"), "reflectance is between 0 and 1");
    fieldOk($("r-refl"));
    commit((r) => { r.wall_finish = Object.assign({}, r.wall_finish, { reflectance: v, label: "Custom" }); });
  });
  for (const box of document.querySelectorAll("#r-open input")) {
    box.addEventListener("change", () => commit((r) => {
      r.open_sides = [...document.querySelectorAll("#r-open input")].filter((b) => b.checked).map((b) => b.value);
    }));
  }
  for (const input of document.querySelectorAll("[data-schedule]")) {
    input.addEventListener("change", () => {
      const v = parseFloat(input.value), key = input.dataset.schedule;
      const ok = key === "photoperiod_h" ? v > 0 && v <= 24 : key === "supply_voltage_v" ? v > 0 && v <= 1000 : v >= 0;
      if (!isFinite(v) || !ok) return fieldError(input, key === "photoperiod_h" ? "photoperiod is more than 0 and at most 24 h" :
        key === "supply_voltage_v" ? "voltage must be more than 0" : "price cannot be negative");
      fieldOk(input);
      commit((r) => { r.schedule[key] = v; });
    });
  }
  $("s-cur").addEventListener("change", () => commit((r) => { r.schedule.currency = $("s-cur").value.slice(0, 8) || "USD"; }));

  const zoneFields = [["name", "Name", "text"], ["crop_id", "Crop", "crop"], ["stage", "Stage", "stage"],
    ["photoperiod_h", "Photoperiod (h, blank: room's)", "hours"], ["canopy_height_m", "Canopy height", "len"],
    ["x_m", "From left wall", "len"], ["y_m", "From front wall", "len"], ["width_m", "Width", "len"], ["length_m", "Length", "len"]];
  function renderZones() {
    const host = $("zones");
    if (host.contains(document.activeElement)) return;
    host.innerHTML = "";
    room().zones.forEach((z, idx) => {
      const box = document.createElement("fieldset");
      box.className = "zone-box";
      box.innerHTML = `<legend>${escapeHtml(z.name)}</legend>`;
      const grid = document.createElement("div"); grid.className = "field-grid";
      for (const [key, label, kind] of zoneFields) {
        const id = `z${idx}-${key}`;
        const lab = document.createElement("label"); lab.htmlFor = id;
        lab.textContent = label + (kind === "len" ? ` (${Units.inputUnit(state.units)})` : "");
        let input;
        if (kind === "crop" || kind === "stage") {
          input = document.createElement("select");
          const opts = kind === "crop" ? Object.values(page.crops).map((c) => [c.id, c.name]) :
            Object.keys(page.crops[z.crop_id] ? page.crops[z.crop_id].stages : {}).map((s) => [s, s]);
          input.innerHTML = opts.map(([v, t]) => `<option value="${v}">${escapeHtml(t)}</option>`).join("");
          input.value = z[key];
        } else {
          input = document.createElement("input");
          input.value = kind === "len" ? Units.toInput(z[key], state.units) : (z[key] === null ? "" : z[key]);
        }
        input.id = id;
        input.addEventListener("change", () => {
          let v = input.value;
          try {
            if (kind === "len") v = round4(Units.parseLength(v, state.units));
            if (kind === "hours") { v = v.trim() === "" ? null : parseFloat(v); if (v !== null && !(v > 0 && v <= 24)) throw new Error("photoperiod is more than 0 and at most 24 h"); }
            if (kind === "text" && !v.trim()) throw new Error("a zone needs a name");
          } catch (e) { return fieldError(input, e.message); }
          commit((r) => {
            const zz = r.zones[idx]; zz[key] = v;
            if (key === "crop_id") { const stages = Object.keys(page.crops[v].stages); if (!stages.includes(zz.stage)) zz.stage = stages[0]; }
          });
          renderZones();
        });
        grid.append(lab, input);
      }
      box.appendChild(grid);
      box.appendChild(bandEditor(z, idx));
      if (room().zones.length > 1) {
        const del = document.createElement("button"); del.type = "button"; del.textContent = `Remove ${z.name}`;
        del.addEventListener("click", () => { commit((r) => { r.zones.splice(idx, 1); }); renderZones(); });
        box.appendChild(del);
      }
      host.appendChild(box);
    });
  }
  // The crop's band for this zone's stage; editing it makes the room's own copy of the crop (saved in the file).
  function bandEditor(z, idx) {
    const crop = page.crops[z.crop_id];
    const st = crop && crop.stages[z.stage];
    const wrap = document.createElement("div");
    if (!st) return wrap;
    wrap.className = "field-grid band";
    const fields = [["dli_min", "DLI band from (mol m⁻² d⁻¹)"], ["dli_max", "DLI band to"], ["ppfd_stress_umol_m2_s", "Stress above (µmol m⁻² s⁻¹)"]];
    for (const [key, label] of fields) {
      const id = `z${idx}-${key}`;
      const lab = document.createElement("label"); lab.htmlFor = id; lab.textContent = label;
      const input = document.createElement("input"); input.id = id; input.type = "number"; input.step = "0.5"; input.min = "0"; input.value = st[key];
      input.addEventListener("change", () => {
        const v = parseFloat(input.value);
        const next = Object.assign({}, st, { [key]: v });
        if (!(v >= 0) || next.dli_max < next.dli_min || next.ppfd_stress_umol_m2_s <= 0) return fieldError(input, "the band needs 0 ≤ from ≤ to, and a stress level above 0");
        commit(() => {
          const own = z.crop_id.startsWith("own-") ? z.crop_id : `own-${z.crop_id}`.slice(0, 40);
          const base = JSON.parse(JSON.stringify(page.crops[z.crop_id]));
          const copy = Object.assign(base, { id: own, name: base.name.startsWith("Own:") ? base.name : `Own: ${base.name}`.slice(0, 120) });
          copy.stages[z.stage] = Object.assign({}, copy.stages[z.stage], { [key]: v, source: "set by the grower" });
          state.doc.custom_crops = state.doc.custom_crops.filter((c) => c.id !== own).concat([copy]);
          page.crops[own] = copy;
          room().zones[idx].crop_id = own;
        });
      });
      wrap.append(lab, input);
    }
    const src = document.createElement("p"); src.className = "small"; src.textContent = `Source: ${st.source}`;
    wrap.appendChild(src);
    return wrap;
  }

  $("add-zone").addEventListener("click", () => {
    commit((r) => {
      const id = nextId("zone-", new Set(r.zones.map((z) => z.id)));
      r.zones.push({ id, name: `Zone ${r.zones.length + 1}`, x_m: 0, y_m: 0, width_m: round4(Math.min(1.2, r.width_m)),
                     length_m: round4(Math.min(1.2, r.length_m)), canopy_height_m: 0.6, crop_id: "lettuce", stage: "vegetative", photoperiod_h: null });
    });
    renderZones();
  });

  const obstacleFields = [["name", "Name", "text"], ["x_m", "From left wall", "len"], ["y_m", "From front wall", "len"], ["z_m", "Bottom above floor", "len"],
    ["width_m", "Width", "len"], ["length_m", "Length", "len"], ["height_m", "Thickness", "len"]];
  function renderObstacles() {
    const host = $("obstacles");
    if (host.contains(document.activeElement)) return;
    host.innerHTML = "";
    room().obstacles.forEach((o, idx) => {
      const box = document.createElement("fieldset"); box.className = "zone-box";
      box.innerHTML = `<legend>${escapeHtml(o.name)}</legend>`;
      const grid = document.createElement("div"); grid.className = "field-grid";
      for (const [key, label, kind] of obstacleFields) {
        const id = `o${idx}-${key}`;
        const lab = document.createElement("label"); lab.htmlFor = id;
        lab.textContent = label + (kind === "len" ? ` (${Units.inputUnit(state.units)})` : "");
        const input = document.createElement("input"); input.id = id;
        input.value = kind === "len" ? Units.toInput(o[key], state.units) : o[key];
        input.addEventListener("change", () => {
          let v = input.value;
          try { if (kind === "len") v = round4(Units.parseLength(v, state.units)); } catch (e) { return fieldError(input, e.message); }
          commit((r) => { r.obstacles[idx][key] = v; }); renderObstacles();
        });
        grid.append(lab, input);
      }
      box.appendChild(grid);
      const del = document.createElement("button"); del.type = "button"; del.textContent = `Remove ${o.name}`;
      del.addEventListener("click", () => { commit((r) => { r.obstacles.splice(idx, 1); }); renderObstacles(); });
      box.appendChild(del);
      host.appendChild(box);
    });
  }
  $("add-obstacle").addEventListener("click", () => {
    commit((r) => {
      const id = nextId("obstacle-", new Set(r.obstacles.map((o) => o.id)));
      r.obstacles.push({ id, name: `Obstacle ${r.obstacles.length + 1}`, x_m: 0, y_m: 0, z_m: round4(r.height_m * 0.5),
                         width_m: round4(Math.min(0.6, r.width_m)), length_m: round4(Math.min(0.3, r.length_m)), height_m: 0.03 });
    });
    renderObstacles();
  });

  function renderCircuits() {
    const host = $("circuits");
    if (host.contains(document.activeElement)) return;
    host.innerHTML = "";
    room().circuits.forEach((c, idx) => {
      const row = document.createElement("div"); row.className = "field-grid";
      row.innerHTML = `<label for="c${idx}-name">Name</label><input id="c${idx}-name" value="${escapeHtml(c.name)}">` +
        `<label for="c${idx}-a">Breaker (A)</label><input id="c${idx}-a" type="number" min="1" max="400" value="${c.breaker_a}">`;
      row.querySelector(`#c${idx}-name`).addEventListener("change", (ev) => {
        const v = ev.target.value.trim();
        if (!v || room().circuits.some((o, k) => k !== idx && o.name === v)) return fieldError(ev.target, "circuit names must be unique and not empty");
        commit((r) => { const old = r.circuits[idx].name; r.circuits[idx].name = v; for (const f of r.fixtures) if (f.circuit === old) f.circuit = v; });
      });
      row.querySelector(`#c${idx}-a`).addEventListener("change", (ev) => {
        const v = parseFloat(ev.target.value);
        if (!(v > 0 && v <= 400)) return fieldError(ev.target, "breaker rating is more than 0 and at most 400 A");
        commit((r) => { r.circuits[idx].breaker_a = v; });
      });
      host.appendChild(row);
    });
  }
  $("add-circuit").addEventListener("click", () => {
    commit((r) => { const taken = new Set(r.circuits.map((c) => c.name)); let k = 0; let n; do { n = String.fromCharCode(65 + k++); } while (taken.has(n)); r.circuits.push({ name: n, breaker_a: 15 }); });
    renderCircuits();
  });

  // ---------------------------------------------------------------- units
  for (const radio of document.querySelectorAll("input[name=units]")) {
    radio.addEventListener("change", () => {
      // A view setting only: stored values stay SI and the room file is not touched.
      state.units = radio.value;
      render(); renderZones(); renderObstacles(); renderCircuits(); renderResults();
    });
  }

  // ---------------------------------------------------------------- files
  $("open-file").addEventListener("change", (ev) => {
    const file = ev.target.files[0];
    ev.target.value = "";
    if (!file) return;
    const reader = new FileReader();
    reader.onload = async () => {
      const res = await fetch("/api/rooms/import", { method: "POST", headers: { "Content-Type": "application/json" }, body: reader.result });
      const body = await res.json().catch(() => ({ message: res.statusText }));
      if (!res.ok) {
        showBanner(`${file.name} was not opened: ${problemsText(body)}. This room is unchanged.`, [["Dismiss", hideBanner]]);
        return;
      }
      showBanner(`Opened ${file.name} as a new room, “${body.name}”.`, [["Go to it", () => { window.location.href = `/rooms/${body.id}`; }], ["Stay here", hideBanner]]);
    };
    reader.readAsText(file);
  });
  $("download").addEventListener("click", async () => {
    clearTimeout(saveTimer);
    if (state.dirty && !state.conflict) await save();
    window.location.href = `/api/rooms/${roomId}/file`;
  });

  // ---------------------------------------------------------------- results: map, figures, warnings
  function renderResults() {
    const a = state.analysis;
    if (!a) return;
    const zsel = $("map-zone");
    const zoneIds = a.zones.map((z) => z.id);
    if (!zoneIds.includes(state.mapZone)) state.mapZone = zoneIds[0];
    zsel.innerHTML = a.zones.map((z) => `<option value="${z.id}">${escapeHtml(z.name)}</option>`).join("");
    zsel.value = state.mapZone;
    drawMap();
    renderFigures(a);
    renderRegions(a);
    renderWarnings(a);
  }

  // While a fixture is dragged, plotly's full repaint (25-45 ms in software-rendered Chromium) would trail
  // the pointer: the new values are painted on a canvas laid exactly over plotly's heatmap, in its colour
  // scale, and plotly redraws everything (contours included) as soon as the fixture is dropped.
  const VIRIDIS = [[68, 1, 84], [71, 44, 122], [59, 81, 139], [44, 113, 142], [33, 144, 141], [39, 173, 129],
    [92, 200, 99], [170, 220, 50], [253, 231, 37]];
  function viridis(t) {
    const x = Math.min(Math.max(t, 0), 1) * (VIRIDIS.length - 1), i = Math.min(Math.floor(x), VIRIDIS.length - 2), f = x - i;
    return VIRIDIS[i].map((c, k) => Math.round(c * (1 - f) + VIRIDIS[i + 1][k] * f));
  }
  function edges(v) {
    const mid = v.slice(1).map((x, i) => (x + v[i]) / 2);
    return [v[0] - (mid[0] - v[0]), ...mid, v[v.length - 1] + (v[v.length - 1] - mid[mid.length - 1])];
  }
  function paintPreview(xs, ys, values) {
    const gd = $("map"), fl = gd._fullLayout, tr = gd._fullData && gd._fullData[0];
    if (!fl || !tr || xs.length < 2 || ys.length < 2) return false;
    let cv = $("map-preview");
    if (!cv) { cv = document.createElement("canvas"); cv.id = "map-preview"; cv.className = "map-preview"; gd.appendChild(cv); }
    const xa = fl.xaxis, ya = fl.yaxis;
    Object.assign(cv.style, { left: "0px", top: "0px", width: `${fl.width}px`, height: `${fl.height}px`, display: "block" });
    cv.width = fl.width; cv.height = fl.height;
    const ctx = cv.getContext("2d");
    ctx.beginPath();
    ctx.rect(xa._offset, ya._offset, xa._length, ya._length);  // the axes' own area, as plotly clips it
    ctx.clip();
    const xe = edges(xs).map((v) => xa._offset + xa.l2p(v)), ye = edges(ys).map((v) => ya._offset + ya.l2p(v));
    const lo = tr.zmin, span = (tr.zmax - tr.zmin) || 1;
    for (let j = 0; j < ys.length; j++) {
      for (let i = 0; i < xs.length; i++) {
        const [r, g, b] = viridis((values[j][i] - lo) / span);
        ctx.fillStyle = `rgb(${r},${g},${b})`;
        ctx.fillRect(xe[i], ye[j + 1], xe[i + 1] - xe[i] + 0.6, ye[j] - ye[j + 1] + 0.6);
      }
    }
    return true;
  }
  function hidePreview() { const cv = $("map-preview"); if (cv) cv.style.display = "none"; }

  function drawMap() {
    const a = state.analysis;
    const z = a.zones.find((zz) => zz.id === state.mapZone);
    if (!z || !z.grid || !window.Plotly) return;
    const u = state.units, q = state.quantity;
    const xs = z.grid.x_m.map((v) => Units.axisValue(v, u)), ys = z.grid.y_m.map((v) => Units.axisValue(v, u));
    const values = q === "ppfd" ? z.grid.ppfd : z.grid.dli;
    if (dragging && paintPreview(xs, ys, values)) return;
    hidePreview();
    const title = q === "ppfd" ? "PPFD<br>µmol m⁻² s⁻¹" : "DLI<br>mol m⁻² d⁻¹";
    const low = q === "ppfd" ? z.target.ppfd_min : z.target.dli_min;
    const high = q === "ppfd" ? z.target.ppfd_stress : z.target.ppfd_stress * z.photoperiod_h * 0.0036;
    const contour = (level, color, name) => ({
      type: "contour", x: xs, y: ys, z: values, showscale: false, hoverinfo: "skip", name,
      contours: { coloring: "none", start: level, end: level, size: 1, showlabels: true, labelfont: { color, size: 11 } },
      line: { color, width: 2, dash: name === "dark" ? "dot" : "solid" },
    });
    const traces = [{
      type: "heatmap", x: xs, y: ys, z: values, colorscale: "Viridis", zsmooth: false,
      colorbar: { title: { text: title, side: "top" }, thickness: 14 }, showlegend: false,
      hovertemplate: `%{x:.2f} ${Units.axisUnit(u)}, %{y:.2f} ${Units.axisUnit(u)}<br>%{z:.0f}<extra></extra>`,
    }, contour(low, "#ffffff", "dark"), contour(high, "#ff3b30", "hot")];
    const shapes = room().fixtures.filter((f) => f.on).map((f) => {
      const [hx, hy] = halfExtent(f);
      return { type: "rect", x0: Units.axisValue(f.x_m - hx, u), x1: Units.axisValue(f.x_m + hx, u), y0: Units.axisValue(f.y_m - hy, u),
               y1: Units.axisValue(f.y_m + hy, u), line: { color: "rgba(255,255,255,0.7)", width: 1 } };
    });
    const layout = {
      margin: { l: 48, r: 10, t: 10, b: 40 }, height: 340, shapes, showlegend: false,
      xaxis: { title: { text: `from left wall (${Units.axisUnit(u)})` }, constrain: "domain" },
      yaxis: { title: { text: `from front wall (${Units.axisUnit(u)})` }, scaleanchor: "x", scaleratio: 1 },
      uirevision: `${state.mapZone}-${u}-${q}`,
    };
    window.Plotly.react("map", traces, layout, { displaylogo: false, responsive: true, modeBarButtonsToRemove: ["select2d", "lasso2d"] });
  }

  function fmt(v, d = 0) { return v === null || v === undefined || !isFinite(v) ? "–" : Number(v).toFixed(d); }
  function pct(v) { return `${fmt(100 * v)} %`; }
  function renderFigures(a) {
    const u = state.units;
    let html = `<table class="figures"><caption>Per zone, at each zone's photoperiod</caption><thead><tr><th scope="col">Zone</th><th scope="col">PPFD avg / min / max</th><th scope="col">Uniformity min/avg · CV</th><th scope="col">DLI avg (band)</th><th scope="col">In band</th><th scope="col">Dark · hot</th><th scope="col">Hours for band</th></tr></thead><tbody>`;
    for (const z of a.zones) {
      html += `<tr data-zone-row="${z.id}"><th scope="row">${escapeHtml(z.name)}<br><span class="small">${escapeHtml(z.crop_name)}, ${z.stage}, ${z.photoperiod_h} h</span></th>` +
        `<td><span data-figure="ppfd-avg">${fmt(z.ppfd.avg)}</span> / ${fmt(z.ppfd.min)} / ${fmt(z.ppfd.max)}</td>` +
        `<td>${fmt(z.ppfd.min_over_avg, 2)} · ${fmt(z.ppfd.cv, 2)}</td>` +
        `<td>${fmt(z.dli.avg, 1)} (${z.target.dli_min}–${z.target.dli_max})</td><td>${pct(z.share_in_band)}</td>` +
        `<td>${Units.area(z.dark.area_m2, u)} · ${Units.area(z.hot.area_m2, u)}</td><td>${fmt(z.photoperiod_for_target_h, 1)} h</td></tr>`;
    }
    html += "</tbody></table>";
    const e = a.energy, h = a.heat;
    html += `<table class="figures"><caption>Energy, heat and circuits</caption><tbody>` +
      `<tr><th scope="row">Power drawn</th><td>${fmt(e.power_w)} W · ${fmt(e.layout_umol_per_j, 2)} µmol/J</td></tr>` +
      `<tr><th scope="row">Energy</th><td>${fmt(e.kwh_per_day, 2)} kWh/day · ${fmt(e.kwh_per_month)} kWh/month</td></tr>` +
      `<tr><th scope="row">Cost</th><td>${fmt(e.cost_per_day, 2)} ${escapeHtml(e.currency)}/day · ${fmt(e.cost_per_month, 2)} ${escapeHtml(e.currency)}/month</td></tr>` +
      `<tr><th scope="row">Heat to remove</th><td>${fmt(h.w)} W · ${fmt(h.btu_h)} BTU/h</td></tr>` +
      `<tr><th scope="row">Photons on canopy</th><td>${pct(e.canopy_share_of_emitted)} of emitted · ${fmt(e.canopy_mol_per_kwh, 2)} mol per kWh</td></tr>`;
    for (const c of a.circuits) {
      html += `<tr class="${c.ok ? "" : "bad"}"><th scope="row">Circuit ${escapeHtml(c.name)}</th><td>${fmt(c.load_w)} W of ${fmt(c.limit_w)} W · ${fmt(c.current_a, 1)} A of ${fmt(c.continuous_limit_a, 1)} A continuous (${c.breaker_a} A breaker) ${c.ok ? "" : "· over the limit"}</td></tr>`;
    }
    html += "</tbody></table>";
    $("figures").innerHTML = html;
  }

  function renderRegions(a) {
    const host = $("regions");
    if (!state.regions.length) { host.innerHTML = ""; return; }
    const rows = (a.regions || []).map((r) => `<tr><th scope="row">${escapeHtml(r.name)} · ${escapeHtml(r.zone_id)}</th>
      <td>${fmt(r.ppfd.avg)} / ${fmt(r.ppfd.min)} / ${fmt(r.ppfd.max)}</td><td>${fmt(r.ppfd.min_over_avg, 2)}</td><td>${Units.area(r.area_m2, state.units)}</td></tr>`).join("");
    host.innerHTML = `<table class="figures"><caption>Drawn areas (PPFD) <button type="button" id="clear-areas">Clear areas</button></caption>
      <thead><tr><th scope="col">Area · zone</th><th scope="col">avg / min / max</th><th scope="col">min/avg</th><th scope="col">Canopy area</th></tr></thead>
      <tbody>${rows || "<tr><td colspan='4'>The areas cover no canopy.</td></tr>"}</tbody></table>`;
    $("clear-areas").addEventListener("click", () => { state.regions = []; render(); requestAnalysis(); });
  }

  function renderWarnings(a) {
    const ul = $("warnings");
    ul.innerHTML = "";
    if (!a.warnings.length) { ul.innerHTML = "<li class='ok'>No warnings: every zone is in its band.</li>"; return; }
    for (const w of a.warnings) {
      const li = document.createElement("li");
      li.className = `warning ${w.severity}`;
      const btn = document.createElement("button");
      btn.type = "button";
      btn.innerHTML = `<strong>${w.severity}</strong> ${escapeHtml(w.message)}<br><span class="fix">Fix: ${escapeHtml(w.fix)}</span>`;
      btn.addEventListener("click", () => {
        if (w.zone_id) { state.mapZone = w.zone_id; renderResults(); }
        if (w.fixture_id) { state.selection = new Set([w.fixture_id]); render(); }
        let bounds = w.where;
        if (!bounds && w.zone_id) { const z = room().zones.find((zz) => zz.id === w.zone_id); if (z) bounds = [z.x_m, z.y_m, z.x_m + z.width_m, z.y_m + z.length_m]; }
        if (bounds) plan.highlight(bounds);
      });
      li.appendChild(btn);
      ul.appendChild(li);
    }
  }

  // ---------------------------------------------------------------- view controls
  $("zoom-in").addEventListener("click", () => plan.zoom(1.25));
  $("zoom-out").addEventListener("click", () => plan.zoom(0.8));
  $("zoom-fit").addEventListener("click", () => plan.fit());
  $("readout").addEventListener("change", render);
  $("tier").addEventListener("change", () => { state.tier = $("tier").value; if (state.tier) { state.mapZone = state.tier; renderResults(); } render(); });
  $("map-zone").addEventListener("change", () => { state.mapZone = $("map-zone").value; drawMap(); });
  for (const radio of document.querySelectorAll("input[name=quantity]")) radio.addEventListener("change", () => { state.quantity = radio.value; drawMap(); });
  $("undo").addEventListener("click", undo);
  $("redo").addEventListener("click", redo);

  function fillRoomPanel() {
    const r = room();
    for (const input of document.querySelectorAll("[data-room-length]")) setIfIdle(input, Units.toInput(r[input.dataset.roomLength], state.units));
    const key = Object.entries(page.wall_finishes).find(([, v]) => v.kind === r.wall_finish.kind && v.reflectance === r.wall_finish.reflectance);
    $("r-finish").value = key ? key[0] : "";
    setIfIdle($("r-refl"), r.wall_finish.reflectance);
    for (const b of document.querySelectorAll("#r-open input")) b.checked = r.open_sides.includes(b.value);
    for (const input of document.querySelectorAll("[data-schedule]")) setIfIdle(input, r.schedule[input.dataset.schedule]);
    setIfIdle($("s-cur"), r.schedule.currency);
    setIfIdle($("room-name"), r.name);
    setIfIdle($("snap-step"), Units.toInput(state.snapStep, state.units));
    for (const el of document.querySelectorAll("[data-unit]")) el.textContent = `(${Units.inputUnit(state.units)})`;
    const tierSel = $("tier");
    const opts = `<option value="">all zones</option>` + r.zones.map((z) => `<option value="${z.id}">${escapeHtml(z.name)}</option>`).join("");
    if (tierSel.innerHTML !== opts) { tierSel.innerHTML = opts; }
    tierSel.value = state.tier;
    const arr = $("arr-zone"), arrOpts = r.zones.map((z) => `<option value="${z.id}">${escapeHtml(z.name)}</option>`).join("");
    if (arr.innerHTML !== arrOpts) arr.innerHTML = arrOpts;
  }

  function render() {
    fillPalette();
    $("undo").disabled = !state.undo.length;
    $("redo").disabled = !state.redo.length;
    fillSelection();
    fillRoomPanel();
    plan.render(state.doc, state.analysis, planOpts());
  }

  render();
  renderZones(); renderObstacles(); renderCircuits();
  renderResults();
  state.ready = true;
})();
