// Rendering the core's answer. Every figure shown comes from the answer; this
// file only rounds for display. Each figure carries data-key (its dotted path
// in the evaluate result) and data-value (the number exactly as the core gave it).

const EYE_WORDS = { right: "Right eye", left: "Left eye" };

export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(attrs)) {
    if (value === undefined || value === null) continue;
    if (key === "class") node.className = value;
    else if (key === "text") node.textContent = value;
    else node.setAttribute(key, value);
  }
  for (const child of children) {
    if (child === null || child === undefined || child === false) continue;
    node.append(typeof child === "string" ? document.createTextNode(child) : child);
  }
  return node;
}

export function get(obj, path) {
  return path.split(".").reduce((o, k) => (o === null || o === undefined ? undefined : o[k]), obj);
}

// One figure: the rounded text, with the exact value alongside.
export function fig(result, key, format, cls = "fig") {
  const value = get(result, key);
  if (value === undefined || value === null) return null;
  const node = el("span", { class: cls, "data-key": key, "data-value": String(value) });
  node.textContent = format ? format(value) : String(value);
  return node;
}

const fixed = (digits) => (v) => (Object.is(v, -0) ? 0 : v).toFixed(digits);
const mm = (v) => fixed(1)(v) + " mm";
const dioptres = (v) => (v > 0 ? "+" : "") + fixed(2)(v) + " D";
const prismAmount = (v) => fixed(2)(v) + " Δ";
const horizontal = (v) => fixed(2)(Math.abs(v)) + (v > 0 ? " BI" : v < 0 ? " BO" : "");
const vertical = (v) => fixed(2)(Math.abs(v)) + (v > 0 ? " BU" : v < 0 ? " BD" : "");
const degrees = (v) => Math.round(v) % 360 + "°";
const netVertical = (v) => fixed(2)(Math.abs(v)) + " Δ" + (v > 0 ? " base up R (base down L)" : v < 0 ? " base down R (base up L)" : "");
const netHorizontal = (v) => fixed(2)(Math.abs(v)) + " Δ" + (v > 0 ? " base in" : v < 0 ? " base out" : "");
const offset = (inward, up) => `${fixed(1)(Math.abs(inward))} ${inward < 0 ? "out" : "in"}, ${fixed(1)(Math.abs(up))} ${up < 0 ? "down" : "up"}`;

function row(label, ...content) {
  return el("div", { class: "row" }, el("dt", { text: label }), el("dd", {}, ...content));
}

function eyePrism(result, base, eye) {
  const p = `${base}.${eye}`;
  return el("div", { class: "eye " + eye },
    el("h4", { text: EYE_WORDS[eye] }),
    el("p", { class: "words" }, fig(result, p + ".in_words")),
    el("p", { class: "components" },
      el("span", { class: "part" }, el("span", { class: "lbl", text: "H " }), fig(result, p + ".base_in", horizontal)),
      el("span", { class: "part" }, el("span", { class: "lbl", text: "V " }), fig(result, p + ".base_up", vertical)),
      el("span", { class: "part" }, fig(result, p + ".amount", prismAmount), " at ",
        fig(result, p + ".direction_360", degrees))));
}

function partsTable(result, base) {
  const point = get(result, base);
  const names = { prescribed: "Prescribed", induced: "Induced (Prentice)", from_add: "From the add", from_slab_off: "From slab-off" };
  const keys = Object.keys(point.right.parts || {});
  if (!keys.length) return null;
  const table = el("table", { class: "parts" },
    el("thead", {}, el("tr", {}, el("th", { scope: "col", text: "Source" }),
      el("th", { scope: "col", text: "Right eye" }), el("th", { scope: "col", text: "Left eye" }))));
  const body = el("tbody");
  for (const key of keys) {
    body.append(el("tr", {}, el("th", { scope: "row", text: names[key] || key.replace(/_/g, " ") }),
      el("td", {}, fig(result, `${base}.right.parts.${key}.in_words`)),
      el("td", {}, fig(result, `${base}.left.parts.${key}.in_words`))));
  }
  body.append(el("tr", {}, el("th", { scope: "row", text: "Lens zone" }),
    el("td", {}, fig(result, `${base}.right.zone`)), el("td", {}, fig(result, `${base}.left.zone`))));
  table.append(body);
  return el("details", { class: "breakdown", "data-remember": base },
    el("summary", { text: "Where the prism comes from" }), table);
}

