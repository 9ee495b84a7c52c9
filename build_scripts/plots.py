"""Bokeh plot templates for the Acidscape page, written once at build time.

The page never runs Python Bokeh. This module lays out each plot (axes, grid,
legend, hover, colours) and serialises it with :func:`bokeh.embed.json_item`;
``site/plot.js`` embeds the items with BokehJS and then only replaces the data
of the NAMED models listed below. Their names are the contract with plot.js:

=========================  ==========================================================
model name                 what the page puts in it
=========================  ==========================================================
``fraction_src``           ColumnDataSource: ``xs`` (pH lists), ``ys`` (alpha
                           fraction lists), ``label`` (species formula), ``slot``
                           (colour index, cycling through the palette), ``dash`` (a
                           Bokeh dash name: solid for the first cycle, then dashed, dotted)
                           (0..n, picks the colour)
``fraction_marker``        Span: ``location`` = the pH of the species table
``logc_src``               ColumnDataSource as ``fraction_src`` with ``ys`` =
                           log10 of concentration [log10(mol/L)]
``logc_marker``            Span: ``location`` = the pH of the species table
``fraction_legend``,       Legend: ``nrows`` fitted to the width of the page
``logc_legend``
``fraction_fig``,          figure: ``height`` grows with the legend's rows
``logc_fig``
``logc_y``                 Range1d: ``start``/``end`` follow the total concentration
=========================  ==========================================================

Functions
---------
distribution_plot() -> figure        alpha fraction vs pH, one line per species
log_concentration_plot() -> figure   log10 concentration vs pH, one line per species
templates() -> dict                  both, as json_item dicts, plus the palette

The colours are Acidscape's own pick: thirteen hues (enough for the twelve
dissociation steps the core accepts) ordered so that neighbours in a
protonation ladder contrast in hue and lightness.
"""

from __future__ import annotations

import importlib

from bokeh.embed import json_item
from bokeh.models import (
    ColumnDataSource,
    Grid,
    HoverTool,
    Legend,
    LegendItem,
    LinearColorMapper,
    LogAxis,
    LogScale,
    Range1d,
    Span,
)
from bokeh.plotting import figure
from bokeh.transform import transform

#: One colour per protonation state, most protonated first (Acidscape's own choice).
PALETTE = (
    "#0f6e7a",  # deep teal
    "#d9822b",  # amber
    "#6b3fa0",  # violet
    "#2f9e44",  # leaf green
    "#c2255c",  # raspberry
    "#1c5fb8",  # cobalt
    "#8a6d1f",  # ochre
    "#4d4d4d",  # graphite
    "#e0559a",  # pink
    "#3bb3c3",  # cyan
    "#7a9a01",  # olive
    "#9c4221",  # brick
    "#5a67d8",  # indigo
)

_INK = "#1f2a30"
_GRID = "#e3e8eb"
_MARKER = "#8a949b"
_FONT = "system-ui, -apple-system, 'Segoe UI', Roboto, sans-serif"


def _empty_source(name: str) -> ColumnDataSource:
    return ColumnDataSource(data={"xs": [], "ys": [], "label": [], "slot": [], "dash": []}, name=name)


#: Height of a plot without its legend [px]; plot.js adds LEGEND_ROW_PX per legend row.
BASE_HEIGHT_PX = 300
LEGEND_ROW_PX = 24


def _base_figure(name: str, y_label: str, y_range: Range1d) -> figure:
    p = figure(
        name=name,
        height=BASE_HEIGHT_PX + LEGEND_ROW_PX,
        sizing_mode="stretch_width",
        x_range=Range1d(0, 14, bounds=(-2, 16)),
        y_range=y_range,
        x_axis_label="pH",
        y_axis_label=y_label,
        tools="xpan,xwheel_zoom,box_zoom,reset,save",
        active_scroll=None,
        toolbar_location="right",
        background_fill_color="#ffffff",
        border_fill_color="#ffffff",
        outline_line_color=None,
        min_border_left=56,
    )
    p.toolbar.logo = None
    p.toolbar.autohide = True
    p.toolbar_inner = True  # float over the frame instead of reserving a strip
    _style_axes(p)
    for axis in (p.xaxis, p.yaxis):
        axis.minor_tick_line_color = None
    p.xaxis.ticker.desired_num_ticks = 14
    p.grid.grid_line_color = _GRID
    return p


