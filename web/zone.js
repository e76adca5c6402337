// The reading zone on screen: lens designs and reading-zone settings in the
// form (zone-form.js), and in the results the imbalance map, the key figures,
// image jump, fitting-error sensitivity, warnings and the remedies side by side
// (remedies.js), with "Apply" and one-step "back to the case before".
// Every figure comes from the core's evaluate result (sections `reading_zone`
// and `remedies`); this file only lays them out.
import { addPathWords } from "./form.js";
import {
  EYE_WORDS, below, dioptres, el, factRow, fig, fixed, get, inOut, mm, netHorizontal, netVertical, prism, signed,
  upDown, verdict,
} from "./zone-common.js";
import { ZONE_PATH_WORDS, ZoneFormPart } from "./zone-form.js";
import { drawMap, drawScale } from "./zone-map.js";
import { printRemedies, renderRemedies } from "./remedies.js";
import { lensDrawings } from "./zone-lens.js";

const RULE_WORDS = {
  distance_reference: "a depth below the distance reference point",
  segment_top: "a depth below the segment tops",
  near_zone: "the progressive's near reference point",
};
const WORN_WORDS = { spectacles: "spectacles fitted for distance", reading_spectacles: "reading spectacles",
  contact_lenses: "contact lenses" };
const KIND_WORDS = { both_heights: "Both fitting heights", right_height: "Right fitting height",
  left_height: "Left fitting height", right_pd: "Right monocular PD", left_pd: "Left monocular PD" };

function errorWords(kind, error) {
  const size = `${Math.abs(error)} mm`;
  if (kind.endsWith("pd")) return `${size} too far ${error > 0 ? "out" : "in"}`;
  return `${size} too ${error > 0 ? "high" : "low"}`;
}

// ---------------------------------------------------------------- key figures
function keyFigures(result) {
  const z = "reading_zone";
  const zone = result.reading_zone;
  const drop = zone.threshold_drop_mm;
  const lastRow = zone.map.drop_mm.length - 1;
  let reached;
  if (drop === null || drop === undefined) {
    reached = el("span", {}, "not reached down to ", fig(result, `${z}.map.drop_mm.${lastRow}`, mm), " (the foot of the map)");
  } else if (drop === 0) {
    reached = el("span", {}, "already reached in the primary position (", fig(result, `${z}.threshold_drop_mm`, mm), " down)");
  } else {
    reached = el("span", {}, fig(result, `${z}.threshold_drop_mm`, mm), " below the primary position, down the reading path");
  }
  const card = (title, vertical, horizontal, badge, extra) => el("div", { class: "zkey-card" },
    el("h4", { text: title }), el("p", { class: "zkey-v" }, vertical), badge, el("p", { class: "zkey-h" }, "Horizontal ", horizontal), extra);
  const geometry = `${z}.geometry`;
  const point = (eye) => el("span", { class: "znowrap" }, eye === "right" ? "R " : "L ",
    fig(result, `${geometry}.reading_point.${eye}.in_mm`, inOut), ", ", fig(result, `${geometry}.reading_point.${eye}.up_mm`, upDown));
  return [
    el("div", { class: "zkey" },
      card("At distance", fig(result, `${z}.at_distance.vertical_base_up_right`, netVertical),
        fig(result, `${z}.at_distance.horizontal_base_in`, netHorizontal), null),
      card("At the reading point", fig(result, `${z}.at_reading_point.vertical_base_up_right`, netVertical),
        fig(result, `${z}.at_reading_point.horizontal_base_in`, netHorizontal),
        verdict(result, `${z}.over_threshold_at_reading_point`, "at or over the threshold", "under the threshold", false)),
      el("div", { class: "zkey-card zkey-threshold" }, el("h4", { text: "Threshold (vertical)" }),
        el("p", { class: "zkey-v" }, fig(result, `${z}.threshold.vertical`, prism)),
        el("p", { class: "zkey-h" }, "Reached: ", reached))),
    el("dl", { class: "facts zfacts" },
      factRow("Reading point", fig(result, `${geometry}.rule`, (v) => RULE_WORDS[v] || v), ": ", point("right"), " · ",
        point("left"), " mm from each reference point"),
      factRow("Reading drop", fig(result, `${geometry}.reading_drop_mm`, mm), " below the primary position; near inset R ",
        fig(result, `${geometry}.near_inset_mm.right`, mm), " · L ", fig(result, `${geometry}.near_inset_mm.left`, mm)),
      factRow("Worn as", fig(result, `${geometry}.worn_as`, (v) => WORN_WORDS[v] || v),
        zone.geometry.fitting_assumed ? el("span", { class: "zwarn-inline" }, " · no fitting given: the core assumed PDs (",
          fig(result, `${geometry}.fitting_assumed`, () => "assumed"), ")") : null)),
  ];
}

