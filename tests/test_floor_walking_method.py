"""floor_walking method modules against the guide's formulas, the reference cases, statics and
mechanics-of-materials definitions.

Sources and statuses beside each check. Reference cases I1-I6 and F_beam_ss_static_deflection_
estimate come from tests/data/check_cases.json. Main source: AISC Steel Design Guide 11, 2nd ed.
(Murray, Allen, Ungar & Davis, 2016), "DG11". Statuses: Eq. 4-1's form, P0 = 65 lb (0.29 kN),
R = 0.5 and the 9 Hz limit were seen in a stored excerpt of Ch. 4 (confirmed); the Table 4-1
limits, P0 for footbridges, the Ch. 3-4 bay rules (0.18, C_j, C_g, effective widths, the girder
reduction, the 1.5 continuity factor, the 0.4 L slab width, 1.35 E_c), equation numbers and the
tolerance curve's shape are from memory; damping ratios 0.02/0.03/0.05/0.01 are corroborated
secondary (Allen & Murray 1993 as quoted on a public page).
"""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest
from conftest import REPO, assert_case, case_value
from hypothesis import given, settings
from hypothesis import strategies as st
from reportgen_plugins.floor_walking import bay, equipment, method
from scipy import integrate

from reportgen.units import STANDARD_GRAVITY

G = STANDARD_GRAVITY
LB = 4.4482216152605  # N per pound-force (NIST SP 811, exact definition)
FLOOR_DIR = REPO / "plugins" / "floor_walking"

# An invented interior bay: 9 m beams at 3 m on 9 m girders, composite I values.
BAY = dict(beam_span=9.0, beam_spacing=3.0, beam_inertia=9.0e-4, girder_span=9.0,
           girder_inertia=2.2e-3, elastic_modulus=200e9, dead_load=3.5e3,
           live_load_present=0.5e3, slab_depth=0.1, modular_ratio=6.0)


def _case_response(case: dict) -> method.WalkingResponse:
    i = case["inputs"]
    return method.walking_response(
        natural_frequency=i["f_n"]["value"], effective_weight=i["W_effective"]["value"],
        damping_ratio=i["beta"]["value"], excitation_force=i["Po"]["value"],
        limit_ratio=i["ao_over_g_limit"]["value"])


# ------------------------------------------------------------------ DG11 Eq. 4-1

@pytest.mark.parametrize("case_id", ["I1_dg11_office_fails", "I2_dg11_office_passes",
                                     "I3_dg11_outdoor_footbridge", "I4_dg11_mall"])
def test_eq_4_1_reference_cases(check_cases, case_id):
    # DG11 Ch. 4 Eq. 4-1, invented numbers (status formula_confirmed_example_invented)
    case = check_cases[case_id]
    r = _case_response(case)
    assert_case(r.peak_acceleration_ratio, case, "ap_over_g")
    assert_case(r.peak_acceleration_ratio * 100.0, case, "ap_over_g_percent")
    assert_case(r.peak_acceleration, case, "ap")
    assert_case(r.ratio_to_limit, case, "ratio_to_limit")
    assert r.passes is case_value(case, "passes")


@pytest.mark.parametrize(("key", "limit", "force"), [
    # DG11 Table 4-1 (1st ed. Table 4.1, unchanged in the 2nd): from memory
    ("office", 0.005, 290.0), ("residence", 0.005, 290.0), ("quiet_space", 0.005, 290.0),
    ("shopping_mall", 0.015, 290.0), ("indoor_footbridge", 0.015, 410.0),
    ("outdoor_footbridge", 0.05, 410.0)])
def test_occupancy_table(key, limit, force):
    occ = method.occupancy(key)
    assert occ.limit_ratio == limit
    assert occ.excitation_force == force
    assert method.walking_criterion(key).limit_ratio == limit


