// Pair check: a finished pair (or single unmounted lenses) against a standard's
// tolerances: prism, powers, cylinder, axis, add and segment / fitting-cross positions. Builds the verification document (docs/case-format.md,
// "## Verification") from the form and draws the core's verdicts.
import {
  Calculation, answerSlot, button, checkScreen, cautionsBox, collect, el, eyeGrid, factRow, facts, field, fig, fixed, inOut,
  loadSaved, prismFigures, prismText, restoreFormDraft, resultsPanel, rxText, saveFormDraft, selectField,
  signed, standingCaution, upDown, withUnit, words,
} from "../checks-common.js";
import * as store from "../store.js";

const LENS_TYPES = [["single_vision", "Single vision"], ["multifocal", "Multifocal (segment)"], ["progressive", "Progressive"]];
const MOUNTINGS = [["mounted", "Mounted pair"], ["unmounted", "Unmounted lenses (each judged alone)"]];
const READINGS = [["total", "Total for the pair"], ["per_eye", "Each lens on its own"]];
const STATUS_WORDS = { pass: "PASS", fail: "FAIL", incomplete: "INCOMPLETE", not_judged: "NOT JUDGED",
  not_defined: "NOT DEFINED" };
const EYE = { right: "Right", left: "Left" };

export function createVerifyScreen({ messenger, firstResult }) {
  const form = el("form", { class: "check-inputs", id: "vf-form", novalidate: "", autocomplete: "off" });
  const standardSelect = selectField({ id: "vf-standard", label: "Standard", path: "standard", wide: true,
    options: [["ansi-z80.1-2015", "ANSI Z80.1-2015"]] });
  const standardInfo = el("div", { class: "standard-info", id: "vf-standard-info", "data-action": "verify_standards",
    "aria-live": "polite" });
  const thinning = field({ id: "vf-thinning", label: "Thinning prism", hint: "base down, Δ, both lenses; progressive only",
    path: "thinning_base_down" });

  // ---------------------------------------------------------------- the form
  form.append(
    el("section", { class: "panel", "aria-labelledby": "vf-h-std" },
      el("h3", { id: "vf-h-std", text: "Standard and lenses" }),
      el("div", { class: "fields two" },
        standardSelect,
        selectField({ id: "vf-lens-type", label: "Lens type", path: "lens_type", options: LENS_TYPES }),
        selectField({ id: "vf-mounting", label: "Mounting", path: "mounting", options: MOUNTINGS }),
        selectField({ id: "vf-reading", label: "Horizontal reading", hint: "which one the verdict uses",
          path: "horizontal_reading", options: READINGS }),
        thinning),
      standardInfo),
    el("section", { class: "panel", "aria-labelledby": "vf-h-ordered" },
      el("div", { class: "panel-head" },
        el("h3", { id: "vf-h-ordered", text: "As ordered" }),
        button("Use the case's prescription", { class: "secondary", id: "vf-from-case" })),
      el("p", { class: "hint", id: "vf-case-note", role: "status" }),
      eyeGrid("vf-ord", "As ordered", [
        { key: "rx", label: "Prescription", hint: "e.g. -4.00 / -0.50 x 180", kind: "text", path: (e) => `ordered.${e}.rx` },
        { key: "prism", label: "Prescribed prism", hint: "e.g. 1 BI, 0.5 BU", kind: "text", path: (e) => `ordered.${e}.prism` },
        { key: "pd", label: "Monocular PD", hint: "mm, bridge centre to PRP", path: (e) => `ordered.${e}.mono_pd_mm` },
        { key: "height", label: "PRP height", hint: "mm above the lowest point of the lens shape", path: (e) => `ordered.${e}.height_mm` },
        { key: "add", label: "Add", hint: "D; multifocal or progressive", path: (e) => `ordered.${e}.add` },
        { key: "seg-height", label: "Segment height", hint: "mm, segment top above the lowest point of the lens shape",
          path: (e) => `ordered.${e}.segment.height_mm` },
        { key: "seg-pd", label: "Segment centre across", hint: "mm from the bridge centre (near monocular PD)",
          path: (e) => `ordered.${e}.segment.mono_pd_mm` },
        { key: "fc-height", label: "Fitting-cross height", hint: "mm above the lowest point of the lens shape",
          path: (e) => `ordered.${e}.fitting_cross_height_mm` },
      ]),
      el("div", { class: "fields two mounted-only" },
        field({ id: "vf-ordered-pd", label: "Ordered PD for the pair", hint: "mm; only without monocular PDs",
          path: "ordered.pd_mm" }))),
    el("section", { class: "panel", "aria-labelledby": "vf-h-measured" },
      el("h3", { id: "vf-h-measured", text: "As measured on the finished pair" }),
      el("p", { class: "hint", text: "Prism read at each lens's prism reference point (PRP) or marked centre. " +
        "Leave out what you did not measure: it is taken as ordered, and the result lists every such assumption." }),
      eyeGrid("vf-mes", "As measured", [
        { key: "rx", label: "Lensmeter reading", hint: "at the PRP, either cylinder sign, e.g. -4.25 / +0.50 x 90", kind: "text",
          path: (e) => `measured.${e}.rx` },
        { key: "add", label: "Add read", hint: "D, at the near portion", path: (e) => `measured.${e}.add` },
        { key: "prism", label: "Prism found", hint: "at the PRP or marked centre, e.g. 0.25 BU 0.5 BO", kind: "text",
          path: (e) => `measured.${e}.prism` },
        { key: "pd", label: "Monocular PD", hint: "mm, bridge centre to the point read", path: (e) => `measured.${e}.mono_pd_mm` },
        { key: "height", label: "Height", hint: "mm, of the point read", path: (e) => `measured.${e}.height_mm` },
        { key: "in", label: "Point read: in", hint: "mm from the specified PRP, toward the nose; unmounted",
          path: (e) => `measured.${e}.offset.in_mm` },
        { key: "up", label: "Point read: up", hint: "mm from the specified PRP, upward; unmounted",
          path: (e) => `measured.${e}.offset.up_mm` },
        { key: "seg-height", label: "Segment height", hint: "mm, segment top above the lowest point of the lens shape",
          path: (e) => `measured.${e}.segment.height_mm` },
        { key: "seg-pd", label: "Segment centre across", hint: "mm from the bridge centre", path: (e) => `measured.${e}.segment.mono_pd_mm` },
        { key: "seg-tilt", label: "Segment tilt", hint: "degrees off level", path: (e) => `measured.${e}.segment.tilt_deg` },
        { key: "fc-height", label: "Fitting-cross height", hint: "mm above the lowest point of the lens shape",
          path: (e) => `measured.${e}.fitting_cross_height_mm` },
      ]),
      el("div", { class: "fields two mounted-only" },
        field({ id: "vf-centre-distance", label: "Distance between the centres", hint: "mm; instead of the monocular PDs",
          path: "measured.centre_distance_mm" }))),
    el("div", { class: "form-end" }, button("Clear this form", { class: "secondary", id: "vf-clear" })));

  const hint = "Enter the order and at least one measurement (the prism found at a reference point, or where the centres are) to see the verdict.";
  const results = resultsPanel({ id: "vf-results", action: "verify", title: "Verdict" });
  const band = answerSlot({ id: "vf-answer", action: "verify", label: "Verdict", prompt: hint });
  const root = el("main", { class: "screen", id: "screen-verify", "aria-labelledby": "vf-title", hidden: "" },
    el("div", { class: "screen-title" }, el("h2", { id: "vf-title", tabindex: "-1", text: "Check a finished pair" })),
    band,
    el("div", { class: "screen-intro" },
      el("p", { text: "What was ordered, what you measured, and whether the prism is within the chosen standard's tolerances." }),
      standingCaution()),
    form, results);

  // Rows that only apply to mounted pairs, or only to unmounted lenses.
  const rowInputs = (key, grid = "vf-mes") => [...form.querySelectorAll(`#${grid}-row-${key}, #${grid}-right-${key}, #${grid}-left-${key}`)];
  function applyMounting() {
    const unmounted = form.querySelector("#vf-mounting").value === "unmounted";
    const type = form.querySelector("#vf-lens-type").value;
    for (const key of ["pd", "height"]) for (const node of rowInputs(key)) node.hidden = unmounted;
    for (const key of ["in", "up"]) for (const node of rowInputs(key)) node.hidden = !unmounted;
    // Rows for the lens type: add (multifocal, progressive), segment, fitting cross.
    const shown = { add: type !== "single_vision", "seg-height": type === "multifocal" && !unmounted,
      "seg-pd": type === "multifocal" && !unmounted, "seg-tilt": type === "multifocal" && !unmounted,
      "fc-height": type === "progressive" && !unmounted };
    for (const [key, on] of Object.entries(shown)) {
      for (const grid of ["vf-ord", "vf-mes"]) for (const node of rowInputs(key, grid)) node.hidden = !on;
    }
    for (const node of form.querySelectorAll(".mounted-only")) node.hidden = unmounted;
    thinning.hidden = form.querySelector("#vf-lens-type").value !== "progressive";
    form.querySelector("#vf-reading").closest(".field").hidden = unmounted;
  }

  // ---------------------------------------------------------------- the payload
  function build() {
    const { doc, inputs, typed } = collect(form);
    // Rows hidden for this lens type or mounting are not part of the check.
    for (const input of form.querySelectorAll("input[data-path][hidden]")) dropPath(doc, input.dataset.path);
    const unmounted = doc.mounting === "unmounted";
    if (unmounted) {
      // Each lens given as ordered is judged; the other is left out.
      for (const eye of ["right", "left"]) {
        if (doc.ordered && doc.ordered[eye] === undefined && doc.measured) delete doc.measured[eye];
      }
      delete doc.horizontal_reading;
    }
    if (!doc.ordered) doc.ordered = {};
    if (!unmounted) for (const eye of ["right", "left"]) doc.ordered[eye] ||= {};
    if (!doc.measured) doc.measured = {};
    return { doc, inputs, typed };
  }

  function dropPath(doc, path) {
    const parts = path.split(".");
    const chain = [doc];
    for (const part of parts.slice(0, -1)) {
      const next = chain[chain.length - 1][part];
      if (!next || typeof next !== "object") return;
      chain.push(next);
    }
    delete chain[chain.length - 1][parts[parts.length - 1]];
    for (let i = chain.length - 1; i > 0; i--) {
      if (Object.keys(chain[i]).length) break;
      delete chain[i - 1][parts[i - 1]];
    }
  }

  const calc = new Calculation({
    messenger, action: "verify", results, band, build, render: renderVerdicts, hint,
    aliases: () => ({ "ordered.right": "ordered.right.rx", "ordered.left": "ordered.left.rx",
      "measured": "measured.right.prism", "measured.right": "measured.right.prism", "measured.left": "measured.left.prism" }),
    onShown: () => firstResult(),
  });

  function changed() {
    applyMounting();
    saveFormDraft("verify", form);
    calc.schedule();
  }
  form.addEventListener("input", changed);
  form.addEventListener("change", changed);
  form.addEventListener("submit", (e) => e.preventDefault());
  form.querySelector("#vf-standard").addEventListener("change", showStandard);

  form.querySelector("#vf-from-case").addEventListener("click", () => {
    const doc = store.caseFromAddress() || store.draftCase();
    const note = form.querySelector("#vf-case-note");
    const filled = [];
    for (const eye of ["right", "left"]) {
      const lens = doc && doc[eye];
      const rx = rxText(lens);
      if (!rx) continue;
      form.querySelector(`#vf-ord-${eye}-rx`).value = rx;
      form.querySelector(`#vf-ord-${eye}-prism`).value = prismText(lens.prism);
      const fit = doc.fitting && doc.fitting[eye];
      form.querySelector(`#vf-ord-${eye}-pd`).value = fit && fit.mono_pd_mm !== undefined ? String(fit.mono_pd_mm) : "";
      form.querySelector(`#vf-ord-${eye}-height`).value = fit && fit.height_mm !== undefined ? String(fit.height_mm) : "";
      form.querySelector(`#vf-ord-${eye}-add`).value = typeof lens.add === "number" ? String(lens.add) : "";
      const top = lens.segment && typeof lens.segment.top_mm === "number" ? lens.segment.top_mm : undefined;
      form.querySelector(`#vf-ord-${eye}-seg-height`).value =
        top !== undefined && fit && typeof fit.height_mm === "number" ? String(fit.height_mm + top) : "";
      filled.push(EYE[eye].toLowerCase());
    }
    let design = "";
    if (filled.length) {
      form.querySelector("#vf-ordered-pd").value = "";
      // The lens type follows the case's lenses: a progressive design or a segment.
      const lenses = ["right", "left"].map((eye) => (doc[eye] && typeof doc[eye] === "object" ? doc[eye] : {}));
      const progressive = lenses.find((lens) => lens.progressive && typeof lens.progressive === "object");
      const type = progressive ? "progressive" : lenses.some((lens) => lens.segment) ? "multifocal" : "single_vision";
      form.querySelector("#vf-lens-type").value = type;
      const thinning = progressive ? progressive.progressive.thinning_prism_base_down : undefined;
      form.querySelector("#vf-thinning").value = thinning === undefined ? "" : String(thinning);
      design = `; lens type ${type.replace("_", " ")}`;
    }
    note.textContent = filled.length
      ? `Copied the ${filled.join(" and ")} lens from the case${doc.name ? " “" + doc.name + "”" : ""}: ` +
        `prescription, prism, monocular PD, height, add and segment height${design}.`
      : "The case screen has no prescription yet: enter it there first, or type the order here.";
    changed();
  });
  form.querySelector("#vf-clear").addEventListener("click", () => {
    for (const input of form.querySelectorAll("input[type=text]")) input.value = "";
    form.querySelector("#vf-case-note").textContent = "";
    changed();
  });

  // ---------------------------------------------------------------- standards
  let standards = null;
  async function loadStandards() {
    const reply = await messenger.request("verify_standards", {});
    if (!reply.ok) {
      standardInfo.replaceChildren(el("p", { class: "problem", text: reply.error.message }));
      return;
    }
    standards = reply.result;
    const select = form.querySelector("#vf-standard");
    const wanted = (loadSaved("verify") || {})["vf-standard"] || select.value;
    select.replaceChildren(...standards.standards.map((s) => el("option", { value: s.id,
      text: `${s.short} · ${s.unverified ? "UNVERIFIED, " : ""}${s.certainty}` })));
    if (standards.standards.some((s) => s.id === wanted)) select.value = wanted;
    showStandard();
  }

  function showStandard() {
    if (!standards) return;
    const i = standards.standards.findIndex((s) => s.id === form.querySelector("#vf-standard").value);
    if (i < 0) return;
    const base = `standards.${i}`;
    const table = standards.standards[i];
    const box = [];
    if (table.unverified) {
      box.push(el("div", { class: "unverified-flag", role: "note" },
        el("strong", { text: "Unverified tolerance table. " }),
        "These values are from memory and have not been checked against the text of the standard. " +
        "Check them against the standard before relying on any verdict."));
    }
    box.push(el("p", { class: "standard-title" }, fig(standards, base + ".title"), " ",
      el("span", { class: "certainty " + (table.unverified ? "bad" : "good") }, fig(standards, base + ".certainty"))));
    box.push(el("p", { class: "source-text" }, el("strong", { text: "Source: " }), fig(standards, base + ".source")));
    if (table.note) box.push(el("p", { class: "source-text" }, el("strong", { text: "Note: " }), fig(standards, base + ".note")));
    const rows = table.rows.map((row, j) => {
      const r = `${base}.rows.${j}`;
      return el("li", { class: "table-row" + (row.unverified ? " is-unverified" : "") },
        el("p", { class: "row-title" },
          el("strong", {}, fig(standards, r + ".criterion", words)), " · ",
          row.lens_types.map((t) => t.replace(/_/g, " ")).join(", "), " · ", fig(standards, r + ".mounting"),
          " · ", el("span", { class: "certainty " + (row.unverified ? "bad" : "good") }, fig(standards, r + ".certainty"))),
        el("ul", { class: "bands" }, ...row.bands.map((band, k) => {
          const b = `${r}.bands.${k}`;
          const below = row.bands.findLastIndex((other, m) => m < k && other.up_to_power_d !== null);
          let reach = "at any power: ";
          if (band.up_to_power_d !== null) reach = el("span", {}, "up to ±", fig(standards, b + ".up_to_power_d", (v) => v + " D"), ": ");
          else if (below >= 0) reach = el("span", {}, "above ±", fig(standards, `${r}.bands.${below}.up_to_power_d`, (v) => v + " D"), ": ");
          return el("li", {}, reach,
            fig(standards, b + ".what"), " at most ", fig(standards, b + ".limit", (v) => String(v)), " ",
            fig(standards, b + ".unit"),
            band.per_eye_limit !== null ? el("span", {}, " (", fig(standards, b + ".per_eye_limit", String), " per lens)") : null,
            row.any_of && k < row.bands.length - 1 ? el("em", { text: " — or —" }) : null);
        })),
        el("p", { class: "row-source" }, "Source: ", fig(standards, r + ".source")));
    });
    box.push(el("details", { class: "breakdown", "data-remember": "rows" },
      el("summary", { text: "The table's limits and the source of each row" }), el("ul", { class: "table-rows" }, ...rows)));
    const others = standards.standards.map((s, k) => (k === i ? null : el("li", {},
      el("strong", {}, fig(standards, `standards.${k}.short`)), " (", fig(standards, `standards.${k}.certainty`), "): ",
      fig(standards, `standards.${k}.source`))));
    box.push(el("p", { class: "other-tables-head", text: "The other tables and their sources:" }),
      el("ul", { class: "other-tables" }, ...others.filter(Boolean)));
    standardInfo.replaceChildren(...box);
  }

  // ---------------------------------------------------------------- drawing the answer
  function renderVerdicts(body, result) {
    const overall = result.result;
    const head = el("div", { class: "verdict-banner answer-band", "data-result": overall },
      el("p", { class: "verdict-word" }, fig(result, "result", (v) => STATUS_WORDS[v] || v)),
      worstLine(result),
      el("p", { class: "verdict-against" }, "against ", fig(result, "standard.short"), " · ",
        fig(result, "lens_type", words), " · ", fig(result, "mounting"),
        result.mounting === "mounted" ? el("span", {}, " · horizontal reading: ", fig(result, "horizontal_reading", words)) : null));
    const parts = [];
    if (result.unverified) {
      parts.push(el("div", { class: "unverified-flag", role: "note" },
        el("strong", { text: "UNVERIFIED: " }),
        "this verdict uses tolerance values from memory (", fig(result, "standard.short"),
        "). Source as recorded: ", fig(result, "standard.source")));
    }
    const cards = el("div", { class: "verdicts" }, ...result.verdicts.map((_, i) => verdictCard(result, i)));
    const details = [cards];
    if (result.not_checked && result.not_checked.length) {
      details.push(el("section", { class: "derived", "aria-labelledby": "vf-h-unread" },
        el("h3", { id: "vf-h-unread", text: "Not checked, because it was not read or not ordered" }),
        el("ul", { class: "assumptions" }, ...result.not_checked.map((_, i) => el("li", {}, fig(result, `not_checked.${i}`))))));
    }
    parts.push(el("details", { class: "more verdict-details", "data-remember": "verdicts" },
      el("summary", {}, el("span", { text: `Every criterion (${result.verdicts.length}), with limits, rules and sources` })),
      ...details));
    parts.push(cautionsBox(result, "Before you rely on this verdict"));
    parts.push(eyesBlock(result));
    if (result.assumptions.length) {
      parts.push(el("section", { class: "derived", "aria-labelledby": "vf-h-assume" },
        el("h3", { id: "vf-h-assume", text: "Assumed, because it was not measured" }),
        el("ul", { class: "assumptions" }, ...result.assumptions.map((_, i) => el("li", {}, fig(result, `assumptions.${i}`))))));
    }
    body.replaceChildren(...parts);
    return head;
  }

  function worstLine(result) {
    const i = result.worst;
    if (i === null || i === undefined) return null;
    const v = result.verdicts[i];
    const p = `verdicts.${i}`;
    const judged = v.status === "pass" || v.status === "fail";
    return el("p", { class: "verdict-worst" },
      v.status === "fail" ? "Furthest over: " : judged ? "Least room: " : "Not judged: ",
      fig(result, p + ".label"),
      judged ? el("span", {}, " — ", fig(result, p + ".value", withUnit(v.unit, 2)), " against ",
        fig(result, p + ".limit", withUnit(v.unit, 2)), " (margin ", fig(result, p + ".margin", withUnit(v.unit, 2, true)), ")") : null);
  }

  function verdictCard(result, i) {
    const v = result.verdicts[i];
    const p = `verdicts.${i}`;
    const unit = withUnit(v.unit, 2);
    const signedUnit = withUnit(v.unit, 2, true);
    const card = el("article", { class: "verdict-card", "data-status": v.status, "aria-labelledby": `vf-v-${i}` },
      el("header", {},
        el("h3", { id: `vf-v-${i}` }, fig(result, p + ".label")),
        el("span", { class: "badge" }, fig(result, p + ".status", (s) => STATUS_WORDS[s] || s))),
      el("p", { class: "what" }, fig(result, p + ".what")));
    if (v.status === "not_judged") {
      card.append(el("p", { class: "missing" }, fig(result, p + ".missing")));
    } else if (v.status === "not_defined") {
      card.append(el("p", { class: "missing" }, fig(result, p + ".in_words")));
    } else {
      card.append(el("dl", { class: "measure" },
        el("div", {}, el("dt", { text: "Value" }), el("dd", {}, fig(result, p + ".value", unit))),
        el("div", {}, el("dt", { text: "Limit" }), el("dd", {}, fig(result, p + ".limit", unit))),
        el("div", { class: v.status === "fail" ? "short" : "" }, el("dt", { text: "Margin" }), el("dd", {}, fig(result, p + ".margin", signedUnit)))),
      el("p", { class: "words" }, fig(result, p + ".in_words")));
    }
    if (v.readings) {
      const used = v.reading;
      const rows = Object.keys(v.readings).map((name) => {
        const r = `${p}.readings.${name}`;
        return el("tr", { class: name === used ? "used" : "" },
          el("th", { scope: "row" }, name === "total" ? "Total for the pair" : "Each lens on its own",
            name === used ? el("span", { class: "used-tag", text: " (used)" }) : null),
          el("td", {}, fig(result, r + ".value", fixed(2)),
            name === "per_eye" ? el("small", {}, " R ", fig(result, r + ".right", fixed(2)), " · L ",
              fig(result, r + ".left", fixed(2))) : null),
          el("td", {}, fig(result, r + ".limit", fixed(2))),
          el("td", {}, fig(result, r + ".margin", signed(2))),
          el("td", {}, fig(result, r + ".pass", (ok) => (ok ? "within" : "over"))));
      });
      card.append(el("div", { class: "table-wrap", tabindex: "0", role: "region", "aria-label": "Horizontal readings" }, el("table", { class: "readings" },
        el("caption", {}, "Horizontal readings, prism dioptres; the verdict uses: ", fig(result, p + ".reading", words)),
        el("thead", {}, el("tr", {}, ...["Reading", "Value", "Limit", "Margin", "Result"].map((t) => el("th", { scope: "col", text: t })))),
        el("tbody", {}, ...rows))));
    }
    if (v.options) {
      const rows = v.options.map((o, k) => {
        const r = `${p}.options.${k}`;
        return el("tr", {},
          el("th", { scope: "row" }, fig(result, r + ".what")),
          el("td", {}, fig(result, r + ".value", withUnit(o.unit))),
          el("td", {}, fig(result, r + ".limit", withUnit(o.unit))),
          el("td", {}, fig(result, r + ".margin", withUnit(o.unit, 2, true))),
          el("td", {}, fig(result, r + ".pass", (ok) => (ok ? "within" : "over"))));
      });
      card.append(el("div", { class: "table-wrap", tabindex: "0", role: "region", "aria-label": "Either limit suffices" }, el("table", { class: "readings" },
        el("caption", { text: "Either limit suffices" }),
        el("thead", {}, el("tr", {}, ...["Quantity", "Value", "Limit", "Margin", "Result"].map((t) => el("th", { scope: "col", text: t })))),
        el("tbody", {}, ...rows))));
    }
    if (v.wearer) {
      card.append(el("div", { class: "wearer-effect", role: "note" },
        el("strong", { text: "For the wearer: " }), fig(result, p + ".wearer.in_words"),
        el("small", {}, " (", fig(result, p + ".wearer.rule"), "; ", fig(result, p + ".wearer.source"), ")")));
    }
    card.append(facts(
      factRow("Limit that applied", fig(result, p + ".applied")),
      v.power_d !== undefined ? factRow("Deciding power", fig(result, p + ".power_d", (d) => signed(2)(d) + " D"),
        v.power_from ? el("span", {}, " (", fig(result, p + ".power_from"), " lens)") : null) : null,
      factRow("Rule", fig(result, p + ".rule")),
      factRow("Source", fig(result, p + ".source"), " · ",
        el("span", { class: "certainty " + (v.unverified ? "bad" : "good") }, fig(result, p + ".certainty")))));
    if (v.unverified) card.append(el("p", { class: "unverified-inline", text: "Unverified limit (from memory): check against the standard." }));
    return card;
  }

  function eyesBlock(result) {
    const eyes = Object.keys(result.eyes);
    const rows = [
      ["Ordered prism (with thinning)", "target_prism"],
      ["Prism at the point read", "prism_at_measured_point"],
      ["Prism at the specified PRP", "prism_at_specified_point"],
      ["Unwanted prism", "unwanted_prism"],
    ];
    const lens = (eye) => {
      const p = `eyes.${eye}`;
      return el("div", { class: "lens" }, el("h4", { text: EYE[eye] + " lens" }), facts(
        ...rows.map(([label, key]) => factRow(label, prismFigures(result, `${p}.${key}`))),
        factRow("Point read, from the specified PRP", fig(result, `${p}.measured_point_from_specified_mm.in_mm`, inOut), ", ",
          fig(result, `${p}.measured_point_from_specified_mm.up_mm`, upDown)),
        factRow("PRP as made, from where specified", fig(result, `${p}.prp_from_specified_mm.in_mm`, inOut), ", ",
          fig(result, `${p}.prp_from_specified_mm.up_mm`, upDown), " (", fig(result, `${p}.prp_from_specified_mm.total_mm`,
            (v) => v.toFixed(1) + " mm"), " in all)"),
        factRow("Powers used", fig(result, `${p}.power_used`))));
    };
    const section = el("section", { class: "derived", "aria-labelledby": "vf-h-eyes" },
      el("h3", { id: "vf-h-eyes", text: "Lens by lens" }),
      el("div", { class: "eyes-pair" }, ...eyes.map(lens)));
    if (result.net_unwanted) {
      section.append(el("div", { class: "net" }, el("h4", { text: "Unwanted prism between the eyes" }),
        el("p", { class: "words" }, fig(result, "net_unwanted.vertical_in_words")),
        el("p", { class: "words" }, fig(result, "net_unwanted.horizontal_in_words"))));
    }
    return el("details", { class: "more", "data-remember": "eyes", open: "" },
      el("summary", {}, el("span", { text: "Lens by lens and between the eyes" })), section);
  }

  // ---------------------------------------------------------------- start
  restoreFormDraft("verify", form);
  applyMounting();
  return checkScreen({ root, resultsId: "vf-results", calc, start: loadStandards });
}

