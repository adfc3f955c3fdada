"""free_vibration's second method (numpy and scipy, never the method): state-matrix eigenvalues,
the equation of motion integrated (or propagated by expm), peaks of the integrated response."""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from reportgen import CalcContext, CalcOutput, VerificationRow
from reportgen.units import format_number

#: Most natural periods (or decay times) a time integration may span; beyond it the
#: verification's cost would grow with the input's scale.
MAX_CYCLES = 100


def second_method(ctx: CalcContext, output: CalcOutput,
                  closed_form: Callable[[float, float, float, float],
                                        Callable[[np.ndarray], np.ndarray]],
                  duration: float) -> list[VerificationRow]:
    """Rows comparing the package's results, and the closed-form history ``closed_form(ω_n,
    ζ, x_0, v_0)`` over ``duration`` (the plotted span), with this module's routes."""
    from scipy.integrate import solve_ivp

    p = ctx.inputs
    m, k = p["mass"], p["stiffness"]
    res = {r.key: r.quantity.value for r in output.results}
    c = res["damping_coefficient"]
    zeta = res["damping_ratio"]
    rows = []
    # Eigenvalues of the state matrix: |λ| = ω_n, −Re λ/|λ| = ζ.
    lam = np.linalg.eigvals(np.array([[0.0, 1.0], [-k / m, -c / m]]))
    wn_eig = float(np.sqrt(abs(np.prod(lam))))  # λ1·λ2 = ω_n² in every regime
    rows.append(VerificationRow(
        quantity="natural_frequency", closed_form=res["natural_frequency"],
        independent=wn_eig / (2 * math.pi), tolerance=1e-9, unit="frequency",
        method="eigenvalues of the state matrix (numpy.linalg.eigvals)"))
    x0, v0 = p["initial_displacement"], p["initial_velocity"]
    note = ""
    if x0 == 0 and v0 == 0:
        x0, note = res["static_deflection"], " (from x_0 = δ_st, since the job starts at rest)"
    wn = res["angular_natural_frequency"]
    x_of_t = closed_form(wn, zeta, x0, v0)
    t_eval = np.linspace(0, duration, 801)
    x_num, how = numerical_history(t_eval, wn, zeta, x0, v0)
    closed = x_of_t(t_eval)
    scale = float(np.max(np.abs(closed)))
    for frac in (0.1, 0.5, 1.0):
        i = int(round(frac * (len(t_eval) - 1)))
        rows.append(VerificationRow(
            quantity=f"x(t) at t = {t_eval[i]:.4g} s", closed_form=float(closed[i]),
            independent=float(x_num[i]), tolerance=1e-6, abs_tolerance=1e-7 * scale,
            unit="length", method=how + note))
    if 0 < zeta < 0.5:
        # decay: logarithmic decrement from successive numerical peaks
        # in τ = ω_n·t, so the tolerances below do not depend on the inputs' scale
        td = 2 * math.pi / math.sqrt(1 - zeta**2)
        fine = solve_ivp(lambda t, y: [y[1], -2.0 * zeta * y[1] - y[0]], (0, 3.2 * td),
                         [1.0, 0.0], method="DOP853", rtol=1e-12, atol=1e-15,
                         dense_output=True)
        from scipy.optimize import brentq

        def vel(t):
            return fine.sol(t)[1]

        peaks = []
        for j in (1, 2):
            peaks.append(brentq(vel, (j - 0.25) * td, (j + 0.25) * td, xtol=1e-15))
        x1, x2 = fine.sol(peaks[0])[0], fine.sol(peaks[1])[0]
        rows.append(VerificationRow(
            quantity="logarithmic_decrement", closed_form=res["logarithmic_decrement"],
            independent=float(math.log(x1 / x2)), tolerance=1e-6,
            method="ln of two successive peaks of the integrated response"))
        rows.append(VerificationRow(
            quantity="damped period", closed_form=2 * math.pi / (wn * math.sqrt(1 - zeta**2)),
            independent=(peaks[1] - peaks[0]) / wn,
            tolerance=1e-6, unit="time", method="time between successive integrated peaks"))
    return rows


def numerical_history(t: np.ndarray, wn: float, zeta: float, x0: float, v0: float
                      ) -> tuple[np.ndarray, str]:
    """x(t) of m·x'' + c·x' + k·x = 0 by a route independent of the closed form, and how.

    Dimensionless: τ = ω_n·t and x = s·u (s the initial amplitude) give
    u'' + 2ζu' + u = 0, so the integrator's step count and tolerances depend on ζ and the
    span in natural periods only, never on the units or magnitude of the inputs. A span
    of more than :data:`MAX_CYCLES` is propagated by the matrix exponential instead.
    """
    from scipy.integrate import solve_ivp
    from scipy.linalg import expm

    s = max(abs(x0), abs(v0) / wn) or 1.0
    tau = t * wn
    u0 = [x0 / s, v0 / (s * wn)]
    a = np.array([[0.0, 1.0], [-1.0, -2.0 * zeta]])
    cycles = tau[-1] / (2 * math.pi) * max(1.0, 2.0 * zeta)
    if cycles <= MAX_CYCLES:
        sol = solve_ivp(lambda _t, y: a @ y, (0.0, tau[-1]), u0, method="DOP853",
                        rtol=1e-11, atol=1e-14, t_eval=tau)
        if sol.success and sol.y.shape[1] == len(tau):
            return s * sol.y[0], ("scipy.integrate.solve_ivp (DOP853) of m·x'' + c·x' + k·x"
                                  " = 0 in dimensionless time τ = ω_n·t")
    x = np.array([s * (expm(a * ti) @ u0)[0] for ti in tau])
    return x, ("scipy.linalg.expm of the dimensionless state matrix, x(τ) = e^(Aτ)·x(0)"
               f" (a time integration over {format_number(cycles, 3)} periods was not run)")
