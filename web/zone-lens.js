// A to-scale drawing of each lens in its frame shape, seen from the front (as
// the dispenser faces the wearer: the right lens on the left, noses toward the
// middle). The boxing sizes A x B give the shape when the frame is given, else a
// generic shape. Marks, each drawn by shape and line style so that the drawing
// reads in greyscale print and for colour-blind readers:
//   distance reference point (or a progressive's prism reference point): cross
//   optical centre: ring with a dot;   reading point: filled square
//   segment: solid outline;  progressive corridor: dotted line to the near circle
//   slab line: dash-dot line;  threshold depth: long-dashed line
// Positions come from the core's result (data-key, data-value on each mark);
// the slab line, which the result does not echo, from the case as typed.
import { el, get, svg } from "./zone-common.js";

const GENERIC = { a: 50, b: 36 }; // mm: a generic shape when no frame is given
const PAD = 5; // mm around the shape

function markAttrs(result, key) {
  const value = get(result, key);
  return value === undefined || value === null ? {} : { "data-key": key, "data-value": String(value) };
}

// One lens. x: mm toward the nose from the reference point; y: mm up.
function drawLens(result, doc, eye, prefix) {
  const designs = get(result, "reading_zone.designs") || {};
  const design = designs[eye] || { kind: "single_vision" };
  const frame = doc.frame || {};
  const boxed = typeof frame.a_mm === "number" && typeof frame.b_mm === "number";
  const a = boxed ? frame.a_mm : GENERIC.a;
  const b = boxed ? frame.b_mm : GENERIC.b;
  const oc = get(result, `frame.${eye}.optical_centre_from_box_centre`);
  // Box centre from the reference point: the core's figure when the frame is given.
  const cx = oc ? -oc.in_mm : 0;
  const cy = oc ? -oc.up_mm : 0;
  const sign = eye === "right" ? 1 : -1; // drawing x = sign * in_mm
  const X = (inMm) => sign * inMm;
  const Y = (upMm) => -upMm;
  const left = Math.min(X(cx - a / 2), X(cx + a / 2)) - PAD;
  const top = Y(cy + b / 2) - PAD;
  const root = svg("svg", { viewBox: `${left.toFixed(2)} ${top.toFixed(2)} ${(a + 2 * PAD).toFixed(2)} ${(b + 2 * PAD + 6).toFixed(2)}`,
    class: "lens-svg", "data-eye": eye, role: "img", focusable: "false",
    "aria-label": `${eye === "right" ? "Right" : "Left"} lens drawn to scale` + (boxed ? `, box ${a} by ${b} mm` : ", generic shape") });
  const clipId = `${prefix}-clip-${eye}`;
  const r = Math.min(a, b) * 0.32;
  const shape = { x: (Math.min(X(cx - a / 2), X(cx + a / 2))).toFixed(2), y: Y(cy + b / 2).toFixed(2), width: a, height: b,
    rx: r.toFixed(2), ry: (r * 0.9).toFixed(2) };
  root.append(svg("defs", {}, svg("clipPath", { id: clipId }, svg("rect", shape))));
  root.append(svg("rect", { ...shape, class: "lens-shape", fill: "#fff", stroke: "#000", "stroke-width": 0.8,
    "stroke-dasharray": boxed ? null : "3 1.5" }));
  const inside = svg("g", { "clip-path": `url(#${clipId})` });
  root.append(inside);
  const across = (y, cls, dash, attrs) => inside.append(svg("line", { x1: left, x2: left + a + 2 * PAD, y1: Y(y), y2: Y(y),
    class: cls, stroke: "#000", "stroke-width": 0.5, "stroke-dasharray": dash, ...attrs }));
  const labels = []; // placed at the end, clear of one another
  const label = (x, y, text, anchor = "start") => labels.push({ x, y, text, anchor });
  const edge = Math.max(X(cx - a / 2), X(cx + a / 2)) - 1;

  if (design.kind === "bifocal" && typeof design.top_mm === "number") {
    const segIn = design.optical_centre ? design.optical_centre.in_mm : 0;
    const size = typeof design.size_mm === "number" ? design.size_mm : null;
    const depth = typeof design.segment_depth_mm === "number" ? design.segment_depth_mm : size ? size * 0.7 : null;
    const attrs = { class: "lens-segment", fill: "none", stroke: "#000", "stroke-width": 0.7,
      ...markAttrs(result, `reading_zone.designs.${eye}.top_mm`) };
    if (design.shape === "round" && size) {
      inside.append(svg("circle", { cx: X(segIn), cy: Y(design.top_mm - size / 2), r: size / 2, ...attrs }));
    } else if (design.shape === "flat_top" && size && depth) {
      const x1 = X(segIn) - size / 2;
      const x2 = X(segIn) + size / 2;
      inside.append(svg("path", { d: `M${x1},${Y(design.top_mm)}H${x2}A${size / 2},${depth} 0 0 1 ${x1},${Y(design.top_mm)}Z`, ...attrs }));
    } else {
      across(design.top_mm, "lens-segment", null, attrs);
    }
    label(edge, Y(design.top_mm) - 0.8, "segment top", "end");
  } else if (design.kind === "progressive" && design.near_reference_point) {
    const fc = design.fitting_cross || { in_mm: 0, up_mm: 0 };
    const near = design.near_reference_point;
    inside.append(svg("path", { class: "lens-corridor", d: `M${X(fc.in_mm)},${Y(fc.up_mm)}L${X(near.in_mm)},${Y(near.up_mm)}`,
      stroke: "#000", "stroke-width": 0.6, "stroke-dasharray": "0.6 1.2", fill: "none",
      ...markAttrs(result, `reading_zone.designs.${eye}.corridor_mm`) }));
    inside.append(svg("circle", { class: "lens-near", cx: X(near.in_mm), cy: Y(near.up_mm), r: 3, fill: "none", stroke: "#000",
      "stroke-width": 0.5, ...markAttrs(result, `reading_zone.designs.${eye}.near_reference_point.up_mm`) }));
    inside.append(svg("path", { class: "lens-cross", d: `M${X(fc.in_mm) - 3},${Y(fc.up_mm)}h6M${X(fc.in_mm)},${Y(fc.up_mm) - 1.5}v3`,
      stroke: "#000", "stroke-width": 0.5, ...markAttrs(result, `reading_zone.designs.${eye}.fitting_cross.up_mm`) }));
    label(X(fc.in_mm) + 3.5 * sign, Y(fc.up_mm) - 1, "fitting cross", sign > 0 ? "start" : "end");
    label(X(near.in_mm), Y(near.up_mm) + 6, "near", "middle");
  }
  const slab = doc[eye] && doc[eye].slab_off;
  if (slab && typeof slab.line_mm === "number") {
    across(slab.line_mm, "lens-slab", "4 1 1 1", { "stroke-width": 0.7 });
    label(left + PAD + 1, Y(slab.line_mm) + 3, "slab line");
  }
  const threshold = get(result, `reading_zone.threshold_point.${eye}`);
  if (threshold) {
    across(threshold.up_mm, "lens-threshold", "3 1.5", markAttrs(result, `reading_zone.threshold_point.${eye}.up_mm`));
    label(left + PAD + 1, Y(threshold.up_mm) - 0.8, "threshold");
  }
  // Reference point (cross) and optical centre (ring with a dot).
  root.append(svg("path", { class: "lens-drp", d: "M-2.5,0H2.5M0,-2.5V2.5", stroke: "#000", "stroke-width": 0.6,
    ...markAttrs(result, `reading_zone.geometry.distance_point.${eye}.up_mm`) }));
  // The optical centre: moved by the decentration that gives the prescribed prism and
  // by any move made on purpose (lowered centres: eyes.<eye>.optical_centre_mm).
  const dec = get(result, `eyes.${eye}.decentration_for_prism`);
  const moved = get(result, `eyes.${eye}.optical_centre_mm`);
  const ocIn = (dec && typeof dec.in_mm === "number" ? dec.in_mm : 0) + (moved ? moved.in_mm : 0);
  const ocUp = (dec && typeof dec.up_mm === "number" ? dec.up_mm : 0) + (moved ? moved.up_mm : 0);
  const ocKey = moved ? `eyes.${eye}.optical_centre_mm.up_mm`
    : dec && typeof dec.up_mm === "number" ? `eyes.${eye}.decentration_for_prism.up_mm`
      : oc ? `frame.${eye}.optical_centre_from_box_centre.up_mm` : null;
  root.append(svg("g", { class: "lens-oc", ...(ocKey ? markAttrs(result, ocKey) : {}) },
  svg("circle", { cx: X(ocIn), cy: Y(ocUp), r: 1.6, fill: "none", stroke: "#000", "stroke-width": 0.5 }),
  svg("circle", { cx: X(ocIn), cy: Y(ocUp), r: 0.45, fill: "#000" })));
  label(3, -1.2, design.kind === "progressive" ? "PRP" : "reference point");
  const reading = get(result, `reading_zone.geometry.reading_point.${eye}`);
  if (reading) {
    root.append(svg("rect", { class: "lens-reading", x: X(reading.in_mm) - 1.3, y: Y(reading.up_mm) - 1.3, width: 2.6, height: 2.6,
      fill: "#000", ...markAttrs(result, `reading_zone.geometry.reading_point.${eye}.up_mm`) }));
    label(X(reading.in_mm) + 2.2 * sign, Y(reading.up_mm) + 3.4, "reading", sign > 0 ? "start" : "end");
  }
  for (const { x, y, text, anchor } of clearOfOneAnother(labels)) {
    root.append(svg("text", { x: x.toFixed(2), y: y.toFixed(2), "font-size": LABEL_SIZE, "text-anchor": anchor,
      class: "lens-label", text }));
  }
  return root;
}

