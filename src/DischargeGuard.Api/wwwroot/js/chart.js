// The stage chart, drawn as inline SVG from the response alone: the `curve` points, the stage's limits (envelope
// `byLimit` and the findings' limits), the operating point and the envelope point. It only places the service's
// numbers on axes; it computes no temperature, limit or margin of its own.

const SVG = "http://www.w3.org/2000/svg";
const WIDTH = 780;
const HEIGHT = 420;
const MARGIN = { left: 70, right: 250, top: 24, bottom: 60 };
const TEMPERATURE_UNITS = new Set(["°C", "°F", "K", "°R"]);
const TEMPERATURE_QUANTITIES = new Set(["isentropicInternal", "estimated", "isentropic", "measured"]);

let chartCount = 0;

function el(name, attributes = {}, text) {
  const node = document.createElementNS(SVG, name);
  for (const [key, value] of Object.entries(attributes)) {
    node.setAttribute(key, String(value));
  }

  if (text !== undefined) {
    node.textContent = text;
  }

  return node;
}

function niceStep(span, count) {
  const raw = span / Math.max(1, count);
  const power = 10 ** Math.floor(Math.log10(raw));
  const scaled = raw / power;
  const nice = scaled <= 1 ? 1 : scaled <= 2 ? 2 : scaled <= 2.5 ? 2.5 : scaled <= 5 ? 5 : 10;
  return nice * power;
}

function ticks(min, max, count) {
  const step = niceStep(max - min, count);
  const first = Math.ceil(min / step) * step;
  const values = [];
  for (let v = first; v <= max + step * 1e-9; v += step) {
    values.push(Number(v.toFixed(10)));
  }

  return values;
}

const format = (value) => (Math.abs(value) >= 100 ? value.toFixed(0) : Math.abs(value) >= 10 ? value.toFixed(1) : value.toPrecision(3));

/** The limits that applied to this stage and are temperatures, one per rule, with whether each governs. */
export function stageLimits(stage) {
  const limits = new Map();
  const governingRule = stage.governing ? stage.governing.ruleId : null;
  const add = (ruleId, quantity, limit, source) => {
    if (!limit || typeof limit.value !== "number" || !TEMPERATURE_UNITS.has(limit.unit) || !TEMPERATURE_QUANTITIES.has(quantity)) {
      return;
    }

    if (!limits.has(ruleId)) {
      limits.set(ruleId, { ruleId, quantity, limit, governing: ruleId === governingRule, source });
    }
  };
  for (const entry of (stage.envelope && stage.envelope.byLimit) || []) {
    add(entry.ruleId, entry.quantity, entry.limit, "envelope");
  }

  for (const finding of stage.findings || []) {
    add(finding.ruleId, finding.quantity, finding.limit, "finding");
  }

  return [...limits.values()];
}

