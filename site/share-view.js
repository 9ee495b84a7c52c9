// Section "Scenario: examples, link and files": the DOM of #share-section and the glue that keeps
// the URL fragment equal to the page's inputs, opens links, examples, recent scenarios and
// files, and runs the exports and the printed report. Text reaches the page only through
// textContent and input values.

import { applyState, collectState, onInputChange, sectionNames } from "./state.js";
import { encodeState, readFragment, readStateJson } from "./share.js";
import { RecentStore, describeState, findPreset } from "./presets.js";
import {
  curveRows, downloadBlob, fillReport, pagePlots, pageTables, plotPng, scenarioBlob, stamp, tableRows, toCsv,
} from "./export.js";

const URL_DEBOUNCE_MS = 300;
const RECENT_DEBOUNCE_MS = 2500;

function byId(doc, id) {
  const el = doc.getElementById(id);
  if (!el) throw new Error(`the page lacks #${id}`);
  return el;
}

const IDS = [
  "share-message", "preset-select", "preset-summary", "recent-select", "recent-clear", "share-url", "share-copy",
  "save-json", "load-json", "print-report", "export-table-select", "export-table-csv", "export-curves-csv",
  "export-plot-select", "export-plot-png", "report",
];

/** The DOM of #share-section. */
export class ShareView {
  /** @param {Document} doc */
  constructor(doc) {
    this.doc = doc;
    this.el = Object.fromEntries(IDS.map((id) => [id, byId(doc, id)]));
  }

  /**
   * Show a message about what was opened and what was ignored.
   *
   * @param {"info"|"warning"|"error"} kind  how it is shown
   * @param {string} text  the main sentence
   * @param {string[]} [details]  one line each (what was ignored)
   */
  message(kind, text, details = []) {
    const box = this.el["share-message"];
    const parts = [this.doc.createTextNode(text)];
    if (details.length) {
      const list = this.doc.createElement("ul");
      for (const line of details.slice(0, 20)) {
        const li = this.doc.createElement("li");
        li.textContent = line;
        list.append(li);
      }
      if (details.length > 20) {
        const li = this.doc.createElement("li");
        li.textContent = `…and ${details.length - 20} more`;
        list.append(li);
      }
      parts.push(list);
    }
    box.replaceChildren(...parts);
    box.dataset.kind = kind;
    box.setAttribute("role", kind === "error" ? "alert" : "status");
    box.hidden = false;
  }

  clearMessage() {
    this.el["share-message"].hidden = true;
    this.el["share-message"].replaceChildren();
  }

  /** @param {{id: string, title: string}[]} presets */
  setPresets(presets) {
    const select = this.el["preset-select"];
    for (const p of presets) {
      const option = this.doc.createElement("option");
      option.value = p.id;
      option.textContent = `${p.title} — ${p.label}`;
      select.append(option);
    }
  }

  /** @param {{title: string, label: string, description: string}|null} preset */
  showPreset(preset) {
    this.el["preset-select"].value = preset ? preset.id : "";
    this.el["preset-summary"].textContent = preset ? `${preset.label}. ${preset.description}` : "";
  }

  /** @param {{saved: string, title: string}[]} items  newest first */
  setRecent(items) {
    const select = this.el["recent-select"];
    const first = this.doc.createElement("option");
    first.value = "";
    first.textContent = items.length ? `${items.length} kept — choose one to open…` : "None yet";
    const options = items.map((item, i) => {
      const option = this.doc.createElement("option");
      option.value = String(i);
      const when = new Date(item.saved);
      option.textContent = `${Number.isNaN(when.getTime()) ? "" : when.toLocaleString()} · ${item.title}`;
      return option;
    });
    select.replaceChildren(first, ...options);
    this.el["recent-clear"].disabled = !items.length;
  }

  /** @param {string} url  the link shown in the read-only field */
  setLink(url) {
    this.el["share-url"].value = url;
  }

  /** @param {{name: string}[]} items @param {string} id  fill one of the export menus */
  setMenu(id, items) {
    const select = this.el[id];
    const keep = select.value;
    select.replaceChildren(
      ...items.map((item, i) => {
        const option = this.doc.createElement("option");
        option.value = String(i);
        option.textContent = item.name;
        return option;
      }),
    );
    if (keep && Number(keep) < items.length) select.value = keep;
  }
}

/**
 * Keep the link in step with the inputs and wire the section's buttons.
 *
 * @param {object} deps
 * @param {{call: Function}} deps.py  the core
 * @param {ShareView} deps.view  the section's DOM
 * @param {object[]} deps.presets  worked examples (presets.js loadPresets)
 * @param {Promise<object|null>} deps.manifest  the build manifest (versions, file hashes)
 * @param {object} deps.versions  versions Python reported
 * @param {Window} deps.win  the window (location, history, clipboard, localStorage, print)
 * @returns {Promise<{openFragment: (hash: string) => Promise<void>}>}  resolves once the URL's
 *          link or example (if any) has been applied
 */