const LABEL_SIZE = 2.6; // mm on the drawing

// Labels in the order given, each moved down (else up) by whole lines until it
// overlaps none placed before it, so that marks close together stay readable.
function clearOfOneAnother(labels) {
  const line = LABEL_SIZE * 1.35;
  // Generous boxes (a font's glyphs are about 0.6 em wide, ascent plus descent 1.2 em).
  const box = ({ x, y, text, anchor }) => {
    const width = text.length * LABEL_SIZE * 0.62;
    const x1 = anchor === "end" ? x - width : anchor === "middle" ? x - width / 2 : x;
    return { x1, x2: x1 + width, y1: y - LABEL_SIZE, y2: y + LABEL_SIZE * 0.3 };
  };
  const hits = (a, b) => a.x1 < b.x2 && b.x1 < a.x2 && a.y1 < b.y2 && b.y1 < a.y2;
  const placed = [];
  return labels.map((wanted) => {
    const steps = [0, 1, -1, 2, -2, 3, -3, 4];
    const free = steps.map((k) => ({ ...wanted, y: wanted.y + k * line }))
      .find((candidate) => !placed.some((other) => hits(box(candidate), other)));
    const chosen = free || wanted;
    placed.push(box(chosen));
    return chosen;
  });
}

export function lensDrawings(result, doc, prefix = "lens") {
  const key = el("ul", { class: "lens-legend" },
    el("li", { text: "+ cross: distance reference point (progressive: prism reference point)" }),
    el("li", { text: "◎ ring with a dot: optical centre" }),
    el("li", { text: "■ square: reading point" }),
    el("li", { text: "solid outline: segment; dotted line and circle: progressive corridor and near zone" }),
    el("li", { text: "long dashes: depth where the threshold is reached; dash-dot: slab line" }));
  return el("figure", { class: "lens-figure", "aria-labelledby": `${prefix}-caption` },
    el("div", { class: "lens-pair" },
      el("div", { class: "lens-one" }, el("p", { class: "lens-name", text: "Right lens" }), drawLens(result, doc, "right", prefix)),
      el("div", { class: "lens-one" }, el("p", { class: "lens-name", text: "Left lens" }), drawLens(result, doc, "left", prefix))),
    el("figcaption", { id: `${prefix}-caption`, class: "lens-caption" },
      (doc.frame && typeof doc.frame.a_mm === "number" && typeof doc.frame.b_mm === "number")
        ? "To scale, in the frame's box (A × B), seen from the front."
        : "To scale, in a generic shape (give the frame's A and B for its box), seen from the front.", key));
}
