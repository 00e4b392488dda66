// Calls to the service. Every call sends the saved key (X-Api-Key) and has a time limit; a failure is returned as an
// outcome the page can say plainly, never thrown past the caller.

const KEY_STORAGE = "dischargeguard.apiKey";
const TIMEOUT_MS = 20000;

export function savedKey() {
  try {
    return localStorage.getItem(KEY_STORAGE) || "";
  } catch {
    return "";
  }
}

export function saveKey(key) {
  localStorage.setItem(KEY_STORAGE, key);
}

export function forgetKey() {
  localStorage.removeItem(KEY_STORAGE);
}

/**
 * Sends a request. Returns one of:
 *   { kind: "ok", status, body }
 *   { kind: "problem", status, body }      (4xx/5xx with a JSON body, e.g. problem details)
 *   { kind: "unreachable", reason }        (no connection, time-out, or an answer that is not JSON)
 */
export async function call(method, path, body) {
  const headers = { Accept: "application/json, application/problem+json" };
  const key = savedKey();
  if (key) {
    headers["X-Api-Key"] = key;
  }

  if (body !== undefined) {
    headers["Content-Type"] = "application/json";
  } else if (method !== "GET" && method !== "HEAD") {
    // A service without keys refuses a bodyless POST (a reload, a replay) unless it says it is meant.
    headers["X-DischargeGuard-Intent"] = "1";
  }

  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), TIMEOUT_MS);
  let response;
  try {
    response = await fetch(path, {
      method,
      headers,
      body: body === undefined ? undefined : JSON.stringify(body),
      signal: controller.signal,
      cache: "no-store",
    });
  } catch (error) {
    clearTimeout(timer);
    const timedOut = error && error.name === "AbortError";
    return { kind: "unreachable", reason: timedOut ? "The service did not answer in time." : "The service could not be reached (no connection)." };
  }

  let parsed = null;
  try {
    const text = await response.text();
    parsed = text ? JSON.parse(text) : null;
  } catch {
    parsed = null;
  } finally {
    clearTimeout(timer);
  }

  if (response.ok) {
    if (parsed === null) {
      return { kind: "unreachable", reason: "The service sent an answer the page cannot read." };
    }

    return { kind: "ok", status: response.status, body: parsed };
  }

  return { kind: "problem", status: response.status, body: parsed || {}, retryAfter: response.headers.get("Retry-After") };
}

/** A sentence for a problem that is not about one field (401, 403, 429, 503, …). */
export function describeProblem(outcome) {
  const status = outcome.status;
  const title = outcome.body && typeof outcome.body.title === "string" ? outcome.body.title : "";
  if (status === 401) {
    return "The service needs a valid API key. Enter your key at the top of the page.";
  }

  if (status === 403) {
    return "This key is not allowed to do that. Ask for a technician key.";
  }

  if (status === 429) {
    return "Too many requests from this key just now. Wait a moment and try again.";
  }

  if (status === 503) {
    const wait = outcome.retryAfter ? ` Try again in about ${outcome.retryAfter} s.` : "";
    return `The service cannot record evaluations right now, so it gives no answer.${wait}`;
  }

  if (status === 413) {
    return "The request is too large for the service.";
  }

  return title ? `${title} (HTTP ${status})` : `The service answered with an error (HTTP ${status}).`;
}
