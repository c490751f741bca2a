// The zones and obstacles tabs: each canopy zone (crop, stage in growth order, photoperiod, place and size,
// the crop's band for this stage) and each obstacle (shelves, ducts).

import * as Units from "../../lib/units.js";
import { escapeHtml, stagesInOrder, stageLabel } from "../../lib/format.js";
import { $, page, state, room, idFromName, round4 } from "../state.js";
import { tryCommit, lengthOf, showFieldError } from "../fields.js";

const NEW_ZONE_SIDE_M = 1.2, NEW_ZONE_CANOPY_M = 0.6;

const zoneFields = [["name", "Name", "text"], ["crop_id", "Crop", "crop"], ["stage", "Stage", "stage"],
  ["photoperiod_h", "Photoperiod (h, blank: room's)", "hours"], ["canopy_height_m", "Canopy height", "len"],
  ["x_m", "From left wall", "len"], ["y_m", "From front wall", "len"], ["width_m", "Width", "len"], ["length_m", "Length", "len"]];

function field(id, label, kind) {
  const lab = document.createElement("label"); lab.htmlFor = id;
  lab.textContent = label + (kind === "len" ? ` (${Units.inputUnit(state.units)})` : "");
  return lab;
}

function readValue(input, kind) {
  if (kind === "len") { const m = lengthOf(input); return m === null ? undefined : round4(m); }
  const v = input.value;
  if (kind === "hours") {
    if (v.trim() === "") return null;
    const h = parseFloat(v);
    if (!(h > 0 && h <= 24)) { showFieldError(input, "the photoperiod is more than 0 and at most 24 h"); return undefined; }
    return h;
  }
  if (kind === "text" && !v.trim()) { showFieldError(input, "a zone needs a name"); return undefined; }
  return kind === "text" ? v.trim().slice(0, 120) : v;
}

export function renderZones() {
  const host = $("zones");
  if (host.contains(document.activeElement) || host.querySelector("[aria-invalid=true]")) return;
  host.innerHTML = "";
  room().zones.forEach((z, idx) => {
    const box = document.createElement("fieldset");
    box.className = "zone-box";
    box.innerHTML = `<legend>${escapeHtml(z.name)}</legend>`;
    const grid = document.createElement("div"); grid.className = "field-grid";
    for (const [key, label, kind] of zoneFields) {
      const id = `z${idx}-${key}`;
      let input;
      if (kind === "crop" || kind === "stage") {
        input = document.createElement("select");
        const opts = kind === "crop" ? Object.values(page.crops).map((c) => [c.id, c.name]) :
          stagesInOrder(page.crops[z.crop_id] && page.crops[z.crop_id].stages).map((s) => [s, stageLabel(s)]);
        input.innerHTML = opts.map(([v, t]) => `<option value="${escapeHtml(v)}">${escapeHtml(t)}</option>`).join("");
        input.value = z[key];
      } else {
        input = document.createElement("input");
        input.value = kind === "len" ? Units.lengthInput(z[key], state.units) : (z[key] === null ? "" : z[key]);
      }
      input.id = id;
      input.addEventListener("change", () => {
        const v = readValue(input, kind);
        if (v === undefined) return;
        const ok = tryCommit(input, (r) => {
          const zz = r.zones[idx]; zz[key] = v;
          if (key === "crop_id") { const stages = stagesInOrder(page.crops[v].stages); if (!stages.includes(zz.stage)) zz.stage = stages[0]; }
        });
        if (ok) renderZones();
      });
      grid.append(field(id, label, kind), input);
    }
    box.appendChild(grid);
    box.appendChild(bandEditor(z, idx));
    if (room().zones.length > 1) {
      const del = document.createElement("button"); del.type = "button"; del.textContent = `Remove ${z.name}`;
      del.addEventListener("click", () => { if (tryCommit(del, (r) => { r.zones.splice(idx, 1); })) renderZones(); });
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
      if (!(v >= 0) || next.dli_max < next.dli_min || next.ppfd_stress_umol_m2_s <= 0) return showFieldError(input, "the band needs 0 ≤ from ≤ to, and a stress level above 0");
      const own = z.crop_id.startsWith("own-") ? z.crop_id : `own-${z.crop_id}`.slice(0, 40);
      const base = JSON.parse(JSON.stringify(page.crops[z.crop_id]));
      const copy = Object.assign(base, { id: own, name: base.name.startsWith("Own:") ? base.name : `Own: ${base.name}`.slice(0, 120) });
      copy.stages[z.stage] = Object.assign({}, copy.stages[z.stage], { [key]: v, source: "set by the grower" });
      page.crops[own] = copy;
      tryCommit(input, (r, doc) => {
        doc.custom_crops = doc.custom_crops.filter((c) => c.id !== own).concat([copy]);
        r.zones[idx].crop_id = own;
      });
    });
    wrap.append(lab, input);
  }
  const src = document.createElement("p"); src.className = "small"; src.textContent = `Source: ${st.source}`;
  wrap.appendChild(src);
  return wrap;
}