// ---------------------------------------------------------------- the map
// The map in one sentence, as figures tagged with their keys (a node), and as plain text.
function summary(result, mode) {
  const zone = result.reading_zone;
  const f = (key, format) => fig(result, key, format);
  const z = "reading_zone";
  let parts;
  if (mode === "horizontal") {
    parts = ["Net horizontal prism over the lower lenses, from the primary position down ",
      f(`${z}.map.drop_mm.${zone.map.drop_mm.length - 1}`, mm), " and ",
      f(`${z}.map.lateral_mm.0`, (v) => fixed(0)(Math.abs(v))), " mm to each side: ",
      f(`${z}.at_distance.horizontal_base_in`, netHorizontal), " at distance, ",
      f(`${z}.at_reading_point.horizontal_base_in`, netHorizontal), " at the reading point; up to ",
      f(`${z}.map.scale.horizontal_max_abs`, prism), " on the map."];
  } else {
    const drop = zone.threshold_drop_mm;
    const threshold = () => f(`${z}.threshold.vertical`, prism);
    const reach = drop === null || drop === undefined ? ["It stays under the ", threshold(), " threshold down the reading path."]
      : drop === 0 ? ["It is at or over the ", threshold(), " threshold already in the primary position."]
        : ["It reaches the ", threshold(), " threshold ", f(`${z}.threshold_drop_mm`, mm), " below the primary position."];
    parts = ["Vertical imbalance between the eyes over the lower lenses: ",
      f(`${z}.at_distance.vertical_base_up_right`, netVertical), " at distance, ",
      f(`${z}.at_reading_point.vertical_base_up_right`, netVertical), " at the reading point (",
      f(`${z}.geometry.reading_drop_mm`, mm), " down). ", ...reach, " Largest on the map: ",
      f(`${z}.map.scale.vertical_max_abs`, prism), "."];
  }
  const node = el("span", {}, ...parts);
  return { node, text: node.textContent };
}

function mapTable(result, mode) {
  const map = result.reading_zone.map;
  const key = mode === "horizontal" ? "horizontal_base_in" : "vertical_base_up_right";
  const head = el("tr", {}, el("th", { scope: "col", text: "Drop mm \\ turn mm" }),
    ...map.lateral_mm.map((_, j) => el("th", { scope: "col" }, fig(result, `reading_zone.map.lateral_mm.${j}`, (v) => fixed(1)(v)))));
  const rows = map.drop_mm.map((_, i) => el("tr", {},
    el("th", { scope: "row" }, fig(result, `reading_zone.map.drop_mm.${i}`, (v) => fixed(1)(v))),
    ...map.lateral_mm.map((_, j) => el("td", {}, fig(result, `reading_zone.map.${key}.${i}.${j}`, signed)))));
  return el("table", { class: "zmap-table" },
    el("caption", { text: mode === "horizontal"
      ? "Net horizontal prism, Δ (+ base in, − base out); rows: drop below the primary position; columns: turn toward the wearer's right (+)"
      : "Net vertical prism, Δ (+ base up before the right eye, − base up before the left); rows: drop below the primary position; columns: turn toward the wearer's right (+)" }),
    el("thead", {}, head), el("tbody", {}, ...rows));
}

