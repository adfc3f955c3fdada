"""free_vibration's figure: the time history from the initial conditions."""

from __future__ import annotations

from reportgen_plugins.mechanics import series_values as _r

from reportgen import Figure, Marker, Panel, Series
from reportgen.units import axis_unit

from .method import FreeResponse, history_times


def time_history(resp: FreeResponse, duration: float, fn: float, max_points: int,
                 display: str = "SI") -> Figure:
    t = history_times(duration, fn, max_points)
    x = resp.displacement(t)
    scale, unit = axis_unit(display, "length")  # the package's length unit: mm, µm, in, mil
    panel_series = [Series(x=_r(t), y=_r(x * scale), label="x(t)", emphasis=True)]
    env = resp.envelope(t)
    if env is not None:
        e = env * scale
        panel_series += [Series(x=_r(t), y=_r(e), label="decay envelope", style="dashed"),
                         Series(x=_r(t), y=_r(-e), label="", style="dashed")]
    return Figure(key="time-history", caption="Free response from the initial conditions",
                  alt="Displacement against time with the exponential decay envelope",
                  x_label="Time t [s]",
                  panels=(Panel(series=tuple(panel_series), y_label=f"Displacement x [{unit}]",
                                markers=(Marker(x=1 / fn, label="T_n"),)),))
