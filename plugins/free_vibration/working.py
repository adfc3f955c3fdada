"""free_vibration's working: the equations written onto the Sheet in reading order. The Sheet
evaluates each printed formula, so the values that follow are the printed ones."""

from __future__ import annotations

from reportgen_plugins.mechanics import critical_damping_formula, frequency_from_deflection_formula

from reportgen import Sheet
from reportgen.units import STANDARD_GRAVITY

from .method import FreeResponse, regime


def natural_frequency(s: Sheet, m: float, k: float) -> tuple[float, float]:
    """ω_n, f_n and T_n; returns (ω_n, f_n)."""
    wn = s.equation("omega_n", "sqrt(k/m)", "angular_frequency", k=k, m=m,
                    key="angular_natural_frequency",
                    description="Undamped angular natural frequency")
    fn = s.equation("f_n", "omega_n/(2*pi)", "frequency", omega_n=wn,
                    key="natural_frequency", key_result=True,
                    description="Undamped natural frequency")
    s.equation("T_n", "1/f_n", "time", f_n=fn, key="natural_period",
               description="Natural period")
    return wn, fn


def damping(s: Sheet, inputs, given, m: float, k: float) -> float:
    """c_c and whichever of ζ and c the job did not give; returns ζ."""
    cc = s.equation("c_c", critical_damping_formula(), "damping", k=k, m=m,
                    key="critical_damping", description="Critical damping coefficient")
    if "damping_coefficient" in given:
        c = inputs["damping_coefficient"]
        s.result("damping_coefficient", c, "damping", "c", "Viscous damping coefficient")
        return s.equation("zeta", "c/c_c", key="damping_ratio", key_result=True, c=c,
                          c_c=cc, description="Damping ratio")
    zeta = inputs.get("damping_ratio", 0.0)
    s.result("damping_ratio", zeta, "dimensionless", "zeta", "Damping ratio", key_result=True)
    s.equation("c", "zeta*c_c", "damping", zeta=zeta, c_c=cc, key="damping_coefficient",
               description="Damping coefficient")
    return zeta


def static_deflection(s: Sheet, m: float, k: float, units: str = "SI"
                      ) -> tuple[float, float, float]:
    """δ_st and f_n twice more from it; returns (δ_st, f_n from δ_st, handbook f_n). The
    handbook form is the one of the package's units: δ_st in mm, or in inches."""
    dst = s.equation("delta_st", "m*g_n/k", "length", m=m, g_n=STANDARD_GRAVITY, k=k,
                     key="static_deflection", key_result=True,
                     description="Static deflection under the weight (g_n: standard gravity)")
    f_check = s.equation("f_n", frequency_from_deflection_formula(), "frequency",
                         g_n=STANDARD_GRAVITY, delta_st=dst,
                         description="Natural frequency from the static deflection"
                                     " (same physics, independent arithmetic)")
    if units == "US":
        f_hb = s.equation("f_n", "3.13/sqrt(delta_in)", "frequency", delta_in=dst / 0.0254,
                          dims={"delta_in": "dimensionless"},
                          description="Handbook form with δ_st as a number of inches"
                                      " (constant 3.13 = √(386.09)/2π, rounded)")
    else:
        f_hb = s.equation("f_n", "15.76/sqrt(delta_mm)", "frequency", delta_mm=dst * 1000.0,
                          dims={"delta_mm": "dimensionless"},
                          description="Handbook form with δ_st as a number of millimetres"
                                      " (constant 15.76 = √(9806.65)/2π, rounded)")
    return dst, f_check, f_hb


def response(s: Sheet, wn: float, zeta: float, x0: float, v0: float) -> FreeResponse:
    """The free response's coefficients for the regime ζ falls in."""
    s.declare(omega_n="angular_frequency", zeta="dimensionless",  # also on a scratch sheet
              x_0="length", v_0="velocity")
    kind = regime(zeta)
    if kind == "critical":
        s.equation("B", "v_0 + omega_n*x_0", "velocity", v_0=v0, omega_n=wn, x_0=x0,
                   description="Coefficient of t in x(t) = (x_0 + B·t)·e^(−ω_n t)")
        return FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0)
    if kind == "overdamped":
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
        return FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0, a1=a1, a2=a2,
                            s1=s1, s2=s2)
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
    return FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0, amplitude=amp,
                        phase=phase, omega_d=wd)
