// Switching between the case screen (the default) and the check screens:
// pair check, ready-made readers and deviation through glasses. The last
// screen used is remembered on the device. Built here, after app.js has set up
// the case form, so that these screens' inputs never mix with the case's.
import { caseScreen, messenger, offerOffline } from "./app.js";
import { el, loadSaved, save } from "./checks-common.js";
import { createVerifyScreen } from "./screens/verify.js";
import { createReadersScreen } from "./screens/readers.js";
import { createDeviationScreen } from "./screens/deviation.js";

const SCREENS = [
  { name: "case", label: "Case", long: "prism at the eyes" },
  { name: "verify", label: "Pair check", long: "finished spectacles" },
  { name: "readers", label: "Readers", long: "ready-made, outreach" },
  { name: "deviation", label: "Deviation", long: "through glasses" },
];
// The case screen is set up by app.js (it shares the header's Save and Open);
// the others are built here the first time they are opened.
const MAKERS = { case: () => caseScreen, verify: createVerifyScreen, readers: createReadersScreen,
  deviation: createDeviationScreen };

const masthead = document.querySelector(".masthead");
const skip = document.querySelector(".skip");
// Each screen module exports create…Screen(context) -> {root, show(), hide(), resultsId}
// (DEVELOPERS.md, "Screens").
const built = new Map();
const context = {
  messenger,
  // After a check screen's first answer the app is offered for offline use, as
  // after the case screen's first answer (a clinic may never open a case).
  firstResult: () => { if (typeof offerOffline === "function") offerOffline(); },
};

const nav = el("nav", { class: "screen-tabs", "aria-label": "Screens" });
const list = el("ul");
for (const screen of SCREENS) {
  const tab = el("button", { type: "button", class: "screen-tab", "data-screen": screen.name, id: "tab-" + screen.name },
    el("span", { class: "tab-label", text: screen.label }),
    el("span", { class: "tab-long", text: screen.long }));
  tab.addEventListener("click", () => show(screen.name, { focus: false }));
  list.append(el("li", {}, tab));
}
nav.append(list);
masthead.after(nav);

// Arrow keys move between the screen buttons; Tab leaves the bar.
nav.addEventListener("keydown", (e) => {
  const tabs = [...nav.querySelectorAll(".screen-tab")];
  const at = tabs.indexOf(document.activeElement);
  if (at < 0) return;
  let next = -1;
  if (e.key === "ArrowRight" || e.key === "ArrowDown") next = (at + 1) % tabs.length;
  else if (e.key === "ArrowLeft" || e.key === "ArrowUp") next = (at - 1 + tabs.length) % tabs.length;
  else if (e.key === "Home") next = 0;
  else if (e.key === "End") next = tabs.length - 1;
  if (next < 0) return;
  e.preventDefault();
  tabs[next].focus();
});

function screenRoot(name) {
  if (!built.has(name)) {
    const screen = MAKERS[name](context);
    // Placed after the case screen's main, before the print summary and notices.
    if (name !== "case") document.querySelector("#main").after(screen.root);
    built.set(name, screen);
  }
  return built.get(name);
}

export function show(name, { focus = false } = {}) {
  if (!SCREENS.some((s) => s.name === name)) name = "case";
  document.body.dataset.screen = name;
  for (const tab of nav.querySelectorAll(".screen-tab")) {
    if (tab.dataset.screen === name) tab.setAttribute("aria-current", "page");
    else tab.removeAttribute("aria-current");
  }
  for (const [other, screen] of built) if (other !== name) screen.hide();
  const screen = screenRoot(name);
  screen.show();
  if (skip) skip.href = "#" + screen.resultsId;
  if (focus) screen.root.querySelector("h2")?.focus();
  save("screen", name);
  window.scrollTo(0, 0);
}

// A case opened from a link or bookmark (#case=...) shows the case screen;
// otherwise (a reload, the installed app) the screen last used.
const arrival = performance.getEntriesByType("navigation")[0];
const fromLink = arrival && arrival.type === "navigate" && location.hash.startsWith("#case=");
show(fromLink ? "case" : loadSaved("screen", "case"));
window.addEventListener("hashchange", () => {
  if (location.hash.startsWith("#case=")) show("case");
});
