// Deviation through glasses: a deviation measured with prisms through the
// patient's spectacles, taken back to the eye by the core (docs/case-format.md,
// "## Deviations through spectacles").
import {
  Calculation, answerSlot, button, checkScreen, cautionsBox, collect, el, eyeGrid, factRow, facts, field, fig, inOut, prismFigures,
  prismText, restoreFormDraft, resultsPanel, rxText, saveFormDraft, signed, standingCaution, upDown,
} from "../checks-common.js";
import * as store from "../store.js";

const EYE = { right: "Right", left: "Left" };
const factor = (v) => "× " + v.toFixed(3);
const oneDecimal = (v) => Math.abs(v).toFixed(1);

export function createDeviationScreen({ messenger, firstResult }) {
  const form = el("form", { class: "check-inputs", id: "dv-form", novalidate: "", autocomplete: "off" });
  const fixating = el("fieldset", { class: "choice", id: "dv-fixating" },
    el("legend", { text: "Fixating eye" }),
    ...["right", "left"].map((eye) => el("label", { class: "check" },
      el("input", { type: "radio", name: "dv-fixating", id: `dv-fix-${eye}`, value: eye, "data-path": "fixating",
        "data-kind": "choice", ...(eye === "right" ? { checked: "" } : {}) }),
      ` ${EYE[eye]} eye fixated (prism before the ${eye === "right" ? "left" : "right"})`)));
  form.append(
    el("section", { class: "panel", "aria-labelledby": "dv-h-measure" },
      el("h3", { id: "dv-h-measure", text: "The measurement" }),
      el("div", { class: "fields two" },
        field({ id: "dv-measured", label: "Prism that neutralised the deviation",
          hint: "as held before the non-fixating eye: 45 BO, 20 BI, 6 BU, or both, e.g. 20 BI 4 BD",
          path: "measured", kind: "text", placeholder: "45 BO" }),
        field({ id: "dv-rotation", label: "Lens to centre of rotation", hint: "mm; 27 if left empty",
          path: "centre_of_rotation_mm", placeholder: "27" })),
      fixating),
    el("section", { class: "panel", "aria-labelledby": "dv-h-lenses" },
      el("div", { class: "panel-head" },
        el("h3", { id: "dv-h-lenses", text: "Spectacles worn during the measurement" }),
        button("Use the case's prescription", { class: "secondary", id: "dv-from-case" })),
      el("p", { class: "hint", id: "dv-case-note", role: "status" }),
      eyeGrid("dv-lens", "Spectacle lenses", [
        { key: "rx", label: "Prescription", hint: "e.g. -10.00 DS or +3.00 / -1.00 x 90", kind: "text", path: (e) => `${e}.rx` },
        { key: "prism", label: "Prescribed prism", hint: "optional, e.g. 2 BI", kind: "text", path: (e) => `${e}.prism` },
      ])),
    el("details", { class: "panel more", id: "dv-points" },
      el("summary", {}, el("span", { text: "Where each eye looked through its lens (optional)" })),
      el("p", { class: "hint", text: "Millimetres from each lens's reference point, in toward the nose, up upward; " +
        "for the spectacles' own prism. Left empty: the reference points." }),
      eyeGrid("dv-pt", "Points used", [
        { key: "in", label: "In", hint: "mm", path: (e) => `points.${e}.in_mm` },
        { key: "up", label: "Up", hint: "mm", path: (e) => `points.${e}.up_mm` },
      ])),
    el("div", { class: "form-end" }, button("Clear this form", { class: "secondary", id: "dv-clear" })));

  const hint = "Enter the prism that neutralised the deviation and the spectacle lenses to see the deviation at the eye.";
  const results = resultsPanel({ id: "dv-results", action: "deviation", title: "At the eye" });
  const band = answerSlot({ id: "dv-answer", action: "deviation", label: "Deviation at the eye", prompt: hint });
  const root = el("main", { class: "screen", id: "screen-deviation", "aria-labelledby": "dv-title", hidden: "" },
    el("div", { class: "screen-title" }, el("h2", { id: "dv-title", tabindex: "-1", text: "Deviation measured through glasses" })),
    band,
    el("div", { class: "screen-intro" },
      el("p", { text: "A prism cover test done through the patient's spectacles, taken back to the deviation at the eye." }),
      standingCaution("An aid to clinical judgement, which belongs to licensed practitioners; verify by measurement.")),
    form, results);

  function build() {
    const { doc, inputs, typed } = collect(form);
    const chosen = form.querySelector("input[name=dv-fixating]:checked");
    doc.fixating = chosen ? chosen.value : "right";
    inputs.set("fixating", chosen || form.querySelector("#dv-fix-right"));
    doc.right ||= {};
    doc.left ||= {};
    return { doc, inputs, typed: typed && doc.measured !== undefined };
  }

  const calc = new Calculation({
    messenger, action: "deviation", results, band, build, render: renderDeviation, hint,
    aliases: () => ({ right: "right.rx", left: "left.rx", points: "points.right.in_mm" }),
    onShown: () => firstResult(),
  });

  function changed() {
    saveFormDraft("deviation", form);
    calc.schedule();
  }
  form.addEventListener("input", changed);
  form.addEventListener("change", changed);
  form.addEventListener("submit", (e) => e.preventDefault());

  form.querySelector("#dv-from-case").addEventListener("click", () => {
    const doc = store.caseFromAddress() || store.draftCase();
    const note = form.querySelector("#dv-case-note");
    const filled = [];
    for (const eye of ["right", "left"]) {
      const lens = doc && doc[eye];
      const rx = rxText(lens);
      if (!rx) continue;
      form.querySelector(`#dv-lens-${eye}-rx`).value = rx;
      form.querySelector(`#dv-lens-${eye}-prism`).value = prismText(lens.prism);
      filled.push(eye);
    }
    const rotation = doc && doc.fitting && doc.fitting.centre_of_rotation_mm;
    if (filled.length && rotation !== undefined) form.querySelector("#dv-rotation").value = String(rotation);
    note.textContent = filled.length
      ? `Copied the ${filled.join(" and ")} lens from the case${doc.name ? " “" + doc.name + "”" : ""}.`
      : "The case screen has no prescription yet: enter it there first, or type the lenses here.";
    changed();
  });
  form.querySelector("#dv-clear").addEventListener("click", () => {
    for (const input of form.querySelectorAll("input[type=text]")) input.value = "";
    form.querySelector("#dv-case-note").textContent = "";
    changed();
  });

  function renderDeviation(body, result) {
    const dev = result.deviating;
    // The answer first: the deviation at the eye, the largest text on the screen.
    const answer = el("div", { class: "answer-band", id: "dv-band", "data-result": "info" },
        el("p", { class: "band-lead", text: "Deviation at the eye" }),
        el("p", { class: "band-figure" }, fig(result, "at_eye.in_words")),
        el("p", { class: "band-detail" }, "prism dioptres (Δ), ", fig(result, "at_eye.amount", (v) => v.toFixed(2) + " Δ"),
          " in all, before the ", fig(result, "deviating"), " eye"),
        el("p", { class: "band-detail" }, "measured ", fig(result, "measured.in_words"), " through the spectacles; the ",
          fig(result, "fixating"), " eye fixated"));
    const parts = [
      el("section", { class: "derived", "aria-labelledby": "dv-h-why" },
        el("h3", { id: "dv-h-why", text: "Why it differs" }),
        el("ul", { class: "explanation" }, ...result.explanation.map((_, i) => el("li", {}, fig(result, `explanation.${i}`))))),
      cautionsBox(result, "Before you rely on this"),
      el("section", { class: "derived", "aria-labelledby": "dv-h-detail" },
        el("h3", { id: "dv-h-detail", text: "In detail" }),
        el("div", { class: "table-wrap", tabindex: "0", role: "region", "aria-label": "Meridian by meridian" }, el("table", { class: "readings" },
          el("caption", { text: "Meridian by meridian, through the lens before the " + dev + " eye" }),
          el("thead", {}, el("tr", {}, ...["Meridian", "Measured", "At the eye", "Lens power", "Factor"].map((t) => el("th", { scope: "col", text: t })))),
          el("tbody", {}, ...["horizontal", "vertical"].map((m) => {
            const p = `meridians.${m}`;
            const hv = m === "horizontal" ? (v) => oneDecimal(v) + (v > 0 ? " BI" : v < 0 ? " BO" : "")
              : (v) => oneDecimal(v) + (v > 0 ? " BU" : v < 0 ? " BD" : "");
            return el("tr", {}, el("th", { scope: "row", text: m[0].toUpperCase() + m.slice(1) }),
              el("td", {}, fig(result, p + ".measured", hv)), el("td", {}, fig(result, p + ".at_eye", hv)),
              el("td", {}, fig(result, p + ".power_in_meridian_d", (v) => signed(2)(v) + " D")),
              el("td", {}, fig(result, p + ".factor", factor)));
          })))),
        el("ul", { class: "why" }, ...["horizontal", "vertical"].map((m) => el("li", {}, fig(result, `meridians.${m}.why`)))),
        result.oblique_cylinder ? el("p", { class: "note" }, el("strong", { text: "Oblique cylinder:" }),
          " the lens's power is worked in matrix form, so a purely horizontal measurement can have a vertical part at the eye.") : null,
        facts(
          factRow("Lens that counts", fig(result, "lens_that_counts.eye"), " lens, ", fig(result, "lens_that_counts.written"),
            " (horizontal ", fig(result, "lens_that_counts.horizontal_power_d", (v) => signed(2)(v) + " D"), ", vertical ",
            fig(result, "lens_that_counts.vertical_power_d", (v) => signed(2)(v) + " D"), ")"),
          factRow("The lens's share of the measurement", prismFigures(result, "lens_effect")),
          factRow("Line of sight on the lens", fig(result, "line_of_sight_on_lens_mm.in_mm", inOut), ", ",
            fig(result, "line_of_sight_on_lens_mm.up_mm", upDown), " from the reference point"),
          factRow("Lens to centre of rotation", fig(result, "centre_of_rotation_mm", (v) => v + " mm")),
          factRow("Measured, in components", prismFigures(result, "measured")),
          factRow("At the eye, in components", prismFigures(result, "at_eye")))),
      el("section", { class: "derived", "aria-labelledby": "dv-h-spec" },
        el("h3", { id: "dv-h-spec", text: "The spectacles' own prism at the points used" }),
        facts(
          ...["right", "left"].map((eye) => factRow(EYE[eye] + " eye", prismFigures(result, `spectacle_prism.${eye}`),
            el("small", {}, " at ", fig(result, `spectacle_prism.points.${eye}.in_mm`, inOut), ", ",
              fig(result, `spectacle_prism.points.${eye}.up_mm`, upDown)))),
          factRow("Between the eyes", fig(result, "spectacle_prism.net.horizontal_in_words"), "; ",
            fig(result, "spectacle_prism.net.vertical_in_words")))),
    ];
    body.replaceChildren(...parts);
    return answer;
  }

  restoreFormDraft("deviation", form);
  return checkScreen({ root, resultsId: "dv-results", calc });
}
