"""isolation's second method (numpy and scipy, never the method or the mechanics): transfer
functions, time integration or resolvent, Brent's root, numerical peak, rigid-base statics."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from reportgen import CalcContext, CalcOutput, VerificationRow
from reportgen.units import STANDARD_GRAVITY, format_number

#: Most oscillation cycles (of the forcing or of the free motion, whichever is faster) a
#: time integration may span: keeps the verification's cost bounded for any input scale.
MAX_CYCLES = 100


def second_method(ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
    from scipy import signal
    from scipy.optimize import minimize_scalar

    res = {row.key: row.quantity.value for row in output.results}
    p = ctx.inputs
    m, zeta, n = p["mass"], res["damping_ratio"], p["mounts"]
    # the vibration sees the dynamic stiffness (elastomers: κ_d × the static stiffness)
    ratio = float(p.get("dynamic_stiffness_ratio") or 1.0)
    k = res.get("dynamic_stiffness", res["stiffness"])
    c = 2.0 * zeta * math.sqrt(k * m)
    w = 2.0 * math.pi * res["forcing_frequency"]
    rows = []
    # base excitation: floor motion y to machine motion x, (cs + k)/(ms² + cs + k)

    def base(k_: float, c_: float, omega: float) -> float:
        return float(np.abs(signal.freqs([c_, k_], [m, c_, k_], worN=[omega])[1][0]))

    t_tf = base(k, c, w)
    rows.append(VerificationRow(
        quantity="transmissibility", closed_form=res["transmissibility"], independent=t_tf,
        tolerance=1e-9, method="scipy.signal.freqs of (c·s + k)/(m·s² + c·s + k),"
        " base excitation"))
    rows.append(VerificationRow(
        quantity="isolation_efficiency", closed_form=res["isolation_efficiency"],
        independent=1.0 - t_tf, tolerance=1e-9, abs_tolerance=1e-12,
        method="1 − |H(jω)| from the same transfer function"))
    # machine force to floor force, built as a state space from the equations of motion
    num, den = signal.ss2tf([[0.0, 1.0], [-k / m, -c / m]], [[0.0], [1.0 / m]],
                            [[k, c]], [[0.0]])
    t_ss = float(np.abs(signal.freqs(num[0], den, worN=[w])[1][0]))
    rows.append(VerificationRow(
        quantity="transmissibility (force)", closed_form=res["transmissibility"],
        independent=t_ss, tolerance=1e-9, method="state space of m·x'' + c·x' + k·x = F"
        " with output k·x + c·x' (force on the floor): scipy.signal.ss2tf, freqs"))
    r = w / math.sqrt(k / m)
    integrated = integrated_transmissibility(zeta, r)
    if integrated is not None:
        rows.append(VerificationRow(
            quantity="transmissibility (time integration)",
            closed_form=res["transmissibility"], independent=integrated, tolerance=1e-6,
            method="scipy.integrate.solve_ivp (DOP853) from rest under F = sin ωt, in"
            " dimensionless time τ = ω_n·t; the steady amplitude of k·x + c·x' separated"
            " from the start-up transient by least squares on the forcing harmonic and"
            " the free modes"))
    else:
        rows.append(VerificationRow(
            quantity="transmissibility (state-space resolvent)",
            closed_form=res["transmissibility"], independent=resolvent_transmissibility(
                zeta, r), tolerance=1e-9,
            method=f"time integration not run: at r = {format_number(r, 4)} it would"
            " span more than"f" {MAX_CYCLES} cycles; instead |C·(j·r·I − A)⁻¹·B| of the"
            " dimensionless state-space model (numpy.linalg.solve)"))
    # the required mounts: re-evaluate T at the root, and the root by the quadratic in r²
    t_target = 1.0 - ctx.criteria["min_efficiency"]
    k_req = res["required_stiffness_per_mount"] * n * ratio
    c_req = 2.0 * zeta * math.sqrt(k_req * m)
    rows.append(VerificationRow(
        quantity="T at the required stiffness", closed_form=t_target,
        independent=base(k_req, c_req, w), tolerance=1e-9,
        method="scipy.signal.freqs with k = n·k_m,req at the running speed"
               + (f", times κ_d = {format_number(ratio, 3)}" if ratio != 1.0 else "")))
    rows.append(VerificationRow(
        quantity="required_frequency_ratio", closed_form=res["required_frequency_ratio"],
        independent=root_of_transmissibility(t_target, zeta), tolerance=1e-9,
        method="scipy.optimize.brentq on T(r, ζ) − T_req for r > √2 (bracket by"
               " doubling, tolerance 1e-14)"))
    if zeta > 0:
        wn = math.sqrt(k / m)
        opt = minimize_scalar(lambda v: -base(k, c, v * wn),
                              bounds=(0.2, 1.5), method="bounded",
                              options={"xatol": 1e-10})
        rows.append(VerificationRow(
            quantity="peak_transmissibility", closed_form=res["peak_transmissibility"],
            independent=-float(opt.fun), tolerance=1e-8,
            method="scipy.optimize.minimize_scalar of −|H(jω)| over ω"))
    if "mount_positions" in p:
        rows.append(VerificationRow(
            quantity="load_per_mount", closed_form=res["load_per_mount"],
            independent=max(rigid_base_loads(p)), tolerance=1e-9, unit="force",
            method="numpy.linalg.solve of the rigid base's 3×3 stiffness matrix"
            " (heave and two tilts) under the weight at the centre of gravity"))
    return rows


def _textbook_transmissibility(r: float, zeta: float) -> float:
    """T(r, ζ) as the textbooks print it: only the residual of Brent's root below, whose
    check is of the root (found here by bracketing, in the method by the quadratic in r²)."""
    r = np.asarray(r, dtype=float)
    two_zr = (2.0 * zeta * r) ** 2
    return float(np.sqrt((1.0 + two_zr) / ((1.0 - r**2) ** 2 + two_zr)))


def root_of_transmissibility(target: float, zeta: float) -> float:
    """T(r, ζ) = target for r > √2, found numerically (Brent's method)."""
    from scipy.optimize import brentq

    sqrt2 = math.sqrt(2.0)
    lo, hi = sqrt2, 2.0 * sqrt2
    while _textbook_transmissibility(hi, zeta) > target:
        lo, hi = hi, 2.0 * hi
        if hi > 1e12:  # T >= 2ζ/r, so this only happens for absurd targets
            raise ValueError("no frequency ratio reaches the target transmissibility")
    return float(brentq(lambda r: _textbook_transmissibility(r, zeta) - target, lo, hi,
                        xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=200))


def _integration_cycles(zeta: float, r: float) -> float:
    """Cycles of the fastest motion over the integration span (12 forcing periods and at
    least 4 natural periods), in τ = ω_n·t: a function of ζ and r only."""
    return max(12.0 / r, 4.0) * max(r, 1.0, 2.0 * zeta)


def integrated_transmissibility(zeta: float, r: float) -> float | None:
    """|F_T|/F_0 in steady state from a time integration started at rest, or None when the
    span would exceed :data:`MAX_CYCLES` (r far from 1).

    Dimensionless: x = (F_0/k)·u and τ = ω_n·t give u'' + 2ζu' + u = sin(rτ), and the force
    on the floor k·x + c·x' is F_0·(u + 2ζu'), so the step count depends on ζ and r only.
    """
    from scipy.integrate import solve_ivp

    if _integration_cycles(zeta, r) > MAX_CYCLES:
        return None
    lam = np.linalg.eigvals(np.array([[0.0, 1.0], [-1.0, -2.0 * zeta]]))
    t_end = max(12 * 2 * math.pi / r, 4 * 2 * math.pi)
    npts = int(min(max(60 * t_end * max(r, 1.0) / (2 * math.pi), 2000), 20000))
    t = np.linspace(0.0, t_end, npts)
    sol = solve_ivp(lambda _t, y: [y[1], math.sin(r * _t) - 2.0 * zeta * y[1] - y[0]],
                    (0.0, t_end), [0.0, 0.0], method="DOP853", rtol=1e-10, atol=1e-13,
                    t_eval=t)
    if not sol.success or sol.y.shape[1] != len(t):
        return None
    x = sol.y[0]
    cols = [np.cos(r * t), np.sin(r * t)]
    if abs(lam[0].imag) > 1e-9:
        sigma, wd = lam[0].real, abs(lam[0].imag)
        cols += [np.exp(sigma * t) * np.cos(wd * t), np.exp(sigma * t) * np.sin(wd * t)]
    elif abs(lam[0] - lam[1]) > 1e-6:
        cols += [np.exp(lam[0].real * t), np.exp(lam[1].real * t)]
    else:
        cols += [np.exp(lam[0].real * t), t * np.exp(lam[0].real * t)]
    coef = np.linalg.lstsq(np.column_stack(cols), x, rcond=None)[0]
    amp_u = math.hypot(coef[0], coef[1])
    return amp_u * math.hypot(1.0, 2.0 * zeta * r)


def resolvent_transmissibility(zeta: float, r: float) -> float:
    """|C·(j·r·I − A)⁻¹·B| of u'' + 2ζu' + u = f with output u + 2ζu' (the floor force)."""
    a = np.array([[0.0, 1.0], [-1.0, -2.0 * zeta]], dtype=complex)
    b = np.array([0.0, 1.0], dtype=complex)
    state = np.linalg.solve(1j * r * np.eye(2) - a, b)
    return float(abs(state[0] + 2.0 * zeta * state[1]))


def rigid_base_loads(p: Mapping[str, Any]) -> list[float]:
    """Mount loads from the rigid base's stiffness matrix (unit mount stiffness)."""
    pts = np.asarray(p["mount_positions"], dtype=float)
    basis = np.column_stack([np.ones(len(pts)), pts[:, 0], pts[:, 1]])  # w, θ_y, θ_x
    kmat = basis.T @ basis
    wgt = p["mass"] * STANDARD_GRAVITY
    load = np.array([wgt, wgt * p["cg_x"], wgt * p["cg_y"]])
    return [float(v) for v in basis @ np.linalg.solve(kmat, load)]
