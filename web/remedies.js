// Remedies side by side (result section `remedies`): what each leaves at
// distance and at the reading point, whether that is within the threshold,
// the suggested one, slab-off details, why an option does not apply, and the
// cautions beside each. "Apply" loads the option's finished case
// (`applied_case`) into the form; the case before is kept for one-step undo.
import {
  EYE_WORDS, below, dioptres, el, factRow, fig, fixed, get, mm, netHorizontal, netVertical, prism, signed, verdict,
} from "./zone-common.js";

const EYES = ["right", "left"];

function detailsSlabOff(result, base, option) {
  const d = `${base}.details`;
  const details = option.details || {};
  const dl = el("dl", { class: "facts zfacts" });
  if (details.eye) dl.append(factRow("On the lens", fig(result, `${d}.eye`, (v) => `${v} lens`), " · base ", fig(result, `${d}.base`)));
  if (details.raw !== undefined) {
    dl.append(factRow("Needed (raw)", fig(result, `${d}.raw`, prism), " = ", fig(result, `${d}.correct_fraction`, fixed(2)),
      " × the reading-point imbalance"));
  }
  if (details.rounded !== undefined) {
    dl.append(factRow("To order", fig(result, `${d}.rounded`, prism), " (rounded to the ", fig(result, `${d}.lab_step`, (v) => `${v} Δ`),
      " lab step)"));
  }
  if (details.line_mm !== undefined) {
    dl.append(factRow("Slab line", fig(result, `${d}.line_mm`, (v) => below(v)), " the distance reference point, ",
      fig(result, `${d}.line_placed`)));
  }
  if (details.base_up !== undefined) {
    dl.append(factRow("In the case", "slab-off base up ", fig(result, `${d}.base_up`, (v) => signed(v) + " Δ"),
      " on the ", fig(result, `${d}.eye`), " lens"));
  }
  if (details.vertical_powers) {
    dl.append(factRow("Vertical powers", "R ", fig(result, `${d}.vertical_powers.right`, dioptres), " · L ",
      fig(result, `${d}.vertical_powers.left`, dioptres)));
  }
  if (details.usual_lens_by_vertical_power) {
    dl.append(factRow("Usual lens by vertical power", fig(result, `${d}.usual_lens_by_vertical_power`)));
  }
  return dl;
}

function detailsDissimilar(result, base, option) {
  const d = `${base}.details`;
  const list = (option.details && option.details.options) || [];
  if (!list.length) return null;
  const dl = el("dl", { class: "facts zfacts" });
  list.forEach((item, i) => {
    const o = `${d}.options.${i}`;
    const chosen = item.eye === option.details.chosen;
    dl.append(factRow(`${EYE_WORDS[item.eye] || item.eye} segment${chosen ? " (chosen)" : ""}`,
      fig(result, `${o}.kind`), ": ", fig(result, `${o}.from_mm`, mm), " → ", fig(result, `${o}.to_mm`, mm),
      "; within usual sizes: ", fig(result, `${o}.feasible`, (v) => (v ? "yes" : "no")),
      "; image jump ", fig(result, `${o}.image_jump`, prism)));
  });
  return [el("p", { class: "zhint", text: "Either segment could change; the smaller change is chosen." }), dl];
}

