// Undo and redo as snapshots of the room, kept per room in the browser session so a reload keeps them.
// Every edit goes through commit(): it is tried on a copy, checked, and applied only when the room stays valid.

import { page, roomId, state, emit } from "./state.js";
import { roomProblems } from "./validate.js";

const MAX_STEPS = 200;
let KEY = `leafcast-undo:${roomId}`;
const undoStack = [], redoStack = [];

export function snapshot() { return JSON.stringify({ room: state.doc.room, custom_crops: state.doc.custom_crops }); }
function restore(text) {
  const snap = JSON.parse(text);
  state.doc.room = snap.room;
  state.doc.custom_crops = snap.custom_crops;
  for (const c of snap.custom_crops) page.crops[c.id] = c;
}

/** Keep the stacks in sessionStorage with the room they lead to, so a reload can tell they still apply. */
function persist() {
  const entry = { now: snapshot(), undo: undoStack.slice(-MAX_STEPS), redo: redoStack.slice(-MAX_STEPS) };
  for (;;) {
    try { sessionStorage.setItem(KEY, JSON.stringify(entry)); return; } catch (e) {
      if (!entry.undo.length && !entry.redo.length) return;   // storage off or full: undo lasts for this page
      (entry.undo.length >= entry.redo.length ? entry.undo : entry.redo).shift();
    }
  }
}

/** After a reload: take the stacks back when they were left on exactly the room the server sent. */
export function reloadHistory() {
  try {
    const entry = JSON.parse(sessionStorage.getItem(KEY) || "null");
    if (entry && entry.now === snapshot()) { undoStack.push(...entry.undo); redoStack.push(...entry.redo); }
  } catch (e) { /* nothing kept */ }
}

export const canUndo = () => undoStack.length > 0;
export const canRedo = () => redoStack.length > 0;

/** Remember the room as it is now, before a change made outside commit() (a drag, a reload of theirs). */
export function remember() {
  undoStack.push(snapshot());
  if (undoStack.length > MAX_STEPS) undoStack.shift();
  redoStack.length = 0;
}

/**
 * Apply an edit. mutate(room) changes a copy; if the copy breaks a rule the edit is refused and the reasons
 * are returned (nothing changes); otherwise it becomes the room, one undo step. Returns [] on success.
 */
export function commit(mutate, opts = {}) {
  const before = snapshot();
  const trial = JSON.parse(before);
  mutate(trial.room, trial);
  const problems = opts.unchecked ? [] : roomProblems(trial.room, state.units);
  if (problems.length) return problems;
  undoStack.push(before);
  if (undoStack.length > MAX_STEPS) undoStack.shift();
  redoStack.length = 0;
  state.doc.room = trial.room;
  state.doc.custom_crops = trial.custom_crops;
  emit("changed", opts);
  return [];
}

export function undo() {
  if (!undoStack.length) return;
  redoStack.push(snapshot());
  restore(undoStack.pop());
  emit("changed", { history: true });
}
export function redo() {
  if (!redoStack.length) return;
  undoStack.push(snapshot());
  restore(redoStack.pop());
  emit("changed", { history: true });
}

export function saveHistory() { persist(); }

/** The room moved to a new id (a rename): keep its history under the new one. */
export function moveHistory(id) {
  try { sessionStorage.removeItem(KEY); } catch (e) { /* nothing kept */ }
  KEY = `leafcast-undo:${id}`;
  persist();
}
