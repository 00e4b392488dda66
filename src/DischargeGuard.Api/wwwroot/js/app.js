// DischargeGuard stage check: wires the form to the service. The page computes no result; it shows the service's.

import { call, describeProblem, forgetKey, saveKey, savedKey } from "./api.js";
import { addStage, buildRequest, clearFieldErrors, fillPageTemperatureUnits, parseComposition, removeLastStage, setCatalogues, showFieldErrors, wireFlow } from "./form.js";
import { renderLimits } from "./limits.js";
import { readScenarios, refreshScenarioStages, wireScenarios } from "./scenarios.js";
import { localTime, renderEvaluation, renderNoVerdict } from "./render.js";

const $ = (selector) => document.querySelector(selector);
const SITE_STORAGE = "dischargeguard.site";
const COMPOSITIONS_STORAGE = "dischargeguard.compositions";
const OUTPUT_STORAGE = "dischargeguard.outputUnits";
const NEW_COMPOSITION = "new:";

let presets = [];

function readJson(key, fallback) {
  try {
    const raw = localStorage.getItem(key);
    return raw ? JSON.parse(raw) : fallback;
  } catch {
    return fallback;
  }
}

function writeJson(key, value) {
  try {
    localStorage.setItem(key, JSON.stringify(value));
  } catch {
    // Storage full or disabled: the page still works, it only forgets.
  }
}

function setStatus(text) {
  const status = $("#result-status");
  status.classList.remove("answered");
  const p = document.createElement("p");
  p.textContent = text;
  status.replaceChildren(p);
}

// ---- Key -------------------------------------------------------------------------------------------------------------

function showKeyState() {
  const has = savedKey() !== "";
  $("#key-form").hidden = has;
  $("#key-saved").hidden = !has;
}

function wireKey() {
  $("#key-form").addEventListener("submit", (event) => {
    event.preventDefault();
    const key = $("#api-key").value.trim();
    if (!key) {
      $("#key-hint").textContent = "Enter the key first.";
      $("#api-key").focus();
      return;
    }

    saveKey(key);
    $("#api-key").value = "";
    showKeyState();
    $("#key-state").textContent = "Key saved on this device.";
    $("#forget-key").focus();
    loadGases();
    loadCatalogues();
    loadHistory();
  });
  $("#forget-key").addEventListener("click", () => {
    forgetKey();
    showKeyState();
    $("#key-hint").textContent = "Key forgotten. Kept on this device only and sent with every request.";
    $("#api-key").focus();
  });
  showKeyState();
}

// ---- Site ------------------------------------------------------------------------------------------------------------

function siteBasis() {
  return document.querySelector('input[name="site-basis"]:checked').value;
}

function showSiteBasis() {
  const barometric = siteBasis() === "barometric";
  $("#barometric-field").hidden = !barometric;
  $("#elevation-field").hidden = barometric;
}

function rememberSite() {
  writeJson(SITE_STORAGE, {
    id: $("#site-id").value.trim(),
    basis: siteBasis(),
    elevation: $("#site-elevation").value.trim(),
    elevationUnit: $("#site-elevation-unit").value,
    barometric: $("#site-barometric").value.trim(),
    barometricUnit: $("#site-barometric-unit").value,
  });
}

function restoreSite() {
  const site = readJson(SITE_STORAGE, null);
  if (site) {
    $("#site-id").value = site.id || "";
    $(site.basis === "barometric" ? "#site-basis-barometric" : "#site-basis-elevation").checked = true;
    $("#site-elevation").value = site.elevation || "";
    $("#site-elevation-unit").value = site.elevationUnit || "m";
    $("#site-barometric").value = site.barometric || "";
    $("#site-barometric-unit").value = site.barometricUnit || "kPa";
  }

  showSiteBasis();
  for (const selector of ["#site-id", "#site-elevation", "#site-elevation-unit", "#site-barometric", "#site-barometric-unit"]) {
    $(selector).addEventListener("change", rememberSite);
  }

  for (const radio of document.querySelectorAll('input[name="site-basis"]')) {
    radio.addEventListener("change", () => {
      showSiteBasis();
      rememberSite();
    });
  }

  $("#site-id").addEventListener("change", loadCatalogues);
}

