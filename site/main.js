// Composition root: start Python, embed the plots, mount the sections, go offline-capable.

import { onBootProgress, sharedPython } from "./py.js";
import { embedPlots } from "./plot.js";
import { AboutView, DistributionView, StatusView } from "./view.js";
import { mountDistribution } from "./distribution.js";
import { mountWater } from "./water.js";
import { WaterView, embedWaterPlots } from "./water-view.js";
import { embedBufferPlot, embedTitrationPlot } from "./plot.js";
import { mountTreatment } from "./treatment.js";
import { TreatmentView } from "./treatment-view.js";
import { ShareView, mountShare, watchForUpdates } from "./share-view.js";
import { loadPresets } from "./presets.js";
import { mountBatch } from "./batch.js";
import { BatchView } from "./batch-view.js";

const status = new StatusView(document);
const about = new AboutView(document);

// The build manifest (versions, file hashes, constants fingerprint): fetched once, used twice.
const manifest = fetch("./manifest.json")
  .then((r) => (r.ok ? r.json() : null))
  .catch(() => null);
manifest.then((m) => about.render(m?.versions));

const py = sharedPython(); // already started by boot.js
onBootProgress((step) => status.progress(step));
const plots = embedPlots("./plots.json", { distribution: "plot-distribution", logConcentration: "plot-logc" });

try {
  const [versions, plotHandles] = await Promise.all([py.ready, plots]);
  about.render(versions);
  const waterLibrary = await py.call("systems").catch(() => ({ systems: [], ions: [] }));
  const library = waterLibrary.systems?.length ? waterLibrary.systems : null;
  const distribution = mountDistribution({
    py,
    view: new DistributionView(document),
    plots: plotHandles,
    status,
    systems: library,
  });
  // Draw the first result before mounting the rest: it is what the user waits for.
  await distribution.refresh();
  // Section "Equilibrium of a whole water" (water.js); its handle feeds later sections.
  const water = mountWater({
    py,
    view: new WaterView(document),
    plots: await embedWaterPlots(),
    palette: plotHandles.palette,
    systems: waterLibrary.systems,
    ions: waterLibrary.ions,
  });
  // Section "treatment" (treatment.js): titration, buffer intensity and dose, on that water.
  const [chemicalList, titrationPlot, bufferPlot] = await Promise.all([
    py.call("chemicals").then((r) => r.chemicals),
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
  status.ready("Ready. Everything is computed in this browser; nothing is sent anywhere.");
  await water.refresh();
  // Keep and share (share-view.js): the URL's link or example is applied once the defaults are drawn.
  mountBatch({ py, view: new BatchView(document), systems: waterLibrary.systems, ions: waterLibrary.ions, chemicals: chemicalList });
  await mountShare({
    py,
    view: new ShareView(document),
    presets: await loadPresets("./presets.json"),
    manifest,
    versions,
    win: window,
  });
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
