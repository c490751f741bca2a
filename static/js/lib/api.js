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

/** The server's problems list (field: reason) as one line, or its message. */
export function problemsText(body, max = 4) {
  const list = ((body && body.problems) || []).slice(0, max).map((p) => `${p.field}: ${p.message}`);
  return list.length ? list.join("; ") : (body && body.message) || "unknown error";
}
