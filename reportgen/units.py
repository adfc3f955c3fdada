"""Units at the edges: parse quantity strings from job files into SI floats, and
convert SI floats into the display system (SI or US customary) for rendering.

Everything between loading and rendering is plain SI floats. The core knows
physical dimensions, not vibration.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

__all__ = [
    "DIMENSIONS",
    "Dimension",
    "STANDARD_GRAVITY",
    "Spread",
    "UnitProblem",
    "display",
    "format_number",
    "parse_quantity",
    "parse_spread",
]

#: Standard gravity, m/s² (CGPM 1901, ISO 80000-3).
STANDARD_GRAVITY = 9.80665


@dataclass(frozen=True, slots=True)
class Dimension:
    """A physical dimension an input or result may have."""

    name: str
    si_unit: str  # unit of the SI value (results.json), pint syntax
    si_label: str  # how the SI unit is printed
    us_unit: str
    us_label: str
    example: str  # an example unit for error messages
    pint_dimensionality: str  # as pint prints it, "" for dimensionless


DIMENSIONS: dict[str, Dimension] = {
    d.name: d
    for d in (
        Dimension("dimensionless", "", "", "", "", "a plain number such as 0.05", ""),
        Dimension("mass", "kg", "kg", "lb", "lb", "kg", "[mass]"),
        Dimension("length", "m", "m", "in", "in", "mm", "[length]"),
        Dimension("time", "s", "s", "s", "s", "s", "[time]"),
        Dimension("force", "N", "N", "lbf", "lbf", "kN", "[length] * [mass] / [time] ** 2"),
        Dimension("stiffness", "N/m", "N/m", "lbf/in", "lbf/in", "kN/m",
                  "[mass] / [time] ** 2"),
        Dimension("damping", "N*s/m", "N·s/m", "lbf*s/in", "lbf·s/in", "N*s/m",
                  "[mass] / [time]"),
        Dimension("velocity", "m/s", "m/s", "in/s", "in/s", "mm/s", "[length] / [time]"),
        Dimension("acceleration", "m/s**2", "m/s²", "in/s**2", "in/s²", "m/s**2 or g",
                  "[length] / [time] ** 2"),
        Dimension("frequency", "Hz", "Hz", "Hz", "Hz", "Hz or rpm", "1 / [time]"),
        Dimension("angular_frequency", "rad/s", "rad/s", "rad/s", "rad/s", "rad/s",
                  "1 / [time]"),
        Dimension("angle", "rad", "rad", "deg", "°", "deg", ""),
        Dimension("mass_length", "kg*m", "kg·m", "lb*in", "lb·in", "kg*m or g*mm",
                  "[length] * [mass]"),
        Dimension("moment", "N*m", "N·m", "lbf*in", "lbf·in", "kN*m",
                  "[length] ** 2 * [mass] / [time] ** 2"),
        Dimension("rotational_stiffness", "N*m/rad", "N·m/rad", "lbf*in/rad", "lbf·in/rad",
                  "kN*m/rad", "[length] ** 2 * [mass] / [time] ** 2"),
        Dimension("moment_of_inertia", "kg*m**2", "kg·m²", "lb*in**2", "lb·in²", "kg*m**2",
                  "[length] ** 2 * [mass]"),
        Dimension("pressure", "Pa", "Pa", "psi", "psi", "kPa", "[mass] / [length] / [time] ** 2"),
        Dimension("density", "kg/m**3", "kg/m³", "lb/ft**3", "lb/ft³", "kg/m**3",
                  "[mass] / [length] ** 3"),
        Dimension("area", "m**2", "m²", "in**2", "in²", "m**2", "[length] ** 2"),
        Dimension("second_moment_of_area", "m**4", "m⁴", "in**4", "in⁴", "mm**4",
                  "[length] ** 4"),
        Dimension("force_per_length", "N/m", "N/m", "lbf/ft", "lbf/ft", "kN/m",
                  "[mass] / [time] ** 2"),
    )
}


class UnitProblem(ValueError):
    """A quantity string that cannot be read as the expected dimension."""


@lru_cache(maxsize=1)
def _registry():  # pint is imported lazily: start-up stays fast
    import sys

    # pint probes optional array libraries when imported; dask (installed for the
    # distributed engine) alone costs ~0.25 s. Job files hold plain numbers, so dask
    # is hidden while pint loads and importable again afterwards.
    hidden = "dask" not in sys.modules
    if hidden:
        sys.modules["dask"] = None  # type: ignore[assignment]
    try:
        import pint
    finally:
        if hidden:
            sys.modules.pop("dask", None)
    # pint's own parse of its definitions file (~0.2 s) is cached beside reportgen's
    # caches; flexcache keys it by the file's content. Any problem: parse afresh.
    try:
        from reportgen.store import default_cache_dir

        folder = default_cache_dir() / "pint"
        folder.mkdir(parents=True, exist_ok=True)
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
    except Exception:
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


_SPEED_UNITS = re.compile(r"\b(rpm|rps|rev|revolution|revolutions|cpm)\b")
_GRAVITY_TOKEN = re.compile(r"(?<![\w.])g(?![\w])")


def _prepare(text: str, dimension: str) -> str:
    text = text.strip()
    if dimension == "acceleration":
        # "0.1 g" for an acceleration is standard gravity, not grams.
        text = _GRAVITY_TOKEN.sub("g_0", text)
    if dimension == "frequency":
        # pint converts rpm through radians (1500 rpm -> 157 Hz); a speed in rpm
        # is revolutions per minute (1500 rpm = 25 Hz). Rewrite to plain cycles.
        text = _SPEED_UNITS.sub(
            lambda m: {"rpm": "(1/minute)", "cpm": "(1/minute)", "rps": "(1/second)"}.get(
                m.group(1), "1"),
            text,
        )
    return text


_TO = re.compile(r"^(?P<a>.+?)\s+to\s+(?P<b>.+)$", re.IGNORECASE)
_PLUS_MINUS = re.compile(r"^(?P<v>.*?)\s*(?:±|\+/-|\+-)\s*(?P<t>.+)$")
_ASYMMETRIC = re.compile(r"^\s*\+\s*(?P<p>[^/]+?)\s*/\s*-\s*(?P<m>.+?)\s*$")
_PERCENT = re.compile(r"^\s*(?P<n>[0-9.eE+-]+)\s*(?:%|percent)\s*$")


@dataclass(frozen=True, slots=True)
class Spread:
    """A value given with its spread: a range ("900 to 1800 rpm", nominal mid-range) or a
    tolerance ("350 kN/m ± 15 %", "+10 % / -5 %", "± 0.5 mm"; nominal the stated value).
    SI values; ``text`` as written."""

    nominal: float
    low: float
    high: float
    kind: str  # "range" | "tolerance"
    text: str


def parse_spread(raw: object, dimension: str, tolerance: object = None) -> Spread | None:
    """Read a range or a tolerance, or return None when ``raw`` is a plain value (and no
    ``tolerance`` is given separately). Raises UnitProblem naming what is wrong: a range
    whose ends are in the wrong order, a tolerance that is not a percentage or a quantity
    of the same dimension, a relative tolerance of 100 % or more."""
    if isinstance(raw, str):
        m = _TO.match(raw.strip())
        if m and tolerance is None:
            a_text, b_text = m.group("a"), m.group("b")
            b = parse_quantity(b_text, dimension)
            unit = b_text.strip()[_leading_number_end(b_text.strip()):]
            a = parse_quantity(a_text if _has_unit(a_text) else a_text + unit, dimension)
            if not a < b:
                raise UnitProblem(f"the range {raw!r} must go from the smaller value to the"
                                  " larger")
            return Spread(nominal=0.5 * (a + b), low=a, high=b, kind="range", text=raw)
        m = _PLUS_MINUS.match(raw.strip())
        if m and m.group("v").strip():
            if tolerance is not None:
                raise UnitProblem("give the tolerance once: in the value or as 'tolerance'")
            raw, tolerance = m.group("v"), "± " + m.group("t")
    if tolerance is None:
        return None
    if not isinstance(tolerance, str):
        raise UnitProblem(f"expected a tolerance such as \"± 15 %\", \"+10 % / -5 %\" or"
                          f" \"± 0.5 mm\", found {tolerance!r}")
    value = parse_quantity(raw, dimension)
    text = tolerance.strip()
    asym = _ASYMMETRIC.match(text)
    if asym:
        plus, minus = asym.group("p"), asym.group("m")
    elif text.startswith(("±", "+/-", "+-")):
        plus = minus = text.lstrip("±+/-").strip()
    else:
        raise UnitProblem(f"cannot read the tolerance {tolerance!r}: write \"± 15 %\","
                          " \"+10 % / -5 %\" or \"± 0.5 mm\"")
    up, down = (_one_side(t, value, dimension) for t in (plus, minus))
    if _PERCENT.match(minus) and value > 0 and down >= value:
        raise UnitProblem(f"a tolerance of {minus} below a positive value reaches zero or"
                          " less; a relative tolerance must be under 100 %")
    written = raw if isinstance(raw, str) else str(raw)
    return Spread(nominal=value, low=value - down, high=value + up, kind="tolerance",
                  text=f"{written} {text}")


def _one_side(text: str, value: float, dimension: str) -> float:
    m = _PERCENT.match(text)
    if m:
        share = float(m.group("n")) / 100.0
        if not (share >= 0 and math.isfinite(share)):
            raise UnitProblem(f"a tolerance must be a percentage of 0 or more, found {text!r}")
        return abs(value) * share
    amount = parse_quantity(text, dimension)
    if amount < 0:
        raise UnitProblem(f"write a tolerance without a sign after ± or +/-, found {text!r}")
    return amount


def _leading_number_end(text: str) -> int:
    m = _NUMBER.match(text)
    return m.end() if m else 0


def _has_unit(text: str) -> bool:
    return bool(text.strip()[_leading_number_end(text.strip()):].strip())


def parse_quantity(raw: object, dimension: str) -> float:
    """Read ``raw`` (a job-file value) as ``dimension`` and return its SI value.

    Raises :class:`UnitProblem` with a message that says what was expected.
    """
    dim = DIMENSIONS[dimension]
    if isinstance(raw, bool):
        raise UnitProblem(f"expected {_expect(dim)}, found the boolean {raw!r}")
    if isinstance(raw, (int, float)):
        if dimension != "dimensionless":
            raise UnitProblem(
                f"expected a quantity with a unit of {dim.name} (for example \"{_example(dim)}\"),"
                f" found the plain number {raw!r}")
        try:
            value = float(raw)
        except OverflowError:  # TOML integers may exceed a float
            raise UnitProblem(f"expected a finite value, found {_short(raw)}") from None
        _finite(value, raw)
        return value
    if not isinstance(raw, str):
        raise UnitProblem(f"expected {_expect(dim)}, found {type(raw).__name__} {raw!r}")
    if len(raw) > 200:
        raise UnitProblem("quantity text longer than 200 characters")
    _screen(raw, dim)
    ureg = _registry()
    text = _prepare(raw, dimension)
    try:
        q = ureg.Quantity(text)
    except Exception as exc:  # pint raises many kinds for bad text
        raise UnitProblem(f"cannot read {raw!r} as a quantity ({type(exc).__name__}: {exc})"
                          ) from None
    if not isinstance(q, ureg.Quantity):
        q = ureg.Quantity(float(q), "")
    try:
        value = _to_si(q, dim, ureg)
    except Exception:
        found = str(q.dimensionality) if str(q.dimensionality) != "dimensionless" else "no unit"
        raise UnitProblem(
            f"expected {dim.name.replace('_', ' × ')} (for example \"{_example(dim)}\"), found"
            f" {raw!r} with dimension {found}") from None
    _finite(value, raw)
    return value


# A leading plain number, then a unit expression whose only digits are single-digit
# exponents of a unit ("m/s**2", "g^2/Hz") or a reciprocal "1/". pint evaluates the
# arithmetic in the text, so "10**9**9 kg" would hang the machine: only this shape
# reaches pint.
_NUMBER = re.compile(r"^\s*[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,4})?")
_UNIT_EXPONENT = re.compile(r"(?<=[A-Za-z_)])\s*(?:\*\*|\^)\s*(?:-?[0-9]|\(-?[0-9]\))"
                            r"(?![0-9.]|\s*(?:\*\*|\^))")
_RECIPROCAL = re.compile(r"(?<![\w.])1(?=\s*/)")
_NOT_FINITE = ("nan", "inf", "infinity")


def _screen(raw: str, dim: Dimension) -> None:
    words = raw.strip().lower().split()
    if words and words[0].lstrip("+-") in _NOT_FINITE:
        raise UnitProblem(f"expected a finite value, found {raw!r}")
    match = _NUMBER.match(raw)
    if match is None:
        raise UnitProblem(f"cannot read {raw!r} as a quantity: expected a number followed by"
                          f" a unit of {dim.name.replace('_', ' × ')} (for example"
                          f" \"{_example(dim)}\")")
    rest = _RECIPROCAL.sub("", _UNIT_EXPONENT.sub("", raw[match.end():]))
    if re.search(r"[0-9]", rest):
        raise UnitProblem(f"cannot read {raw!r} as a quantity: expected one number followed"
                          f" by a unit (for example \"{_example(dim)}\"); arithmetic in a value"
                          " is not accepted")


def _to_si(q, dim: Dimension, ureg) -> float:
    if dim.name == "dimensionless":
        if not q.dimensionless:
            raise ValueError
        return float(q.to("").magnitude)
    if dim.name == "frequency":
        if q.dimensionality != ureg.Quantity(1, "Hz").dimensionality:
            raise ValueError
        if "radian" in str(q.units):
            # an angular frequency given for a cycle frequency
            return float(q.to("rad/s").magnitude) / (2.0 * math.pi)
        return float(q.to("Hz").magnitude)
    if dim.name == "angular_frequency":
        if q.dimensionality != ureg.Quantity(1, "Hz").dimensionality:
            raise ValueError
        return float(q.to("rad/s").magnitude)
    if dim.name == "angle":
        if not q.dimensionless:
            raise ValueError
        return float(q.to("rad").magnitude)
    return float(q.to(dim.si_unit).magnitude)


def _finite(value: float, raw: object) -> None:
    if not math.isfinite(value):
        raise UnitProblem(f"expected a finite value, found {_short(raw)}")


def _short(raw: object) -> str:
    text = repr(raw)
    return text if len(text) <= 60 else text[:57] + "..."


def _expect(dim: Dimension) -> str:
    if dim.name == "dimensionless":
        return "a plain number"
    return f"a quantity string of {dim.name} such as \"1 {dim.example.split()[0]}\""


def _example(dim: Dimension) -> str:
    if dim.name == "dimensionless":
        return "0.05"
    return f"1 {dim.example.split()[0]}"


# ---------------------------------------------------------------- display

_US_FACTORS: dict[str, float] = {}


def _us_factor(dim: Dimension) -> float:
    if dim.name not in _US_FACTORS:
        if dim.name == "angle":
            _US_FACTORS[dim.name] = 180.0 / math.pi
        elif not dim.us_unit or dim.us_unit == dim.si_unit:
            _US_FACTORS[dim.name] = 1.0
        else:
            ureg = _registry()
            _US_FACTORS[dim.name] = float(ureg.Quantity(1.0, dim.si_unit).to(dim.us_unit).magnitude)
    return _US_FACTORS[dim.name]


#: Units that tables show in the SI system where the coherent unit reads badly
#: (deflections in mm, not 0.0034 m). Equations always substitute coherent SI units.
SI_TABLE_UNITS: dict[str, tuple[float, str]] = {
    "length": (1e3, "mm"), "velocity": (1e3, "mm/s"), "stiffness": (1e-3, "kN/m"),
    "mass_length": (1e3, "kg·mm"),
}


def display(value: float, dimension: str, system: str) -> tuple[float, str]:
    """Convert an SI value to the display system; return (value, unit label)."""
    dim = DIMENSIONS[dimension]
    if system == "US":
        return value * _us_factor(dim), dim.us_label
    return value, dim.si_label


def table_display(value: float, dimension: str, system: str) -> tuple[float, str]:
    """Like :func:`display`, in the units an engineer reads in a table."""
    if system == "SI" and dimension in SI_TABLE_UNITS:
        factor, label = SI_TABLE_UNITS[dimension]
        return value * factor, label
    return display(value, dimension, system)


def format_number(value: float, digits: int = 4) -> str:
    """Format with ``digits`` significant figures, plain notation where readable."""
    if value == 0 or not math.isfinite(value):
        return "0" if value == 0 else str(value)
    mag = math.floor(math.log10(abs(value)))
    if -4 <= mag < 6:
        decimals = max(digits - 1 - mag, 0)
        text = f"{value:.{decimals}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        return text
    mant = value / 10**mag
    mtext = f"{mant:.{digits - 1}f}".rstrip("0").rstrip(".")
    if mtext in ("10", "-10"):  # rounding carried into the next decade
        mtext, mag = ("1" if mant > 0 else "-1"), mag + 1
    return f"{mtext}e{mag}"
