"""Mass properties of a block plus machine, and the equivalent radii of the block's base.

Axes: x along block_length, y along block_width, z up from the centre of the base; all
inertias are about axes parallel to these. Pure functions over SI floats.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from reportgen.units import STANDARD_GRAVITY

from .errors import FoundationError


@dataclass(frozen=True, slots=True, kw_only=True)
class RigidPart:
    """A rigid body: mass, centre of gravity (x, y from the base centre, z above the base)
    and mass moments of inertia about axes through its own centre of gravity."""

    mass: float
    x: float = 0.0
    y: float = 0.0
    z: float = 0.0
    inertia_x: float = 0.0
    inertia_y: float = 0.0
    inertia_z: float = 0.0


@dataclass(frozen=True, slots=True, kw_only=True)
class MassProperties:
    """Block plus machine as one rigid body.

    ``inertia_*`` are about axes through the combined centre of gravity; ``rocking_inertia_*``
    about the parallel horizontal axis in the base plane directly below it (I + m·z²).
    """

    mass: float
    x: float
    y: float
    z: float
    inertia_x: float
    inertia_y: float
    inertia_z: float
    rocking_inertia_x: float
    rocking_inertia_y: float


@dataclass(frozen=True, slots=True, kw_only=True)
class EquivalentRadii:
    """Radii of the circles that stand in for a rectangular base, one per motion.

    ``rocking_x`` is for rocking about the x axis (the width in the plane of rocking),
    ``rocking_y`` for rocking about the y axis (the length in the plane of rocking).
    """

    translation: float
    rocking_x: float
    rocking_y: float
    torsion: float


def block_part(*, length: float, width: float, height: float, density: float) -> RigidPart:
    """A solid rectangular concrete block resting on the base plane, centred on the origin.

    m = ρ·L·B·H; I_x = m(B² + H²)/12, I_y = m(L² + H²)/12, I_z = m(L² + B²)/12 about its
    centroid (rectangular prism; any dynamics text, e.g. Meriam & Kraige, Dynamics, App. B).
    """
    for name, value in (("block_length", length), ("block_width", width),
                        ("block_height", height), ("concrete_density", density)):
        if not value > 0.0:
            raise FoundationError(name, f"must be greater than zero (got {value:g})")
    m = density * length * width * height
    return RigidPart(mass=m, x=0.0, y=0.0, z=height / 2.0,
                     inertia_x=m * (width**2 + height**2) / 12.0,
                     inertia_y=m * (length**2 + height**2) / 12.0,
                     inertia_z=m * (length**2 + width**2) / 12.0)


def cylinder_part(*, diameter: float, height: float, density: float) -> RigidPart:
    """A solid circular plinth on the base plane: m = ρ·π·r²·H; I_x = I_y = m(3r² + H²)/12,
    I_z = m·r²/2 about its centroid (solid cylinder; any dynamics text)."""
    for name, value in (("block_diameter", diameter), ("block_height", height),
                        ("concrete_density", density)):
        if not value > 0.0:
            raise FoundationError(name, f"must be greater than zero (got {value:g})")
    r = diameter / 2.0
    m = density * math.pi * r * r * height
    i_diam = m * (3.0 * r * r + height**2) / 12.0
    return RigidPart(mass=m, z=height / 2.0, inertia_x=i_diam, inertia_y=i_diam,
                     inertia_z=m * r * r / 2.0)


def combine(parts: Sequence[RigidPart]) -> MassProperties:
    """One rigid body from several: the mass-weighted centre of gravity and the parallel-axis
    theorem, I = Σ(I_i + m_i·d_i²), d_i the distance between parallel axes (any dynamics text).

    Products of inertia that offsets create are left out: the lumped model treats the
    principal axes as parallel to the block's, which the eccentricity check keeps true enough.
    """
    m = sum(p.mass for p in parts)
    if not m > 0.0:
        raise FoundationError("machine_mass", "the block and machine have no mass")
    x = sum(p.mass * p.x for p in parts) / m
    y = sum(p.mass * p.y for p in parts) / m
    z = sum(p.mass * p.z for p in parts) / m
    ix = sum(p.inertia_x + p.mass * ((p.y - y) ** 2 + (p.z - z) ** 2) for p in parts)
    iy = sum(p.inertia_y + p.mass * ((p.x - x) ** 2 + (p.z - z) ** 2) for p in parts)
    iz = sum(p.inertia_z + p.mass * ((p.x - x) ** 2 + (p.y - y) ** 2) for p in parts)
    return MassProperties(mass=m, x=x, y=y, z=z, inertia_x=ix, inertia_y=iy, inertia_z=iz,
                          rocking_inertia_x=ix + m * z * z, rocking_inertia_y=iy + m * z * z)


def equivalent_radii(*, length: float, width: float) -> EquivalentRadii:
    """Equivalent radii of an L × B rectangle (Richart, Hall & Woods 1970, Ch. 10):

    translation r = √(B·L/π) (equal area); rocking r = (B·L³/(3π))^¼ with L the side in the
    plane of rocking (equal second moment of area, πr⁴/4 = B·L³/12); torsion
    r = (B·L·(B² + L²)/(6π))^¼ (equal polar moment, πr⁴/2 = B·L·(B² + L²)/12).
    """
    if not (length > 0.0 and width > 0.0):
        raise FoundationError("block_length", "the base must have a positive length and width")
    return EquivalentRadii(
        translation=math.sqrt(length * width / math.pi),
        rocking_x=(length * width**3 / (3.0 * math.pi)) ** 0.25,
        rocking_y=(width * length**3 / (3.0 * math.pi)) ** 0.25,
        torsion=(length * width * (length**2 + width**2) / (6.0 * math.pi)) ** 0.25,
    )


def circular_radii(radius: float) -> EquivalentRadii:
    """A circular base is its own equivalent circle for every motion."""
    if not radius > 0.0:
        raise FoundationError("footing_radius", "must be greater than zero")
    return EquivalentRadii(translation=radius, rocking_x=radius, rocking_y=radius,
                           torsion=radius)


def cg_eccentricity(props: MassProperties, *, length: float, width: float) -> float:
    """Horizontal offset of the combined centre of gravity from the centre of the base as a
    fraction of the base dimension in that direction; the larger of x/L and y/B."""
    return max(abs(props.x) / length, abs(props.y) / width)


def static_bearing_pressure(mass: float, area: float) -> float:
    """Average static pressure under the base, q = m·g_n/A (statics)."""
    return mass * STANDARD_GRAVITY / area
