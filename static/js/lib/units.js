// Display units: everything stored is SI; this module only formats what is shown and parses what is typed.
// One module for every page, so a length shown anywhere can be typed back anywhere and give the same value.

export const M_PER_IN = 0.0254;            // exact, by the 1959 international yard and pound agreement
export const M_PER_FT = 0.3048;            // exact, same agreement
export const KG_PER_LB = 0.45359237;       // exact, same agreement
export const FT2_PER_M2 = 1 / (M_PER_FT * M_PER_FT);
const INPUT_EIGHTHS = 8;                   // inputs show lengths to 1/8 inch
const SHOWN_HALVES = 2;                    // plan labels and tables show lengths to 1/2 inch
const FRACTION_GLYPHS = { 1: "⅛", 2: "¼", 3: "⅜", 4: "½", 5: "⅝", 6: "¾", 7: "⅞" };
const GLYPH_TEXT = { "½": "1/2", "¼": "1/4", "¾": "3/4", "⅛": "1/8", "⅜": "3/8", "⅝": "5/8", "⅞": "7/8" };

/** The one rounding rule, shared with the server (app/room/units.py) and checked against its table. */
export const ROUNDING = "half-away-from-zero";
const NOISE_DIGITS = 12;   // significant digits kept before rounding a current up (0.1 + 0.2 is 0.3, not 0.4)

// The exact value of a number's shortest decimal form, as a fraction of BigInts [numerator, denominator].
function fraction(v) {
  let s = String(Math.abs(v)), exp = 0;
  if (s.includes("e")) { const [a, b] = s.split("e"); s = a; exp = Number(b); }
  const [whole, frac = ""] = s.split(".");
  let n = BigInt(whole + frac), d = 1n;
  const k = frac.length - exp;
  if (k >= 0) d = 10n ** BigInt(k); else n *= 10n ** BigInt(-k);
  return [v < 0 ? -n : n, d];
}

/**
 * v × num / den rounded half away from zero to `digits` decimals, computed exactly on v's shortest decimal
 * form (so a conversion such as metres to inches, ÷ 0.0254, cannot push an exact half below half).
 */
export function roundHalfAway(v, digits = 0, num = 1n, den = 1n) {
  const [n0, d0] = fraction(v);
  const neg = n0 < 0n, scale = 10n ** BigInt(Math.max(digits, 0));
  const n = (neg ? -n0 : n0) * num * scale, d = d0 * den;
  const q = (2n * n + d) / (2n * d);
  const r = Number(`${q}e-${Math.max(digits, 0)}`);
  return neg && r !== 0 ? -r : r;
}

/** Round towards +infinity to `digits` decimals, ignoring float noise past 12 significant digits. */
export function roundUp(v, digits = 0) {
  const [n0, d] = fraction(Number(Number(v).toPrecision(NOISE_DIGITS)));
  const n = n0 * 10n ** BigInt(digits);
  const q = n >= 0n ? (n + d - 1n) / d : -((-n) / d);
  return Number(`${q}e-${digits}`);
}

function round(v, digits) { return roundHalfAway(v, digits); }
const finite = (v) => v !== null && v !== undefined && Number.isFinite(v);
const IN_NUM = 10000n, IN_DEN = 254n;                  // 1 m = 10000/254 in, exactly
const FT2_NUM = 100000000n, FT2_DEN = 9290304n;        // 1 m² = 10⁸/9290304 ft², exactly
const LB_NUM = 100000000n, LB_DEN = 45359237n;         // 1 kg = 10⁸/45359237 lb, exactly

// Feet, whole inches and eighths of an inch for a length rounded to 1/steps inch.
function feetInches(m, steps) {
  const all = roundHalfAway(Math.abs(m), 0, IN_NUM * BigInt(steps), IN_DEN) * (INPUT_EIGHTHS / steps);
  let eighths = all;
  const ft = Math.floor(eighths / (12 * INPUT_EIGHTHS));
  eighths -= ft * 12 * INPUT_EIGHTHS;
  const inches = Math.floor(eighths / INPUT_EIGHTHS);
  return { sign: m < 0 && all > 0 ? "-" : "", ft, inches, eighths: eighths - inches * INPUT_EIGHTHS };
}

// Reduce k/8 to lowest terms: 4/8 -> 1/2.
function eighthText(k) {
  let n = k, d = INPUT_EIGHTHS;
  while (n % 2 === 0 && d > 1) { n /= 2; d /= 2; }
  return `${n}/${d}`;
}

