// Saving with revisions: a short pause after the last edit, a stale save refused by the server (409) and
// shown as a choice, a refused save explained. The banner is the one place messages about the file appear.

import { request, problemsText } from "../lib/api.js";
import { $, state, emit } from "./state.js";
import { snapshot, remember } from "./history.js";

const SAVE_DELAY_MS = 700;
let saveTimer = null, saving = false;

export function status(text) { $("save-status").textContent = text; }

export function scheduleSave() {
  clearTimeout(saveTimer);
  status("Unsaved changes…");
  saveTimer = setTimeout(save, SAVE_DELAY_MS);
}

export async function save(force) {
  clearTimeout(saveTimer);
  if (state.conflict && !force) return;
  if (state.dragging || saving) { scheduleSave(); return; }
  saving = true;
  const sent = snapshot();
  const doc = Object.assign({}, state.doc, { revision: state.savedRevision });
  status("Saving…");
  try {
    const res = await request(`/api/rooms/${state.roomId}`, { method: "PUT", body: doc });
    if (res.ok) {
      state.savedRevision = res.body.revision;
      state.doc.revision = res.body.revision;
      if (snapshot() === sent) state.dirty = false;
      status(state.dirty ? "Unsaved changes…" : `Saved · revision ${res.body.revision}`);
      hideBanner();
    } else if (res.status === 409) {
      state.conflict = true;
      state.theirRevision = res.body.current_revision;
      showConflict(res.body.message);
    } else {
      status("Not saved");
      showBanner(`Not saved: ${problemsText(res.body, 4, state.doc)}`, [["Dismiss", hideBanner]]);
    }
  } catch (err) {
    status("Not saved (offline)");
  } finally {
    saving = false;
  }
}

/** Rename the room: saved first, then the server moves it to an id from the new name (the old one redirects). */
export async function rename(name) {
  await flush();
  const res = await request(`/api/rooms/${state.roomId}/rename`, { method: "POST", body: { name } });
  if (!res.ok) { showBanner(`Not renamed: ${problemsText(res.body)}`, [["Dismiss", hideBanner]]); return false; }
  state.savedRevision = res.body.revision;
  state.doc.revision = res.body.revision;
  state.doc.room.name = res.body.name;
  if (res.body.id !== state.roomId) { state.roomId = res.body.id; emit("moved", res.body.id); }
  status(`Saved · revision ${res.body.revision}`);
  return true;
}

export function flush() { return state.dirty && !state.conflict ? save() : Promise.resolve(); }

export function showBanner(text, actions) {
  const b = $("banner");
  b.innerHTML = "";
  const p = document.createElement("p");
  p.textContent = text;
  b.appendChild(p);
  for (const [label, fn] of actions || []) {
    const btn = document.createElement("button");
    btn.type = "button"; btn.textContent = label; btn.addEventListener("click", fn);
    b.appendChild(btn);
  }
  b.hidden = false;
}
export function hideBanner() { $("banner").hidden = true; }

function showConflict(message) {
  status("Conflict: not saved");
  showBanner(`Someone else saved this room (revision ${state.theirRevision}) while you were editing. ${message} ` +
    "Choose: load their version (yours stays in Undo), or save yours over it.", [
    ["Load their version", async () => {
      const res = await request(`/api/rooms/${state.roomId}`);
      if (!res.ok) return;
      remember();
      state.doc = res.body;
      state.savedRevision = res.body.revision;
      state.conflict = false; state.dirty = false;
      hideBanner(); status(`Saved · revision ${res.body.revision}`);
      emit("changed", { noSave: true });
    }],
    ["Save mine over theirs", async () => {
      state.savedRevision = state.theirRevision;
      state.conflict = false;
      await save(true);
    }],
  ]);
}

window.addEventListener("beforeunload", (ev) => { if (state.dirty) { ev.preventDefault(); ev.returnValue = ""; } });
