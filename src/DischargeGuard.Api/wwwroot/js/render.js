// The result: the verdict in words with a shape, each stage's temperatures, governing limit, chart, findings, what was
// not checked, the measured-vs-predicted panel, the cautions and the evaluation id. Everything shown comes from the
// response; text is set with textContent only.

import { drawStageChart } from "./chart.js";

const SVG = "http://www.w3.org/2000/svg";

const VERDICTS = {
  pass: { word: "PASS", meaning: "Every limit that could be checked holds with these inputs." },
  review: { word: "REVIEW", meaning: "A warning needs attention, or a limit could not be checked. Read the findings before running." },
  fail: { word: "FAIL", meaning: "At least one limit is exceeded. Do not run at these conditions without an engineering review." },
  none: { word: "NO VERDICT", meaning: "Nothing was checked. Do not act on any earlier result." },
};

const SEVERITY_WORDS = { violation: "LIMIT EXCEEDED", warning: "WARNING", pass: "WITHIN LIMIT", info: "NOTE" };

function h(tag, attributes = {}, ...children) {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(attributes)) {
    if (key === "class") {
      node.className = value;
    } else {
      node.setAttribute(key, value);
    }
  }

  for (const child of children) {
    if (child === null || child === undefined) {
      continue;
    }

    node.append(child instanceof Node ? child : String(child));
  }

  return node;
}

function svgNode(name, attributes) {
  const node = document.createElementNS(SVG, name);
  for (const [key, value] of Object.entries(attributes)) {
    node.setAttribute(key, String(value));
  }

  return node;
}

/** A shape per verdict, so the verdict does not rest on colour: circle with a tick, triangle with "!", octagon with a cross, dashed circle with a bar. */
function verdictShape(kind) {
  const svg = svgNode("svg", { viewBox: "0 0 64 64", "aria-hidden": "true", focusable: "false", class: `shape-${kind}` });
  if (kind === "pass") {
    svg.append(svgNode("circle", { class: "shape", cx: 32, cy: 32, r: 27 }), svgNode("path", { class: "mark", d: "M19 33 L28 42 L46 22" }));
  } else if (kind === "review") {
    svg.append(svgNode("path", { class: "shape", d: "M32 6 L59 56 L5 56 Z" }), svgNode("path", { class: "mark", d: "M32 22 L32 40 M32 48 L32 49" }));
  } else if (kind === "fail") {
    svg.append(svgNode("path", { class: "shape", d: "M21 5 L43 5 L59 21 L59 43 L43 59 L21 59 L5 43 L5 21 Z" }), svgNode("path", { class: "mark", d: "M22 22 L42 42 M42 22 L22 42" }));
  } else {
    svg.append(svgNode("circle", { class: "shape", cx: 32, cy: 32, r: 27, "stroke-dasharray": "8 6" }), svgNode("path", { class: "mark", d: "M18 32 L46 32" }));
  }

  return svg;
}

export function verdictBanner(kind, detail) {
  const v = VERDICTS[kind] || VERDICTS.none;
  return h("div", { class: `verdict verdict-${VERDICTS[kind] ? kind : "none"}`, "data-verdict": VERDICTS[kind] ? kind : "none" },
    verdictShape(VERDICTS[kind] ? kind : "none"),
    h("div", {}, h("span", { class: "word" }, v.word), h("span", { class: "meaning" }, detail || v.meaning)));
}

// A ratio's unit is "1": the number alone reads as what it is.
const q = (quantity) => (quantity ? (quantity.unit === "1" ? formatNumber(quantity.value) : `${formatNumber(quantity.value)} ${quantity.unit}`) : "—");

function formatNumber(value) {
  if (typeof value !== "number") {
    return String(value);
  }

  const abs = Math.abs(value);
  return abs >= 1000 ? value.toFixed(0) : abs >= 1 ? value.toFixed(1) : value.toPrecision(3);
}

