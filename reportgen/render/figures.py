"""Draw a declarative :class:`~reportgen.model.Figure` to SVG with matplotlib.

Deterministic output: fixed hash salt, no date metadata, text kept as text.
"""

from __future__ import annotations

import io
from typing import Any

from reportgen.model import Figure

_STYLE = {"line": "-", "dashed": "--", "dotted": ":", "points": "none"}
_COLORS = ("#1f3b5c", "#b5651d", "#4f7f3a", "#7a3b69", "#5c5c5c", "#2f7d8c")


#: figure width on the page (inches): the text block's width
FIGURE_WIDTH_IN = 6.3


def figure_inches(fig: Figure) -> tuple[float, float]:
    """The drawing's size (width, height) in inches: 2.5 in for one panel, 1.4 in more
    for each further panel (in a grid: 2.1 in per row of small multiples). Known before
    drawing, so the layout can start without it."""
    if fig.columns > 1:
        return FIGURE_WIDTH_IN, 2.1 * -(-len(fig.panels) // fig.columns)
    return FIGURE_WIDTH_IN, 2.5 + 1.4 * (len(fig.panels) - 1)


def figure_points(fig: Figure) -> tuple[float, float]:
    w, h = figure_inches(fig)
    return w * 72.0, h * 72.0


def figure_svg(fig: Figure, display_units: str = "SI") -> bytes:
    import matplotlib.pyplot as plt

    f = draw(fig)
    try:
        buf = io.BytesIO()
        f.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    finally:
        plt.close(f)
    return buf.getvalue()


def text_overlaps(f: Any) -> list[tuple[str, str]]:
    """Pairs of visible texts of a drawn matplotlib figure whose extents overlap, and texts
    reaching outside the figure (paired with "figure edge")."""
    f.canvas.draw()
    renderer = f.canvas.get_renderer()
    page = f.bbox
    ticks = set()
    for ax in f.axes:
        for axis in (ax.xaxis, ax.yaxis):
            ticks.update(id(t.label1) for t in axis.get_major_ticks()
                         + axis.get_minor_ticks())
    drawn = set()  # the tick labels matplotlib draws: those inside the view interval
    for ax in f.axes:
        for axis in (ax.xaxis, ax.yaxis):
            drawn.update(id(t.label1) for t in axis._update_ticks() if t.label1.get_visible())
    boxes = []
    for t in f.findobj(lambda a: type(a).__name__ in ("Text", "Annotation")):
        if not t.get_visible() or not t.get_text().strip():
            continue
        if id(t) in ticks and id(t) not in drawn:
            continue
        bb = t.get_window_extent(renderer)
        if bb.width <= 0 or bb.height <= 0:
            continue
        boxes.append((t.get_text(), bb))
    out = []
    for i, (a, ba) in enumerate(boxes):
        if ba.x0 < page.x0 - 1 or ba.x1 > page.x1 + 1 or ba.y0 < page.y0 - 1 or (
                ba.y1 > page.y1 + 1):
            out.append((a, "figure edge"))
        for b, bb in boxes[i + 1:]:
            if ba.overlaps(bb) and ba.intersection(ba, bb).width > 1 and (
                    ba.intersection(ba, bb).height > 1):
                out.append((a, b))
    return out


def draw(fig: Figure) -> Any:
    """The figure drawn with matplotlib (the caller closes it)."""
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    matplotlib.rcParams.update({
        "svg.fonttype": "none", "svg.hashsalt": "reportgen", "font.family": "DejaVu Sans",
        "font.size": 8.5, "axes.linewidth": 0.6, "axes.grid": True, "grid.linewidth": 0.4,
        "grid.color": "#c8c8c8", "lines.linewidth": 1.3, "legend.fontsize": 7.5,
        "legend.frameon": False, "xtick.direction": "in", "ytick.direction": "in",
        "path.simplify": True, "xtick.major.pad": 7.0,
    })
    n, cols = len(fig.panels), max(1, fig.columns)
    grid = cols > 1
    f, axes = plt.subplots(-(-n // cols), cols, figsize=figure_inches(fig), sharex=not grid,
                           squeeze=False)
    try:
        for ax in axes.flat[n:]:
            ax.set_visible(False)
        for ax, panel in zip(axes.flat[:n], fig.panels, strict=True):
            colour = 0
            for band in panel.bands:
                ax.axvspan(band.x_low, band.x_high, color="#e8b4a0", alpha=0.35, lw=0,
                           label=band.label or None)
            for fill in panel.fills:
                ax.fill_between(fill.x, fill.low, fill.high, color="#9db4d0", alpha=0.45,
                                lw=0, label=fill.label or None)
            for s in panel.series:
                if s.emphasis:
                    c = _COLORS[0]
                else:
                    colour += 1
                    c = _COLORS[colour % len(_COLORS)]
                kw = dict(color=c, label=s.label or None)
                if s.style == "points":
                    ax.plot(s.x, s.y, marker="o", ms=3, ls="none", **kw)
                else:
                    ax.plot(s.x, s.y, ls=_STYLE[s.style], lw=1.6 if s.emphasis else 1.1, **kw)
            for value, label in panel.hlines:
                ax.axhline(value, color="#8b1a1a", lw=0.9, ls="-.", label=label or None)
            row = 0  # the labels of vertical lines, one row each: close lines never collide
            for mk in panel.markers:
                if mk.y is None:
                    ax.axvline(mk.x, color="#444444", lw=0.8, ls=":")
                    if mk.label:
                        ax.annotate(mk.label, (mk.x, 1.0), xycoords=("data", "axes fraction"),
                                    xytext=(2, -10 - 9 * row), textcoords="offset points",
                                    fontsize=7.5, color="#333333")
                        row += 1
                else:
                    ax.plot([mk.x], [mk.y], marker="D", ms=5, color="#8b1a1a", ls="none")
                    if mk.label:
                        ax.annotate(mk.label, (mk.x, mk.y), xytext=(5, 5),
                                    textcoords="offset points", fontsize=7.5, color="#8b1a1a")
            ax.set_yscale(panel.y_scale)
            ax.set_ylabel(panel.y_label)
            if panel.y_range:
                ax.set_ylim(*panel.y_range)
            if panel.equal_aspect:
                # fixed limits cannot move to keep the aspect: the box must (else
                # matplotlib drops the limits and logs a warning the user sees)
                fixed = grid or panel.y_range is not None or fig.x_range is not None
                ax.set_aspect("equal", adjustable="box" if fixed else "datalim")
            if panel.title:
                ax.set_title(panel.title, fontsize=6.5)
            if grid:
                ax.set_xscale(fig.x_scale)
                ax.set_xlabel(panel.x_label or fig.x_label)
            if ax.get_legend_handles_labels()[0]:  # only labelled artists get a legend
                ax.legend(loc="best", fontsize=6.5 if grid else None)
        last = axes[-1, 0]
        if not grid:
            last.set_xscale(fig.x_scale)
            if fig.x_range:
                last.set_xlim(*fig.x_range)
            last.set_xlabel(fig.x_label)
        f.tight_layout(pad=0.4)
    except BaseException:
        plt.close(f)
        raise
    return f
