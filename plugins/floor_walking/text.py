"""floor_walking's wording: assumptions, the method, where f_n and W came from, the damping
choice, the method's limits and the cautions."""

from __future__ import annotations

from reportgen.units import format_number

from .method import DAMPING_DEFAULTS, LOW_FREQUENCY_LIMIT

METHOD = (
    "Walking excitation of a low-frequency floor by the design guide's Chapter 4 method: the"
    " floor's fundamental mode is driven at resonance by one harmonic of a person walking,"
    " and its peak acceleration a_p/g = P0·exp(−0.35 f_n)/(β·W) is compared with the"
    " tolerance a0/g of the occupancy (the guide's Table 4-1). P0 is 0.29 kN for floors and"
    " 0.41 kN for footbridges, used exactly. The method holds for floors of fundamental"
    f" frequency up to {format_number(LOW_FREQUENCY_LIMIT, 2)} Hz; a higher floor is refused,"
    " never given a low-frequency result. Values are substituted in coherent SI units"
    " (g_n = 9.80665 m/s²).")

BAY_METHOD = (
    "The bay's fundamental frequency and effective weight follow the guide's Chapters 3 and 4:"
    " each member's midspan deflection under the load it carries in service (dead load and"
    " the live load present) gives its panel-mode frequency f = 0.18·√(g/Δ); the combined"
    " beam-and-girder mode has f_n = 0.18·√(g/(Δ_j + Δ_g)). Each panel's effective width"
    " comes from the ratio of the slab's transformed stiffness to the member's stiffness per"
    " unit width; the combined effective weight weights the two panel weights by their"
    " deflections.")

DIRECT = ("The natural frequency and effective weight are stated in the job file (computed"
          " elsewhere, for example by a finite-element model of the floor) and are used as"
          " given; their source is listed beside them in the inputs table.")


def assumptions(bay: bool, damping_note: str) -> tuple[str, ...]:
    items = [
        "The floor responds in its fundamental mode; the walker and the receiver are at the"
        " point of largest motion (the centre of the bay).",
        "Resonant build-up under continuous walking at a pace whose harmonic matches f_n"
        " (the guide's basis for floors up to 9 Hz).",
        damping_note,
    ]
    if bay:
        items += [
            "Beams and girders simply supported, with full composite action for the small"
            " strains of vibration (the guide's practice); the concrete's dynamic modulus"
            " is 1.35 times its static modulus.",
            "The girder carries the beams' reactions as a uniform load; repeated bays (the"
            " guide's interior-bay rules) unless the bay is stated to be at an edge.",
        ]
    return tuple(items)


def damping_note(given_ratio: bool, fit_out: str, beta: float) -> str:
    if given_ratio:
        return (f"Modal damping ratio β = {format_number(beta, 3)} as stated in the job"
                " file.")
    d = DAMPING_DEFAULTS[fit_out]
    return (f"Modal damping ratio β = {format_number(beta, 3)}: the guide's recommended value"
            f" for the fit-out '{fit_out}' ({d.description.lower()}); {d.source}. To be"
            " confirmed against the fit-out the building will have in service.")


FREQUENCY_REFUSED = (
    "is above the {limit} Hz limit of the low-frequency walking method (design guide"
    " Eq. 4-1): such a floor does not build up a resonant response to walking and needs the"
    " high-frequency footstep method, which this calc type does not apply. Check the floor by"
    " that method (or by a finite-element footfall analysis) instead")

CAUTIONS = (
    "This calculation applies the design guide's walking method as a check of the stated"
    " floor. It does not replace the judgement of the structural engineer of record, who is"
    " responsible for the floor's design; defer to the guide itself, to the local code and"
    " to licensed practice where they differ from what is printed here.",
    "The result depends strongly on the damping ratio and on the effective weight. Damping"
    " assumed for a fit-out that is not built (partitions, ceilings, furnishings) overstates"
    " the floor's performance; confirm the fit-out before relying on the margin.",
    "Rhythmic activities (aerobics, dancing, crowds jumping) and sensitive equipment are"
    " separate checks with their own excitation and criteria.",
)

EQUIPMENT_PURPOSE = ("Predict the floor's vibration velocity under a person walking near the"
                     " sensitive equipment and compare it with the equipment's criterion.")

CRITERION_CAUTION = (
    "Sensitive equipment: the prediction rests on estimated floor properties; confirm the"
    " instrument maker's stated floor criterion, and measure the built floor where the"
    " margin is small.")
