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
   */
  setCurve(x, pH, marks, axisLabel) {
    this.source.data = { x, pH };
    this.points.data = { x: marks.map((m) => m.x), pH: marks.map((m) => m.pH), label: marks.map((m) => m.label) };
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

/** Buffer intensity against pH, with the water's pH marked. */
class BufferPlot {
  constructor(doc) {
    this.source = findModel("buffer_src", doc);
    this.marker = findModel("buffer_marker", doc);
    this.yRange = findModel("buffer_y", doc);
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