def test_excitation_forces_are_the_guide_si_displays_of_65_and_92_lb():
    # DG11 Ch. 4: P0 = 65 lb (0.29 kN) floors [confirmed], 92 lb (0.41 kN) footbridges [from
    # memory]; the kN figures are 2-figure roundings of the pound values.
    assert method.FLOOR_EXCITATION == pytest.approx(65 * LB, rel=0.005)
    assert method.FOOTBRIDGE_EXCITATION == pytest.approx(92 * LB, rel=0.005)
    assert method.excitation_force("floor") == 290.0
    assert method.excitation_force("footbridge") == 410.0


def test_p0_is_r_alpha_p_of_the_walking_force(check_cases):
    # Case I5 (from memory): P0 = R·0.83·P with R = 0.5, P = 0.7 kN gives 290.5 N, which the
    # guide rounds to 0.29 kN; Eq. 4-1 with 290.5 N reproduces the case's a_p/g.
    case = check_cases["I5_dg11_Po_derivation_check"]
    i = case["inputs"]
    p0 = i["R"]["value"] * 0.83 * i["P_walker"]["value"]
    assert_case(p0, case, "Po")
    assert method.FLOOR_EXCITATION == pytest.approx(p0, abs=0.5)
    r = method.walking_response(natural_frequency=i["f_n"]["value"],
                                effective_weight=i["W_effective"]["value"],
                                damping_ratio=i["beta"]["value"], excitation_force=p0,
                                limit_ratio=0.005)
    assert_case(r.peak_acceleration_ratio, case, "ap_over_g_DG11")


def test_refusal_above_nine_hertz_names_frequency_and_limit():
    # DG11 Ch. 4: Eq. 4-1 applies to f_n <= 9 Hz (confirmed in the stored excerpt)
    kwargs = dict(effective_weight=250e3, damping_ratio=0.03, excitation_force=290.0,
                  limit_ratio=0.005)
    with pytest.raises(method.OutOfMethodRange) as err:
        method.walking_response(natural_frequency=11.2, **kwargs)
    assert str(err.value) == ("natural frequency 11.2 Hz is above the 9 Hz limit of the"
                              " low-frequency walking method (DG11 Eq. 4-1)")
    assert (err.value.quantity, err.value.value, err.value.limit) == (
        "natural frequency", 11.2, 9.0)
    assert isinstance(err.value, ValueError)
    assert method.walking_response(natural_frequency=9.0, **kwargs).natural_frequency == 9.0


@pytest.mark.parametrize(("field", "value"), [
    ("natural_frequency", 0.0), ("effective_weight", -1.0), ("damping_ratio", 0.0),
    ("excitation_force", float("nan"))])
def test_non_physical_values_are_refused_not_divided(field, value):
    kwargs = dict(natural_frequency=5.0, effective_weight=250e3, damping_ratio=0.03,
                  excitation_force=290.0, limit_ratio=0.005)
    kwargs[field] = value
    with pytest.raises(method.OutOfMethodRange, match="must be positive for the"):
        method.walking_response(**kwargs)


@settings(max_examples=60, deadline=None)
@given(f=st.floats(0.5, 9.0), w=st.floats(1e4, 1e7), beta=st.floats(0.005, 0.1))
def test_eq_4_1_invariants(f, w, beta):
    # Eq. 4-1: a_p ∝ 1/(βW) and falls with f as exp(−0.35 f) (the walking-force fit of DG11
    # Ch. 2, from memory); a_p = (a_p/g)·g_n with standard gravity (CGPM 1901)
    r = method.walking_response(natural_frequency=f, effective_weight=w, damping_ratio=beta,
                                excitation_force=290.0, limit_ratio=0.005)
    r2 = method.walking_response(natural_frequency=f, effective_weight=2 * w,
                                 damping_ratio=beta, excitation_force=290.0, limit_ratio=0.005)
    assert r2.peak_acceleration_ratio == pytest.approx(r.peak_acceleration_ratio / 2, rel=1e-12)
    assert r.peak_acceleration == pytest.approx(r.peak_acceleration_ratio * G, rel=1e-12)
    lower = method.walking_response(natural_frequency=f / 2, effective_weight=w,
                                    damping_ratio=beta, excitation_force=290.0,
                                    limit_ratio=0.005)
    assert lower.peak_acceleration_ratio / r.peak_acceleration_ratio == pytest.approx(
        math.exp(0.35 * f / 2), rel=1e-12)
    assert r.passes == (r.ratio_to_limit <= 1.0)


