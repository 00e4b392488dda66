// The form: stages, unit choices with their basis, catalogue lists, the request body, and field errors placed beside
// the field their request path names.

export const PRESSURE_UNITS = [
  { unit: "barg", basis: "gauge" },
  { unit: "psig", basis: "gauge" },
  { unit: "kPa(g)", basis: "gauge" },
  { unit: "bara", basis: "absolute" },
  { unit: "psia", basis: "absolute" },
  { unit: "kPa(a)", basis: "absolute" },
];

export const TEMPERATURE_UNITS = ["°C", "°F"];

const $ = (selector, root = document) => root.querySelector(selector);

let catalogues = { compressorTypes: [], lubricants: [], valveMaterials: [], sealMaterials: [], ringMaterials: [], springMaterials: [], dischargeMaterials: [] };
let preferredPressureUnit = "barg";
let preferredTemperatureUnit = "°C";

/** Replaces the catalogue lists of every stage, keeping each selection that is still offered. */
export function setCatalogues(next) {
  catalogues = {
    compressorTypes: next.compressorTypes || [],
    lubricants: next.lubricants || [],
    valveMaterials: next.valveMaterials || [],
    sealMaterials: next.sealMaterials || [],
    ringMaterials: next.ringMaterials || [],
    springMaterials: next.springMaterials || [],
    // The discharge-side materials are a fixed vocabulary of ids (no titles).
    dischargeMaterials: (next.dischargeMaterials || []).map((id) => ({ id })),
  };
  for (const stage of stageElements()) {
    fillCatalogueSelects(stage);
    updateEfficiencyHint(stage);
  }
}

export function stageElements() {
  return [...document.querySelectorAll("#stages > fieldset.stage")];
}

function option(value, text) {
  const o = document.createElement("option");
  o.value = value;
  o.textContent = text;
  return o;
}

function fillCatalogueSelects(stage) {
  for (const select of stage.querySelectorAll("select.catalogue")) {
    const kept = select.value;
    const entries = catalogues[select.dataset.catalogue] || [];
    select.replaceChildren(option("", "Not given"), ...entries.map((e) => option(e.id, catalogueText(e))));
    if (entries.some((e) => e.id === kept)) {
      select.value = kept;
    }
  }
}

/**
 * An option's text. A lubricant shows its class and rated discharge temperature first ("VDL · 220 °C · Mineral …"), so
 * the choice that decides the limit stays visible in a closed select on a phone; a material its continuous limit.
 */
export function catalogueText(entry) {
  if (entry.class || entry.ratedMaxDischarge) {
    const cls = entry.class ? entry.class.split(" ").at(-1) : "no class";
    const rated = entry.ratedMaxDischarge ? `${entry.ratedMaxDischarge.value} ${entry.ratedMaxDischarge.unit}` : "no rating";
    return `${cls} · ${rated} · ${entry.title} (${entry.id})`;
  }

  if (entry.continuousLimit) {
    return `${entry.title} · ${entry.continuousLimit.value} ${entry.continuousLimit.unit} (${entry.id})`;
  }

  return entry.title ? `${entry.title} (${entry.id})` : entry.id;
}

function updateBasis(select) {
  const badge = select.parentElement.querySelector(".basis");
  const entry = PRESSURE_UNITS.find((u) => u.unit === select.value);
  if (badge && entry) {
    badge.textContent = entry.basis;
    badge.className = `basis basis-${entry.basis}`;
  }
}

/** The hint under the efficiency: the compressor type's default from the rule file, shown as such. */
function updateEfficiencyHint(stage) {
  const hint = stage.querySelector('[data-id="efficiency-hint"]');
  const typeId = stage.querySelector('[data-id="compressor-type"]').value;
  const type = catalogues.compressorTypes.find((t) => t.id === typeId);
  if (type && typeof type.defaultEfficiency === "number") {
    hint.textContent = `Blank: the default for ${type.title || type.id}, ${type.efficiencyKind || "isentropic"} ${type.defaultEfficiency} (from the rule file, not measured).`;
  } else {
    hint.textContent = "Blank: the compressor type's default from the rule file (choose a compressor type).";
  }
}

