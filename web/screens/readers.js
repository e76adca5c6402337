// Ready-made readers for an outreach clinic: the patient's near powers and PD,
// the clinic's stock (kept on this device), and the core's ranking of the pairs
// on the shelf (docs/case-format.md, "## Ready-made readers"). Handing a pair
// out and undoing it go through the core as well (readers_hand_out, readers_undo).
import {
  Calculation, answerSlot, button, checkScreen, cautionsBox, collect, download, el, eyeGrid, factRow, facts, field, fig, fixed, inputValue,
  loadSaved, millimetres, prismFigures, restoreFormDraft, resultsPanel, save, saveFormDraft, selectField,
  signed, standingCaution, withUnit,
} from "../checks-common.js";
import * as store from "../store.js";
import { readDocument, wrongKind } from "../documents.js";

const COLUMNS = [
  { key: "id", label: "Label", hint: "as on the shelf", kind: "text" },
  { key: "power", label: "Power", hint: "D", kind: "number" },
  { key: "oc_distance_mm", label: "OC distance", hint: "mm", kind: "number" },
  { key: "frame_size", label: "Frame", hint: "optional", kind: "text" },
  { key: "count", label: "On hand", hint: "pairs", kind: "number" },
];
const PD_KINDS = [["distance", "Distance PD (binocular)"], ["near", "Near PD (near CD, measured at near)"],
  ["mono", "Monocular distance PDs"]];
const dioptresFig = (v) => signed(2)(v) + " D";

