// The map's colour scale and levels, fixed by the crops' bands so the colours mean the same before, during and
// after a drag and on every tier; the dark and hot cells as rectangles for hatching.

import { page } from "./state.js";

// The server's one colour scale (plotly's own Viridis table, app/service/colours.py): given to plotly as an
// explicit colour scale and interpolated the same way (linear RGB, evenly spaced stops) by the drag preview.
export const COLOURSCALE = page.colour_scale;
const RGB = COLOURSCALE.map(([, h]) => [1, 3, 5].map((k) => parseInt(h.slice(k, k + 2), 16)));

// DLI (mol m⁻² d⁻¹) = PPFD (µmol m⁻² s⁻¹) × hours × 3600 s/h / 10⁶ µmol/mol.
export const DLI_PER_PPFD_HOUR = 0.0036;
const HEADROOM = 1.0;                        // the top colour is the stress level: hotter cells saturate and are hatched
const PPFD_STEPS = [5, 10, 25, 50, 100, 250, 500];
const DLI_STEPS = [0.5, 1, 2, 5, 10];
const TARGET_LEVELS = 8;                     // about this many contour lines over the range

/** A zone's stress level in the map's quantity. */
export function stressLevel(zone, quantity) {
  const s = zone.target.ppfd_stress;
  return quantity === "ppfd" ? s : s * zone.photoperiod_h * DLI_PER_PPFD_HOUR;
}

/** The step for contour lines: multiples of 5, 10, 25, 50 or 100 for PPFD; half or whole mol (or 2, 5) for DLI. */
export function contourStep(top, quantity) {
  const steps = quantity === "ppfd" ? PPFD_STEPS : DLI_STEPS;
  return steps.find((s) => top / s <= TARGET_LEVELS) || steps[steps.length - 1];
}

/**
 * The colour range [0, top]: the highest stress level among the zones (so stacked tiers share one scale),
 * plus headroom, rounded up to a whole contour step; or the grower's locked top.
 */
export function colourRange(zones, quantity, locked) {
  if (locked && locked > 0) return { zmin: 0, zmax: locked, step: contourStep(locked, quantity) };
  const top = Math.max(...zones.map((z) => stressLevel(z, quantity)), quantity === "ppfd" ? 100 : 5) * HEADROOM;
  const step = contourStep(top, quantity);
  return { zmin: 0, zmax: Math.ceil(top / step) * step, step };
}

/** The colour of a value on the scale, as [r, g, b]. */
export function colourAt(value, range) {
  const t = Math.min(Math.max((value - range.zmin) / ((range.zmax - range.zmin) || 1), 0), 1) * (RGB.length - 1);
  const i = Math.min(Math.floor(t), RGB.length - 2), f = t - i;
  return RGB[i].map((c, k) => Math.round(c * (1 - f) + RGB[i + 1][k] * f));
}

/** Masks of the cells below the band (DLI under its minimum) and above the stress level (PPFD over it). */
export function masks(zone) {
  const g = zone.grid;
  const dark = g.dli.map((row) => row.map((v) => v < zone.target.dli_min));
  const hot = g.ppfd.map((row) => row.map((v) => v > zone.target.ppfd_stress));
  return { dark, hot };
}

/** Runs of true cells, row by row, as rectangles [x0, y0, x1, y1] in metres (cell edges halfway between points). */
export function cellRuns(xs, ys, mask) {
  const edge = (v, i) => (i <= 0 ? v[0] - (v[1] - v[0]) / 2 : i >= v.length ? v[v.length - 1] + (v[v.length - 1] - v[v.length - 2]) / 2 : (v[i - 1] + v[i]) / 2);
  const out = [];
  if (xs.length < 2 || ys.length < 2) return out;
  for (let j = 0; j < ys.length; j++) {
    let start = -1;
    for (let i = 0; i <= xs.length; i++) {
      const on = i < xs.length && mask[j][i];
      if (on && start < 0) start = i;
      if (!on && start >= 0) { out.push([edge(xs, start), edge(ys, j), edge(xs, i), edge(ys, j + 1)]); start = -1; }
    }
  }
  return out;
}