function legend(result, mode) {
  const zone = result.reading_zone;
  const horizontal = mode === "horizontal";
  const maxKey = horizontal ? "reading_zone.map.scale.horizontal_max_abs" : "reading_zone.map.scale.vertical_max_abs";
  const ends = el("div", { class: "zscale-ends" },
    el("span", {}, "−", fig(result, maxKey, prism), el("br"), horizontal ? "base out" : "base up before the LEFT eye"),
    el("span", { class: "zscale-mid", text: "0" }),
    el("span", {}, "+", fig(result, maxKey, prism), el("br"), horizontal ? "base in" : "base up before the RIGHT eye"));
  const items = [
    ["zkey-ring", "Reading point"],
  ];
  if (!horizontal) {
    items.push(["zkey-contour", "Thick line: the threshold; past it the imbalance is at or over the threshold"]);
    items.push(["zkey-hatch", "Hatched: at or over the threshold (/ base up right eye, \\ base up left eye)"]);
    if (zone.threshold_drop_mm !== null && zone.threshold_drop_mm !== undefined) {
      items.push(["zkey-diamond", "Diamond and dashed line: where the reading path reaches the threshold"]);
    }
  } else {
    items.push(["zkey-hatch", "Hatched: net base out"]);
  }
  items.push(["zkey-dots", "Dotted: a lens zone changes (segment top, corridor) for either eye"]);
  return el("div", { class: "zlegend" },
    drawScale(get(result, maxKey), horizontal ? null : zone.threshold.vertical, mode),
    ends,
    el("ul", { class: "zlegend-items" }, ...items.map(([cls, text]) =>
      el("li", {}, el("span", { class: `zkey-mark ${cls}`, "aria-hidden": "true" }), text))));
}

function mapFigure(result, state, rerender) {
  const zone = result.reading_zone;
  const mode = state.mode;
  const readout = el("p", { class: "zmap-readout", id: "zmap-readout", "aria-live": "polite" });
  const showPick = () => {
    const pick = state.pick;
    const map = zone.map;
    if (!pick || pick.i >= map.drop_mm.length || pick.j >= map.lateral_mm.length) {
      readout.replaceChildren("Tap a square to read its value.");
      return;
    }
    const key = mode === "horizontal" ? "horizontal_base_in" : "vertical_base_up_right";
    const i = pick.i;
    const j = pick.j;
    readout.replaceChildren(
      fig(result, `reading_zone.map.drop_mm.${i}`, mm), " down, ",
      fig(result, `reading_zone.map.lateral_mm.${j}`, (v) => Number(fixed(1)(v)) === 0 ? "straight ahead"
        : `${fixed(1)(Math.abs(v))} mm toward the wearer's ${v > 0 ? "right" : "left"}`), ": ",
      el("strong", {}, fig(result, `reading_zone.map.${key}.${i}.${j}`, mode === "horizontal" ? netHorizontal : netVertical)),
      " · zones R ", fig(result, `reading_zone.map.zones.right.${i}.${j}`), ", L ", fig(result, `reading_zone.map.zones.left.${i}.${j}`));
  };
  const svgNode = drawMap(zone, mode, { onPick: (i, j) => { state.pick = { i, j }; showPick(); } });
  const sentence = summary(result, mode);
  svgNode.setAttribute("role", "img");
  svgNode.setAttribute("aria-label", sentence.text);
  showPick();

  const toggle = el("div", { class: "zseg", role: "group", "aria-labelledby": "zseg-label" },
    ...[["vertical", "Vertical"], ["horizontal", "Horizontal"]].map(([value, text]) => {
      const button = el("button", { type: "button", class: "zseg-btn", "aria-pressed": String(mode === value),
        "data-map-mode": value, text });
      button.addEventListener("click", () => {
        if (state.mode === value) return;
        state.mode = value;
        rerender(`[data-map-mode="${value}"]`);
      });
      return button;
    }));
  const tableId = "zmap-table-region";
  const tableButton = el("button", { type: "button", class: "secondary ztable-toggle", "aria-expanded": String(state.table),
    "aria-controls": tableId, text: state.table ? "Hide the table of values" : "Show the values as a table" });
  tableButton.addEventListener("click", () => {
    state.table = !state.table;
    rerender(".ztable-toggle");
  });
  const region = el("div", { class: "ztable-scroll", id: tableId, role: "region", "aria-label": "Map values", tabindex: "0" });
  region.hidden = !state.table;
  if (state.table) region.append(mapTable(result, mode));

  return el("figure", { class: "zmap", "aria-labelledby": "zmap-caption" },
    el("div", { class: "zseg-row" }, el("span", { id: "zseg-label", class: "zseg-label", text: "Map of the net prism:" }), toggle),
    el("div", { class: "zmap-axis-top", "aria-hidden": "true" },
      el("span", { text: "← wearer's left" }), el("span", { text: "turn, mm" }), el("span", { text: "wearer's right →" })),
    el("div", { class: "zmap-frame" },
      el("span", { class: "zmap-axis-side", "aria-hidden": "true", text: "drop below the primary position, mm ↓" }),
      svgNode),
    readout,
    legend(result, mode),
    el("figcaption", { id: "zmap-caption", class: "zmap-caption" }, sentence.node,
      " Seen as the wearer looks through the lenses; the eyes converge as they drop."),
    tableButton, region);
}

