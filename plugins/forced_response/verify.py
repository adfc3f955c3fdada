"""forced_response's second method (numpy and scipy, never the method): transfer functions by
scipy.signal.freqresp, and the periodic steady state integrated by solve_ivp with shooting."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from reportgen import CalcContext, CalcOutput, VerificationRow


def second_method(ctx: CalcContext, output: CalcOutput, kind: str,
                  integrate: bool) -> list[VerificationRow]:
    """Rows for an excitation of ``kind`` ("force", "unbalance" or "support"); the time
    integration only where ``integrate`` (compute says so in a note otherwise)."""
    from scipy import signal

    p = ctx.inputs
    res = {r.key: r.quantity.value for r in output.results}
    m, k = p["mass"], p["stiffness"]
    c = res["damping_coefficient"] if "damping_coefficient" in res else p[
        "damping_coefficient"]
    w = 2 * math.pi * (p["speed"] if kind == "unbalance" else p["frequency"])
    fr = "scipy.signal.freqresp of "
    rows: list[VerificationRow] = []

    def row(key: str, value: float, method: str, tol: float, abs_tol: float = 0.0,
            unit: str = "dimensionless") -> None:
        rows.append(VerificationRow(quantity=key, closed_form=res[key],
                                    independent=float(value), tolerance=tol,
                                    abs_tolerance=abs_tol, unit=unit, method=method))

    h_disp = _freqresp(signal.lti([1.0], [m, c, k]), w)  # X/F
    # (cs + k)/(ms² + cs + k); undamped, the leading zero would make scipy warn
    h_spring = _freqresp(signal.lti([c, k] if c else [k], [m, c, k]), w)
    if kind == "support":
        y_amp = p.get("base_displacement") or p["base_acceleration"] / w**2
        h_rel = _freqresp(signal.lti([-m, 0.0, 0.0], [m, c, k]), w)  # Z/Y
        row("motion_transmissibility", abs(h_spring), fr + "(cs + k)/(ms² + cs + k)", 1e-6)
        row("phase_lag", _lag(h_spring), fr + "(cs + k)/(ms² + cs + k)", 1e-6, 1e-9,
            "angle")
        row("displacement_amplitude", abs(h_spring) * y_amp,
            fr + "(cs + k)/(ms² + cs + k) times Y", 1e-6, unit="length")
        row("relative_displacement", abs(h_rel) * y_amp, fr + "−ms²/(ms² + cs + k) times Y",
            1e-6, unit="length")
        row("transmitted_force", abs(complex(k, c * w) * h_rel) * y_amp,
            "|k + jωc|·|Z| from " + fr + "−ms²/(ms² + cs + k)", 1e-6, unit="force")
    else:
        f0 = p["force_amplitude"] if kind == "force" else _unbalance(p) * w**2
        row("dynamic_amplification", k * abs(h_disp), "k·|H(jω)|, " + fr
            + "H = 1/(ms² + cs + k)", 1e-6)
        row("phase_lag", _lag(h_disp), "−arg H(jω), " + fr + "1/(ms² + cs + k)", 1e-6,
            1e-9, "angle")
        row("displacement_amplitude", f0 * abs(h_disp), "F_0·|H(jω)|, " + fr
            + "1/(ms² + cs + k)", 1e-6, unit="length")
        row("transmitted_force", f0 * abs(h_spring), "F_0·|(cs + k)/(ms² + cs + k)|, "
            + fr + "that transfer function", 1e-6, unit="force")
    if not integrate:
        return rows
    sim = periodic_response(kind, p, m, c, k, w)
    ode = ("scipy.integrate.solve_ivp (DOP853) of the equation of motion over one forcing"
           " period from the periodic state (shooting: y(T) = y(0) with exp(A·T) of the"
           " state matrix); amplitude and phase fitted over that period")
    row("displacement_amplitude", sim["X"], ode, 1e-4, unit="length")
    row("velocity_amplitude", sim["V"], ode, 1e-4, unit="velocity")
    row("phase_lag", sim["phi"], ode, 1e-4, 1e-6, "angle")
    row("transmitted_force", sim["F_T"], ode, 1e-4, unit="force")
    if kind == "support":
        row("relative_displacement", sim["Z"], ode, 1e-4, unit="length")
    return rows


def _unbalance(p: Mapping[str, Any]) -> float:
    # the input as stated (U, or m_e and e): reading the job, not the method's formulas
    return p["unbalance"] if "unbalance" in p else p["unbalance_mass"] * p["eccentricity"]


def _freqresp(system: Any, w: float) -> complex:
    from scipy import signal

    _, h = signal.freqresp(system, w=[w])
    return complex(h[0])


def _lag(h: complex) -> float:
    """Phase lag −arg(h) in [0, π] (a lag of exactly π may come back as −π)."""
    lag = -math.atan2(h.imag, h.real)
    return lag + 2 * math.pi if lag < -1e-12 else max(lag, 0.0)


def periodic_response(kind: str, p: Mapping[str, Any], m: float, c: float, k: float,
                      w: float) -> dict[str, float]:
    """Integrate the equation of motion numerically over its periodic steady state.

    The state after one forcing period T is y(T) = Φ·y(0) + b, with Φ = exp(A·T) of the
    state matrix and b integrated from rest; solving y(T) = y(0) gives the periodic state
    without waiting for the transient to decay (and works undamped). One period from that
    state is then integrated and fitted.
    """
    from scipy.integrate import solve_ivp
    from scipy.linalg import expm

    period = 2 * math.pi / w
    if kind == "support":
        y_amp = p.get("base_displacement") or p["base_acceleration"] / w**2
        scale = y_amp

        def rhs(t, s):
            yb, vb = y_amp * math.cos(w * t), -y_amp * w * math.sin(w * t)
            return [s[1], -(c * (s[1] - vb) + k * (s[0] - yb)) / m]
    else:
        f0 = p["force_amplitude"] if kind == "force" else _unbalance(p) * w**2
        scale = f0 / max(k, m * w**2)

        def rhs(t, s):
            return [s[1], (f0 * math.cos(w * t) - c * s[1] - k * s[0]) / m]

    atol = [1e-12 * scale, 1e-12 * scale * w]

    def integrate(s0, t_eval=None):
        return solve_ivp(rhs, (0.0, period), s0, method="DOP853", rtol=1e-10, atol=atol,
                         t_eval=t_eval)

    b = integrate([0.0, 0.0]).y[:, -1]
    phi = expm(np.array([[0.0, 1.0], [-k / m, -c / m]]) * period)
    # Undamped at r = 1/n the free motion is T-periodic too and I − Φ is singular; solved
    # in scaled (dimensionless) states, the pseudo-inverse drops that free motion, which is
    # orthogonal to the fitted harmonic over the period anyway.
    d = np.array([1.0, math.sqrt(k / m)])
    lhs = (np.eye(2) - phi) * d[np.newaxis, :] / d[:, np.newaxis]
    s0 = d * (np.linalg.pinv(lhs, rcond=1e-9) @ (b / d))
    n = 128
    t_eval = period * np.arange(n) / n
    x, v = integrate(s0, t_eval).y
    cos, sin = np.cos(w * t_eval), np.sin(w * t_eval)

    def fit(sig):  # discrete Fourier coefficients over exactly one period
        a, bb = 2 / n * float(sig @ cos), 2 / n * float(sig @ sin)
        return math.hypot(a, bb), math.atan2(bb, a)

    amp_x, lag = fit(x)
    if lag < -math.pi / 2:  # a lag near π may come back as near −π
        lag += 2 * math.pi
    out = {"X": amp_x, "V": fit(v)[0], "phi": max(lag, 0.0)}
    if kind == "support":
        yb, vb = scale * cos, -scale * w * sin
        out["Z"] = fit(x - yb)[0]
        out["F_T"] = fit(k * (x - yb) + c * (v - vb))[0]
    else:
        out["F_T"] = fit(k * x + c * v)[0]
    return out
