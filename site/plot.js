// The only module that knows Bokeh. It embeds the templates written by build_scripts/plots.py
// (plots.json) and fills their NAMED models with plain arrays. No chemistry here.

function bokeh() {
  if (!globalThis.Bokeh?.embed) throw new Error("BokehJS did not load (vendor/bokeh/bokeh.min.js)");
  return globalThis.Bokeh;
}

const PALETTE_SIZE = 13; // colours in build_scripts/plots.py PALETTE
const DASHES = ["solid", "dashed", "dotted", "dashdot"];

function findModel(name, doc = null) {
  for (const d of doc ? [doc] : bokeh().documents) {
    const model = d.get_model_by_name(name);
    if (model) return model;
  }
  throw new Error(`plot model "${name}" is missing from plots.json`);
}

let templatesCache = null;

/**
 * Load plots.json once.
 *
 * @param {string} [url]  URL of plots.json
 * @returns {Promise<object>}  the templates, keyed as in build_scripts/plots.py
 */
export function loadTemplates(url = "./plots.json") {
  if (!templatesCache) {
    templatesCache = fetch(url).then((response) => {
      if (!response.ok) throw new Error(`could not load ${url} (HTTP ${response.status})`);
      return response.json();
    });
  }
  return templatesCache;
}

/**
 * Embed one template into an element; every embed is its own Bokeh document, so the same
 * template can be shown several times on the page.
 *
 * @param {string} key  template key ("distribution", "log_concentration", "titration", "buffer")
 * @param {string} hostId  id of the element to draw in
 * @returns {Promise<{doc: object, templates: object, host: HTMLElement}>}
 */
async function embedTemplate(key, hostId) {
  const templates = await loadTemplates();
  if (!templates[key]) throw new Error(`plots.json has no template "${key}"`);
  await bokeh().embed.embed_item(templates[key], hostId);
  const docs = bokeh().documents;
  return { doc: docs[docs.length - 1], templates, host: document.getElementById(hostId) };
}

/** Species lines of one plot: a named data source plus a named vertical marker. */
class SpeciesPlot {
  /**
   * @param {string} prefix  names in the template: <prefix>_fig, _src, _marker, _legend
   * @param {HTMLElement} host  the element the plot is embedded in
   * @param {{base_height_px: number, legend_row_px: number}} layout  sizes from plots.json
   */
  constructor(prefix, host, layout, doc = null) {
    const [sourceName, markerName, legendName] = [`${prefix}_src`, `${prefix}_marker`, `${prefix}_legend`];
    this.figure = findModel(`${prefix}_fig`, doc);
    this.layout = layout;
    this.source = findModel(sourceName, doc);
    this.marker = findModel(markerName, doc);
    this.legend = findModel(legendName, doc);
    this.host = host;
    this.yRange = prefix === "logc" ? findModel("logc_y", doc) : null;
  }

  /**
   * @param {number} bottom  lower end of the y axis
   * @param {number} top  upper end
   */
  setYRange(bottom, top) {
    (this.yRange ?? this.figure.y_range).setv({ start: bottom, end: top });
  }

  /**
   * Replace every line at once.
   *
   * @param {number[]} x  the shared x values (pH) [-]
   * @param {string[]} labels  one legend label per line
   * @param {number[][]} ys  one y array per line, same length as x (NaN leaves a gap)
   */
  setLines(x, labels, ys) {
    if (labels.length !== ys.length) throw new Error(`plot: ${labels.length} labels for ${ys.length} lines`);
    const longest = Math.max(1, ...labels.map((label) => label.length));
    const perColumn = 44 + 8 * longest; // swatch + spacing + text [px], roughly
    const fit = Math.floor((this.host.clientWidth || 600) / perColumn);
    const columns = Math.max(1, Math.min(labels.length, fit));
    const rows = Math.ceil(labels.length / columns); // 0 for a plot without lines
    this.legend.nrows = Math.max(1, rows); // Bokeh takes a positive count; filled row by row
    this.legend.visible = labels.length > 0;
    const height = this.layout.base_height_px + rows * this.layout.legend_row_px;
    if (this.figure.height !== height) this.figure.height = height;
    this.source.data = {
      xs: ys.map(() => x),
      ys,
      label: labels,
      slot: labels.map((_, i) => i % PALETTE_SIZE),
      // past the palette's length, colours repeat with another dash pattern
      dash: labels.map((_, i) => DASHES[Math.floor(i / PALETTE_SIZE) % DASHES.length]),
    };
  }