function row(label, value, attributes = {}) {
  return h("tr", attributes, h("th", { scope: "row" }, label), h("td", {}, value));
}

function tag(kind, word) {
  return h("span", { class: `tag tag-${kind}` }, word);
}

// What the page says of a governing rule that has no number: no temperature or pressure makes the condition acceptable.
const NO_NUMBER_WORDS = "none: the condition itself fails the stage, whatever the temperature (see its finding)";

function governingBlock(stage) {
  const governing = stage.governing;
  if (governing && !governing.limit) {
    // A rule with no number (a prohibited combination, liquid at the suction) decides the stage outright.
    const title = ((stage.findings || []).find((f) => f.ruleId === governing.ruleId) || {}).title;
    return h("div", { class: "governing", "data-rule": governing.ruleId },
      h("p", {}, h("strong", {}, "Governing: "), `${governing.ruleId}${title ? ` (${title})` : ""}`),
      h("p", {}, h("strong", {}, "Margin: "), NO_NUMBER_WORDS));
  }

  if (stage.notEvaluated) {
    return h("div", { class: "governing" }, h("p", {}, "No temperature limit governs: the stage was not evaluated (see above)."));
  }

  if (!governing) {
    return h("div", { class: "governing" }, h("p", {}, "No violation-level limit applied to this stage, so none governs."));
  }

  const margin = governing.margin;
  const beyond = margin && margin.value < 0;
  const envelope = stage.envelope;
  const title = ((stage.findings || []).find((f) => f.ruleId === governing.ruleId) || {}).title;
  return h("div", { class: "governing", "data-rule": governing.ruleId },
    h("p", {}, h("strong", {}, "Governing limit: "), `${governing.ruleId}${title ? ` (${title})` : ""}, ${q(governing.limit)} on the ${governing.quantity} temperature`),
    h("p", {}, h("strong", {}, "Margin: "), margin ? `${q(margin)} ${beyond ? "beyond the limit" : "below the limit"}` : "not available"),
    envelope && envelope.maxDischargePressure
      ? h("p", {}, h("strong", {}, "Highest discharge pressure before it: "), envelope.maxDischargePressureAsTyped
        ? `${q(envelope.maxDischargePressureAsTyped)} (${q(envelope.maxDischargePressure)} absolute)`
        : `${q(envelope.maxDischargePressure)} absolute`)
      : null,
    envelope && envelope.maxSuctionTemperature
      ? h("p", {}, h("strong", {}, "Highest suction temperature before it: "), q(envelope.maxSuctionTemperature))
      : null,
    envelope && envelope.note ? h("p", { class: "hint" }, envelope.note) : null);
}

function findingItem(finding) {
  const severity = finding.severity;
  const item = h("li", { class: `finding finding-${severity}`, "data-rule": finding.ruleId, "data-severity": severity });
  item.append(h("p", { class: "finding-head" }, tag(severity, SEVERITY_WORDS[severity] || severity.toUpperCase()), " ", `${finding.ruleId}: ${finding.title}`));
  const numbers = [];
  if (finding.value) {
    numbers.push(`${finding.quantity} ${q(finding.value)}`);
  }

  if (finding.limit) {
    numbers.push(`limit ${q(finding.limit)}`);
  }

  if (finding.margin) {
    numbers.push(`margin ${q(finding.margin)}`);
  }

  if (numbers.length) {
    item.append(h("p", {}, numbers.join(" · ")));
  }

  // The rule's message describes the problem it guards against; it is shown when the rule is not met.
  if (severity !== "pass" && finding.message) {
    item.append(h("p", {}, finding.message));
  }

  if (finding.note) {
    item.append(h("p", {}, finding.note));
  }

  if (finding.setPoints) {
    const s = finding.setPoints;
    item.append(h("p", {}, `Proposed alarm ${q(s.alarm)}, trip ${q(s.trip)} (normal ${q(s.normal)})${s.cappedBy ? `, capped by ${s.cappedBy}` : ""}.`));
  }

  // A compact answer (a record made without ?detail=full) leaves the basis to the archived rule set of its digest.
  item.append(h("p", { class: "finding-basis" }, h("strong", {}, "Basis: "), finding.basis || "in the archived rule set of this answer's digest (see the report)",
    ` (layer ${finding.layer || "default"})`));
  if (finding.loosenedReason) {
    item.append(h("p", { class: "finding-basis" }, h("strong", {}, "Loosened by the layer because: "), finding.loosenedReason));
  }

  return item;
}