// ---------------------------------------------------------------- designs, jump, sensitivity
function designBlock(result, eye) {
  const d = `reading_zone.designs.${eye}`;
  const design = get(result, d);
  const dl = el("dl", { class: "facts zfacts" });
  const kind = { single_vision: "Single vision", bifocal: "Bifocal", progressive: "Progressive" };
  dl.append(factRow("Design", fig(result, `${d}.kind`, (v) => kind[v] || v),
    design.add ? el("span", {}, ", add ", fig(result, `${d}.add`, dioptres)) : null));
  if (design.kind === "bifocal") {
    const shapes = { round: "round", flat_top: "flat-top", straight_across: "straight-across" };
    dl.append(factRow("Segment", design.shape ? fig(result, `${d}.shape`, (v) => shapes[v] || v) : "shape not given",
      design.size_mm !== null && design.size_mm !== undefined ? el("span", {}, " ", fig(result, `${d}.size_mm`, mm)) : null,
      design.segment_depth_mm !== null && design.segment_depth_mm !== undefined
        ? el("span", {}, ", ", fig(result, `${d}.segment_depth_mm`, mm), " deep") : null));
    dl.append(factRow("Segment top", fig(result, `${d}.top_mm`, below)));
    dl.append(factRow("Segment optical centre", fig(result, `${d}.optical_centre_below_top_mm`, mm), " below the top (",
      fig(result, `${d}.optical_centre.in_mm`, inOut), ", ", fig(result, `${d}.optical_centre.up_mm`, upDown), " mm); ",
      fig(result, `${d}.optical_centre_rule`)));
  } else if (design.kind === "progressive") {
    dl.append(factRow("Fitting cross", fig(result, `${d}.fitting_cross.up_mm`, mm), " above the PRP"));
    dl.append(factRow("Near reference point", fig(result, `${d}.near_reference_point.in_mm`, inOut), ", ",
      fig(result, `${d}.near_reference_point.up_mm`, upDown), " mm from the PRP"));
    dl.append(factRow("Corridor", fig(result, `${d}.corridor_mm`, mm)));
    dl.append(factRow("Near inset", fig(result, `${d}.near_inset_mm`, mm), " (the eye converges ",
      fig(result, `${d}.convergence_inset_mm`, mm), ")"));
    dl.append(factRow("Thinning prism", fig(result, `${d}.thinning_prism_base_down`, prism), " base down"));
  }
  return el("div", { class: "zeye" }, el("h5", { text: EYE_WORDS[eye] + " lens" }), dl);
}

function jumpBlock(result) {
  const jump = result.reading_zone.image_jump;
  if (!jump || (!jump.right && !jump.left)) return null;
  const dl = el("dl", { class: "facts zfacts" });
  for (const eye of ["right", "left"]) {
    const p = `reading_zone.image_jump.${eye}`;
    dl.append(factRow(EYE_WORDS[eye] + " eye", jump[eye]
      ? el("span", {}, fig(result, `${p}.in_words`), " (", fig(result, `${p}.amount`, prism), ") at the segment top, ",
        fig(result, `${p}.at_up_mm`, below))
      : "no segment"));
  }
  if (jump.vertical_step_at_tops !== null && jump.vertical_step_at_tops !== undefined) {
    dl.append(factRow("Between the eyes, crossing both tops", fig(result, "reading_zone.image_jump.vertical_step_at_tops", netVertical)));
  }
  return el("div", { class: "zblock" }, el("h4", { text: "Image jump" }), dl,
    el("p", { class: "zsource", text: "The add's own prism, met on crossing the segment top." }));
}

