// The imbalance map: the core's grid of net prism (reading_zone.map) drawn as
// SVG, rows by drop below the primary position, columns by the eyes' turn
// (wearer's view: toward the wearer's right is to the right). A diverging
// blue/orange scale with lightness for size (colour-blind safe), hatching over
// the threshold (its direction says which eye has the base up) and a contour
// line at the threshold, so that the map still reads in greyscale print.
// Positions and colours are for drawing only; every value is the core's.
import { svg } from "./zone-common.js";

const GRID_WIDTH = 360; // viewBox units for the cells
const LEFT = 46;
const TOP = 26;
const RIGHT = 8;
const BOTTOM = 8;
const FONT = 15;

// Colour stops from nothing (0) to the scale's end (1), for each sign.
const WARM = ["#f5f3ee", "#fbdcb6", "#f5ae66", "#d9731f", "#8f4208"]; // positive
const COOL = ["#f5f3ee", "#cfe0ee", "#8ab6da", "#3f7fbd", "#173f76"]; // negative

function mix(a, b, t) {
  const pa = [1, 3, 5].map((i) => parseInt(a.slice(i, i + 2), 16));
  const pb = [1, 3, 5].map((i) => parseInt(b.slice(i, i + 2), 16));
  return "#" + pa.map((v, i) => Math.round(v + (pb[i] - v) * t).toString(16).padStart(2, "0")).join("");
}

// The fill for a value on a scale whose ends are +-maxAbs.
export function colourFor(value, maxAbs) {
  const t = maxAbs > 0 ? Math.max(-1, Math.min(1, value / maxAbs)) : 0;
  const stops = t >= 0 ? WARM : COOL;
  const pos = Math.abs(t) * (stops.length - 1);
  const i = Math.min(Math.floor(pos), stops.length - 2);
  return mix(stops[i], stops[i + 1], pos - i);
}

export function gradientStops() {
  const out = [];
  for (let k = 0; k <= 20; k++) {
    const t = -1 + k / 10;
    out.push([k / 20, colourFor(t, 1)]);
  }
  return out;
}

let drawn = 0;

export function hatchPatterns(prefix) {
  const pattern = (id, d) => svg("pattern", { id, width: 8, height: 8, patternUnits: "userSpaceOnUse" },
    svg("path", { d, stroke: "#111", "stroke-width": 1.3, "stroke-opacity": 0.55, fill: "none" }));
  return [
    pattern(prefix + "-up-r", "M-2,2 L2,-2 M0,8 L8,0 M6,10 L10,6"), // "/" : base up before the right eye
    pattern(prefix + "-up-l", "M-2,6 L2,10 M0,0 L8,8 M6,-2 L10,2"), // "\" : base up before the left eye
  ];
}

