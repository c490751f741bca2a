// The types tab: every fixture type at hand with its PPF, watts, µmol/J and size; the room's own types can be
// edited, duplicated and deleted (one in use only by replacing it); a form types one in from its spec sheet,
// checked for plausibility by the server (efficacy against the photon ceiling and the best measured fixtures).

import * as Units from "../../lib/units.js";
import { escapeHtml, fmt } from "../../lib/format.js";
import { request, problemsText } from "../../lib/api.js";
import { $, page, state, room, idFromName, round4 } from "../state.js";
import { tryCommit, showFieldError, clearFieldError, clearAllFieldErrors } from "../fields.js";

const KINDS = { panel: "Panel (one flat face)", bar_array: "Bars side by side", bar: "One bar or strip", point: "Point (a bulb or a lens)" };
let editing = null;      // id of the room's type in the form, or null for a new one

function size(t) {
  const g = t.geometry, L = (m) => Units.length(m, state.units);
  if (g.kind === "point") return "point";
  if (g.kind === "bar") return `${L(g.length_m)} bar`;
  return `${L(g.length_m)} × ${L(g.width_m)}${g.kind === "bar_array" ? `, ${g.bar_count} bars` : ""}`;
}

export function renderTypes() {
  if (!$("type-list")) {
    $("types").innerHTML = `<button type="button" id="type-new">Type in a fixture from its spec sheet…</button><div id="type-form-host"></div><div id="type-list"></div>`;
    $("type-new").addEventListener("click", () => openForm(null));
  }
  const host = $("type-list");
  const used = new Set(room().fixtures.map((f) => f.type_id));
  const own = room().fixture_types, ownIds = new Set(own.map((t) => t.id));
  const row = (t, mine) => `<tr data-type-id="${escapeHtml(t.id)}"><th scope="row">${escapeHtml(t.name)}${used.has(t.id) ? " <span class='small'>(in use)</span>" : ""}</th>
    <td>${fmt(t.ppf_umol_s)} µmol/s · ${fmt(t.power_w)} W · ${fmt(t.ppf_umol_s / t.power_w, 2)} µmol/J<br><span class="small">${escapeHtml(size(t))}${t.weight_kg ? `, ${Units.mass(t.weight_kg, state.units)}` : ""}${t.price ? `, ${fmt(t.price, 2)} ${escapeHtml(room().schedule.currency)}` : ""}</span></td>
    <td class="row">${mine ? `<button type="button" data-edit="${escapeHtml(t.id)}" aria-label="Edit ${escapeHtml(t.name)}">Edit</button>` : ""}
      <button type="button" data-dup="${escapeHtml(t.id)}" aria-label="Duplicate ${escapeHtml(t.name)} as a type of this room">Duplicate</button>
      ${mine ? `<button type="button" data-del="${escapeHtml(t.id)}" aria-label="Delete ${escapeHtml(t.name)}">Delete</button>` : ""}</td></tr>`;
  host.innerHTML = `<div class="table-wrap"><table class="figures"><caption>This room's types</caption><tbody>${own.map((t) => row(t, true)).join("") || "<tr><td>None yet.</td></tr>"}</tbody></table></div>
    <div class="table-wrap"><table class="figures"><caption>Library</caption><tbody>${page.fixture_library.filter((t) => !ownIds.has(t.id)).map((t) => row(t, false)).join("")}</tbody></table></div>`;
  for (const b of host.querySelectorAll("[data-edit]")) b.addEventListener("click", () => openForm(b.dataset.edit));
  for (const b of host.querySelectorAll("[data-dup]")) b.addEventListener("click", () => duplicate(b.dataset.dup, b));
  for (const b of host.querySelectorAll("[data-del]")) b.addEventListener("click", () => askDelete(b.dataset.del, b));
}

const allTypes = () => [...room().fixture_types, ...page.fixture_library];

function duplicate(id, button) {
  const t = allTypes().find((tt) => tt.id === id);
  const copy = JSON.parse(JSON.stringify(t));
  copy.name = `${t.name} (copy)`.slice(0, 120);
  copy.id = idFromName(copy.name, new Set(allTypes().map((tt) => tt.id)), "type");
  if (tryCommit(button, (r) => { r.fixture_types.push(copy); })) { renderTypes(); openForm(copy.id); }
}