function thinningBlock(result) {
  const thin = result.reading_zone.thinning_prism;
  if (!thin) return null;
  const p = "reading_zone.thinning_prism";
  return el("div", { class: "zblock" }, el("h4", { text: "Thinning prism" }),
    el("dl", { class: "facts zfacts" },
      factRow("Given", "R ", thin.given.right === null ? "none" : fig(result, `${p}.given.right`, prism), " · L ",
        thin.given.left === null ? "none" : fig(result, `${p}.given.left`, prism), " base down"),
      factRow("Usual amount", fig(result, `${p}.suggested_base_down`, prism), " base down")),
    el("p", { class: "zsource" }, fig(result, `${p}.note`), "; ", fig(result, `${p}.source`)));
}

function warningsBlock(result) {
  const list = result.reading_zone.warnings || [];
  if (!list.length) return null;
  return el("div", { class: "zblock" }, el("h4", { text: "Warnings" }),
    el("ul", { class: "zwarnings" }, ...list.map((_, i) => el("li", {},
      el("span", { class: "zwarn-mark", "aria-hidden": "true", text: "⚠" }),
      el("span", { class: "visually-hidden", text: "Warning: " }), fig(result, `reading_zone.warnings.${i}`)))));
}

function sensitivityBlock(result) {
  const s = result.reading_zone.sensitivity;
  if (!s) return null;
  const p = "reading_zone.sensitivity";
  const groups = [];
  const byKind = new Map();
  s.rows.forEach((row, i) => {
    if (!byKind.has(row.kind)) byKind.set(row.kind, []);
    byKind.get(row.kind).push(i);
  });
  for (const [kind, indexes] of byKind) {
    const body = el("tbody", {}, el("tr", { class: "zgroup" }, el("th", { scope: "colgroup", colspan: "4", text: KIND_WORDS[kind] || kind })));
    for (const i of indexes) {
      body.append(el("tr", {},
        el("th", { scope: "row" }, fig(result, `${p}.rows.${i}.error_mm`, (v) => errorWords(kind, v))),
        el("td", {}, fig(result, `${p}.rows.${i}.distance.vertical_change`, signed)),
        el("td", {}, fig(result, `${p}.rows.${i}.near.vertical_change`, signed)),
        el("td", {}, fig(result, `${p}.rows.${i}.near.horizontal_change`, signed))));
    }
    groups.push(body);
  }
  const table = el("table", { class: "zsens" },
    el("caption", { text: "Change in the net prism (Δ) if the lenses are fitted wrongly" }),
    el("thead", {}, el("tr", {}, el("th", { scope: "col", text: "Error" }), el("th", { scope: "col", text: "Vertical at distance" }),
      el("th", { scope: "col", text: "Vertical at the reading point" }), el("th", { scope: "col", text: "Horizontal at the reading point" })),
    el("tr", { class: "znominal" }, el("th", { scope: "row", text: "As fitted" }),
      el("td", {}, fig(result, `${p}.nominal.distance.vertical_base_up_right`, signed)),
      el("td", {}, fig(result, `${p}.nominal.near.vertical_base_up_right`, signed)),
      el("td", {}, fig(result, `${p}.nominal.near.horizontal_base_in`, signed)))),
    ...groups);
  return el("div", { class: "zsens-box" },
    el("h4", { text: "What 1 or 2 mm of fitting error would change" }),
    el("p", { class: "zhint", text: "Too high: the lens sits higher, so the eye looks lower on it. Too far out: the lens is " +
      "centred too far from the nose (monocular PD too large). Vertical: + is more base up before the right eye; " +
      "horizontal: + is more base in." }),
    el("div", { class: "ztable-scroll", role: "region", "aria-label": "Fitting-error table", tabindex: "0" }, table),
    el("p", { class: "zsource" }, "Flagged when: ", fig(result, `${p}.criteria`)));
}