/** A length for people to read: 4′ 6½″ (to ½″, or ⅛″ with fine) or 1.372 m / 45.5 cm. */
export function length(m, system, opts = {}) {
  if (!finite(m)) return "–";
  if (system === "imperial") {
    const p = feetInches(m, opts.fine ? INPUT_EIGHTHS : SHOWN_HALVES);
    const inch = `${p.inches}${p.eighths ? FRACTION_GLYPHS[p.eighths] : ""}″`;
    return p.ft ? `${p.sign === "-" ? "−" : ""}${p.ft}′ ${inch}` : `${p.sign === "-" ? "−" : ""}${inch}`;
  }
  // Decide on the rounded value, so 0.99996 m shows as 1 m, never as 100 cm.
  const cm = roundHalfAway(m, 1, 100n);
  if (Math.abs(cm) < 100) return `${cm} cm`;
  return `${round(m, 3)} m`;
}

/** A length for an input box, typeable as shown: 4' 6 1/2" (to 1/8 inch) or 137.2 cm / 1.372 m. */
export function lengthInput(m, system) {
  if (!finite(m)) return "";
  if (system === "imperial") {
    const p = feetInches(m, INPUT_EIGHTHS);
    const inch = p.eighths ? (p.inches ? `${p.inches} ${eighthText(p.eighths)}` : eighthText(p.eighths)) : `${p.inches}`;
    return p.ft ? `${p.sign}${p.ft}' ${inch}"` : `${p.sign}${inch}"`;
  }
  const cm = roundHalfAway(m, 1, 100n);
  if (Math.abs(cm) < 100) return `${cm} cm`;
  return `${round(m, 4)} m`;
}

/** The unit a bare number typed into a length box is taken in. */
export function bareUnit(system) { return system === "imperial" ? "in" : "cm"; }
/** What a length box's label says it takes. */
export function inputUnit(system) { return system === "imperial" ? "ft-in" : "m, cm"; }

const UNIT_M = { mm: 0.001, cm: 0.01, m: 1, in: M_PER_IN, inch: M_PER_IN, inches: M_PER_IN, '"': M_PER_IN,
                 ft: M_PER_FT, feet: M_PER_FT, foot: M_PER_FT, "'": M_PER_FT };