export function createReadersScreen({ messenger, firstResult }) {
  // ---------------------------------------------------------------- the patient
  const form = el("form", { class: "check-inputs-part", id: "rd-form", novalidate: "", autocomplete: "off" });
  const pdKind = selectField({ id: "rd-pd-kind", label: "PD measured as", options: PD_KINDS, wide: true });
  pdKind.querySelector("select").removeAttribute("data-path");
  const distancePd = field({ id: "rd-distance-pd", label: "Distance PD", hint: "mm", path: "wearer.distance_pd_mm" });
  const nearPd = field({ id: "rd-near-pd", label: "Near PD", hint: "mm, as measured at near", path: "wearer.near_pd_mm" });
  const monoPds = el("div", { class: "fields two" },
    field({ id: "rd-mono-right", label: "Right monocular PD", hint: "mm", path: "wearer.right.mono_pd_mm" }),
    field({ id: "rd-mono-left", label: "Left monocular PD", hint: "mm", path: "wearer.left.mono_pd_mm" }));
  const limitsField = selectField({ id: "rd-limits", label: "Limits for the prism", path: "limits", wide: true,
    options: [["iso-16034-2002", "ISO 16034"]] });
  const limitsInfo = el("div", { class: "standard-info", id: "rd-limits-info", "data-action": "readers_limit_sets",
    "aria-live": "polite" });
  form.append(
    el("section", { class: "panel", "aria-labelledby": "rd-h-patient" },
      el("h3", { id: "rd-h-patient", text: "Patient" }),
      eyeGrid("rd-rx", "Near powers", [
        { key: "rx", label: "Near powers", hint: "e.g. +2.50 DS or +2.25 / -0.50 x 90", kind: "text",
          path: (e) => `wearer.${e}.rx`, placeholder: "+2.50 DS" },
      ]),
      el("div", { class: "fields two" }, pdKind, distancePd, nearPd),
      monoPds,
      el("div", { class: "fields two" },
        field({ id: "rd-working", label: "Working distance", hint: "mm from the lenses; 400 if left empty",
          path: "wearer.working_distance_mm", placeholder: "400" }),
        field({ id: "rd-rotation", label: "Lens to centre of rotation", hint: "mm; 27 if left empty",
          path: "wearer.centre_of_rotation_mm", placeholder: "27" }),
        field({ id: "rd-higher", label: "Right pupil higher by", hint: "mm, optional; negative if lower",
          path: "wearer.right_eye_higher_mm" }))),
    el("section", { class: "panel", "aria-labelledby": "rd-h-limits" },
      el("h3", { id: "rd-h-limits", text: "Limits" }),
      limitsField,
      limitsInfo));

  // ---------------------------------------------------------------- the stock
  // The stock: one stored entry per row ({uid, order, row}, store.js), so that
  // two tabs never overwrite each other's rows; another tab's changes arrive by
  // storage events and are drawn at once.
  let { entries: rows, skipped } = store.stockEntries();
  let undo = loadSaved("readers-undo", null);
  let stockInputs = new Map(); // payload path -> input
  const stockList = el("ol", { class: "stock-list", id: "rd-stock-list" });
  const stockMessage = el("p", { class: "stock-message", id: "rd-stock-message", role: "status", "aria-live": "polite" });
  const importReport = el("div", { class: "import-report", id: "rd-import-report", "data-action": "readers_stock_import" });
  const fileInput = el("input", { type: "file", id: "rd-import-file", accept: ".csv,text/csv,text/plain", hidden: "",
    "aria-label": "Stock file (CSV) to import" });
  const stockSection = el("section", { class: "panel stock", "aria-labelledby": "rd-h-stock" },
    el("div", { class: "panel-head" }, el("h3", { id: "rd-h-stock", text: "Clinic stock" }),
      el("span", { class: "stock-count", id: "rd-stock-summary" })),
    el("p", { class: "hint", text: "Kept on this device only. Each row is one kind of pair: the same plus power in both " +
      "lenses, the distance between the optical centres (OC), and how many are on hand." }),
    stockList,
    el("div", { class: "buttons" },
      button("Add a pair", { id: "rd-add-row", class: "secondary" }),
      button("Import CSV…", { id: "rd-import", class: "secondary" }),
      button("Export CSV", { id: "rd-export", class: "secondary" }),
      fileInput),
    stockMessage, importReport);

  // What was handed out, with Undo: under the answer band, so it is in view where the button was.
  const handoutBar = el("div", { class: "handout-bar", id: "rd-handout", role: "status", "aria-live": "polite" });
  const results = resultsPanel({ id: "rd-results", action: "readers_rank", title: "Pairs for this patient" });
  const band = answerSlot({ id: "rd-answer", action: "readers_rank", label: "The pair to hand out",
    prompt: "Enter the patient's near powers and PD: the pair to hand out appears here.", after: [handoutBar] });
  const root = el("main", { class: "screen", id: "screen-readers", "aria-labelledby": "rd-title", hidden: "" },
    el("div", { class: "screen-title" }, el("h2", { id: "rd-title", tabindex: "-1", text: "Ready-made readers" })),
    band,
    el("div", { class: "screen-intro" },
      el("p", { text: "Which pair on the shelf suits this patient, and how much prism it puts before the eyes. " +
        "Works without a network once the app has been opened on this device." }),
      standingCaution("A screening aid: a full eye examination comes first; local rules and licensed practitioners decide.")),
    el("div", { class: "check-inputs" }, form, stockSection), results);

  function stockCell(i, column, value) {
    const id = `rd-stock-${i}-${column.key}`;
    const input = el("input", { id, type: "text", "data-kind": column.kind, "data-column": column.key,
      inputmode: column.kind === "number" ? "decimal" : undefined, autocomplete: "off", spellcheck: "false" });
    input.value = value === undefined || value === null ? "" : String(value);
    return el("div", { class: "stock-cell cell-" + column.key },
      el("label", { for: id }, column.label, " ", el("small", { text: column.hint })), input);
  }

  function drawStock() {
    stockList.replaceChildren(...rows.map(({ uid, row }, i) => {
      const remove = button("Remove", { class: "secondary remove", "aria-label": `Remove pair ${i + 1}${row.id ? " (" + row.id + ")" : ""}` });
      remove.dataset.row = String(i);
      return el("li", { class: "stock-row", "data-row": String(i), "data-uid": uid },
        el("span", { class: "row-number", "aria-hidden": "true", text: String(i + 1) }),
        ...COLUMNS.map((c) => stockCell(i, c, row[c.key])), remove);
    }));
    root.querySelector("#rd-stock-summary").textContent = rows.length
      ? `${rows.length} kind${rows.length === 1 ? "" : "s"} of pair listed` : "none listed yet";
  }

  function keepRow(entry) {
    if (!store.putStockRow(entry.uid, entry.order, entry.row)) {
      stockMessage.textContent = "Not kept on this device: its storage is full or turned off.";
    }
  }

  function nextOrder() {
    return rows.reduce((most, entry) => Math.max(most, entry.order), 0) + 1;
  }

  function addRow(row) {
    const entry = { uid: store.newUid(), order: nextOrder(), row };
    rows.push(entry);
    keepRow(entry);
    return entry;
  }

  // The row of the pair with this label (the core names pairs by their id).
  function entryOf(id) {
    return rows.find((entry) => String(entry.row.id).trim() === id);
  }

  // Another tab changed the stock: read it again, keeping the focus and caret.
  window.addEventListener("storage", (e) => {
    if (e.key !== null && !e.key.startsWith(store.STOCK_PREFIX)) return;
    const active = document.activeElement;
    const cell = active && stockList.contains(active) && active.dataset.column
      ? { uid: active.closest(".stock-row").dataset.uid, column: active.dataset.column, at: active.selectionStart } : null;
    ({ entries: rows } = store.stockEntries());
    drawStock();
    if (cell) {
      const i = rows.findIndex((entry) => entry.uid === cell.uid);
      const input = i >= 0 && stockList.querySelector(`#rd-stock-${i}-${cell.column}`);
      if (input) {
        input.focus();
        input.setSelectionRange(cell.at, cell.at);
      }
    }
    calc.schedule(0);
  });

  // The stock for a request: rows left wholly empty are skipped; paths map back to inputs.
  function stockPayload() {
    const stock = [];
    stockInputs = new Map();
    rows.forEach((_, i) => {
      const pair = {};
      const cells = {};
      for (const column of COLUMNS) {
        const input = stockList.querySelector(`#rd-stock-${i}-${column.key}`);
        cells[column.key] = input;
        const value = input ? inputValue(input) : undefined;
        if (value !== undefined) pair[column.key] = value;
      }
      if (!Object.keys(pair).length) {
        for (const input of Object.values(cells)) input.removeAttribute("data-path");
        return;
      }
      const at = stock.length;
      for (const [key, input] of Object.entries(cells)) {
        stockInputs.set(`stock.${at}.${key}`, input);
        input.dataset.path = `stock.${at}.${key}`;
      }
      stockInputs.set(`stock.${at}`, cells.id);
      stock.push(pair);
    });
    return stock;
  }

  // After a hand-out or its undo only that pair's count changed: only its row is written.
  function takeCount(stock, id) {
    const pair = stock.find((p) => p.id === id);
    const entry = entryOf(id);
    if (!pair || !entry) return;
    entry.row = { ...entry.row, count: String(pair.count) };
    keepRow(entry);
  }

  function rowsFrom(stock) {
    return stock.map((pair) => Object.fromEntries(COLUMNS.map((c) => [c.key, pair[c.key] === undefined ? "" : String(pair[c.key])])));
  }

  stockList.addEventListener("input", (e) => {
    const input = e.target.closest("input[data-column]");
    if (!input) return;
    const i = Number(input.closest(".stock-row").dataset.row);
    rows[i].row[input.dataset.column] = input.value;
    keepRow(rows[i]);
    calc.schedule();
  });
  stockList.addEventListener("click", (e) => {
    const remove = e.target.closest(".remove");
    if (!remove) return;
    const i = Number(remove.dataset.row);
    const [entry] = rows.splice(i, 1);
    const gone = entry.row.id || `pair ${i + 1}`;
    store.removeStockRow(entry.uid);
    drawStock();
    const next = stockList.querySelector(`.stock-row[data-row="${Math.min(i, rows.length - 1)}"] .remove`);
    (next || root.querySelector("#rd-add-row")).focus();
    const again = button("Undo", { class: "secondary undo", id: "rd-undo-remove", "aria-label": `Undo: put ${gone} back on the list` });
    again.addEventListener("click", () => {
      if (!rows.some((r) => r.uid === entry.uid)) {
        rows.push(entry);
        rows.sort((a, b) => a.order - b.order || a.uid.localeCompare(b.uid));
        keepRow(entry);
        drawStock();
      }
      stockMessage.textContent = `Put ${gone} back on the list.`;
      calc.schedule(0);
    });
    stockMessage.replaceChildren(`Removed ${gone} from the list. `, again);
    calc.schedule(0);
  });
  root.querySelector("#rd-add-row").addEventListener("click", () => {
    addRow({ id: "", power: "", oc_distance_mm: "", frame_size: "", count: "" });
    drawStock();
    stockList.querySelector(`#rd-stock-${rows.length - 1}-id`).focus();
  });

  // ---------------------------------------------------------------- import and export
  root.querySelector("#rd-import").addEventListener("click", () => fileInput.click());
  fileInput.addEventListener("change", async () => {
    const file = fileInput.files[0];
    fileInput.value = "";
    if (!file) return;
    let text;
    try {
      text = await file.text();
    } catch {
      stockMessage.textContent = `Could not read ${file.name}.`;
      return;
    }
    // A JSON file must be a readers document (its stock is imported); a case,
    // a pair check or a deviation is refused in one sentence.
    if (/^\uFEFF?\s*[{[]/.test(text)) {
      const found = await readDocument(messenger, text, file.name);
      if (found.problem) {
        stockMessage.textContent = `Not imported: ${found.problem}.`;
        return;
      }
      if (found.kind !== "readers") {
        stockMessage.textContent = wrongKind(file.name, found.kind, "readers") + " The stock list is unchanged.";
        return;
      }
      const stock = Array.isArray(found.document.stock) ? found.document.stock : [];
      const csv = await messenger.request("readers_stock_export", { stock });
      if (!csv.ok) {
        stockMessage.textContent = `Not imported: ${file.name}: ${csv.error.message}`;
        return;
      }
      text = csv.result.csv;
    }
    const reply = await messenger.request("readers_stock_import", { csv: text });
    if (!reply.ok) {
      stockMessage.textContent = `Not imported: ${reply.error.message}`;
      importReport.replaceChildren();
      return;
    }
    const result = reply.result;
    let added = 0;
    let updated = 0;
    for (const pair of rowsFrom(result.stock)) {
      const entry = entryOf(pair.id);
      if (entry) {
        entry.row = pair;
        keepRow(entry);
        updated += 1;
      } else {
        addRow(pair);
        added += 1;
      }
    }
    drawStock();
    stockMessage.textContent = `Imported ${result.stock.length} pair${result.stock.length === 1 ? "" : "s"} from ${file.name}` +
      ` (${added} added, ${updated} updated)` +
      (result.errors.length ? `; ${result.errors.length} row${result.errors.length === 1 ? " was" : "s were"} refused (listed below).` : ".");
    drawImportErrors(result, file.name);
    calc.schedule(0);
  });

  function drawImportErrors(result, name) {
    if (!result.errors.length) {
      importReport.replaceChildren();
      return;
    }
    importReport.replaceChildren(
      el("h4", { text: `Rows of ${name} not imported` }),
      el("p", { class: "hint", text: "The good rows were kept. Correct these in the file and import it again, or add them by hand." }),
      el("ul", { class: "import-errors" }, ...result.errors.map((error, i) => el("li", { "data-line": String(error.line),
        "data-field": error.field },
      el("strong", {}, "Line ", fig(result, `errors.${i}.line`), error.column ? ", " : "",
        error.column ? fig(result, `errors.${i}.column`) : null, ": "),
      fig(result, `errors.${i}.message`)))));
  }

  root.querySelector("#rd-export").addEventListener("click", async () => {
    const stock = stockPayload();
    const reply = await messenger.request("readers_stock_export", { stock });
    if (!reply.ok) {
      calc.refuse(reply.error, stockInputs);
      stockMessage.textContent = "Not exported: correct the marked row first.";
      return;
    }
    download("readers-stock.csv", reply.result.csv, "text/csv");
    stockMessage.textContent = `Exported ${stock.length} row${stock.length === 1 ? "" : "s"} as readers-stock.csv.`;
  });

  // ---------------------------------------------------------------- hand out and undo
  async function handOut(id) {
    const reply = await messenger.request("readers_hand_out", { stock: stockPayload(), id });
    if (!reply.ok) {
      handoutBar.replaceChildren(el("p", { class: "problem", text: reply.error.message }));
      return;
    }
    undo = reply.result.undo;
    takeCount(reply.result.stock, undo.id);
    save("readers-undo", undo);
    drawStock();
    drawHandout(`Handed out one pair of ${undo.id}; ${undo.count_after} left on the shelf.`);
    handoutBar.querySelector("#rd-undo").focus();  // the button pressed is redrawn; Undo is the next step
    handoutBar.scrollIntoView({ block: "nearest" });
    calc.schedule(0);
  }

  async function undoHandOut() {
    if (!undo) return;
    const reply = await messenger.request("readers_undo", { stock: stockPayload(), undo });
    if (!reply.ok) {
      handoutBar.replaceChildren(el("p", { class: "problem", text: "Could not undo: " + reply.error.message }));
      return;
    }
    const id = undo.id;
    takeCount(reply.result.stock, id);
    undo = null;
    save("readers-undo", null);
    drawStock();
    drawHandout(`Put one pair of ${id} back on the shelf.`);
    handoutBar.querySelector("p").focus();
    calc.schedule(0);
  }

  function drawHandout(text) {
    const parts = [el("p", { text, tabindex: "-1" })];
    if (undo) {
      const again = button("Undo", { id: "rd-undo", class: "secondary", "aria-label": `Undo: put one pair of ${undo.id} back` });
      again.addEventListener("click", undoHandOut);
      parts.push(again);
    }
    handoutBar.replaceChildren(...parts);
  }

  // ---------------------------------------------------------------- the payload
  function applyPdKind() {
    const kind = form.querySelector("#rd-pd-kind").value;
    distancePd.hidden = kind !== "distance";
    nearPd.hidden = kind !== "near";
    monoPds.hidden = kind !== "mono";
  }

  function build() {
    const { doc, inputs, typed } = collect(form);
    doc.wearer ||= {};
    for (const eye of ["right", "left"]) doc.wearer[eye] ||= {};
    doc.stock = stockPayload();
    for (const [path, input] of stockInputs) inputs.set(path, input);
    return { doc, inputs, typed: typed && Boolean(doc.wearer.right.rx || doc.wearer.left.rx) };
  }

  const calc = new Calculation({
    messenger, action: "readers_rank", results, band, build,
    render: renderRanking,
    hint: "Enter the patient's near powers to rank the pairs on the shelf.",
    aliases: () => {
      const kind = form.querySelector("#rd-pd-kind").value;
      const pd = kind === "near" ? "wearer.near_pd_mm" : kind === "mono" ? "wearer.right.mono_pd_mm" : "wearer.distance_pd_mm";
      return { "wearer.distance_pd_mm": pd, "wearer.near_pd_mm": pd, stock: "stock.0.id", "wearer.right": "wearer.right.rx",
        "wearer.left": "wearer.left.rx" };
    },
    onShown: () => firstResult(),
  });

  function changed() {
    applyPdKind();
    saveFormDraft("readers", form);
    calc.schedule();
  }
  form.addEventListener("input", changed);
  form.addEventListener("change", changed);
  form.addEventListener("submit", (e) => e.preventDefault());
  form.querySelector("#rd-limits").addEventListener("change", showLimits);

  // ---------------------------------------------------------------- limit sets
  let limitSets = null;
  async function loadLimits() {
    const reply = await messenger.request("readers_limit_sets", {});
    if (!reply.ok) {
      limitsInfo.replaceChildren(el("p", { class: "problem", text: reply.error.message }));
      return;
    }
    limitSets = reply.result;
    const select = form.querySelector("#rd-limits");
    const wanted = (loadSaved("readers") || {})["rd-limits"] || select.value;
    select.replaceChildren(...limitSets.limit_sets.map((s) => el("option", { value: s.id,
      text: s.id === "iso-16034-2002" ? "ISO 16034 (standard for ready-made readers)" : "Low-resource settings (Optom Vis Sci 2007)" })));
    if (limitSets.limit_sets.some((s) => s.id === wanted)) select.value = wanted;
    showLimits();
  }

  function showLimits() {
    if (!limitSets) return;
    const i = limitSets.limit_sets.findIndex((s) => s.id === form.querySelector("#rd-limits").value);
    if (i < 0) return;
    const p = `limit_sets.${i}`;
    const set = limitSets.limit_sets[i];
    limitsInfo.replaceChildren(...[
      set.unverified ? el("div", { class: "unverified-flag", role: "note" }, el("strong", { text: "Unverified limits. " }),
        "These values are from memory; check them before relying on the ranking.") : null,
      el("p", { class: "standard-title" }, fig(limitSets, p + ".title"), " ",
        el("span", { class: "certainty " + (set.unverified ? "bad" : "good") }, fig(limitSets, p + ".certainty"))),
      el("ul", { class: "limit-checks" }, ...set.checks.map((_, k) => el("li", {},
        fig(limitSets, `${p}.checks.${k}.label`), ": at most ", fig(limitSets, `${p}.checks.${k}.limit`, withUnit("prism dioptres")))),
      set.power_range_d ? el("li", {}, "covers powers ", fig(limitSets, `${p}.power_range_d.0`, dioptresFig), " to ",
        fig(limitSets, `${p}.power_range_d.1`, dioptresFig)) : null),
      el("p", { class: "source-text" }, el("strong", { text: "Standard: " }), fig(limitSets, p + ".standard"), ", edition ",
        fig(limitSets, p + ".edition")),
      el("p", { class: "source-text" }, el("strong", { text: "Source: " }), fig(limitSets, p + ".source"))].filter(Boolean));
  }

  // ---------------------------------------------------------------- drawing the answer
  function renderRanking(body, result) {
    const parts = [];
    if (result.custom_needed) {
      parts.push(el("div", { class: "verdict-banner", "data-result": "fail" },
        el("p", { class: "verdict-word", text: "Custom spectacles needed" }),
        el("p", { class: "verdict-against", text: "No ready-made pair on the list suits this patient:" }),
        el("ul", { class: "reasons" }, ...result.reasons.map((_, i) => el("li", { "data-code": result.reasons[i].code },
          fig(result, `reasons.${i}.message`))))));
    } else {
      parts.push(el("div", { class: "verdict-banner", "data-result": "pass" },
        el("p", { class: "verdict-word", text: `${result.ranked.length} suitable pair${result.ranked.length === 1 ? "" : "s"} on hand` }),
        el("p", { class: "verdict-against" }, "within ", fig(result, "limits.title"), "; best first.")));
    }
    parts.push(cautionsBox(result, "Before you hand a pair out"));
    parts.push(el("section", { class: "derived", "aria-labelledby": "rd-h-wearer" },
      el("h3", { id: "rd-h-wearer", text: "This patient" }),
      facts(
        factRow("Power to look for", fig(result, "wearer.target_power_d", dioptresFig), " (mean spherical equivalent)"),
        factRow("Spherical equivalents", "R ", fig(result, "wearer.spherical_equivalent_d.right", dioptresFig), " · L ",
          fig(result, "wearer.spherical_equivalent_d.left", dioptresFig)),
        factRow("Difference between the eyes", fig(result, "wearer.anisometropia_d", withUnit("dioptres"))),
        factRow("Largest cylinder", fig(result, "wearer.largest_cylinder_d", withUnit("dioptres"))),
        factRow("Near CD", fig(result, "wearer.near_cd_mm", millimetres), " (", fig(result, "wearer.near_cd_from"), ")")),
      result.notes.length ? el("ul", { class: "notes" }, ...result.notes.map((_, i) => el("li", {}, fig(result, `notes.${i}`)))) : null));
    if (result.ranked.length) {
      parts.push(el("ol", { class: "ranked" }, ...result.ranked.map((_, i) => pairCard(result, `ranked.${i}`))));
    }
    const others = result.pairs.map((pair, i) => (pair.suitable ? null : i)).filter((i) => i !== null);
    if (others.length) {
      parts.push(el("details", { class: "more", "data-remember": "others" },
        el("summary", {}, el("span", { text: `Pairs that do not suit (${others.length})` })),
        el("ul", { class: "others" }, ...others.map((i) => el("li", {},
          el("p", {}, el("strong", {}, fig(result, `pairs.${i}.id`)), " · ", fig(result, `pairs.${i}.power`, dioptresFig),
            " · OC ", fig(result, `pairs.${i}.oc_distance_mm`, millimetres), " · on hand ", fig(result, `pairs.${i}.count`)),
          el("p", { class: "why-not" }, "Why not: ", ...result.pairs[i].why_not.flatMap((_, k) =>
            [k ? "; " : "", fig(result, `pairs.${i}.why_not.${k}`)])),
          el("details", { class: "breakdown" }, el("summary", { text: "Prism figures" }), pairFigures(result, `pairs.${i}`)))))));
    }
    body.replaceChildren(...parts);
    return answerBand(result);
  }

  // The answer first: the pair to hand out, or (none passing) the closest pair
  // and the prism it would give. The closest: in stock first, then the nearest
  // power, then the smallest share of the tightest limit (the core's figures).
  function answerBand(result) {
    let p = null;
    let lead = "Hand out";
    if (result.ranked.length) {
      p = "ranked.0";
    } else if (result.pairs.length) {
      const order = result.pairs.map((pair, i) => i).sort((a, b) => {
        const x = result.pairs[a];
        const y = result.pairs[b];
        return (y.in_stock - x.in_stock) || (Math.abs(x.power_difference_d) - Math.abs(y.power_difference_d)) ||
          (x.worst_share - y.worst_share);
      });
      p = `pairs.${order[0]}`;
      lead = "None passes; closest";
    }
    const band = el("div", { class: "answer-band", id: "rd-band", "data-result": result.ranked.length ? "pass" : "fail" });
    if (!p) {
      band.append(el("p", { class: "band-lead", text: "No pair to hand out: the stock list is empty." }));
      return band;
    }
    band.append(
      el("p", { class: "band-lead", text: lead }),
      el("p", { class: "band-figure" }, fig(result, p + ".id")),
      el("p", { class: "band-detail" }, fig(result, p + ".power", dioptresFig), " · OC ", fig(result, p + ".oc_distance_mm", millimetres),
        " · on hand ", fig(result, p + ".count")),
      el("p", { class: "band-detail" }, result.ranked.length ? "Prism: " : "It would give ",
        fig(result, p + ".net.horizontal_in_words"), "; ", fig(result, p + ".net.vertical_in_words")));
    if (result.ranked.length) {
      const id = result.ranked[0].id;
      const give = button("Hand out one", { class: "primary band-hand-out", "aria-label": `Hand out one pair of ${id}` });
      give.addEventListener("click", () => handOut(id));
      band.append(give);
    }
    return band;
  }

  function pairFigures(result, p) {
    const pair = result[p.split(".")[0]][Number(p.split(".")[1])];
    return el("div", { class: "pair-figures" },
      facts(
        factRow("Right eye", prismFigures(result, p + ".prism.right")),
        factRow("Left eye", prismFigures(result, p + ".prism.left")),
        factRow("Between the eyes", fig(result, p + ".net.horizontal_in_words"), "; ", fig(result, p + ".net.vertical_in_words")),
        factRow("Eyes look through", "R ", fig(result, p + ".visual_point_in_from_oc_mm.right", (v) => `${Math.abs(v).toFixed(1)} mm ${v < 0 ? "temporal" : "nasal"}`),
          " · L ", fig(result, p + ".visual_point_in_from_oc_mm.left", (v) => `${Math.abs(v).toFixed(1)} mm ${v < 0 ? "temporal" : "nasal"}`),
          " of the OCs"),
        factRow("Near CD through this pair", fig(result, p + ".near_cd_mm", millimetres))),
      el("div", { class: "table-wrap", tabindex: "0", role: "region", "aria-label": "Prism checks of this pair" }, el("table", { class: "readings" },
        el("caption", { text: "Checks against the limits, prism dioptres" }),
        el("thead", {}, el("tr", {}, ...["Check", "Value", "Limit", "Margin", "Result"].map((t) => el("th", { scope: "col", text: t })))),
        el("tbody", {}, ...pair.checks.map((_, k) => {
          const c = `${p}.checks.${k}`;
          return el("tr", {}, el("th", { scope: "row" }, fig(result, c + ".label")),
            el("td", {}, fig(result, c + ".value", fixed(2))),
            el("td", {}, fig(result, c + ".limit", fixed(2))),
            el("td", {}, fig(result, c + ".margin", signed(2))),
            el("td", {}, fig(result, c + ".pass", (ok) => (ok ? "within" : "over"))));
        })))));
  }

  function pairCard(result, p) {
    const pair = result.ranked[Number(p.split(".")[1])];
    const give = button("Hand out one", { class: "primary hand-out", "data-id": pair.id,
      "aria-label": `Hand out one pair of ${pair.id}` });
    give.addEventListener("click", () => handOut(pair.id));
    return el("li", { class: "pair-card", "data-id": pair.id },
      el("header", {},
        el("h3", {}, el("span", { class: "rank" }, "#", fig(result, p + ".rank")), " ", fig(result, p + ".id")),
        el("p", { class: "pair-line" }, fig(result, p + ".power", dioptresFig), " · OC ", fig(result, p + ".oc_distance_mm", millimetres),
          pair.frame_size ? el("span", {}, " · frame ", fig(result, p + ".frame_size")) : null)),
      facts(
        factRow("On hand", fig(result, p + ".count", (n) => `${n} pair${n === 1 ? "" : "s"}`)),
        factRow("Power against the patient's", fig(result, p + ".power_difference_d", dioptresFig))),
      pairFigures(result, p),
      el("div", { class: "buttons" }, give));
  }

  // ---------------------------------------------------------------- start
  restoreFormDraft("readers", form);
  applyPdKind();
  drawStock();
  if (undo) drawHandout(`Last handed out: one pair of ${undo.id}.`);
  if (skipped) {
    stockMessage.textContent = `${skipped} stored row${skipped === 1 ? " was" : "s were"} unreadable and left out of the list.`;
  }
  return checkScreen({ root, resultsId: "rd-results", calc, start: loadLimits });
}