/** Adds a stage fieldset with unique ids and labels; later stages copy the units of the stage before. */
export function addStage() {
  const container = $("#stages");
  const index = stageElements().length;
  const fragment = $("#stage-template").content.cloneNode(true);
  const stage = fragment.querySelector("fieldset.stage");
  stage.dataset.index = String(index);
  stage.querySelector(".stage-legend").textContent = `Stage ${index + 1}`;
  stage.querySelector(".stage-error").id = `stage-${index}-error`;
  for (const element of stage.querySelectorAll("[data-id]")) {
    element.id = `stage-${index}-${element.dataset.id}`;
    element.name = element.id;
  }

  for (const label of stage.querySelectorAll("label[data-for]")) {
    label.htmlFor = `stage-${index}-${label.dataset.for}`;
    label.id = `stage-${index}-${label.dataset.for}-label`;
  }

  for (const select of stage.querySelectorAll("select[data-label]")) {
    // The unit select is named by its own label plus the stage, so a screen reader says which stage it belongs to.
    select.setAttribute("aria-label", `${select.dataset.label}, stage ${index + 1}`);
  }

  for (const select of stage.querySelectorAll("select.pressure-unit")) {
    select.replaceChildren(...PRESSURE_UNITS.map((u) => option(u.unit, `${u.unit} (${u.basis})`)));
    select.value = preferredPressureUnit;
    updateBasis(select);
    select.addEventListener("change", () => {
      preferredPressureUnit = select.value;
      updateBasis(select);
    });
  }

  for (const select of stage.querySelectorAll("select.temperature-unit")) {
    select.replaceChildren(...TEMPERATURE_UNITS.map((u) => option(u, u)));
    select.value = preferredTemperatureUnit;
    select.addEventListener("change", () => {
      preferredTemperatureUnit = select.value;
    });
  }

  for (const field of stage.querySelectorAll(".field[data-field]")) {
    field.dataset.path = `stages[${index}].${field.dataset.field}`;
  }

  stage.dataset.path = `stages[${index}]`;
  const hint = stage.querySelector('[data-id="efficiency-hint"]');
  const efficiency = stage.querySelector('[data-id="efficiency"]');
  efficiency.setAttribute("aria-describedby", hint.id);

  if (index === 0) {
    // The first stage has no intercooler before it.
    for (const later of stage.querySelectorAll("[data-later-only]")) {
      later.remove();
    }
  }

  const previous = stageElements().at(-1);
  fillCatalogueSelects(stage);
  if (previous) {
    for (const id of ["compressor-type", "lubricant", "valve-material", "seal-material", "ring-material", "spring-material", "discharge-material"]) {
      stage.querySelector(`[data-id="${id}"]`).value = previous.querySelector(`[data-id="${id}"]`).value;
    }
  }

  stage.querySelector('[data-id="compressor-type"]').addEventListener("change", () => updateEfficiencyHint(stage));
  updateEfficiencyHint(stage);
  container.append(fragment);
  updateStageButtons();
  return stage;
}

export function removeLastStage() {
  const stages = stageElements();
  if (stages.length > 1) {
    stages.at(-1).remove();
  }

  updateStageButtons();
}

function updateStageButtons() {
  $("#remove-stage").disabled = stageElements().length <= 1;
}

const text = (element) => element.value.trim();

function quantity(valueElement, unitElement) {
  const value = text(valueElement);
  return value === "" ? undefined : `${value} ${unitElement.value}`;
}

function prune(object) {
  // Drops undefined members and empty objects, so absent optional parts are simply not sent.
  for (const [key, value] of Object.entries(object)) {
    if (value && typeof value === "object" && !Array.isArray(value)) {
      prune(value);
      if (Object.keys(value).length === 0) {
        delete object[key];
      }
    } else if (value === undefined || value === "") {
      delete object[key];
    }
  }

  return object;
}

/** Reads "H2 0.8" lines into { H2: 0.8 }; a line that cannot be read is kept as NaN so the service names it. */
export function parseComposition(source) {
  const composition = {};
  for (const line of source.split(/\r?\n|;/)) {
    const trimmed = line.trim();
    if (!trimmed) {
      continue;
    }

    const match = /^(.+?)[\s:=]+([0-9.eE+-]+)$/.exec(trimmed);
    if (match) {
      composition[match[1].trim()] = Number(match[2]);
    } else {
      composition[trimmed] = Number.NaN;
    }
  }

  return composition;
}

/** Relative humidity (typed in %, sent as the contract's fraction) or a water dew point; neither for a dry gas. */
function humidity() {
  const rh = text($("#relative-humidity"));
  return {
    relativeHumidity: rh === "" ? undefined : Number(rh) / 100,
    dewPoint: quantity($("#dew-point"), $("#dew-point-unit")),
  };
}

/** The first stage's flow: a mass flow, or a standard volume flow with its reference conditions. */
function flow() {
  const value = text($("#flow"));
  if (value === "") {
    return undefined;
  }

  const [kind, unit] = $("#flow-unit").value.split(":");
  return kind === "mass" ? { mass: `${value} ${unit}` } : { standardVolume: `${value} ${unit}`, reference: $("#flow-reference").value };
}

/** Shows the reference conditions only for a standard volume flow. */
export function wireFlow() {
  const show = () => {
    $("#flow-reference-field").hidden = !$("#flow-unit").value.startsWith("standard:");
  };
  $("#flow-unit").addEventListener("change", show);
  show();
}

