// The "what if" scenarios: rows a technician adds (hot day, fouled cooler, cooling-water failure, recycle), read into the
// request's `scenarios` as the contract (ScenarioInput) spells them. The free `override` is not offered on the page.

import { TEMPERATURE_UNITS } from "./form.js";

const $ = (selector, root = document) => root.querySelector(selector);

const KINDS = {
  hotDay: { name: "hot-day", title: "Hot day" },
  fouledCooler: { name: "fouled-cooler", title: "Fouled cooler" },
  coolingWaterFailure: { name: "cooling-water-failure", title: "Cooling-water failure" },
  recycle: { name: "recycle", title: "Recycle" },
};

function rows() {
  return [...document.querySelectorAll("#scenario-list > fieldset.scenario")];
}

function option(value, text) {
  const o = document.createElement("option");
  o.value = value;
  o.textContent = text;
  return o;
}

/** A name not yet used by another row: "hot-day", then "hot-day-2", … (the contract wants names unique). */
function freeName(base) {
  const used = new Set(rows().map((row) => $('[data-id="name"]', row).value.trim()));
  if (!used.has(base)) {
    return base;
  }

  let n = 2;
  while (used.has(`${base}-${n}`)) {
    n++;
  }

  return `${base}-${n}`;
}

/** Gives a row its position: ids, labels, request paths (for field errors) and the legend follow the index. */
function indexRow(row, index) {
  row.dataset.index = String(index);
  row.dataset.path = `scenarios[${index}]`;
  row.querySelector(".scenario-legend").textContent = `Scenario ${index + 1}: ${KINDS[row.dataset.kind].title}`;
  for (const element of row.querySelectorAll("[data-id]")) {
    element.id = `scenario-${index}-${element.dataset.id}`;
    element.name = element.id;
  }

  for (const label of row.querySelectorAll("label[data-for]")) {
    label.htmlFor = `scenario-${index}-${label.dataset.for}`;
  }

  for (const select of row.querySelectorAll("select[data-label]")) {
    select.setAttribute("aria-label", `${select.dataset.label}, scenario ${index + 1}`);
  }

  for (const field of row.querySelectorAll(".field[data-field]")) {
    field.dataset.path = `scenarios[${index}].${field.dataset.field}`;
  }

  row.querySelector(".remove-scenario").setAttribute("aria-label", `Remove scenario ${index + 1} (${KINDS[row.dataset.kind].title.toLowerCase()})`);
}

/**
 * Fills each "which cooler" select with the coolers the form has: the one before each later stage (zero-based in the
 * request, shown as the stage it feeds), or every cooled stage. Keeps a choice that still exists.
 */
export function refreshScenarioStages() {
  const stageCount = document.querySelectorAll("#stages > fieldset.stage").length;
  for (const select of document.querySelectorAll("#scenario-list select.scenario-stage")) {
    const kept = select.value;
    const choices = [option("", "every cooled stage")];
    for (let i = 1; i < stageCount; i++) {
      choices.push(option(String(i), `the cooler before stage ${i + 1}`));
    }

    select.replaceChildren(...choices);
    if (choices.some((o) => o.value === kept)) {
      select.value = kept;
    }
  }
}

/** Adds a scenario row of the chosen kind and moves focus to its first field. */
export function addScenario(kind) {
  const fragment = $("#scenario-template").content.cloneNode(true);
  const row = fragment.querySelector("fieldset.scenario");
  row.dataset.kind = kind;
  for (const part of row.querySelectorAll("[data-kind]")) {
    if (part.dataset.kind !== kind) {
      part.remove();
    }
  }

  for (const select of row.querySelectorAll("select.temperature-unit")) {
    select.replaceChildren(...TEMPERATURE_UNITS.map((u) => option(u, u)));
  }

  $('[data-id="name"]', row).value = freeName(KINDS[kind].name);
  row.querySelector(".remove-scenario").addEventListener("click", () => {
    row.remove();
    rows().forEach(indexRow);
    $("#add-scenario").focus();
  });
  $("#scenario-list").append(fragment);
  indexRow(row, rows().length - 1);
  refreshScenarioStages();
  const first = row.querySelector("[data-kind] input, [data-kind] select");
  (first || $('[data-id="name"]', row)).focus();
  return row;
}

export function wireScenarios() {
  $("#add-scenario").addEventListener("click", () => addScenario($("#scenario-kind").value));
}

const text = (element) => (element ? element.value.trim() : "");

function delta(element) {
  const value = text(element);
  return value === "" ? undefined : `${value} K`;
}

/** The cooler choice as the contract's stage list: one zero-based stage, or absent for every cooled stage. */
function stages(select) {
  return select && select.value !== "" ? [Number(select.value)] : undefined;
}

/** The scenarios as the contract spells them; blank optional parts are not sent, a blank required one is sent empty so the service names it. */
export function readScenarios() {
  return rows().map((row) => {
    const get = (id) => $(`[data-id="${id}"]`, row);
    const scenario = { name: text(get("name")) };
    switch (row.dataset.kind) {
      case "hotDay":
        scenario.hotDay = { suctionTemperatureRise: delta(get("suction-rise")), coolantTemperatureRise: delta(get("coolant-rise")) };
        break;
      case "fouledCooler":
        scenario.fouledCooler = { stages: stages(get("fouled-stage")), approachRise: delta(get("approach-rise")) };
        break;
      case "coolingWaterFailure":
        scenario.coolingWaterFailure = { stages: stages(get("failed-stage")) };
        break;
      case "recycle": {
        // Typed in %, sent as the contract's fraction, like the relative humidity.
        const percent = text(get("recycle-fraction"));
        const cooled = text(get("recycle-cooled"));
        scenario.recycle = {
          fraction: percent === "" ? undefined : Number(percent) / 100,
          cooledTo: cooled === "" ? undefined : `${cooled} ${get("recycle-cooled-unit").value}`,
        };
        break;
      }
      default:
        break;
    }

    return scenario;
  });
}
