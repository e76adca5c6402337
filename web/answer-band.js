// The answer band at the top of the case screen: the vertical imbalance at the
// reading level (amount, base, eye, the depth it is taken at), whether it is
// within the threshold and where the threshold is reached, the distance
// imbalance when it is not zero, and the suggested remedy as an order line
// with its Apply button; one line when there is no problem. Every figure is
// the core's (data-key, data-value); this file only lays them out.
import { el, fig, fixed, get, mm, netVertical, prism } from "./zone-common.js";

const ZERO = 0.005; // below this a figure rounds to 0.00

// The induced part when the core gives it (contract: induced_*), else the total.
export function inducedKey(result, base) {
  return get(result, `${base}.induced_vertical_base_up_right`) !== undefined
    ? `${base}.induced_vertical_base_up_right` : `${base}.vertical_base_up_right`;
}

const baseWords = (v) => (Math.abs(v) < ZERO ? "no vertical imbalance"
  : v > 0 ? "base up before the right eye" : "base up before the left eye");

// The order line(s) of a remedy: the core's order_lines when given, else its summary.
export function orderLines(result, index) {
  const base = `remedies.options.${index}`;
  const lines = get(result, `${base}.order_lines`);
  if (Array.isArray(lines) && lines.length) {
    return lines.map((_, k) => el("span", { class: "band-order-line" }, fig(result, `${base}.order_lines.${k}`)));
  }
  return [el("span", { class: "band-order-line" }, fig(result, `${base}.summary`))];
}

function readingLevel(result, onApply) {
  const z = "reading_zone";
  const zone = result.reading_zone;
  const key = inducedKey(result, `${z}.at_reading_point`);
  const value = get(result, key);
  const over = zone.over_threshold_at_reading_point === true;
  const headline = el("p", { class: "band-headline" },
    el("span", { class: "band-number" }, fig(result, key, (v) => fixed(2)(Math.abs(v)), "fig band-figure"),
      el("span", { class: "band-unit", text: " Δ" })),
    el("span", { class: "band-words" }, el("span", { class: "band-base", text: baseWords(value) }),
      el("span", { class: "band-where" }, "at the reading level, ",
        fig(result, `${z}.geometry.reading_drop_mm`, mm), " down")));
  const drop = zone.threshold_drop_mm;
  const reach = drop === null || drop === undefined ? ["stays under it down the reading path"]
    : drop === 0 ? ["reached already straight ahead"]
      : ["reached ", fig(result, `${z}.threshold_drop_mm`, mm), " down"];
  const verdict = el("p", { class: `band-verdict ${over ? "is-over" : "is-within"}` },
    el("span", { class: "band-mark", "aria-hidden": "true", text: over ? "✗" : "✓" }),
    el("span", { "data-key": `${z}.over_threshold_at_reading_point`, "data-value": String(zone.over_threshold_at_reading_point) },
      over ? "Over the " : "Within the "),
    fig(result, `${z}.threshold.vertical`, prism), " threshold; ", ...reach, ".");
  const nodes = [headline, verdict];
  const distanceKey = inducedKey(result, `${z}.at_distance`);
  const distance = get(result, distanceKey);
  if (typeof distance === "number" && Math.abs(distance) >= ZERO) {
    nodes.push(el("p", { class: "band-distance" }, "At distance: ", fig(result, distanceKey, netVertical), "."));
  }
  nodes.push(remedyLine(result, over, onApply));
  return nodes;
}

function remedyLine(result, over, onApply) {
  const section = result.remedies;
  if (!section) return null;
  const id = section.recommended;
  const index = section.options.findIndex((o) => o && o.id === id);
  const tag = (text) => el("span", { class: "band-remedy-name", "data-key": "remedies.recommended", "data-value": String(id) }, text);
  if (id === "none" || index < 0) {
    return el("p", { class: "band-remedy is-none" }, over ? "Suggested: " : "", tag(over ? "no change" : "No remedy needed."));
  }
  const option = section.options[index];
  const apply = el("button", { type: "button", class: "zapply band-apply", "data-apply": id, text: "Apply" });
  apply.setAttribute("aria-label", "Apply " + option.name + " to the case");
  apply.addEventListener("click", () => onApply(option));
  return el("div", { class: "band-remedy" },
    el("p", { class: "band-order" }, el("span", { class: "band-label", text: "Order: " }),
      tag(fig(result, `remedies.options.${index}.name`)), el("br"), ...orderLines(result, index)),
    apply);
}

// No reading zone (no fitting to find one): the largest vertical imbalance over the points
// (their nets: the live request's point_totals, or the whole result's points).
function atPoints(result) {
  const list = result.points ? "points" : "point_totals";
  const points = result[list];
  let worst = 0;
  points.forEach((p, i) => {
    if (Math.abs(p.net.vertical_base_up_right) > Math.abs(points[worst].net.vertical_base_up_right)) worst = i;
  });
  const key = inducedKey(result, `${list}.${worst}.net`);
  return [el("p", { class: "band-headline" },
    el("span", { class: "band-number" }, fig(result, key, (v) => fixed(2)(Math.abs(v)), "fig band-figure"),
      el("span", { class: "band-unit", text: " Δ" })),
    el("span", { class: "band-words" }, el("span", { class: "band-base", text: baseWords(get(result, key)) }),
      el("span", { class: "band-where" }, "largest vertical imbalance, at ", fig(result, `${list}.${worst}.name`))))];
}

export function renderBand(node, result, { onApply }) {
  const zone = result.reading_zone;
  let content;
  if (zone && zone.at_reading_point) {
    const over = zone.over_threshold_at_reading_point === true;
    const distance = get(result, inducedKey(result, "reading_zone.at_distance"));
    if (!over && !(typeof distance === "number" && Math.abs(distance) >= ZERO) && zone.threshold_drop_mm == null) {
      // No problem: one line.
      const key = inducedKey(result, "reading_zone.at_reading_point");
      content = [el("p", { class: "band-ok" },
        el("span", { class: "band-mark", "aria-hidden": "true", text: "✓" }), "No vertical imbalance problem: ",
        el("span", { class: "band-number" }, fig(result, key, (v) => fixed(2)(Math.abs(v)), "fig band-figure"),
          el("span", { class: "band-unit", text: " Δ" })),
        " at the reading level (", fig(result, "reading_zone.geometry.reading_drop_mm", mm), " down), under the ",
        fig(result, "reading_zone.threshold.vertical", prism), " threshold. ",
        el("span", { class: "band-remedy-name", "data-key": "remedies.recommended",
          "data-value": String(result.remedies ? result.remedies.recommended : "none") }, "No remedy needed."))];
    } else {
      content = readingLevel(result, onApply);
    }
  } else {
    content = atPoints(result);
  }
  node.replaceChildren(...content.filter(Boolean),
    el("p", { class: "band-caution", text: "A check aid: verify on the finished pair; the decision is the practitioner's." }));
}
