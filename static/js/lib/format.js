// Numbers and text for people: fixed decimals, percentages, HTML escaping, growth-ordered stages.

/** A number with d decimals, or an en dash when there is none. */
export function fmt(v, d = 0) {
  return v === null || v === undefined || !Number.isFinite(Number(v)) ? "–" : Number(v).toFixed(d);
}
/** A share 0-1 as a whole percentage. */
export function pct(v) { return `${fmt(100 * v)} %`; }
/** A share below 1 % shown as "< 1 %" rather than "0 %". */
export function share(v) { return v > 0 && v < 0.01 ? "< 1 %" : pct(v); }
export function escapeHtml(s) {
  return String(s).replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" }[c]));
}
/** Growth stages in the order a plant goes through them. */
export const STAGE_ORDER = ["propagation", "vegetative", "flowering"];
export function stagesInOrder(stages) {
  return Object.keys(stages || {}).sort((a, b) => STAGE_ORDER.indexOf(a) - STAGE_ORDER.indexOf(b));
}
export function stageLabel(stage) { return stage ? stage[0].toUpperCase() + stage.slice(1) : ""; }
