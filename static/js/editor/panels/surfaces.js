// Walls and ceiling: one finish for all (the room's wall_finish and open sides) or each surface its own
// (room.surface_finishes: specular, diffuse, absorbing or open, with a PAR reflectance), as Room.finish_of reads them.

import { $, page, room, round4 } from "../state.js";
import { setIfIdle, tryCommit, numberOf, showFieldError, clearFieldError } from "../fields.js";

export const SURFACES = ["left", "right", "front", "back", "ceiling"];
const WALLS = ["left", "right", "front", "back"];
const NAMES = { left: "left wall", right: "right wall", front: "front wall", back: "back wall", ceiling: "ceiling" };
const RETURNS_LIGHT = new Set(["specular", "diffuse"]);

/** The finish a surface has, as app/room/models.py Room.finish_of: its own entry, else open or the wall finish. */
export function finishOf(r, surface) {
  const own = (r.surface_finishes || {})[surface];
  if (own) return { kind: own.kind, reflectance: own.reflectance ?? 0, label: own.label || "" };
  if (r.open_sides.includes(surface)) return { kind: "open", reflectance: 0, label: "Open" };
  const wf = r.wall_finish;
  return { kind: wf.kind, reflectance: wf.reflectance, label: wf.label || "" };
}

export const eachOwn = (r) => Object.keys(r.surface_finishes || {}).length > 0;

/** Every surface written out, so nothing hides behind the room-wide finish; open walls kept in open_sides. */
function perSurface(r, surface, change) {
  const all = Object.fromEntries(SURFACES.map((s) => [s, finishOf(r, s)]));
  if (surface) all[surface] = change(all[surface]);
  r.surface_finishes = all;
  r.open_sides = WALLS.filter((s) => all[s].kind === "open");
}

/** The reflectance a finish of this kind starts with: the one it had, else the first preset of that kind. */
function startReflectance(kind, old) {
  if (!RETURNS_LIGHT.has(kind)) return 0;
  if (old.reflectance > 0) return old.reflectance;
  const preset = Object.values(page.wall_finishes).find((v) => v.kind === kind);
  return preset ? preset.reflectance : 0.8;
}

export function renderSurfaces() {
  const r = room(), each = eachOwn(r);
  for (const b of document.querySelectorAll("input[name=walls-mode]")) b.checked = b.value === (each ? "each" : "same");
  for (const el of document.querySelectorAll("[data-walls-same]")) el.hidden = each;
  $("r-surfaces").hidden = !each;
  for (const s of SURFACES) {
    const f = finishOf(r, s), kind = $(`sf-${s}-kind`), refl = $(`sf-${s}-refl`);
    if (document.activeElement !== kind) kind.value = f.kind;
    refl.disabled = !RETURNS_LIGHT.has(f.kind);
    setIfIdle(refl, RETURNS_LIGHT.has(f.kind) ? String(Math.round(f.reflectance * 1000) / 10) : "");
  }
}

export function wireSurfaces() {
  for (const b of document.querySelectorAll("input[name=walls-mode]")) {
    b.addEventListener("change", () => {
      if (!b.checked) return;
      const each = b.value === "each";
      if (each === eachOwn(room())) return;
      // Each its own starts from what every surface has now; all the same goes back to the room-wide finish.
      tryCommit(b, (r) => { if (each) perSurface(r); else r.surface_finishes = {}; });
    });
  }
  for (const s of SURFACES) {
    const kind = $(`sf-${s}-kind`), refl = $(`sf-${s}-refl`);
    kind.addEventListener("change", () => tryCommit(kind, (r) => perSurface(r, s, (old) => ({
      kind: kind.value, reflectance: startReflectance(kind.value, old), label: "",
    }))));
    refl.addEventListener("change", () => {
      const kindNow = finishOf(room(), s).kind;
      if (!RETURNS_LIGHT.has(kindNow)) return showFieldError(refl, `an ${kindNow} ${NAMES[s]} returns no light`);
      const pct = numberOf(refl, 0, 100, `the ${NAMES[s]}'s reflectance (%)`);
      if (pct === null) return;
      if (tryCommit(refl, (r) => perSurface(r, s, (old) => ({
        // A changed reflectance is no longer the named finish; the same one typed again keeps its name.
        ...old, reflectance: round4(pct / 100), label: round4(pct / 100) === old.reflectance ? old.label : "",
      })))) {
        clearFieldError(refl);
      }
    });
  }
}