// ---------------------------------------------------------------- print
function printBlock(result, doc) {
  const zone = result.reading_zone;
  const nodes = [el("h2", { class: "print-zone-title", text: "The lenses, to scale" }), lensDrawings(result, doc, "print-lens")];
  const remedies = printRemedies(result);
  if (remedies) nodes.push(el("h2", { class: "print-zone-title", text: "Remedies compared" }), remedies);
  if ((zone.warnings || []).length) {
    nodes.push(el("ul", { class: "print-warnings" }, ...zone.warnings.map((_, i) => el("li", {}, fig(result, `reading_zone.warnings.${i}`)))));
  }
  return el("section", { class: "print-zone" }, ...nodes);
}

// Where the sources of the figures are given, in one place.
function sourcesBlock(result) {
  const zone = result.reading_zone;
  const items = [el("li", {}, "Vertical imbalance threshold: ", fig(result, "reading_zone.threshold.source"))];
  if (zone.image_jump && zone.image_jump.source) items.push(el("li", {}, "Image jump: ", fig(result, "reading_zone.image_jump.source")));
  for (const eye of ["right", "left"]) {
    const design = zone.designs && zone.designs[eye];
    if (design && design.optical_centre_rule) {
      items.push(el("li", {}, `${EYE_WORDS[eye]} segment optical centre: `, fig(result, `reading_zone.designs.${eye}.optical_centre_rule`)));
    }
  }
  if (zone.thinning_prism && zone.thinning_prism.source) {
    items.push(el("li", {}, "Thinning prism: ", fig(result, "reading_zone.thinning_prism.source")));
  }
  return el("ul", { class: "zsources" }, ...items);
}

