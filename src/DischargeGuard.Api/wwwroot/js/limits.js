// "Limits in force": for the site and asset typed, each rule's limit and warning band as the service holds them, what it
// applies to, the layer and basis that set it and the chain of layers that touched it (GET /v1/rules?site=&asset=).
// Text is set with textContent only; no inline script or style (strict CSP).

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
    if (child !== null && child !== undefined) {
      node.append(child instanceof Node ? child : String(child));
    }
  }

  return node;
}

function quantity(q) {
  if (!q) {
    return "none";
  }

  return q.unit === "1" ? String(q.value) : `${q.value} ${q.unit}`;
}

function capital(text) {
  return text ? text.charAt(0).toUpperCase() + text.slice(1) : "";
}

function chain(changes) {
  return h("ol", { class: "limit-chain" }, ...(changes || []).map((c) =>
    h("li", { "data-layer": c.layer },
      h("strong", {}, `${c.layer}: `), `${c.change} (limit ${c.limit}, warning band ${c.warningBand})`,
      c.basis ? h("span", { class: "limit-basis" }, ` Basis: ${c.basis}`) : null,
      c.reason ? h("span", { class: "limit-reason" }, ` Reason: ${c.reason}`) : null,
      c.approvedBy ? h("span", {}, ` Approved by ${c.approvedBy} on ${c.approvedOn}.`) : null)));
}

/** Fills the section with the limits in force of a GET /v1/rules answer. */
export function renderLimits(body, container) {
  const rules = body.rules || [];
  const table = h("table", { class: "values limits-table" },
    h("thead", {}, h("tr", {},
      h("th", { scope: "col" }, "Rule"),
      h("th", { scope: "col" }, "Limit in force"),
      h("th", { scope: "col" }, "Applies to"),
      h("th", { scope: "col" }, "Set by, and its basis"),
      h("th", { scope: "col" }, "Layers that touched it"))),
    h("tbody", {}, ...rules.map((r) => h("tr", { "data-rule": r.id, "data-layer": r.limitLayer },
      h("th", { scope: "row" }, h("strong", {}, r.id), ` ${r.title}`),
      h("td", { class: "limit-value" }, `${r.limitText} (${r.direction})`, h("br"), `warning band ${quantity(r.warningBand)}; ${r.severity}`),
      h("td", {}, r.appliesTo ? r.appliesTo.text : ""),
      h("td", {}, h("strong", {}, r.limitLayer), h("span", { class: "limit-basis" }, ` ${r.basis}`),
        r.reason ? h("span", { class: "limit-reason" }, ` Reason: ${r.reason}`) : null,
        r.approvedBy ? h("span", {}, ` Approved by ${r.approvedBy} on ${r.approvedOn}.`) : null),
      h("td", {}, chain(r.chain))))));

  container.replaceChildren(
    h("p", { class: "layers-applied" }, `${capital(body.applied || "")}.`),
    ...(body.unmatched || []).map((u) => h("p", { class: "layer-unmatched", role: "note", "data-field": u.field }, `${capital(u.message)}.`)),
    h("p", { class: "hint" }, "These are the rule file's limits. The manufacturer's limits, local codes and a licensed engineer's review come first."),
    table);
  const disabled = body.disabled || [];
  if (disabled.length) {
    container.append(h("h4", {}, "Disabled by a layer"), h("ul", { class: "limits-disabled" }, ...disabled.map((d) =>
      h("li", { "data-rule": d.ruleId }, h("strong", {}, `${d.ruleId}: `), `disabled by ${d.layer}. Reason: ${d.reason}`))));
  }
}
