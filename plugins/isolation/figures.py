"""isolation's figures and table: transmissibility against frequency ratio, efficiency
against static deflection (the selection chart), and the mount table."""

from __future__ import annotations

import math

import numpy as np
from reportgen_plugins.mechanics import amplification_text, frequency_from_deflection, ratio_grid
from reportgen_plugins.mechanics import series_values as _r

from reportgen import Figure, Marker, Panel, Series, Table
from reportgen.units import STANDARD_GRAVITY, axis_unit, format_number

from .method import COMPARISON_DAMPING, SQRT2, MountRow, transmissibility


def transmissibility_chart(r_op: float, t_op: float, zeta: float, t_req: float,
                           r_req: float) -> Figure:
    r_hi = max(10.0, 1.5 * r_op, 1.5 * r_req)
    r = ratio_grid(r_hi)
    series = [Series(x=_r(r), y=_r(transmissibility(r, zeta)),
                     label=f"ζ = {format_number(zeta, 3)} (stated)", emphasis=True)]
    for z in COMPARISON_DAMPING:
        if not math.isclose(z, zeta, rel_tol=1e-9):
            series.append(Series(x=_r(r), y=_r(transmissibility(r, z)),
                                 label=f"ζ = {format_number(z, 3)}", style="dashed"))
    lo = min(1e-2, t_op / 3.0, t_req / 3.0)
    return Figure(
        key="transmissibility",
        caption="Transmissibility against frequency ratio for the stated and typical"
                f" damping ratios; operating point r = {format_number(r_op, 4)},"
                f" T = {format_number(t_op, 4)}",
        alt="Log-log plot of transmissibility against frequency ratio; the curves cross"
            " T = 1 at r = √2 and the operating point is marked",
        x_label="Frequency ratio r = f/f_n", x_scale="log",
        x_range=(min(0.1, r_op / 1.5), r_hi),  # the operating point stays inside
        panels=(Panel(series=tuple(series), y_label="Transmissibility T", y_scale="log",
                      y_range=(lo, max(100.0, 3.0 * t_op)),  # the point stays inside
                      hlines=((t_req, "target T_req"),),
                      markers=(Marker(x=SQRT2, label="r = √2"),
                               Marker(x=r_op, y=t_op, label="operating point"))),))


def selection_chart(f: float, zeta: float, d_op: float, eta_op: float, d_req: float,
                    eta_min: float, display: str, ratio: float = 1.0) -> Figure:
    g = STANDARD_GRAVITY * ratio  # an elastomer's f_n = √(κ_d·g/δ_st)/2π
    scale, unit = axis_unit(display, "length")  # the package's length unit
    d_sqrt2 = 2.0 * g / (2 * math.pi * f) ** 2  # deflection at r = √2
    d_lo = max(min(0.8 * d_sqrt2, 0.8 * d_op), 1e-5)  # the selected point inside the axes
    d_hi = max(0.1, 2.5 * d_op, 2.5 * d_req)
    d = np.geomspace(d_lo, d_hi, 160)
    r = f / frequency_from_deflection(d / ratio)
    eff = 100.0 * (1.0 - transmissibility(r, zeta))
    series = [Series(x=_r(d * scale), y=_r(eff), label=f"ζ = {format_number(zeta, 3)}"
                     " (stated)", emphasis=True)]
    if zeta != 0:
        series.append(Series(x=_r(d * scale), y=_r(100.0 * (1.0 - transmissibility(r, 0.0))),
                             label="ζ = 0", style="dashed"))
    # where the mounts amplify (η < 0) the axis goes below zero to show the point
    y_lo = 50.0 if eta_op >= 0.6 else min(0.0, 10.0 * math.floor(eta_op * 10.0 - 0.5))
    markers = [Marker(x=d_op * scale, y=eta_op * 100, label="selected"),
               Marker(x=d_req * scale, label="required")]  # a line: labels never collide
    return Figure(
        key="selection-chart",
        caption=f"Isolation efficiency against static deflection at"
                f" {format_number(f * 60, 4)} rpm ({format_number(f, 4)} Hz): selected"
                f" {format_number(d_op * scale, 3)} {unit},"
                + (f" η = {format_number(eta_op * 100, 3)} %;" if eta_op >= 0 else
                   f" {amplification_text(1.0 - eta_op)};")  # a negative η is no isolation
                + f" required at least {format_number(d_req * scale, 3)} {unit} for"
                f" {format_number(eta_min * 100, 3)} %",
        alt="Isolation efficiency in percent against static deflection,"
            " rising with deflection; the target line and the selected point are marked",
        x_label=f"Static deflection δ_st [{unit}]", x_scale="log",
        x_range=(d_lo * scale, d_hi * scale),
        panels=(Panel(series=tuple(series), y_label="Isolation efficiency η [%]",
                      y_range=(y_lo, 100.0),
                      hlines=((eta_min * 100, f"target {format_number(eta_min * 100, 3)} %"),),
                      markers=tuple(markers)),))


def mount_table(rows: tuple[MountRow, ...], positions, count: int, display: str) -> Table:
    """The mount table: one row for equal mounts (``positions`` None), else one per mount."""
    def cell(value: float, dimension: str, digits: int = 4) -> str:
        return format_number(value * axis_unit(display, dimension)[0], digits)

    def unit(dimension: str) -> str:
        return axis_unit(display, dimension)[1]

    header = ("Mount", f"x [{unit('length')}]", f"y [{unit('length')}]",
              f"Load [{unit('force')}]", "Share [%]", f"Deflection [{unit('length')}]",
              "Natural frequency [Hz]", f"Stiffness for target [{unit('stiffness')}]")
    if positions is None:
        places = [(f"1–{count} (each)" if count > 1 else "1", "—", "—")]
    else:
        places = [(str(i), cell(x, "length"), cell(y, "length"))
                  for i, (x, y) in enumerate(positions, start=1)]
    body = tuple((*place, cell(row.load, "force"), format_number(row.share, 4),
                  cell(row.deflection, "length"), format_number(row.natural_frequency, 4),
                  cell(row.stiffness_for_target, "stiffness"))
                 for place, row in zip(places, rows, strict=True))
    return Table(title="Mount loads, static deflections and natural frequencies",
                 header=header, rows=body)