function detailsLowered(result, base, option) {
  const d = `${base}.details`;
  const details = option.details || {};
  const dl = el("dl", { class: "facts zfacts" });
  if (details.lowered_mm !== undefined) {
    dl.append(factRow("Centres lowered", fig(result, `${d}.lowered_mm`, mm), " · ", fig(result, `${d}.chosen_by`)));
  }
  if (details.vertical_change_per_mm !== undefined) {
    dl.append(factRow("Trade per mm", fig(result, `${d}.vertical_change_per_mm`, (v) => signed(v) + " Δ")));
  }
  if (details.prism_by_decentration) {
    for (const eye of EYES) {
      dl.append(factRow(`${EYE_WORDS[eye]} prism by decentration`, fig(result, `${d}.prism_by_decentration.${eye}.in_words`)));
    }
  }
  const out = [dl];
  if (Array.isArray(details.trade) && details.trade.length) {
    const rows = details.trade.map((_, i) => el("tr", {},
      el("th", { scope: "row" }, fig(result, `${d}.trade.${i}.lowered_mm`, mm)),
      el("td", {}, fig(result, `${d}.trade.${i}.distance`, signed)),
      el("td", {}, fig(result, `${d}.trade.${i}.near`, signed))));
    out.push(el("details", { class: "zmore", "data-remember": `${base}.trade` },
      el("summary", { text: "Distance against near, mm by mm" }),
      el("div", { class: "ztable-scroll", role: "region", "aria-label": "Distance against near, mm by mm", tabindex: "0" }, el("table", { class: "zsmall" },
        el("thead", {}, el("tr", {}, el("th", { scope: "col", text: "Lowered" }),
          el("th", { scope: "col", text: "Distance Δ" }), el("th", { scope: "col", text: "Reading point Δ" }))),
        el("tbody", {}, ...rows)))));
  }
  return out;
}

function detailsNearPrism(result, base, option) {
  const d = `${base}.details`;
  const details = option.details || {};
  const dl = el("dl", { class: "facts zfacts" });
  if (details.imbalance_without_prism !== undefined) {
    dl.append(factRow("Imbalance without prism", fig(result, `${d}.imbalance_without_prism`, netVertical)));
  }
  if (details.prism_total !== undefined) {
    dl.append(factRow("Prism in all", fig(result, `${d}.prism_total`, prism), " (", fig(result, `${d}.lab_step`, (v) => `${v} Δ`), " lab step)"));
  }
  if (details.prism) {
    for (const eye of EYES) dl.append(factRow(`${EYE_WORDS[eye]} eye`, fig(result, `${d}.prism.${eye}.in_words`)));
  }
  return dl;
}

function detailsReaders(result, base, option) {
  const d = `${base}.details`;
  const details = option.details || {};
  const dl = el("dl", { class: "facts zfacts" });
  if (details.near_prescription) {
    for (const eye of EYES) dl.append(factRow(`${EYE_WORDS[eye]} near lens`, fig(result, `${d}.near_prescription.${eye}`)));
  }
  if (details.vertical_change_per_mm_from_reading_point !== undefined) {
    dl.append(factRow("Away from the reading point", fig(result, `${d}.vertical_change_per_mm_from_reading_point`, prism), " per mm up or down"));
  }
  return dl;
}

// Any other details: every plain value, labelled by its key.
function detailsGeneric(result, base, option) {
  const dl = el("dl", { class: "facts zfacts" });
  const walk = (value, path, label) => {
    if (Array.isArray(value) || (value && typeof value === "object")) {
      for (const [k, v] of Object.entries(value)) walk(v, `${path}.${k}`, (label ? label + " · " : "") + k.replace(/_/g, " "));
    } else if (value !== null && value !== undefined) {
      dl.append(factRow(label, fig(result, path, typeof value === "number" ? fixed(2) : null)));
    }
  };
  walk(option.details || {}, `${base}.details`, "");
  return dl.children.length ? dl : null;
}

const DETAILS = {
  slab_off: detailsSlabOff, reverse_slab: detailsSlabOff, dissimilar_segments: detailsDissimilar,
  lower_centres: detailsLowered, near_prism_split: detailsNearPrism, reading_spectacles: detailsReaders,
  none: () => null, contact_lenses: detailsGeneric,
};

function place(result, base, where, label) {
  const part = get(result, `${base}.${where}`);
  if (!part) return null;
  const from = part.from && part.from !== "finished case"
    ? el("span", { class: "zfrom" }, " (", fig(result, `${base}.${where}.from`), ")") : null;
  return el("div", { class: "zplace" },
    el("span", { class: "zplace-label", text: label }),
    el("span", { class: "zplace-value" }, fig(result, `${base}.${where}.vertical_base_up_right`, netVertical)),
    verdict(result, `${base}.within_threshold.${where}`, "within the threshold", "over the threshold"),
    el("span", { class: "zplace-h" }, "horizontal ", fig(result, `${base}.${where}.horizontal_base_in`, netHorizontal)),
    from);
}