// A point where neither eye has any prism folds into one line.
function isZeroPoint(point) {
  const zero = (v) => typeof v === "number" && Math.abs(v) < 0.005;
  return zero(point.right.amount) && zero(point.left.amount) && zero(point.net.vertical_base_up_right) &&
    zero(point.net.horizontal_base_in);
}

function pointCard(result, i) {
  const card = fullPointCard(result, i);
  if (!isZeroPoint(result.points[i])) return card;
  return el("details", { class: "point-zero", "data-remember": `points.${i}.zero` },
    el("summary", {}, el("span", { class: "point-zero-name" }, fig(result, `points.${i}.name`, null, "name")),
      ": no prism before either eye"), card);
}

function fullPointCard(result, i) {
  const base = `points.${i}`;
  const point = result.points[i];
  const position = (eye) => {
    const pos = point.position[eye];
    const span = el("span", {}, eye === "right" ? "R " : "L ",
      fig(result, `${base}.position.${eye}.in_mm`, (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "out" : "in"}`), ", ",
      fig(result, `${base}.position.${eye}.up_mm`, (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "down" : "up"}`));
    return pos ? span : null;
  };
  return el("article", { class: "point", "aria-labelledby": `pt-${i}` },
    el("header", {},
      el("h3", { id: `pt-${i}` }, fig(result, `${base}.name`, null, "name")),
      el("p", { class: "position" }, position("right"), " · ", position("left"), " mm")),
    el("div", { class: "eyes-pair" }, eyePrism(result, base, "right"), eyePrism(result, base, "left")),
    el("div", { class: "net" },
      el("h4", { text: "Between the eyes" }),
      el("p", { class: "words vertical" }, fig(result, `${base}.net.vertical_in_words`)),
      el("p", { class: "words" }, fig(result, `${base}.net.horizontal_in_words`)),
      el("p", { class: "components" },
        el("span", { class: "part" }, el("span", { class: "lbl", text: "Vertical " }),
          fig(result, `${base}.net.vertical_base_up_right`, netVertical)),
        el("span", { class: "part" }, el("span", { class: "lbl", text: "Horizontal " }),
          fig(result, `${base}.net.horizontal_base_in`, netHorizontal)))),
    partsTable(result, base));
}

function lensBlock(result, eye) {
  const p = `eyes.${eye}`;
  const lens = result.eyes[eye];
  const dl = el("dl", { class: "facts" },
    row("Prescription", fig(result, p + ".written")),
    row("Transposed", fig(result, p + ".transposed_written")),
    row("Horizontal power", fig(result, p + ".horizontal_power", dioptres)),
    row("Vertical power", fig(result, p + ".vertical_power", dioptres)),
    lens.add ? row("Add", fig(result, p + ".add", dioptres)) : null,
    row("Prescribed prism", fig(result, p + ".prism.in_words")));
  const dec = lens.decentration_for_prism;
  if (dec) {
    dl.append(dec.impossible !== undefined
      ? row("Prism by decentration", fig(result, p + ".decentration_for_prism.impossible"))
      : row("Prism by decentration", fig(result, p + ".decentration_for_prism.in_words"), " (",
        fig(result, p + ".decentration_for_prism.total_mm", mm), " in all)"));
  }
  if (lens.image_jump !== undefined) dl.append(row("Image jump", fig(result, p + ".image_jump", prismAmount)));
  return el("div", { class: "lens" }, el("h4", { text: EYE_WORDS[eye] }), dl);
}

