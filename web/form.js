// The form and the case document (docs/case-format.md), both ways.
// Text becomes a number only when it is a plain decimal; anything else is sent
// as typed, so that the core refuses it and names the field.

const EYES = ["right", "left"];
const TEXT_FIELDS = new Set(["prism", "rx"]);
const LENS_FIELDS = ["sphere", "cylinder", "axis", "add", "prism", "rx"];
const FITTING_KEYS = ["working_distance_mm", "centre_of_rotation_mm", "reading_depth_mm"];
const FRAME_KEYS = ["a_mm", "dbl_mm", "ed_mm", "b_mm"];
const PLAIN_NUMBER = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)$/;

export function toValue(raw) {
  const text = raw.trim().replace(/\u2212/g, "-");
  if (text === "") return undefined;
  if (PLAIN_NUMBER.test(text)) return Number(text.replace(",", "."));
  return raw;
}

function toText(value) {
  if (value === undefined || value === null) return "";
  if (typeof value === "string") return value;
  if (typeof value === "number") return String(value);
  return JSON.stringify(value);
}

// Dioptres the way the trade writes them: a sign always, two decimals ("+1.00").
// Only a number the form writes back into a field goes through here.
export function dioptreText(value) {
  if (typeof value !== "number" || !Number.isFinite(value)) return toText(value);
  const text = Math.abs(value).toFixed(2);
  if (Number(text) === 0) return "0.00";
  return (value < 0 ? "-" : "+") + text;
}
const DIOPTRE_FIELDS = new Set(["sphere", "cylinder", "add"]);

function prismText(value) {
  if (value === undefined || value === null) return "";
  if (typeof value !== "object" || Array.isArray(value)) return toText(value);
  const keys = Object.keys(value);
  const num = (v) => typeof v === "number";
  if (keys.every((k) => k === "base_in" || k === "base_up") && keys.every((k) => num(value[k]))) {
    const parts = [];
    const h = value.base_in || 0;
    const v = value.base_up || 0;
    if (v) parts.push(Math.abs(v) + (v > 0 ? " BU" : " BD"));
    if (h) parts.push(Math.abs(h) + (h > 0 ? " BI" : " BO"));
    return parts.join(" ");
  }
  if (keys.length === 2 && num(value.amount) && num(value.base_360)) {
    return value.amount + " @ " + value.base_360;
  }
  return JSON.stringify(value);
}

export class CaseForm {
  constructor(form, template) {
    this.form = form;
    this.template = template;
    this.list = form.querySelector("#custom-points");
    this.extras = {};
    // Further parts of the form (zone-form.js): fill(doc, extras) takes their keys
    // out of extras; collect(doc, inputs) writes them back and maps their inputs.
    this.parts = [];
    this.byPath = new Map();
    for (const input of document.querySelectorAll("[data-path]")) this.byPath.set(input.dataset.path, input);
    this.syncWritten();
  }

  input(path) {
    return this.byPath.get(path);
  }

  value(path) {
    const input = this.input(path);
    if (!input) return undefined;
    const key = path.split(".").pop();
    if (TEXT_FIELDS.has(key) || path === "name") {
      const text = input.value.trim();
      return text === "" ? undefined : input.value;
    }
    return toValue(input.value);
  }

  // A written prescription replaces sphere, cylinder and axis.
  syncWritten() {
    for (const eye of EYES) {
      const written = this.input(eye + ".rx").value.trim() !== "";
      for (const key of ["sphere", "cylinder", "axis"]) {
        const input = this.input(eye + "." + key);
        input.disabled = written;
        input.classList.toggle("superseded", written);
      }
    }
  }

  addPoint(point = {}) {
    const node = this.template.content.firstElementChild.cloneNode(true);
    const n = this.list.children.length + 1;
    const uid = "p" + Date.now().toString(36) + Math.random().toString(36).slice(2, 6);
    node.querySelector("legend").textContent = "Own point " + n;
    for (const input of node.querySelectorAll("input")) {
      input.id = uid + "-" + input.dataset.field.replace(".", "-");
      const [eye, key] = input.dataset.field.split(".");
      const value = key ? (point[eye] || {})[key] : point.name;
      input.value = toText(value);
      if (key) {
        input.setAttribute("aria-label", (eye === "right" ? "Right eye, " : "Left eye, ") +
          (key === "in_mm" ? "in (mm, toward the nose)" : "up (mm)") + ", own point " + n);
        input.inputMode = "text";
      }
    }
    const nameInput = node.querySelector("[data-field=name]");
    node.querySelector(".pname label").htmlFor = nameInput.id;
    node.querySelector(".remove").setAttribute("aria-label", "Remove own point " + n);
    this.list.append(node);
    return node;
  }