def test_criterion_explicit_limit_overrides_and_keeps_the_occupancy_force():
    c = method.walking_criterion("indoor_footbridge", 0.01)
    assert (c.limit_ratio, c.excitation_force, c.limit_given) == (0.01, 410.0, True)
    c = method.walking_criterion(None, 0.008)
    assert (c.limit_ratio, c.excitation_force, c.occupancy) == (0.008, 290.0, "")
    c = method.walking_criterion(None, 0.02, structure="footbridge")
    assert c.excitation_force == 410.0
    with pytest.raises(method.FloorMethodError, match="give an occupancy"):
        method.walking_criterion()
    with pytest.raises(method.FloorMethodError, match="office, residence, quiet_space"):
        method.occupancy("warehouse")


@pytest.mark.parametrize(("key", "beta"), [
    # DG11 recommended damping (Allen & Murray, AISC Eng. J. 30(4), 1993, as quoted on a
    # public page: corroborated secondary)
    ("few_components", 0.02), ("furnished", 0.03), ("full_height_partitions", 0.05),
    ("footbridge", 0.01)])
def test_damping_defaults(key, beta):
    d = method.damping_default(key)
    assert d.damping_ratio == beta
    assert d.description and d.source


def test_unknown_fit_out_lists_the_choices():
    with pytest.raises(method.FloorMethodError, match="few_components, furnished"):
        method.damping_default("carpet")


# ------------------------------------------------------------------ tolerance curve

def test_curve_shape_follows_the_iso_base_curve():
    # ISO 2631-2:1989 base curve, vertical (from memory): 0.01 m/s² rms at 1 Hz, 0.005 from 4
    # to 8 Hz, 0.05 at 80 Hz; the shape is that curve over its flat value.
    assert method.limit_curve_shape(1.0) == pytest.approx(0.01 / 0.005)
    assert method.limit_curve_shape(4.0) == 1.0
    assert method.limit_curve_shape(6.0) == 1.0
    assert method.limit_curve_shape(8.0) == 1.0
    assert method.limit_curve_shape(80.0) == pytest.approx(0.05 / 0.005)
    assert method.limit_curve_shape(2.0) == pytest.approx(math.sqrt(2.0))


def test_curve_data_is_continuous_and_carries_the_point():
    c = method.limit_curve(0.005, "Offices", point_frequency=5.0, point_ratio=0.0067)
    f, a = np.array(c.frequency), np.array(c.limit_ratio)
    assert f[0] == 1.0 and f[-1] == 80.0 and {4.0, 8.0} <= set(c.frequency)
    assert np.all(np.diff(f) > 0)
    # no jump at the corners: neighbouring points differ by less than their frequency step
    assert np.all(np.abs(np.diff(np.log(a))) <= np.abs(np.diff(np.log(f))) + 1e-12)
    assert a[(f >= 4) & (f <= 8)] == pytest.approx(0.005)
    assert np.all(np.diff(a[f <= 4]) < 0) and np.all(np.diff(a[f >= 8]) > 0)
    assert (c.point_frequency, c.point_ratio) == (5.0, 0.0067)
    with pytest.raises(method.OutOfMethodRange, match="80 Hz limit"):
        method.limit_curve_shape(100.0)


# ------------------------------------------------------------------ bay route

def _virtual_work_deflection(w: float, span: float, ei: float) -> float:
    """Midspan deflection by virtual work, ∫ M·m/EI dx (statics, any mechanics text)."""
    def integrand(x):
        moment = w * x * (span - x) / 2.0
        unit = x / 2.0 if x <= span / 2 else (span - x) / 2.0
        return moment * unit / ei
    value, _ = integrate.quad(integrand, 0.0, span, points=[span / 2], epsabs=0, epsrel=1e-12)
    return value


