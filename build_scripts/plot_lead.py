"""Bokeh templates of the "Lead and copper" and "Hardness titration" jobs (see plots.py).

Each function lays out one plot; ``site/plot.js`` embeds it and replaces the data of its
NAMED models only. The names are the contract with plot.js:

===========================  ============================================================
model name                   what the page puts in it
===========================  ============================================================
``lead_fig``                 figure: dissolved metal [ug/L] on a log axis
``lead_x``, ``lead_y``       Range1d of the x axis (pH, DIC or orthophosphate) and y axis
``lead_xaxis``               LinearAxis: ``axis_label`` names the x quantity and unit
``lead_line_src``            ColumnDataSource (multi_line): ``xs``, ``ys`` (one list per
                             segment controlled by one solid), ``metal`` ("lead" |
                             "copper": the colour), ``label`` (legend text), ``solid``
``lead_band_src``            (patches): ``xs``, ``ys`` polygons of the band from the
                             constants' published spread, ``metal``, ``label``
``lead_seg_src``             (text): ``x``, ``y``, ``text`` (the controlling solid's name at
                             the middle of its segment), ``metal``
``lead_switch_src``          (scatter): ``x``, ``y``, ``metal``: where the solid changes
``lead_marker``              Span: ``location`` = the water's pH (or the fixed axis value)
``edta_fig``                 figure: pM against EDTA added [mL]
``edta_x``, ``edta_y``       Range1d of its axes
``edta_src``                 (multi_line): ``xs``, ``ys``, ``metal`` ("calcium" |
                             "magnesium"), ``label``
``edta_ep_src``              (scatter): ``x``, ``y``, ``label``: the end points
``edtacond_fig``             figure: log10 K' against pH
``edtacond_y``               Range1d of its y axis
``edtacond_src``             (multi_line): ``xs``, ``ys``, ``metal``, ``label``
``edtacond_marker``          Span: ``location`` = the buffer pH of the titration
===========================  ============================================================

The hue of each metal is Acidscape's own pick from plots.PALETTE. The horizontal guide of
the conditional-constant plot sits at log K' = 8, the usual rule for a sharp end point
when titrating about 0.01 mol/L (log C K' >= 6; common practice, Harris, Quantitative
Chemical Analysis, EDTA chapter, from memory).
"""

from __future__ import annotations

from bokeh.models import (
    ColumnDataSource,
    HoverTool,
    Label,
    LinearAxis,
    Range1d,
    Span,
)
from bokeh.plotting import figure
from bokeh.core.property.vectorization import value
from bokeh.transform import factor_cmap

from plots import (_FONT, _GRID, _INK, _MARKER, BASE_HEIGHT_PX, LEGEND_ROW_PX, PALETTE, _base_figure, _legend,
                   _marker, _style_axes)

#: Metal -> line colour (plots.PALETTE: violet lead, amber copper, teal calcium, raspberry magnesium).
METAL_COLOURS = {"lead": PALETTE[2], "copper": PALETTE[1], "calcium": PALETTE[0], "magnesium": PALETTE[4]}


def _cmap(field: str, metals: tuple[str, ...]):
    return factor_cmap(field, palette=[METAL_COLOURS[m] for m in metals], factors=list(metals))


def lead_solubility_plot():
    """Dissolved lead and copper [ug/L, log axis] against pH, DIC or orthophosphate.

    One line per stretch controlled by one solid (named at its middle), the band of the
    constants' published spread behind each metal, dots where the controlling solid changes.
    """
    p = figure(
        name="lead_fig",
        height=BASE_HEIGHT_PX + 2 * LEGEND_ROW_PX,
        sizing_mode="stretch_width",
        x_range=Range1d(6.5, 10.5, name="lead_x"),
        y_range=Range1d(0.01, 1000, name="lead_y"),
        y_axis_type="log",
        x_axis_type=None,
        y_axis_label="dissolved metal (µg/L, log scale)",
        tools="box_zoom,reset,save",
        toolbar_location="right",
        background_fill_color="#ffffff",
        border_fill_color="#ffffff",
        outline_line_color=None,
        min_border_left=56,
    )
    p.toolbar.logo = None
    p.toolbar.autohide = True
    p.add_layout(LinearAxis(name="lead_xaxis", axis_label="pH"), "below")
    p.xaxis.ticker.desired_num_ticks = 10
    _style_axes(p)
    p.yaxis.minor_tick_line_color = None
    p.grid.grid_line_color = _GRID
    metals = ("lead", "copper")
    band = ColumnDataSource(data={"xs": [], "ys": [], "metal": [], "label": []}, name="lead_band_src")
    p.patches("xs", "ys", source=band, fill_color=_cmap("metal", metals), fill_alpha=0.16, line_alpha=0.0)
    lines_src = ColumnDataSource(data={"xs": [], "ys": [], "metal": [], "label": [], "solid": []}, name="lead_line_src")
    lines = p.multi_line("xs", "ys", source=lines_src, line_width=2.8, line_color=_cmap("metal", metals),
                         line_alpha=0.95, hover_line_width=4.2, hover_line_color=_cmap("metal", metals))
    switch = ColumnDataSource(data={"x": [], "y": [], "metal": []}, name="lead_switch_src")
    p.scatter("x", "y", source=switch, size=8, marker="circle", fill_color="#ffffff",
              line_color=_cmap("metal", metals), line_width=2.0)
    seg = ColumnDataSource(data={"x": [], "y": [], "text": [], "metal": []}, name="lead_seg_src")
    p.text("x", "y", text="text", source=seg, text_font=value(_FONT), text_font_size="11px", text_align="center",
           text_baseline="bottom", y_offset=-5, text_color=_cmap("metal", metals))
    p.add_layout(_legend("lead_legend", lines), "below")
    p.add_layout(_marker("lead_marker"))
    p.add_tools(HoverTool(renderers=[lines], line_policy="interp",
                          tooltips=[("metal", "@label"), ("controlling solid", "@solid"), ("x", "$snap_x{0.00}"),
                                    ("µg/L", "$snap_y{0.000}")]))
    return p