function askDelete(id, button) {
  const inUse = room().fixtures.filter((f) => f.type_id === id);
  const t = room().fixture_types.find((tt) => tt.id === id);
  if (!inUse.length) { if (tryCommit(button, (r) => { r.fixture_types = r.fixture_types.filter((tt) => tt.id !== id); })) renderTypes(); return; }
  const others = allTypes().filter((tt) => tt.id !== id);
  const box = document.createElement("div");
  box.className = "replace-box";
  box.innerHTML = `<p>${inUse.length} fixture${inUse.length > 1 ? "s use" : " uses"} ${escapeHtml(t.name)}. Replace ${inUse.length > 1 ? "them" : "it"} with:</p>
    <label class="visually-hidden" for="replace-with">Replacement type</label><select id="replace-with">${others.map((o) => `<option value="${escapeHtml(o.id)}">${escapeHtml(o.name)}</option>`).join("")}</select>
    <button type="button" id="replace-go">Replace and delete</button> <button type="button" id="replace-cancel">Keep it</button>`;
  button.closest("tr").insertAdjacentElement("afterend", Object.assign(document.createElement("tr"), { innerHTML: "<td colspan='3'></td>" }));
  button.closest("tr").nextElementSibling.firstChild.appendChild(box);
  $("replace-cancel").addEventListener("click", renderTypes);
  $("replace-go").addEventListener("click", () => {
    const sub = allTypes().find((o) => o.id === $("replace-with").value);
    const ok = tryCommit($("replace-with"), (r) => {
      if (!r.fixture_types.some((o) => o.id === sub.id)) r.fixture_types.push(JSON.parse(JSON.stringify(sub)));
      for (const f of r.fixtures) if (f.type_id === id) f.type_id = sub.id;
      r.fixture_types = r.fixture_types.filter((o) => o.id !== id);
    });
    if (ok) renderTypes();
  });
}

const FIELDS = [["tf-name", "Name", "text"], ["tf-kind", "Shape", "kind"], ["tf-length", "Length", "len"], ["tf-width", "Width", "len"],
  ["tf-bars", "Number of bars", "int"], ["tf-barw", "Width of one bar", "len"], ["tf-ppf", "PPF (µmol/s)", "num"], ["tf-power", "Input power (W)", "num"],
  ["tf-beam", "Beam", "beam"], ["tf-angle", "Beam angle (°, full width at half peak)", "num"], ["tf-weight", "Weight", "mass"], ["tf-price", "Price of one", "num"]];

function openForm(id) {
  editing = id;
  const t = id ? room().fixture_types.find((tt) => tt.id === id) : null;
  const g = t ? t.geometry : { kind: "panel", length_m: 0.6, width_m: 0.6, bar_count: 1, bar_width_m: 0.03 };
  const u = state.units;
  const v = { "tf-name": t ? t.name : "My fixture", "tf-kind": g.kind, "tf-length": Units.lengthInput(g.length_m, u), "tf-width": Units.lengthInput(g.width_m, u),
    "tf-bars": g.bar_count, "tf-barw": Units.lengthInput(g.bar_width_m, u), "tf-ppf": t ? t.ppf_umol_s : "", "tf-power": t ? t.power_w : "",
    "tf-beam": t ? t.beam.kind : "lambertian", "tf-angle": t && t.beam.beam_angle_deg ? t.beam.beam_angle_deg : 120,
    "tf-weight": t && t.weight_kg ? Units.mass(t.weight_kg, u) : "", "tf-price": t && t.price ? t.price : "" };
  const input = ([fid, label, kind]) => {
    const lab = `<label for="${fid}">${label}${kind === "len" ? ` (${Units.inputUnit(u)})` : ""}</label>`;
    if (kind === "kind") return lab + `<select id="${fid}">${Object.entries(KINDS).map(([k, l]) => `<option value="${k}">${l}</option>`).join("")}</select>`;
    if (kind === "beam") return lab + `<select id="${fid}"><option value="lambertian">Wide, even (Lambertian)</option><option value="cosine_power">Narrower: give its beam angle</option>${v["tf-beam"] === "tabulated" ? "<option value='tabulated'>Measured (from a photometric file)</option>" : ""}</select>`;
    return lab + `<input id="${fid}" value="${escapeHtml(String(v[fid]))}"${kind === "num" || kind === "int" ? " inputmode='decimal'" : ""}>`;
  };
  $("type-form-host").innerHTML = `<form id="type-form" class="card" novalidate><h3>${t ? `Edit ${escapeHtml(t.name)}` : "A fixture from its spec sheet"}</h3>
    <div class="field-grid">${FIELDS.map(input).join("")}</div><ul id="tf-findings" class="warnings" aria-live="polite"></ul>
    <div class="row"><button type="submit" id="tf-save">${t ? "Save changes" : "Add to this room's types"}</button><button type="button" id="tf-cancel">Cancel</button></div></form>`;
  $("tf-kind").value = g.kind; $("tf-beam").value = v["tf-beam"];
  $("tf-cancel").addEventListener("click", () => { $("type-form-host").innerHTML = ""; editing = null; });
  $("type-form").addEventListener("submit", (ev) => { ev.preventDefault(); submit(editing ? room().fixture_types.find((tt) => tt.id === editing) : null); });
  $("tf-name").focus();
}

