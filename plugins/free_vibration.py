"""free_vibration: the single-degree-of-freedom model m·x'' + c·x' + k·x = 0.

Natural frequency, damping, static deflection and the free response from initial
conditions, in the underdamped, critically damped and overdamped regimes, with an
independent check by integrating the equation of motion (scipy.integrate.solve_ivp).
"""

from __future__ import annotations

import math

import numpy as np

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Figure,
    InputSpec,
    Marker,
    Panel,
    Paragraph,
    Series,
    Sheet,
    Source,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.units import STANDARD_GRAVITY, format_number

__version__ = "0.1.0"

THOMSON = Source(key="thomson", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed.,"
    " Prentice Hall, 1998: Ch. 2, free vibration, viscous damping, logarithmic decrement."))
RAO = Source(key="rao", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: Ch. 2, free vibration of"
    " single-degree-of-freedom systems."))

_CRITICAL_BAND = 1e-9  # |zeta - 1| below this is treated as critically damped


def damping_inputs() -> tuple[InputSpec, ...]:
    return (
        InputSpec(name="damping_ratio", symbol="zeta", description="Viscous damping ratio c/c_c",
                  required=False, minimum=0.0, maximum=10.0),
        InputSpec(name="damping_coefficient", symbol="c",
                  description="Viscous damping coefficient", dimension="damping",
                  required=False, minimum=0.0),
    )


