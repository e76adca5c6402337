// The lens-design and reading-zone part of the case form: each eye's design
// (single vision, bifocal segment, progressive), an optional slab-off, and the
// `reading_zone` section (docs/case-format.md, "Lens designs and the reading
// zone"). It plugs into CaseForm (form.js) as a part: fill() takes its keys out
// of the document's extras and shows them; collect() writes them back into the
// case document and says which input each path belongs to, so that a refusal
// from the core is marked at the right field. Nothing here computes optics.
import { toValue } from "./form.js";
import { el } from "./zone-common.js";

const EYES = ["right", "left"];

// Segment keys: the size goes to diameter_mm (round) or width_mm (flat-top).
const SEGMENT_KEYS = ["shape", "diameter_mm", "width_mm", "top_mm", "height_mm", "optical_centre_below_top_mm",
  "optical_centre_in_mm"];
// Segment heights: as on an order form (segment.height_mm, above the lowest point
// of the lens shape), or from the distance reference point (segment.top_mm).
const HEIGHTS_FROM = [["lens_bottom", "The lowest point of the lens shape (as on an order)"],
  ["reference_point", "The distance reference point"]];
const PROGRESSIVE_KEYS = ["prism_reference_below_cross_mm", "near_depth_mm", "near_inset_mm",
  "thinning_prism_base_down"];
const SLAB_KEYS = ["base_up", "line_mm"];
const ZONE_TEXT = ["reading_point", "worn_as"];
// The reading depth is the fitting's (one field, in the Fitting panel); a
// reading_zone.reading_depth_mm from a file is kept as given.
const ZONE_NUMBERS = ["below_segment_top_mm", "threshold", "correct_fraction",
  "lab_step", "lower_centres_mm", "map_depth_mm", "map_half_width_mm", "map_step_mm"];

// Words for the paths of this part, for messages next to the fields (form.js pathInWords).
export const ZONE_PATH_WORDS = {
  segment: "segment", shape: "shape", diameter_mm: "diameter", width_mm: "width", top_mm: "top",
  optical_centre_below_top_mm: "optical centre below the top", optical_centre_in_mm: "optical centre in",
  progressive: "progressive", prism_reference_below_cross_mm: "PRP below the fitting cross",
  near_depth_mm: "near depth", near_inset_mm: "near inset", thinning_prism_base_down: "thinning prism",
  slab_off: "slab-off", base_up: "base up", line_mm: "line height", reading_zone: "Reading zone",
  reading_point: "reading point", below_segment_top_mm: "depth below the segment tops",
  worn_as: "worn as", threshold: "threshold", correct_fraction: "correction fraction", lab_step: "lab step",
  lower_centres_mm: "lowered centres", map_depth_mm: "map depth", map_half_width_mm: "map half width",
  map_step_mm: "map step",
};

const DESIGNS = [["single_vision", "Single vision"], ["bifocal", "Bifocal"], ["progressive", "Progressive"]];
const SHAPES = [["", "Top only"], ["round", "Round"], ["flat_top", "Flat-top"], ["straight_across", "Straight-across"]];
const RULES = [["", "Automatic"], ["distance_reference", "Below the distance reference point"],
  ["segment_top", "Below the segment tops"], ["near_zone", "Progressive near point"]];
const WORN = [["", "Spectacles (fitted for distance)"], ["reading_spectacles", "Reading spectacles"],
  ["contact_lenses", "Contact lenses"]];

function plainObject(value) {
  return value && typeof value === "object" && !Array.isArray(value) ? value : null;
}

function asText(value) {
  if (value === undefined || value === null) return "";
  return typeof value === "string" ? value : typeof value === "number" ? String(value) : JSON.stringify(value);
}

function select(id, options, attrs = {}) {
  const node = el("select", { id, ...attrs });
  for (const [value, text] of options) node.append(el("option", { value, text }));
  return node;
}

export class ZoneFormPart {
  constructor(form) {
    this.form = form;
    this.fields = new Map(); // path -> input or select
    this.leftover = {}; // keys of these sections this form does not know: sent back unchanged
    this.panel = this.build();
    const fitting = form.querySelector("#h-fit")?.closest("section");
    if (fitting) fitting.after(this.panel);
    else form.append(this.panel);
    this.panel.addEventListener("input", () => this.sync());
    this.sync();
  }