def test_deflection_matches_virtual_work():
    # DG11 Eq. 3-2 Δ = 5wL⁴/(384 E I) against the unit-load method (Gere & Goodno, Mechanics of
    # Materials, virtual work)
    d = bay.midspan_deflection(12e3, 9.0, 200e9, 9e-4)
    assert d == pytest.approx(_virtual_work_deflection(12e3, 9.0, 200e9 * 9e-4), rel=1e-10)


def test_frequency_from_deflection_reference_cases(check_cases):
    # Case I6 (DG11 Eq. 3-3/3-5, from memory): f = 0.18·√(g/(Δ_j + Δ_g))
    for cid in ("I6_dg11_fn_from_deflection_10mm", "I6_dg11_fn_from_deflection_20mm"):
        case = check_cases[cid]
        total = case["inputs"]["Delta_total"]["value"]
        assert_case(bay.frequency_from_deflection(total), case, "f_n")
        assert_case(bay.combined_frequency(0.3 * total, 0.7 * total), case, "f_n")


def test_static_deflection_estimate_case(check_cases):
    # Case F_beam_ss_static_deflection_estimate: Thomson App. D beam + elastic deflection; DG11's
    # 0.18 is 0.42 % above the exact (π/2)·√(5/384) = 0.17924 of a uniform simply supported beam
    case = check_cases["F_beam_ss_static_deflection_estimate"]
    i = case["inputs"]
    ei, m, span = i["EI"]["value"], i["mass_per_length"]["value"], i["L"]["value"]
    delta = bay.midspan_deflection(m * G, span, 200e9, ei / 200e9)
    assert_case(delta, case, "delta_midspan")
    assert_case(bay.frequency_from_deflection(delta), case, "f1_DG11_0.18sqrt(g/delta)")
    exact = (math.pi / 2) * math.sqrt(5 / 384)
    assert bay.FREQUENCY_COEFFICIENT / exact == pytest.approx(1.00423, abs=1e-5)


def test_bay_steps_against_the_guide_formulas():
    # DG11 Ch. 3-4 (from memory): each intermediate recomputed here from the stated formulas
    m = bay.bay_modes(**BAY)
    w = 4000.0
    assert (m.beam_load, m.girder_load) == (w * 3.0, w * 9.0)
    d_j = 5 * 12e3 * 9.0**4 / (384 * 200e9 * 9e-4)
    d_g = 5 * 36e3 * 9.0**4 / (384 * 200e9 * 2.2e-3)
    assert m.beam_deflection == pytest.approx(d_j, rel=1e-12)
    assert m.girder_deflection == pytest.approx(d_g, rel=1e-12)
    assert m.natural_frequency == pytest.approx(0.18 * math.sqrt(G / (d_j + d_g)), rel=1e-12)
    # Dunkerley: the deflection combination equals 1/f² = 1/f_j² + 1/f_g² (DG11 Eq. 3-4)
    assert m.natural_frequency ** -2 == pytest.approx(
        m.beam_frequency ** -2 + m.girder_frequency ** -2, rel=1e-12)
    ds, dj, dg = 0.1**3 / (12 * 6.0), 9e-4 / 3.0, 2.2e-3 / 9.0
    assert (m.slab_stiffness, m.beam_stiffness, m.girder_stiffness) == pytest.approx((ds, dj, dg))
    b_j = 2.0 * (ds / dj) ** 0.25 * 9.0
    b_g = 1.8 * (dj / dg) ** 0.25 * 9.0
    assert m.beam_width.width == pytest.approx(b_j) and not m.beam_width.limited
    assert m.girder_width.width == pytest.approx(b_g)
    assert m.girder_deflection_factor == 1.0  # L_g = 9 m ≥ B_j = 8.35 m
    w_j, w_g = w * b_j * 9.0, w * b_g * 9.0
    assert m.effective_weight == pytest.approx((d_j * w_j + d_g * w_g) / (d_j + d_g), rel=1e-12)
    assert min(w_j, w_g) < m.effective_weight < max(w_j, w_g)


