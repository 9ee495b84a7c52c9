// Composition root: start Python, embed the plots, mount the sections, open what the URL names,
// go offline-capable. The only module that creates views (and so touches the document).
// The page is a workbench (workbench.js): the water's inputs and headline stay in view, one job
// at a time beside them. The water is mounted and drawn first; the other jobs after its first
// result, so the first figures the user waits for come sooner.
//
// Boot order (issue 10: load only what the first view needs before its first result):
//   1. the core's library ("systems") and catalogues are asked at once (the worker answers them
//      as soon as Python is up), and the water's two plots are embedded while Python starts;
//   2. the water is mounted, the URL's state applied to it and its first request sent (it does
//      not wait for the plots: its curves, the answer's second part, are drawn once they are in);
//   3. after the water's plots are drawn: the chemicals list, the other jobs' plots and mounts.
//      A hidden job computes nothing until it is shown (a link's inputs of a job may be checked
//      by the core on opening: see treatment.js and distribution.js).

import { onBootProgress, sharedPython } from "./py.js";
import { embedBufferPlot, embedPlots, embedTitrationPlot, loadTemplates } from "./plot.js";
import { AboutView, DistributionView, StatusView } from "./view.js";
import { mountDistribution } from "./distribution.js";
import { mountWater } from "./water.js";
import { WaterView, embedWaterPlots } from "./water-view.js";
import { mountTreatment } from "./treatment.js";
import { TreatmentView } from "./treatment-view.js";
import { ShareView, watchForUpdates } from "./share-view.js";
import { mountShare, openingOf } from "./share-section.js";
import { loadPresets } from "./presets.js";
import { applyState } from "./state.js";
import { onPendingChange } from "./section.js";
import { setFieldWords, setLimits } from "./parse.js";
import { molarMass, setCatalogues } from "./catalogues.js";
import { fillCatalogueSelects } from "./catalogue-view.js";
import { mountBatch } from "./batch.js";
import { BatchView } from "./batch-view.js";
import { embedConditionalConstantPlot, embedEdtaTitrationPlot, embedMetalSolubilityPlot } from "./plot.js";
import { mountLead } from "./lead.js";
import { LeadView } from "./lead-view.js";
import { mountHardness } from "./hardness.js";
import { HardnessView } from "./hardness-view.js";
import { embedScalePlots } from "./plot.js";
import { mountScale } from "./scale.js";
import { ScaleView } from "./scale-view.js";
import { mountSoftening } from "./softening.js";
import { SofteningView } from "./softening-view.js";
import { HeadlineView, WaterInputsFold, WorkbenchView, labelTableCells, mirrorWaterState } from "./workbench-view.js";

/** The sections a link, file or example may hold, in the order they are computed. */
const SECTIONS = ["distribution", "water", "treatment", "lead", "hardness", "scale", "softening", "workbench"];

const status = new StatusView(document);
// The switcher works before Python has started: it only shows and hides sections.
new WorkbenchView(document);
new WaterInputsFold(document);
mirrorWaterState(document);
labelTableCells(document.querySelector("main"));
const headline = new HeadlineView(document);
const about = new AboutView(document);
onPendingChange((count) => status.setPending(count));

// The build manifest (versions, file hashes, constants fingerprint): fetched once, used twice.
const manifest = fetch("./manifest.json")
  .then((r) => (r.ok ? r.json() : null))
  .catch(() => null);
manifest.then((m) => about.render(m?.versions));

const py = sharedPython(); // already started by boot.js
onBootProgress((step) => status.progress(step));
// Asked now: the worker queues them and answers them as soon as Python is ready.
const libraryLoading = py.call("systems").catch(() => ({ systems: [], ions: [] }));
const cataloguesLoading = py.call("catalogues");
// The first view's plots, embedded while the worker boots (the main thread waits for it anyway).
const waterPlots = embedWaterPlots();
waterPlots.catch(() => {}); // awaited below, where a failure is reported
const templates = loadTemplates("./plots.json");
const presetsLoading = loadPresets("./presets.json");