  // ------------------------------------------------------------------ building
  build() {
    const grid = el("div", { class: "grid eyes zgrid", role: "group", "aria-labelledby": "h-design" },
      el("span"), el("span", { class: "colhead", id: "zcol-r", text: "Right (R)" }),
      el("span", { class: "colhead", id: "zcol-l", text: "Left (L)" }));
    const row = (key, label, hint, make, show) => {
      const head = el("span", { class: "rowhead", id: "zrow-" + key }, label, hint ? el("small", { text: hint }) : null);
      const wrap = el("div", { class: "zrow", "data-show": show || "all" }, head);
      for (const eye of EYES) {
        const control = make(eye);
        control.setAttribute("aria-labelledby", `zcol-${eye[0]} zrow-${key}`);
        wrap.append(el("div", { class: "zcell" }, control));
      }
      grid.append(wrap);
    };
    // No placeholders: a grey word in a field reads like a value, and would be refused.
    const number = (path, id) => {
      const input = el("input", { id, "data-path": path, inputmode: "decimal", autocomplete: "off" });
      this.fields.set(path, input);
      return input;
    };
    row("design", "Lens design", null, (eye) => {
      const node = select(`${eye}-design`, DESIGNS, { "data-zone": "design" });
      this.fields.set(`${eye}.design`, node);
      return node;
    });
    row("shape", "Segment shape", "top only: all below the top line", (eye) => {
      const node = select(`${eye}-seg-shape`, SHAPES, { "data-path": `${eye}.segment.shape` });
      this.fields.set(`${eye}.segment.shape`, node);
      return node;
    }, "bifocal");
    row("size", "Segment size", "mm: diameter or flat-top width", (eye) => {
      const input = number(`${eye}.segment.size`, `${eye}-seg-size`);
      input.dataset.path = `${eye}.segment.diameter_mm`;
      return input;
    }, "sized");
    row("top", "Segment height", "mm above the lowest point of the lens shape", (eye) =>
      number(`${eye}.segment.top`, `${eye}-seg-top`), "bifocal");
    row("ocbelow", "Segment optical centre below the top", "mm, optional: overrides the usual rule", (eye) =>
      number(`${eye}.segment.optical_centre_below_top_mm`, `${eye}-seg-oc-below`), "bifocal");
    row("ocin", "Segment optical centre in", "mm, optional", (eye) =>
      number(`${eye}.segment.optical_centre_in_mm`, `${eye}-seg-oc-in`), "bifocal");
    row("prp", "Fitting cross above the PRP", "mm", (eye) =>
      number(`${eye}.progressive.prism_reference_below_cross_mm`, `${eye}-prog-prp`), "progressive");
    row("neardepth", "Near depth", "mm below the fitting cross", (eye) =>
      number(`${eye}.progressive.near_depth_mm`, `${eye}-prog-near-depth`), "progressive");
    row("nearinset", "Near inset", "mm toward the nose", (eye) =>
      number(`${eye}.progressive.near_inset_mm`, `${eye}-prog-near-inset`), "progressive");
    row("thinning", "Thinning prism", "Δ base down, optional", (eye) =>
      number(`${eye}.progressive.thinning_prism_base_down`, `${eye}-prog-thinning`), "progressive");
    row("slab", "Slab-off", "Δ base up below the line; negative: reverse slab; optional", (eye) =>
      number(`${eye}.slab_off.base_up`, `${eye}-slab-base`));
    row("slabline", "Slab line", "mm; below is negative", (eye) =>
      number(`${eye}.slab_off.line_mm`, `${eye}-slab-line`));

    const copy = el("button", { type: "button", class: "secondary zcopy", id: "zone-copy-design",
      text: "Copy the right lens design to the left" }); // slab-off excepted
    copy.addEventListener("click", () => this.copyRightToLeft());

    const field = (path, id, label, hint, control) => {
      control.id = id;
      control.dataset.path = path;
      this.fields.set(path, control);
      const node = el("div", { class: "field", "data-field-of": path },
        el("label", { for: id }, label, hint ? " " : null, hint ? el("small", { text: hint }) : null), control);
      return node;
    };
    const numberField = (key, label, hint) => field(`reading_zone.${key}`, "rz-" + key.replace(/_/g, "-"),
      label, hint, el("input", { inputmode: "decimal", autocomplete: "off" }));
    const inUse = (key) => el("p", { class: "zin-use", id: `rz-${key}-in-use`, "data-in-use": key });

    const threshold = numberField("threshold", "Vertical imbalance threshold", "Δ; empty: the usual rule of thumb");
    threshold.append(inUse("threshold"));
    const fraction = numberField("correct_fraction", "Slab-off corrects", "fraction of the reading-point imbalance, 0.25–1; empty: all");
    fraction.append(inUse("correct_fraction"));
    const step = numberField("lab_step", "Laboratory step", "Δ; empty: the usual step");
    step.append(inUse("lab_step"));
    const lower = numberField("lower_centres_mm", "Lower both centres by", "mm, for the lowered-centres remedy; empty: to balance");
    lower.append(inUse("lower_centres_mm"));

    const rule = field("reading_zone.reading_point", "rz-reading-point", "Reading point",
      "automatic: a progressive's near point, else a depth below the distance reference point", select("", RULES));
    const belowTops = numberField("below_segment_top_mm", "Depth below the segment tops", "mm; empty: the usual");
    belowTops.dataset.show = "tops";
    const worn = field("reading_zone.worn_as", "rz-worn-as", "Worn as", null, select("", WORN));

    const map = el("details", { class: "zmore", "data-remember": "zone-map-extent" },
      el("summary", { text: "Map extent" }),
      el("div", { class: "fields" },
        numberField("map_depth_mm", "Map depth", "mm down; empty: automatic"),
        numberField("map_half_width_mm", "Map half width", "mm each side; empty: the usual"),
        numberField("map_step_mm", "Map step", "mm; empty: the usual")));

    return el("section", { class: "panel zone-inputs", id: "zone-inputs", "aria-labelledby": "h-design" },
      el("h2", { id: "h-design", text: "Lens design and reading zone" }),
      el("p", { class: "hint", text: "Fitting and segment heights as on an order: mm above the lowest point of the " +
        "lens shape. Or choose the distance reference point: then a segment top 4 mm below it is −4. Other heights " +
        "here are from each eye's distance reference point (a progressive's: its prism reference point, PRP)." }),
      el("div", { class: "field zheights" }, el("label", { for: "seg-heights-from" }, "Segment heights measured from"),
        this.heightsFrom()),
      grid, copy,
      el("h3", { class: "zsub", id: "h-zone-options", text: "Reading point and remedies" }),
      el("div", { class: "fields zfields", role: "group", "aria-labelledby": "h-zone-options" },
        rule, belowTops, worn, threshold, fraction, step, lower),
      map);
  }