def test_effective_width_limit_and_edge_coefficient():
    # DG11 Ch. 4 (from memory): B_j ≤ ⅔ floor width; C_j = 1.0 along a free edge
    interior = bay.bay_modes(**BAY)
    limited = bay.bay_modes(**BAY, floor_width=9.0)
    assert limited.beam_width.limit == pytest.approx(6.0)
    assert limited.beam_width.limited and limited.beam_width.width == pytest.approx(6.0)
    assert limited.beam_width.unlimited == pytest.approx(interior.beam_width.width)
    edge = bay.bay_modes(**{**BAY, "bay_position": "edge"})
    assert edge.beam_width.width == pytest.approx(interior.beam_width.width / 2)
    assert edge.beam_weight == pytest.approx(interior.beam_weight / 2)
    assert edge.natural_frequency == interior.natural_frequency
    flange = bay.bay_modes(**{**BAY, "girder_connection": "flange"})
    assert flange.girder_width.width / interior.girder_width.width == pytest.approx(1.6 / 1.8)
    continuous = bay.bay_modes(**BAY, beams_continuous=True)
    assert continuous.beam_weight == pytest.approx(1.5 * interior.beam_weight)
    with pytest.raises(method.FloorMethodError, match="interior, edge"):
        bay.bay_modes(**{**BAY, "bay_position": "corner"})


def test_girder_reduction_when_the_girder_is_shorter_than_the_beam_panel():
    # DG11 Ch. 4 (from memory): Δ_g' = (L_g/B_j)·Δ_g with 0.5 ≤ L_g/B_j ≤ 1.0
    assert bay.girder_deflection_factor(6.0, 8.0) == 0.75
    assert bay.girder_deflection_factor(3.0, 8.0) == 0.5
    assert bay.girder_deflection_factor(9.0, 8.0) == 1.0
    short = bay.bay_modes(**{**BAY, "girder_span": 6.0, "beam_spacing": 2.0,
                             "beam_inertia": 6.0e-4})
    assert short.girder_deflection_factor == pytest.approx(6.0 / short.beam_width.width)
    assert short.girder_deflection_used == pytest.approx(
        short.girder_deflection_factor * short.girder_deflection)
    assert short.natural_frequency == pytest.approx(
        bay.combined_frequency(short.beam_deflection, short.girder_deflection_used))


def _strip_inertia(layers: list[tuple[float, float, float]], dy: float = 1e-5) -> float:
    """Second moment of area about the centroid by summing thin horizontal strips
    (I = ∫ y² dA, the definition), layers as (bottom, top, width)."""
    top = max(t for _, t, _ in layers)
    y = np.arange(0.0, top, dy) + dy / 2
    width = np.zeros_like(y)
    for bottom, t, b in layers:
        width[(y >= bottom) & (y < t)] += b
    area = width * dy
    y_bar = (area * y).sum() / area.sum()
    return float((area * (y - y_bar) ** 2).sum() + (width * dy**3 / 12).sum())


def test_composite_section_against_strip_integration():
    # Transformed-section method (Gere & Goodno, Mechanics of Materials, composite beams) with
    # DG11's dynamic modular ratio: checked against I = ∫ y² dA over the plates, summed in strips
    d, bf, tf, tw = 0.40, 0.18, 0.014, 0.008
    steel = [(0.0, tf, bf), (tf, d - tf, tw), (d - tf, d, bf)]
    a_s = 2 * bf * tf + (d - 2 * tf) * tw
    i_s = _strip_inertia(steel)
    width, depth, n, rib = 2.4, 0.08, 7.5, 0.05
    slab = [(d + rib, d + rib + depth, width / n)]
    sec = bay.composite_section(steel_area=a_s, steel_inertia=i_s, steel_depth=d,
                                slab_width=width, slab_depth=depth, modular_ratio=n,
                                rib_height=rib)
    assert sec.inertia == pytest.approx(_strip_inertia(steel + slab), rel=1e-5)
    assert sec.transformed_slab_area == pytest.approx(width * depth / n)
    # with a slab of no stiffness the section is the steel alone
    bare = bay.composite_section(steel_area=a_s, steel_inertia=i_s, steel_depth=d,
                                 slab_width=width, slab_depth=depth, modular_ratio=1e12)
    assert bare.inertia == pytest.approx(i_s, rel=1e-9)