def _style_axes(p) -> None:
    """The page's font, ink and marker colour on both axes' labels, lines and major ticks."""
    for axis in (p.xaxis, p.yaxis):
        axis.axis_label_text_font = _FONT
        axis.axis_label_text_font_style = "normal"
        axis.axis_label_text_font_size = "13px"
        axis.axis_label_text_color = _INK
        axis.major_label_text_font = _FONT
        axis.major_label_text_font_size = "12px"
        axis.major_label_text_color = _INK
        axis.axis_line_color = _MARKER
        axis.major_tick_line_color = _MARKER


def _legend(name: str, renderer) -> Legend:
    """One-row legend below a plot: an entry per value of the source's ``label`` field, click hides."""
    return Legend(
        name=name,
        items=[LegendItem(label={"field": "label"}, renderers=[renderer])],
        location="center_left",
        orientation="horizontal",
        nrows=1,
        label_text_font=_FONT,
        label_text_font_size="12px",
        label_text_color=_INK,
        background_fill_alpha=0.0,
        border_line_color=None,
        click_policy="hide",
        spacing=14,
        padding=4,
        glyph_width=22,
    )


def _species_lines(p: figure, source: ColumnDataSource, y_format: str, y_name: str, legend_name: str,
                   y_unit: str = "") -> None:
    mapper = LinearColorMapper(palette=list(PALETTE), low=-0.5, high=len(PALETTE) - 0.5)
    lines = p.multi_line(
        xs="xs",
        ys="ys",
        source=source,
        line_width=2.6,
        line_color=transform("slot", mapper),
        line_dash="dash",
        line_alpha=0.95,
        hover_line_width=4.0,
        hover_line_color=transform("slot", mapper),
        hover_line_alpha=1.0,
    )
    p.add_layout(_legend(legend_name, lines), "below")
    p.add_tools(
        HoverTool(
            renderers=[lines],
            line_policy="interp",
            # one line with units, e.g. "pH 7.21, α = 0.500" or "pH 7.00, log c = -3.20 (mol/L)"
            tooltips=[("species", "@label"),
                      ("at", "pH $snap_x{0.00}, " + y_name + " = $snap_y{" + y_format + "}" + y_unit)],
        )
    )


def _marker(name: str) -> Span:
    return Span(
        name=name,
        location=7.0,
        dimension="height",
        line_color=_MARKER,
        line_dash=[6, 4],
        line_width=1.6,
    )


def distribution_plot() -> figure:
    """Alpha fraction [-] of each species against pH, with the table's pH marked."""
    p = _base_figure("fraction_fig", "fraction of total", Range1d(-0.02, 1.02, bounds=(-0.05, 1.05)))
    p.yaxis.ticker.desired_num_ticks = 6
    _species_lines(p, _empty_source("fraction_src"), "0.000", "α", "fraction_legend", " (fraction of total)")
    p.add_layout(_marker("fraction_marker"))
    return p


def log_concentration_plot() -> figure:
    """log10 of each species' concentration [log10(mol/L)] against pH."""
    p = _base_figure("logc_fig", "log₁₀ concentration (mol/L)", Range1d(-12, 0, name="logc_y"))
    _species_lines(p, _empty_source("logc_src"), "0.00", "log c", "logc_legend", " (mol/L)")
    p.add_layout(_marker("logc_marker"))
    return p


def titration_plot() -> figure:
    """pH [-] against titrant amount (mL or mg/L): one curve, equivalence points marked.

    Named models: ``titr_fig``, ``titr_src`` (columns ``x``, ``pH``, ``unit``: the unit of x, e.g.
    "mL", repeated per point for the tooltip), ``titr_eq_src``
    (columns ``x``, ``pH``, ``label``, ``unit``: equivalence and half-equivalence points),
    ``titr_xaxis`` (its ``axis_label`` names the amount and unit), ``titr_x`` (Range1d).
    """
    p = _base_figure("titr_fig", "pH", Range1d(0, 14, bounds=(-2, 16)))
    p.x_range = Range1d(0, 1, name="titr_x")
    p.xaxis.axis_label = "titrant added"
    p.xaxis.name = "titr_xaxis"
    p.xaxis.ticker.desired_num_ticks = 10
    p.yaxis.ticker.desired_num_ticks = 8
    p.tools = [t for t in p.tools if type(t).__name__ not in ("PanTool", "WheelZoomTool")]
    curve_src = ColumnDataSource(data={"x": [], "pH": [], "unit": []}, name="titr_src")
    points_src = ColumnDataSource(data={"x": [], "pH": [], "label": [], "unit": []}, name="titr_eq_src")
    curve = p.line("x", "pH", source=curve_src, line_width=2.6, line_color=PALETTE[0])
    marks = p.scatter("x", "pH", source=points_src, size=11, marker="diamond", fill_color=PALETTE[1],
                      line_color=_INK, line_width=1.0)
    # "12.30 mL, pH 8.30"
    p.add_tools(HoverTool(renderers=[curve], mode="vline",
                          tooltips=[("added", "@x{0.00} @unit, pH @pH{0.00}")]))
    p.add_tools(HoverTool(renderers=[marks], tooltips=[("point", "@label"),
                                                        ("added", "@x{0.00} @unit, pH @pH{0.00}")]))
    return p