function measuredPanel(stage) {
  const measured = stage.measured;
  if (!measured) {
    return null;
  }

  const difference = measured.minusEstimated;
  const deviation = (stage.findings || []).find((f) => f.ruleId === "R-DEVIATION");
  const panel = h("section", { class: "measured-panel", "aria-label": `Measured against predicted, stage ${stage.index + 1}` },
    h("h4", {}, "Measured against predicted"),
    h("p", {}, `Measured ${q(measured.dischargeTemperature)}; estimated ${q(stage.dischargeTemperature.estimated)}.`),
    h("p", { class: "deviation" }, h("strong", {}, "Measured minus estimated: "), `${difference.value > 0 ? "+" : ""}${q(difference)}`));
  if (deviation) {
    const within = deviation.severity === "pass";
    panel.append(h("p", {}, tag(deviation.severity, within ? "WITHIN THRESHOLD" : SEVERITY_WORDS[deviation.severity] || deviation.severity),
      ` R-DEVIATION threshold ${q(deviation.limit)}.`));
  }

  const hotter = difference.value > 0;
  panel.append(h("p", {}, hotter
    ? "Running hotter than predicted can point to leaking valves or piston rings, gas recirculating inside the cylinder, "
      + "poor cooling, or an efficiency lower than the one used. It can also be an instrument error."
    : "Running cooler than predicted usually means the efficiency used is conservative, or the thermometer reads low "
      + "or sits away from the gas stream. Check that the entered conditions match the gauges."));
  panel.append(h("p", {}, "This is a hint, not a diagnosis: follow the manufacturer's diagnostic procedure before changing anything."));
  return panel;
}

const MODEL_WORDS = { "ideal-gas": "ideal gas", "peng-robinson": "real gas (Peng-Robinson)", "gerg-2008": "real gas (GERG-2008)" };

/** The service's ideal-gas and real-gas answers side by side, when it gave both, with Z and the defaulted k_ij pairs. */
function realGasRows(realGas, properties) {
  if (!realGas) {
    return [];
  }

  const rows = [row("Ideal-gas estimate", q(realGas.idealGas.estimated))];
  if (properties) {
    rows.push(row("Compressibility Z, suction to discharge", `${formatNumber(properties.zSuction)} to ${formatNumber(properties.zDischarge)}`, { "data-value": "z" }));
  }

  if (realGas.realGasTemperatures) {
    const model = realGas.model === "gerg-2008" ? "GERG-2008" : "Peng-Robinson";
    rows.push(row(`Real-gas (${model}) estimate`, q(realGas.realGasTemperatures.estimated)));
  }

  if (realGas.pengRobinson) {
    rows.push(row("Peng-Robinson estimate (second opinion)", q(realGas.pengRobinson.estimated), { "data-value": "second-opinion" }));
  }

  if (realGas.methodReason) {
    rows.push(row("Why this gas model", realGas.methodReason, { "data-value": "method-reason" }));
  }

  if (realGas.difference) {
    rows.push(row("Real minus ideal (estimated)", q(realGas.difference.estimated)));
  }

  if (realGas.recommended && (realGas.reasons || []).length) {
    rows.push(row("Why the real gas is called for", realGas.reasons.join("; ")));
  }

  if (realGas.note) {
    rows.push(row("Real gas", realGas.note));
  }

  if ((realGas.defaultedPairs || []).length) {
    rows.push(row("Interaction parameters taken as 0 (no published value)", realGas.defaultedPairs.join(", "), { "data-value": "defaulted-pairs" }));
  }

  return rows;
}