function fittingBlock(result) {
  const f = result.fitting;
  if (!f) return null;
  const dl = el("dl", { class: "facts" }, row("Distance PD", fig(result, "fitting.distance_pd_mm", mm)));
  if (f.near_inset_mm) {
    dl.append(
      row("Near inset", "R ", fig(result, "fitting.near_inset_mm.right", mm), " · L ", fig(result, "fitting.near_inset_mm.left", mm)),
      row("Near centration distance", fig(result, "fitting.near_centration_distance_mm", mm)));
    if (f.horizontal_power_at_near) {
      dl.append(row("Horizontal power at near", "R ", fig(result, "fitting.horizontal_power_at_near.right", dioptres),
        " · L ", fig(result, "fitting.horizontal_power_at_near.left", dioptres)));
    }
  } else {
    dl.append(row("Near inset", "cannot be found for these powers"));
  }
  return el("section", { class: "derived", "aria-labelledby": "h-derived-fit" },
    el("h3", { id: "h-derived-fit", text: "Fitting" }), dl);
}

function frameBlock(result) {
  const f = result.frame;
  if (!f) return null;
  const dl = el("dl", { class: "facts" }, row("Frame PD (A + DBL)", fig(result, "frame.frame_pd_mm", mm)));
  for (const eye of ["right", "left"]) {
    if (!f[eye]) continue;
    const p = `frame.${eye}`;
    dl.append(row(EYE_WORDS[eye] + " decentration", fig(result, p + ".decentration_in_mm",
      (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "out" : "in"}`)));
    const oc = f[eye].optical_centre_from_box_centre;
    if (oc) {
      dl.append(row(EYE_WORDS[eye] + " optical centre from box centre",
        fig(result, p + ".optical_centre_from_box_centre.in_mm", (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "out" : "in"}`), ", ",
        fig(result, p + ".optical_centre_from_box_centre.up_mm", (v) => `${fixed(1)(Math.abs(v))} ${v < 0 ? "down" : "up"}`), " mm"));
    }
    if (f[eye].minimum_blank_mm !== undefined) {
      dl.append(row(EYE_WORDS[eye] + " minimum blank", fig(result, p + ".minimum_blank_mm", mm)));
    }
  }
  return el("section", { class: "derived", "aria-labelledby": "h-derived-frame" },
    el("h3", { id: "h-derived-frame", text: "Frame" }), dl);
}

// Sections the core may add later are listed collapsed and drawn, figure by
// figure, only when opened (some are large; drawing them on every edit would
// slow recomputing down).
function genericBlock(result, key) {
  const title = key.replace(/_/g, " ");
  const details = el("details", { class: "derived more", "data-remember": key },
    el("summary", {}, el("span", { text: title[0].toUpperCase() + title.slice(1) })));
  const draw = () => {
    const dl = el("dl", { class: "facts generic" });
    const walk = (value, path, label) => {
      if (value && typeof value === "object") {
        for (const [k, v] of Object.entries(value)) {
          if (k === "applied_case") continue; // input for a later step, not a figure
          walk(v, `${path}.${k}`, label ? `${label} · ${k.replace(/_/g, " ")}` : k.replace(/_/g, " "));
        }
      } else if (value !== null) {
        dl.append(row(label || title, fig(result, path, typeof value === "number" ? fixed(2) : null)));
      }
    };
    walk(result[key], key, "");
    details.append(dl);
  };
  details.addEventListener("toggle", () => {
    if (details.open && details.children.length === 1) draw();
  });
  return details;
}

// reading_zone and remedies are drawn by zone.js.
const KNOWN = new Set(["points", "point_totals", "eyes", "fitting", "frame", "cautions", "reading_zone", "remedies"]);

// The folded sections of the results, in their fixed order.
export const SECTIONS = [
  ["sec-points", "Figures at each point of gaze, each eye"],
  ["sec-map", "The map and the lenses"],
  ["sec-remedies", "Remedies side by side"],
  ["sec-errors", "Fitting errors"],
  ["sec-sources", "Sources"],
];

