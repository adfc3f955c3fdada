"""isolation: select or check vibration isolators for a machine on n mounts.

Single vertical degree of freedom on linear viscously damped mounts: transmissibility,
isolation efficiency, the mounts the target needs, and each mount's share of the weight.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    Figure,
    InputSpec,
    Marker,
    Note,
    Panel,
    Paragraph,
    Series,
    Sheet,
    Source,
    Table,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.calc import linear_validity_check
from reportgen.units import STANDARD_GRAVITY, format_number, table_display

__version__ = "0.2.0"

THOMSON = Source(key="thomson-3.5", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed., Prentice"
    " Hall, 1998: §3.5 vibration isolation (transmissibility, isolation only for r > √2);"
    " Ch. 2, springs in parallel and static deflection."))
RAO = Source(key="rao-9.10", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: §9.10 vibration isolation"
    " (force and motion transmissibility, peak transmissibility)."))
HARRIS = Source(key="harris", citation=(
    "Harris' Shock and Vibration Handbook, 6th ed. (A.G. Piersol & T.L. Paez, eds.),"
    " McGraw-Hill, 2010: the vibration isolation chapters (chapter numbers from memory)."))

_CASE_SOURCE = f"{THOMSON.citation} {RAO.citation}"
SQRT2 = math.sqrt(2.0)
#: The other damping ratios drawn beside the stated one (typical isolator range).
COMPARISON_DAMPING = (0.01, 0.05, 0.1, 0.2)
ISOLATOR_INPUTS = ("stiffness", "stiffness_per_mount", "static_deflection", "natural_frequency")
EXCITATION_INPUTS = ("speed", "frequency")


# ------------------------------------------------------------------ physics


def transmissibility(r: float | np.ndarray, zeta: float) -> Any:
    """T = √((1 + (2ζr)²)/((1 − r²)² + (2ζr)²)): force and motion transmissibility."""
    r = np.asarray(r, dtype=float)
    two_zr = (2.0 * zeta * r) ** 2
    out = np.sqrt((1.0 + two_zr) / ((1.0 - r**2) ** 2 + two_zr))
    return float(out) if out.ndim == 0 else out


def required_ratio(target: float, zeta: float) -> float:
    """The frequency ratio r > √2 at which T(r, ζ) equals ``target`` (0 < target < 1).

    T² = (1 + 4ζ²x)/((1 − x)² + 4ζ²x) with x = r² is a quadratic in x:
    T²·x² + (4ζ²T² − 2T² − 4ζ²)·x + (T² − 1) = 0. Its constant term is negative and its
    leading one positive, so exactly one root is positive; the middle coefficient is
    negative, so −b + √(b² − 4ac) adds two positive numbers (no cancellation).
    For ζ = 0 it is the handbook r² = 1 + 1/T.
    """
    if not 0.0 < target < 1.0:
        raise ValueError(f"target transmissibility {target} is not between 0 and 1")
    t2 = target * target
    a4 = 4.0 * zeta * zeta
    b = a4 * t2 - 2.0 * t2 - a4
    x = (-b + math.sqrt(b * b - 4.0 * t2 * (t2 - 1.0))) / (2.0 * t2)
    return math.sqrt(x)


def _root_of_transmissibility(target: float, zeta: float) -> float:
    """The verification's own root: T(r, ζ) = target found numerically (Brent's method)."""
    from scipy.optimize import brentq

    lo, hi = SQRT2, 2.0 * SQRT2
    while transmissibility(hi, zeta) > target:
        lo, hi = hi, 2.0 * hi
        if hi > 1e12:  # T >= 2ζ/r, so this only happens for absurd targets
            raise ValueError("no frequency ratio reaches the target transmissibility")
    return float(brentq(lambda r: transmissibility(r, zeta) - target, lo, hi,
                        xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=200))


def peak_ratio(zeta: float) -> float:
    """Frequency ratio of the transmissibility peak: r_p² = (√(1 + 8ζ²) − 1)/(4ζ²)."""
    if zeta == 0.0:
        return 1.0
    return math.sqrt((math.sqrt(1.0 + 8.0 * zeta**2) - 1.0) / (4.0 * zeta**2))


def mount_loads(weight: float, positions: Sequence[Sequence[float]],
                cg: tuple[float, float]) -> tuple[float, ...]:
    """Vertical load on each mount of a rigid base on equal mounts (N).

    Equal stiffness under a rigid base makes each mount's deflection, and so its
    load, linear in its position: P_i = a + b·(x_i − x̄) + c·(y_i − ȳ). Vertical
    equilibrium gives a = W/n; moment equilibrium about the mount centroid gives
    [S_xx S_xy; S_xy S_yy]·[b; c] = W·[e_x; e_y] with e the cg offset from the
    centroid and S the second moments of the positions about it. For three mounts
    this is the statically determinate solution.
    """
    pts = np.asarray(positions, dtype=float)
    n = len(pts)
    xm, ym = pts[:, 0].mean(), pts[:, 1].mean()
    dx, dy = pts[:, 0] - xm, pts[:, 1] - ym
    sxx, syy, sxy = _second_moments(pts)
    det = sxx * syy - sxy**2
    if n < 3:
        raise ValueError(f"{'one mount' if n == 1 else 'two mounts'} cannot carry an"
                         " off-centre load (no resistance to tilting); give at least three"
                         " positions, or leave out mount_positions for equal sharing")
    if det <= 1e-12 * (sxx + syy) ** 2:
        raise ValueError("the mount positions are collinear: they cannot carry a moment")
    ex, ey = cg[0] - xm, cg[1] - ym
    b = weight * (ex * syy - ey * sxy) / det
    c = weight * (ey * sxx - ex * sxy) / det
    return tuple(float(v) for v in weight / n + b * dx + c * dy)


def _second_moments(pts: np.ndarray) -> tuple[float, float, float]:
    """S_xx, S_yy, S_xy of the positions about their centroid (round-off in S_xy cleared)."""
    dx, dy = pts[:, 0] - pts[:, 0].mean(), pts[:, 1] - pts[:, 1].mean()
    sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
    if abs(sxy) < 1e-12 * math.sqrt(sxx * syy):
        sxy = 0.0  # symmetric layouts: keep the printed substitution free of 1e-17 noise
    return sxx, syy, sxy


def total_stiffness(inputs: Mapping[str, Any], given: frozenset[str] | set[str]) -> float:
    """Total vertical stiffness from whichever isolator description the job gives."""
    m, n = inputs["mass"], inputs["mounts"]
    if "stiffness" in given:
        return float(inputs["stiffness"])
    if "stiffness_per_mount" in given:
        return float(n * inputs["stiffness_per_mount"])
    if "static_deflection" in given:
        return float(m * STANDARD_GRAVITY / inputs["static_deflection"])
    return float(m * (2.0 * math.pi * inputs["natural_frequency"]) ** 2)


def forcing_frequency(inputs: Mapping[str, Any]) -> float:
    return float(inputs["speed"] if "speed" in inputs else inputs["frequency"])


def _loads(inputs: Mapping[str, Any]) -> tuple[float, ...]:
    w = inputs["mass"] * STANDARD_GRAVITY
    if "mount_positions" in inputs:
        return mount_loads(w, inputs["mount_positions"], (inputs["cg_x"], inputs["cg_y"]))
    return (w / inputs["mounts"],) * inputs["mounts"]


# ------------------------------------------------------------------ calc type


class Isolation(CalcType):
    name = "isolation"
    title = "Vibration isolation of equipment on resilient mounts"
    version = __version__
    api_version = 1
    purpose = ("Check that the resilient mounts under the equipment isolate the dominant"
               " excitation at the running speed, find the mounts the isolation target"
               " needs, and find the load and static deflection of each mount.")
    inputs = (
        InputSpec(name="mass", symbol="m", description="Total supported mass (machine and base)",
                  dimension="mass", positive=True, minimum=1e-3, maximum=1e7),
        InputSpec(name="speed", symbol="N", description="Running speed of the dominant"
                  " excitation (1500 rpm = 25 Hz)", dimension="frequency", required=False,
                  positive=True, maximum=1e4),
        InputSpec(name="frequency", symbol="f", description="Frequency of the dominant"
                  " excitation", dimension="frequency", required=False, positive=True,
                  maximum=1e4),
        InputSpec(name="mounts", symbol="n", description="Number of mounts", kind="integer",
                  default=4, minimum=1, maximum=64),
        InputSpec(name="stiffness", symbol="k", description="Total vertical stiffness of the"
                  " mounts", dimension="stiffness", required=False, positive=True, minimum=1.0,
                  maximum=1e12),
        InputSpec(name="stiffness_per_mount", symbol="k_m", description="Vertical stiffness"
                  " of each mount", dimension="stiffness", required=False, positive=True,
                  maximum=1e12),
        InputSpec(name="static_deflection", symbol="delta_st", description="Static deflection"
                  " of the mounts under the weight (mean over the mounts)", dimension="length",
                  required=False, positive=True, maximum=1.0),
        InputSpec(name="natural_frequency", symbol="f_n", description="Vertical natural"
                  " frequency of the machine on its mounts", dimension="frequency",
                  required=False, positive=True, maximum=1e3),
        InputSpec(name="damping_ratio", symbol="zeta", description="Viscous damping ratio of"
                  " the mounts", default=0.05, minimum=0.0, maximum=1.0,
                  default_note="assumed; state the isolator's value"),
        InputSpec(name="mount_positions", symbol="x_i, y_i", description="Mount positions"
                  " in plan", dimension="length", kind="points", required=False,
                  minimum=-1000.0, maximum=1000.0),
        InputSpec(name="cg_x", symbol="x_G", description="Centre of gravity, x (axes of"
                  " mount_positions)", dimension="length", required=False, minimum=-1000.0,
                  maximum=1000.0),
        InputSpec(name="cg_y", symbol="y_G", description="Centre of gravity, y (axes of"
                  " mount_positions)", dimension="length", required=False, minimum=-1000.0,
                  maximum=1000.0),
        InputSpec(name="rated_load_per_mount", symbol="P_rated", description="Rated load of"
                  " the selected mount (maker's data)", dimension="force", required=False,
                  positive=True),
        InputSpec(name="rated_deflection", symbol="delta_rated", description="Rated"
                  " deflection of the selected mount (maker's data)", dimension="length",
                  required=False, positive=True, maximum=1.0),
    )
    criteria = (
        InputSpec(name="min_efficiency", symbol="eta_min", description="Required isolation"
                  " efficiency 1 − T at the running speed", default=0.90, minimum=0.01,
                  maximum=0.999, default_note="common practice, no source"),
        InputSpec(name="max_static_deflection", symbol="delta_max", description="Largest"
                  " acceptable static deflection of any mount", dimension="length",
                  required=False, positive=True),
    )
    sources = (THOMSON, RAO, HARRIS)
    verification_cases = (
        VerificationCase(id="C1_required_isolation_90pct_zeta0",
                         description="Undamped mounts for 90 % isolation at 1450 rpm",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C1_required_isolation_90pct_zeta0.05",
                         description="Mounts with ζ = 0.05 for 90 % isolation at 1450 rpm",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C2_isolation_efficiency_given_deflection",
                         description="Efficiency of 25 mm mounts at 1750 rpm, ζ = 0, 0.05, 0.1",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C3_sqrt2_rule", description="T = 1 at r = √2 for any damping",
                         source=_CASE_SOURCE, status="confirmed_in_source"),
        VerificationCase(id="C4_multiple_mounts",
                         description="Unequal mount loads, stiffness for equal deflection",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C5_recommended_static_deflection_classes",
                         description="f_n of the usual static-deflection steps",
                         source="HVAC isolator selection tables (from memory)",
                         status="from_memory"),
    )

    # -------------------------------------------------------------- validate

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        excitation = [k for k in EXCITATION_INPUTS if k in given]
        if len(excitation) != 1:
            problems.append(("inputs.speed", "give the excitation as exactly one of speed"
                             " (for example \"1480 rpm\") or frequency (for example \"25 Hz\")"
                             + (f"; found both {' and '.join(excitation)}" if excitation
                                else "")))
        isolator = [k for k in ISOLATOR_INPUTS if k in given]
        if len(isolator) != 1:
            problems.append((f"inputs.{isolator[-1] if isolator else 'stiffness'}",
                             "describe the mounts by exactly one of " + ", ".join(
                                 ISOLATOR_INPUTS) + (f"; found {', '.join(isolator)}"
                                                     if isolator else "")))
        n = inputs.get("mounts", 4)
        has_pos = "mount_positions" in given
        cg_given = [k for k in ("cg_x", "cg_y") if k in given]
        if cg_given and not has_pos:
            problems.append((f"inputs.{cg_given[0]}", "a centre-of-gravity offset needs"
                             " mount_positions (a list of [x, y] per mount) in the same axes"))
        if has_pos:
            pts = inputs["mount_positions"]
            if len(pts) != n:
                problems.append(("inputs.mount_positions",
                                 f"mount_positions lists {len(pts)} mounts but mounts is {n}"
                                 + ("" if "mounts" in given else " (the default)")
                                 + f"; set mounts = {len(pts)} or list {n} positions"))
            elif len(cg_given) != 2:
                problems.append(("inputs.cg_x", "mount_positions needs both cg_x and cg_y,"
                                 " the centre of gravity in the same axes"))
            else:
                try:
                    loads = mount_loads(inputs["mass"] * STANDARD_GRAVITY, pts,
                                        (inputs["cg_x"], inputs["cg_y"]))
                except ValueError as exc:
                    problems.append(("inputs.mount_positions", str(exc)))
                else:
                    # a load within round-off of zero (cg on the edge of the region) is 0
                    zero = 1e-9 * inputs["mass"] * STANDARD_GRAVITY
                    lifted = [(i + 1, p if abs(p) > zero else 0.0)
                              for i, p in enumerate(loads) if p <= zero]
                    if lifted:
                        which = ", ".join(
                            f"mount {i} would be unloaded (0 kN)" if p == 0.0 else
                            f"mount {i} would carry {p / 1000:.3g} kN (uplift/tension)"
                            for i, p in lifted)
                        where = ("on the edge of" if all(p == 0.0 for _, p in lifted)
                                 else "outside")
                        problems.append(("inputs.cg_x", f"the centre of gravity lies {where}"
                                         " the region the mounts can carry in compression:"
                                         f" {which}. Check cg_x, cg_y and"
                                         " mount_positions, or add or move mounts"))
        if not problems:
            f = forcing_frequency(inputs)
            fn = math.sqrt(total_stiffness(inputs, given) / inputs["mass"]) / (2 * math.pi)
            if inputs["damping_ratio"] == 0.0 and abs(f / fn - 1.0) < 1e-9:
                problems.append(("inputs.damping_ratio", "the excitation is at the natural"
                                 " frequency and the damping is zero: the transmissibility is"
                                 " unbounded. State the isolator's damping or change the mounts"))
        return problems

    # -------------------------------------------------------------- compute

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, crit = ctx.inputs, ctx.criteria
        m, n, zeta = p["mass"], p["mounts"], p["damping_ratio"]
        g = STANDARD_GRAVITY
        uneven = "mount_positions" in ctx.given
        s = Sheet()
        s.add(Assumptions(items=self._assumptions(ctx, uneven)))
        s.add(Paragraph(title="Method", text=(
            "The machine and its base are one rigid mass on n equal mounts, moving vertically"
            " (one degree of freedom). The fraction of the exciting force passed to the floor"
            " is the transmissibility T = √((1 + (2ζr)²)/((1 − r²)² + (2ζr)²)), r = f/f_n,"
            " which is also the ratio of machine to floor motion under base excitation;"
            " isolation efficiency is 1 − T. Isolation exists only above r = √2, where T < 1"
            " for any damping. The mounts the target needs come from solving T(r, ζ) = 1 −"
            " η_min exactly for the stated damping. Values are substituted in coherent SI"
            " units (g_n = 9.80665 m/s²).")))

        # excitation
        if "speed" in ctx.given:
            f = s.equation("f", "N/60", "frequency", N=p["speed"] * 60.0,
                           key="forcing_frequency", key_result=True,
                           description="Forcing frequency (running speed N in rpm)")
        else:
            f = s.result("forcing_frequency", p["frequency"], "frequency", "f",
                         "Forcing frequency", key_result=True)

        # isolator
        k, km = self._stiffness(s, ctx, m, n, g)
        fn = s.equation("f_n", "sqrt(k/m)/(2*pi)", "frequency", k=k, m=m,
                        key="natural_frequency", key_result=True,
                        description="Vertical natural frequency on the mounts")
        dst = s.equation("delta_st", "m*g_n/k", "length", m=m, g_n=g, k=k,
                         key="static_deflection", key_result=True,
                         description="Static deflection (mean over the mounts)")
        s.result("damping_ratio", zeta, "dimensionless", "zeta", "Damping ratio of the mounts")

        # operating point
        r = s.equation("r", "f/f_n", f=f, f_n=fn, key="frequency_ratio",
                       description="Frequency ratio")
        t = s.equation("T", "sqrt((1 + (2*zeta*r)**2)/((1 - r**2)**2 + (2*zeta*r)**2))",
                       zeta=zeta, r=r, key="transmissibility", key_result=True,
                       description="Transmissibility at the running speed")
        eta = s.equation("eta", "1 - T", T=t, key="isolation_efficiency", key_result=True,
                         description="Isolation efficiency")
        s.result("isolation_db", -20.0 * math.log10(t), "dimensionless", "L_T",
                 "Isolation in decibels, −20·log10 T (negative: amplification)")

        # loads
        loads = _loads(p)
        w = s.equation("W", "m*g_n", "force", m=m, g_n=g, key="weight",
                       description="Weight carried by the mounts")
        pmax, pmin = max(loads), min(loads)
        if uneven:
            s.add(Paragraph(title="Load sharing", text=self._sharing_text(ctx, loads)))
            pmax = self._sharing_equation(s, ctx, loads, w)
            s.result("minimum_load_per_mount", pmin, "force", "P_min",
                     "Smallest mount load (by statics)")
            dmax = s.equation("delta_max", "P_max/k_m", "length", P_max=pmax, k_m=km,
                              key="largest_static_deflection",
                              description="Static deflection of the most heavily loaded mount")
            fn_lo = s.equation("f_n_min", "sqrt(g_n/delta_max)/(2*pi)", "frequency",
                               g_n=g, delta_max=dmax, key="mount_natural_frequency_min",
                               description="Natural frequency from the largest mount"
                                           " deflection")
            fn_hi = s.equation("f_n_max", "sqrt(g_n*k_m/P_min)/(2*pi)", "frequency",
                               g_n=g, k_m=km, P_min=pmin, key="mount_natural_frequency_max",
                               description="Natural frequency from the least loaded mount's"
                                           " deflection")
        else:
            s.equation("P_m", "W/n", "force", W=w, n=n, key="load_per_mount",
                       key_result=True, description="Load on each mount (equal sharing)")
            dmax = s.result("largest_static_deflection", dst, "length", "delta_max",
                            "Static deflection of the most heavily loaded mount")
            fn_lo = fn_hi = fn
            s.result("mount_natural_frequency_min", fn, "frequency", "f_n_min",
                     "Natural frequency from the largest mount deflection")
            s.result("mount_natural_frequency_max", fn, "frequency", "f_n_max",
                     "Natural frequency from the smallest mount deflection")

        # what the target needs
        s.add(Paragraph(title="Mounts the isolation target needs", text=(
            "The target efficiency sets the largest transmissibility allowed. The undamped"
            " handbook form gives the frequency ratio directly; with damping, T(r, ζ) = T_req"
            " is solved exactly, which asks for slightly softer mounts. The required stiffness"
            " per mount is defined here as that of each of n equal mounts which together put"
            " the machine's vertical natural frequency at the required value:"
            " k_m,req = (W/n)·(2π·f_n,req)²/g.")))
        t_req = s.equation("T_req", "1 - eta_min", eta_min=crit["min_efficiency"],
                           description="Largest transmissibility the target allows")
        r0 = s.equation("r_0", "sqrt(1 + 1/T_req)", T_req=t_req,
                        key="undamped_required_frequency_ratio",
                        description="Undamped handbook form: T = 1/(r² − 1) gives"
                                    " r² = 1 + 1/T (ζ = 0 only)")
        s.equation("delta_0", "g_n*(r_0/(2*pi*f))**2", "length", g_n=g, r_0=r0, f=f,
                   key="undamped_required_static_deflection",
                   description="Required static deflection by the undamped handbook form")
        r_req = required_ratio(t_req, zeta)
        s.add(Paragraph(text=(
            f"With the stated damping ζ = {format_number(zeta, 4)}, T(r, ζ) = T_req is a"
            " quadratic in x = r²: T²·x² + (4ζ²T² − 2T² − 4ζ²)·x + T² − 1 = 0, whose one"
            f" positive root gives r_req = {format_number(r_req, 6)} (r > √2)."
            " Substituting the root back:")))
        s.result("required_frequency_ratio", r_req, "dimensionless", "r_req",
                 "Frequency ratio that just meets the target (stated damping)")
        s.equation("T_req", "sqrt((1 + (2*zeta*r_req)**2)/((1 - r_req**2)**2"
                   " + (2*zeta*r_req)**2))", zeta=zeta, r_req=r_req,
                   description="Damped transmissibility at the root (equals T_req)")
        fn_req = s.equation("f_n_req", "f/r_req", "frequency", f=f, r_req=r_req,
                            key="required_natural_frequency", key_result=True,
                            description="Highest natural frequency that meets the target")
        d_req = s.equation("delta_req", "g_n/(2*pi*f_n_req)**2", "length", g_n=g,
                           f_n_req=fn_req, key="required_static_deflection", key_result=True,
                           description="Smallest mean static deflection that meets the target")
        km_req = s.equation("k_m_req", "m*(2*pi*f_n_req)**2/n", "stiffness", m=m,
                            f_n_req=fn_req, n=n, key="required_stiffness_per_mount",
                            key_result=True,
                            description="Largest stiffness of each mount (n equal mounts)")
        s.result("required_stiffness", km_req * n, "stiffness", "k_req",
                 "Largest total vertical stiffness that meets the target")

        s.add(self._mount_table(ctx, loads, km, fn_req))
        if uneven and pmin > 0:
            s.add(Note(text=(
                "Deflection and natural frequency are each mount's own, under its load, with"
                " all mounts of the stated stiffness. \"Stiffness for target\" is the stiffness"
                " at which that mount alone would deflect the required static deflection under"
                " its own load (P_i/δ_req). Choosing springs per position by that column levels"
                " the machine and gives every position the required natural frequency. One"
                " spring type for all positions should be no stiffer than the least loaded"
                f" position's value, {self._fmt(pmin / d_req, 'stiffness', ctx)}; the equal-"
                f"sharing value {self._fmt(km_req, 'stiffness', ctx)} meets the target for the"
                " machine's vertical mode only.")))

        # resonance passage at start-up and shut-down
        peak = self._peak(s, zeta, fn)

        # checks
        s.check("isolation-exists", "Isolation exists: frequency ratio above √2", value=r,
                limit=SQRT2, comparison=">")
        s.check("efficiency", "Isolation efficiency at the running speed meets the target",
                value=eta, limit=crit["min_efficiency"], comparison=">=",
                note=f"the target needs a natural frequency of at most"
                     f" {self._fmt(fn_req, 'frequency', ctx)}, a static deflection of at least"
                     f" {self._fmt(d_req, 'length', ctx, 3)} with ζ = {format_number(zeta, 3)}")
        if uneven:
            eta_worst = 1.0 - transmissibility(f / fn_hi, zeta)
            s.check("efficiency-lightest-mount", "Efficiency from the least loaded mount's"
                    " natural frequency (the stiffest corner)", status="info",
                    value=eta_worst, limit=crit["min_efficiency"], comparison=">=",
                    note=f"per-mount natural frequencies {format_number(fn_lo, 3)} to"
                         f" {format_number(fn_hi, 3)} Hz; the machine's vertical mode is"
                         f" {format_number(fn, 4)} Hz")
        linear_validity_check(s, t, "transmissibility T")
        if "max_static_deflection" in crit:
            s.check("max-static-deflection", "Largest mount static deflection within the"
                    " limit", value=dmax, limit=crit["max_static_deflection"],
                    comparison="<=", dimension="length")
        if "rated_load_per_mount" in p:
            s.check("rated-load", "Largest mount load within the mount's rated load",
                    value=pmax, limit=p["rated_load_per_mount"], comparison="<=",
                    dimension="force")
        if "rated_deflection" in p:
            s.check("rated-deflection", "Largest mount static deflection within the mount's"
                    " rated deflection", value=dmax, limit=p["rated_deflection"],
                    comparison="<=", dimension="length")
        if zeta > 0:
            s.check("resonance-passage", "Passing through resonance at start-up and"
                    " shut-down: peak transmissibility", status="info", value=peak,
                    note=f"≈ 1/(2ζ) = {format_number(1 / (2 * zeta), 3)} for light damping,"
                         f" at about {format_number(fn * peak_ratio(zeta), 3)} Hz"
                         f" ({format_number(fn * peak_ratio(zeta) * 60, 3)} rpm)")
        else:
            s.check("resonance-passage", "Passing through resonance at start-up and"
                    " shut-down: undamped mounts, peak transmissibility unbounded",
                    status="info", note="state the isolator's damping")

        s.add(self._transmissibility_figure(r, t, zeta, t_req, r_req))
        s.add(self._selection_figure(f, zeta, dst, eta, d_req, crit["min_efficiency"],
                                    ctx.units))
        s.add(Paragraph(title="Typical damping of isolators", text=(
            "Steel springs ζ ≈ 0.005–0.01; elastomeric mounts and pads ζ ≈ 0.02–0.10 (common"
            " practice, no source). Damping raises the transmissibility above r = √2 and"
            " limits the peak when the machine runs up and down through resonance.")))
        for text in self._cautions(zeta, dst):
            s.add(Caution(text=text))
        return s.output(purpose=self.purpose)

    # -------------------------------------------------------------- pieces

    @staticmethod
    def _stiffness(s: Sheet, ctx: CalcContext, m: float, n: int, g: float
                   ) -> tuple[float, float]:
        p, given = ctx.inputs, ctx.given
        if "stiffness" in given:
            k = s.result("stiffness", p["stiffness"], "stiffness", "k",
                         "Total vertical stiffness")
            km = s.equation("k_m", "k/n", "stiffness", k=k, n=n, key="stiffness_per_mount",
                            description="Stiffness of each mount (equal mounts)")
        elif "stiffness_per_mount" in given:
            km = s.result("stiffness_per_mount", p["stiffness_per_mount"], "stiffness", "k_m",
                          "Stiffness of each mount")
            k = s.equation("k", "n*k_m", "stiffness", n=n, k_m=km, key="stiffness",
                           description="Total vertical stiffness (mounts in parallel)")
        else:
            if "static_deflection" in given:
                k = s.equation("k", "m*g_n/delta_st", "stiffness", m=m, g_n=g,
                               delta_st=p["static_deflection"], key="stiffness",
                               description="Total vertical stiffness from the stated static"
                                           " deflection")
            else:
                k = s.equation("k", "m*(2*pi*f_n)**2", "stiffness", m=m,
                               f_n=p["natural_frequency"], key="stiffness",
                               description="Total vertical stiffness from the stated natural"
                                           " frequency")
            km = s.equation("k_m", "k/n", "stiffness", k=k, n=n, key="stiffness_per_mount",
                            description="Stiffness of each mount (equal mounts)")
        return k, km

    @staticmethod
    def _peak(s: Sheet, zeta: float, fn: float) -> float:
        if zeta == 0:
            s.add(Paragraph(title="Resonance at start-up and shut-down", text=(
                "With no damping the transmissibility is unbounded at r = 1, which the"
                " machine passes on every start and stop. Real mounts have some damping:"
                " state it.")))
            return math.inf
        s.add(Paragraph(title="Resonance at start-up and shut-down", text=(
            "The machine passes through r ≈ 1 on every start and stop. The transmissibility"
            " peaks where d T/d r = 0, at r_p² = (√(1 + 8ζ²) − 1)/(4ζ²); for light damping"
            " the peak is close to 1/(2ζ).")))
        rp = s.equation("r_p", "sqrt((sqrt(1 + 8*zeta**2) - 1)/(4*zeta**2))", zeta=zeta,
                        key="peak_frequency_ratio",
                        description="Frequency ratio of the transmissibility peak")
        tp = s.equation("T_p", "sqrt((1 + (2*zeta*r_p)**2)/((1 - r_p**2)**2"
                        " + (2*zeta*r_p)**2))", zeta=zeta, r_p=rp, key="peak_transmissibility",
                        description="Peak transmissibility (exact)")
        return tp

    @staticmethod
    def _assumptions(ctx: CalcContext, uneven: bool) -> tuple[str, ...]:
        items = [
            "Rigid supporting structure: the floor does not move under the mounts (see the"
            " caution on floor flexibility).",
            "Single vertical degree of freedom: the machine and its base move as one rigid"
            " mass, vertically; rocking and horizontal modes are not analysed.",
            "Linear isolators with linear viscous damping; all mounts of one type (equal"
            " stiffness and damping ratio).",
            "Harmonic excitation at the running speed; the dominant excitation is at the"
            " rotational frequency (1 × rpm).",
            "Force transmissibility (machine force to floor) and motion transmissibility"
            " (floor motion to machine) are the same function for this model.",
        ]
        if "damping_ratio" not in ctx.given:
            items.append("Damping ratio ζ = 0.05 assumed; state the isolator's value.")
        if uneven:
            items.append(
                "Load sharing by statics on a rigid base over equal mounts: mount loads are"
                " linear in position (exact for three mounts; for four or more mounts, which"
                " are statically indeterminate, this is the rigid-base assumption). The"
                " vertical mode is treated as uncoupled from rocking, which is exact only when"
                " the centre of gravity lies over the mounts' centroid.")
        else:
            items.append("Equal load sharing: the centre of gravity lies over the centroid of"
                         " the mounts.")
        return tuple(items)

    @staticmethod
    def _fmt(value: float, dimension: str, ctx: CalcContext, digits: int = 4) -> str:
        v, unit = table_display(value, dimension, ctx.units)
        return f"{format_number(v, digits)} {unit}".strip()

    def _sharing_text(self, ctx: CalcContext, loads: tuple[float, ...]) -> str:
        n = len(loads)
        pts = ctx.inputs["mount_positions"]
        xc, yc = sum(q[0] for q in pts) / n, sum(q[1] for q in pts) / n
        ex, ey = ctx.inputs["cg_x"] - xc, ctx.inputs["cg_y"] - yc
        kind = ("Three mounts are statically determinate: vertical and moment equilibrium"
                " alone give the loads." if n == 3 else
                f"{n} mounts are statically indeterminate. With equal mounts under a rigid"
                " base, the base translates and tilts, so each mount's deflection, and so its"
                " load, is linear in its position.")
        return (f"{kind} Vertical equilibrium and moment equilibrium about the mounts' centroid"
                f" (x_c, y_c) = ({self._fmt(xc, 'length', ctx)}, {self._fmt(yc, 'length', ctx)})"
                " then give P_i = W/n + W·[(x_i − x_c)(e_x·S_yy − e_y·S_xy) +"
                " (y_i − y_c)(e_y·S_xx − e_x·S_xy)]/(S_xx·S_yy − S_xy²), where (e_x, e_y) ="
                f" ({self._fmt(ex, 'length', ctx)}, {self._fmt(ey, 'length', ctx)}) is the"
                " centre of gravity's offset from the centroid and S_xx = Σ(x_i − x_c)²,"
                " S_yy = Σ(y_i − y_c)², S_xy = Σ(x_i − x_c)(y_i − y_c). Written as"
                " P_i = W/n + b_x·(x_i − x_c) + b_y·(y_i − y_c), the loads satisfy ΣP_i = W and"
                " ΣP_i·(x_i, y_i) = W·(x_G, y_G); all are in compression.")

    @staticmethod
    def _sharing_equation(s: Sheet, ctx: CalcContext, loads: tuple[float, ...],
                          w: float) -> float:
        p = ctx.inputs
        pts = np.asarray(p["mount_positions"], dtype=float)
        xc, yc = float(pts[:, 0].mean()), float(pts[:, 1].mean())
        sxx, syy, sxy = _second_moments(pts)
        ex, ey = p["cg_x"] - xc, p["cg_y"] - yc
        # a load gradient (N per m of position) has the units of a stiffness
        bx = s.equation("b_x", "W*(e_x*S_yy - e_y*S_xy)/(S_xx*S_yy - S_xy**2)", "stiffness",
                        W=w, e_x=ex, e_y=ey, S_xx=sxx, S_yy=syy, S_xy=sxy,
                        description="Change of mount load per metre in x (moment equilibrium)")
        by = s.equation("b_y", "W*(e_y*S_xx - e_x*S_xy)/(S_xx*S_yy - S_xy**2)", "stiffness",
                        W=w, e_x=ex, e_y=ey, S_xx=sxx, S_yy=syy, S_xy=sxy,
                        description="Change of mount load per metre in y (moment equilibrium)")
        i = int(np.argmax(loads))
        xi, yi = f"x_{i + 1}", f"y_{i + 1}"
        return s.equation(
            f"P_{i + 1}", f"W/n + b_x*({xi} - x_c) + b_y*({yi} - y_c)", "force",
            key="load_per_mount", key_result=True, symbol="P_max",
            description=f"Largest mount load (mount {i + 1}, by statics)",
            **{"W": w, "n": len(loads), "b_x": bx, "b_y": by, xi: pts[i, 0], yi: pts[i, 1],
               "x_c": xc, "y_c": yc})

    def _mount_table(self, ctx: CalcContext, loads: tuple[float, ...], km: float,
                     fn_req: float) -> Table:
        g = STANDARD_GRAVITY
        w = sum(loads)
        wr2 = (2 * math.pi * fn_req) ** 2

        def cell(value: float, dimension: str, digits: int = 4) -> str:
            return format_number(table_display(value, dimension, ctx.units)[0], digits)

        def unit(dimension: str) -> str:
            return table_display(1.0, dimension, ctx.units)[1]

        header = ("Mount", f"x [{unit('length')}]", f"y [{unit('length')}]",
                  f"Load [{unit('force')}]", "Share [%]", f"Deflection [{unit('length')}]",
                  "Natural frequency [Hz]", f"Stiffness for target [{unit('stiffness')}]")
        rows = []
        pts = ctx.inputs.get("mount_positions")
        if pts is None:
            load = loads[0]
            d = load / km
            rows.append((f"1–{len(loads)} (each)" if len(loads) > 1 else "1", "—", "—",
                         cell(load, "force"), format_number(100.0 / len(loads), 4),
                         cell(d, "length"), format_number(math.sqrt(g / d) / (2 * math.pi), 4),
                         cell(load * wr2 / g, "stiffness")))
        else:
            for i, (load, (x, y)) in enumerate(zip(loads, pts, strict=True), start=1):
                d = load / km
                rows.append((str(i), cell(x, "length"), cell(y, "length"), cell(load, "force"),
                             format_number(100.0 * load / w, 4), cell(d, "length"),
                             format_number(math.sqrt(g / d) / (2 * math.pi), 4),
                             cell(load * wr2 / g, "stiffness")))
        return Table(title="Mount loads, static deflections and natural frequencies",
                     header=header, rows=tuple(rows))

    @staticmethod
    def _transmissibility_figure(r_op: float, t_op: float, zeta: float, t_req: float,
                                 r_req: float) -> Figure:
        r_hi = max(10.0, 1.5 * r_op, 1.5 * r_req)
        # few points keep the PDF lean; the band around r = 1 resolves light-damping peaks
        r = np.unique(np.concatenate([np.geomspace(0.1, r_hi, 200),
                                      np.linspace(0.9, 1.1, 81)]))
        r = r[np.abs(r - 1.0) > 1e-6]  # ζ = 0 is unbounded at r = 1
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
            x_label="Frequency ratio r = f/f_n", x_scale="log", x_range=(0.1, r_hi),
            panels=(Panel(series=tuple(series), y_label="Transmissibility T", y_scale="log",
                          y_range=(lo, 100.0), hlines=((t_req, "target T_req"),),
                          markers=(Marker(x=SQRT2, label="r = √2"),
                                   Marker(x=r_op, y=t_op, label="operating point"))),))

    @staticmethod
    def _selection_figure(f: float, zeta: float, d_op: float, eta_op: float, d_req: float,
                          eta_min: float, units: str) -> Figure:
        g = STANDARD_GRAVITY
        scale, unit = table_display(1.0, "length", units)  # mm, or in for US customary
        d_sqrt2 = 2.0 * g / (2 * math.pi * f) ** 2  # deflection at r = √2
        d_lo = max(0.8 * d_sqrt2, 1e-5)
        d_hi = max(0.1, 2.5 * d_op, 2.5 * d_req)
        d = np.geomspace(d_lo, d_hi, 160)
        r = f / (np.sqrt(g / d) / (2 * math.pi))
        eff = 100.0 * (1.0 - transmissibility(r, zeta))
        series = [Series(x=_r(d * scale), y=_r(eff), label=f"ζ = {format_number(zeta, 3)}"
                         " (stated)", emphasis=True)]
        if zeta != 0:
            series.append(Series(x=_r(d * scale), y=_r(100.0 * (1.0 - transmissibility(r, 0.0))),
                                 label="ζ = 0", style="dashed"))
        y_lo = 50.0 if eta_op >= 0.6 else 0.0
        markers = [Marker(x=d_op * scale, y=max(eta_op * 100, y_lo), label="selected"),
                   Marker(x=d_req * scale, label="required")]  # a line: labels never collide
        return Figure(
            key="selection-chart",
            caption=f"Isolation efficiency against static deflection at"
                    f" {format_number(f * 60, 4)} rpm ({format_number(f, 4)} Hz): selected"
                    f" {format_number(d_op * scale, 3)} {unit},"
                    f" η = {format_number(eta_op * 100, 3)} %;"
                    f" required at least {format_number(d_req * scale, 3)} {unit} for"
                    f" {format_number(eta_min * 100, 3)} %",
            alt="Isolation efficiency in percent against static deflection,"
                " rising with deflection; the target line and the selected point are marked",
            x_label=f"Static deflection δ_st [{unit}]", x_scale="log",
            x_range=(d_lo * scale, d_hi * scale),
            panels=(Panel(series=tuple(series), y_label="Isolation efficiency η [%]",
                          y_range=(y_lo, 100.0),
                          hlines=((eta_min * 100, f"target {format_number(eta_min * 100, 3)} %"),),
                          markers=tuple(markers)),))

    @staticmethod
    def _cautions(zeta: float, dst: float) -> tuple[str, ...]:
        return (
            "Seismic and wind restraint: isolated equipment must be restrained against"
            " seismic and wind loads by restrained mounts or snubbers designed to the local"
            " code. Restraints must keep their working clearance so that they do not bridge"
            " the isolators in normal running.",
            "Floor flexibility: the result assumes a rigid floor. The mounts should deflect"
            " many times more than the floor does under the same load (at least 10 times is"
            " common practice, no source); on long or light floor spans the floor and the"
            " mounts act in series, the floor's own resonances may lie near the running"
            " speed, and the isolation is less than calculated. Check the floor separately.",
            "Mount selection must follow the isolator maker's rated data (rated load, rated"
            " deflection, spring rate, lateral stability and damping) and the local codes;"
            " this calculation states what the mounts must achieve, not which product to buy.",
            "Start-up and shut-down pass through resonance: confirm that the mounts' damping"
            " or restraints limit the motion there, especially where the run-down is slow.",
        )

    # -------------------------------------------------------------- verify

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
        from scipy import signal
        from scipy.optimize import minimize_scalar

        res = {row.key: row.quantity.value for row in output.results}
        p = ctx.inputs
        m, zeta, n = p["mass"], res["damping_ratio"], p["mounts"]
        k = res["stiffness"]
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
        integrated = _integrated_transmissibility(zeta, r)
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
                closed_form=res["transmissibility"], independent=_resolvent_transmissibility(
                    zeta, r), tolerance=1e-9,
                method=f"time integration not run: at r = {format_number(r, 4)} it would"
                " span more than"f" {MAX_CYCLES} cycles; instead |C·(j·r·I − A)⁻¹·B| of the"
                " dimensionless state-space model (numpy.linalg.solve)"))
        # the required mounts: re-evaluate T at the root, and the root by the quadratic in r²
        t_target = 1.0 - ctx.criteria["min_efficiency"]
        k_req = res["required_stiffness_per_mount"] * n
        c_req = 2.0 * zeta * math.sqrt(k_req * m)
        rows.append(VerificationRow(
            quantity="T at the required stiffness", closed_form=t_target,
            independent=base(k_req, c_req, w), tolerance=1e-9,
            method="scipy.signal.freqs with k = n·k_m,req at the running speed"))
        rows.append(VerificationRow(
            quantity="required_frequency_ratio", closed_form=res["required_frequency_ratio"],
            independent=_root_of_transmissibility(t_target, zeta), tolerance=1e-9,
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
                independent=max(_rigid_base_loads(p)), tolerance=1e-9, unit="force",
                method="numpy.linalg.solve of the rigid base's 3×3 stiffness matrix"
                " (heave and two tilts) under the weight at the centre of gravity"))
        return rows


#: Most oscillation cycles (of the forcing or of the free motion, whichever is faster) a
#: time integration may span: keeps the verification's cost bounded for any input scale.
MAX_CYCLES = 100


def _integration_cycles(zeta: float, r: float) -> float:
    """Cycles of the fastest motion over the integration span (12 forcing periods and at
    least 4 natural periods), in τ = ω_n·t: a function of ζ and r only."""
    return max(12.0 / r, 4.0) * max(r, 1.0, 2.0 * zeta)


def _integrated_transmissibility(zeta: float, r: float) -> float | None:
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


def _resolvent_transmissibility(zeta: float, r: float) -> float:
    """|C·(j·r·I − A)⁻¹·B| of u'' + 2ζu' + u = f with output u + 2ζu' (the floor force)."""
    a = np.array([[0.0, 1.0], [-1.0, -2.0 * zeta]], dtype=complex)
    b = np.array([0.0, 1.0], dtype=complex)
    state = np.linalg.solve(1j * r * np.eye(2) - a, b)
    return float(abs(state[0] + 2.0 * zeta * state[1]))


def _rigid_base_loads(p: Mapping[str, Any]) -> list[float]:
    """Mount loads from the rigid base's stiffness matrix (unit mount stiffness)."""
    pts = np.asarray(p["mount_positions"], dtype=float)
    basis = np.column_stack([np.ones(len(pts)), pts[:, 0], pts[:, 1]])  # w, θ_y, θ_x
    kmat = basis.T @ basis
    wgt = p["mass"] * STANDARD_GRAVITY
    load = np.array([wgt, wgt * p["cg_x"], wgt * p["cg_y"]])
    return [float(v) for v in basis @ np.linalg.solve(kmat, load)]


def _r(a) -> tuple[float, ...]:
    return tuple(float(v) for v in np.round(np.asarray(a, dtype=float), 12))


@hookimpl
def reportgen_register_calc_types(context):
    return [Isolation()]
