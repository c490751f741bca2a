// The room list's actions: rename (the old address keeps working), duplicate as a variant, delete to the trash
// and restore, compare two rooms, and a small plan of each room.

import { request, problemsText } from "../lib/api.js";
import { escapeHtml } from "../lib/format.js";

const $ = (id) => document.getElementById(id);
const NS = "http://www.w3.org/2000/svg";

function say(text, isError) {
  const m = $("import-message");
  m.textContent = text;
  m.className = isError ? "error" : "ok";
}

async function act(url, body, done) {
  const res = await request(url, { method: "POST", body: body || {} }).catch(() => ({ ok: false, body: { message: "Leafcast could not be reached" } }));
  if (!res.ok) { say(`Not done: ${problemsText(res.body)}.`, true); return; }
  done(res.body);
}

// A thumbnail: the room's outline, its zones and the fixtures' footprints, to scale.
async function thumb(svg) {
  const res = await request(`/api/rooms/${svg.dataset.thumb}`).catch(() => null);
  if (!res || !res.ok) return;
  const r = res.body.room, W = 64, H = 48, k = 0.9 * Math.min(W / r.width_m, H / r.length_m);
  const ox = (W - r.width_m * k) / 2, oy = (H - r.length_m * k) / 2;
  const rect = (x, y, w, l, cls) => {
    const e = document.createElementNS(NS, "rect");
    Object.entries({ x: ox + x * k, y: oy + (r.length_m - y - l) * k, width: Math.max(w * k, 1), height: Math.max(l * k, 1), class: cls })
      .forEach(([a, v]) => e.setAttribute(a, v));
    svg.appendChild(e);
  };
  svg.setAttribute("viewBox", `0 0 ${W} ${H}`);
  rect(0, 0, r.width_m, r.length_m, "room");
  for (const z of r.zones) rect(z.x_m, z.y_m, z.width_m, z.length_m, "zone");
  const types = Object.fromEntries(r.fixture_types.map((t) => [t.id, t.geometry]));
  for (const f of r.fixtures) {
    const g = types[f.type_id], turned = Math.round(f.rotation_deg / 90) % 2 === 1;
    const a = Math.max(g.length_m, 0.06), b = Math.max(g.kind === "bar" ? g.bar_width_m : g.width_m, 0.06);
    const [w, l] = turned ? [b, a] : [a, b];
    rect(f.x_m - w / 2, f.y_m - l / 2, w, l, "thumb-fixture");
  }
}

async function showTrash() {
  const res = await request("/api/trash").catch(() => null);
  if (!res || !res.ok) return;
  const ul = $("trash-list");
  ul.innerHTML = res.body.map((t) => `<li>${escapeHtml(t.name)} <button type="button" data-restore="${escapeHtml(t.id)}">Restore</button></li>`).join("") || "<li>Empty.</li>";
  for (const b of ul.querySelectorAll("[data-restore]")) {
    b.addEventListener("click", () => act(`/api/trash/${b.dataset.restore}/restore`, {}, (body) => { window.location.href = `/?restored=${encodeURIComponent(body.id)}`; }));
  }
}

export function wireList() {
  for (const svg of document.querySelectorAll("[data-thumb]")) thumb(svg);
  for (const b of document.querySelectorAll("[data-rename]")) {
    b.addEventListener("click", () => {
      const row = b.closest("tr"), link = row.querySelector("td:nth-child(2) a");
      const name = window.prompt("New name for this room:", link.textContent);
      if (!name || !name.trim() || name.trim() === link.textContent) return;
      act(`/api/rooms/${b.dataset.rename}/rename`, { name: name.trim() }, () => window.location.reload());
    });
  }
  for (const b of document.querySelectorAll("[data-variant]")) {
    b.addEventListener("click", () => act(`/api/rooms/${b.dataset.variant}/duplicate`, {}, (body) => { window.location.href = `/rooms/${body.id}`; }));
  }
  for (const b of document.querySelectorAll("[data-trash]")) {
    b.addEventListener("click", () => act(`/api/rooms/${b.dataset.trash}/trash`, {}, (body) => {
      b.closest("tr").remove();
      say(`“${body.name}” is in the trash.`, false);
      const undo = document.createElement("button");
      undo.type = "button"; undo.textContent = "Undo"; undo.id = "undo-delete";
      undo.addEventListener("click", () => act(`/api/trash/${body.id}/restore`, {}, () => window.location.reload()));
      $("import-message").append(" ", undo);
      showTrash();
    }));
  }
  const ticks = [...document.querySelectorAll("[data-compare]")];
  const picked = () => ticks.filter((t) => t.checked).map((t) => t.dataset.compare);
  for (const t of ticks) t.addEventListener("change", () => { $("compare-go").disabled = picked().length !== 2; });
  $("compare-go").addEventListener("click", () => { const [a, b] = picked(); window.location.href = `/compare?a=${a}&b=${b}`; });
  $("trash-box").addEventListener("toggle", showTrash);
  showTrash();
}