/** Returns a <figure> with the chart, or null when the response has no curve for the stage. */
export function drawStageChart(stage) {
  const curve = stage.curve;
  if (!Array.isArray(curve) || curve.length < 2) {
    return null;
  }

  const id = `chart-${++chartCount}`;
  const pressureUnit = curve[0].dischargePressure.unit;
  const temperatureUnit = curve[0].estimated.unit;
  const operating = {
    p: stage.discharge.pressureAbsolute.value,
    t: stage.dischargeTemperature.estimated.value,
    upper: stage.dischargeTemperature.estimatedUpperBound.value,
    lower: stage.dischargeTemperature.estimatedLowerBound.value,
  };
  const limits = stageLimits(stage).filter((l) => l.limit.unit === temperatureUnit);
  const envelopePressure = stage.envelope && stage.envelope.maxDischargePressure && stage.envelope.maxDischargePressure.unit === pressureUnit
    ? stage.envelope.maxDischargePressure.value
    : null;
  const governingLimit = limits.find((l) => l.governing);

  const xs = curve.map((c) => c.dischargePressure.value).concat([operating.p]);
  if (envelopePressure !== null) {
    xs.push(envelopePressure);
  }

  const ys = curve.flatMap((c) => [c.estimated.value, c.estimatedUpperBound.value, c.isentropic.value])
    .concat([operating.t, operating.upper, operating.lower], limits.map((l) => l.limit.value));
  let xMin = Math.min(...xs);
  let xMax = Math.max(...xs);
  let yMin = Math.min(...ys);
  let yMax = Math.max(...ys);
  const xPad = (xMax - xMin) * 0.03 || 1;
  const yPad = (yMax - yMin) * 0.06 || 1;
  xMin -= xPad;
  xMax += xPad;
  yMin -= yPad;
  yMax += yPad;

  const plotW = WIDTH - MARGIN.left - MARGIN.right;
  const plotH = HEIGHT - MARGIN.top - MARGIN.bottom;
  const x = (v) => MARGIN.left + ((v - xMin) / (xMax - xMin)) * plotW;
  const y = (v) => MARGIN.top + (1 - (v - yMin) / (yMax - yMin)) * plotH;
  const px = (v) => x(v).toFixed(1);
  const py = (v) => y(v).toFixed(1);

  const svg = el("svg", {
    class: "chart-svg",
    viewBox: `0 0 ${WIDTH} ${HEIGHT}`,
    role: "img",
    "aria-labelledby": `${id}-title ${id}-desc`,
    "data-stage": stage.index,
  });
  svg.append(el("title", { id: `${id}-title` }, `Stage ${stage.index + 1}: discharge temperature against discharge pressure`));

  const limitWords = limits.map((l) => `${l.ruleId} ${format(l.limit.value)} ${l.limit.unit} on the ${l.quantity} temperature${l.governing ? " (governing)" : ""}`);
  const envelopeWords = envelopePressure !== null && governingLimit
    ? ` The governing limit ${governingLimit.ruleId} is reached at ${format(envelopePressure)} ${pressureUnit}.`
    : "";
  svg.append(el("desc", { id: `${id}-desc` },
    `Estimated discharge temperature from ${format(curve[0].estimated.value)} to ${format(curve.at(-1).estimated.value)} ${temperatureUnit} `
    + `over ${format(curve[0].dischargePressure.value)} to ${format(curve.at(-1).dischargePressure.value)} ${pressureUnit} absolute. `
    + `Operating point ${format(operating.p)} ${pressureUnit}, ${format(operating.t)} ${temperatureUnit}. `
    + `Limits: ${limitWords.length ? limitWords.join("; ") : "none with a temperature"}.${envelopeWords}`));

  // Grid and axes.
  const grid = el("g", { class: "grid-lines", "aria-hidden": "true" });
  const tickText = (value, step) => value.toFixed(step >= 1 ? 0 : Math.min(6, Math.ceil(-Math.log10(step))));
  const yStep = niceStep(yMax - yMin, 6);
  for (const t of ticks(yMin, yMax, 6)) {
    grid.append(el("line", { class: "grid", x1: MARGIN.left, x2: MARGIN.left + plotW, y1: py(t), y2: py(t) }));
    grid.append(el("text", { x: MARGIN.left - 8, y: (y(t) + 4).toFixed(1), "text-anchor": "end" }, tickText(t, yStep)));
  }

  const xStep = niceStep(xMax - xMin, 6);
  for (const p of ticks(xMin, xMax, 6)) {
    grid.append(el("line", { class: "grid", x1: px(p), x2: px(p), y1: MARGIN.top, y2: MARGIN.top + plotH }));
    grid.append(el("text", { x: px(p), y: MARGIN.top + plotH + 18, "text-anchor": "middle" }, tickText(p, xStep)));
  }

  grid.append(el("line", { class: "axis", x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: MARGIN.top + plotH }));
  grid.append(el("line", { class: "axis", x1: MARGIN.left, x2: MARGIN.left + plotW, y1: MARGIN.top + plotH, y2: MARGIN.top + plotH }));
  grid.append(el("text", { class: "axis-label", x: MARGIN.left + plotW / 2, y: HEIGHT - 14, "text-anchor": "middle" },
    `Discharge pressure, ${pressureUnit} (absolute)`));
  grid.append(el("text", {
    class: "axis-label", x: 16, y: MARGIN.top + plotH / 2, "text-anchor": "middle",
    transform: `rotate(-90 16 ${(MARGIN.top + plotH / 2).toFixed(1)})`,
  }, `Discharge temperature, ${temperatureUnit}`));
  svg.append(grid);

  // Uncertainty band: between the estimate and its upper bound, as the curve gives them.
  const upper = curve.map((c) => `${px(c.dischargePressure.value)},${py(c.estimatedUpperBound.value)}`);
  const lower = [...curve].reverse().map((c) => `${px(c.dischargePressure.value)},${py(c.estimated.value)}`);
  svg.append(el("polygon", { class: "band", points: [...upper, ...lower].join(" ") }));

  const line = (values) => values.map((v, i) => `${i === 0 ? "M" : "L"}${v}`).join(" ");
  svg.append(el("path", { class: "curve-isentropic", d: line(curve.map((c) => `${px(c.dischargePressure.value)},${py(c.isentropic.value)}`)) }));
  svg.append(el("path", { class: "curve-estimated", d: line(curve.map((c) => `${px(c.dischargePressure.value)},${py(c.estimated.value)}`)) }));

  // Limit lines with labels in the right margin, moved apart where they would overlap.
  const limitGroup = el("g", { class: "limits" });
  const labels = limits.map((l) => ({ l, y: y(l.limit.value) })).sort((a, b) => a.y - b.y);
  for (let i = 1; i < labels.length; i++) {
    labels[i].y = Math.max(labels[i].y, labels[i - 1].y + 15);
  }

  for (const { l, y: labelY } of labels) {
    const g = el("g", { class: "limit", "data-rule": l.ruleId, "data-quantity": l.quantity });
    g.append(el("line", {
      class: `limit-line${l.governing ? " governing-line" : ""}`,
      x1: MARGIN.left, x2: MARGIN.left + plotW, y1: py(l.limit.value), y2: py(l.limit.value),
    }));
    g.append(el("text", { class: "limit-label", x: MARGIN.left + plotW + 6, y: (labelY + 4).toFixed(1) },
      `${l.governing ? "▶ " : ""}${l.ruleId} ${format(l.limit.value)} ${l.limit.unit}${l.quantity === "isentropic" ? " (isentr.)" : ""}`));
    limitGroup.append(g);
  }

  svg.append(limitGroup);

  // The operating point with the estimate's lower-to-upper bound as a bar.
  const op = el("g", { class: "operating" });
  op.append(el("line", { class: "lower-bound-bar", x1: px(operating.p), x2: px(operating.p), y1: py(operating.lower), y2: py(operating.upper) }));
  op.append(el("circle", { class: "operating-point", cx: px(operating.p), cy: py(operating.t), r: 8 }));
  const rightHalf = x(operating.p) > MARGIN.left + plotW / 2;
  op.append(el("text", {
    class: "operating-label",
    x: (x(operating.p) + (rightHalf ? -14 : 14)).toFixed(1),
    y: (y(operating.t) + 22).toFixed(1),
    "text-anchor": rightHalf ? "end" : "start",
  }, "operating point"));
  svg.append(op);

  // Where the governing limit is reached (envelope maximum discharge pressure).
  if (envelopePressure !== null && governingLimit) {
    const ex = x(envelopePressure);
    const ey = y(governingLimit.limit.value);
    const g = el("g", { class: "envelope", "data-rule": governingLimit.ruleId });
    g.append(el("polygon", {
      class: "envelope-point",
      points: `${ex.toFixed(1)},${(ey - 10).toFixed(1)} ${(ex + 10).toFixed(1)},${ey.toFixed(1)} ${ex.toFixed(1)},${(ey + 10).toFixed(1)} ${(ex - 10).toFixed(1)},${ey.toFixed(1)}`,
    }));
    g.append(el("text", { class: "envelope-label", x: (ex - 12).toFixed(1), y: (ey - 14).toFixed(1), "text-anchor": "end" },
      `limit reached at ${format(envelopePressure)} ${pressureUnit}`));
    svg.append(g);
  }

  const figure = document.createElement("figure");
  figure.className = "chart";
  figure.append(svg);
  const legend = document.createElement("ul");
  legend.className = "chart-legend";
  for (const words of [
    "Thick line: estimated discharge temperature",
    "Shaded: up to the upper bound of the estimate",
    "Dashed black: isentropic (η = 1)",
    "Red dashed: limits (solid and ▶: the governing one)",
    "Dot: operating point, bar from lower to upper bound",
    "Diamond: where the governing limit is reached",
  ]) {
    const item = document.createElement("li");
    item.textContent = words;
    legend.append(item);
  }

  const caption = document.createElement("figcaption");
  caption.textContent = `Stage ${stage.index + 1}: drawn from the service's curve; pressures are absolute.`;
  figure.append(legend, caption);
  return figure;
}
