"""Bokeh templates of the "Scale and corrosion" job (see plots.py).

Each function lays out one plot; ``site/plot.js`` embeds it and replaces the data of its
NAMED models only. The names are the contract with plot.js:

===========================  ============================================================
model name                   what the page puts in it
===========================  ============================================================
``scale_si_fig``             figure: saturation index (LSI) against pH
``scale_si_x``, ``scale_si_y``  Range1d of its axes
``scale_si_src``             ColumnDataSource: ``pH``, ``LSI``, ``low``, ``high`` (the
                             uncertainty band; NaN leaves a gap)
``scale_si_water_src``       (scatter): ``pH``, ``LSI``, ``label``: the water itself
``scale_ccpp_fig``           figure: CCPP [mg/L as CaCO3] against temperature [°C]
``scale_ccpp_x``, ``scale_ccpp_y``  Range1d of its axes
``scale_ccpp_src``           ColumnDataSource: ``t``, ``ccpp``, ``low``, ``high``
``scale_ccpp_pts_src``       (scatter): ``t``, ``ccpp``, ``label``: the water's own
                             temperature and the temperatures the user chose
===========================  ============================================================

A dotted line marks zero on both plots: above it calcium carbonate can deposit, below it the
water dissolves it. Colours are Acidscape's own pick from plots.PALETTE.
"""

from __future__ import annotations

from bokeh.models import ColumnDataSource, HoverTool, Label, Range1d, Span

from plots import _INK, _MARKER, _FONT, PALETTE, _base_figure

LINE = PALETTE[0]   # deep teal
BAND = PALETTE[9]   # cyan, translucent
POINT = PALETTE[1]  # amber


def _zero(p, above: str, below: str) -> None:
    """A dotted line at zero, named above and below at the left edge of the frame."""
    p.add_layout(Span(location=0.0, dimension="width", line_color=_MARKER, line_dash=[2, 3], line_width=1.4))
    for text, y_offset, baseline in ((above, 4, "bottom"), (below, -4, "top")):
        p.add_layout(Label(x=8, x_units="screen", y=0.0, text=text, text_font=_FONT, text_font_size="11px",
                           text_color=_MARKER, y_offset=y_offset, text_baseline=baseline))


def _strip_pan(p) -> None:
    p.tools = [t for t in p.tools if type(t).__name__ not in ("PanTool", "WheelZoomTool")]


def saturation_plot():
    """Calcite saturation index (LSI) against pH, band of the usual uncertainties, the water marked."""
    p = _base_figure("scale_si_fig", "saturation index of calcite (LSI)", Range1d(-2, 2, name="scale_si_y"))
    p.x_range = Range1d(6, 10.5, name="scale_si_x")
    p.xaxis.axis_label = "pH (calcium and DIC kept)"
    p.xaxis.ticker.desired_num_ticks = 10
    _strip_pan(p)
    src = ColumnDataSource(data={"pH": [], "LSI": [], "low": [], "high": []}, name="scale_si_src")
    p.varea("pH", "low", "high", source=src, fill_color=BAND, fill_alpha=0.22)
    line = p.line("pH", "LSI", source=src, line_width=2.6, line_color=LINE)
    water = ColumnDataSource(data={"pH": [], "LSI": [], "label": []}, name="scale_si_water_src")
    dot = p.scatter("pH", "LSI", source=water, size=11, marker="diamond", fill_color=POINT, line_color=_INK,
                    line_width=1.0)
    _zero(p, "deposits calcium carbonate", "dissolves calcium carbonate")
    p.add_tools(HoverTool(renderers=[line], mode="vline",
                          tooltips=[("pH", "@pH{0.00}"), ("LSI", "@LSI{+0.00}"), ("range", "@low{+0.00} to @high{+0.00}")]))
    p.add_tools(HoverTool(renderers=[dot], tooltips=[("", "@label"), ("pH", "@pH{0.00}"), ("LSI", "@LSI{+0.00}")]))
    return p


def ccpp_plot():
    """CCPP [mg/L as CaCO3] of the closed water against temperature, band, chosen temperatures marked."""
    p = _base_figure("scale_ccpp_fig", "CCPP (mg/L as CaCO₃)", Range1d(-10, 10, name="scale_ccpp_y"))
    p.x_range = Range1d(0, 100, name="scale_ccpp_x")
    p.xaxis.axis_label = "temperature (°C), closed water"
    p.xaxis.ticker.desired_num_ticks = 10
    _strip_pan(p)
    src = ColumnDataSource(data={"t": [], "ccpp": [], "low": [], "high": []}, name="scale_ccpp_src")
    p.varea("t", "low", "high", source=src, fill_color=BAND, fill_alpha=0.22)
    line = p.line("t", "ccpp", source=src, line_width=2.6, line_color=LINE)
    pts = ColumnDataSource(data={"t": [], "ccpp": [], "label": []}, name="scale_ccpp_pts_src")
    dots = p.scatter("t", "ccpp", source=pts, size=11, marker="diamond", fill_color=POINT, line_color=_INK,
                     line_width=1.0)
    _zero(p, "can deposit", "would dissolve")
    p.add_tools(HoverTool(renderers=[line], mode="vline",
                          tooltips=[("°C", "@t{0.0}"), ("CCPP", "@ccpp{+0.0} mg/L as CaCO₃"),
                                    ("range", "@low{+0.0} to @high{+0.0}")]))
    p.add_tools(HoverTool(renderers=[dots], tooltips=[("", "@label"), ("°C", "@t{0.0}"),
                                                      ("CCPP", "@ccpp{+0.0} mg/L as CaCO₃")]))
    return p


#: Template name -> function (plots.JOB_PLOT_MODULES registers this module).
TEMPLATES = {
    "scale_saturation": saturation_plot,
    "scale_ccpp": ccpp_plot,
}