function phaseRows(phase) {
  if (!phase) {
    return [];
  }

  const rows = [row("Phase at suction / discharge", `${phase.suction} / ${phase.discharge || "not evaluated"}`, { "data-value": "phase" })];
  if (phase.hydrocarbonDewPoint) {
    const superheat = phase.superheatAboveHydrocarbonDewPoint ? ` (suction ${q(phase.superheatAboveHydrocarbonDewPoint)} above it)` : "";
    rows.push(row("Hydrocarbon dew point at suction pressure", `${q(phase.hydrocarbonDewPoint)}${superheat}`));
  } else if (phase.hydrocarbonDewPointNote) {
    rows.push(row("Hydrocarbon dew point at suction pressure", phase.hydrocarbonDewPointNote));
  }

  if (phase.waterDewPoint) {
    const superheat = phase.superheatAboveWaterDewPoint ? ` (suction ${q(phase.superheatAboveWaterDewPoint)} above it)` : "";
    rows.push(row("Water dew point at suction pressure", `${q(phase.waterDewPoint)}${superheat}`));
  }

  return rows;
}

/** A pressure as typed (barg stays barg) with the absolute beside it; the absolute alone when the answer has no typed form. */
function typed(state) {
  return state.pressureAsTyped ? `${q(state.pressureAsTyped)} (${q(state.pressureAbsolute)} absolute)` : `${q(state.pressureAbsolute)} absolute`;
}

function stageSection(stage, count, chartWidth) {
  const dt = stage.dischargeTemperature;
  const title = count > 1 ? `Stage ${stage.index + 1}` : "The stage";
  const section = h("section", { class: "stage-result", "data-stage": stage.index, "aria-label": title });
  section.append(h("h3", {}, `${title}: `, tag(stage.verdict, (VERDICTS[stage.verdict] || VERDICTS.none).word)));

  const efficiency = stage.efficiency;
  const efficiencyWords = efficiency.source === "rule-default"
    ? `${formatNumber(efficiency[efficiency.given])} ${efficiency.given}: the compressor type's default from the rule file`
    : `${formatNumber(efficiency[efficiency.given])} ${efficiency.given}, as entered`;
  if (!dt) {
    // Liquid or two-phase at suction: the stage has no discharge temperatures; say why, then the phase and findings.
    section.append(h("p", { class: "not-evaluated", "data-value": "not-evaluated" }, stage.notEvaluated || "Not evaluated."));
    section.append(h("table", { class: "values" },
      h("caption", { class: "visually-hidden" }, `${title}: phase`),
      h("tbody", {},
        row("Suction (absolute)", `${q(stage.suction.pressureAbsolute)}, ${q(stage.suction.temperature)}`),
        ...phaseRows(stage.phase))));
  } else {
  section.append(h("table", { class: "values" },
    h("caption", { class: "visually-hidden" }, `${title}: predicted temperatures`),
    h("tbody", {},
      row("Isentropic discharge temperature (η = 1)", q(dt.isentropic), { "data-value": "isentropic" }),
      row("Estimated discharge temperature", q(dt.estimated), { "data-value": "estimated" }),
      row("Range of the estimate (efficiency uncertainty)", `${q(dt.estimatedLowerBound)} to ${q(dt.estimatedUpperBound)}`),
      dt.constantK ? row(`Constant-k estimate (k = ${formatNumber(dt.constantK.k)})`, q(dt.constantK.estimated), { "data-value": "constant-k" }) : null,
      row("Suction", `${typed(stage.suction)}, ${q(stage.suction.temperature)}`),
      row("Discharge pressure", typed(stage.discharge)),
      row("Pressure ratio", formatNumber(stage.pressureRatio)),
      row("Efficiency used", efficiencyWords, { "data-value": "efficiency" }),
      row("Gas model of these temperatures", MODEL_WORDS[stage.method] || stage.method, { "data-value": "method" }),
      ...realGasRows(stage.realGas, stage.properties),
      ...phaseRows(stage.phase))));
  }

  section.append(governingBlock(stage));
  const chart = drawStageChart(stage, chartWidth);
  if (chart) {
    section.append(chart);
  }

  const panel = measuredPanel(stage);
  if (panel) {
    section.append(panel);
  }

  section.append(h("h4", {}, "Findings"));
  const order = { violation: 0, warning: 1, info: 2, pass: 3 };
  const findings = [...(stage.findings || [])].sort((a, b) => (order[a.severity] ?? 9) - (order[b.severity] ?? 9));
  section.append(h("ul", { class: "findings" }, ...findings.map(findingItem)));

  section.append(h("h4", {}, "Not checked"));
  if ((stage.notChecked || []).length === 0) {
    section.append(h("p", {}, "Every rule that applied was checked."));
  } else {
    section.append(h("ul", { class: "not-checked" }, ...stage.notChecked.map((n) =>
      h("li", { "data-rule": n.ruleId }, h("strong", {}, `${n.ruleId}: `), n.reason))));
  }

  return section;
}