// ---- Gas -------------------------------------------------------------------------------------------------------------

function savedCompositions() {
  const list = readJson(COMPOSITIONS_STORAGE, []);
  return Array.isArray(list) ? list.filter((c) => c && typeof c.name === "string" && c.composition) : [];
}

function option(value, text) {
  const o = document.createElement("option");
  o.value = value;
  o.textContent = text;
  return o;
}

function fillGasSelect(selected) {
  const select = $("#gas");
  const kept = selected ?? select.value;
  const presetGroup = document.createElement("optgroup");
  presetGroup.label = "Presets";
  presetGroup.append(...presets.map((p) => option(`preset:${p.id}`, p.name || p.id)));
  const saved = savedCompositions();
  const savedGroup = document.createElement("optgroup");
  savedGroup.label = "Saved on this device";
  savedGroup.append(...saved.map((c, i) => option(`saved:${i}`, c.name)));
  const children = [option("", "Choose a gas"), presetGroup];
  if (saved.length) {
    children.push(savedGroup);
  }

  children.push(option(NEW_COMPOSITION, "Enter a composition…"));
  select.replaceChildren(...children);
  if ([...select.options].some((o) => o.value === kept)) {
    select.value = kept;
  }

  showCompositionEditor();
}

function showCompositionEditor() {
  $("#composition-editor").hidden = $("#gas").value !== NEW_COMPOSITION;
}

function selectedGas() {
  const value = $("#gas").value;
  if (value.startsWith("preset:")) {
    return { preset: value.slice("preset:".length) };
  }

  if (value.startsWith("saved:")) {
    const saved = savedCompositions()[Number(value.slice("saved:".length))];
    return saved ? { composition: saved.composition } : undefined;
  }

  if (value === NEW_COMPOSITION) {
    return { composition: parseComposition($("#composition").value) };
  }

  return undefined;
}

function wireGas() {
  $("#gas").addEventListener("change", showCompositionEditor);
  $("#save-composition").addEventListener("click", () => {
    const name = $("#composition-name").value.trim();
    const composition = parseComposition($("#composition").value);
    if (!name || Object.keys(composition).length === 0) {
      $("#composition-status").textContent = "Give the composition and a name to save it under.";
      return;
    }

    const list = savedCompositions().filter((c) => c.name !== name);
    list.push({ name, composition });
    writeJson(COMPOSITIONS_STORAGE, list);
    fillGasSelect(`saved:${list.length - 1}`);
    $("#composition-status").textContent = `Saved as "${name}" on this device.`;
    $("#gas").focus();
  });
}

// ---- Catalogues and history ------------------------------------------------------------------------------------------

async function loadGases() {
  const outcome = await call("GET", "/v1/gases");
  if (outcome.kind !== "ok") {
    $("#gas").replaceChildren(option("", "Gases not loaded"), option(NEW_COMPOSITION, "Enter a composition…"));
    $("#gas-hint").textContent = outcome.kind === "unreachable" ? outcome.reason : describeProblem(outcome);
    return;
  }

  presets = outcome.body.presets || [];
  $("#gas-hint").textContent = "A preset from the service, a composition saved on this device, or a new one.";
  fillGasSelect();
  const service = $("#service");
  const kept = service.value;
  service.replaceChildren(option("", "Not declared"), ...(outcome.body.serviceClasses || [])
    .filter((s) => s.detection === "Declared")
    .map((s) => option(s.id, s.title || s.id)));
  service.value = kept;
}

let catalogueRequest = 0;

async function loadCatalogues() {
  const mine = ++catalogueRequest;
  const params = new URLSearchParams();
  const site = $("#site-id").value.trim();
  const asset = $("#asset").value.trim();
  if (site) {
    params.set("site", site);
  }

  if (asset) {
    params.set("asset", asset);
  }

  const outcome = await call("GET", `/v1/rules${params.size ? `?${params}` : ""}`);
  if (mine !== catalogueRequest) {
    return;
  }

  const status = $("#limits-status");
  const limits = $("#limits-body");
  if (outcome.kind === "ok") {
    setCatalogues(outcome.body.catalogues || {});
    status.textContent = `Limits in force for ${asset || "any asset"}${site ? ` at ${site}` : ""}:`;
    renderLimits(outcome.body, limits);
    return;
  }

  // A near miss of a layer id ("c-204b" for C-204B) is refused with "did you mean"; say it where the limits would be.
  limits.replaceChildren();
  const errors = outcome.kind === "problem" && outcome.body && outcome.body.errors ? Object.values(outcome.body.errors).flat() : [];
  status.textContent = errors.length
    ? `Limits not shown: ${errors.join(" ")}`
    : `Limits not available: ${outcome.kind === "unreachable" ? outcome.reason : describeProblem(outcome)}`;
}

