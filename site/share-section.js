// Section "Scenario: examples, link and files", its logic: keeps the URL fragment equal to the
// page's inputs, opens links, examples, recent scenarios and files, and runs the exports and
// the printed report. No DOM here: everything on the page goes through ShareView
// (share-view.js) and the window object it is given.
//
// Opening anything (a link, an example, a recent scenario, a file) goes the same way:
// openingOf() reads it (nothing is applied yet), applyState() fills the sections and computes,
// dropping what cannot be used, and report() says what was opened and what was dropped.

import { applyState, collectState, onInputChange, sectionNames } from "./state.js";
import { encodeState, encodeStateShort, readFragment, readFragmentAsync, readStateJson } from "./share.js";
import { RecentStore, describeState, findPreset } from "./presets.js";
import { curveRows, scenarioBlob, stamp, toCsv } from "./export.js";

const URL_DEBOUNCE_MS = 300;
const RECENT_DEBOUNCE_MS = 2500;

/**
 * Read a URL fragment into what it opens, without applying anything.
 *
 * @param {string} hash  location.hash
 * @param {object[]} presets  the worked examples
 * @param {string[]} sections  the names of the page's sections
 * @returns {{kind: "none"} | {kind: "error", reason: string} |
 *           {kind: "state", state: object, notes: string[]} |
 *           {kind: "preset", preset: object, state: object, notes: string[]}}
 */
export async function openingOf(hash, presets, sections) {
  const found = await readFragmentAsync(hash, sections);
  if (found.kind !== "preset") return found;
  const preset = findPreset(presets, found.id);
  if (!preset) {
    return { kind: "error", reason: `it names an example ("${found.id.slice(0, 60)}") that this copy of Acidscape does not have` };
  }
  try {
    const checked = readStateJson(JSON.stringify(preset.state), sections);
    return { kind: "preset", preset, state: checked.state, notes: checked.notes };
  } catch (error) {
    return { kind: "error", reason: `the example "${preset.title}" could not be read (${error?.message || error})` };
  }
}

/**
 * Keep the link in step with the inputs and wire the section's buttons.
 *
 * @param {object} deps
 * @param {{call: Function}} deps.py  the core
 * @param {import("./share-view.js").ShareView} deps.view  the section's DOM
 * @param {object[]} deps.presets  worked examples (presets.js loadPresets)
 * @param {Promise<object|null>} deps.manifest  the build manifest (versions, file hashes)
 * @param {object} deps.versions  versions Python reported
 * @param {Window} deps.win  the window (location, history, clipboard, localStorage, print)
 * @param {{opening: object, messages: string[]}} deps.opened  what main.js opened from the URL
 *        before the first result was drawn (openingOf + applyState), to report and link
 * @returns {{open: (hash: string) => Promise<void>}}
 */
