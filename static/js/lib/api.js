// The one way Leafcast pages talk to the server: JSON in and out, errors as messages, and a newer request
// with the same key aborts the older one still in flight (its answer would be stale anyway).

const inFlight = new Map();

/**
 * fetch() a JSON endpoint. Resolves to {ok, status, body}; rejects only when the server cannot be reached
 * or the request was aborted (check isAbort(err)).
 * opts: method, body (object or string), key (abort the previous request with this key), headers.
 */
export async function request(url, opts = {}) {
  const { method = "GET", body, key } = opts;
  if (key && inFlight.has(key)) inFlight.get(key).abort();
  const ctrl = new AbortController();
  if (key) inFlight.set(key, ctrl);
  const headers = Object.assign(body !== undefined ? { "Content-Type": "application/json" } : {}, opts.headers || {});
  try {
    const res = await fetch(url, { method, headers, signal: ctrl.signal,
                                   body: body === undefined ? undefined : typeof body === "string" ? body : JSON.stringify(body) });
    const data = res.status === 204 ? null : await res.json().catch(() => ({ message: res.statusText }));
    return { ok: res.ok, status: res.status, body: data };
  } finally {
    if (key && inFlight.get(key) === ctrl) inFlight.delete(key);
  }
}

/** Abort the request in flight under this key, if any. */
export function abort(key) {
  if (inFlight.has(key)) { inFlight.get(key).abort(); inFlight.delete(key); }
}

export const isAbort = (err) => err && err.name === "AbortError";

// Room-file paths said in words: "room.fixtures[0].hanging_height_m" is "fixture F1, hanging height".
const ITEM_WORDS = { fixtures: "fixture", zones: "zone", obstacles: "obstacle", circuits: "circuit", fixture_types: "fixture type" };
const FIELD_WORDS = { hanging_height_m: "hanging height", x_m: "distance from the left wall", y_m: "distance from the front wall",
  z_m: "bottom above the floor", width_m: "width", length_m: "length", height_m: "height", canopy_height_m: "canopy height",
  rotation_deg: "rotation", dimming_pct: "dimming", photoperiod_h: "photoperiod", breaker_a: "breaker", grid_spacing_m: "map spacing",
  ppf_umol_s: "PPF", power_w: "power", weight_kg: "weight", name: "name", fixture_height_m: "fixture height" };
// One step of a path: "steps[0]" is "step 1", "fixture_height_m" is "fixture height".
const words = (key) => {
  const listed = /^(\w+?)s?\[(\d+)\]$/.exec(key);
  if (listed) return `${listed[1].replace(/_/g, " ")} ${Number(listed[2]) + 1}`;
  return FIELD_WORDS[key] || key.replace(/_(m|h|pct|deg|w|a|kg|m2)$/, "").replace(/_/g, " ");
};

/** A field path of the room file in the grower's words, with names from doc (the room file sent) when given. */
export function fieldText(path, doc) {
  const item = /^room\.(fixtures|zones|obstacles|circuits|fixture_types)\[(\d+)\](?:\.(.+))?$/.exec(path || "");
  if (item && ITEM_WORDS[item[1]]) {
    const found = doc && doc.room && (doc.room[item[1]] || [])[Number(item[2])];
    const name = found ? (found.name && item[1] !== "fixtures" ? found.name : found.id || found.name) : `number ${Number(item[2]) + 1}`;
    return `${ITEM_WORDS[item[1]]} ${name}${item[3] ? `, ${item[3].split(".").map(words).join(", ")}` : ""}`;
  }
  const top = /^room\.(\w+)$/.exec(path || "");
  return top ? `the room's ${words(top[1])}` : path;
}

/** The server's problems list (field: reason) as one line, or its message; doc names the room's items. */
export function problemsText(body, max = 4, doc = null) {
  const list = ((body && body.problems) || []).slice(0, max).map((p) => `${fieldText(p.field, doc)}: ${p.message}`);
  return list.length ? list.join("; ") : (body && body.message) || "unknown error";
}