// mode: "vertical" (vertical_base_up_right) or "horizontal" (horizontal_base_in).
export function drawMap(zone, mode, { onPick } = {}) {
  const map = zone.map;
  const threshold = zone.threshold.vertical;
  const grid = mode === "horizontal" ? map.horizontal_base_in : map.vertical_base_up_right;
  const key = mode === "horizontal" ? "horizontal_base_in" : "vertical_base_up_right";
  const maxAbs = mode === "horizontal" ? map.scale.horizontal_max_abs : map.scale.vertical_max_abs;
  const rows = map.drop_mm.length;
  const cols = map.lateral_mm.length;
  const cell = GRID_WIDTH / cols;
  const width = LEFT + GRID_WIDTH + RIGHT;
  const height = TOP + rows * cell + BOTTOM;
  const id = "zmap" + ++drawn;
  const x = (j) => LEFT + j * cell;
  const y = (i) => TOP + i * cell;
  const step = (list) => (list.length > 1 ? list[1] - list[0] : 1);
  const yAt = (drop) => TOP + ((drop - map.drop_mm[0]) / step(map.drop_mm)) * cell + cell / 2;
  const xAt = (lateral) => LEFT + ((lateral - map.lateral_mm[0]) / step(map.lateral_mm)) * cell + cell / 2;

  const root = svg("svg", { viewBox: `0 0 ${width.toFixed(1)} ${height.toFixed(1)}`, class: "zmap-svg",
    "data-mode": mode, focusable: "false" });
  root.append(svg("defs", {}, ...hatchPatterns(id)));

  // Hatching: vertical map, where the imbalance reaches the threshold (direction by
  // sign); horizontal map, where the net is base out.
  const hatched = (v) => (mode === "horizontal" ? v < 0 && Math.abs(v) >= 0.005 : Math.abs(v) >= threshold);
  const cells = svg("g", { class: "zmap-cells", "shape-rendering": "crispEdges" });
  const hatch = svg("g", { class: "zmap-hatch", "shape-rendering": "crispEdges", "pointer-events": "none" });
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      const value = grid[i][j];
      const rect = svg("rect", { x: x(j).toFixed(2), y: y(i).toFixed(2), width: (cell + 0.02).toFixed(2),
        height: (cell + 0.02).toFixed(2), fill: colourFor(value, maxAbs),
        "data-key": `reading_zone.map.${key}.${i}.${j}`, "data-value": String(value), "data-i": i, "data-j": j });
      cells.append(rect);
      if (hatched(value)) {
        const sign = mode === "horizontal" ? "up-l" : value > 0 ? "up-r" : "up-l";
        hatch.append(svg("rect", { x: x(j).toFixed(2), y: y(i).toFixed(2), width: cell.toFixed(2),
          height: cell.toFixed(2), fill: `url(#${id}-${sign})` }));
      }
    }
  }
  root.append(cells, hatch);

  // Edges between neighbouring cells where something changes, as one path each.
  const edges = (differs) => {
    let d = "";
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) {
        if (j + 1 < cols && differs(i, j, i, j + 1)) d += `M${x(j + 1).toFixed(2)},${y(i).toFixed(2)}V${y(i + 1).toFixed(2)}`;
        if (i + 1 < rows && differs(i, j, i + 1, j)) d += `M${x(j).toFixed(2)},${y(i + 1).toFixed(2)}H${x(j + 1).toFixed(2)}`;
      }
    }
    return d;
  };
  const zones = map.zones || {};
  const zoneEdges = edges((a, b, c, e) => ["right", "left"].some((eye) =>
    zones[eye] && zones[eye][a][b] !== zones[eye][c][e]));
  if (zoneEdges) {
    root.append(svg("path", { d: zoneEdges, class: "zmap-zone", fill: "none", stroke: "#fff", "stroke-width": 3 }),
      svg("path", { d: zoneEdges, class: "zmap-zone", fill: "none", stroke: "#222", "stroke-width": 1.4,
        "stroke-dasharray": "3 3" }));
  }
  if (mode === "vertical") {
    const over = (i, j) => Math.abs(grid[i][j]) >= threshold;
    const contour = edges((a, b, c, e) => over(a, b) !== over(c, e));
    if (contour) {
      root.append(svg("path", { d: contour, class: "zmap-contour-halo", fill: "none", stroke: "#fff",
        "stroke-width": 5, "stroke-linecap": "round" }),
      svg("path", { d: contour, class: "zmap-contour", fill: "none", stroke: "#000", "stroke-width": 2.6,
        "stroke-linecap": "round" }));
    }
  }
  root.append(svg("rect", { x: LEFT, y: TOP, width: GRID_WIDTH, height: (rows * cell).toFixed(2), fill: "none",
    stroke: "#333", "stroke-width": 1 }));

  // Axis numbers: a readable stride (1, 2, 5, 10 ... mm).
  const stride = (list) => {
    const s = Math.abs(step(list)) || 1;
    for (const nice of [0.5, 1, 2, 5, 10, 20]) if (nice >= s && (nice / s) * cell >= 26) return nice;
    return 50;
  };
  const ticks = svg("g", { class: "zmap-ticks", "font-size": FONT, fill: "#111" });
  const near = (v, n) => Math.abs(v / n - Math.round(v / n)) < 1e-6;
  const rowStride = stride(map.drop_mm);
  map.drop_mm.forEach((drop, i) => {
    if (!near(drop, rowStride)) return;
    ticks.append(svg("text", { x: LEFT - 6, y: (y(i) + cell / 2 + FONT * 0.35).toFixed(1), "text-anchor": "end",
      "data-key": `reading_zone.map.drop_mm.${i}`, "data-value": String(drop), text: String(drop) }));
  });
  const colStride = stride(map.lateral_mm);
  map.lateral_mm.forEach((lateral, j) => {
    if (!near(lateral, colStride)) return;
    ticks.append(svg("text", { x: (x(j) + cell / 2).toFixed(1), y: TOP - 8, "text-anchor": "middle",
      "data-key": `reading_zone.map.lateral_mm.${j}`, "data-value": String(lateral),
      text: lateral > 0 ? "+" + lateral : String(lateral).replace("-", "−") }));
  });
  root.append(ticks);

  // Threshold depth along the reading path: a diamond on the path and a mark on the axis.
  const drop = map.threshold_drop_mm;
  if (mode === "vertical" && drop !== null && drop !== undefined) {
    const cy = yAt(drop);
    const cx = xAt(0);
    const r = Math.max(5, Math.min(9, cell * 0.45));
    root.append(svg("path", { class: "zmap-threshold", d: `M${cx},${cy - r}L${cx + r},${cy}L${cx},${cy + r}L${cx - r},${cy}Z`,
      fill: "#fff", stroke: "#000", "stroke-width": 2 }),
    svg("path", { class: "zmap-threshold-axis", d: `M${LEFT - 4},${cy}H${LEFT + GRID_WIDTH + 4}`, stroke: "#000",
      "stroke-width": 1.4, "stroke-dasharray": "6 4", fill: "none" }));
  }
  // The reading point: a ring with a cross, white halo for any background.
  const reading = map.reading_point;
  if (reading) {
    const cx = xAt(reading.lateral_mm);
    const cy = yAt(reading.drop_mm);
    const r = Math.max(7, Math.min(12, cell * 0.6));
    root.append(svg("g", { class: "zmap-reading" },
      svg("circle", { cx, cy, r, fill: "none", stroke: "#fff", "stroke-width": 5 }),
      svg("circle", { cx, cy, r, fill: "none", stroke: "#000", "stroke-width": 2.4 }),
      svg("path", { d: `M${cx - r * 0.55},${cy}H${cx + r * 0.55}M${cx},${cy - r * 0.55}V${cy + r * 0.55}`,
        stroke: "#000", "stroke-width": 2 })));
  }
  if (onPick) {
    root.addEventListener("click", (event) => {
      const target = event.target.closest("rect[data-i]");
      if (target) onPick(Number(target.dataset.i), Number(target.dataset.j));
    });
  }
  return root;
}