  /** @param {number} position  x of the dashed marker (the table's pH) [-] */
  setMarker(position) {
    this.marker.location = position;
  }
}

/**
 * Embed the plots and return handles to update them.
 *
 * @param {string} templatesUrl  URL of plots.json
 * @param {{distribution: string, logConcentration: string}} targets  ids of the host elements
 * @returns {Promise<{palette: string[], fraction: SpeciesPlot, logc: SpeciesPlot,
 *           setLogRange: (bottom: number, top: number) => void}>}
 */
export async function embedPlots(templatesUrl, targets) {
  await loadTemplates(templatesUrl);
  const fraction = await embedSpeciesPlot("fraction", targets.distribution);
  const logc = await embedSpeciesPlot("logc", targets.logConcentration);
  const templates = await loadTemplates();
  const logY = logc.yRange;
  return {
    palette: templates.palette,
    fraction,
    logc,
    /**
     * @param {number} bottom  lower end of the log-concentration axis [log10(mol/L)]
     * @param {number} top  upper end [log10(mol/L)]
     */
    setLogRange(bottom, top) {
      logY.setv({ start: bottom, end: top });
    },
  };
}

/**
 * Embed a species plot (one line per species, legend, marker) into an element.
 *
 * @param {"fraction"|"logc"} kind  fraction vs pH, or log10 concentration vs pH
 * @param {string} hostId  id of the element
 * @returns {Promise<SpeciesPlot>}  with setLines, setMarker and setYRange
 */
export async function embedSpeciesPlot(kind, hostId) {
  const key = kind === "fraction" ? "distribution" : "log_concentration";
  const { doc, templates, host } = await embedTemplate(key, hostId);
  return new SpeciesPlot(kind, host, templates.layout, doc);
}

/** pH against titrant amount, with marked points. */
class TitrationPlot {
  constructor(doc) {
    this.source = findModel("titr_src", doc);
    this.points = findModel("titr_eq_src", doc);
    this.axis = findModel("titr_xaxis", doc);
    this.xRange = findModel("titr_x", doc);
    this.yRange = findModel("titr_fig", doc).y_range;
  }

  /**
   * @param {number[]} x  titrant amounts, ascending
   * @param {number[]} pH  pH at each amount [-]
   * @param {{x: number, pH: number, label: string}[]} marks  equivalence and half-equivalence points
   * @param {string} axisLabel  e.g. "NaOH added (mL)"
   * @param {string} [unit]  the unit of x for the tooltips, e.g. "mL" or "mg/L"
   */
  setCurve(x, pH, marks, axisLabel, unit = "") {
    this.source.data = { x, pH, unit: x.map(() => unit) };
    this.points.data = {
      x: marks.map((m) => m.x), pH: marks.map((m) => m.pH), label: marks.map((m) => m.label), unit: marks.map(() => unit),
    };
    this.axis.axis_label = axisLabel;
    const finite = x.filter(Number.isFinite);
    const hi = finite.length ? Math.max(...finite) : 1;
    this.xRange.setv({ start: 0, end: hi > 0 ? hi : 1 });
    const ph = pH.filter(Number.isFinite);
    if (ph.length) this.yRange.setv({ start: Math.floor(Math.min(...ph)) - 0.5, end: Math.ceil(Math.max(...ph)) + 0.5 });
  }
}

/**
 * @param {string} hostId  id of the element
 * @returns {Promise<TitrationPlot>}
 */