export function renderResult(container, result) {
  // Sections the user opened stay open across recomputes.
  const open = new Set([...container.querySelectorAll("details[open][data-remember]")].map((d) => d.dataset.remember));
  const sections = SECTIONS.map(([id, title]) => el("details", { class: "sec", id, "data-remember": id },
    el("summary", {}, el("h3", { class: "sec-title", text: title }))));
  if (result.points) {
    // The folded figures come when the section is opened (the page then asks for them).
    const points = el("div", { class: "points" });
    result.points.forEach((_, i) => points.append(pointCard(result, i)));
    const lenses = el("section", { class: "derived", "aria-labelledby": "h-derived-lens" },
      el("h3", { id: "h-derived-lens", text: "Lenses" }),
      el("div", { class: "eyes-pair" }, lensBlock(result, "right"), lensBlock(result, "left")));
    const more = Object.keys(result).filter((k) => !KNOWN.has(k) && result[k] !== null).map((k) => genericBlock(result, k));
    sections[0].append(points, el("div", { class: "derived-all" }, lenses, fittingBlock(result), frameBlock(result), ...more));
  } else {
    sections[0].append(el("p", { class: "sec-pending", text: "Working out this section…" }));
  }
  container.replaceChildren(...sections);
  for (const details of container.querySelectorAll("details[data-remember]")) {
    if (open.has(details.dataset.remember)) details.open = true;
  }
}

export function renderCautions(list, result) {
  list.replaceChildren(...(result.cautions || []).map((text, i) =>
    el("li", {}, fig(result, `cautions.${i}`, null, "caution"))));
}

// The transposed form under each eye's prescription.
export function renderTransposed(dl, result, eye) {
  dl.replaceChildren(el("div", { class: "row" },
    el("dt", { text: "Transposed" }),
    el("dd", {}, fig(result, `eyes.${eye}.transposed_written`))));
}

// The printout: an order note. The case, the lens design of each eye (type,
// segment, size, heights), the threshold, the imbalance at distance and at the
// reading level, the chosen remedy as an order line, the cautions. The lens
// drawings and the remedies compared follow it (zone.js, #print-zone).
const KIND = { single_vision: "Single vision", bifocal: "Bifocal", progressive: "Progressive" };
const SHAPE = { round: "round", flat_top: "flat-top", straight_across: "straight-across" };

function inducedKey(result, base) {
  return get(result, `${base}.induced_vertical_base_up_right`) !== undefined
    ? `${base}.induced_vertical_base_up_right` : `${base}.vertical_base_up_right`;
}