function readForm(t) {
  const form = $("type-form"), u = state.units;
  clearAllFieldErrors(form);
  let bad = false;
  const num = (fid, lo, hi, what) => { const x = parseFloat(String($(fid).value).replace(",", ".")); if (!(x > lo && x <= hi)) { showFieldError($(fid), `${what} must be more than ${lo} and at most ${hi}`, ""); bad = true; } return x; };
  const len = (fid, what) => { try { const m = Units.parseLength($(fid).value, u); if (!(m >= 0 && m <= 5)) throw new Error(`${what} must be between 0 and ${Units.length(5, u)}`); return round4(m); } catch (e) { showFieldError($(fid), e.message, ""); bad = true; return 0; } };
  const kind = $("tf-kind").value, name = $("tf-name").value.trim();
  if (!name) { showFieldError($("tf-name"), "a type needs a name", ""); bad = true; }
  const geometry = { kind, length_m: len("tf-length", "the length"), width_m: len("tf-width", "the width"), bar_count: Math.round(num("tf-bars", 0, 32, "the number of bars")), bar_width_m: len("tf-barw", "the width of a bar") };
  if (kind === "bar_array" && geometry.bar_count < 2) { showFieldError($("tf-bars"), "bars side by side need at least 2 bars (choose one bar otherwise)", ""); bad = true; }
  if (kind === "bar_array" && !(geometry.width_m > geometry.bar_width_m)) { showFieldError($("tf-width"), "the width must exceed the width of one bar", ""); bad = true; }
  if (kind === "point") Object.assign(geometry, { length_m: 0, width_m: 0 });
  if (!(geometry.bar_width_m > 0)) geometry.bar_width_m = 0.03;
  const beamKind = $("tf-beam").value;
  const beam = beamKind === "tabulated" ? t.beam : beamKind === "lambertian" ? { kind: "lambertian" } : { kind: "cosine_power", beam_angle_deg: num("tf-angle", 9.99, 170, "the beam angle") };
  let weight = null;
  if ($("tf-weight").value.trim()) { try { weight = round4(Units.parseMass($("tf-weight").value, u)); } catch (e) { showFieldError($("tf-weight"), e.message, ""); bad = true; } }
  const price = $("tf-price").value.trim() ? num("tf-price", -1e-9, 1e6, "the price") : null;
  const out = { id: t ? t.id : idFromName(name, new Set(allTypes().map((tt) => tt.id)), "type"), name: name.slice(0, 120), geometry, beam,
    ppf_umol_s: num("tf-ppf", 0, 20000, "the PPF"), power_w: num("tf-power", 0, 10000, "the input power"), weight_kg: weight, price,
    notes: t ? t.notes : "Typed in from its spec sheet." };
  return bad ? null : out;
}

async function submit(t) {
  const typed = readForm(t);
  if (!typed) return;
  const res = await request("/api/fixture-types/check", { method: "POST", body: typed, key: "type-check" });
  const list = $("tf-findings");
  if (!res.ok) { list.innerHTML = `<li class="impossible">⚠ ${escapeHtml(problemsText(res.body))}</li>`; return; }
  list.innerHTML = res.body.findings.map((f) => `<li class="${f.level}">${f.level === "info" ? "" : "⚠ "}${escapeHtml(f.message)}</li>`).join("");
  if (!res.body.ok) { showFieldError($("tf-ppf"), "the PPF and the power together are impossible: check both on the spec sheet", ""); return; }
  clearFieldError($("tf-ppf"));
  const ok = tryCommit($("tf-save"), (r) => {
    const i = r.fixture_types.findIndex((tt) => tt.id === typed.id);
    if (i >= 0) r.fixture_types[i] = typed; else r.fixture_types.push(typed);
  });
  if (ok) { editing = typed.id; $("tf-save").textContent = "Saved: save again after changes"; }
}