export async function embedTitrationPlot(hostId) {
  const { doc } = await embedTemplate("titration", hostId);
  return new TitrationPlot(doc);
}

/** Buffer intensity against pH, with the water's pH marked; linear or logarithmic β axis. */
class BufferPlot {
  constructor(doc) {
    this.source = findModel("buffer_src", doc);
    this.marker = findModel("buffer_marker", doc);
    this.yRange = findModel("buffer_y", doc);
    this.logRange = findModel("buffer_log_y", doc);
    this.linear = ["buffer_line", "buffer_yaxis", "buffer_ygrid"].map((n) => findModel(n, doc));
    this.logarithmic = ["buffer_log_line", "buffer_log_yaxis", "buffer_log_ygrid"].map((n) => findModel(n, doc));
    this.log = false;
  }

  /** @param {boolean} log  show β on a logarithmic axis (else linear) */
  setLog(log) {
    this.log = Boolean(log);
    for (const m of this.linear) m.visible = !this.log;
    for (const m of this.logarithmic) m.visible = this.log;
  }

  /**
   * @param {number[]} pH  pH values [-]
   * @param {number[]} beta  buffer intensity at each [mmol/(L pH)]
   * @param {number} waterPH  where to draw the marker [-]
   */
  setCurve(pH, beta, waterPH) {
    this.source.data = { pH, beta };
    this.marker.location = waterPH;
    const top = Math.max(0, ...beta.filter(Number.isFinite));
    this.yRange.setv({ start: 0, end: top > 0 ? top * 1.08 : 1 });
    // the log axis: whole decades around every positive value
    const positive = beta.filter((b) => Number.isFinite(b) && b > 0);
    if (positive.length) {
      const lo = Math.floor(Math.log10(Math.min(...positive)));
      const hi = Math.ceil(Math.log10(Math.max(...positive)));
      this.logRange.setv({ start: 10 ** lo, end: 10 ** Math.max(hi, lo + 1) });
    }
  }
}

/**
 * @param {string} hostId  id of the element
 * @returns {Promise<BufferPlot>}
 */
export async function embedBufferPlot(hostId) {
  const { doc } = await embedTemplate("buffer", hostId);
  return new BufferPlot(doc);
}

// -- jobs "Lead and copper" and "Hardness titration" (templates: build_scripts/plot_lead.py) --

/** Data of a Bokeh source as a plain object (BokehJS may hold it as a Map). */
function plainData(source) {
  return source.data instanceof Map ? Object.fromEntries(source.data) : source.data;
}

/** Lower and upper ends of a log axis holding every positive value, in whole decades. */
function decades(values, minimumDecades = 2) {
  const positive = values.filter((v) => Number.isFinite(v) && v > 0);
  if (!positive.length) return [0.01, 100];
  let lo = Math.floor(Math.log10(Math.min(...positive)));
  let hi = Math.ceil(Math.log10(Math.max(...positive)));
  if (hi - lo < minimumDecades) {
    const pad = minimumDecades - (hi - lo);
    lo -= Math.ceil(pad / 2);
    hi += Math.floor(pad / 2);
  }
  return [10 ** lo, 10 ** hi];
}

/** x extent of finite values, widened a little when it is a single value. */
function extent(values) {
  const finite = values.filter(Number.isFinite);
  if (!finite.length) return [0, 1];
  const lo = Math.min(...finite);
  const hi = Math.max(...finite);
  return hi > lo ? [lo, hi] : [lo - 0.5, hi + 0.5];
}

/** Dissolved lead and copper on a log axis; one line per stretch controlled by one solid. */
class MetalSolubilityPlot {
  constructor(doc) {
    this.lines = findModel("lead_line_src", doc);
    this.band = findModel("lead_band_src", doc);
    this.segments = findModel("lead_seg_src", doc);
    this.switches = findModel("lead_switch_src", doc);
    this.marker = findModel("lead_marker", doc);
    this.axis = findModel("lead_xaxis", doc);
    this.xRange = findModel("lead_x", doc);
    this.yRange = findModel("lead_y", doc);
  }

