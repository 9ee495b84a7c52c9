// The DOM of section "Scenario: examples, link and files" (#share-section) and of the
// new-version notice. The logic (links, examples, recent list, files, exports) is in
// share-section.js; it reaches the page only through this view. Text reaches the page only
// through textContent and input values.

import { downloadBlob, fillReport, pagePlots, pageTables, plotPng, tableRows } from "./export-view.js";

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

  /** @param {string} id  one of the section's ids @returns {string}  its value */
  value(id) {
    return this.el[id].value;
  }

  /**
   * Call `handler` when the user acts on one of the section's controls.
   *
   * @param {string} id  "preset-select", "recent-select" (change), a button id (click) or
   *        "load-json" (a file chosen: handler(file))
   * @param {Function} handler
   */
  on(id, handler) {
    const el = this.el[id];
    if (id === "load-json") {
      el.addEventListener("change", () => {
        const file = el.files?.[0] ?? null;
        el.value = "";
        if (file) handler(file);
      });
    } else {
      el.addEventListener(el.tagName === "SELECT" ? "change" : "click", () => handler(el.value));
    }
  }

  /** Select the link text so the user can copy it by hand. */
  selectLink() {
    this.el["share-url"].focus();
    this.el["share-url"].select();
  }

  /** Keep the export menus filled with the tables and plots the page shows now. */
  keepMenusFilled() {
    const fill = () => {
      this.setMenu("export-table-select", pageTables(this.doc));
      this.setMenu("export-plot-select", pagePlots(this.doc));
    };
    this.doc.querySelector("#share-section .share-exports").addEventListener("toggle", fill);
    for (const id of ["export-table-select", "export-plot-select"]) {
      this.el[id].addEventListener("focus", fill);
      this.el[id].addEventListener("pointerdown", fill);
    }
    this.fillMenus = fill;
    fill();
  }

  /** @returns {{name: string, table: HTMLTableElement}|null}  the table chosen for export */
  chosenTable() {
    const tables = pageTables(this.doc);
    return tables[Number(this.el["export-table-select"].value)] ?? tables[0] ?? null;
  }

  /** @returns {{name: string, host: Element}|null}  the plot chosen for export */
  chosenPlot() {
    const plots = pagePlots(this.doc);
    return plots[Number(this.el["export-plot-select"].value)] ?? plots[0] ?? null;
  }

  /** @param {HTMLTableElement} table @returns {string[][]}  its rows for CSV */
  tableRows(table) {
    return tableRows(table);
  }

  /** @param {Element} host @returns {Promise<Blob>}  the plot as a PNG */
  plotPng(host) {
    return plotPng(host);
  }

  /** @param {Blob} blob @param {string} filename  offer a download */
  download(blob, filename) {
    downloadBlob(this.doc, blob, filename);
  }

  /** @param {object} info  fill #report for printing (export-view.js fillReport) @returns {Promise<void>} */
  fillReport(info) {
    return fillReport(this.doc, this.el.report, info);
  }

  /** Count one opened link, example, file or recent scenario on body[data-opened]. */
  markOpened() {
    this.doc.body.dataset.opened = String(Number(this.doc.body.dataset.opened || 0) + 1);
  }

  /** The URL's link or example has been applied: body[data-share-ready]. */
  markReady() {
    this.doc.body.dataset.shareReady = "true";
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