// Cautions every available remedy carries are shown once for all; a card
// carries only the cautions that differ.
function commonCautions(section) {
  const lists = section.options.filter((o) => o.available && Array.isArray(o.cautions)).map((o) => new Set(o.cautions));
  if (!lists.length) return new Set();
  return new Set([...lists[0]].filter((text) => lists.every((set) => set.has(text))));
}

function card(result, i, onApply, common = new Set()) {
  const base = `remedies.options.${i}`;
  const option = result.remedies.options[i];
  const headingId = `zrem-${option.id}`;
  const badges = el("p", { class: "zbadges" });
  if (option.recommended) {
    badges.append(el("span", { class: "zbadge is-suggested", "data-key": `${base}.recommended`, "data-value": "true" },
      el("span", { class: "zbadge-mark", "aria-hidden": "true", text: "★" }), "Suggested"));
  }
  if (!option.available) {
    badges.append(el("span", { class: "zbadge is-na", "data-key": `${base}.available`, "data-value": "false" }, "Does not apply"));
  }
  const node = el("li", { class: `zcard${option.recommended ? " is-suggested" : ""}${option.available ? "" : " is-na"}`,
    "data-remedy": option.id, "aria-labelledby": headingId, id: `zcard-${option.id}`, tabindex: "-1" },
  el("h4", { id: headingId }, fig(result, `${base}.name`)), badges.children.length ? badges : null);
  if (!option.available) {
    node.append(el("p", { class: "zwhy" }, el("strong", { text: "Why not: " }), fig(result, `${base}.why_not`)));
    return node;
  }
  node.append(
    el("div", { class: "zplaces" }, place(result, base, "distance", "At distance"),
      place(result, base, "near", "At the reading point")),
    el("p", { class: "zsummary" }, fig(result, `${base}.summary`)),
    ...orderLineNodes(result, base, option));
  const details = (DETAILS[option.id] || detailsGeneric)(result, base, option);
  for (const part of [].concat(details || [])) if (part) node.append(part);
  if (option.changes && option.changes.length) {
    node.append(el("ul", { class: "zchanges" }, ...option.changes.map((_, k) => el("li", {}, fig(result, `${base}.changes.${k}`)))));
  }
  if (option.warnings && option.warnings.length) {
    node.append(el("ul", { class: "zwarnings" }, ...option.warnings.map((_, k) =>
      el("li", {}, el("span", { class: "zwarn-mark", "aria-hidden": "true", text: "⚠" }),
        el("span", { class: "visually-hidden", text: "Warning: " }), fig(result, `${base}.warnings.${k}`)))));
  }
  const own = (option.cautions || []).map((text, k) => [text, k]).filter(([text]) => !common.has(text));
  if (own.length) {
    node.append(el("ul", { class: "zcautions", "aria-label": "Cautions for this remedy" },
      ...own.map(([, k]) => el("li", {}, fig(result, `${base}.cautions.${k}`)))));
  }
  if (option.applied_case && option.id !== "none") {
    const button = el("button", { type: "button", class: "zapply", "data-apply": option.id,
      "aria-describedby": headingId, text: "Apply to the case" });
    button.addEventListener("click", () => onApply(option));
    node.append(button);
  }
  return node;
}

// The core's order lines, when it gives them (one per lens affected).
function orderLineNodes(result, base, option) {
  if (!Array.isArray(option.order_lines) || !option.order_lines.length) return [];
  return [el("p", { class: "zorder" }, el("strong", { text: "Order: " }),
    ...option.order_lines.flatMap((_, k) => [k ? el("br") : null, fig(result, `${base}.order_lines.${k}`)]))];
}

