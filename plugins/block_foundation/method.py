"""The block-foundation method end to end: a rigid concrete block carrying a rotating machine
on the surface of an elastic half-space, from the stated inputs to every result and to the
numbers the design checks need.

Model (Richart, Hall & Woods 1970, Ch. 7 and 10): equivalent circular footings, constant
springs and dashpots, the springs acting at the base directly below the combined centre of
gravity; vertical and torsional motion uncoupled; sliding and rocking coupled in the plane of
the horizontal force. Everything is SI; frequencies in Hz.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.units import STANDARD_GRAVITY

from .errors import FoundationError
from .excitation import Excitation, excitation
from .geometry import (
    EquivalentRadii,
    MassProperties,
    RigidPart,
    block_part,
    cg_eccentricity,
    circular_radii,
    combine,
    cylinder_part,
    equivalent_radii,
    static_bearing_pressure,
)
from .halfspace import (
    ModeConstants,
    dimensionless_frequency,
    horizontal_constants,
    rocking_constants,
    soil_shear_modulus,
    torsional_constants,
    vertical_constants,
)
from .response import (
    CoupledResponse,
    VerticalResponse,
    coupled_frequencies,
    coupled_response,
    pole_height,
    undamped_frequency,
    vertical_response,
)

#: Band around the running speed that natural frequencies should stay out of (common
#: practice; ACI 351.3R discusses such margins).
DEFAULT_FREQUENCY_SEPARATION = 0.20
#: Foundation-to-machine mass ratio for rotating machines (common practice).
DEFAULT_MIN_MASS_RATIO = 3.0
#: Offset of the combined centre of gravity, fraction of the base dimension (common practice).
DEFAULT_MAX_ECCENTRICITY = 0.05
SHAFT_AXES = ("x", "y")


@dataclass(frozen=True, slots=True, kw_only=True)
class RockingPlane:
    """Sliding along ``axis`` coupled with rocking about the other horizontal axis."""

    axis: str
    horizontal: ModeConstants
    rocking: ModeConstants
    inertia_cg: float
    frequency_1: float
    frequency_2: float
    pole_heights: tuple[float, float]
    uncoupled_horizontal_frequency: float
    uncoupled_rocking_frequency: float


@dataclass(frozen=True, slots=True, kw_only=True)
class FoundationAnalysis:
    """Every number of the calc. Fields named like the results.json keys are those results;
    amplitudes are single (zero-to-peak) amplitudes at the running speed."""

    # what the response needs again for a sweep
    block_length: float
    block_width: float
    block_height: float
    circular_base: bool
    block_mass: float
    machine_mass: float
    machine_cg: tuple[float, float, float]
    mass_properties: MassProperties
    radii: EquivalentRadii
    shear_modulus: float
    shear_wave_velocity: float
    poisson_ratio: float
    soil_density: float
    excitation: Excitation
    force_height: float
    shaft_axis: str
    vertical: ModeConstants
    torsion: ModeConstants
    plane_x: RockingPlane
    plane_y: RockingPlane
    # results
    total_mass: float
    static_bearing_pressure: float
    vertical_stiffness: float
    vertical_damping_ratio: float
    vertical_natural_frequency: float
    vertical_amplitude: float
    horizontal_stiffness: float
    rocking_stiffness: float
    coupled_frequency_1: float
    coupled_frequency_2: float
    horizontal_amplitude: float
    torsional_natural_frequency: float
    mass_ratio: float
    cg_eccentricity: float
    # more detail for the working and the checks
    running_force: float
    vertical_phase_lag: float
    vertical_force_to_soil: float
    horizontal_amplitude_at_force: float
    rocking_amplitude: float
    bearing_amplitude: float
    bearing_velocity: float
    dimensionless_frequency: float

    @property
    def excited_plane(self) -> RockingPlane:
        """The plane of the horizontal force: perpendicular to the shaft."""
        return self.plane_x if self.shaft_axis == "y" else self.plane_y

    def results(self) -> dict[str, float]:
        """The results.json values, SI."""
        return {key: float(getattr(self, key)) for key in RESULT_KEYS}

    def natural_frequencies(self) -> tuple[tuple[str, float], ...]:
        """Every natural frequency of the block with a short name, for the separation check."""
        px, py = self.plane_x, self.plane_y
        return (("vertical", self.vertical_natural_frequency),
                ("sliding-rocking along x, mode 1", px.frequency_1),
                ("sliding-rocking along x, mode 2", px.frequency_2),
                ("sliding-rocking along y, mode 1", py.frequency_1),
                ("sliding-rocking along y, mode 2", py.frequency_2),
                ("torsion", self.torsional_natural_frequency))

    def vertical_sweep(self, frequency: float | np.ndarray) -> VerticalResponse:
        """The vertical response at other running speeds (the force follows the excitation)."""
        return vertical_response(constants=self.vertical, frequency=frequency,
                                 force=self.excitation.force_amplitude(frequency))

    def coupled_sweep(self, frequency: float | np.ndarray) -> CoupledResponse:
        """The coupled response in the plane of the horizontal force at other speeds."""
        plane = self.excited_plane
        return coupled_response(horizontal=plane.horizontal, rocking=plane.rocking,
                                mass=self.total_mass, inertia_cg=plane.inertia_cg,
                                cg_height=self.mass_properties.z, force_height=self.force_height,
                                force=self.excitation.force_amplitude(frequency),
                                frequency=frequency)


RESULT_KEYS = (
    "total_mass", "static_bearing_pressure", "vertical_stiffness", "vertical_damping_ratio",
    "vertical_natural_frequency", "vertical_amplitude", "horizontal_stiffness",
    "rocking_stiffness", "coupled_frequency_1", "coupled_frequency_2", "horizontal_amplitude",
    "torsional_natural_frequency", "mass_ratio", "cg_eccentricity",
)


def rocking_plane(*, axis: str, props: MassProperties, horizontal: ModeConstants,
                  g: float, nu: float, rho: float, rocking_radius: float) -> RockingPlane:
    """Sliding along ``axis`` ("x" or "y") and rocking about the other horizontal axis;
    B_ψ uses the inertia about the rocking axis through the base (Richart, Hall & Woods)."""
    inertia_cg = props.inertia_y if axis == "x" else props.inertia_x
    base_inertia = props.rocking_inertia_y if axis == "x" else props.rocking_inertia_x
    rocking = rocking_constants(g=g, nu=nu, rho=rho, radius=rocking_radius,
                                base_inertia=base_inertia)
    overturning = props.mass * STANDARD_GRAVITY * props.z
    if overturning >= rocking.stiffness:
        raise FoundationError(
            "shear_modulus", f"the soil is too soft to hold the block upright: its rocking"
            f" stiffness ({rocking.stiffness:.4g} N·m/rad) is below the overturning moment of"
            f" the weight per radian ({overturning:.4g} N·m/rad)")
    f1, f2 = coupled_frequencies(horizontal_stiffness=horizontal.stiffness,
                                 rocking_stiffness=rocking.stiffness, mass=props.mass,
                                 inertia_cg=inertia_cg, cg_height=props.z)
    poles = tuple(pole_height(horizontal_stiffness=horizontal.stiffness, mass=props.mass,
                              cg_height=props.z, frequency=f) for f in (f1, f2))
    return RockingPlane(axis=axis, horizontal=horizontal, rocking=rocking, inertia_cg=inertia_cg,
                        frequency_1=f1, frequency_2=f2, pole_heights=(poles[0], poles[1]),
                        uncoupled_horizontal_frequency=undamped_frequency(horizontal.stiffness,
                                                                          props.mass),
                        uncoupled_rocking_frequency=undamped_frequency(rocking.stiffness,
                                                                       base_inertia))


@dataclass(frozen=True, slots=True, kw_only=True)
class _Base:
    part: RigidPart
    radii: EquivalentRadii
    length: float  # extent along x (a circle's diameter)
    width: float  # extent along y
    area: float
    circular: bool


def _base(*, length: float | None, width: float | None, diameter: float | None,
          height: float, density: float) -> _Base:
    """A rectangular block (length and width) or a circular plinth (diameter)."""
    if diameter is not None:
        if length is not None or width is not None:
            raise FoundationError("block_diameter", "give block_diameter for a circular plinth"
                                  " or block_length and block_width, not both")
        return _Base(part=cylinder_part(diameter=diameter, height=height, density=density),
                     radii=circular_radii(diameter / 2.0), length=diameter, width=diameter,
                     area=math.pi * diameter**2 / 4.0, circular=True)
    if length is None or width is None:
        raise FoundationError("block_length", "give block_length and block_width")
    return _Base(part=block_part(length=length, width=width, height=height, density=density),
                 radii=equivalent_radii(length=length, width=width), length=length,
                 width=width, area=length * width, circular=False)


def _check_machine(*, base: _Base, cg_height: float, cg_x: float, cg_y: float,
                   force_height: float, inertias: tuple[float, float, float]) -> None:
    if not cg_height > 0.0:
        raise FoundationError("machine_cg_height",
                              "the machine's centre of gravity must be above the base")
    if base.circular and math.hypot(cg_x, cg_y) > base.length / 2.0:
        raise FoundationError("machine_cg_x", "the machine's centre of gravity is outside the"
                              f" plinth (its radius is {base.length / 2:g} m)")
    if abs(cg_x) > base.length / 2.0:
        raise FoundationError("machine_cg_x", f"{cg_x:g} m puts the machine's centre of gravity"
                              f" outside the block (half its length is {base.length / 2:g} m)")
    if abs(cg_y) > base.width / 2.0:
        raise FoundationError("machine_cg_y", f"{cg_y:g} m puts the machine's centre of gravity"
                              f" outside the block (half its width is {base.width / 2:g} m)")
    if force_height < 0.0:
        raise FoundationError("force_height", "the force cannot act below the base")
    for name, value in zip(("machine_inertia_x", "machine_inertia_y", "machine_inertia_z"),
                           inertias, strict=True):
        if value < 0.0:
            raise FoundationError(name, "a moment of inertia cannot be negative")


def analyse_block_foundation(
    *, block_height: float, concrete_density: float, machine_mass: float,
    machine_cg_height: float, poisson_ratio: float, soil_density: float, running_speed: float,
    block_length: float | None = None, block_width: float | None = None,
    block_diameter: float | None = None, shear_modulus: float | None = None,
    shear_wave_velocity: float | None = None, machine_cg_x: float = 0.0,
    machine_cg_y: float = 0.0, machine_inertia_x: float = 0.0, machine_inertia_y: float = 0.0,
    machine_inertia_z: float = 0.0, embedment_depth: float = 0.0,
    unbalance: float | None = None, balance_grade: str | None = None,
    rotor_mass: float | None = None, force_amplitude: float | None = None,
    force_height: float | None = None, shaft_axis: str = "y",
) -> FoundationAnalysis:
    """The whole calc for a rectangular block (``block_length`` along x, ``block_width``
    along y) or a circular plinth (``block_diameter``); inputs SI, speeds in Hz.

    ``shaft_axis`` "y" (default) puts the horizontal force along x (block_length) and the
    rocking about y; "x" the other way round. ``force_height`` defaults to the machine's
    centre of gravity. The machine's inertias are about its own centre of gravity (0: a
    point mass). A footing below grade (``embedment_depth`` > 0) is refused: these constants
    are for a footing on the surface.
    """
    if embedment_depth != 0.0:
        raise FoundationError(
            "embedment_depth",
            "an embedded block is not supported: the springs and dashpots of this method are"
            " for a block resting on the soil surface. Embedment stiffens the soil springs and"
            " adds damping, so a surface-footing result is not a safe stand-in for the"
            " frequency checks; set embedment_depth to 0 only where the block really sits on"
            " the surface")
    if shaft_axis not in SHAFT_AXES:
        raise FoundationError("shaft_axis", f"must be \"x\" or \"y\" (got {shaft_axis!r})")
    fh = machine_cg_height if force_height is None else force_height
    inertias = (machine_inertia_x, machine_inertia_y, machine_inertia_z)
    base = _base(length=block_length, width=block_width, diameter=block_diameter,
                 height=block_height, density=concrete_density)
    _check_machine(base=base, cg_height=machine_cg_height, cg_x=machine_cg_x, cg_y=machine_cg_y,
                   force_height=fh, inertias=inertias)
    if not machine_mass > 0.0:
        raise FoundationError("machine_mass", "must be greater than zero")
    block, radii = base.part, base.radii
    machine = RigidPart(mass=machine_mass, x=machine_cg_x, y=machine_cg_y, z=machine_cg_height,
                        inertia_x=machine_inertia_x, inertia_y=machine_inertia_y,
                        inertia_z=machine_inertia_z)
    props = combine((block, machine))
    g = soil_shear_modulus(soil_density=soil_density, shear_modulus=shear_modulus,
                           shear_wave_velocity=shear_wave_velocity)
    nu, rho = poisson_ratio, soil_density
    exc = excitation(running_speed=running_speed, unbalance=unbalance,
                     balance_grade=balance_grade, rotor_mass=rotor_mass,
                     force_amplitude=force_amplitude, machine_mass=machine_mass)

    vertical = vertical_constants(g=g, nu=nu, rho=rho, radius=radii.translation, mass=props.mass)
    horizontal = horizontal_constants(g=g, nu=nu, rho=rho, radius=radii.translation,
                                      mass=props.mass)
    plane_x = rocking_plane(axis="x", props=props, horizontal=horizontal, g=g, nu=nu, rho=rho,
                            rocking_radius=radii.rocking_y)
    plane_y = rocking_plane(axis="y", props=props, horizontal=horizontal, g=g, nu=nu, rho=rho,
                            rocking_radius=radii.rocking_x)
    torsion = torsional_constants(g=g, rho=rho, radius=radii.torsion, inertia=props.inertia_z)
    excited = plane_x if shaft_axis == "y" else plane_y

    force = exc.running_force
    vz = vertical_response(constants=vertical, force=force, frequency=running_speed)
    co = coupled_response(horizontal=horizontal, rocking=excited.rocking, mass=props.mass,
                          inertia_cg=excited.inertia_cg, cg_height=props.z, force=force,
                          force_height=fh, frequency=running_speed)
    at_force = float(co.horizontal_amplitude(fh))
    bearing = max(float(vz.amplitude), at_force)
    return FoundationAnalysis(
        block_length=base.length, block_width=base.width, block_height=block_height,
        circular_base=base.circular,
        block_mass=block.mass, machine_mass=machine_mass,
        machine_cg=(machine_cg_x, machine_cg_y, machine_cg_height), mass_properties=props,
        radii=radii,
        shear_modulus=g, shear_wave_velocity=math.sqrt(g / rho), poisson_ratio=nu,
        soil_density=rho, excitation=exc, force_height=fh, shaft_axis=shaft_axis,
        vertical=vertical, torsion=torsion, plane_x=plane_x, plane_y=plane_y,
        total_mass=props.mass,
        static_bearing_pressure=static_bearing_pressure(props.mass, base.area),
        vertical_stiffness=vertical.stiffness, vertical_damping_ratio=vertical.damping_ratio,
        vertical_natural_frequency=undamped_frequency(vertical.stiffness, props.mass),
        vertical_amplitude=float(vz.amplitude), horizontal_stiffness=horizontal.stiffness,
        rocking_stiffness=excited.rocking.stiffness, coupled_frequency_1=excited.frequency_1,
        coupled_frequency_2=excited.frequency_2,
        horizontal_amplitude=float(co.horizontal_amplitude(block_height)),
        torsional_natural_frequency=undamped_frequency(torsion.stiffness, props.inertia_z),
        mass_ratio=block.mass / machine_mass,
        cg_eccentricity=cg_eccentricity(props, length=base.length, width=base.width),
        running_force=force, vertical_phase_lag=float(vz.phase_lag),
        vertical_force_to_soil=float(vz.force_to_soil), horizontal_amplitude_at_force=at_force,
        rocking_amplitude=float(co.rocking_amplitude()), bearing_amplitude=bearing,
        bearing_velocity=2.0 * math.pi * running_speed * bearing,
        dimensionless_frequency=dimensionless_frequency(frequency=running_speed,
                                                        radius=radii.translation, g=g, rho=rho),
    )


def frequency_separation(natural_frequency: float | np.ndarray,
                         running_speed: float) -> float | np.ndarray:
    """|f_n − f_run|/f_run: how far a natural frequency lies from the running speed, as a
    fraction of it; the check asks for at least the stated band (default 0.20)."""
    sep = np.abs(np.asarray(natural_frequency, dtype=float) - running_speed) / running_speed
    return float(sep) if np.ndim(sep) == 0 else sep


def separation_band(running_speed: float,
                    band: float = DEFAULT_FREQUENCY_SEPARATION) -> tuple[float, float]:
    """The speeds no natural frequency should fall between: f_run·(1 ∓ band)."""
    return running_speed * (1.0 - band), running_speed * (1.0 + band)


def rms_from_peak(peak: float) -> float:
    """A steady sinusoid's rms value is its peak over √2."""
    return peak / math.sqrt(2.0)