// ---------------------------------------------------------------- wiring
// host: {caseForm, loadCase(doc, message), say(text), form, results, statusLine, body}
export function setUpZone(host) {
  addPathWords(ZONE_PATH_WORDS);
  const part = new ZoneFormPart(host.form);
  host.caseForm.parts.push(part);
  const state = { mode: "vertical", table: false, pick: null, previous: null, focusBanner: false, last: null };

  // The "applied" banner sits outside the result body, so that going back stays
  // possible even when the applied case cannot be shown.
  const banner = el("div", { class: "zapplied", id: "zone-applied", role: "status", tabindex: "-1" });
  banner.hidden = true;
  host.statusLine.after(banner);
  const showBanner = () => {
    const prev = state.previous;
    banner.hidden = !prev;
    if (!prev) {
      banner.replaceChildren();
      return;
    }
    const back = el("button", { type: "button", class: "secondary", id: "zone-undo", text: "Back to the case before" });
    back.addEventListener("click", undo);
    banner.replaceChildren(el("p", {}, el("strong", { text: "Applied: " + prev.name + ". " }),
      "The form holds the finished case; every figure is worked out for it."), back);
  };
  const forget = () => {
    state.previous = null;
    showBanner();
  };
  for (const id of ["new-case", "open-saved"]) document.getElementById(id)?.addEventListener("click", forget);
  document.getElementById("import-file")?.addEventListener("change", forget);
  window.addEventListener("hashchange", forget);

  function apply(option) {
    const status = host.results.dataset.status;
    if (status !== "current") {
      host.say(status === "pending" ? "Working out the figures; try again in a moment."
        : "Correct the marked field first: the remedies shown are for the last valid input.");
      return;
    }
    const { doc } = host.caseForm.collect();
    state.previous = { doc, name: option.name, id: option.id, typed: host.typed() };
    state.focusBanner = true;
    showBanner();
    host.loadCase(structuredClone(option.applied_case), `Applied ${option.name}; “Back to the case before” undoes it.`,
      { push: true });
    banner.focus();
  }

  function undo() {
    const prev = state.previous;
    if (!prev) return;
    forget();
    host.loadCase(prev.doc, `Back to the case before: ${prev.name.toLowerCase()} taken out.`, { typed: prev.typed });
    host.results.focus();
  }

  function render(result, refocus) {
    state.last = result;
    const body = host.body;
    showInUse(result);
    const sec = (id) => body.querySelector("#" + id);
    for (const id of ["sec-map", "sec-remedies", "sec-errors", "sec-sources"]) {
      const node = sec(id);
      if (node) node.hidden = !result.reading_zone;
    }
    if (!result.reading_zone) return;
    const rerender = (selector) => render(state.last, selector);
    // A folded section's figures come when it is opened (the page then asks for them).
    const pending = () => el("p", { class: "sec-pending", text: "Working out this section…" });
    const zone = result.reading_zone;
    const section = !zone.map ? el("section", { class: "zone", id: "zone-section" }, pending())
      : el("section", { class: "zone", id: "zone-section", "aria-label": "Reading zone" },
      ...keyFigures(result),
      mapFigure(result, state, rerender),
      el("div", { class: "zblock" }, el("h4", { text: "Lens designs" }), lensDrawings(result, state.doc || {}),
        el("div", { class: "zeyes" }, designBlock(result, "right"), designBlock(result, "left"))),
      jumpBlock(result), thinningBlock(result), warningsBlock(result));
    sec("sec-map").querySelector("#zone-section")?.remove();
    sec("sec-map").append(section);
    const sideBySide = result.remedies && result.remedies.options.every((o) => o);
    const remedies = !result.remedies ? null
      : sideBySide ? renderRemedies(result, { onApply: apply })
        : el("div", { id: "zone-remedies" }, pending());
    sec("sec-remedies").querySelector("#zone-remedies")?.remove();
    if (remedies) sec("sec-remedies").append(remedies);
    else sec("sec-remedies").hidden = true;
    const errors = zone.sensitivity ? sensitivityBlock(result) : el("div", {}, pending());
    if (errors) sec("sec-errors").append(errors);
    else sec("sec-errors").hidden = true;
    sec("sec-sources").append(sourcesBlock(result));
    for (const details of body.querySelectorAll("#zone-section details[data-remember], #zone-remedies details[data-remember]")) {
      if (state.open && state.open.has(details.dataset.remember)) details.open = true;
      details.addEventListener("toggle", () => {
        state.open ||= new Set();
        if (details.open) state.open.add(details.dataset.remember);
        else state.open.delete(details.dataset.remember);
      });
    }
    if (refocus) body.querySelector(refocus)?.focus();
  }

  function showInUse(result) {
    const zone = result.reading_zone;
    const options = result.remedies ? result.remedies.options : [];
    const index = (id) => options.findIndex((o) => o && o.id === id);
    const slab = index("slab_off");
    const lower = index("lower_centres");
    const parts = {};
    if (zone) {
      parts.threshold = ["In use: ", fig(result, "reading_zone.threshold.vertical", prism), " – ",
        fig(result, "reading_zone.threshold.source")];
    }
    if (slab >= 0 && options[slab].details && options[slab].details.correct_fraction !== undefined) {
      parts.correct_fraction = ["In use: ", fig(result, `remedies.options.${slab}.details.correct_fraction`, fixed(2))];
      parts.lab_step = ["In use: ", fig(result, `remedies.options.${slab}.details.lab_step`, (v) => `${v} Δ`)];
    }
    if (lower >= 0 && options[lower].details && options[lower].details.lowered_mm !== undefined) {
      parts.lower_centres_mm = ["In use: ", fig(result, `remedies.options.${lower}.details.lowered_mm`, mm), " – ",
        fig(result, `remedies.options.${lower}.details.chosen_by`)];
    }
    part.showInUse(parts);
  }

  // The printed reading zone: its own block after the case summary (print CSS shows
  // every .print-summary), drawn when printing starts, from the figures on screen.
  const printNode = el("div", { class: "print-summary print-zone", id: "print-zone" });
  (document.getElementById("print-summary") || document.body.lastElementChild).after(printNode);
  window.addEventListener("beforeprint", () => {
    const result = state.last;
    printNode.replaceChildren(...(result && result.reading_zone ? [printBlock(result, state.doc || {})] : []));
  });
  window.addEventListener("afterprint", () => printNode.replaceChildren());

  return {
    apply,
    // The remedy applied to this case (for the printed order note), else null.
    chosen: () => (state.previous ? { id: state.previous.id, name: state.previous.name } : null),
    render(result, doc) {
      state.doc = doc;
      render(result);
      if (state.focusBanner) {
        state.focusBanner = false;
        if (!banner.hidden) banner.focus();
      }
    },
  };
}