// The colour scale as a bar, with marks at +-threshold on the vertical map.
export function drawScale(maxAbs, threshold, mode = "vertical") {
  const width = 300;
  const id = "zscale" + ++drawn;
  const bar = svg("svg", { viewBox: `0 0 ${width} 26`, class: "zscale-svg", focusable: "false", "aria-hidden": "true" });
  const gradient = svg("linearGradient", { id, x1: 0, x2: 1, y1: 0, y2: 0 });
  for (const [offset, colour] of gradientStops()) gradient.append(svg("stop", { offset, "stop-color": colour }));
  bar.append(svg("defs", {}, gradient, ...hatchPatterns(id)));
  bar.append(svg("rect", { x: 1, y: 4, width: width - 2, height: 18, fill: `url(#${id})`, stroke: "#333" }));
  if (threshold !== null && threshold !== undefined && maxAbs > 0) {
    const t = Math.min(1, threshold / maxAbs);
    const left = 1 + (width - 2) * (0.5 - t / 2);
    const right = 1 + (width - 2) * (0.5 + t / 2);
    bar.append(svg("rect", { x: 1, y: 4, width: (left - 1).toFixed(1), height: 18, fill: `url(#${id}-up-l)` }),
      svg("rect", { x: right.toFixed(1), y: 4, width: (width - 1 - right).toFixed(1), height: 18, fill: `url(#${id}-up-r)` }),
      svg("path", { d: `M${left.toFixed(1)},1V25M${right.toFixed(1)},1V25`, stroke: "#000", "stroke-width": 2.6 }));
  }
  if (mode === "horizontal") {
    bar.append(svg("rect", { x: 1, y: 4, width: (width - 2) / 2, height: 18, fill: `url(#${id}-up-l)` }));
  }
  bar.append(svg("path", { d: `M${width / 2},1V25`, stroke: "#333", "stroke-width": 1, "stroke-dasharray": "2 2" }));
  return bar;
}
