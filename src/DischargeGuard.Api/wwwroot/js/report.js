// The report viewer: fetches GET /v1/evaluations/{id}/report with the key this device holds (never a key in a URL),
// and shows the service's HTML. The document is parsed inert (DOMParser runs no script) and its article adopted here,
// under the same Content-Security-Policy as the page; the report's own styles are report.css.

import { savedKey } from "./api.js";

const status = document.querySelector("#report-status");
const body = document.querySelector("#report-body");
const id = new URLSearchParams(location.search).get("evaluation") || "";

document.querySelector("#print-report").addEventListener("click", () => window.print());
document.querySelector("#back-to-page").href = id ? `./?evaluation=${encodeURIComponent(id)}` : "./";

async function load() {
  if (!/^[0-9a-f-]{36}$/i.test(id)) {
    status.textContent = "No evaluation id in the address (…/report.html?evaluation=<id>).";
    return;
  }

  const headers = { Accept: "text/html" };
  const key = savedKey();
  if (key) {
    headers["X-Api-Key"] = key;
  }

  let response;
  try {
    response = await fetch(`/v1/evaluations/${encodeURIComponent(id)}/report`, { headers, cache: "no-store" });
  } catch {
    status.textContent = "The service could not be reached (no connection).";
    return;
  }

  if (!response.ok) {
    status.textContent = response.status === 401
      ? "The service needs a valid API key: save it on the check page first."
      : response.status === 404 ? `No evaluation ${id} is recorded that this key may read.` : `The service answered with an error (HTTP ${response.status}).`;
    return;
  }

  const parsed = new DOMParser().parseFromString(await response.text(), "text/html");
  const article = parsed.querySelector("article.report");
  if (!article) {
    status.textContent = "The service sent a report the page cannot read.";
    return;
  }

  document.title = parsed.title || document.title;
  body.replaceChildren(document.adoptNode(article));
  status.textContent = `Record ${id} loaded.`;
  status.classList.add("visually-hidden");
  document.body.dataset.ready = "true";
}

load();
