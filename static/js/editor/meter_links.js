// The editor's drawn areas gain "nested squares from here": a link to the meter page, centred on the area,
// and the figures say at which output age they are shown when it is not installation (set on the meter page).
// Reads the editor's state through its module, never through window.
import { page, state } from "./state.js";

const host = document.getElementById("regions");
function centreIn(zone, r) {
  const clamp = (v, lo, hi) => Math.min(Math.max(v, lo), hi);
  return [clamp(r.x_m + r.width_m / 2, zone.x_m, zone.x_m + zone.width_m), clamp(r.y_m + r.length_m / 2, zone.y_m, zone.y_m + zone.length_m)];
}
function addLinks() {
  const room = state.doc ? state.doc.room : page.room_file.room;
  host.querySelectorAll("tbody tr").forEach((tr) => {
    const th = tr.querySelector("th");
    if (!th || tr.querySelector(".squares-link")) return;
    const [name, zoneId] = th.textContent.split(" · ");
    const r = state.regions.find((q) => q.name === name);
    const zone = room.zones.find((z) => z.id === zoneId) || room.zones.find((z) => z.name === zoneId);  // the editor shows names
    if (!r || !zone) return;
    const [x, y] = centreIn(zone, r);
    const q = new URLSearchParams({ zone: zone.id, x_m: x.toFixed(4), y_m: y.toFixed(4) });
    const td = document.createElement("td");
    td.innerHTML = `<a class="squares-link" href="/rooms/${page.room_id}/meter?${q}#spot-title">Nested squares from here</a>`;
    tr.appendChild(td);
  });
}
if (host) new MutationObserver(addLinks).observe(host, { childList: true, subtree: true });

// Say at which output age the figures are shown when it is not installation (set on the meter page).
const figures = document.getElementById("figures");
function basisNote() {
  const a = state.analysis;
  const b = a && a.output_basis;
  const old = figures.querySelector(".output-basis");
  const text = b && b.age_h !== null ? `Output shown ${b.words}.` : "";
  if (old && old.dataset.text === text) return;
  if (old) old.remove();
  if (!text) return;
  const p = document.createElement("p");
  p.className = "small output-basis";
  p.dataset.text = text;
  p.innerHTML = `${text.replace(/[&<>]/g, "")} <a href="/rooms/${page.room_id}/meter#age-title">Change</a>`;
  figures.prepend(p);
}
if (figures) {
  new MutationObserver(basisNote).observe(figures, { childList: true });
  basisNote();
}