const obstacleFields = [["name", "Name", "text"], ["x_m", "From left wall", "len"], ["y_m", "From front wall", "len"], ["z_m", "Bottom above floor", "len"],
  ["width_m", "Width", "len"], ["length_m", "Length", "len"], ["height_m", "Thickness", "len"]];

export function renderObstacles() {
  const host = $("obstacles");
  if (host.contains(document.activeElement) || host.querySelector("[aria-invalid=true]")) return;
  host.innerHTML = "";
  room().obstacles.forEach((o, idx) => {
    const box = document.createElement("fieldset"); box.className = "zone-box";
    box.innerHTML = `<legend>${escapeHtml(o.name)}</legend>`;
    const grid = document.createElement("div"); grid.className = "field-grid";
    for (const [key, label, kind] of obstacleFields) {
      const id = `o${idx}-${key}`;
      const input = document.createElement("input"); input.id = id;
      input.value = kind === "len" ? Units.lengthInput(o[key], state.units) : o[key];
      input.addEventListener("change", () => {
        const v = readValue(input, kind);
        if (v === undefined) return;
        if (tryCommit(input, (r) => { r.obstacles[idx][key] = v; })) renderObstacles();
      });
      grid.append(field(id, label, kind), input);
    }
    box.appendChild(grid);
    const del = document.createElement("button"); del.type = "button"; del.textContent = `Remove ${o.name}`;
    del.addEventListener("click", () => { if (tryCommit(del, (r) => { r.obstacles.splice(idx, 1); })) renderObstacles(); });
    box.appendChild(del);
    host.appendChild(box);
  });
}

export function wireZonePanels() {
  $("add-zone").addEventListener("click", () => {
    const ok = tryCommit($("add-zone"), (r) => {
      const name = `Zone ${r.zones.length + 1}`;
      r.zones.push({ id: idFromName(name, new Set(r.zones.map((z) => z.id)), "zone"), name, x_m: 0, y_m: 0,
                     width_m: round4(Math.min(NEW_ZONE_SIDE_M, r.width_m)), length_m: round4(Math.min(NEW_ZONE_SIDE_M, r.length_m)),
                     canopy_height_m: round4(Math.min(NEW_ZONE_CANOPY_M, r.height_m / 2)), crop_id: "lettuce", stage: "vegetative", photoperiod_h: null });
    });
    if (ok) renderZones();
  });
  $("add-obstacle").addEventListener("click", () => {
    const ok = tryCommit($("add-obstacle"), (r) => {
      const name = `Obstacle ${r.obstacles.length + 1}`;
      r.obstacles.push({ id: idFromName(name, new Set(r.obstacles.map((o) => o.id)), "obstacle"), name, x_m: 0, y_m: 0, z_m: round4(r.height_m * 0.5),
                         width_m: round4(Math.min(0.6, r.width_m)), length_m: round4(Math.min(0.3, r.length_m)), height_m: 0.03 });
    });
    if (ok) renderObstacles();
  });
}
