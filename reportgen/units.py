"""Units at the edges: parse quantity strings from job files into SI floats, and
convert SI floats into the display system (SI or US customary) for rendering.

Everything between loading and rendering is plain SI floats. The core knows
physical dimensions, not vibration.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
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
    "amplitude_qualifier",
    "input_note",
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
        # an eigenvalue λ = ω² of K·φ = λ·M·φ
        Dimension("angular_frequency_squared", "rad**2/s**2", "rad²/s²", "rad**2/s**2",
                  "rad²/s²", "rad**2/s**2", "1 / [time] ** 2"),
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
        Dimension("rotational_speed", "Hz", "rpm", "Hz", "rpm", "rpm", "1 / [time]"),
        Dimension("level", "dB", "dB", "dB", "dB", "dB", ""),
    )
}


class UnitProblem(ValueError):
    """A quantity string that cannot be read as the expected dimension."""


#: The trade's spellings, as pint definitions added to pint's own: a mil is a thousandth
#: of an inch (pint's "mil" is an angle), RPM and r/min are revolutions per minute, cpm and
#: CPM cycles per minute. Revolutions and cycles are 2π rad in pint; a frequency reads them
#: as cycles (see _to_si), so 1500 rpm is 25 Hz and 157 rad/s.
TRADE_DEFINITIONS = """
mil = 0.001 * inch = _ = mils
@alias revolution = rev = r
@alias revolutions_per_minute = RPM
cycle_per_minute = cycle / minute = cpm = CPM
"""
#: pint's own line the trade's mil replaces (redefining after loading is ignored by pint)
_PINT_MIL = re.compile(r"^mil = .*$", re.MULTILINE)


def _definitions_file(folder) -> str:
    """pint's default definitions with the trade's, written once per content."""
    import hashlib
    import os
    from importlib import resources

    pint_dir = resources.files("pint")
    base = pint_dir.joinpath("default_en.txt").read_text(encoding="utf-8")
    # pint's file imports its constants by a relative name: inline them (pint refuses an
    # absolute path in an import)
    base = re.sub(r"^@import\s+(\S+)\s*$",
                  lambda m: pint_dir.joinpath(m.group(1)).read_text(encoding="utf-8"),
                  base, flags=re.MULTILINE)
    text = _PINT_MIL.sub("", base) + TRADE_DEFINITIONS
    name = "reportgen_units_" + hashlib.sha256(text.encode()).hexdigest()[:16] + ".txt"
    path = folder / name
    if not path.exists():
        tmp = path.with_name(f"{name}.{os.getpid()}.tmp")
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, path)  # atomic: parallel builds may write the same file
    return str(path)


def _trade_context(pint):
    """Where a mass is expected a weight is divided by standard gravity (9400 lbf, 2 kip);
    where a stiffness is expected a pound or kilogram per length is a force per length
    (lb/in, lb/ft), as the trade writes them."""
    ctx = pint.Context("trade")
    force, stiffness = "[length] * [mass] / [time] ** 2", "[mass] / [time] ** 2"
    ctx.add_transformation(force, "[mass]", lambda ureg, x: x / ureg.standard_gravity)
    ctx.add_transformation("[mass] / [length]", stiffness,
                           lambda ureg, x: x * ureg.standard_gravity)
    return ctx


@lru_cache(maxsize=1)
def _registry():  # pint is imported lazily: start-up stays fast
    import sys
    import tempfile
    from pathlib import Path

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
        ureg = pint.UnitRegistry(_definitions_file(folder), autoconvert_offset_to_baseunit=True,
                                 cache_folder=folder)
    except Exception:
        folder = Path(tempfile.mkdtemp(prefix="reportgen-units-"))
        ureg = pint.UnitRegistry(_definitions_file(folder), autoconvert_offset_to_baseunit=True)
    ureg.add_context(_trade_context(pint))
    return ureg


_GRAVITY_TOKEN = re.compile(r"(?<![\w.])g(?![\w])")
#: An amplitude's convention after its unit: zero-to-peak (the default), rms or peak-to-peak.
_QUALIFIER = re.compile(r"\s+(?P<q>pk-pk|p-p|pp|peak-to-peak|pk|peak|0-pk|rms|RMS)\s*$")
#: Dimensions whose values may carry a pk, rms or pk-pk convention.
AMPLITUDE_DIMENSIONS = ("length", "velocity", "acceleration")
#: Factor from each written convention to zero-to-peak, for a sinusoid.
_TO_PEAK = {"pk": 1.0, "peak": 1.0, "0-pk": 1.0, "rms": math.sqrt(2.0), "RMS": math.sqrt(2.0),
            "pk-pk": 0.5, "p-p": 0.5, "pp": 0.5, "peak-to-peak": 0.5}


def amplitude_qualifier(raw: object) -> str:
    """The convention written after an amplitude ("rms", "pk-pk", "pk"), or ""."""
    if not isinstance(raw, str):
        return ""
    m = _QUALIFIER.search(raw)
    return m.group("q") if m else ""


def _prepare(text: str, dimension: str) -> str:
    text = text.strip().replace("·", "*").replace("⋅", "*")
    if dimension == "acceleration":
        # "0.1 g" for an acceleration is standard gravity, not grams.
        text = _GRAVITY_TOKEN.sub("g_0", text)
    return text


#: Spellings seen in the trade that are not units, with the one that works.
SPELLING_HINTS: dict[str, str] = {
    "revs": "rpm", "revs/min": "rpm", "rev/mins": "rpm", "rpms": "rpm",
    "cps": "Hz", "cycles": "Hz", "kips": "kip", "lbs": "lb", "lbs/in": "lbf/in",
    "thou": "mil", "mic": "µm", "micron": "µm", "microns": "µm", "um": "µm",
    "ips": "in/s", "Kn": "kN", "KN": "kN", "kn/m": "kN/m", "gs": "g", "G": "g",
}
#: Accepted spellings per dimension, offered when a spelling is close to one of them.
SPELLINGS: dict[str, tuple[str, ...]] = {
    "mass": ("kg", "t", "g", "lb", "lbf (weight)", "kip (weight)", "kN (weight)"),
    "length": ("m", "mm", "µm", "in", "ft", "mil"),
    "force": ("N", "kN", "MN", "lbf", "kip"),
    "stiffness": ("N/m", "kN/m", "MN/m", "N/mm", "kN/mm", "lbf/in", "lb/in", "lb/ft",
                  "kip/in"),
    "velocity": ("m/s", "mm/s", "µm/s", "in/s", "mil/s"),
    "acceleration": ("m/s**2", "mm/s**2", "g", "in/s**2"),
    "frequency": ("Hz", "rpm", "RPM", "r/min", "cpm", "CPM", "rad/s"),
    "angular_frequency": ("rad/s", "Hz", "rpm"),
    "mass_length": ("kg*m", "kg*mm", "g*mm", "g*in", "oz*in", "lb*in"),
    "damping": ("N*s/m", "kN*s/m", "lbf*s/in"),
}


def _suggestion(unknown: str, dimension: str) -> str:
    import difflib

    hint = SPELLING_HINTS.get(unknown) or SPELLING_HINTS.get(unknown.lower())
    if hint is None:
        choices = SPELLINGS.get(dimension, ())
        close = difflib.get_close_matches(unknown, choices, n=1, cutoff=0.5)
        hint = close[0] if close else None
    if hint is None:
        return ""
    return f"; write {hint!r}"


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
    qualifier = amplitude_qualifier(raw)
    if qualifier:
        if dimension not in AMPLITUDE_DIMENSIONS:
            raise UnitProblem(f"{raw!r}: '{qualifier}' qualifies an amplitude (a displacement,"
                              f" velocity or acceleration), not a {dim.name.replace('_', ' ')}")
        raw = raw[:_QUALIFIER.search(raw).start()]  # type: ignore[union-attr]
    _screen(raw, dim)
    ureg = _registry()
    text = _prepare(raw, dimension)
    try:
        q = ureg.Quantity(text)
    except Exception as exc:  # pint raises many kinds for bad text
        unknown = getattr(exc, "unit_names", None) or getattr(exc, "args", ("",))[:1]
        name = unknown[0] if isinstance(unknown, (tuple, list)) and unknown else ""
        if type(exc).__name__ == "UndefinedUnitError" and isinstance(name, str):
            rest = raw.strip()[_leading_number_end(raw.strip()):].strip()
            tip = _suggestion(rest, dimension) or _suggestion(name, dimension)
            raise UnitProblem(f"cannot read {raw!r}: {name!r} is not a unit of"
                              f" {dim.name.replace('_', ' × ')}{tip or _examples(dim)}"
                              ) from None
        raise UnitProblem(f"cannot read {raw!r} as a quantity ({type(exc).__name__}: {exc})"
                          ) from None
    if not isinstance(q, ureg.Quantity):
        q = ureg.Quantity(float(q), "")
    try:
        value = _to_si(q, dim, ureg)
    except Exception:
        found = str(q.dimensionality) if str(q.dimensionality) != "dimensionless" else "no unit"
        rest = raw.strip()[_leading_number_end(raw.strip()):].strip()
        raise UnitProblem(
            f"expected {dim.name.replace('_', ' × ')} (for example \"{_example(dim)}\"), found"
            f" {raw!r} with dimension {found}{_suggestion(rest, dimension)}") from None
    _finite(value, raw)
    return value * _TO_PEAK[qualifier] if qualifier else value


def _examples(dim: Dimension) -> str:
    known = SPELLINGS.get(dim.name)
    return f"; for example {', '.join(known[:4])}" if known else f" (for example {_example(dim)!r})"


def input_note(raw: object, dimension: str) -> str:
    """What the inputs table says about how a value was read: a weight for a mass, a
    pound per length for a stiffness, an rms or peak-to-peak amplitude."""
    if not isinstance(raw, str):
        return ""
    qualifier = amplitude_qualifier(raw)
    if qualifier in ("rms", "RMS"):
        return "rms × √2 (sinusoid)"
    if qualifier and _TO_PEAK[qualifier] == 0.5:
        return "peak-to-peak ÷ 2"
    if dimension not in ("mass", "stiffness"):
        return ""
    try:
        q = _registry().Quantity(_prepare(raw, dimension))
    except Exception:
        return ""
    if _trade_weight(q, dimension):
        return ("weight ÷ standard gravity" if dimension == "mass"
                else "pound per length read as pound-force per length")
    return ""


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
    if dim.name in ("frequency", "angular_frequency", "rotational_speed"):
        if q.dimensionality != ureg.Quantity(1, "Hz").dimensionality:
            raise ValueError
        base = q.to_base_units()
        # pint counts revolutions and cycles (rpm, cpm) as 2π rad and Hz as 1/s: a unit
        # with radians in it measures angle per time, one without counts cycles
        angular = "radian" in str(base.units)
        per_second = float(base.magnitude)
        if dim.name != "angular_frequency":
            return per_second / (2.0 * math.pi) if angular else per_second
        named_cycles = re.search(r"hertz|cycle|revolution", str(q.units))
        return per_second * (2.0 * math.pi) if named_cycles and not angular else per_second
    if dim.name == "angle":
        if not q.dimensionless:
            raise ValueError
        return float(q.to("rad").magnitude)
    if dim.name == "level":  # a level in decibels is its own number: no conversion
        if str(q.units) != "decibel":
            raise ValueError
        return float(q.magnitude)
    if _trade_weight(q, dim.name):
        return float(q.to(dim.si_unit, "trade").magnitude)
    return float(q.to(dim.si_unit).magnitude)


def _trade_weight(q, dimension: str) -> bool:
    """A pound-force or kip weight given for a mass, or a pound per length given for a
    stiffness: the trade's customary spellings, read through the "trade" context. A
    newton for a mass stays an error (an SI job states the mass)."""
    units = str(q.units)
    if dimension == "mass":
        return q.check("[length] * [mass] / [time] ** 2") and bool(
            re.fullmatch(r"(kilo)?(force_pound|kip)", units))
    if dimension == "stiffness":
        return q.check("[mass] / [length]") and bool(
            re.fullmatch(r"pound / (inch|foot)", units))
    return False


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


# ---------------------------------------------------------------- display units

#: SI units per family, smallest first: (label, SI value → displayed value factor). The
#: display picks one so that no value needs more than four digits before the point nor
#: prints as a long decimal fraction.
SI_LADDERS: dict[str, tuple[tuple[str, float], ...]] = {
    "length": (("µm", 1e6), ("mm", 1e3), ("m", 1.0)),
    "velocity": (("µm/s", 1e6), ("mm/s", 1e3), ("m/s", 1.0)),
    "acceleration": (("mm/s²", 1e3), ("m/s²", 1.0)),
    "stiffness": (("N/m", 1.0), ("kN/m", 1e-3), ("MN/m", 1e-6), ("GN/m", 1e-9)),
    "force_per_length": (("N/m", 1.0), ("kN/m", 1e-3), ("MN/m", 1e-6)),
    "force": (("N", 1.0), ("kN", 1e-3), ("MN", 1e-6)),
    "mass": (("g", 1e3), ("kg", 1.0), ("t", 1e-3)),
    "mass_length": (("g·mm", 1e6), ("kg·mm", 1e3), ("kg·m", 1.0)),
    "damping": (("N·s/m", 1.0), ("kN·s/m", 1e-3), ("MN·s/m", 1e-6)),
    "moment": (("N·m", 1.0), ("kN·m", 1e-3), ("MN·m", 1e-6)),
    "rotational_stiffness": (("N·m/rad", 1.0), ("kN·m/rad", 1e-3), ("MN·m/rad", 1e-6)),
    "pressure": (("Pa", 1.0), ("kPa", 1e-3), ("MPa", 1e-6), ("GPa", 1e-9)),
    "time": (("ms", 1e3), ("s", 1.0)),
    "area": (("mm²", 1e6), ("m²", 1.0)),
}
#: A US package's small lengths step down to mils (0.001 in), as vibration amplitudes
#: are written in the trade; nothing else is prefixed in US customary units.
US_LADDERS: dict[str, tuple[tuple[str, float], ...]] = {
    "length": (("mil", 1.0 / 2.54e-5), ("in", 1.0 / 0.0254)),
}
#: The engineering choice per family where the job gives none (an SI package).
SI_DEFAULTS = {"length": "mm", "velocity": "mm/s", "acceleration": "m/s²", "stiffness": "kN/m",
               "force_per_length": "kN/m", "force": "kN", "mass": "kg", "mass_length": "kg·mm",
               "damping": "N·s/m", "moment": "kN·m", "rotational_stiffness": "kN·m/rad",
               "pressure": "kPa", "time": "s", "area": "m²"}
#: A US package's units where its job gives none: customary, one unit per family.
US_DEFAULTS = {"mass_length": "oz·in"}
#: In a US package's equations a mass is in lbf·s²/in (whatever unit the job gave it in),
#: so that k/m and m·g_n/k come out by hand with no g_c.
US_COHERENT = {"mass": ("lbf·s²/in", "lbf*s**2/in"), "mass_length": ("lbf·s²", "lbf*s**2")}
#: Below this a value steps down a prefix; at or above LADDER_HIGH it steps up.
LADDER_LOW, LADDER_HIGH = 0.1, 1e4
_PRETTY = (("**2", "²"), ("**3", "³"), ("**4", "⁴"), ("^2", "²"), ("^3", "³"), ("*", "·"),
           ("um", "µm"))


def pretty_unit(text: str) -> str:
    """A unit as written in a job ("lbf*s/in", "m/s**2") as printed ("lbf·s/in", "m/s²")."""
    out = " ".join(text.split())
    for a, b in _PRETTY:
        out = out.replace(a, b)
    out = re.sub(r"\bmils\b", "mil", out)  # a unit symbol has no plural
    return out.replace(" ", "·")


@lru_cache(maxsize=256)
def _unit_factor(label: str, dimension: str) -> float:
    """SI value × factor = value in ``label`` (a printed unit)."""
    dim = DIMENSIONS[dimension]
    text = label.replace("·", "*").replace("²", "**2").replace("³", "**3").replace("⁴", "**4")
    text = text.replace("µ", "u").replace("°", "deg")
    if dimension == "rotational_speed":
        return parse_quantity("1 Hz", "frequency") / parse_quantity(f"1 {text}", "frequency")
    if dimension == "angle":
        return 1.0 / parse_quantity(f"1 {text}", "angle")
    q = _registry().Quantity(1.0, text)
    if _trade_weight(q, dimension) or not q.check(dim.pint_dimensionality or "[]"):
        raise UnitProblem(f"{label!r} is not a plain unit of {dimension}")
    return 1.0 / float(q.to(dim.si_unit).magnitude) if dim.si_unit else 1.0 / float(
        q.to("").magnitude)


@dataclass(frozen=True, slots=True)
class DisplayUnits:
    """The units a package prints in: a system, and a unit per quantity family (the unit the
    job gave, a firm's preference, or the engineering default). ``key`` is its compact,
    hashable form ("SI", "US;length=mil")."""

    system: str
    preferred: tuple[tuple[str, str], ...] = ()

    @property
    def key(self) -> str:
        return ";".join([self.system, *(f"{d}={u}" for d, u in self.preferred)])

    def family_unit(self, dimension: str, equation: bool = False) -> str:
        chosen = dict(self.preferred).get(dimension)
        if self.system == "US" and equation and dimension in US_COHERENT:
            return US_COHERENT[dimension][0]
        if chosen:
            return chosen
        if self.system == "US":
            return US_DEFAULTS.get(dimension, DIMENSIONS[dimension].us_label)
        return SI_DEFAULTS.get(dimension, DIMENSIONS[dimension].si_label)

    def unit(self, value: float, dimension: str, *, prefix: bool = True,
             equation: bool = False) -> tuple[float, str]:
        """(factor, label) for ``value`` (SI): the family's unit, in an SI package stepped
        along its prefixes so the number reads well (``prefix=False``: a table column's one
        unit)."""
        if dimension == "rotational_speed":
            return _unit_factor("rpm", dimension), "rpm"
        if dimension == "angle":
            return (180.0 / math.pi, "°") if self.system == "US" else (1.0, "rad")
        if dimension == "level":
            return 1.0, "dB"
        label = self.family_unit(dimension, equation)
        if not label:
            return 1.0, ""
        factor = (_us_coherent_factor(dimension) if label in
                  {v[0] for v in US_COHERENT.values()} else _unit_factor(label, dimension))
        ladder = (SI_LADDERS if self.system == "SI" else US_LADDERS).get(dimension, ())
        if label not in [u for u, _ in ladder]:  # an SI unit the job gave a US package
            ladder = SI_LADDERS.get(dimension, ())
        labels = [u for u, _ in ladder]
        if not prefix or label not in labels or value == 0 or not math.isfinite(value):
            return factor, label
        i = labels.index(label)
        size = abs(value)
        while size * ladder[i][1] >= LADDER_HIGH and i + 1 < len(ladder):
            i += 1
        while size * ladder[i][1] < LADDER_LOW and i > 0 and (
                size * ladder[i - 1][1] < LADDER_HIGH):
            i -= 1
        return ladder[i][1], ladder[i][0]

    def show(self, value: float, dimension: str, digits: int = 4, *, prefix: bool = True,
             equation: bool = False) -> tuple[str, str]:
        """(number text, unit label) as printed: significant figures, groups of three digits
        from 10 000 up, powers of ten as "e" (the renderer typesets them)."""
        factor, label = self.unit(value, dimension, prefix=prefix, equation=equation)
        return group_digits(format_number(value * factor, digits)), label


def _us_coherent_factor(dimension: str) -> float:
    unit = US_COHERENT[dimension][1]
    return 1.0 / float(_registry().Quantity(1.0, unit).to(DIMENSIONS[dimension].si_unit)
                       .magnitude)


#: The space between groups of three digits (a narrow no-break space, ISO 80000-1 7.3.1).
GROUP_SPACE = "\u202f"


def group_digits(text: str) -> str:
    """"14800" -> "14 800" from five integer digits up (four stay together: 2500)."""
    if "e" in text:
        return text
    sign, body = ("-", text[1:]) if text.startswith("-") else ("", text)
    whole, dot, frac = body.partition(".")
    if len(whole) < 5:
        return text
    groups = []
    while whole:
        groups.insert(0, whole[-3:])
        whole = whole[:-3]
    return sign + GROUP_SPACE.join(groups) + dot + frac


def ungroup(text: str) -> str:
    return text.replace(GROUP_SPACE, "").replace(" ", "")


@lru_cache(maxsize=64)
def display_units(key: str) -> DisplayUnits:
    """The DisplayUnits a key names ("SI", "US", "SI;length=mm;stiffness=N/mm")."""
    system, *prefs = key.split(";")
    pairs = tuple(tuple(p.split("=", 1)) for p in prefs if "=" in p)
    return DisplayUnits(system=system if system in ("SI", "US") else "SI",
                        preferred=pairs)  # type: ignore[arg-type]


def axis_unit(display: str, dimension: str) -> tuple[float, str]:
    """(SI value → shown factor, unit label) of a figure axis or a table column: the one unit
    the package shows ``dimension`` in (``display``: a display key, "SI" or "US")."""
    return display_units(display).unit(1.0, dimension, prefix=False)


#: Families a job's own unit sets for the whole package (a frequency given in rpm does
#: not make every frequency rpm: a speed has its own family).
_FAMILY_FROM_INPUT = frozenset(SI_LADDERS) | {"density", "second_moment_of_area",
                                              "moment_of_inertia"}


def written_unit(raw: object) -> str:
    """The unit part of a job value ("350 kN/m" -> "kN/m"), without an amplitude
    convention; "" for a plain number or a range or tolerance."""
    if not isinstance(raw, str):
        return ""
    text = raw.strip()
    m = _QUALIFIER.search(text)
    if m:
        text = text[:m.start()]
    if _TO.match(text) or _PLUS_MINUS.match(text):
        return ""
    return text[_leading_number_end(text):].strip()


def preferences(written: list[tuple[str, str]], system: str,
                firm: Mapping[str, str] | None = None) -> DisplayUnits:
    """A package's display units from the (dimension, unit as written) of its inputs, in
    job order (the first unit given for a family wins), over a firm's preferences."""
    chosen: dict[str, str] = {}
    for dimension, unit in written:
        if dimension in chosen or dimension not in _FAMILY_FROM_INPUT or not unit:
            continue
        label = pretty_unit(unit)
        try:
            _unit_factor(label, dimension)
        except Exception:  # a weight for a mass, lb/in for a stiffness: keep the default
            continue
        chosen[dimension] = label
    for dimension, label in (firm or {}).items():
        if dimension not in DIMENSIONS or dimension in chosen:
            continue
        try:
            _unit_factor(pretty_unit(label), dimension)
        except Exception:  # a firm's misspelt unit: the default stands
            continue
        chosen[dimension] = pretty_unit(label)
    return DisplayUnits(system=system, preferred=tuple(sorted(chosen.items())))