  /**
   * Replace every curve.
   *
   * @param {{metal: string, label: string, points: {x: number, y: number|null, solid: string|null,
   *          low: number|null, high: number|null}[]}[]} series  one per metal; y, low, high in µg/L
   *          (null: no value there); solid = the name shown for the controlling solid
   * @param {string} axisLabel  e.g. "pH" or "DIC (mg/L as C)"
   * @param {number|null} markerAt  x of the dashed marker (null hides it)
   */
  setCurves(series, axisLabel, markerAt) {
    const lines = { xs: [], ys: [], metal: [], label: [], solid: [] };
    const band = { xs: [], ys: [], metal: [], label: [] };
    const segs = { x: [], y: [], text: [], metal: [] };
    const switches = { x: [], y: [], metal: [] };
    const all = [];
    const xs = [];
    for (const s of series) {
      let run = null; // the segment being built: {solid, pts}
      const runs = [];
      let bandRun = [];
      const bandRuns = [];
      for (const p of s.points) {
        xs.push(p.x);
        const ok = Number.isFinite(p.y) && p.y > 0;
        if (!ok) {
          if (run) runs.push(run);
          run = null;
        } else {
          all.push(p.y);
          if (!run || run.solid !== p.solid) {
            const prev = run;
            if (prev) {
              runs.push(prev);
              switches.x.push(p.x);
              switches.y.push(p.y);
              switches.metal.push(s.metal);
            }
            run = { solid: p.solid, pts: prev ? [prev.pts[prev.pts.length - 1]] : [] };
          }
          run.pts.push(p);
        }
        if (Number.isFinite(p.low) && Number.isFinite(p.high) && p.low > 0 && p.high > 0) {
          bandRun.push(p);
          all.push(p.low, p.high);
        } else if (bandRun.length) {
          bandRuns.push(bandRun);
          bandRun = [];
        }
      }
      if (run) runs.push(run);
      if (bandRun.length) bandRuns.push(bandRun);
      const xsAll = s.points.map((p) => p.x).filter(Number.isFinite);
      const [lo, hi] = extent(xsAll);
      const margin = 0.08 * (hi - lo); // a name centred on a point this close to an edge is cut off
      for (const r of runs) {
        lines.xs.push(r.pts.map((p) => p.x));
        lines.ys.push(r.pts.map((p) => p.y));
        lines.metal.push(s.metal);
        lines.label.push(s.label);
        lines.solid.push(r.solid ?? "");
        const middle = r.pts[Math.floor(r.pts.length / 2)].x;
        const want = Math.min(Math.max(middle, lo + margin), hi - margin);
        const mid = r.pts.reduce((best, p) => (Math.abs(p.x - want) < Math.abs(best.x - want) ? p : best));
        segs.x.push(mid.x);
        segs.y.push(mid.y);
        segs.text.push(r.solid ?? "");
        segs.metal.push(s.metal);
      }
      for (const b of bandRuns) {
        band.xs.push([...b.map((p) => p.x), ...b.map((p) => p.x).reverse()]);
        band.ys.push([...b.map((p) => p.high), ...b.map((p) => p.low).reverse()]);
        band.metal.push(s.metal);
        band.label.push(s.label);
      }
    }
    this.band.data = band;
    this.lines.data = lines;
    this.segments.data = segs;
    this.switches.data = switches;
    this.axis.axis_label = axisLabel;
    const [x0, x1] = extent(xs);
    this.xRange.setv({ start: x0, end: x1 });
    const [y0, y1] = decades(all);
    this.yRange.setv({ start: y0, end: y1 });
    this.marker.visible = Number.isFinite(markerAt);
    if (Number.isFinite(markerAt)) this.marker.location = markerAt;
  }

  /** @returns {{lines: object, band: object, segments: object}}  what is drawn (for tests) */
  drawn() {
    return { lines: plainData(this.lines), band: plainData(this.band), segments: plainData(this.segments) };
  }
}

