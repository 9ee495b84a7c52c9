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


def _band_plot(key: str, y_label: str, y_range: tuple[float, float], x_range: tuple[float, float], x_label: str,
               x: str, y: str, points_src: str, above: str, below: str, line_tips: list, dot_tips: list):
    """A curve with its uncertainty band (source ``scale_<key>_src``: x, y, low, high), points
    marked as diamonds (source ``points_src``: x, y, label) and a named zero line; pan and wheel
    zoom removed."""
    p = _base_figure(f"scale_{key}_fig", y_label, Range1d(*y_range, name=f"scale_{key}_y"))
    p.x_range = Range1d(*x_range, name=f"scale_{key}_x")
    p.xaxis.axis_label = x_label
    p.xaxis.ticker.desired_num_ticks = 10
    _strip_pan(p)
    src = ColumnDataSource(data={x: [], y: [], "low": [], "high": []}, name=f"scale_{key}_src")
    p.varea(x, "low", "high", source=src, fill_color=BAND, fill_alpha=0.22)
    line = p.line(x, y, source=src, line_width=2.6, line_color=LINE)
    pts = ColumnDataSource(data={x: [], y: [], "label": []}, name=points_src)
    dots = p.scatter(x, y, source=pts, size=11, marker="diamond", fill_color=POINT, line_color=_INK,
                     line_width=1.0)
    _zero(p, above, below)
    p.add_tools(HoverTool(renderers=[line], mode="vline", tooltips=line_tips))
    p.add_tools(HoverTool(renderers=[dots], tooltips=dot_tips))
    return p


def saturation_plot():
    """Calcite saturation index (LSI) against pH, band of the usual uncertainties, the water marked."""
    return _band_plot("si", "saturation index of calcite (LSI)", (-2, 2), (6, 10.5), "pH (calcium and DIC kept)",
                      "pH", "LSI", "scale_si_water_src", "deposits calcium carbonate", "dissolves calcium carbonate",
                      [("pH", "@pH{0.00}"), ("LSI", "@LSI{+0.00}"), ("range", "@low{+0.00} to @high{+0.00}")],
                      [("", "@label"), ("pH", "@pH{0.00}"), ("LSI", "@LSI{+0.00}")])


def ccpp_plot():
    """CCPP [mg/L as CaCO3] of the closed water against temperature, band, chosen temperatures marked."""
    return _band_plot("ccpp", "CCPP (mg/L as CaCO₃)", (-10, 10), (0, 100), "temperature (°C), closed water",
                      "t", "ccpp", "scale_ccpp_pts_src", "can deposit", "would dissolve",
                      [("°C", "@t{0.0}"), ("CCPP", "@ccpp{+0.0} mg/L as CaCO₃"), ("range", "@low{+0.0} to @high{+0.0}")],
                      [("", "@label"), ("°C", "@t{0.0}"), ("CCPP", "@ccpp{+0.0} mg/L as CaCO₃")])


#: Template name -> function (plots.JOB_PLOT_MODULES registers this module).
TEMPLATES = {
    "scale_saturation": saturation_plot,
    "scale_ccpp": ccpp_plot,
}
