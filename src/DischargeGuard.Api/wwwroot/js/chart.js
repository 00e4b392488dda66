// The stage chart, drawn as inline SVG from the response alone: the `curve` points, the stage's limits (envelope
// `byLimit` and the findings' limits), the operating point and the envelope point. It only places the service's
// numbers on axes; it computes no temperature, limit or margin of its own.

const SVG = "http://www.w3.org/2000/svg";
// The chart is drawn at the width it is shown at (one SVG unit = one CSS pixel), so 13 px text stays 13 px on a phone.
const FONT_PX = 13;
const CHAR_PX = 7.6; // a slight overestimate of one character's advance at 13 px, to size label boxes
const MARGIN = { left: 52, right: 12, top: 14, bottom: 48 };
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

/** A rule's title in a few words: up to its first comma ("Predicted discharge temperature, …"). */
export function shortTitle(title) {
  const cut = title.indexOf(",");
  const words = cut > 0 ? title.slice(0, cut) : title;
  return words.length > 38 ? `${words.slice(0, 37).trimEnd()}…` : words;
}

/** The limits that applied to this stage and are temperatures, one per rule, with whether each governs. */
export function stageLimits(stage) {
  const limits = new Map();
  const governingRule = stage.governing ? stage.governing.ruleId : null;
  const titles = new Map((stage.findings || []).map((f) => [f.ruleId, f.title]));
  const add = (ruleId, quantity, limit, source) => {
    if (!limit || typeof limit.value !== "number" || !TEMPERATURE_UNITS.has(limit.unit) || !TEMPERATURE_QUANTITIES.has(quantity)) {
      return;
    }

    if (!limits.has(ruleId)) {
      const words = shortTitle(titles.get(ruleId) || ruleId) + (quantity === "estimated" ? "" : " (η = 1)");
      limits.set(ruleId, { ruleId, quantity, limit, words, governing: ruleId === governingRule, source });
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
export function drawStageChart(stage, shownWidth = 640) {
  const curve = stage.curve;
  if (!Array.isArray(curve) || curve.length < 2) {
    return null;
  }

  const id = `chart-${++chartCount}`;
  const WIDTH = Math.round(Math.min(900, Math.max(300, shownWidth)));
  let HEIGHT = Math.round(Math.min(440, Math.max(300, WIDTH * 0.7)));
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
  yMax += yPad * 3; // room above the highest limit for its label

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
  svg.dataset.width = String(WIDTH);
  svg.append(el("title", { id: `${id}-title` }, `Stage ${stage.index + 1}: discharge temperature against discharge pressure`));

  const limitWords = limits.map((l) => `${l.words} (${l.ruleId}) ${format(l.limit.value)} ${l.limit.unit} on the ${l.quantity} temperature${l.governing ? " (governing)" : ""}`);
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
  const yStep = niceStep(yMax - yMin, 5);
  for (const t of ticks(yMin, yMax, 5)) {
    grid.append(el("line", { class: "grid", x1: MARGIN.left, x2: MARGIN.left + plotW, y1: py(t), y2: py(t) }));
    grid.append(el("text", { x: MARGIN.left - 8, y: (y(t) + 4).toFixed(1), "text-anchor": "end" }, tickText(t, yStep)));
  }

  const xCount = WIDTH < 500 ? 4 : 6;
  const xStep = niceStep(xMax - xMin, xCount);
  for (const p of ticks(xMin, xMax, xCount)) {
    grid.append(el("line", { class: "grid", x1: px(p), x2: px(p), y1: MARGIN.top, y2: MARGIN.top + plotH }));
    grid.append(el("text", { x: px(p), y: MARGIN.top + plotH + 18, "text-anchor": "middle" }, tickText(p, xStep)));
  }

  grid.append(el("line", { class: "axis", x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: MARGIN.top + plotH }));
  grid.append(el("line", { class: "axis", x1: MARGIN.left, x2: MARGIN.left + plotW, y1: MARGIN.top + plotH, y2: MARGIN.top + plotH }));
  grid.append(el("text", { class: "axis-label", x: MARGIN.left + plotW / 2, y: HEIGHT - 10, "text-anchor": "middle" },
    `Discharge pressure, ${pressureUnit} absolute`));
  grid.append(el("text", {
    class: "axis-label", x: 14, y: MARGIN.top + plotH / 2, "text-anchor": "middle",
    transform: `rotate(-90 14 ${(MARGIN.top + plotH / 2).toFixed(1)})`,
  }, `Temperature, ${temperatureUnit}`));
  svg.append(grid);

  // Uncertainty band: between the estimate and its upper bound, as the curve gives them.
  const upper = curve.map((c) => `${px(c.dischargePressure.value)},${py(c.estimatedUpperBound.value)}`);
  const lower = [...curve].reverse().map((c) => `${px(c.dischargePressure.value)},${py(c.estimated.value)}`);
  svg.append(el("polygon", { class: "band", points: [...upper, ...lower].join(" ") }));

  const line = (values) => values.map((v, i) => `${i === 0 ? "M" : "L"}${v}`).join(" ");
  svg.append(el("path", { class: "curve-isentropic", d: line(curve.map((c) => `${px(c.dischargePressure.value)},${py(c.isentropic.value)}`)) }));
  svg.append(el("path", { class: "curve-estimated", d: line(curve.map((c) => `${px(c.dischargePressure.value)},${py(c.estimated.value)}`)) }));

  // Limit lines, each labelled in words just above or below it, at the left or the right of the plot: the first place
  // clear of every label already placed, both curves and the points (sampled along the curves).
  const obstacles = [];
  for (let i = 1; i < curve.length; i++) {
    const a = curve[i - 1];
    const b = curve[i];
    for (let k = 0; k <= 8; k++) {
      const f = k / 8;
      const p = a.dischargePressure.value + (b.dischargePressure.value - a.dischargePressure.value) * f;
      for (const key of ["estimated", "isentropic", "estimatedUpperBound"]) {
        obstacles.push({ x: x(p), y: y(a[key].value + (b[key].value - a[key].value) * f) });
      }
    }
  }

  obstacles.push({ x: x(operating.p), y: y(operating.t) });
  const placed = [{ x0: x(operating.p) - 12, y0: y(operating.t) - 12, x1: x(operating.p) + 12, y1: y(operating.t) + 12 }];
  if (envelopePressure !== null && governingLimit) {
    placed.push({ x0: x(envelopePressure) - 12, y0: y(governingLimit.limit.value) - 12, x1: x(envelopePressure) + 12, y1: y(governingLimit.limit.value) + 12 });
  }

  const lineH = FONT_PX + 4;
  const place = (lineY, w) => {
    for (let step = 0; step < 12; step++) {
      for (const x0 of [MARGIN.left + 4, MARGIN.left + plotW - w - 4]) {
        for (const y0 of [lineY - lineH - 1 - step * lineH, lineY + 2 + step * lineH]) {
          const box = { x0: Math.max(MARGIN.left + 1, x0), y0, x1: Math.max(MARGIN.left + 1, x0) + w, y1: y0 + lineH };
          const inside = box.y0 >= MARGIN.top && box.y1 <= MARGIN.top + plotH;
          const overlaps = placed.some((p) => p.x0 < box.x1 && box.x0 < p.x1 && p.y0 < box.y1 && box.y0 < p.y1);
          const covers = obstacles.some((o) => o.x >= box.x0 - 2 && o.x <= box.x1 + 2 && o.y >= box.y0 - 2 && o.y <= box.y1 + 2);
          if (inside && !overlaps && !covers) {
            return box;
          }
        }
      }
    }

    // No free place beside the line: the label goes to a row of its own under the axis (the chart grows), so it
    // still covers nothing; the line's value is in its words.
    const y0 = HEIGHT + 2;
    HEIGHT += lineH + 2;
    return { x0: 4, y0, x1: 4 + w, y1: y0 + lineH, below: true };
  };

  const limitGroup = el("g", { class: "limits" });
  for (const l of [...limits].sort((a, b) => b.limit.value - a.limit.value)) {
    const g = el("g", { class: "limit", "data-rule": l.ruleId, "data-quantity": l.quantity });
    g.append(el("line", {
      class: `limit-line${l.governing ? " governing-line" : ""}`,
      x1: MARGIN.left, x2: MARGIN.left + plotW, y1: py(l.limit.value), y2: py(l.limit.value),
    }));
    const words = `${l.governing ? "▶ " : ""}${l.words} ${format(l.limit.value)} ${l.limit.unit}`;
    const box = place(y(l.limit.value), words.length * CHAR_PX);
    placed.push(box);
    g.append(el("text", { class: `limit-label${box.below ? " below" : ""}`, x: box.x0.toFixed(1), y: (box.y1 - 4).toFixed(1) }, box.below ? `Limit: ${words}` : words));
    limitGroup.append(g);
  }

  svg.append(limitGroup);
  svg.setAttribute("viewBox", `0 0 ${WIDTH} ${HEIGHT}`);

  // The operating point with the estimate's lower-to-upper bound as a bar.
  const op = el("g", { class: "operating" });
  op.append(el("line", { class: "lower-bound-bar", x1: px(operating.p), x2: px(operating.p), y1: py(operating.lower), y2: py(operating.upper) }));
  op.append(el("circle", { class: "operating-point", cx: px(operating.p), cy: py(operating.t), r: 8 }));
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
    g.append(el("title", {}, `Governing limit reached at ${format(envelopePressure)} ${pressureUnit} absolute`));
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
    "Red dashed: limits, named in words (solid and ▶: the governing one)",
    "Dot: operating point, bar from lower to upper bound",
    ...(envelopePressure !== null && governingLimit ? [`Diamond: the governing limit is reached at ${format(envelopePressure)} ${pressureUnit} absolute`] : []),
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