  renumber() {
    [...this.list.children].forEach((row, i) => {
      row.querySelector("legend").textContent = "Own point " + (i + 1);
      row.querySelector(".remove").setAttribute("aria-label", "Remove own point " + (i + 1));
    });
  }

  // The case document the form describes, and which input each path belongs to.
  collect() {
    const doc = {};
    const inputs = new Map();
    const put = (obj, key, path) => {
      const value = this.value(path);
      if (value !== undefined) obj[key] = value;
      inputs.set(path, this.input(path));
    };
    put(doc, "name", "name");
    for (const eye of EYES) {
      const lens = {};
      const written = this.input(eye + ".rx").value.trim() !== "";
      for (const key of LENS_FIELDS) {
        if (written && ["sphere", "cylinder", "axis"].includes(key)) continue;
        put(lens, key, eye + "." + key);
      }
      doc[eye] = lens;
    }
    const distance = this.form.querySelector("#point-distance");
    const near = this.form.querySelector("#point-near");
    const fittingTyped = EYES.some((eye) => this.input(`fitting.${eye}.mono_pd_mm`).value.trim() !== "" ||
      this.input(`fitting.${eye}.height_mm`).value.trim() !== "");
    if (fittingTyped || distance.checked || near.checked) {
      const fitting = {};
      for (const eye of EYES) {
        fitting[eye] = {};
        put(fitting[eye], "mono_pd_mm", `fitting.${eye}.mono_pd_mm`);
        put(fitting[eye], "height_mm", `fitting.${eye}.height_mm`);
      }
      for (const key of FITTING_KEYS) put(fitting, key, "fitting." + key);
      doc.fitting = fitting;
    }
    if (FRAME_KEYS.some((key) => this.input("frame." + key).value.trim() !== "")) {
      doc.frame = {};
      for (const key of FRAME_KEYS) put(doc.frame, key, "frame." + key);
    }
    const points = [];
    for (const box of [distance, near]) {
      if (!box.checked) continue;
      inputs.set("points." + points.length, box);
      points.push(box.dataset.point);
    }
    for (const row of this.list.children) {
      const where = "points." + points.length;
      const point = {};
      const name = row.querySelector("[data-field=name]");
      if (name.value.trim() !== "") point.name = name.value;
      inputs.set(where + ".name", name);
      for (const eye of EYES) {
        point[eye] = {};
        for (const key of ["in_mm", "up_mm"]) {
          const input = row.querySelector(`[data-field="${eye}.${key}"]`);
          const value = toValue(input.value);
          if (value !== undefined) point[eye][key] = value;
          inputs.set(`${where}.${eye}.${key}`, input);
        }
      }
      inputs.set(where, name);
      points.push(point);
    }
    doc.points = points;
    for (const part of this.parts) part.collect(doc, inputs);
    mergeExtras(doc, this.extras);
    return { doc, inputs };
  }

  // Show a case document in the form. Parts the form does not edit (a segment,
  // a slab-off, notes, later sections) are kept and sent along unchanged.
  fill(source) {
    const doc = source && typeof source === "object" && !Array.isArray(source) ? source : {};
    const extras = {};
    const set = (path, value) => { this.input(path).value = toText(value); };
    set("name", doc.name);
    for (const eye of EYES) {
      const lens = doc[eye] && typeof doc[eye] === "object" ? doc[eye] : {};
      for (const key of LENS_FIELDS) {
        this.input(eye + "." + key).value = key === "prism" ? prismText(lens[key])
          : DIOPTRE_FIELDS.has(key) ? dioptreText(lens[key]) : toText(lens[key]);
      }
      for (const [key, value] of Object.entries(lens)) {
        if (!LENS_FIELDS.includes(key)) (extras[eye] ||= {})[key] = value;
      }
    }
    const fitting = doc.fitting && typeof doc.fitting === "object" ? doc.fitting : {};
    for (const eye of EYES) {
      const fit = fitting[eye] && typeof fitting[eye] === "object" ? fitting[eye] : {};
      set(`fitting.${eye}.mono_pd_mm`, fit.mono_pd_mm);
      set(`fitting.${eye}.height_mm`, fit.height_mm);
    }
    for (const key of FITTING_KEYS) {
      const input = this.input("fitting." + key);
      input.value = key in fitting ? toText(fitting[key]) : input.dataset.default;
    }
    const frame = doc.frame && typeof doc.frame === "object" ? doc.frame : {};
    for (const key of FRAME_KEYS) set("frame." + key, frame[key]);
    const points = Array.isArray(doc.points) ? doc.points : null;
    this.form.querySelector("#point-distance").checked = points ? points.includes("distance") : true;
    this.form.querySelector("#point-near").checked = points ? points.includes("near") : true;
    this.list.replaceChildren();
    for (const point of points || []) {
      if (point && typeof point === "object" && !Array.isArray(point)) this.addPoint(point);
    }
    for (const [key, value] of Object.entries(doc)) {
      if (!["name", "right", "left", "fitting", "frame", "points"].includes(key)) extras[key] = value;
    }
    for (const part of this.parts) part.fill(doc, extras);
    this.extras = extras;
    this.syncWritten();
    return extras;
  }
}