def buffer_plot() -> figure:
    """Buffer intensity beta [mmol/(L pH)] against pH, with the water's pH marked.

    The beta axis is linear or logarithmic: the figure carries both, and the page shows one pair
    (line + axis + grid) at a time by their ``visible`` flags.

    Named models: ``buffer_fig``, ``buffer_src`` (columns ``pH``, ``beta``),
    ``buffer_marker`` (Span), ``buffer_y`` (Range1d, linear), ``buffer_line``, ``buffer_yaxis``,
    ``buffer_ygrid`` (the linear set); ``buffer_log_y`` (Range1d of the log scale, positive),
    ``buffer_log_line``, ``buffer_log_yaxis``, ``buffer_log_ygrid`` (the log set, hidden at first).
    """
    p = _base_figure("buffer_fig", "buffer intensity β (mmol/L per pH)", Range1d(0, 1, name="buffer_y"))
    p.yaxis.name = "buffer_yaxis"
    p.ygrid.name = "buffer_ygrid"
    p.extra_y_ranges = {"log": Range1d(1e-3, 10, name="buffer_log_y")}
    p.extra_y_scales = {"log": LogScale()}
    log_axis = LogAxis(y_range_name="log", name="buffer_log_yaxis", axis_label="buffer intensity β (mmol/L per pH, log scale)",
                       visible=False)
    for attr in ("axis_label_text_font", "axis_label_text_font_style", "axis_label_text_font_size",
                 "axis_label_text_color", "major_label_text_font", "major_label_text_font_size",
                 "major_label_text_color", "axis_line_color", "major_tick_line_color"):
        setattr(log_axis, attr, getattr(p.yaxis[0], attr))
    p.add_layout(log_axis, "left")
    p.add_layout(Grid(dimension=1, ticker=log_axis.ticker, y_range_name="log", name="buffer_log_ygrid",
                      grid_line_color=_GRID, visible=False))
    src = ColumnDataSource(data={"pH": [], "beta": []}, name="buffer_src")
    line = p.line("pH", "beta", source=src, line_width=2.6, line_color=PALETTE[5], name="buffer_line")
    log_line = p.line("pH", "beta", source=src, line_width=2.6, line_color=PALETTE[5], y_range_name="log",
                      name="buffer_log_line", visible=False)
    # "pH 7.00, β = 0.520 mmol/(L·pH)"
    p.add_tools(HoverTool(renderers=[line, log_line], mode="vline",
                          tooltips=[("at", "pH @pH{0.00}, β = @beta{0.000} mmol/(L·pH)")]))
    p.add_layout(_marker("buffer_marker"))
    return p


#: Modules beside this one holding the plots of one job each (scale and corrosion, softening, lead
#: and copper, hardness titration...). Each has ``TEMPLATES``: template name -> function returning
#: a figure; it may reuse the helpers above (``_base_figure``, ``_empty_source``, ``PALETTE``).
JOB_PLOT_MODULES: tuple[str, ...] = ("plot_lead", "plot_scale")


def templates() -> dict:
    """Every plot as a ``json_item`` dict, keyed by the name plot.js looks up."""
    out = {
        "distribution": json_item(distribution_plot()),
        "log_concentration": json_item(log_concentration_plot()),
        "titration": json_item(titration_plot()),
        "buffer": json_item(buffer_plot()),
        "palette": list(PALETTE),
        "layout": {"base_height_px": BASE_HEIGHT_PX, "legend_row_px": LEGEND_ROW_PX},
    }
    for module_name in JOB_PLOT_MODULES:
        module = importlib.import_module(module_name)
        for key, make in module.TEMPLATES.items():
            if key in out:
                raise ValueError(f"plot template {key!r} of {module_name} is defined twice")
            out[key] = json_item(make())
    return out


if __name__ == "__main__":  # quick look: python build_scripts/plots.py > plots.json
    import json
    import sys

    json.dump(templates(), sys.stdout)
