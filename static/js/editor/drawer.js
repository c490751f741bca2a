// The tools drawer: tabs for the fixture, the room, its zones, obstacles and fixture types, and a button that
// folds the drawer away so the plan and the map get the whole width. Arrow keys move between tabs.

import { $ } from "./state.js";

const OPEN_KEY = "leafcast-drawer-open";
const NARROW_PX = 900;            // below this the drawer starts folded (tablets, phones)

export function showTab(name, focus = true) {
  for (const tab of document.querySelectorAll("[role=tab][data-tab]")) {
    const on = tab.dataset.tab === name;
    tab.setAttribute("aria-selected", on ? "true" : "false");
    tab.tabIndex = on ? 0 : -1;
    $(tab.getAttribute("aria-controls")).hidden = !on;
    if (on && focus) tab.focus();
  }
}

export function setDrawer(open) {
  document.body.classList.toggle("drawer-closed", !open);
  $("drawer-toggle").setAttribute("aria-expanded", open ? "true" : "false");
  $("drawer-toggle").textContent = open ? "Hide tools" : "Show tools";
  try { localStorage.setItem(OPEN_KEY, open ? "1" : "0"); } catch (e) { /* fine */ }
}

export function wireDrawer() {
  const tabs = [...document.querySelectorAll("[role=tab][data-tab]")];
  tabs.forEach((tab, i) => {
    tab.addEventListener("click", () => showTab(tab.dataset.tab));
    tab.addEventListener("keydown", (ev) => {
      const k = { ArrowRight: 1, ArrowDown: 1, ArrowLeft: -1, ArrowUp: -1 }[ev.key];
      if (k) { ev.preventDefault(); showTab(tabs[(i + k + tabs.length) % tabs.length].dataset.tab); }
      if (ev.key === "Home") { ev.preventDefault(); showTab(tabs[0].dataset.tab); }
      if (ev.key === "End") { ev.preventDefault(); showTab(tabs[tabs.length - 1].dataset.tab); }
    });
  });
  let stored = null;
  try { stored = localStorage.getItem(OPEN_KEY); } catch (e) { /* fine */ }
  setDrawer(stored === null ? window.innerWidth >= NARROW_PX : stored === "1");
  $("drawer-toggle").addEventListener("click", () => setDrawer(document.body.classList.contains("drawer-closed")));
  $("drawer-close").addEventListener("click", () => { setDrawer(false); $("drawer-toggle").focus(); });
  showTab("fixture", false);
}