/**
 * The answer first: what a technician needs at the machine, on the first screen of a phone. The governing limit in
 * words with its limit and margin, the estimated discharge temperature and the highest allowed discharge pressure in
 * the basis typed (barg stays barg), and the way to the printable record. Everything is the answer's own figures.
 */
function answerFirst(body) {
  const ref = body.governing;
  // When a scenario holds the worst limit, its own stages say what governs (the base case's stages are other figures).
  const scenario = ref && ref.scenario ? (body.scenarios || []).find((s) => s.name === ref.scenario) : null;
  const stages = (scenario ? scenario.stages : body.stages) || [];
  const stage = ref && stages[ref.stage] ? stages[ref.stage] : stages[0];
  // With scenarios, the lines name the case they come from (in the term, so the first screen gains no line).
  const hasScenarios = (body.scenarios || []).length > 0;
  const parts = (caseWords) => [stages.length > 1 && stage ? `stage ${stage.index + 1}` : null, hasScenarios ? caseWords : null].filter(Boolean);
  const within = (caseWords) => (parts(caseWords).length ? ` (${parts(caseWords).join(", ")})` : "");
  const where = within(scenario ? `scenario ${scenario.name}` : "base case");
  const same = within(scenario ? "that scenario" : "base case");
  const lines = h("dl", { class: "answer-lines" });
  const add = (term, value, key) => lines.append(h("div", { class: "answer-line", "data-answer": key }, h("dt", {}, term), h("dd", {}, value)));
  const governing = stage && stage.governing && ref && stage.governing.ruleId === ref.ruleId ? stage.governing : null;
  if (governing) {
    const title = ((stage.findings || []).find((f) => f.ruleId === governing.ruleId) || {}).title || governing.ruleId;
    const margin = ref.margin || governing.margin;
    add(`Governing limit${where}`, `${title} (${governing.ruleId})`, "governing");
    add("Limit and margin", !governing.limit
      ? NO_NUMBER_WORDS
      : margin
        ? `${q(governing.limit)}; ${marginWords(margin)}`
        : q(governing.limit), "margin");
  } else {
    add("Governing limit", stage && stage.notEvaluated ? "none: the stage was not evaluated" : "none: no violation-level limit applied", "governing");
  }

  add(`Estimated discharge temperature${same}`, stage && stage.dischargeTemperature ? q(stage.dischargeTemperature.estimated) : "not evaluated", "estimated");
  const envelope = stage && stage.envelope;
  add(`Highest allowed discharge pressure${scenario ? " (that scenario)" : ""}`, envelope && (envelope.maxDischargePressureAsTyped || envelope.maxDischargePressure)
    ? (envelope.maxDischargePressureAsTyped ? q(envelope.maxDischargePressureAsTyped) : `${q(envelope.maxDischargePressure)} absolute`)
    : "not found (see the stage below)", "max-pressure");
  const section = h("section", { class: "answer-first", "aria-label": "The answer", "data-evaluation": body.id || "" }, lines);
  if (body.id) {
    section.append(h("p", { class: "report-link-row" },
      h("a", { class: "button report-link", href: `report.html?evaluation=${encodeURIComponent(body.id)}` }, "Open the change record (print or PDF)")));
  }

  return section;
}