let historyRequest = 0;

async function loadHistory() {
  const mine = ++historyRequest;
  const asset = $("#asset").value.trim();
  const list = $("#history-list");
  const status = $("#history-status");
  list.replaceChildren();
  if (!asset) {
    status.textContent = "Enter an asset tag to see its last evaluations.";
    return;
  }

  status.textContent = `Loading the last evaluations of ${asset}…`;
  const outcome = await call("GET", `/v1/evaluations?${new URLSearchParams({ asset, limit: "5" })}`);
  if (mine !== historyRequest) {
    return;
  }

  if (outcome.kind !== "ok") {
    status.textContent = `History not available: ${outcome.kind === "unreachable" ? outcome.reason : describeProblem(outcome)}`;
    return;
  }

  const evaluations = outcome.body.evaluations || [];
  status.textContent = evaluations.length ? `Last ${evaluations.length} evaluation(s) of ${asset}, newest first (local time); tap one to open it:` : `No evaluations of ${asset} recorded yet.`;
  for (const e of evaluations) {
    const item = document.createElement("li");
    item.dataset.id = e.id;
    const link = document.createElement("a");
    link.className = "history-link";
    link.href = `?evaluation=${encodeURIComponent(e.id)}`;
    link.append(historyPart("history-time", localTime(e.evaluatedAt)), historyPart(`history-verdict tag tag-${e.verdict}`, String(e.verdict).toUpperCase()));
    const numbers = historyPart("history-numbers", "…");
    link.append(numbers, historyPart("history-site", e.site ? `at ${e.site}` : ""));
    link.addEventListener("click", (event) => {
      event.preventDefault();
      history.pushState(null, "", link.href);
      openRecorded(e.id);
    });
    item.append(link);
    list.append(item);
    fillHistoryNumbers(e.id, numbers, mine);
  }
}

function historyPart(className, text) {
  const span = document.createElement("span");
  span.className = className;
  span.textContent = text;
  return span;
}

/** The row's estimated T2 and margin, read from the recorded answer (the list carries neither). */
async function fillHistoryNumbers(id, target, mine) {
  const outcome = await call("GET", `/v1/evaluations/${encodeURIComponent(id)}`);
  if (mine !== historyRequest) {
    return;
  }

  if (outcome.kind !== "ok" || !outcome.body.response) {
    target.textContent = "figures not available";
    return;
  }

  const answer = outcome.body.response;
  const stages = answer.stages || [];
  const ref = answer.governing;
  const stage = ref && stages[ref.stage] ? stages[ref.stage] : stages[0];
  const t2 = stage && stage.dischargeTemperature ? stage.dischargeTemperature.estimated : null;
  const margin = ref ? ref.margin : stage && stage.governing ? stage.governing.margin : null;
  const show = (quantity) => `${Math.abs(quantity.value) >= 100 ? quantity.value.toFixed(0) : quantity.value.toFixed(1)} ${quantity.unit}`;
  target.dataset.t2 = t2 ? String(t2.value) : "";
  target.textContent = `T2 ${t2 ? show(t2) : "—"}, margin ${margin ? `${show(margin)}${margin.value < 0 ? " (beyond)" : ""}` : "—"}`;
}