/**
 * @param {string} hostId  id of the element
 * @returns {Promise<MetalSolubilityPlot>}
 */
export async function embedMetalSolubilityPlot(hostId) {
  const { doc } = await embedTemplate("lead_solubility", hostId);
  return new MetalSolubilityPlot(doc);
}

/** pM of calcium and magnesium against EDTA added, end points marked. */
class EdtaTitrationPlot {
  constructor(doc) {
    this.source = findModel("edta_src", doc);
    this.points = findModel("edta_ep_src", doc);
    this.xRange = findModel("edta_x", doc);
    this.yRange = findModel("edta_y", doc);
  }

  /**
   * @param {number[]} mL  EDTA added [mL], ascending
   * @param {{metal: string, label: string, pM: (number|null)[]}[]} lines  one per metal present
   * @param {{x: number, y: number, label: string}[]} marks  end points
   */
  setCurves(mL, lines, marks) {
    this.source.data = {
      xs: lines.map(() => mL),
      ys: lines.map((l) => l.pM.map((v) => (Number.isFinite(v) ? v : NaN))),
      metal: lines.map((l) => l.metal),
      label: lines.map((l) => l.label),
    };
    this.points.data = { x: marks.map((m) => m.x), y: marks.map((m) => m.y), label: marks.map((m) => m.label) };
    const [, hi] = extent(mL);
    this.xRange.setv({ start: 0, end: hi > 0 ? hi : 1 });
    const [lo, top] = extent(lines.flatMap((l) => l.pM));
    this.yRange.setv({ start: Math.floor(lo) - 0.5, end: Math.ceil(top) + 0.5 });
  }
}

/**
 * @param {string} hostId  id of the element
 * @returns {Promise<EdtaTitrationPlot>}
 */
export async function embedEdtaTitrationPlot(hostId) {
  const { doc } = await embedTemplate("edta_titration", hostId);
  return new EdtaTitrationPlot(doc);
}

/** log10 K' of each metal-EDTA complex against pH, the buffer pH marked. */
class ConditionalConstantPlot {
  constructor(doc) {
    this.source = findModel("edtacond_src", doc);
    this.marker = findModel("edtacond_marker", doc);
    this.yRange = findModel("edtacond_y", doc);
  }

  /**
   * @param {number[]} pH  pH values [-]
   * @param {{metal: string, label: string, logK: number[]}[]} lines  one per metal
   * @param {number} bufferPH  where to draw the marker [-]
   */
  setCurves(pH, lines, bufferPH) {
    this.source.data = {
      xs: lines.map(() => pH),
      ys: lines.map((l) => l.logK),
      metal: lines.map((l) => l.metal),
      label: lines.map((l) => l.label),
    };
    this.marker.location = bufferPH;
    const [lo, hi] = extent(lines.flatMap((l) => l.logK));
    this.yRange.setv({ start: Math.min(0, Math.floor(lo)), end: Math.ceil(hi) + 1 });
  }

  /** @param {number} bufferPH  where to draw the marker [-] */
  setMarker(bufferPH) {
    this.marker.location = bufferPH;
  }
}

/**
 * @param {string} hostId  id of the element
 * @returns {Promise<ConditionalConstantPlot>}
 */
export async function embedConditionalConstantPlot(hostId) {
  const { doc } = await embedTemplate("edta_conditional", hostId);
  return new ConditionalConstantPlot(doc);
}

// -- "Scale and corrosion" job (build_scripts/plot_scale.py) ---------------------------------

const finiteOr = (v) => (v === null || v === undefined || !Number.isFinite(v) ? NaN : v);

