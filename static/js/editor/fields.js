// Input boxes: an edit that is refused is explained right under its own box (a ⚠ and the reason, tied to the
// box for screen readers) and not applied; the message goes when the box is fixed or the edit is undone.

import * as Units from "../lib/units.js";
import { state } from "./state.js";
import { commit } from "./history.js";
import { showFieldError, clearFieldError, clearAllFieldErrors } from "../lib/fieldmsg.js";

export { showFieldError, clearFieldError, clearAllFieldErrors };

export function setIfIdle(input, value) {
  if (document.activeElement !== input && input.getAttribute("aria-invalid") !== "true") input.value = value;
}

/** Try an edit for a box: refused edits are explained beside it; returns true when applied. */
export function tryCommit(input, mutate, opts) {
  const problems = commit(mutate, opts);
  if (problems.length) { showFieldError(input, problems); return false; }
  clearFieldError(input);
  return true;
}

/** Parse a length box in the chosen units, or explain why not; returns metres or null. */
export function lengthOf(input, { positive = false } = {}) {
  let m;
  try { m = Units.parseLength(input.value, state.units); } catch (e) { showFieldError(input, e.message); return null; }
  if (positive && !(m > 0)) { showFieldError(input, "must be more than zero"); return null; }
  if (m < 0) { showFieldError(input, "cannot be negative"); return null; }
  return m;
}

/** Parse a number box within [lo, hi], or explain why not. */
export function numberOf(input, lo, hi, what) {
  const v = parseFloat(String(input.value).replace(",", "."));
  if (!Number.isFinite(v) || v < lo || v > hi) { showFieldError(input, `${what} must be between ${lo} and ${hi}`); return null; }
  return v;
}
