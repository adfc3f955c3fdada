"""floor_walking bay route: the beam and girder panel modes of a steel-framed bay (DG11 Ch. 3–4).

Owns each step from the area load to f_n and W (deflections, frequencies, effective widths,
panel weights, their combination) and the composite section with the dynamic modular ratio.

Source: AISC Steel Design Guide 11, 2nd ed. (2016) ("DG11"): Ch. 3 (natural frequency of
beams and of the combined mode), Ch. 4 (effective panel weights). Concrete modulus:
ACI 318-19 §19.2.2.1.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportgen.units import STANDARD_GRAVITY

from .method import FloorMethodError, require_positive

__all__ = [
    "BEAM_COEFFICIENTS",
    "GIRDER_COEFFICIENTS",
    "BayModes",
    "BaySketch",
    "CompositeSection",
    "EffectiveWidth",
    "bay_modes",
    "bay_sketch",
    "combined_frequency",
    "combined_weight",
    "composite_section",
    "composite_slab_width",
    "concrete_modulus",
    "dynamic_modular_ratio",
    "effective_width",
    "frequency_from_deflection",
    "girder_deflection_factor",
    "line_load",
    "midspan_deflection",
    "panel_weight",
    "slab_stiffness",
    "stiffness_per_width",
]

_METHOD = "bay method (DG11 Ch. 3-4)"
#: DG11 Eq. 3-3: f = 0.18·√(g/Δ); the exact value for a uniform simply supported beam is
#: (π/2)·√(5/384) = 0.1792, so the guide's frequencies are 0.42 % higher.
FREQUENCY_COEFFICIENT = 0.18
#: DG11 Ch. 4, C_j: 2.0 for beams in most areas, 1.0 for beams parallel to a free (edge) side.
BEAM_COEFFICIENTS = {"interior": 2.0, "edge": 1.0}
#: DG11 Ch. 4, C_g: 1.8 for girders supporting beams framed into the girder web, 1.6 for
#: girders supporting joists seated on the girder flange.
GIRDER_COEFFICIENTS = {"web": 1.8, "flange": 1.6}
#: DG11 Ch. 4: B_j ≤ 2/3 of the floor width, B_g ≤ 2/3 of the floor length.
WIDTH_LIMIT_FRACTION = 2.0 / 3.0
#: DG11 Ch. 4: W_j may be raised 50 % for beams continuous over their supports (when an adjacent
#: span is at least 0.7 times the span considered).
CONTINUITY_FACTOR = 1.5
#: DG11 Ch. 3: the dynamic stiffness of concrete is taken as 1.35 times its static modulus.
DYNAMIC_CONCRETE_FACTOR = 1.35


def line_load(area_load: float, tributary_width: float) -> float:
    """Uniform load on a member from the supported area load (DG11 Ch. 3–4):

        w_j = w·S for a beam at spacing S;  w_g = w·L_j for an interior girder carrying the
        beams' reactions smeared as a uniform load (beams of span L_j on both sides).
    """
    return area_load * tributary_width


def midspan_deflection(load: float, span: float, elastic_modulus: float,
                       inertia: float) -> float:
    """Midspan deflection of a simply supported member under a uniform load (DG11 Eq. 3-2):

        Δ = 5·w·L⁴/(384·E_s·I)
    """
    require_positive("member span", span, "m", _METHOD)
    require_positive("moment of inertia", inertia, "m^4", _METHOD)
    require_positive("elastic modulus", elastic_modulus, "Pa", _METHOD)
    return 5.0 * load * span**4 / (384.0 * elastic_modulus * inertia)


def frequency_from_deflection(deflection: float) -> float:
    """Natural frequency of a panel mode from its deflection under its supported load
    (DG11 Eq. 3-3): f = 0.18·√(g/Δ)."""
    require_positive("deflection", deflection, "m", _METHOD)
    return FREQUENCY_COEFFICIENT * math.sqrt(STANDARD_GRAVITY / deflection)


def combined_frequency(beam_deflection: float, girder_deflection: float) -> float:
    """Fundamental frequency of the combined beam–girder mode (DG11 Ch. 3, the deflection
    form of Dunkerley's 1/f_n² = 1/f_j² + 1/f_g²):

        f_n = 0.18·√(g/(Δ_j + Δ_g))
    """
    return frequency_from_deflection(beam_deflection + girder_deflection)


def slab_stiffness(slab_depth: float, modular_ratio: float) -> float:
    """Transformed moment of inertia of the slab per unit width (DG11 Ch. 4):
    D_s = d_e³/(12·n), d_e the effective slab depth, n the dynamic modular ratio."""
    require_positive("slab depth", slab_depth, "m", _METHOD)
    require_positive("modular ratio", modular_ratio, "", _METHOD)
    return slab_depth**3 / (12.0 * modular_ratio)


def stiffness_per_width(inertia: float, width: float) -> float:
    """Member moment of inertia per unit width of floor (DG11 Ch. 4): D_j = I_j/S for beams at
    spacing S; D_g = I_g/L_j for an interior girder."""
    require_positive("tributary width", width, "m", _METHOD)
    return inertia / width


@dataclass(frozen=True, slots=True, kw_only=True)
class EffectiveWidth:
    """A panel's effective width before and after the guide's limit."""

    width: float  # the width used, m
    unlimited: float  # C·(D_a/D_b)^¼·L, m
    limit: float | None  # 2/3 of the floor dimension, None when that dimension was not given
    limited: bool  # True when the limit governs


def effective_width(coefficient: float, stiffness_ratio: float, span: float,
                    floor_dimension: float | None = None) -> EffectiveWidth:
    """Effective width of a panel mode (DG11 Ch. 4):

        B_j = C_j·(D_s/D_j)^¼·L_j ≤ ⅔·(floor width)
        B_g = C_g·(D_j/D_g)^¼·L_g ≤ ⅔·(floor length)
    """
    require_positive("stiffness ratio", stiffness_ratio, "", _METHOD)
    unlimited = coefficient * stiffness_ratio**0.25 * span
    if floor_dimension is None:
        return EffectiveWidth(width=unlimited, unlimited=unlimited, limit=None, limited=False)
    require_positive("floor dimension", floor_dimension, "m", _METHOD)
    limit = WIDTH_LIMIT_FRACTION * floor_dimension
    return EffectiveWidth(width=min(unlimited, limit), unlimited=unlimited, limit=limit,
                          limited=unlimited > limit)


def panel_weight(area_load: float, width: float, span: float, factor: float = 1.0) -> float:
    """Effective panel weight (DG11 Ch. 4): W = (w_m/t)·B·L = w·B·L, w_m/t being the member's
    load over its tributary width; times 1.5 for beams continuous over their supports."""
    return factor * area_load * width * span


def girder_deflection_factor(girder_span: float, beam_panel_width: float) -> float:
    """DG11 Ch. 4: when the girder span is less than the beam panel width the combined mode is
    restrained; Δ_g is reduced to (L_g/B_j)·Δ_g with 0.5 ≤ L_g/B_j ≤ 1.0."""
    return min(1.0, max(0.5, girder_span / beam_panel_width))


def combined_weight(beam_deflection: float, girder_deflection: float, beam_weight: float,
                    girder_weight: float) -> float:
    """Effective weight of the combined mode (DG11 Ch. 4):

        W = Δ_j/(Δ_j + Δ_g)·W_j + Δ_g/(Δ_j + Δ_g)·W_g
    """
    total = beam_deflection + girder_deflection
    require_positive("total deflection", total, "m", _METHOD)
    return (beam_deflection * beam_weight + girder_deflection * girder_weight) / total


# ------------------------------------------------------------------ composite section

def concrete_modulus(concrete_density: float, concrete_strength: float) -> float:
    """Static modulus of concrete, ACI 318-19 Eq. 19.2.2.1.a in SI:
    E_c = w_c^1.5·0.043·√f'c (MPa) with w_c in kg/m³ (1440–2560) and f'c in MPa."""
    require_positive("concrete density", concrete_density, "kg/m^3", "concrete modulus")
    require_positive("concrete strength", concrete_strength, "Pa", "concrete modulus")
    mpa = concrete_density**1.5 * 0.043 * math.sqrt(concrete_strength / 1e6)
    return mpa * 1e6


def dynamic_modular_ratio(elastic_modulus: float, concrete_density: float,
                          concrete_strength: float) -> float:
    """Dynamic modular ratio of DG11 Ch. 3: n = E_s/(1.35·E_c), the concrete being stiffer
    under small vibration than under sustained load."""
    return elastic_modulus / (DYNAMIC_CONCRETE_FACTOR
                              * concrete_modulus(concrete_density, concrete_strength))


def composite_slab_width(span: float, spacing: float) -> float:
    """Effective slab width of a composite member for vibration (DG11 Ch. 3): the member
    spacing, but not more than 0.4 times the span."""
    return min(0.4 * span, spacing)


@dataclass(frozen=True, slots=True, kw_only=True)
class CompositeSection:
    """Transformed (uncracked) composite section, measured from the steel's bottom face."""

    inertia: float  # I_t, m⁴
    neutral_axis: float  # ȳ above the steel's bottom face, m
    transformed_slab_area: float  # b·d_e/n, m²
    slab_centroid: float  # m above the steel's bottom face


def composite_section(*, steel_area: float, steel_inertia: float, steel_depth: float,
                      slab_width: float, slab_depth: float, modular_ratio: float,
                      rib_height: float = 0.0) -> CompositeSection:
    """Fully composite transformed moment of inertia with the dynamic modular ratio (DG11 Ch. 3:
    full composite action and the whole effective slab depth, uncracked, for the small strains
    of vibration), by the transformed-section method of mechanics of materials:

        A_c = b·d_e/n,  y_c = d + h_r + d_e/2,  ȳ = (A_s·d/2 + A_c·y_c)/(A_s + A_c)
        I_t = I_s + A_s·(ȳ − d/2)² + (b/n)·d_e³/12 + A_c·(y_c − ȳ)²

    with the concrete in the deck ribs (height h_r) ignored; a symmetric steel section.
    """
    for name, value, unit in (("steel area", steel_area, "m^2"),
                              ("steel moment of inertia", steel_inertia, "m^4"),
                              ("steel depth", steel_depth, "m"),
                              ("slab width", slab_width, "m"), ("slab depth", slab_depth, "m"),
                              ("modular ratio", modular_ratio, "")):
        require_positive(name, value, unit, "composite section")
    if rib_height < 0.0:
        raise FloorMethodError(f"deck rib height {rib_height} m must not be negative")
    a_c = slab_width * slab_depth / modular_ratio
    y_s = steel_depth / 2.0
    y_c = steel_depth + rib_height + slab_depth / 2.0
    y_bar = (steel_area * y_s + a_c * y_c) / (steel_area + a_c)
    inertia = (steel_inertia + steel_area * (y_bar - y_s) ** 2
               + a_c * slab_depth**2 / 12.0 + a_c * (y_c - y_bar) ** 2)
    return CompositeSection(inertia=inertia, neutral_axis=y_bar, transformed_slab_area=a_c,
                            slab_centroid=y_c)


# ------------------------------------------------------------------ the whole bay

@dataclass(frozen=True, slots=True, kw_only=True)
class BayModes:
    """Every intermediate value of the bay route, in the order the package prints them (SI)."""

    area_load: float  # w = dead + live present, Pa
    beam_load: float  # w_j, N/m
    girder_load: float  # w_g, N/m
    beam_deflection: float  # Δ_j, m
    girder_deflection: float  # Δ_g, m (before any reduction)
    girder_deflection_factor: float  # L_g/B_j within [0.5, 1], 1 when L_g ≥ B_j
    girder_deflection_used: float  # Δ_g used in f_n and W, m
    beam_frequency: float  # f_j, Hz
    girder_frequency: float  # f_g, Hz (from Δ_g before any reduction)
    natural_frequency: float  # f_n, Hz
    slab_stiffness: float  # D_s, m⁴/m
    beam_stiffness: float  # D_j, m⁴/m
    girder_stiffness: float  # D_g, m⁴/m
    beam_coefficient: float  # C_j
    girder_coefficient: float  # C_g
    beam_width: EffectiveWidth  # B_j
    girder_width: EffectiveWidth  # B_g
    continuity_factor: float  # 1.0 or 1.5 on W_j
    beam_weight: float  # W_j, N
    girder_weight: float  # W_g, N
    effective_weight: float  # W, N
    bay_position: str
    girder_connection: str


def bay_modes(*, beam_span: float, beam_spacing: float, beam_inertia: float,
              girder_span: float, girder_inertia: float, elastic_modulus: float,
              dead_load: float, live_load_present: float, slab_depth: float,
              modular_ratio: float, bay_position: str = "interior",
              girder_connection: str = "web", floor_width: float | None = None,
              floor_length: float | None = None, beams_continuous: bool = False) -> BayModes:
    """f_n and W of a bay of beams on girders, step by step (DG11 Ch. 3–4): see each helper.

    ``bay_position`` 'edge' means the bay lies along a free edge parallel to the beams (C_j = 1.0);
    the girder panel of such a bay is taken as interior. ``floor_width`` is the floor's extent
    across the beams and ``floor_length`` along them; when given they cap B_j and B_g at ⅔.
    """
    try:
        c_j = BEAM_COEFFICIENTS[bay_position]
    except KeyError:
        raise FloorMethodError(f"unknown bay position {bay_position!r}; expected one of"
                               f" {', '.join(BEAM_COEFFICIENTS)}") from None
    try:
        c_g = GIRDER_COEFFICIENTS[girder_connection]
    except KeyError:
        raise FloorMethodError(f"unknown girder connection {girder_connection!r}; expected"
                               f" one of {', '.join(GIRDER_COEFFICIENTS)}") from None
    area = dead_load + live_load_present
    require_positive("supported load (dead + live present)", area, "Pa", _METHOD)
    w_j = line_load(area, beam_spacing)
    w_g = line_load(area, beam_span)
    d_j = midspan_deflection(w_j, beam_span, elastic_modulus, beam_inertia)
    d_g = midspan_deflection(w_g, girder_span, elastic_modulus, girder_inertia)
    ds = slab_stiffness(slab_depth, modular_ratio)
    dj = stiffness_per_width(beam_inertia, beam_spacing)
    dg = stiffness_per_width(girder_inertia, beam_span)
    b_j = effective_width(c_j, ds / dj, beam_span, floor_width)
    b_g = effective_width(c_g, dj / dg, girder_span, floor_length)
    factor = girder_deflection_factor(girder_span, b_j.width)
    d_g_used = factor * d_g
    continuity = CONTINUITY_FACTOR if beams_continuous else 1.0
    weight_j = panel_weight(area, b_j.width, beam_span, continuity)
    weight_g = panel_weight(area, b_g.width, girder_span)
    return BayModes(
        area_load=area, beam_load=w_j, girder_load=w_g, beam_deflection=d_j,
        girder_deflection=d_g, girder_deflection_factor=factor,
        girder_deflection_used=d_g_used, beam_frequency=frequency_from_deflection(d_j),
        girder_frequency=frequency_from_deflection(d_g),
        natural_frequency=combined_frequency(d_j, d_g_used), slab_stiffness=ds,
        beam_stiffness=dj, girder_stiffness=dg, beam_coefficient=c_j, girder_coefficient=c_g,
        beam_width=b_j, girder_width=b_g, continuity_factor=continuity, beam_weight=weight_j,
        girder_weight=weight_g,
        effective_weight=combined_weight(d_j, d_g_used, weight_j, weight_g),
        bay_position=bay_position, girder_connection=girder_connection)


# ------------------------------------------------------------------ sketch data

Outline = tuple[tuple[float, float], ...]


@dataclass(frozen=True, slots=True, kw_only=True)
class BaySketch:
    """Plan of one bay for a figure, as closed outlines (x across the beams, along the
    girders; y along the beams), m. Girders lie on y = 0 and y = L_j, beams on x = k·S."""

    bay: Outline
    beam_lines: tuple[float, ...]  # x of each beam in the bay, column lines included
    beam_panel: Outline  # B_j × L_j
    girder_panel: Outline  # L_g × B_g, centred on the girder at y = 0
    beam_panel_width: float
    girder_panel_width: float
    free_edge_x: float | None  # x of the free edge of an edge bay


def _rectangle(x0: float, y0: float, x1: float, y1: float) -> Outline:
    return ((x0, y0), (x1, y0), (x1, y1), (x0, y1), (x0, y0))


def bay_sketch(modes: BayModes, *, beam_span: float, girder_span: float,
               beam_spacing: float) -> BaySketch:
    """The numbers a plan sketch of the bay with its effective widths needs. An interior beam
    panel is centred on the bay; an edge panel starts at the free edge (x = 0)."""
    count = max(1, round(girder_span / beam_spacing))
    lines = tuple(girder_span * k / count for k in range(count + 1))
    b_j, b_g = modes.beam_width.width, modes.girder_width.width
    if modes.bay_position == "edge":
        beam_panel, edge = _rectangle(0.0, 0.0, b_j, beam_span), 0.0
    else:
        x0 = (girder_span - b_j) / 2.0
        beam_panel, edge = _rectangle(x0, 0.0, x0 + b_j, beam_span), None
    return BaySketch(bay=_rectangle(0.0, 0.0, girder_span, beam_span), beam_lines=lines,
                     beam_panel=beam_panel,
                     girder_panel=_rectangle(0.0, -b_g / 2.0, girder_span, b_g / 2.0),
                     beam_panel_width=b_j, girder_panel_width=b_g, free_edge_x=edge)