/** y range holding every finite value of the arrays, padded, always including zero. */
function paddedRange(arrays, minSpan) {
  const all = arrays.flat().filter(Number.isFinite);
  let lo = Math.min(0, ...all);
  let hi = Math.max(0, ...all);
  if (hi - lo < minSpan) {
    const mid = (hi + lo) / 2;
    lo = Math.min(lo, mid - minSpan / 2);
    hi = Math.max(hi, mid + minSpan / 2);
  }
  const pad = 0.06 * (hi - lo);
  return { start: lo - pad, end: hi + pad };
}

/** Saturation index of calcite against pH, with its band and the water marked. */
class SaturationPlot {
  constructor(doc) {
    this.source = findModel("scale_si_src", doc);
    this.water = findModel("scale_si_water_src", doc);
    this.xRange = findModel("scale_si_x", doc);
    this.yRange = findModel("scale_si_y", doc);
  }

  /**
   * @param {number[]} pH  pH values [-]
   * @param {(number|null)[]} lsi  LSI at each [-] (null leaves a gap)
   * @param {(number|null)[]} low  lower edge of the band [-]
   * @param {(number|null)[]} high  upper edge of the band [-]
   * @param {{pH: number, LSI: number, label: string}|null} water  the water's own point
   */
  setCurve(pH, lsi, low, high, water) {
    this.source.data = { pH, LSI: lsi.map(finiteOr), low: low.map(finiteOr), high: high.map(finiteOr) };
    this.water.data = water ? { pH: [water.pH], LSI: [water.LSI], label: [water.label] } : { pH: [], LSI: [], label: [] };
    if (pH.length) this.xRange.setv({ start: Math.min(...pH), end: Math.max(...pH) });
    this.yRange.setv(paddedRange([lsi, low, high].map((a) => a.map(finiteOr)), 1));
  }
}

/** CCPP against temperature, with its band and the chosen temperatures marked. */
class CcppPlot {
  constructor(doc) {
    this.source = findModel("scale_ccpp_src", doc);
    this.points = findModel("scale_ccpp_pts_src", doc);
    this.xRange = findModel("scale_ccpp_x", doc);
    this.yRange = findModel("scale_ccpp_y", doc);
  }

  /**
   * @param {number[]} t  temperatures [°C]
   * @param {(number|null)[]} ccpp  CCPP at each [mg/L as CaCO3]
   * @param {(number|null)[]} low  lower edge of the band [mg/L as CaCO3]
   * @param {(number|null)[]} high  upper edge of the band [mg/L as CaCO3]
   * @param {{t: number, ccpp: number, label: string}[]} marks  the water and the chosen temperatures
   */
  setCurve(t, ccpp, low, high, marks) {
    this.source.data = { t, ccpp: ccpp.map(finiteOr), low: low.map(finiteOr), high: high.map(finiteOr) };
    const shown = marks.filter((m) => Number.isFinite(m.ccpp));
    this.points.data = { t: shown.map((m) => m.t), ccpp: shown.map((m) => m.ccpp), label: shown.map((m) => m.label) };
    const xs = [...t, ...shown.map((m) => m.t)];
    if (xs.length) this.xRange.setv({ start: Math.min(...xs), end: Math.max(...xs) });
    this.yRange.setv(paddedRange([ccpp, low, high, shown.map((m) => m.ccpp)].map((a) => a.map(finiteOr)), 4));
  }
}

/**
 * Let Bokeh measure its plots again (a section that was hidden when they were drawn is shown).
 */
export function relayoutPlots() {
  window.dispatchEvent(new Event("resize"));
}

/**
 * Embed the two plots of the "Scale and corrosion" job.
 *
 * @param {string} siHostId  id of the element for the saturation index against pH
 * @param {string} ccppHostId  id of the element for the CCPP against temperature
 * @returns {Promise<{saturation: SaturationPlot, ccpp: CcppPlot}>}
 */
export async function embedScalePlots(siHostId, ccppHostId) {
  const si = await embedTemplate("scale_saturation", siHostId);
  const cc = await embedTemplate("scale_ccpp", ccppHostId);
  return { saturation: new SaturationPlot(si.doc), ccpp: new CcppPlot(cc.doc) };
}