function mergeExtras(doc, extras) {
  for (const [key, value] of Object.entries(extras)) {
    if ((key === "right" || key === "left") && value && typeof value === "object") {
      Object.assign(doc[key], value);
    } else {
      doc[key] = value;
    }
  }
}

// Words for a case path, for messages next to the field. Other parts of the
// form add words for their own keys with addPathWords.
const extraWords = {};
export function addPathWords(words) {
  Object.assign(extraWords, words);
}

const WORDS = {
  right: "Right", left: "Left", sphere: "sphere", cylinder: "cylinder", axis: "axis", add: "add",
  prism: "prescribed prism", rx: "prescription as written", fitting: "Fitting",
  mono_pd_mm: "monocular PD", height_mm: "fitting height",
  working_distance_mm: "working distance", centre_of_rotation_mm: "lens to centre of rotation",
  reading_depth_mm: "reading depth", frame: "Frame", a_mm: "box width A", dbl_mm: "bridge DBL",
  ed_mm: "effective diameter ED", b_mm: "box depth B", points: "Point of gaze",
  in_mm: "in", up_mm: "up", name: "name", base_in: "base in", base_up: "base up",
};

export function pathInWords(path) {
  const words = { ...WORDS, ...extraWords };
  const parts = String(path).split(".").filter((p) => p !== "");
  const say = (p) => (Object.hasOwn(words, p) ? words[p] : p.replace(/_mm$/, "").replace(/_/g, " "));
  if (parts[0] === "points" && parts.length > 1) {
    return ["Point of gaze " + (Number(parts[1]) + 1), ...parts.slice(2).map(say)].join(", ");
  }
  if (parts[0] === "name") return "Case name";
  // fitting.right.mono_pd_mm: "Right monocular PD" (the eye first, as people say it).
  if (parts[0] === "fitting" && (parts[1] === "right" || parts[1] === "left")) {
    return [say(parts[1]), ...parts.slice(2).map(say)].join(" ");
  }
  // A segment's height is the segment height, not the fitting height.
  if (parts.length >= 2 && parts[parts.length - 2] === "segment" && parts[parts.length - 1] === "height_mm") {
    return [...parts.slice(0, -2).map(say), "segment height"].join(" ");
  }
  const text = parts.map(say).join(" ");
  return text.charAt(0).toUpperCase() + text.slice(1);
}

// A refusal's message in words: internal keys such as "right.sphere" or
// "diameter_mm" become the words the form uses ("Right sphere", "diameter").
// The core's refusal as shown after its field's name: without the field's key at
// its start (the screen names the field itself, in words), other keys in words.
export function refusalMessage(field, message) {
  let text = String(message);
  if (field && text.startsWith(field) && /^(:\s|\s)/.test(text.slice(field.length))) {
    text = text.slice(field.length).replace(/^:?\s+/, "");
  }
  return messageInWords(text);
}

function messageInWords(message) {
  return String(message)
    .replace(/\b[a-z][a-z_]*(?:\.(?:[a-z][a-z0-9_]*|\d+))+\b/g,
      (path) => (/^(e\.g|i\.e|etc)$/.test(path) ? path : pathInWords(path)))
    .replace(/\b[a-z]+(?:_[a-z0-9]+)+\b/g, (key) => pathInWords(key).toLowerCase());
}