/** Shows a recorded evaluation (/?evaluation={id}) exactly as it was answered, answer first. */
async function openRecorded(id) {
  const body = $("#result-body");
  body.replaceChildren();
  clearFieldErrors();
  setStatus("Opening the recorded evaluation… no verdict yet.");
  const outcome = await call("GET", `/v1/evaluations/${encodeURIComponent(id)}`);
  body.replaceChildren();
  if (outcome.kind === "ok" && outcome.body.response) {
    renderEvaluation(outcome.body.response, body);
    showAnswered(outcome.body.response, "Recorded verdict");
    if (!$("#asset").value && outcome.body.asset) {
      $("#asset").value = outcome.body.asset;
      loadHistory();
    }
  } else {
    const reason = outcome.kind === "unreachable" ? outcome.reason
      : outcome.status === 404 ? `No evaluation ${id} is recorded that this key may read.` : describeProblem(outcome);
    renderNoVerdict(reason, body);
    setStatus(`No verdict. ${reason}`);
  }
}

/** After an answer: the status announced, and the first screen shown from the top (header, caution, verdict, answer). */
function showAnswered(answer, lead) {
  const stages = answer.stages.length;
  setStatus(`${lead}: ${String(answer.verdict).toUpperCase()} for ${answer.asset || "the machine"}, ${stages} stage${stages === 1 ? "" : "s"}. Evaluation id ${answer.id}.`);
  $("#result-status").classList.add("answered");
  window.scrollTo({ top: 0, left: 0, behavior: "instant" });
  $("#result-heading").focus({ preventScroll: true });
}

// ---- Evaluate --------------------------------------------------------------------------------------------------------

let evaluating = false;

async function evaluate(event) {
  event.preventDefault();
  if (evaluating) {
    return;
  }

  evaluating = true;
  const button = $("#check");
  button.disabled = true;
  const body = $("#result-body");

  // Never a stale result: everything from the last answer goes before the request is sent.
  body.replaceChildren();
  clearFieldErrors();
  setStatus("Checking… no verdict yet.");
  try {
    const request = buildRequest(selectedGas(), readScenarios());
    const outcome = await call("POST", "/v1/evaluations?curve=true&detail=full", request);
    body.replaceChildren();
    if (outcome.kind === "ok") {
      renderEvaluation(outcome.body, body);
      showAnswered(outcome.body, "Verdict");
      rememberSite();
      history.replaceState(null, "", `?evaluation=${encodeURIComponent(outcome.body.id)}`);
      loadHistory();
    } else if (outcome.kind === "problem" && outcome.body && outcome.body.errors && (outcome.status === 400 || outcome.status === 422)) {
      const count = showFieldErrors(outcome.body.errors);
      const reason = `The service could not use ${count} entr${count === 1 ? "y" : "ies"}; each is marked beside its field.`;
      renderNoVerdict(reason, body);
      setStatus(`No verdict. ${reason}`);
      $("#error-summary").focus();
    } else {
      const reason = outcome.kind === "unreachable" ? outcome.reason : describeProblem(outcome);
      renderNoVerdict(reason, body);
      setStatus(`No verdict. ${reason}`);
      $("#result-heading").focus();
    }
  } catch (error) {
    body.replaceChildren();
    const reason = `The page failed while showing the answer (${error && error.message ? error.message : error}).`;
    renderNoVerdict(reason, body);
    setStatus(`No verdict. ${reason}`);
  } finally {
    evaluating = false;
    button.disabled = false;
  }
}

// ---- Start -----------------------------------------------------------------------------------------------------------

async function start() {
  wireKey();
  restoreSite();
  wireGas();
  fillPageTemperatureUnits();
  addStage();
  $("#add-stage").addEventListener("click", () => {
    const stage = addStage();
    refreshScenarioStages();
    stage.querySelector('[data-id="suction-pressure"]').focus();
  });
  $("#remove-stage").addEventListener("click", () => {
    removeLastStage();
    refreshScenarioStages();
    $("#add-stage").focus();
  });
  wireScenarios();
  const output = $("#output-units");
  output.value = localStorage.getItem(OUTPUT_STORAGE) === "imperial" ? "imperial" : "metric";
  output.addEventListener("change", () => localStorage.setItem(OUTPUT_STORAGE, output.value));
  $("#asset").addEventListener("change", () => {
    loadCatalogues();
    loadHistory();
  });
  $("#evaluate-form").addEventListener("submit", evaluate);
  wireFlow();
  fillGasSelect();
  const recorded = new URLSearchParams(location.search).get("evaluation");
  await Promise.all([loadGases(), loadCatalogues(), recorded ? openRecorded(recorded) : Promise.resolve()]);
  document.body.dataset.ready = "true";
}

start();