/** Fills the page-level temperature unit selects (outside the stages). */
export function fillPageTemperatureUnits() {
  for (const select of document.querySelectorAll("#evaluate-form > fieldset select.temperature-unit")) {
    select.replaceChildren(...TEMPERATURE_UNITS.map((u) => option(u, u)));
  }
}

/**
 * The request body, as the contract (EvaluationRequest) spells it; quantities are "<number> <unit>" strings.
 * `scenarios` is the contract's scenario list (js/scenarios.js readScenarios()); empty or absent sends none.
 */
export function buildRequest(gas, scenarios) {
  const siteBasis = document.querySelector('input[name="site-basis"]:checked').value;
  const request = {
    asset: text($("#asset")) || undefined,
    site: {
      id: text($("#site-id")) || undefined,
      elevation: siteBasis === "elevation" ? quantity($("#site-elevation"), $("#site-elevation-unit")) : undefined,
      barometricPressure: siteBasis === "barometric" ? quantity($("#site-barometric"), $("#site-barometric-unit")) : undefined,
    },
    service: $("#service").value || undefined,
    gas: gas ? { ...gas, ...humidity() } : gas,
    flow: flow(),
    outputUnits: $("#output-units").value,
    method: $("#method") ? $("#method").value || undefined : undefined,
    // The "what if" rows (js/scenarios.js), sent only when there is at least one.
    scenarios: scenarios && scenarios.length ? scenarios : undefined,
    stages: stageElements().map((stage) => {
      const get = (id) => stage.querySelector(`[data-id="${id}"]`);
      const has = (id) => get(id) !== null;
      const efficiencyValue = text(get("efficiency"));
      const uncertaintyValue = text(get("uncertainty"));
      const unloaded = get("unloaded").value;
      const fedDirectly = has("fed-directly") && get("fed-directly").checked;
      const cooled = has("ic-outlet") && (text(get("ic-outlet")) !== "" || text(get("ic-approach")) !== "");
      return prune({
        // An intercooler with an outlet temperature or an approach gives this stage's suction; it is not sent twice.
        // Fed directly, the cooler's temperatures are not used (only its pressure drop), so they are not sent.
        intercooler: has("ic-outlet") ? {
          outletTemperature: fedDirectly ? undefined : quantity(get("ic-outlet"), get("ic-outlet-unit")),
          approach: fedDirectly || text(get("ic-approach")) === "" ? undefined : `${text(get("ic-approach"))} K`,
          coolantTemperature: fedDirectly ? undefined : quantity(get("ic-coolant"), get("ic-coolant-unit")),
          pressureDrop: quantity(get("ic-drop"), get("ic-drop-unit")),
        } : undefined,
        // A stage fed directly takes its suction from the stage before, so its own suction is not sent either.
        fedDirectly: fedDirectly ? true : undefined,
        suction: cooled || fedDirectly ? undefined : {
          pressure: quantity(get("suction-pressure"), get("suction-pressure-unit")),
          temperature: quantity(get("suction-temperature"), get("suction-temperature-unit")),
        },
        discharge: { pressure: quantity(get("discharge-pressure"), get("discharge-pressure-unit")) },
        efficiency: efficiencyValue === "" && uncertaintyValue === "" ? undefined : {
          [get("efficiency-kind").value]: efficiencyValue === "" ? undefined : Number(efficiencyValue),
          uncertainty: uncertaintyValue === "" ? undefined : Number(uncertaintyValue),
        },
        equipment: {
          compressorType: get("compressor-type").value || undefined,
          lubricant: get("lubricant").value || undefined,
          valveMaterial: get("valve-material").value || undefined,
          sealMaterial: get("seal-material").value || undefined,
          ringMaterial: get("ring-material").value || undefined,
          springMaterial: get("spring-material").value || undefined,
          dischargeMaterial: get("discharge-material").value || undefined,
          designTemperature: quantity(get("design-temperature"), get("design-temperature-unit")),
        },
        calibration: {
          suction: {
            pressure: quantity(get("cal-suction-pressure"), get("cal-suction-pressure-unit")),
            temperature: quantity(get("cal-suction-temperature"), get("cal-suction-temperature-unit")),
          },
          discharge: { pressure: quantity(get("cal-discharge-pressure"), get("cal-discharge-pressure-unit")) },
          measuredDischargeTemperature: quantity(get("cal-measured"), get("cal-measured-unit")),
        },
        oilInjection: {
          flow: quantity(get("oil-flow"), get("oil-flow-unit")),
          inletTemperature: quantity(get("oil-temperature"), get("oil-temperature-unit")),
          shaftPower: text(get("shaft-power")) === "" ? undefined : `${text(get("shaft-power"))} kW`,
        },
        operation: {
          normalDischargeTemperature: quantity(get("normal"), get("normal-unit")),
          coolantInletTemperature: quantity(get("coolant"), get("coolant-unit")),
          unloadedRunning: unloaded === "" ? undefined : unloaded === "true",
        },
        measured: { dischargeTemperature: quantity(get("measured"), get("measured-unit")) },
      });
    }),
  };
  return prune(request);
}