  heightsFrom() {
    const node = select("seg-heights-from", HEIGHTS_FROM);
    node.addEventListener("change", () => this.sync());
    this.mode = node;
    return node;
  }

  // ------------------------------------------------------------------ visibility
  design(eye) {
    return this.fields.get(`${eye}.design`).value;
  }

  sync() {
    const designs = EYES.map((eye) => this.design(eye));
    const shapes = EYES.map((eye) => this.fields.get(`${eye}.segment.shape`).value);
    for (const row of this.panel.querySelectorAll(".zrow")) {
      const show = row.dataset.show;
      const wanted = (i) => show === "all" || (show === "bifocal" && designs[i] === "bifocal") ||
        (show === "progressive" && designs[i] === "progressive") ||
        (show === "sized" && designs[i] === "bifocal" && (shapes[i] === "round" || shapes[i] === "flat_top"));
      row.hidden = !(wanted(0) || wanted(1));
      row.querySelectorAll(".zcell").forEach((cell, i) => {
        const control = cell.firstElementChild;
        control.disabled = !wanted(i);
        cell.classList.toggle("zoff", !wanted(i));
      });
    }
    // The height field writes segment.height_mm (from the lens bottom) or top_mm (from the reference point).
    const fromBottom = this.mode.value === "lens_bottom";
    const head = this.panel.querySelector("#zrow-top");
    head.replaceChildren(fromBottom ? "Segment height" : "Segment top", el("small", {
      text: fromBottom ? "mm above the lowest point of the lens shape" : "mm from the distance reference point; below is negative" }));
    EYES.forEach((eye) => {
      this.fields.get(`${eye}.segment.top`).dataset.path = `${eye}.segment.${fromBottom ? "height_mm" : "top_mm"}`;
    });
    // The size field writes diameter_mm for a round segment, width_mm for a flat-top.
    EYES.forEach((eye, i) => {
      this.fields.get(`${eye}.segment.size`).dataset.path = `${eye}.segment.${shapes[i] === "flat_top" ? "width_mm" : "diameter_mm"}`;
    });
    const rule = this.fields.get("reading_zone.reading_point").value;
    this.panel.querySelector("[data-show='tops']").hidden = rule !== "segment_top" &&
      this.fields.get("reading_zone.below_segment_top_mm").value.trim() === "";
  }