// All options at a glance: what each leaves at distance and at the reading point.
function glance(result) {
  const options = result.remedies.options;
  const cell = (base, where) => el("td", { class: "znum" },
    fig(result, `${base}.${where}.vertical_base_up_right`, signed), " ",
    verdict(result, `${base}.within_threshold.${where}`, "within", "over"));
  const rows = options.map((option, i) => {
    const base = `remedies.options.${i}`;
    const name = el("a", { href: `#zcard-${option.id}` }, fig(result, `${base}.name`));
    const head = el("th", { scope: "row" }, name, option.recommended ? el("span", { class: "zstar" },
      el("span", { "aria-hidden": "true", text: " ★" }), el("span", { class: "visually-hidden", text: " (suggested)" })) : null);
    if (!option.available) {
      return el("tr", { class: "is-na" }, head, el("td", { colspan: "2", class: "zna", text: "does not apply" }));
    }
    return el("tr", { class: option.recommended ? "is-suggested" : null }, head, cell(base, "distance"), cell(base, "near"));
  });
  return el("div", { class: "ztable-scroll", role: "region", "aria-label": "Remedies at a glance", tabindex: "0" }, el("table", { class: "zglance" },
    el("caption", { text: "Net vertical prism, Δ: + base up before the right eye, − before the left. ★ suggested." }),
    el("thead", {}, el("tr", {}, el("th", { scope: "col", text: "Remedy" }), el("th", { scope: "col", text: "Distance" }),
      el("th", { scope: "col", text: "Reading point" }))),
    el("tbody", {}, ...rows)));
}

export function renderRemedies(result, { onApply }) {
  const section = result.remedies;
  if (!section) return null;
  const suggested = section.options.findIndex((o) => o.id === section.recommended);
  const lead = el("p", { class: "zlead" }, "Before any change: at distance ",
    fig(result, "remedies.before.distance", netVertical), "; at the reading point ",
    fig(result, "remedies.before.near", netVertical), ". Threshold ", fig(result, "remedies.threshold", prism), ".");
  const pick = el("p", { class: "zpick" }, el("strong", { text: "Suggested: " }),
    suggested >= 0 ? fig(result, `remedies.options.${suggested}.name`) : fig(result, "remedies.recommended"),
    " – a suggestion; the choice is the practitioner's.");
  const common = commonCautions(section);
  const list = el("ol", { class: "zcards" }, ...section.options.map((_, i) => card(result, i, onApply, common)));
  const cautions = el("ul", { class: "zcautions zall" }, ...(section.cautions || []).map((_, k) =>
    el("li", {}, fig(result, `remedies.cautions.${k}`))));
  return el("section", { class: "zremedies", id: "zone-remedies", "aria-labelledby": "h-remedies" },
    el("h3", { id: "h-remedies", text: "Remedies side by side" }),
    lead, pick, glance(result),
    el("p", { class: "zhint", text: "Vertical figures: net prism between the eyes. “Apply” puts the finished case in the " +
      "form so that every figure is worked out for it; you can go back to the case before in one step." }),
    list,
    el("div", { class: "zcautions-box" }, el("h4", { text: "Before acting on a remedy" }), cautions));
}

// A compact table of the remedies for the printed summary.
export function printRemedies(result) {
  const section = result.remedies;
  if (!section) return null;
  const rows = section.options.map((option, i) => {
    const base = `remedies.options.${i}`;
    if (!option) return null; // not worked out in a live answer
    if (!option.available) {
      return el("tr", {}, el("th", { scope: "row" }, fig(result, `${base}.name`)),
        el("td", { colspan: "3" }, "does not apply: ", fig(result, `${base}.why_not`)));
    }
    return el("tr", {},
      el("th", { scope: "row" }, fig(result, `${base}.name`), option.recommended ? " (suggested)" : ""),
      el("td", {}, fig(result, `${base}.distance.vertical_base_up_right`, netVertical)),
      el("td", {}, fig(result, `${base}.near.vertical_base_up_right`, netVertical)),
      el("td", {}, fig(result, `${base}.summary`)));
  });
  return el("table", { class: "print-remedies" },
    el("thead", {}, el("tr", {}, ...["Remedy", "At distance", "At the reading point", "What it is"].map((t) =>
      el("th", { scope: "col", text: t })))),
    el("tbody", {}, ...rows.filter(Boolean)));
}