/** Words for a margin: its size and which side of the limit. */
function marginWords(margin) {
  return `${q({ value: Math.abs(margin.value), unit: margin.unit })} ${margin.value < 0 ? "beyond the limit" : "below it"}`;
}

/** A margin in a table cell: its size and "beyond" or "below" the limit. */
function shortMargin(margin) {
  return `${q({ value: Math.abs(margin.value), unit: margin.unit })} ${margin.value < 0 ? "beyond" : "below"}`;
}

/**
 * The scenarios in a short table: each one's verdict (under its name, so three columns fit a phone), governing rule
 * (with its stage and limit) and margin, the base case first, and the case that holds the answer's governing limit marked in words. All from the answer.
 */
function scenarioTable(body) {
  const scenarios = body.scenarios || [];
  const ref = body.governing;
  const governs = (name) => Boolean(ref && (ref.scenario || null) === name);
  const verdictTag = (verdict) => h("span", { class: "scenario-verdict" }, tag(verdict, (VERDICTS[verdict] || VERDICTS.none).word));
  const marker = (name) => (governs(name) ? h("strong", { class: "governs" }, " ▶ governs") : null);
  const rowsBody = h("tbody", {});
  const baseRef = ref && !ref.scenario ? ref : null;
  const baseStage = baseRef ? (body.stages || [])[baseRef.stage] : null;
  rowsBody.append(h("tr", { "data-scenario": "", "data-governing": String(governs(null)) },
    h("th", { scope: "row" }, "Base case (as entered)", marker(null), verdictTag(body.baseVerdict || body.verdict)),
    h("td", {}, baseRef ? `${baseRef.ruleId}, stage ${baseRef.stage + 1}` : "see Details below",
      baseStage && baseStage.governing ? h("span", { class: "scenario-limit" }, `limit ${q(baseStage.governing.limit).replace(" ", "\u00a0")}`) : null),
    h("td", {}, baseRef && baseRef.margin ? shortMargin(baseRef.margin) : "—")));
  for (const scenario of scenarios) {
    const g = scenario.governing;
    const stage = g ? (scenario.stages || [])[g.stage] : null;
    const limit = stage && stage.governing && stage.governing.ruleId === g.ruleId ? stage.governing.limit : null;
    rowsBody.append(h("tr", { "data-scenario": scenario.name, "data-governing": String(governs(scenario.name)) },
      h("th", { scope: "row" }, scenario.name, marker(scenario.name), verdictTag(scenario.verdict)),
      h("td", { "data-value": "rule" }, g ? `${g.ruleId}, stage ${g.stage + 1}` : "none applied",
        limit ? h("span", { class: "scenario-limit" }, `limit ${q(limit).replace(" ", "\u00a0")}`) : null),
      h("td", { "data-value": "margin" }, g && g.margin ? shortMargin(g.margin) : "—")));
  }

  // What each scenario changed, in the service's words, under the table so the table stays narrow on a phone.
  const changes = h("ul", { class: "scenario-changes" }, ...scenarios.map((scenario) => h("li", { "data-scenario": scenario.name },
    h("strong", {}, `${scenario.name}: `), (scenario.changes || []).join(" "))));

  const governing = ref && ref.scenario ? `scenario ${ref.scenario}` : "the base case";
  return h("section", { class: "scenario-results", "aria-labelledby": "scenario-results-heading" },
    h("h3", { id: "scenario-results-heading" }, "What if: scenarios"),
    h("p", { class: "scenario-summary" }, `The verdict above is the worst of the base case and ${scenarios.length} scenario${scenarios.length === 1 ? "" : "s"}; ${governing} holds the governing limit. Scenarios are screening questions, not permission to run that way.`),
    h("table", { class: "values scenario-table" },
      h("caption", { class: "visually-hidden" }, "Each scenario's verdict, governing rule and margin"),
      h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Case and verdict"), h("th", { scope: "col" }, "Rule that governs"), h("th", { scope: "col" }, "Margin"))),
      rowsBody),
    changes);
}

