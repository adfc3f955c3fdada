"""forced_response's figures: the frequency response around the operating point and the
response over the stated speed range."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from reportgen_plugins.mechanics import resonance_grid
from reportgen_plugins.mechanics import series_values as _series

from reportgen import Band, Figure, Marker, Panel, Series
from reportgen.units import axis_unit

from .method import response

#: Uniform points of a response curve (a dense cluster around f_n comes on top).
PLOT_POINTS = 600


def _r(a) -> tuple[float, ...]:
    return _series(a, decimals=None)


def _axis(dimension: str, display: str) -> tuple[float, str]:
    """Factor from SI and unit label for a plotted quantity, in the package's display units
    (``display``: its key)."""
    return axis_unit(display, dimension)


def _log_range(y: tuple[float, ...], zeta: float, point: float) -> tuple[float, float] | None:
    vals = np.array([v for v in y if v > 0])
    if zeta >= 0.0025 or not len(vals):
        return None
    # undamped or nearly so: cap the peak so the rest of the curve stays readable, yet keep
    # the operating point inside the axes
    med = float(np.median(vals))
    lo, hi = float(vals.min()) * 0.5, med * 300
    if point > 0 and math.isfinite(point):
        lo, hi = min(lo, point / 2.0), max(hi, point * 2.0)
    return lo, hi


def _linear_range(y: tuple[float, ...], zeta: float,
                  hlines: tuple[tuple[float, str], ...]) -> tuple[float, float] | None:
    if zeta >= 0.0025:
        return None
    vals = np.sort(np.asarray(y))
    top = max(float(vals[int(0.9 * (len(vals) - 1))]) * 3,
              max((h for h, _ in hlines), default=0.0) * 1.5)
    return 0.0, top


def frequency_response(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float,
                       k: float, zeta: float, fn: float, f: float,
                       band: tuple[float, float], display: str) -> Figure:
    (lf, lu), (ff, fu) = _axis("length", display), _axis("force", display)
    rpm = kind == "unbalance"
    scale = 60.0 if rpm else 1.0
    x_hi = max(2.5 * fn, 1.5 * f, p["speed_range"][1] if "speed_range" in p else 0.0)
    x_lo = 0.25 * min(fn, f) if rpm else x_hi / 300
    freqs = resonance_grid(x_lo, x_hi, fn, zeta, PLOT_POINTS)
    resp = response(kind, p, given, m, k, zeta, freqs)
    op = response(kind, p, given, m, k, zeta, np.array([f]))
    xs = _r(freqs * scale)
    band_s = Band(x_low=max(band[0], 0.0) * scale, x_high=band[1] * scale,
                  label="resonance band")
    fn_mark = Marker(x=fn * scale, label="f_n")
    if kind == "support":
        mag_series = (Series(x=xs, y=_r(resp["T"]), label="X/Y, absolute motion",
                             emphasis=True),
                      Series(x=xs, y=_r(resp["Z"] / resp["Y"]), style="dashed",
                             label="Z/Y, relative motion"))
        mag_label, mag_op = "Motion ratio [-]", float(op["T"][0])
    else:
        mag_series = (Series(x=xs, y=_r(resp["X"] * lf), label="displacement X",
                             emphasis=True),)
        mag_label, mag_op = f"Displacement X [{lu}]", float(op["X"][0]) * lf
    phase_series = [Series(x=xs, y=_r(np.degrees(resp["phi"])), emphasis=True,
                           label="absolute motion" if kind == "support" else "")]
    if kind == "support":
        phase_series.append(Series(x=xs, y=_r(np.degrees(resp["phi_z"])), style="dashed",
                                   label="relative motion"))
    opx = f * scale
    panels = (
        Panel(series=mag_series, y_label=mag_label, y_scale="log", bands=(band_s,),
              markers=(fn_mark, Marker(x=opx, y=mag_op, label="operating point")),
              y_range=_log_range(mag_series[0].y, zeta, mag_op)),
        Panel(series=(Series(x=xs, y=_r(resp["F_T"] * ff), label="", emphasis=True),),
              y_label=f"Transmitted force F_T [{fu}]", y_scale="log", bands=(band_s,),
              markers=(fn_mark, Marker(x=opx, y=float(op["F_T"][0]) * ff)),
              y_range=_log_range(_r(resp["F_T"] * ff), zeta, float(op["F_T"][0]) * ff)),
        Panel(series=tuple(phase_series), y_label="Phase lag φ [°]",
              bands=(band_s,), markers=(fn_mark, Marker(
                  x=opx, y=float(np.degrees(op["phi"][0])))),
              y_range=(-5.0, 185.0)),
    )
    what = {"force": "an applied force of constant amplitude",
            "unbalance": "the rotating unbalance (force growing with the square of speed)",
            "support": ("a support displacement of constant amplitude"
                        if "base_displacement" in given else
                        "a support acceleration of constant amplitude")}[kind]
    return Figure(
        key="frequency-response",
        caption=f"Steady-state response to {what} against "
                + ("running speed" if rpm else "forcing frequency")
                + ", with the operating point and the resonance band f_n·(1 ± margin)",
        alt="Amplitude, transmitted force and phase lag against "
            + ("speed" if rpm else "frequency")
            + "; the amplitude peaks at the natural frequency inside the shaded band",
        x_label="Speed N [rpm]" if rpm else "Forcing frequency f [Hz]",
        panels=panels, x_range=(0.0, x_hi * scale))


def run_up(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float, k: float,
           zeta: float, fn: float, f: float, band: tuple[float, float],
           crit: Mapping[str, Any], display: str) -> Figure:
    low, high = p["speed_range"]
    freqs = resonance_grid(low, high, fn, zeta, PLOT_POINTS)
    resp = response(kind, p, given, m, k, zeta, freqs)
    xs = _r(freqs * 60)
    bands: tuple[Band, ...] = ()
    if band[1] > low and band[0] < high:
        bands = (Band(x_low=max(band[0], low) * 60, x_high=min(band[1], high) * 60,
                      label="resonance band"),)
    markers: tuple[Marker, ...] = ()
    if low <= f <= high:
        markers = (Marker(x=f * 60, label="operating speed"),)
    if low < fn < high:
        markers += (Marker(x=fn * 60, label="f_n"),)

    def panel(values, label, limit_key, factor):
        y = _r(values * factor)
        hl = ((crit[limit_key] * factor, "design limit"),) if limit_key in crit else ()
        return Panel(series=(Series(x=xs, y=y, emphasis=True),), y_label=label,
                     markers=markers, bands=bands, hlines=hl,
                     y_range=_linear_range(y, zeta, hl))

    (lf, lu), (vf, vu), (ff, fu) = (_axis(d, display) for d in ("length", "velocity", "force"))
    panels = (panel(resp["X"], f"Displacement X [{lu}]", "max_displacement", lf),
              panel(resp["V"], f"Velocity, peak [{vu}]", "max_velocity", vf),
              panel(resp["F_T"], f"Transmitted force F_T [{fu}]", "max_transmitted_force",
                    ff))
    held = {"force": "force amplitude held constant over the range",
            "unbalance": "unbalance force m_e·e·ω² growing with speed",
            "support": "support " + ("displacement" if "base_displacement" in given
                                     else "acceleration") + " amplitude held constant"}[kind]
    return Figure(
        key="run-up",
        caption=f"Steady-state response over the speed range ({held}), with the design"
                " limits where given",
        alt="Displacement, peak velocity and transmitted force against speed in rpm",
        x_label="Speed N [rpm]", panels=panels, x_range=(low * 60, high * 60))