  copyRightToLeft() {
    for (const [path, control] of this.fields) {
      // A slab-off belongs to one lens: it is not copied.
      if (!path.startsWith("right.") || path.includes(".slab_off.")) continue;
      const twin = this.fields.get("left." + path.slice(6));
      if (twin) twin.value = control.value;
    }
    this.sync();
    const target = this.fields.get("left.design");
    target.dispatchEvent(new Event("input", { bubbles: true }));
  }

  // ------------------------------------------------------------------ the case document
  // Show a case: take the design, slab-off and reading-zone keys out of `extras`.
  fill(doc, extras) {
    this.leftover = {};
    for (const control of this.fields.values()) {
      control.value = "";
      delete control.dataset.given;
    }
    for (const eye of EYES) {
      this.fields.get(`${eye}.design`).value = "single_vision";
      const lens = plainObject(doc[eye]) || {};
      const taken = [];
      const segment = plainObject(lens.segment);
      const progressive = plainObject(lens.progressive);
      if (segment) {
        this.fields.get(`${eye}.design`).value = "bifocal";
        let shape = typeof segment.shape === "string" ? segment.shape : "";
        if (!shape && "diameter_mm" in segment && !("width_mm" in segment)) shape = "round";
        if (!shape && "width_mm" in segment && !("diameter_mm" in segment)) shape = "flat_top";
        const known = SHAPES.some(([value]) => value === shape);
        this.fields.get(`${eye}.segment.shape`).value = known ? shape : "";
        const size = shape === "flat_top" ? segment.width_mm : segment.diameter_mm;
        this.fields.get(`${eye}.segment.size`).value = asText(size);
        if ("height_mm" in segment && !("top_mm" in segment)) {
          this.mode.value = "lens_bottom";
          this.fields.get(`${eye}.segment.top`).value = asText(segment.height_mm);
        } else {
          if ("top_mm" in segment) this.mode.value = "reference_point";
          this.fields.get(`${eye}.segment.top`).value = asText(segment.top_mm);
        }
        for (const key of ["optical_centre_below_top_mm", "optical_centre_in_mm"]) {
          this.fields.get(`${eye}.segment.${key}`).value = asText(segment[key]);
        }
        const rest = Object.fromEntries(Object.entries(segment).filter(([key]) => !SEGMENT_KEYS.includes(key) ||
          (key === "shape" && !known) || (key === "width_mm" && shape !== "flat_top") ||
          (key === "diameter_mm" && shape === "flat_top") ||
          (key === "height_mm" && "top_mm" in segment)));
        if (Object.keys(rest).length) this.leftover[`${eye}.segment`] = rest;
        taken.push("segment");
      } else if (progressive) {
        this.fields.get(`${eye}.design`).value = "progressive";
        for (const key of PROGRESSIVE_KEYS) this.fields.get(`${eye}.progressive.${key}`).value = asText(progressive[key]);
        const rest = Object.fromEntries(Object.entries(progressive).filter(([key]) => !PROGRESSIVE_KEYS.includes(key)));
        if (Object.keys(rest).length) this.leftover[`${eye}.progressive`] = rest;
        taken.push("progressive");
      }
      const slab = plainObject(lens.slab_off);
      if (slab) {
        for (const key of SLAB_KEYS) this.fields.get(`${eye}.slab_off.${key}`).value = asText(slab[key]);
        const rest = Object.fromEntries(Object.entries(slab).filter(([key]) => !SLAB_KEYS.includes(key)));
        if (Object.keys(rest).length) this.leftover[`${eye}.slab_off`] = rest;
        taken.push("slab_off");
      }
      if (extras[eye]) {
        for (const key of taken) delete extras[eye][key];
        if (!Object.keys(extras[eye]).length) delete extras[eye];
      }
    }
    const zone = plainObject(doc.reading_zone);
    if (zone) {
      for (const key of [...ZONE_TEXT, ...ZONE_NUMBERS]) {
        const control = this.fields.get(`reading_zone.${key}`);
        const value = zone[key];
        if (ZONE_TEXT.includes(key)) {
          const known = [...control.options].some((o) => o.value === value && value !== "");
          // The defaults ("auto", "spectacles") show as the empty choice.
          control.value = known ? value : "";
          if (!known && value !== undefined && value !== "auto" && value !== "spectacles") {
            (this.leftover.reading_zone ||= {})[key] = value;
          } else if (value === "auto" || value === "spectacles") {
            control.dataset.given = value; // written back as given
          }
        } else {
          control.value = asText(value);
        }
      }
      for (const [key, value] of Object.entries(zone)) {
        if (!ZONE_TEXT.includes(key) && !ZONE_NUMBERS.includes(key)) (this.leftover.reading_zone ||= {})[key] = value;
      }
      delete extras.reading_zone;
    }
    this.sync();
  }