export function mountShare({ py, view, presets, manifest, versions, win, opened }) {
  let storage = null;
  try {
    storage = win.localStorage;
  } catch {
    storage = null; // blocked by the browser's settings: recent scenarios are simply not kept
  }
  const recent = new RecentStore(storage);
  // The link and the recent list are written when the page is idle after the debounce (a
  // history entry and localStorage are slow to write): never in the way of a result being drawn.
  let cancelUrl = () => {};
  let cancelRecent = () => {};
  const whenIdle = (fn, ms) => {
    let idle = null;
    const timer = win.setTimeout(() => {
      if (typeof win.requestIdleCallback === "function") idle = win.requestIdleCallback(fn, { timeout: 1000 });
      else fn();
    }, ms);
    return () => {
      win.clearTimeout(timer);
      if (idle !== null) win.cancelIdleCallback(idle);
    };
  };
  let currentPreset = null;
  let applying = false; // sections may report changes while a link is being applied: not edits

  view.setPresets(presets);
  view.setRecent(recent.list());

  const pageUrl = (fragment) => `${win.location.href.split("#")[0]}#${fragment}`;

  function writeLink(fragment) {
    win.history.replaceState(null, "", `#${fragment}`);
    view.setLink(pageUrl(fragment));
  }

  // The short link (z=, compressed) is made asynchronously: only the newest one is written.
  let linkSerial = 0;
  async function writeCurrentLink() {
    const serial = ++linkSerial;
    const fragment = await encodeStateShort(collectState());
    if (serial === linkSerial) writeLink(fragment);
  }

  function remember() {
    cancelRecent();
    cancelRecent = whenIdle(() => {
      const state = collectState();
      const title = currentPreset ? currentPreset.title : describeState(state);
      if (recent.add(encodeState(state), title)) view.setRecent(recent.list());
    }, RECENT_DEBOUNCE_MS);
  }

  onInputChange(() => {
    if (applying) return;
    currentPreset = null;
    view.showPreset(null);
    cancelUrl();
    cancelUrl = whenIdle(writeCurrentLink, URL_DEBOUNCE_MS);
    remember();
  });

  async function apply(state, notes) {
    applying = true;
    try {
      return [...notes, ...(await applyState(state))];
    } finally {
      applying = false;
    }
  }

  /**
   * Say what was opened and what was dropped; write the link.
   *
   * @param {object} opening  from openingOf (or a file / recent item read the same way)
   * @param {string[]} messages  what was ignored or dropped
   * @param {string} source  "the link", `the file "x.json"`, ...
   * @param {boolean} quiet  an example named in the URL opens without an info message
   */
  function report(opening, messages, source, quiet = false) {
    view.markOpened();
    if (opening.kind === "none") {
      const serial = ++linkSerial;
      encodeStateShort(collectState()).then((fragment) => {
        if (serial === linkSerial) view.setLink(pageUrl(fragment));
      });
      return;
    }
    if (opening.kind === "error") {
      view.message("error", `This link could not be used: ${opening.reason}. The page shows its defaults instead.`);
      writeCurrentLink();
      return;
    }
    if (opening.kind === "preset") {
      const preset = opening.preset;
      currentPreset = preset;
      view.showPreset(preset);
      writeLink(`preset=${preset.id}`);
      if (messages.length) {
        view.message("warning", `Opened the example "${preset.title}", but some of it could not be used:`, messages);
      } else if (!quiet) {
        view.message("info", `Opened the example "${preset.title}" (${preset.label}).`);
      } else {
        view.clearMessage();
      }
    } else {
      currentPreset = null;
      view.showPreset(null);
      writeCurrentLink();
      if (messages.length) {
        view.message("warning", `Opened the scenario from ${source}. Some of it was left out and the rest computed:`, messages);
      } else {
        view.message("info", `Opened the scenario from ${source}.`);
      }
    }
    remember();
  }

  async function open(hash) {
    const opening = await openingOf(hash, presets, sectionNames());
    const messages = opening.state ? await apply(opening.state, opening.notes) : [];
    report(opening, messages, "the link", true);
  }

  win.addEventListener("hashchange", () => open(win.location.hash));

  view.on("preset-select", async (id) => {
    if (!id) return;
    const preset = findPreset(presets, id);
    if (!preset) return;
    const checked = readStateJson(JSON.stringify(preset.state), sectionNames());
    const opening = { kind: "preset", preset, ...checked };
    report(opening, await apply(checked.state, checked.notes), "an example");
  });

  view.on("recent-select", async (value) => {
    const item = recent.list()[Number(value)];
    if (value === "" || !item) return;
    const found = readFragment(`#${item.link}`, sectionNames());
    if (found.kind !== "state") {
      view.message("error", "That recent scenario could not be read; it may come from another version.");
      return;
    }
    report(found, await apply(found.state, found.notes), `your recent list (${item.title})`);
  });

  view.on("recent-clear", () => {
    cancelRecent(); // a scenario waiting to be kept is not added back after the clear
    recent.clear();
    view.setRecent([]);
    view.message("info", "Your recent scenarios were removed from this browser.");
  });

  view.on("share-copy", async () => {
    cancelUrl();
    if (!currentPreset) {
      linkSerial += 1; // an older link still being made must not overwrite this one
      writeLink(await encodeStateShort(collectState()));
    }
    const url = view.value("share-url");
    try {
      if (!win.navigator.clipboard) throw new Error("no clipboard");
      await win.navigator.clipboard.writeText(url);
      view.message("info", "Link copied. Paste it into a message or a bookmark.");
    } catch {
      view.selectLink();
      view.message("info", "This browser did not let the page copy. The link is selected in the box: copy it with Ctrl+C (or ⌘C, or a long press).");
    }
  });

  view.on("save-json", () => {
    view.download(scenarioBlob(collectState()), `acidscape-scenario-${stamp()}.json`);
  });

  view.on("load-json", async (file) => {
    if (file.size > 256 * 1024) {
      view.message("error", `"${file.name}" is ${Math.round(file.size / 1024)} kB, too large for a scenario file; nothing was changed.`);
      return;
    }
    let checked;
    try {
      checked = readStateJson(await file.text(), sectionNames());
    } catch (error) {
      view.message("error", `"${file.name}" could not be opened: ${error?.message || error}. Nothing was changed.`);
      return;
    }
    report({ kind: "state", ...checked }, await apply(checked.state, checked.notes), `the file "${file.name}"`);
  });

  view.keepMenusFilled();

  view.on("export-table-csv", () => {
    const item = view.chosenTable();
    if (!item) {
      view.message("warning", "There is no table to export yet.");
      return;
    }
    const name = (item.table.id || "table").replace(/[^a-z0-9-]/gi, "");
    view.download(new Blob([toCsv(view.tableRows(item.table))], { type: "text/csv" }), `acidscape-${name}-${stamp()}.csv`);
  });

  view.on("export-curves-csv", async () => {
    const rows = await curveRows(py, collectState());
    view.download(new Blob([toCsv(rows)], { type: "text/csv" }), `acidscape-curves-${stamp()}.csv`);
  });

  view.on("export-plot-png", async () => {
    const item = view.chosenPlot();
    try {
      if (!item) throw new Error("no plot has been drawn yet");
      view.download(await view.plotPng(item.host), `acidscape-${item.host.id || "plot"}-${stamp()}.png`);
    } catch (error) {
      view.message("warning", `The plot could not be saved: ${error?.message || error}.`);
    }
  });

  view.on("print-report", async () => {
    const state = collectState();
    const link = currentPreset ? pageUrl(`preset=${currentPreset.id}`) : pageUrl(await encodeStateShort(state));
    await view.fillReport({ state, link, versions, manifest: await manifest });
    win.print();
  });

  report(opened.opening, opened.messages, "the link", true);
  view.markReady();
  return { open };
}