def test_dynamic_modular_ratio_and_slab_width():
    # ACI 318-19 Eq. 19.2.2.1.a: E_c = w^1.5·0.043·√f'c MPa; its US form 33·w^1.5·√f'c psi
    # (w in lb/ft³) gives the same within the SI constant's rounding
    e_c = bay.concrete_modulus(2320.0, 28e6)
    assert e_c == pytest.approx(2320**1.5 * 0.043 * math.sqrt(28) * 1e6, rel=1e-12)
    w_pcf, fc_psi = 2320.0 / 16.018463, 28e6 / 6894.757
    assert e_c == pytest.approx(33 * w_pcf**1.5 * math.sqrt(fc_psi) * 6894.757, rel=0.01)
    # DG11 Ch. 3 (from memory): n = E_s/(1.35 E_c)
    assert bay.dynamic_modular_ratio(200e9, 2320.0, 28e6) == pytest.approx(
        200e9 / (1.35 * e_c), rel=1e-12)
    assert bay.composite_slab_width(9.0, 3.0) == 3.0  # spacing governs
    assert bay.composite_slab_width(6.0, 3.0) == pytest.approx(2.4)  # 0.4 L governs


def test_bay_sketch_numbers():
    m = bay.bay_modes(**BAY)
    s = bay.bay_sketch(m, beam_span=9.0, girder_span=9.0, beam_spacing=3.0)
    assert s.beam_lines == (0.0, 3.0, 6.0, 9.0)
    xs = [p[0] for p in s.beam_panel]
    assert max(xs) - min(xs) == pytest.approx(m.beam_width.width)
    assert (min(xs) + max(xs)) / 2 == pytest.approx(4.5)
    ys = [p[1] for p in s.girder_panel]
    assert max(ys) - min(ys) == pytest.approx(m.girder_width.width)
    assert s.bay[0] == s.bay[-1] and s.free_edge_x is None
    edge = bay.bay_modes(**{**BAY, "bay_position": "edge"})
    assert bay.bay_sketch(edge, beam_span=9.0, girder_span=9.0, beam_spacing=3.0).free_edge_x == 0


# ------------------------------------------------------------------ footfall and equipment

def test_paces_and_impulse_coefficient():
    # Paces 75/100/125 steps per minute: from memory (DG11 2nd ed. Ch. 6 walking speeds)
    assert [equipment.pace_of(k).step_frequency for k in ("slow", "moderate", "fast")] == \
        pytest.approx([1.25, 100 / 60, 125 / 60])
    # Effective impulse (Willford, Field & Young 2007; DG11 2nd ed., from memory): Q = 168 lb
    # and Q/17.8 ≈ 42 N·s, Willford's mean coefficient
    assert equipment.IMPULSE_BODY_WEIGHT == pytest.approx(168 * LB, rel=1e-3)
    assert equipment.effective_impulse(1.0, 1.0) == pytest.approx(42.0, rel=0.002)
    assert equipment.effective_impulse(2.0, 12.0) == pytest.approx(
        2.0**1.43 / 12.0**1.30 * 747.3 / 17.8, rel=1e-12)
    with pytest.raises(method.FloorMethodError, match="slow, moderate, fast"):
        equipment.pace_of("stroll")


def test_resonant_equipment_response_is_eq_4_1_in_velocity():
    # DG11 Eq. 4-1 (see above); v = a/(2πf) and rms = peak/√2 for a sinusoid (definitions)
    walk = method.walking_response(natural_frequency=5.0, effective_weight=250e3,
                                   damping_ratio=0.03, excitation_force=290.0, limit_ratio=0.005)
    r = equipment.equipment_response(natural_frequency=5.0, effective_weight=250e3,
                                     damping_ratio=0.03, walking_pace="moderate",
                                     criterion_velocity=50e-6)
    assert r.regime == "resonant" and r.harmonic == 3
    assert r.peak_velocity == pytest.approx(walk.peak_acceleration / (2 * math.pi * 5.0))
    assert r.velocity_rms == pytest.approx(r.peak_velocity / math.sqrt(2))
    assert r.ratio_to_limit == pytest.approx(r.velocity_rms / 50e-6)
    assert r.passes is False
    assert r.modal_mass == pytest.approx(250e3 / (2 * G))
    assert any("W/(2g)" in line for line in r.limits)