export async function mountShare({ py, view, presets, manifest, versions, win }) {
  const doc = view.doc;
  let storage = null;
  try {
    storage = win.localStorage;
  } catch {
    storage = null; // blocked by the browser's settings: recent scenarios are simply not kept
  }
  const recent = new RecentStore(storage);
  let urlTimer = null;
  let recentTimer = null;
  let currentPreset = null;
  let applying = false; // sections may report changes while a link is being applied: not edits

  view.setPresets(presets);
  view.setRecent(recent.list());

  const pageUrl = (fragment) => `${win.location.href.split("#")[0]}#${fragment}`;

  function writeLink(fragment) {
    win.history.replaceState(null, "", `#${fragment}`);
    view.setLink(pageUrl(fragment));
  }

  function remember() {
    clearTimeout(recentTimer);
    recentTimer = setTimeout(() => {
      const state = collectState();
      const title = currentPreset ? currentPreset.title : describeState(state);
      if (recent.add(encodeState(state), title)) view.setRecent(recent.list());
    }, RECENT_DEBOUNCE_MS);
  }

  onInputChange(() => {
    if (applying) return;
    currentPreset = null;
    view.showPreset(null);
    clearTimeout(urlTimer);
    urlTimer = setTimeout(() => writeLink(encodeState(collectState())), URL_DEBOUNCE_MS);
    remember();
  });

  async function applyChecked(state, notes, what) {
    applying = true;
    try {
      return [...notes, ...(await applyState(state))];
    } finally {
      applying = false;
    }
  }

  async function openPreset(id, { fromUrl = false } = {}) {
    const preset = findPreset(presets, id);
    if (!preset) {
      view.message("error", `This link names an example ("${id.slice(0, 60)}") that this copy of Acidscape does not have; the page shows its defaults.`);
      return;
    }
    const checked = readStateJson(JSON.stringify(preset.state), sectionNames());
    const messages = await applyChecked(checked.state, checked.notes, "example");
    currentPreset = preset;
    view.showPreset(preset);
    writeLink(`preset=${preset.id}`);
    if (messages.length) {
      view.message("warning", `Opened the example "${preset.title}", but some of it could not be used:`, messages);
    } else if (!fromUrl) {
      view.message("info", `Opened the example "${preset.title}" (${preset.label}).`);
    } else {
      view.clearMessage();
    }
    remember();
  }

  async function openState(state, notes, source) {
    const messages = await applyChecked(state, notes, source);
    writeLink(encodeState(collectState()));
    if (messages.length) view.message("warning", `Opened the scenario from ${source}. Some of it was ignored:`, messages);
    else view.message("info", `Opened the scenario from ${source}.`);
    remember();
  }

  async function openFragment(hash) {
    const found = readFragment(hash, sectionNames());
    if (found.kind === "none") {
      view.setLink(pageUrl(encodeState(collectState())));
      return;
    }
    if (found.kind === "preset") {
      await openPreset(found.id, { fromUrl: true });
      return;
    }
    if (found.kind === "error") {
      view.message("error", `This link could not be used: ${found.reason}. The page shows its defaults instead.`);
      writeLink(encodeState(collectState()));
      return;
    }
    await openState(found.state, found.notes, "the link");
  }

  win.addEventListener("hashchange", () => openFragment(win.location.hash));

  view.el["preset-select"].addEventListener("change", () => {
    const id = view.el["preset-select"].value;
    if (id) openPreset(id);
  });

  view.el["recent-select"].addEventListener("change", () => {
    const index = Number(view.el["recent-select"].value);
    const item = recent.list()[index];
    if (!item) return;
    const found = readFragment(`#${item.link}`, sectionNames());
    if (found.kind === "state") openState(found.state, found.notes, `your recent list (${item.title})`);
    else view.message("error", "That recent scenario could not be read; it may come from another version.");
  });

  view.el["recent-clear"].addEventListener("click", () => {
    recent.clear();
    view.setRecent([]);
    view.message("info", "Your recent scenarios were removed from this browser.");
  });

  view.el["share-copy"].addEventListener("click", async () => {
    clearTimeout(urlTimer);
    if (!currentPreset) writeLink(encodeState(collectState()));
    const url = view.el["share-url"].value;
    try {
      if (!win.navigator.clipboard) throw new Error("no clipboard");
      await win.navigator.clipboard.writeText(url);
      view.message("info", "Link copied. Paste it into a message or a bookmark.");
    } catch {
      view.el["share-url"].focus();
      view.el["share-url"].select();
      view.message("info", "This browser did not let the page copy. The link is selected in the box: copy it with Ctrl+C (or ⌘C, or a long press).");
    }
  });

  view.el["save-json"].addEventListener("click", () => {
    downloadBlob(doc, scenarioBlob(collectState()), `acidscape-scenario-${stamp()}.json`);
  });

  view.el["load-json"].addEventListener("change", async () => {
    const file = view.el["load-json"].files?.[0];
    view.el["load-json"].value = "";
    if (!file) return;
    if (file.size > 256 * 1024) {
      view.message("error", `"${file.name}" is ${Math.round(file.size / 1024)} kB, too large for a scenario file; nothing was changed.`);
      return;
    }
    try {
      const checked = readStateJson(await file.text(), sectionNames());
      currentPreset = null;
      view.showPreset(null);
      await openState(checked.state, checked.notes, `the file "${file.name}"`);
    } catch (error) {
      view.message("error", `"${file.name}" could not be opened: ${error?.message || error}. Nothing was changed.`);
    }
  });

  const refreshMenus = () => {
    view.setMenu("export-table-select", pageTables(doc));
    view.setMenu("export-plot-select", pagePlots(doc));
  };
  doc.querySelector("#share-section .share-exports").addEventListener("toggle", refreshMenus);
  for (const id of ["export-table-select", "export-plot-select"]) view.el[id].addEventListener("focus", refreshMenus);

  view.el["export-table-csv"].addEventListener("click", () => {
    const tables = pageTables(doc);
    const item = tables[Number(view.el["export-table-select"].value)] ?? tables[0];
    if (!item) {
      view.message("warning", "There is no table to export yet.");
      return;
    }
    const name = (item.table.id || "table").replace(/[^a-z0-9-]/gi, "");
    downloadBlob(doc, new Blob([toCsv(tableRows(item.table))], { type: "text/csv" }), `acidscape-${name}-${stamp()}.csv`);
  });

  view.el["export-curves-csv"].addEventListener("click", async () => {
    const rows = await curveRows(py, collectState());
    downloadBlob(doc, new Blob([toCsv(rows)], { type: "text/csv" }), `acidscape-curves-${stamp()}.csv`);
  });

  view.el["export-plot-png"].addEventListener("click", async () => {
    const plots = pagePlots(doc);
    const item = plots[Number(view.el["export-plot-select"].value)] ?? plots[0];
    try {
      if (!item) throw new Error("no plot has been drawn yet");
      downloadBlob(doc, await plotPng(item.host), `acidscape-${item.host.id || "plot"}-${stamp()}.png`);
    } catch (error) {
      view.message("warning", `The plot could not be saved: ${error?.message || error}.`);
    }
  });

  view.el["print-report"].addEventListener("click", async () => {
    const state = collectState();
    fillReport(doc, view.el.report, {
      state, link: pageUrl(encodeState(state)), versions, manifest: await manifest,
    });
    win.print();
  });

  await openFragment(win.location.hash);
  doc.body.dataset.shareReady = "true";
  return { openFragment };
}