// Request paths in the service's messages, said the way the form labels them.
const PATH_WORDS = [
  [/site\.barometricPressure/g, "the site's barometric pressure"],
  [/site\.elevation/g, "the site's elevation"],
  [/equipment\.compressorType/g, "a compressor type"],
  [/measuredDischargeTemperature/g, "the measured discharge temperature"],
  [/jacketCoolantInletTemperature/g, "the jacket coolant inlet temperature"],
  [/unloadedRunning/g, "whether it runs unloaded"],
];

export function plainWords(message) {
  let result = String(message);
  for (const [pattern, words] of PATH_WORDS) {
    result = result.replace(pattern, words);
  }

  return result;
}

/** Removes every field error and the summary. */
export function clearFieldErrors() {
  for (const error of document.querySelectorAll(".field-error[data-generated]")) {
    error.remove();
  }

  for (const error of document.querySelectorAll(".stage-error")) {
    error.hidden = true;
    error.textContent = "";
  }

  for (const element of document.querySelectorAll('[aria-invalid="true"]')) {
    element.removeAttribute("aria-invalid");
    const described = (element.getAttribute("aria-describedby") || "").split(" ").filter((id) => id && !id.startsWith("err-"));
    if (described.length) {
      element.setAttribute("aria-describedby", described.join(" "));
    } else {
      element.removeAttribute("aria-describedby");
    }
  }

  $("#error-summary").hidden = true;
  $("#error-list").replaceChildren();
}

/** The element a path names, or its nearest named parent: "stages[0].efficiency.isentropic" → the efficiency field. */
function holderFor(path) {
  let candidate = path;
  for (;;) {
    const holder = document.querySelector(`[data-path="${CSS.escape(candidate)}"]`);
    if (holder) {
      return holder;
    }

    const cut = Math.max(candidate.lastIndexOf("."), candidate.lastIndexOf("["));
    if (cut <= 0) {
      return null;
    }

    candidate = candidate.slice(0, cut);
  }
}

/** Shows each problem-details `errors` entry beside its field, and a summary linking to them. Returns how many were placed. */
export function showFieldErrors(errors) {
  const list = $("#error-list");
  let count = 0;
  for (const [path, messages] of Object.entries(errors || {})) {
    const words = (Array.isArray(messages) ? messages : [messages]).map(plainWords).join(" ");
    const holder = holderFor(path);
    const errorId = `err-${count}`;
    let target = null;
    let labelText = path;
    if (holder && holder.matches(".field")) {
      const error = document.createElement("p");
      error.className = "field-error";
      error.dataset.generated = "";
      error.dataset.errorPath = path;
      error.id = errorId;
      error.textContent = words;
      holder.append(error);
      target = holder.querySelector("input, select, textarea");
      const label = holder.querySelector("label");
      labelText = label ? label.textContent : path;
      const stage = holder.closest("fieldset.stage");
      if (stage) {
        labelText = `${stage.querySelector(".stage-legend").textContent}: ${labelText}`;
      }
    } else if (holder && holder.matches("fieldset.stage")) {
      const error = holder.querySelector(".stage-error");
      error.hidden = false;
      error.id = errorId;
      error.dataset.errorPath = path;
      error.textContent = words;
      target = holder.querySelector("input");
      labelText = holder.querySelector(".stage-legend").textContent;
    } else if (holder) {
      const error = document.createElement("p");
      error.className = "field-error";
      error.dataset.generated = "";
      error.dataset.errorPath = path;
      error.id = errorId;
      error.textContent = words;
      holder.append(error);
      target = holder.querySelector("input, select, textarea");
      const legend = holder.querySelector("legend");
      labelText = legend ? legend.textContent : path;
    }

    if (target) {
      target.setAttribute("aria-invalid", "true");
      const described = (target.getAttribute("aria-describedby") || "").split(" ").filter(Boolean);
      target.setAttribute("aria-describedby", [...described, errorId].join(" "));
    }

    const item = document.createElement("li");
    if (target && target.id) {
      const link = document.createElement("a");
      link.href = `#${target.id}`;
      link.textContent = `${labelText}: ${words}`;
      link.addEventListener("click", (event) => {
        event.preventDefault();
        target.focus();
      });
      item.append(link);
    } else {
      item.textContent = `${labelText}: ${words}`;
    }

    list.append(item);
    count++;
  }

  $("#error-summary").hidden = count === 0;
  return count;
}