export function renderPrintSummary(node, doc, result, chosen = null) {
  const given = (value) => (value === undefined || value === null || value === "" ? "–" : String(value));
  const rows = [];
  const line = (label, ...content) => rows.push(el("tr", {}, el("th", { scope: "row", text: label }), el("td", {}, ...content)));
  const zone = result.reading_zone;
  for (const eye of ["right", "left"]) {
    const p = `eyes.${eye}`;
    const lens = doc[eye] || {};
    const fit = (doc.fitting || {})[eye] || {};
    const design = zone && zone.designs ? zone.designs[eye] : null;
    const d = `reading_zone.designs.${eye}`;
    const parts = [fig(result, p + ".written"),
      result.eyes[eye].add ? el("span", {}, ", add ", fig(result, p + ".add", dioptres)) : null,
      "; prism: ", fig(result, p + ".prism.in_words"), el("br"),
      design ? fig(result, `${d}.kind`, (v) => KIND[v] || v) : "Single vision"];
    if (design && design.kind === "bifocal") {
      parts.push(", ", design.shape ? fig(result, `${d}.shape`, (v) => SHAPE[v] || v) : "segment",
        design.size_mm != null ? el("span", {}, " ", fig(result, `${d}.size_mm`, (v) => fixed(0)(v))) : null,
        ", segment top ", fig(result, `${d}.top_mm`, (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "below" : "above"} the distance reference point`));
      if (lens.segment && lens.segment.height_mm !== undefined) parts.push(` (segment height ${given(lens.segment.height_mm)} mm)`);
    } else if (design && design.kind === "progressive") {
      parts.push(", corridor ", fig(result, `${d}.corridor_mm`, mm));
    }
    parts.push(`; PD ${given(fit.mono_pd_mm)} mm`, fit.height_mm !== undefined ? `, fitting height ${given(fit.height_mm)} mm` : "");
    if (lens.slab_off) parts.push(`; slab-off ${given(lens.slab_off.base_up)} Δ, line ${given(lens.slab_off.line_mm)} mm`);
    const moved = result.eyes[eye].optical_centre_mm;
    if (moved) {
      parts.push("; optical centre ", fig(result, p + ".optical_centre_mm.up_mm",
        (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "below" : "above"}`),
      moved.in_mm ? el("span", {}, ", ", fig(result, p + ".optical_centre_mm.in_mm",
        (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "out from" : "in from"}`)) : null,
      " the fitting point");
    }
    line(EYE_WORDS[eye], ...parts);
  }
  if (doc.frame) {
    line("Frame", `A ${given(doc.frame.a_mm)}, B ${given(doc.frame.b_mm)}, DBL ${given(doc.frame.dbl_mm)}, ` +
      `ED ${given(doc.frame.ed_mm)} mm`);
  }
  if (zone) {
    const z = "reading_zone";
    line("Threshold", fig(result, `${z}.threshold.vertical`, prismAmount), " vertical imbalance");
    line("At distance", fig(result, inducedKey(result, `${z}.at_distance`), netVertical));
    line("At the reading level", fig(result, inducedKey(result, `${z}.at_reading_point`), netVertical), ", ",
      fig(result, `${z}.geometry.reading_drop_mm`, mm), " down; ",
      zone.over_threshold_at_reading_point ? "over the threshold" : "within the threshold");
  }
  const section = result.remedies;
  if (section) {
    const id = chosen ? chosen.id : section.recommended;
    const i = section.options.findIndex((o) => o && o.id === id);
    const option = section.options[i];
    const base = `remedies.options.${i}`;
    const order = chosen
      ? [el("span", { text: `Applied: ${chosen.name}; the lenses above are the finished case.` })]
      : i < 0 || id === "none" ? [el("span", { "data-key": "remedies.recommended", "data-value": String(section.recommended),
        text: "No remedy: none suggested." })]
        : [el("span", { "data-key": "remedies.recommended", "data-value": String(id) }, fig(result, `${base}.name`)), ": ",
          ...(Array.isArray(option.order_lines) && option.order_lines.length
            ? option.order_lines.flatMap((_, k) => [k ? el("br") : null, fig(result, `${base}.order_lines.${k}`)])
            : [fig(result, `${base}.summary`)])];
    line(chosen ? "Remedy (applied)" : "Remedy (suggested)", ...order);
  }
  // The whole result's points, or (printed straight after a keystroke) the live totals.
  const list = result.points ? "points" : "point_totals";
  const pointRows = result[list].map((_, i) => {
    const p = `${list}.${i}`;
    return el("tr", {},
      el("th", { scope: "row" }, fig(result, p + ".name")),
      el("td", {}, fig(result, p + ".right.in_words")),
      el("td", {}, fig(result, p + ".left.in_words")),
      el("td", {}, fig(result, p + ".net.vertical_in_words"), "; ", fig(result, p + ".net.horizontal_in_words")));
  });
  const cautions = [...(result.cautions || []).map((_, i) => el("li", {}, fig(result, `cautions.${i}`))),
    ...((section && section.cautions) || []).map((_, i) => el("li", {}, fig(result, `remedies.cautions.${i}`)))];
  node.replaceChildren(
    el("h1", { text: "Order note" + (doc.name ? " – " + doc.name : "") }),
    el("p", { text: "Prism Desk · printed " + new Date().toLocaleString() }),
    el("table", { class: "print-inputs" }, el("tbody", {}, ...rows)),
    el("table", { class: "print-results" },
      el("thead", {}, el("tr", {}, ...["Point of gaze", "Right eye", "Left eye", "Between the eyes"].map((t) => el("th", { scope: "col", text: t })))),
      el("tbody", {}, ...pointRows)),
    el("h2", { class: "print-cautions-title", text: "Cautions" }),
    el("ul", { class: "print-cautions" }, ...cautions));
}