// One part: a number, an optional fraction ("6 1/2" or "1/2"), an optional unit.
const PART = /^(\d+(?:\.\d+)?)(?:\s+(\d+)\s*\/\s*(\d+)|\s*\/\s*(\d+))?\s*(mm|cm|m|inches|inch|in|"|feet|foot|ft|')?\s*/;

// Typing habits: curly primes, Unicode minus and fractions, '' for inches, 1,370 for 1370, 1,5 for 1.5.
function normalise(text) {
  let s = String(text).trim().toLowerCase()
    .replace(/[−–]/g, "-").replace(/[′’‘]/g, "'").replace(/[″”“]/g, '"').replace(/''/g, '"');
  s = s.replace(/(\d)?\s*([½¼¾⅛⅜⅝⅞])/g, (all, d, g) => `${d !== undefined ? `${d} ` : ""}${GLYPH_TEXT[g]}`);
  // A comma between a non-zero whole part and exactly three digits groups thousands; any other comma is a decimal point.
  s = s.replace(/(^|[^\d.])([1-9]\d{0,2}(?:,\d{3})+)(?![\d,])/g, (all, pre, num) => pre + num.replace(/,/g, ""));
  return s.replace(/,/g, ".");
}

/**
 * Metres from what a grower types: 4' 6 1/2", 4′ 6½″, 4 ft 6.5 in, 54 1/2 in, 4.5 ft, 1.37 m, 137 cm,
 * 1,370 mm, 1,37 m, or a bare number in the box's unit (inches or centimetres). Throws with a reason.
 */
export function parseLength(text, system) {
  let s = normalise(text);
  if (!s) throw new Error("enter a length");
  let sign = 1;
  if (s.startsWith("-")) { sign = -1; s = s.slice(1).trim(); }
  let total = 0, parts = 0, lastUnit = null;
  while (s.length) {
    const m = s.match(PART);
    if (!m || !m[0]) throw notALength(text);
    let v = parseFloat(m[1]);
    if (m[2] !== undefined) v += parseFloat(m[2]) / parseFloat(m[3]);
    if (m[4] !== undefined) v /= parseFloat(m[4]);
    if ((m[2] !== undefined && +m[3] === 0) || (m[4] !== undefined && +m[4] === 0)) throw notALength(text);
    // A bare number after feet is inches (4' 6); a bare number alone is in the box's unit.
    const unit = m[5] || (lastUnit === "ft" ? "in" : parts === 0 ? bareUnit(system) : null);
    if (!unit) throw notALength(text);
    total += v * UNIT_M[unit];
    lastUnit = UNIT_M[unit] === M_PER_FT ? "ft" : unit;
    parts += 1;
    s = s.slice(m[0].length);
  }
  const metres = sign * total;
  if (!Number.isFinite(metres)) throw new Error("not a finite length");
  return metres;
}

function notALength(text) {
  return new Error(`“${text}” is not a length: try 4' 6 1/2", 54 in, 1.37 m or 137 cm`);
}

/** A figure with a fixed number of decimals, rounded half away from zero ("–" for none, never "-0"). */
export function number(v, digits = 0) {
  if (!finite(v)) return "–";
  const r = roundHalfAway(v, digits);
  return (r === 0 ? 0 : r).toFixed(digits);
}

/** A current in amperes, always rounded up: "5.3 A". */
export function current(amps, digits = 1) {
  return finite(amps) ? `${roundUp(amps, digits).toFixed(digits)} A` : "–";
}

/** Area: ft² to 0.1, m² to 0.01. */
export function area(m2, system) {
  if (!finite(m2)) return "–";
  if (system === "imperial") return `${(roundHalfAway(m2, 1, FT2_NUM, FT2_DEN) || 0).toFixed(1)} ft²`;
  return `${number(m2, 2)} m²`;
}

/** Weight: pounds first in imperial ("9.9 lb (4.5 kg)"), kilograms in metric. */
export function weight(kg, system) {
  if (!finite(kg)) return "–";
  if (system === "imperial") return `${(roundHalfAway(kg, 1, LB_NUM, LB_DEN) || 0).toFixed(1)} lb (${number(kg, 1)} kg)`;
  return `${number(kg, 1)} kg`;
}

/** Mass in one unit, as a box shows it: "9.9 lb" or "4.5 kg". */
export function mass(kg, system) {
  if (!finite(kg)) return "–";
  return system === "imperial" ? `${(roundHalfAway(kg, 1, LB_NUM, LB_DEN) || 0).toFixed(1)} lb` : `${number(kg, 2)} kg`;
}

/** Mass from "2.5 kg", "5.5 lb", "12 oz" or a bare number in the system's unit (kg or lb). */
export function parseMass(text, system) {
  const s = normalise(text);
  const m = s.match(/^(\d+(?:\.\d+)?)\s*(kg|g|lb|lbs|oz)?$/);
  if (!m) throw new Error(`“${text}” is not a weight: try 2.5 kg or 5.5 lb`);
  const unit = m[2] || (system === "imperial" ? "lb" : "kg");
  return parseFloat(m[1]) * { kg: 1, g: 0.001, lb: KG_PER_LB, lbs: KG_PER_LB, oz: KG_PER_LB / 16 }[unit];
}

/** Temperature from °C: °F in imperial. */
export function temperature(c, system) {
  if (!finite(c)) return "–";
  return system === "imperial" ? `${number(c * 9 / 5 + 32, 0)} °F` : `${number(c, 1)} °C`;
}

/** Plot axes: feet or metres. */
export function axisValue(m, system) { return system === "imperial" ? m / M_PER_FT : m; }
export function axisUnit(system) { return system === "imperial" ? "ft" : "m"; }

/**
 * Server messages quote areas and lengths in SI ("(0.12 m²)", "1.5 m"): restate them in the chosen system.
 * Only numbers followed by a bare m or m² are touched, never units such as mol m⁻² d⁻¹.
 */
export function localise(text, system) {
  if (system !== "imperial" || !text) return text;
  return String(text)
    .replace(/(\d+(?:\.\d+)?)\s?m(?:²|2)(?![\w⁻])/g, (all, v) => area(parseFloat(v), system))
    .replace(/(\d+(?:\.\d+)?)\s?m(?![\w⁻²²/])/g, (all, v) => length(parseFloat(v), system))
    .replace(/(\d+(?:\.\d+)?)\s?cm(?![\w⁻])/g, (all, v) => length(parseFloat(v) / 100, system))
    .replace(/(\d+(?:\.\d+)?)\s?kg(?![\w⁻])/g, (all, v) => mass(parseFloat(v), system));
}