  // Write the part's keys into the case document; map each path to its input.
  collect(doc, inputs) {
    const put = (obj, key, path, control) => {
      inputs.set(path, control);
      if (control.disabled) return;
      const value = toValue(control.value);
      if (value !== undefined) obj[key] = value;
    };
    for (const eye of EYES) {
      const lens = doc[eye] || (doc[eye] = {});
      const design = this.design(eye);
      const designSelect = this.fields.get(`${eye}.design`);
      inputs.set(`${eye}.segment`, designSelect);
      inputs.set(`${eye}.progressive`, designSelect);
      if (design === "bifocal") {
        const segment = {};
        const shape = this.fields.get(`${eye}.segment.shape`);
        inputs.set(`${eye}.segment.shape`, shape);
        if (shape.value) segment.shape = shape.value;
        const size = this.fields.get(`${eye}.segment.size`);
        const sizeKey = shape.value === "flat_top" ? "width_mm" : "diameter_mm";
        put(segment, sizeKey, `${eye}.segment.${sizeKey}`, size);
        inputs.set(`${eye}.segment.${sizeKey === "width_mm" ? "diameter_mm" : "width_mm"}`, size);
        const height = this.fields.get(`${eye}.segment.top`);
        const heightKey = this.mode.value === "lens_bottom" ? "height_mm" : "top_mm";
        put(segment, heightKey, `${eye}.segment.${heightKey}`, height);
        inputs.set(`${eye}.segment.${heightKey === "top_mm" ? "height_mm" : "top_mm"}`, height);
        for (const key of ["optical_centre_below_top_mm", "optical_centre_in_mm"]) {
          put(segment, key, `${eye}.segment.${key}`, this.fields.get(`${eye}.segment.${key}`));
        }
        lens.segment = { ...segment, ...(this.leftover[`${eye}.segment`] || {}) };
      } else if (design === "progressive") {
        const progressive = {};
        for (const key of PROGRESSIVE_KEYS) {
          put(progressive, key, `${eye}.progressive.${key}`, this.fields.get(`${eye}.progressive.${key}`));
        }
        lens.progressive = { ...progressive, ...(this.leftover[`${eye}.progressive`] || {}) };
      }
      const slabControls = SLAB_KEYS.map((key) => this.fields.get(`${eye}.slab_off.${key}`));
      inputs.set(`${eye}.slab_off`, slabControls[0]);
      if (slabControls.some((c) => c.value.trim() !== "") || this.leftover[`${eye}.slab_off`]) {
        const slab = {};
        SLAB_KEYS.forEach((key, i) => put(slab, key, `${eye}.slab_off.${key}`, slabControls[i]));
        lens.slab_off = { ...slab, ...(this.leftover[`${eye}.slab_off`] || {}) };
      } else {
        SLAB_KEYS.forEach((key, i) => inputs.set(`${eye}.slab_off.${key}`, slabControls[i]));
      }
    }
    const zone = {};
    inputs.set("reading_zone", this.fields.get("reading_zone.reading_point"));
    for (const key of ZONE_TEXT) {
      const control = this.fields.get(`reading_zone.${key}`);
      inputs.set(`reading_zone.${key}`, control);
      if (control.value) zone[key] = control.value;
      else if (control.dataset.given) zone[key] = control.dataset.given;
    }
    for (const key of ZONE_NUMBERS) {
      const control = this.fields.get(`reading_zone.${key}`);
      inputs.set(`reading_zone.${key}`, control);
      const value = toValue(control.value);
      if (value !== undefined) zone[key] = value;
    }
    Object.assign(zone, this.leftover.reading_zone || {});
    if (Object.keys(zone).length) doc.reading_zone = zone;
  }

  // "In use" notes next to the settings: the values the core used (from the result).
  showInUse(parts) {
    for (const node of this.panel.querySelectorAll("[data-in-use]")) {
      const part = parts[node.dataset.inUse];
      node.replaceChildren(...(part ? part : []));
    }
  }
}
