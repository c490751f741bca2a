// What the meter page's modules share: the page data, the display units and the one fetch helper.
import { request } from "../lib/api.js";
import * as Units from "../lib/units.js";

export const page = JSON.parse(document.getElementById("page-data").textContent);
export const $ = (id) => document.getElementById(id);
export const roomId = page.room_id;
export const units = page.units;
export const len = (m) => Units.length(m, units);
// A length written into an input box in the form parseLength reads back.
export const inputLen = (m) => Units.lengthInput(m, units);
export const parseLen = (text) => Units.parseLength(text, units);
export const ax = (m) => Units.axisValue(m, units);
export const axUnit = Units.axisUnit(units);

// The JSON answer, or an Error with the server's message, status and problems.
export async function json(url, opts = {}) {
  const res = await request(url, opts);
  if (!res.ok) {
    const b = res.body || {};
    const e = new Error(b.message || `HTTP ${res.status}`);
    e.status = res.status; e.problems = b.problems || [];
    throw e;
  }
  return res.body;
}
export const post = (url, body) => json(url, { method: "POST", body });
export function failed(el, what, e) {
  const stale = e.status === 409 ? " Reload the page to see the other change." : "";
  el.textContent = `${what}: ${e.message}${stale}`;
}
// Zones do not change on this page, so their names are read from the page data.
export function zoneName(id) { const z = page.room_file.room.zones.find((q) => q.id === id); return z ? z.name : id; }
