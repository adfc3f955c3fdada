"""rigid_body_mounts' figures and tables: the plan of the mounts with their loads and the
centre of gravity, the six mode shapes in two views each, the natural frequencies against
the running speed and its orders, the mount table and the spring selection table."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np
from reportgen_plugins.mechanics import series_values as _r
from reportgen_plugins.mechanics.catalogue_sheet import selection_paragraph, selection_table

from reportgen import Band, Figure, Marker, Panel, Series, Sheet, Table
from reportgen.units import axis_unit, format_number

from . import text
from .analysis import Analysis
from .checks import springs
from .resolve import Resolved
from .response import forced_response
from .views import frequency_chart, mode_views, plan_view

#: Orders of the running speed marked on the frequency chart: 1 × (unbalance) and 2 ×
#: (misalignment, common practice).
ORDERS = (1.0, 2.0)


def _scale(dimension: str, display: str) -> tuple[float, str]:
    return axis_unit(display, dimension)


def plan(a: Analysis, display: str) -> Figure:
    pv = plan_view(a.model, a.static)
    ls, lu = _scale("length", display)
    fs, fu = _scale("force", display)
    outline = Series(x=_r(np.array([p[0] for p in pv.outline]) * ls),
                     y=_r(np.array([p[1] for p in pv.outline]) * ls),
                     label="support outline", style="dashed")
    marks = [Marker(x=x * ls, y=y * ls,
                    label=f"{i}: {format_number(p * fs, 3)} {fu}" + (" TENSION" if p < 0 else ""))
             for i, (x, y, p) in enumerate(zip(pv.mount_x, pv.mount_y, pv.loads, strict=True),
                                           start=1)]
    cg = Series(x=(pv.cg_x * ls,), y=(pv.cg_y * ls,), label="centre of gravity",
                style="points", emphasis=True)
    return Figure(
        key="mount-plan",
        caption=f"Plan of the mounts (numbered) with their static loads [{fu}] and the centre"
                " of gravity" + ("" if pv.cg_inside else
                                 "; the centre of gravity lies OUTSIDE the support outline"),
        alt="Plan view of the mount positions, each labelled with its number and static"
            " load, the support outline and the centre of gravity",
        x_label=f"x [{lu}]",
        panels=(Panel(series=(outline, cg), y_label=f"y [{lu}]", markers=tuple(marks),
                      equal_aspect=True, y_range=_padded(pv.mount_y + (pv.cg_y,), ls)),))


def _padded(values: tuple[float, ...], scale: float) -> tuple[float, float]:
    """A range around ``values`` with room above for the labels."""
    lo, hi = min(values) * scale, max(values) * scale
    pad = max(hi - lo, 1e-3 * scale) * 0.2
    return lo - pad, hi + pad


def _box(a: Analysis) -> np.ndarray:
    """Corners of the box the drawings show (8 × 3, m): the mounts' plan extent, from the
    mounts' lowest elastic centre to as far above the centre of gravity as that is below
    it (at least a tenth of the plan size)."""
    pos = np.array([[m.x, m.y, m.z] for m in a.model.mounts])
    lo, hi = pos.min(axis=0), pos.max(axis=0)
    zg = float(a.model.body.cg[2])
    size = max(float(np.ptp(pos[:, :2], axis=0).max()), 1e-3)
    z0 = min(float(lo[2]), zg - 0.05 * size)
    z1 = max(zg + (zg - z0), z0 + 0.1 * size)
    return np.array([[x, y, z] for z in (z0, z1) for y in (lo[1], hi[1]) for x in (lo[0], hi[0])])


#: Per view: the datum axes across and up the page, and the box's corners (indices into
#: _box) drawn as its outline in that view.
_VIEWS = {"plan": ((0, 1), (4, 5, 7, 6, 4)), "front": ((0, 2), (0, 1, 5, 4, 0)),
          "side": ((1, 2), (0, 2, 6, 4, 0))}


def _motion(phi: np.ndarray, points: np.ndarray, cg: np.ndarray) -> np.ndarray:
    """u = t + θ × r of body points in the mode φ."""
    return phi[:3] + np.cross(phi[3:], points - cg)


def modes(a: Analysis, display: str) -> Figure:
    ls, lu = _scale("length", display)
    box = _box(a)
    cg = np.asarray(a.model.body.cg, dtype=float)
    mounts = np.array([[m.x, m.y, m.z] for m in a.model.mounts])
    size = float(np.ptp(box, axis=0).max())
    panels = []
    for mv in mode_views(a.vibrating, a.modes):
        phi = np.asarray(a.modes.shapes[:, mv.mode - 1])
        span = max(float(np.abs(_motion(phi, box, cg)).max()), 1e-30)
        gain = 0.12 * size / span  # the point that moves most moves 12 % of the size
        for view in mv.views:
            (i, j), ring = _VIEWS[view]
            rest = box[list(ring)]
            disp = rest + gain * _motion(phi, rest, cg)
            feet = mounts + gain * _motion(phi, mounts, cg)
            names = "xyz"
            panels.append(Panel(
                series=(Series(x=_r(rest[:, i] * ls), y=_r(rest[:, j] * ls), style="dotted"),
                        Series(x=_r(disp[:, i] * ls), y=_r(disp[:, j] * ls), emphasis=True),
                        Series(x=_r(feet[:, i] * ls), y=_r(feet[:, j] * ls), style="points")),
                title=f"Mode {mv.mode}, {view}\n{format_number(mv.frequency, 3)} Hz",
                y_label=f"{names[j]} [{lu}]", x_label=f"{names[i]} [{lu}]",
                equal_aspect=True))
    return Figure(
        key="mode-shapes",
        caption="The six mode shapes, each in the two views that show the most motion"
                " (plan x–y, front x–z, side y–z): the equipment's outline at rest (dotted)"
                " and displaced in the mode (solid, exaggerated), the mounts as points",
        alt="Twelve small plots, two per mode, of the equipment's outline at rest and"
            " displaced in the mode",
        x_label="", panels=tuple(panels), columns=4)


def frequencies(a: Analysis, p: Mapping[str, Any], crit: Mapping[str, Any],
                display: str) -> Figure:
    f = a.modes.frequencies
    points = Series(x=_r(f), y=tuple(float(i) for i in range(1, 7)), style="points",
                    label="natural frequencies", emphasis=True)
    speed = p.get("running_speed")
    if not speed:
        return Figure(key="frequencies", caption="The six natural frequencies",
                      alt="The six natural frequencies as points, mode number against"
                          " frequency", x_label="Frequency [Hz]",
                      panels=(Panel(series=(points,), y_label="Mode", y_range=(0.5, 6.5)),))
    chart = frequency_chart(a.modes, speed, ORDERS, crit["min_frequency_ratio"])
    top = max(chart.orders[-1][1] * 1.15, float(f[-1]) * 1.2)
    markers = tuple(Marker(x=fo, label=f"{format_number(n, 2)}× running speed")
                    for n, fo in chart.orders)
    panels = [Panel(series=(points,), y_label="Mode", y_range=(0.5, 6.5), markers=markers,
                    bands=(Band(x_low=chart.limit, x_high=top,
                                label=f"above f_run/{format_number(chart.min_ratio, 4)}"),))]
    if a.excitations:
        grid = np.linspace(top / 200.0, top, 800)
        total = sum(forced_response(a.vibrating, a.modes, e, grid, a.damping_ratio).total_peak
                    for e in a.excitations)
        fs, fu = _scale("force", display)
        y = np.asarray(total) * fs
        panels.append(Panel(series=(Series(x=_r(grid), y=_r(np.maximum(y, 1e-30)),
                                           label="total force to the structure"),),
                            y_label=f"Total force [{fu}]", y_scale="log", markers=markers,
                            y_range=(float(y.max()) * 1e-3, float(y.max()) * 3.0)))
    return Figure(
        key="frequencies",
        caption=f"Natural frequencies against the running speed"
                f" {format_number(speed, 4)} Hz ({format_number(speed * 60, 4)} rpm) and its"
                f" orders; shaded: above the isolation limit"
                f" {format_number(chart.limit, 4)} Hz"
                + ("; below, the total force to the structure over frequency for the stated"
                   " excitation" if a.excitations else ""),
        alt="Mode number against natural frequency with the running speed's orders as"
            " vertical lines and the band above the isolation limit shaded",
        x_label="Frequency [Hz]", x_range=(0.0, top), panels=tuple(panels))


def all_figures(a: Analysis, p: Mapping[str, Any], crit: Mapping[str, Any],
                display: str) -> tuple[Figure, ...]:
    return plan(a, display), modes(a, display), frequencies(a, p, crit, display)


def mount_table(a: Analysis, units: str) -> Table:
    k = a.model.mount_stiffness
    forces = a.transmitted_force
    rows = []
    for i, m in enumerate(a.model.mounts):
        rows.append((str(i + 1), m.x, m.y, m.z, float(k[i, 0, 0]), float(k[i, 1, 1]),
                     float(k[i, 2, 2]), float(a.static.loads[i]),
                     float(a.static.deflections[i]), m.rated_load,
                     None if forces is None else float(forces[i])))
    return Table(title="Mounts: position, stiffness, static load and deflection, rated load"
                       " and dynamic force",
                 header=("Mount", "x", "y", "z", "k_x", "k_y", "k_z", "Static load",
                         "Deflection", "Rated load", "Dynamic force"),
                 units=("", "length", "length", "length", "stiffness", "stiffness",
                        "stiffness", "force", "length", "force", "force"),
                 rows=tuple(rows))


def limit_of(speed: float | None, crit: Mapping[str, Any]) -> float | None:
    return speed / crit["min_frequency_ratio"] if speed else None


def selection_table_into(s: Sheet, done: Resolved, a: Analysis, crit: Mapping[str, Any],
                         units: str) -> None:
    assert done.catalogue is not None
    need = text.required_deflection(done.required_deflection,
                                    limit_of(a.running_speed, crit),
                                    crit.get("min_static_deflection"), units)
    s.add(selection_paragraph(done.catalogue, need, done.rounds),
          selection_table(springs(a, done)))