try {
  const [versions, plotTemplates, presets, waterLibrary, catalogueList] = await Promise.all([
    py.ready, templates, presetsLoading, libraryLoading, cataloguesLoading,
  ]);
  about.render(versions);
  setCatalogues(catalogueList); // the core's units, activity models, flow units, molar masses
  fillCatalogueSelects(document); // before any section reads its lists
  const library = waterLibrary.systems?.length ? waterLibrary.systems : null;
  setLimits(waterLibrary.limits); // the core's input limits (one pH range) for every pH field
  setFieldWords(waterLibrary.labels); // and its words for each input (notes about a link or file)

  // What the URL opens (a link or an example) is read before anything is computed, and each
  // section is filled from it before its first result: the defaults never flash first.
  const opening = await openingOf(window.location.hash, presets, SECTIONS);
  const opened = opening.state ?? {};
  const messages = [...(opening.notes ?? [])];

  // The water first (its headline is the first thing on screen): mount it and draw what the URL
  // opened before anything else is mounted.
  const waterSection = mountWater({
    py,
    view: new WaterView(document),
    plots: waterPlots,
    palette: plotTemplates.palette,
    systems: waterLibrary.systems,
    ions: waterLibrary.ions,
    co2MolarMass: molarMass("CO2"),
  });
  // The jobs are mounted after the water's first result: the water handle they get hands a new
  // listener the last solved water (after its mount has returned), as if it had been there.
  let lastSolved = null;
  waterSection.onSolved((scenario, result) => {
    lastSolved = [scenario, result];
    headline.render(result);
  });
  waterSection.onStale?.(() => { lastSolved = null; }); // never replay a water the screen no longer shows
  const water = {
    ...waterSection,
    onSolved(cb) {
      const off = waterSection.onSolved(cb);
      const replay = lastSolved;
      if (replay) queueMicrotask(() => { if (lastSolved === replay) cb(...replay); });
      return off;
    },
  };
  const waterApplied = applyState(opened, ["water"]); // sends the water's first request now
  const [waterNotes] = await Promise.all([waterApplied, waterPlots]);
  messages.push(...waterNotes);
  // What the first view does not need: asked after the water's result is drawn.
  const chemicalList = await py.call("chemicals").then((r) => r.chemicals);

  // Then the jobs on it. The one-acid explorer (distribution.js) is one job among them.
  const plotHandles = await embedPlots("./plots.json", { distribution: "plot-distribution", logConcentration: "plot-logc" });
  mountDistribution({
    py,
    view: new DistributionView(document),
    plots: plotHandles,
    status,
    systems: library,
  });
  // Section "treatment" (treatment.js): titration, buffer intensity and dose, on that water.
  const [titrationPlot, bufferPlot] = await Promise.all([
    embedTitrationPlot("plot-titration"),
    embedBufferPlot("plot-buffer"),
  ]);
  mountTreatment({
    py,
    view: new TreatmentView(document),
    plots: { titration: titrationPlot, buffer: bufferPlot },
    water,
    chemicals: chemicalList,
    systems: library,
  });
  // Jobs "Lead and copper" and "Hardness titration" (lead.js, hardness.js), on that water; each
  // computes when its job is shown.
  const leadView = new LeadView(document);
  const hardnessView = new HardnessView(document);
  const [leadPlot, edtaPlot, conditionalPlot] = await Promise.all([
    embedMetalSolubilityPlot("plot-lead"),
    embedEdtaTitrationPlot("plot-edta"),
    embedConditionalConstantPlot("plot-edta-conditional"),
  ]);
  mountLead({ py, view: leadView, plot: leadPlot, water });
  mountHardness({ py, view: hardnessView, plots: { titration: edtaPlot, conditional: conditionalPlot }, water });
  // Jobs "Scale and corrosion" and "Softening" (scale.js, softening.js), on that water; each
  // computes when its job is shown.
  const scaleView = new ScaleView(document);
  mountScale({ py, view: scaleView, plots: await embedScalePlots("plot-scale-si", "plot-scale-ccpp"), water, chemicals: chemicalList });
  mountSoftening({ py, view: new SofteningView(document), water });
  messages.push(...(await applyState(opened, ["distribution", "treatment", "lead", "hardness", "scale", "softening", "workbench"])));

  mountBatch({ py, view: new BatchView(document), systems: waterLibrary.systems, ions: waterLibrary.ions, chemicals: chemicalList });
  // Keep and share: says what the URL opened (and what of it was dropped), keeps the link current.
  mountShare({
    py,
    view: new ShareView(document),
    presets,
    manifest,
    versions,
    win: window,
    opened: { opening, messages },
  });
  status.ready("Ready. Everything is computed in this browser; nothing is sent anywhere.");
  status.pageReady();
} catch (error) {
  status.fatal(String(error?.message || error));
}

if ("serviceWorker" in navigator && window.isSecureContext) {
  navigator.serviceWorker.register("./sw.js", { scope: "./" })
    .then((registration) => watchForUpdates(document, navigator.serviceWorker, registration))
    .catch((error) => {
      console.warn("offline copy unavailable:", error.message);
    });
}