class FreeVibration(CalcType):
    name = "free_vibration"
    title = "Free vibration of a single-degree-of-freedom system"
    version = __version__
    api_version = 1
    purpose = ("Determine the natural frequency, damping and free response of the supported"
               " mass about its static equilibrium, modelled as m·x'' + c·x' + k·x = 0.")
    inputs = (
        InputSpec(name="mass", symbol="m", description="Vibrating mass", dimension="mass",
                  positive=True, minimum=1e-3, maximum=1e8),
        InputSpec(name="stiffness", symbol="k", description="Total spring stiffness",
                  dimension="stiffness", positive=True, minimum=1.0, maximum=1e13),
        *damping_inputs(),
        InputSpec(name="initial_displacement", symbol="x_0",
                  description="Initial displacement from equilibrium", dimension="length",
                  default=0.0, minimum=-10.0, maximum=10.0),
        InputSpec(name="initial_velocity", symbol="v_0", description="Initial velocity",
                  dimension="velocity", default=0.0, minimum=-1e3, maximum=1e3),
        InputSpec(name="duration", symbol="t_end", description="Length of the plotted history",
                  dimension="time", required=False, positive=True, maximum=3600.0),
    )
    criteria = (
        InputSpec(name="min_natural_frequency", symbol="f_min",
                  description="Lowest acceptable natural frequency", dimension="frequency",
                  required=False, positive=True),
        InputSpec(name="max_natural_frequency", symbol="f_max",
                  description="Highest acceptable natural frequency", dimension="frequency",
                  required=False, positive=True),
        InputSpec(name="max_static_deflection", symbol="delta_max",
                  description="Largest acceptable static deflection", dimension="length",
                  required=False, positive=True),
    )
    sources = (THOMSON, RAO)
    verification_cases = (
        VerificationCase(id="A1_sdof_free_underdamped",
                         description="Underdamped response, decrement, amplitude and phase",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="A2_sdof_free_undamped_amplitude_phase",
                         description="Undamped amplitude and phase", source=THOMSON.citation,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="A3_sdof_free_critically_damped",
                         description="Critically damped response", source=RAO.citation,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="A4_sdof_free_overdamped", description="Overdamped response",
                         source=RAO.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="A6_static_deflection_natural_frequency",
                         description="f_n from static deflection (15.76/√δ[mm])",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
    )

    def validate(self, inputs, given, criteria):
        problems = []
        if {"damping_ratio", "damping_coefficient"} <= given:
            problems.append(("inputs.damping_coefficient",
                             "give damping as damping_ratio or as damping_coefficient, not both"))
        if "duration" in inputs and "mass" in inputs and "stiffness" in inputs:
            period = 2 * math.pi * math.sqrt(inputs["mass"] / inputs["stiffness"])
            if inputs["duration"] / period > 1000:
                problems.append(("inputs.duration",
                                 f"duration covers {inputs['duration'] / period:.0f} natural"
                                 " periods; the limit is 1000 (the plot would be unreadable"
                                 " and the time history too large)"))
        # below a picometre (per second) a start is no motion a sensor or a structure
        # shows, and the closed form's squares of it underflow
        for key, unit in (("initial_displacement", "m"), ("initial_velocity", "m/s")):
            if 0.0 < abs(inputs.get(key, 0.0)) < TINY_START:
                problems.append((f"inputs.{key}", f"{inputs[key]:g} {unit} is below"
                                 f" {TINY_START:g} {unit}: give 0 for no initial {key[8:]},"
                                 " or a value a structure can show"))
        lo, hi = criteria.get("min_natural_frequency"), criteria.get("max_natural_frequency")
        if lo is not None and hi is not None and lo >= hi:
            problems.append(("criteria.max_natural_frequency",
                             "max_natural_frequency must be above min_natural_frequency"))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p = ctx.inputs
        m, k = p["mass"], p["stiffness"]
        x0, v0 = p["initial_displacement"], p["initial_velocity"]
        s = Sheet()
        s.add(Assumptions(items=(
            "Single degree of freedom: the mass moves as a rigid body in one direction.",
            "Linear spring and linear viscous damping; no friction or hysteresis.",
            "Displacement measured from static equilibrium, so gravity drops out of the"
            " equation of motion.",
            "Rigid support; the supporting structure does not take part in the motion.",
            "Undamped unless a damping ratio or coefficient is given." if
            not ({"damping_ratio", "damping_coefficient"} & ctx.given) else
            "Damping as stated in the inputs.",
        )))
        s.add(Paragraph(title="Method", text=(
            "The equation of motion m·x'' + c·x' + k·x = 0 is solved in closed form from the"
            " initial conditions. Values are substituted in coherent SI units.")))
        wn = s.equation("omega_n", "sqrt(k/m)", "angular_frequency", k=k, m=m,
                        key="angular_natural_frequency",
                        description="Undamped angular natural frequency")
        fn = s.equation("f_n", "omega_n/(2*pi)", "frequency", omega_n=wn,
                        key="natural_frequency", key_result=True,
                        description="Undamped natural frequency")
        s.equation("T_n", "1/f_n", "time", f_n=fn, key="natural_period",
                   description="Natural period")
        cc = s.equation("c_c", "2*sqrt(k*m)", "damping", k=k, m=m, key="critical_damping",
                        description="Critical damping coefficient")
        if "damping_coefficient" in ctx.given:
            c = p["damping_coefficient"]
            s.result("damping_coefficient", c, "damping", "c", "Viscous damping coefficient")
            zeta = s.equation("zeta", "c/c_c", key="damping_ratio", key_result=True, c=c,
                              c_c=cc, description="Damping ratio")
        else:
            zeta = p.get("damping_ratio", 0.0)
            s.result("damping_ratio", zeta, "dimensionless", "zeta", "Damping ratio",
                     key_result=True)
            c = s.equation("c", "zeta*c_c", "damping", zeta=zeta, c_c=cc,
                           key="damping_coefficient", description="Damping coefficient")
        dst = s.equation("delta_st", "m*g_n/k", "length", m=m, g_n=STANDARD_GRAVITY, k=k,
                         key="static_deflection", key_result=True,
                         description="Static deflection under the weight (g_n = 9.80665 m/s²)")
        f_check = s.equation("f_n", "sqrt(g_n/delta_st)/(2*pi)", "frequency",
                             g_n=STANDARD_GRAVITY, delta_st=dst,
                             description="Natural frequency from the static deflection"
                                         " (same physics, independent arithmetic)")
        f_hb = s.equation("f_n", "15.76/sqrt(delta_mm)", "frequency", delta_mm=dst * 1000.0,
                          description="Handbook form with δ_st in mm (constant 15.76 ="
                                      " √(9806.65)/2π, rounded)")
        s.check("fn-static-deflection", "f_n from the static deflection agrees with √(k/m)/2π",
                status="info", value=f_check, limit=fn, dimension="frequency", comparison="≈",
                note=f"handbook form gives {f_hb:.4g} Hz")

        regime, x_of_t, env = self._response(s, wn, zeta, x0, v0)
        s.add(Paragraph(title="Regime", text=regime))
        if zeta < 1 - _CRITICAL_BAND and (x0 or v0):
            s.add(Paragraph(text=(
                "Free response x(t) = A·e^(−ζω_n t)·cos(ω_d t + φ). The decay envelope"
                " ±A·e^(−ζω_n t) is shown dashed in the figure.")))

        crit = ctx.criteria
        if "min_natural_frequency" in crit:
            s.check("min-natural-frequency", "Natural frequency not below the minimum",
                    value=fn, limit=crit["min_natural_frequency"], comparison=">=",
                    dimension="frequency")
        if "max_natural_frequency" in crit:
            s.check("max-natural-frequency", "Natural frequency not above the maximum",
                    value=fn, limit=crit["max_natural_frequency"], comparison="<=",
                    dimension="frequency")
        if "max_static_deflection" in crit:
            s.check("max-static-deflection", "Static deflection within the limit",
                    value=dst, limit=crit["max_static_deflection"], comparison="<=",
                    dimension="length")

        duration = p.get("duration") or _default_duration(wn, zeta)
        n = int(min(max(400, 60 * duration * fn), self.max_points))
        t = np.linspace(0.0, duration, n)
        x = x_of_t(t)
        panel_series = [Series(x=_r(t), y=_r(x * 1000), label="x(t)", emphasis=True)]
        if env is not None:
            e = env(t) * 1000
            panel_series += [Series(x=_r(t), y=_r(e), label="decay envelope", style="dashed"),
                             Series(x=_r(t), y=_r(-e), label="", style="dashed")]
        s.add(Figure(key="time-history", caption="Free response from the initial conditions",
                     alt="Displacement against time with the exponential decay envelope",
                     x_label="Time t [s]",
                     panels=(Panel(series=tuple(panel_series), y_label="Displacement x [mm]",
                                   markers=(Marker(x=1 / fn, label="T_n"),)),)))
        return s.output(purpose=self.purpose)

    @staticmethod
    def _response(s: Sheet, wn: float, zeta: float, x0: float, v0: float):
        if abs(zeta - 1.0) <= _CRITICAL_BAND:
            s.equation("B", "v_0 + omega_n*x_0", "velocity", v_0=v0, omega_n=wn, x_0=x0,
                       description="Coefficient of t in x(t) = (x_0 + B·t)·e^(−ω_n t)")
            text = ("Critically damped (ζ = 1): the mass returns to equilibrium without"
                    " oscillating, in the shortest time of any non-oscillating system."
                    " x(t) = (x_0 + (v_0 + ω_n x_0)·t)·e^(−ω_n t).")
            return text, lambda t: (x0 + (v0 + wn * x0) * t) * np.exp(-wn * t), None
        if zeta > 1.0:
            root = s.equation("q", "sqrt(zeta**2 - 1)", zeta=zeta,
                              description="Overdamped root term √(ζ² − 1)")
            s1 = s.equation("s_1", "-omega_n*(zeta - q)", "angular_frequency", omega_n=wn,
                            zeta=zeta, q=root, description="Slow decay rate (root 1)")
            s2 = s.equation("s_2", "-omega_n*(zeta + q)", "angular_frequency", omega_n=wn,
                            zeta=zeta, q=root, description="Fast decay rate (root 2)")
            a1 = s.equation("A_1", "(v_0 - s_2*x_0)/(s_1 - s_2)", "length", v_0=v0, s_2=s2,
                            x_0=x0, s_1=s1, description="Coefficient of e^(s_1 t)")
            a2 = s.equation("A_2", "(s_1*x_0 - v_0)/(s_1 - s_2)", "length", v_0=v0, s_2=s2,
                            x_0=x0, s_1=s1, description="Coefficient of e^(s_2 t)")
            text = (f"Overdamped (ζ = {zeta:.4g} > 1): no oscillation; the motion is the sum of"
                    " two decaying exponentials x(t) = A_1·e^(s_1 t) + A_2·e^(s_2 t).")
            return text, lambda t: a1 * np.exp(s1 * t) + a2 * np.exp(s2 * t), None
        wd = s.equation("omega_d", "omega_n*sqrt(1 - zeta**2)", "angular_frequency",
                        omega_n=wn, zeta=zeta, description="Damped angular natural frequency")
        s.equation("f_d", "omega_d/(2*pi)", "frequency", omega_d=wd,
                   key="damped_natural_frequency", description="Damped natural frequency")
        s.equation("delta", "2*pi*zeta/sqrt(1 - zeta**2)", zeta=zeta,
                   key="logarithmic_decrement", description="Logarithmic decrement")
        c2 = s.equation("C_2", "(v_0 + zeta*omega_n*x_0)/omega_d", "length", v_0=v0,
                        zeta=zeta, omega_n=wn, x_0=x0, omega_d=wd,
                        description="Coefficient of sin(ω_d t); C_1 = x_0")
        amp = s.equation("A", "sqrt(x_0**2 + C_2**2)", "length", x_0=x0, C_2=c2,
                         key="amplitude", description="Amplitude of the free response")
        phase = s.equation("phi", "atan2(-C_2, x_0)", "angle", C_2=c2, x_0=x0, key="phase",
                           description="Phase angle of the free response")
        if zeta == 0:
            text = ("Undamped (ζ = 0): the mass oscillates at the natural frequency with constant"
                    " amplitude; x(t) = C_1 cos ω_n t + C_2 sin ω_n t = A cos(ω_n t + φ).")
            return text, lambda t: amp * np.cos(wn * t + phase), None
        text = (f"Underdamped (0 < ζ = {zeta:.4g} < 1): the mass oscillates at the damped natural"
                " frequency with an amplitude that decays exponentially.")
        return (text, lambda t: amp * np.exp(-zeta * wn * t) * np.cos(wd * t + phase),
                lambda t: amp * np.exp(-zeta * wn * t))

    def verify(self, ctx: CalcContext, output: CalcOutput):
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
        s = Sheet()
        _, x_of_t, _ = self._response(s, wn, zeta, x0, v0)
        duration = p.get("duration") or _default_duration(wn, zeta)
        t_eval = np.linspace(0, duration, 801)
        x_num, how = _numerical_history(t_eval, wn, zeta, x0, v0)
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


#: Smallest non-zero initial displacement (m) or velocity (m/s) accepted.
TINY_START = 1e-12
#: Most natural periods (or decay times) a time integration may span; beyond it the
#: verification's cost would grow with the input's scale.
MAX_CYCLES = 100


def _numerical_history(t: np.ndarray, wn: float, zeta: float, x0: float, v0: float
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


def _default_duration(wn: float, zeta: float) -> float:
    periods = 2 * math.pi / wn
    if zeta <= 0:
        return 6 * periods
    return float(min(max(4.0 / (zeta * wn), 3 * periods), 30 * periods))


def _r(a) -> tuple[float, ...]:
    return tuple(float(v) for v in np.round(np.asarray(a, dtype=float), 12))


@hookimpl
def reportgen_register_calc_types(context):
    return [FreeVibration()]