def test_regime_boundary_is_the_fourth_harmonic():
    kw = dict(effective_weight=400e3, damping_ratio=0.03, criterion_velocity=50e-6)
    fast = 125 / 60
    below = equipment.equipment_response(natural_frequency=4 * fast - 1e-9, walking_pace="fast",
                                         **kw)
    above = equipment.equipment_response(natural_frequency=4 * fast + 1e-9, walking_pace="fast",
                                         **kw)
    assert (below.regime, above.regime) == ("resonant", "transient")
    assert above.harmonic == 0
    assert equipment.equipment_response(natural_frequency=9.0, walking_pace="slow",
                                        **kw).regime == "transient"
    with pytest.raises(method.OutOfMethodRange, match="80 Hz limit"):
        equipment.equipment_response(natural_frequency=90.0, walking_pace="slow", **kw)


@settings(max_examples=50, deadline=None)
@given(f=st.floats(9.5, 60.0), beta=st.floats(0.005, 0.08), step=st.floats(1.2, 2.4))
def test_footstep_rms_invariants(f, beta, step):
    # Decaying free vibration (Thomson & Dahleh Ch. 2): the rms over a step never exceeds the
    # undamped value v_p/√2 and falls as damping rises; a_ESPM = √2·ω·v_rms
    kw = dict(natural_frequency=f, effective_weight=300e3, step_frequency=step)
    r = equipment.footstep_response(damping_ratio=beta, **kw)
    more = equipment.footstep_response(damping_ratio=beta * 1.5, **kw)
    assert 0 < r.rms_factor < 1 and more.velocity_rms < r.velocity_rms
    assert r.velocity_rms <= r.peak_velocity / math.sqrt(2)
    assert r.equivalent_peak_acceleration == pytest.approx(
        math.sqrt(2) * 2 * math.pi * f * r.velocity_rms, rel=1e-12)
    assert r.peak_velocity == pytest.approx(r.impulse / (300e3 / (2 * G)), rel=1e-12)


def test_high_frequency_check_and_its_refusal():
    r = equipment.high_frequency_response(natural_frequency=12.0, effective_weight=200e3,
                                          damping_ratio=0.03, limit_ratio=0.005)
    assert r.step_frequency == 2.2  # top of DG11 Ch. 4's walking range 1.6-2.2 Hz (from memory)
    assert r.peak_acceleration_ratio == pytest.approx(r.footstep.equivalent_peak_acceleration / G)
    assert r.passes == (r.ratio_to_limit <= 1)
    with pytest.raises(method.OutOfMethodRange, match="damping ratio 0 must be positive"):
        equipment.footstep_response(natural_frequency=12.0, effective_weight=2e5,
                                    damping_ratio=0.0, step_frequency=2.0)
    with pytest.raises(method.OutOfMethodRange, match="8 Hz is not above the 9 Hz lower limit"):
        equipment.high_frequency_response(natural_frequency=8.0, effective_weight=200e3,
                                          damping_ratio=0.03, limit_ratio=0.005)


# ------------------------------------------------------------------ design rules of the modules

def _imports(path: Path) -> list[tuple[str, tuple[str, ...], int]]:
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [(a.name, (), 0) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            found.append((node.module or "", tuple(a.name for a in node.names), node.level))
    return found


@pytest.mark.parametrize("name", ["method.py", "bay.py", "equipment.py"])
def test_method_modules_import_only_standard_gravity_from_reportgen(name):
    for module, names, level in _imports(FLOOR_DIR / name):
        if level == 0 and module.split(".")[0] == "reportgen":
            assert (module, names) == ("reportgen.units", ("STANDARD_GRAVITY",)), module
        assert module.split(".")[0] not in {"numpy", "scipy", "matplotlib", "jinja2"}
