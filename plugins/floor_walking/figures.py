"""floor_walking's figures: the occupancy's tolerance against frequency with the floor's
point, and a plan of the bay with its effective widths."""

from __future__ import annotations

from reportgen_plugins.mechanics import series_values as _r

from reportgen import Band, Figure, Marker, Panel, Series
from reportgen.units import axis_unit, format_number

from .bay import BaySketch
from .method import LOW_FREQUENCY_LIMIT, LimitCurve


def limit_chart(curve: LimitCurve) -> Figure:
    """a0/g(f) in %g on log axes, the floor's a_p/g at f_n, the method's range shaded."""
    pct = [100.0 * v for v in curve.limit_ratio]
    series = [Series(x=_r(curve.frequency), y=_r(pct), label=curve.label, emphasis=True)]
    markers = []
    lo, hi = min(pct) / 3.0, max(pct) * 1.5
    if curve.point_frequency is not None and curve.point_ratio is not None:
        y = 100.0 * curve.point_ratio
        markers.append(Marker(x=curve.point_frequency, y=y, label="this floor"))
        lo, hi = min(lo, y / 2.0), max(hi, y * 2.0)
        series.append(Series(x=(curve.point_frequency,), y=(y,), style="points",
                             label=f"a_p/g = {format_number(y, 3)} %g at"
                                   f" {format_number(curve.point_frequency, 3)} Hz"))
    return Figure(
        key="walking-tolerance",
        caption="Tolerance of the occupancy (peak acceleration in %g) against frequency, with"
                " the floor's predicted peak acceleration at its natural frequency. The"
                f" walking method applies up to {format_number(LOW_FREQUENCY_LIMIT, 2)} Hz"
                f" (shaded). {curve.source}.",
        alt="Log-log plot of the acceleration tolerance against frequency, flat between 4 and"
            " 8 Hz, with the floor's point marked",
        x_label="Frequency f [Hz]", x_scale="log",
        x_range=(min(1.0, (curve.point_frequency or 1.0) / 1.5),  # the floor stays inside
                 max(80.0, (curve.point_frequency or 80.0) * 1.5)),
        panels=(Panel(series=tuple(series), y_label="Peak acceleration [%g]", y_scale="log",
                      y_range=(lo, hi), markers=tuple(markers),
                      bands=(Band(x_low=1.0, x_high=LOW_FREQUENCY_LIMIT,
                                  label="walking method range"),)),))


def bay_plan(sk: BaySketch, bay_position: str, display: str = "SI") -> Figure:
    """The bay in plan: girders, beams, the beam panel B_j and the girder panel B_g, in the
    package's length unit."""
    s, u = axis_unit(display, "length")

    def outline(points, label, style="line", emphasis=False) -> Series:
        return Series(x=_r([p[0] * s for p in points]), y=_r([p[1] * s for p in points]),
                      label=label, style=style, emphasis=emphasis)

    def ln(value: float) -> str:
        return f"{format_number(value * s, 3)} {u}"

    top = sk.bay[2][1] * s
    series = [outline(sk.bay, "bay: girders along x at y = 0 and y = L_j")]
    for i, x in enumerate(sk.beam_lines):
        series.append(Series(x=(x * s, x * s), y=(0.0, top), style="dotted",
                             label="beams" if i == 0 else ""))
    series.append(outline(sk.beam_panel, f"beam panel B_j = {ln(sk.beam_panel_width)}",
                          style="dashed", emphasis=True))
    series.append(outline(sk.girder_panel, f"girder panel B_g = {ln(sk.girder_panel_width)}",
                          style="dashed"))
    edge = (f"; free edge at x = {ln(sk.free_edge_x)}" if sk.free_edge_x is not None else "")
    return Figure(
        key="bay-plan",
        caption=f"Plan of the {bay_position} bay: beams (dotted) span along y between the"
                " girders; the effective widths of the beam panel and of the girder panel"
                f" (dashed){edge}. Axes not to the same scale.",
        alt="Plan of the bay with the beam and girder panels drawn as rectangles",
        x_label=f"x, along the girders [{u}]",
        panels=(Panel(series=tuple(series), y_label=f"y, along the beams [{u}]"),))
