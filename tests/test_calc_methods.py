"""Each calc type's method.py tested alone, with no Sheet and no document model: the free
response against scipy.integrate.solve_ivp, the swept steady-state response against
scipy.signal.freqresp, and the mount values against hand statics and handbook forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from reportgen_plugins.forced_response import method as forced
from reportgen_plugins.free_vibration import method as free
from reportgen_plugins.isolation import method as iso
from scipy import signal
from scipy.integrate import solve_ivp

from reportgen.units import STANDARD_GRAVITY

G = STANDARD_GRAVITY

# ------------------------------------------------------------------ free_vibration


def _free_response(wn: float, zeta: float, x0: float, v0: float) -> free.FreeResponse:
    """Coefficients by the textbook expressions (Rao §2.6; Thomson & Dahleh Ch. 2)."""
    kind = free.regime(zeta)
    if kind == "critical":
        return free.FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0)
    if kind == "overdamped":
        q = math.sqrt(zeta**2 - 1)
        s1, s2 = -wn * (zeta - q), -wn * (zeta + q)
        return free.FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0,
                                 a1=(v0 - s2 * x0) / (s1 - s2), a2=(s1 * x0 - v0) / (s1 - s2),
                                 s1=s1, s2=s2)
    wd = wn * math.sqrt(1 - zeta**2)
    c2 = (v0 + zeta * wn * x0) / wd
    return free.FreeResponse(regime=kind, omega_n=wn, zeta=zeta, x0=x0, v0=v0,
                             amplitude=math.hypot(x0, c2), phase=math.atan2(-c2, x0),
                             omega_d=wd)


@pytest.mark.parametrize("zeta", [0.0, 0.05, 0.4, 1.0, 2.5])
def test_free_history_solves_the_equation_of_motion(zeta):
    wn, x0, v0 = 2 * math.pi * 3.0, 0.002, -0.05
    resp = _free_response(wn, zeta, x0, v0)
    t = np.linspace(0.0, 2.0, 401)
    sol = solve_ivp(lambda _t, y: [y[1], -2 * zeta * wn * y[1] - wn**2 * y[0]], (0.0, 2.0),
                    [x0, v0], method="DOP853", rtol=1e-11, atol=1e-14, t_eval=t)
    np.testing.assert_allclose(resp.displacement(t), sol.y[0], rtol=0, atol=1e-9)
    env = resp.envelope(t)
    if free.regime(zeta) == "underdamped":  # the decay envelope bounds the motion
        assert np.all(np.abs(resp.displacement(t)) <= env + 1e-15)
    else:
        assert env is None


def test_regime_boundaries_and_plotted_span():
    assert [free.regime(z) for z in (0.0, 0.3, 1.0 - 1e-10, 1.0, 1.5)] == [
        "undamped", "underdamped", "critical", "critical", "overdamped"]
    wn = 2 * math.pi * 2.0
    period = 2 * math.pi / wn
    assert free.default_duration(wn, 0.0) == pytest.approx(6 * period)
    for zeta in (1e-4, 0.02, 0.3, 3.0):
        assert 3 * period - 1e-12 <= free.default_duration(wn, zeta) <= 30 * period + 1e-12
    assert len(free.history_times(0.5, 1.0, 20000)) == free.MIN_POINTS
    assert len(free.history_times(100.0, 50.0, 20000)) == 20000


# ------------------------------------------------------------------ forced_response


@pytest.mark.parametrize("zeta", [0.0, 0.03, 0.3])
def test_swept_support_motion_against_the_transfer_functions(zeta):
    # base excitation (Rao §3.6): X/Y = (cs + k)/(ms² + cs + k), Z/Y = −ms²/(ms² + cs + k)
    m, k, y0 = 40.0, 1.6e5, 2e-5
    c = 2 * zeta * math.sqrt(k * m)
    freqs = np.array([2.0, 7.0, 15.0, 40.0])
    w = 2 * np.pi * freqs
    p = {"base_displacement": y0}
    resp = forced.response("support", p, frozenset(p), m, k, zeta, freqs)
    h_abs = signal.freqresp(signal.lti([c, k] if c else [k], [m, c, k]), w=w)[1]
    h_rel = signal.freqresp(signal.lti([-m, 0.0, 0.0], [m, c, k]), w=w)[1]
    np.testing.assert_allclose(resp.T, np.abs(h_abs), rtol=1e-10)
    np.testing.assert_allclose(resp.X, np.abs(h_abs) * y0, rtol=1e-10)
    np.testing.assert_allclose(resp.Z, np.abs(h_rel) * y0, rtol=1e-10)
    np.testing.assert_allclose(resp.phi, np.mod(-np.angle(h_abs), 2 * math.pi), atol=1e-10)
    # the force in spring and damper is the mass's inertia force (Newton's second law)
    np.testing.assert_allclose(resp.F_T, np.abs(k + 1j * w * c) * resp.Z, rtol=1e-10)
    assert resp["X"] is resp.X
    with pytest.raises(KeyError):
        forced.response("force", {"force_amplitude": 1.0}, frozenset(), m, k, zeta,
                        freqs)["Z"]


def test_swept_unbalance_against_the_transfer_function():
    # rotating unbalance (Thomson & Dahleh §3.3): X = U·ω²·|1/(ms² + cs + k)|
    m, k, zeta = 900.0, 2.0e6, 0.03
    c = 2 * zeta * math.sqrt(k * m)
    p = {"unbalance_mass": 0.5, "eccentricity": 0.02}
    freqs = np.array([5.0, 24.7, 60.0])
    w = 2 * np.pi * freqs
    resp = forced.response("unbalance", p, frozenset(p), m, k, zeta, freqs)
    h = signal.freqresp(signal.lti([1.0], [m, c, k]), w=w)[1]
    np.testing.assert_allclose(resp.X, 0.01 * w**2 * np.abs(h), rtol=1e-10)
    assert forced.unbalance(p) == 0.01 and forced.unbalance({"unbalance": 0.3}) == 0.3


def test_excitation_and_resonance_passage():
    assert forced.excitation_kind({"base_acceleration", "frequency"}) == "support"
    with pytest.raises(ValueError):
        forced.excitation_kind({"force_amplitude", "unbalance"})
    assert forced.stated_damping_ratio({"damping_coefficient": 600.0},
                                       frozenset({"damping_coefficient"}), 100.0, 9.0e4) == (
        pytest.approx(600.0 / (2 * math.sqrt(9.0e4 * 100.0))))
    assert forced.passes_resonance(1.2, 10.0, None)  # runs above f_n
    assert not forced.passes_resonance(0.8, 10.0, None)
    assert forced.passes_resonance(0.8, 10.0, (2.0, 12.0))  # the range spans f_n
    assert not forced.passes_resonance(0.8, 10.0, (2.0, 9.0))


# ------------------------------------------------------------------ isolation


def test_the_four_isolator_descriptions_agree():
    # springs in parallel, δ_st = m·g_n/k, f_n = √(k/m)/2π (Thomson & Dahleh Ch. 2)
    m, n, km = 800.0, 4, 1.5e5
    k = n * km
    descriptions = ({"stiffness": k}, {"stiffness_per_mount": km},
                    {"static_deflection": m * G / k},
                    {"natural_frequency": math.sqrt(k / m) / (2 * math.pi)})
    for given in descriptions:
        inputs = {"mass": m, "mounts": n, **given}
        assert iso.total_stiffness(inputs, set(given)) == pytest.approx(k, rel=1e-12)


def test_equal_mounts_row_against_hand_values():
    m, n, km, f_req = 800.0, 4, 1.5e5, 4.0
    loads = iso.loads({"mass": m, "mounts": n})
    (row,) = iso.mount_rows(loads, km, f_req, equal=True)
    assert row.load == pytest.approx(m * G / n) and row.share == 25.0
    assert row.deflection == pytest.approx(m * G / (n * km))
    # handbook f_n = 15.76/√δ[mm] (constant rounded)
    assert row.natural_frequency == pytest.approx(15.76 / math.sqrt(row.deflection * 1e3),
                                                  rel=1e-3)
    # the stiffness that deflects the required δ_req = g_n/(2π·f_req)² under this load
    assert row.stiffness_for_target == pytest.approx(row.load / (G / (2 * math.pi * f_req)**2))


def test_uneven_rows_satisfy_statics():
    m, cg = 1500.0, (1.1, 0.6)
    pts = [(0.0, 0.0), (2.0, 0.0), (1.0, 1.5)]
    loads = iso.loads({"mass": m, "mounts": 3, "mount_positions": pts, "cg_x": cg[0],
                       "cg_y": cg[1]})
    w = m * G
    # vertical and moment equilibrium (hand statics)
    assert sum(loads) == pytest.approx(w)
    assert sum(p * x for p, (x, _) in zip(loads, pts, strict=True)) == pytest.approx(w * cg[0])
    assert sum(p * y for p, (_, y) in zip(loads, pts, strict=True)) == pytest.approx(w * cg[1])
    rows = iso.mount_rows(loads, 2.0e5, 3.0, equal=False)
    assert sum(r.share for r in rows) == pytest.approx(100.0)
    assert iso.lifted_mounts(m, loads) == []


def test_lifted_mounts():
    m = 1000.0
    w = m * G
    edge = iso.mount_loads(w, [(0, 0), (2, 0), (0, 2)], (1.0, 1.0))  # cg on the hypotenuse
    assert [i for i, p in iso.lifted_mounts(m, edge)] == [1]
    assert iso.lifted_mounts(m, edge)[0][1] == 0.0
    outside = iso.mount_loads(w, [(0, 0), (2, 0), (0, 2)], (1.5, 1.5))
    (mount, load), = iso.lifted_mounts(m, outside)
    assert mount == 1 and load < 0
