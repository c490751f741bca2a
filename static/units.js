// Display units. Everything stored is SI; these only convert what is shown and typed.
"use strict";
const Units = (function () {
  const M_PER_IN = 0.0254;
  const M_PER_FT = 0.3048;
  const FT2_PER_M2 = 1 / (M_PER_FT * M_PER_FT);

  function round(v, d) { const k = 10 ** d; return Math.round(v * k) / k; }

  // Length for people: 4′ 6½″ or 1.37 m / 45 cm.
  function length(m, system, opts = {}) {
    if (m === null || m === undefined || !isFinite(m)) return "–";
    if (system === "imperial") {
      const sign = m < 0 ? "−" : "";
      let inches = Math.abs(m) / M_PER_IN;
      const step = opts.fine ? 8 : 2;  // nearest 1/8″ or 1/2″
      inches = Math.round(inches * step) / step;
      let ft = Math.floor(inches / 12);
      let rest = inches - 12 * ft;
      if (rest >= 12) { ft += 1; rest -= 12; }
      const restText = fraction(rest);
      if (ft === 0) return `${sign}${restText}″`;
      return `${sign}${ft}′ ${restText}″`;
    }
    if (Math.abs(m) < 1) return `${round(m * 100, 1)} cm`;
    return `${round(m, 3)} m`;
  }

  function fraction(x) {
    const whole = Math.floor(x + 1e-9);
    const f = x - whole;
    const eighths = Math.round(f * 8);
    const names = { 0: "", 1: "⅛", 2: "¼", 3: "⅜", 4: "½", 5: "⅝", 6: "¾", 7: "⅞" };
    if (eighths === 8) return String(whole + 1);
    return `${whole}${names[eighths]}`;
  }

  // Value for an input box, in the unit that box is labelled with (in or cm).
  function toInput(m, system) {
    if (system === "imperial") return String(round(m / M_PER_IN, 2));
    return String(round(m * 100, 1));
  }
  function inputUnit(system) { return system === "imperial" ? "in" : "cm"; }

  // Parse what a grower types: 4'6", 4 ft 6 in, 54", 54 in, 4.5 ft, 1.37 m, 137 cm, 1370 mm,
  // or a bare number in the box's unit. Returns metres, or throws with a reason.
  function parseLength(text, system) {
    const s = String(text).trim().toLowerCase().replace(/,/g, ".").replace(/[’′]/g, "'").replace(/[”″]/g, '"');
    if (!s) throw new Error("enter a length");
    let m;
    const ftIn = s.match(/^(-?\d+(?:\.\d+)?)\s*(?:'|ft|feet|foot)\s*(?:(\d+(?:\.\d+)?)\s*(?:"|in|inch|inches)?)?$/);
    const unit = s.match(/^(-?\d+(?:\.\d+)?)\s*(mm|cm|m|in|inch|inches|"|ft|')?$/);
    if (ftIn) {
      m = parseFloat(ftIn[1]) * M_PER_FT + (ftIn[2] ? parseFloat(ftIn[2]) * M_PER_IN : 0);
    } else if (unit) {
      const v = parseFloat(unit[1]);
      const u = unit[2] || (system === "imperial" ? "in" : "cm");
      const factor = { mm: 0.001, cm: 0.01, m: 1, in: M_PER_IN, inch: M_PER_IN, inches: M_PER_IN, '"': M_PER_IN, ft: M_PER_FT, "'": M_PER_FT }[u];
      m = v * factor;
    } else {
      throw new Error(`“${text}” is not a length (try 4'6", 54 in, 1.37 m or 137 cm)`);
    }
    if (!isFinite(m)) throw new Error("not a finite length");
    return m;
  }

  function area(m2, system) {
    if (system === "imperial") return `${round(m2 * FT2_PER_M2, 1)} ft²`;
    return `${round(m2, 2)} m²`;
  }

  // Plot axes: feet or metres.
  function axisValue(m, system) { return system === "imperial" ? m / M_PER_FT : m; }
  function axisUnit(system) { return system === "imperial" ? "ft" : "m"; }

  return { length, toInput, inputUnit, parseLength, area, axisValue, axisUnit, M_PER_IN, M_PER_FT };
})();
