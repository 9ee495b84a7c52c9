// The only module that knows Bokeh. It embeds the templates written by build_scripts/plots.py
// (plots.json) and fills their NAMED models with plain arrays. No chemistry here.

function bokeh() {
  if (!globalThis.Bokeh?.embed) throw new Error("BokehJS did not load (vendor/bokeh/bokeh.min.js)");
  return globalThis.Bokeh;
}

function findModel(name) {
  for (const doc of bokeh().documents) {
    const model = doc.get_model_by_name(name);
    if (model) return model;
  }
  throw new Error(`plot model "${name}" is missing from plots.json`);
}

/** Species lines of one plot: a named data source plus a named vertical marker. */
class SpeciesPlot {
  /**
   * @param {string} prefix  names in the template: <prefix>_fig, _src, _marker, _legend
   * @param {HTMLElement} host  the element the plot is embedded in
   * @param {{base_height_px: number, legend_row_px: number}} layout  sizes from plots.json
   */
  constructor(prefix, host, layout) {
    const [sourceName, markerName, legendName] = [`${prefix}_src`, `${prefix}_marker`, `${prefix}_legend`];
    this.figure = findModel(`${prefix}_fig`);
    this.layout = layout;
    this.source = findModel(sourceName);
    this.marker = findModel(markerName);
    this.legend = findModel(legendName);
    this.host = host;
  }

  /**
   * Replace every line at once.
   *
   * @param {number[]} x  the shared x values (pH) [-]
   * @param {string[]} labels  one legend label per line
   * @param {number[][]} ys  one y array per line, same length as x (NaN leaves a gap)
   */
  setLines(x, labels, ys) {
    const longest = Math.max(1, ...labels.map((label) => label.length));
    const perColumn = 44 + 8 * longest; // swatch + spacing + text [px], roughly
    const fit = Math.floor((this.host.clientWidth || 600) / perColumn);
    const columns = Math.max(1, Math.min(labels.length, fit));
    const rows = Math.ceil(labels.length / columns);
    this.legend.nrows = rows; // filled row by row, in species order
    const height = this.layout.base_height_px + rows * this.layout.legend_row_px;
    if (this.figure.height !== height) this.figure.height = height;
    this.source.data = {
      xs: ys.map(() => x),
      ys,
      label: labels,
      slot: labels.map((_, i) => i),
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
  const response = await fetch(templatesUrl);
  if (!response.ok) throw new Error(`could not load ${templatesUrl} (HTTP ${response.status})`);
  const templates = await response.json();
  await bokeh().embed.embed_item(templates.distribution, targets.distribution);
  await bokeh().embed.embed_item(templates.log_concentration, targets.logConcentration);
  const host = (id) => document.getElementById(id);
  const logY = findModel("logc_y");
  return {
    palette: templates.palette,
    fraction: new SpeciesPlot("fraction", host(targets.distribution), templates.layout),
    logc: new SpeciesPlot("logc", host(targets.logConcentration), templates.layout),
    /**
     * @param {number} bottom  lower end of the log-concentration axis [log10(mol/L)]
     * @param {number} top  upper end [log10(mol/L)]
     */
    setLogRange(bottom, top) {
      logY.setv({ start: bottom, end: top });
    },
  };
}