def edta_titration_plot():
    """pM = -log10 [M] of calcium and magnesium against EDTA added [mL], end points marked."""
    p = _base_figure("edta_fig", "pM (−log₁₀ free metal, mol/L)", Range1d(0, 12, name="edta_y"))
    p.x_range = Range1d(0, 1, name="edta_x")
    p.xaxis.axis_label = "EDTA added (mL)"
    p.xaxis.ticker.desired_num_ticks = 10
    p.tools = [t for t in p.tools if type(t).__name__ not in ("PanTool", "WheelZoomTool")]
    metals = ("calcium", "magnesium")
    src = ColumnDataSource(data={"xs": [], "ys": [], "metal": [], "label": []}, name="edta_src")
    lines = p.multi_line("xs", "ys", source=src, line_width=2.6, line_color=_cmap("metal", metals),
                         hover_line_width=4.0, hover_line_color=_cmap("metal", metals))
    ep = ColumnDataSource(data={"x": [], "y": [], "label": []}, name="edta_ep_src")
    marks = p.scatter("x", "y", source=ep, size=11, marker="diamond", fill_color=PALETTE[1], line_color=_INK,
                      line_width=1.0)
    p.add_layout(_legend("edta_legend", lines), "below")
    p.add_tools(HoverTool(renderers=[lines], line_policy="interp",
                          tooltips=[("metal", "@label"), ("EDTA (mL)", "$snap_x{0.000}"), ("pM", "$snap_y{0.00}")]))
    p.add_tools(HoverTool(renderers=[marks], tooltips=[("end point", "@label"), ("EDTA (mL)", "@x{0.000}"),
                                                       ("pM", "@y{0.00}")]))
    return p


def edta_conditional_plot():
    """log10 K' of the calcium and magnesium EDTA complexes against pH, the buffer pH marked."""
    p = _base_figure("edtacond_fig", "log₁₀ K′ (conditional)", Range1d(0, 12, name="edtacond_y"))
    p.x_range = Range1d(6, 13, bounds=(0, 14))
    p.xaxis.ticker.desired_num_ticks = 8
    metals = ("calcium", "magnesium")
    src = ColumnDataSource(data={"xs": [], "ys": [], "metal": [], "label": []}, name="edtacond_src")
    lines = p.multi_line("xs", "ys", source=src, line_width=2.6, line_color=_cmap("metal", metals),
                         hover_line_width=4.0, hover_line_color=_cmap("metal", metals))
    p.add_layout(_legend("edtacond_legend", lines), "below")
    p.add_layout(_marker("edtacond_marker"))
    p.add_layout(Span(location=8.0, dimension="width", line_color=_MARKER, line_dash=[2, 3], line_width=1.4))
    p.add_layout(Label(x=6.1, y=8.0, text="sharp end point above about 8 (0.01 mol/L)", text_font=_FONT,
                       text_font_size="11px", text_color=_MARKER, y_offset=3))
    p.add_tools(HoverTool(renderers=[lines], line_policy="interp",
                          tooltips=[("metal", "@label"), ("pH", "$snap_x{0.00}"), ("log K′", "$snap_y{0.00}")]))
    return p


#: Template name -> function (plots.JOB_PLOT_MODULES registers this module).
TEMPLATES = {
    "lead_solubility": lead_solubility_plot,
    "edta_titration": edta_titration_plot,
    "edta_conditional": edta_conditional_plot,
}