/** Fills the result body with a whole answer: the answer first, then the details of every stage, the record and the cautions. */
export function renderEvaluation(body, container) {
  const stages = body.stages || [];
  // Charts are drawn at the width they are shown at, so their text is as large on a phone as on a tablet.
  const chartWidth = Math.max(300, container.clientWidth - 4);
  container.append(verdictBanner(body.verdict));
  container.append(answerFirst(body));
  const hasScenarios = (body.scenarios || []).length > 0;
  if (hasScenarios) {
    container.append(scenarioTable(body));
  }

  container.append(h("h3", { class: "details-heading" }, hasScenarios ? "Details: the base case (as entered)" : "Details"));
  for (const stage of stages) {
    container.append(stageSection(stage, stages.length, chartWidth));
  }

  container.append(rulesApplied(body.ruleSet || {}));
  container.append(h("h3", {}, "Record"));
  container.append(h("p", {}, h("strong", {}, "Evaluation id: "), h("span", { class: "evaluation-id", "data-id": body.id }, body.id)));
  container.append(h("p", {}, `Evaluated ${localTime(body.evaluatedAt)} for ${body.asset || "no asset"}${body.site ? ` at ${body.site}` : ""}; `
    + `rule set ${String(body.ruleSet && body.ruleSet.digest).slice(0, 12)}… (${((body.ruleSet && body.ruleSet.layers) || []).map((l) => l.name).join(", ")}); `
    + `method ${body.method}.`));
  container.append(h("h3", {}, "Cautions"));
  container.append(h("ul", { class: "cautions" }, ...(body.cautions || []).map((c) => h("li", {}, c))));
}

/** A time from the service (UTC) in the device's local time, with its offset named. */
export function localTime(iso) {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) {
    return String(iso);
  }

  const pad = (n) => String(n).padStart(2, "0");
  const offset = -date.getTimezoneOffset();
  const sign = offset >= 0 ? "+" : "−";
  const zone = `UTC${sign}${pad(Math.floor(Math.abs(offset) / 60))}:${pad(Math.abs(offset) % 60)}`;
  return `${date.getFullYear()}-${pad(date.getMonth() + 1)}-${pad(date.getDate())} ${pad(date.getHours())}:${pad(date.getMinutes())} (${zone})`;
}

/** Which rule layers decided this answer, plainly, with any site or asset that has no layer of its own. */
function rulesApplied(ruleSet) {
  const layers = (ruleSet.layers || []).map((l) => l.name);
  const section = h("section", { class: "rules-applied", "aria-labelledby": "rules-applied-heading" },
    h("h3", { id: "rules-applied-heading" }, "Rules applied"),
    h("p", { class: "layers-applied", "data-layers": layers.join(" ") }, `Layers: ${layers.join(" ← ")}.`));
  for (const u of ruleSet.unmatched || []) {
    section.append(h("p", { class: "layer-unmatched", role: "note", "data-field": u.field }, `${u.message.charAt(0).toUpperCase()}${u.message.slice(1)}.`));
  }
  return section;
}

/** Fills the result body with a plain "no verdict" and its reason. */
export function renderNoVerdict(reason, container) {
  container.append(verdictBanner("none", `Nothing was checked. ${reason}`));
}