/**
 * Show #update-notice when a new service worker has taken over (or waits) while this page runs
 * an older copy; its button reloads the page.
 *
 * @param {Document} doc  the page
 * @param {ServiceWorkerContainer} container  navigator.serviceWorker
 * @param {ServiceWorkerRegistration} registration  from register()
 */
export function watchForUpdates(doc, container, registration) {
  const notice = byId(doc, "update-notice");
  const hadController = Boolean(container.controller);
  const show = () => {
    notice.hidden = false;
  };
  byId(doc, "update-reload").addEventListener("click", () => {
    const waiting = registration.waiting;
    if (waiting) waiting.postMessage({ type: "skip-waiting" });
    else doc.defaultView.location.reload();
  });
  if (registration.waiting && hadController) show();
  registration.addEventListener("updatefound", () => {
    const incoming = registration.installing;
    incoming?.addEventListener("statechange", () => {
      if (incoming.state === "installed" && container.controller) show();
    });
  });
  let reloading = false;
  let controlled = hadController;
  container.addEventListener("controllerchange", () => {
    const wasControlled = controlled;
    controlled = true;
    if (notice.dataset.reloadRequested === "true") {
      // Also on a page opened on the first visit (uncontrolled then, taken in charge since).
      if (!reloading) {
        reloading = true;
        doc.defaultView.location.reload();
      }
      return;
    }
    if (wasControlled) show(); // not the first visit's take-over: a newer copy is in charge now
  });
  byId(doc, "update-reload").addEventListener("click", () => {
    notice.dataset.reloadRequested = "true";
  });
}
