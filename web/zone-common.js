// Small helpers shared by the reading-zone and remedies screens (zone*.js,
// remedies.js). Display only: every number shown comes from the core's answer;
// these functions round it for the screen and tag it with data-key (its dotted
// path in the evaluate result) and data-value (the number as the core gave it).
import { el, fig, get } from "./results.js";

export { el, fig, get };

export const SVG_NS = "http://www.w3.org/2000/svg";

export function svg(tag, attrs = {}, ...children) {
  const node = document.createElementNS(SVG_NS, tag);
  for (const [key, value] of Object.entries(attrs)) {
    if (value === undefined || value === null) continue;
    if (key === "text") node.textContent = value;
    else node.setAttribute(key, String(value));
  }
  for (const child of children) if (child) node.append(child);
  return node;
}

// Rounded for the screen; a value that rounds to zero is shown without a sign ((-0).toFixed() has none).
export const fixed = (digits) => (v) => {
  const text = v.toFixed(digits);
  return /^-0\.?0*$/.test(text) ? text.slice(1) : text;
};
export const mm = (v) => fixed(1)(v) + " mm";
export const prism = (v) => fixed(2)(v) + " Δ";
export const signed = (v) => {
  const text = fixed(2)(v);
  return text.startsWith("-") ? "−" + text.slice(1) : (Number(text) === 0 ? text : "+" + text);
};
export const dioptres = (v) => {
  const text = fixed(2)(v);
  return (text.startsWith("-") ? "−" + text.slice(1) : (Number(text) === 0 ? text : "+" + text)) + " D";
};

// Net vertical prism between the eyes (positive: base up before the right eye).
export const netVertical = (v) => {
  const size = fixed(2)(Math.abs(v));
  if (Number(size) === 0) return size + " Δ";
  return size + " Δ " + (v > 0 ? "base up R (base down L)" : "base up L (base down R)");
};
// Net horizontal prism (positive: net base in).
export const netHorizontal = (v) => {
  const size = fixed(2)(Math.abs(v));
  if (Number(size) === 0) return size + " Δ";
  return size + " Δ " + (v > 0 ? "base in" : "base out");
};
export const inOut = (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "out" : "in"}`;
export const upDown = (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "down" : "up"}`;
export const below = (v) => (Number(fixed(1)(v)) === 0 ? "at the reference point"
  : `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "below" : "above"}`);

export const EYE_WORDS = { right: "Right", left: "Left" };

export function factRow(label, ...content) {
  return el("div", { class: "row" }, el("dt", { text: label }), el("dd", {}, ...content));
}

// A yes/no fact from the core, in words and a symbol (never colour alone).
// `trueIsGood`: whether "true" is the reassuring answer (within a threshold).
export function verdict(result, key, yes, no, trueIsGood = true) {
  const value = get(result, key);
  if (typeof value !== "boolean") return null;
  const good = value === trueIsGood;
  const node = el("span", { class: `zbadge ${good ? "is-within" : "is-over"}`, "data-key": key,
    "data-value": String(value) });
  node.append(el("span", { class: "zbadge-mark", "aria-hidden": "true", text: good ? "✓" : "!" }),
    value ? yes : no);
  return node;
}
