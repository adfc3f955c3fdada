"""JSON Schema of the job file format, generated from the declarations `reportgen check` uses.

The [package] keys and their rules come from jobfile's declarations, each calc type's
inputs from its InputSpecs, and each dimension's unit spellings from pint's registry.
"""

from __future__ import annotations

import dataclasses
import functools
import re
from typing import Any

from reportgen.calc.criteria import CriteriaLibrary, load_criteria, normalise
from reportgen.calc.plugin_set import PluginSet
from reportgen.calc.spec import Column, InputSpec
from reportgen.job.load import (
    CALC_KEYS,
    DATE_PATTERN,
    DEVIATION_KEYS,
    HISTORY_KEYS,
    ID_PATTERN,
    MAX_ATTACHMENTS,
    MAX_CALCS,
    MAX_ID,
    MAX_TEXT,
    NAME_PATTERN,
    PACKAGE_KEYS,
    PACKAGE_KINDS,
    UNIT_SYSTEMS,
    empty_date_allowed,
)
from reportgen.job.orders import MAX_ORDER, MAX_ORDERS, has_running_speed
from reportgen.units import AMPLITUDE_DIMENSIONS, DIMENSIONS, STANDARD_GRAVITY

SCHEMA_ID = "https://reportgen.invalid/schema/job-1.json"

#: What this schema cannot say and `reportgen check` does; each with why. Everything else
#: agrees (tests/test_schema_agreement.py checks it on a generated corpus).
KNOWN_DIFFERENCES = {
    "duplicate-calc-id": "calc ids must be unique across [[calc]] tables; JSON Schema"
                         " cannot compare a property across array items (x-unique-calc-ids"
                         " marks it)",
    "numeric-range": "a range other than the sign (e.g. damping_ratio at most 1, a"
                     " duration at least 1 s) on a value written as a quantity string; the"
                     " schema states it for plain numbers, and the sign in the pattern",
    "float-range": "a quantity whose value leaves the floating-point range (beyond about"
                   " 1e308, or a positive value that rounds to zero)",
    "cross-field": "a calc type's own cross-field rules (exactly one excitation, damping"
                   " as a ratio or a coefficient but not both, a range's two ends in order,"
                   " the revision history holding the current revision, a deviation"
                   " naming a calc of the job)",
    "files": "files and folders the job names (attachments, template_dir,"
             " previous_package) must exist beside the job file",
    "unit-expressions": "unit expressions beyond the forms listed per dimension (e.g."
                        " 'kg*m/s**2/m' for a stiffness, a ratio of lengths for a plain"
                        " number), and a prefixed spelling pint reads as another unit"
                        " ('min' is a minute, not a milli-inch)",
    "whole-float": "a whole number written as a float (3.0) where an integer is expected",
    "criteria-library": "a criterion named from a firm's own curves (criteria/ in its"
                        " template folder): the schema lists the installed library only",
}


# ---------------------------------------------------------------- unit patterns

#: The unit forms accepted in a schema pattern, per dimension: products and quotients of
#: token classes (a pint dimensionality each); "2" squares a factor. Anything else pint
#: can read is listed under "unit-expressions" above.
UNIT_FORMS: dict[str, tuple[str, ...]] = {
    "dimensionless": ("D",),
    "angle": ("D",),
    "mass": ("M", "weight"),
    "length": ("L",),
    "time": ("T",),
    "force": ("F", "M*L/T2"),
    "stiffness": ("K", "F/L", "M/T2", "pound_per_length"),
    "damping": ("F*T/L", "M/T"),
    "velocity": ("V", "L/T"),
    "acceleration": ("A", "L/T2", "L*T-2", "gravity"),
    "frequency": ("H", "1/T", "D/T", "speed"),
    "angular_frequency": ("H", "1/T", "D/T", "speed"),
    "angular_frequency_squared": ("D2/T2", "D/T2"),
    "rotational_speed": ("H", "1/T", "D/T", "speed"),
    "level": ("decibel",),
    "mass_length": ("M*L", "L*M"),
    "moment": ("F*L", "L*F"),
    "rotational_stiffness": ("F*L/D", "F*L", "L*F"),
    "moment_of_inertia": ("M*L2", "L2*M"),
    "pressure": ("P", "F/L2"),
    "density": ("M/L3",),
    "area": ("L2",),
    "second_moment_of_area": ("L4",),
    "force_per_length": ("F/L", "K"),
}
_CLASSES = {"D": "", "M": "[mass]", "L": "[length]", "T": "[time]",
            "F": "[length] * [mass] / [time] ** 2", "K": "[mass] / [time] ** 2",
            "V": "[length] / [time]", "A": "[length] / [time] ** 2", "H": "1 / [time]",
            "P": "[mass] / [length] / [time] ** 2"}
_META = re.compile(r"([\\^$.|?*+()\[\]{}/])")
_MUL = r"(?:\s*[*·]\s*|\s+)"
_DIV = r"\s*/\s*"
_SQUARE = r"(?:\s*(?:\*\*|\^)\s*(?:2|\(2\))|²)"
_INVERSE_SQUARE = r"(?:\s*(?:\*\*|\^)\s*(?:-2|\(-2\))|⁻²)"
_CUBE = r"(?:\s*(?:\*\*|\^)\s*(?:3|\(3\))|³)"
_FOURTH = r"(?:\s*(?:\*\*|\^)\s*(?:4|\(4\))|⁴)"
#: an amplitude's convention after its unit ("4.5 mm/s rms", "0.2 mm pk-pk")
_QUALIFIER = r"(?:\s+(?:pk-pk|p-p|pp|peak-to-peak|pk|peak|0-pk|rms|RMS))?"
_NUMBER = r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,4})?"
#: no leading '-' (minimum 0), and a mantissa with a non-zero digit (greater than zero)
_NOT_NEGATIVE = r"^\s*\+?[0-9.]"
_POSITIVE = r"^\s*\+?(?:[0-9]*[1-9][0-9]*(?:\.[0-9]*)?|[0-9]*\.[0-9]*[1-9][0-9]*)"


def _alternation(words: set[str]) -> str:
    # longest first only for readability: the pattern is anchored, so order is free
    return "(?:" + "|".join(_META.sub(r"\\\1", w) for w in sorted(words, key=(
        lambda w: (-len(w), w)))) + ")"


@functools.lru_cache(maxsize=1)
def _tokens() -> dict[str, set[str]]:
    """Unit spellings by token class, from pint's registry: names, symbols, aliases.

    Spellings with a digit are left out: the parser refuses digits in a unit (pint would
    evaluate arithmetic).
    """
    from reportgen.units import _registry

    ureg = _registry()
    wanted = {cls: ureg.get_dimensionality(dim) if dim else ureg.get_dimensionality("")
              for cls, dim in _CLASSES.items()}
    out: dict[str, set[str]] = {cls: set() for cls in _CLASSES}
    for name, definition in ureg._units.items():
        try:
            dim = ureg.get_dimensionality(name)
        except Exception:  # a definition pint itself cannot resolve
            continue
        spellings = {name, definition.symbol, *definition.aliases} - {None, ""}
        for cls, want in wanted.items():
            if dim == want:
                out[cls] |= {s for s in spellings if not re.search(r"[0-9\s]", s)}
    prefixes = set()
    for name, p in ureg._prefixes.items():
        prefixes |= {name, p.symbol, *p.aliases} - {None, ""}
    out["prefix"] = prefixes
    return out


@functools.cache
def _factor(cls: str) -> str:
    """One unit of a class: an optional prefix, the spelling, a plural 's' on names.

    pint reads a trailing 's' as a plural only after a unit of two or more characters.
    """
    tokens = _tokens()
    words = tokens[cls]
    long_words = {w for w in words if len(w) > 1}
    short = words - long_words
    prefix = _alternation(tokens["prefix"])
    parts = [f"{prefix}?{_alternation(long_words)}s?"]
    if short:
        parts.append(f"{prefix}?{_alternation(short)}")
    return "(?:" + "|".join(parts) + ")"


def _form(form: str) -> str:
    if form == "gravity":
        return "g"  # the parser reads a lone 'g' for an acceleration as standard gravity
    if form == "decibel":
        return r"(?:dB|decibels?)"
    if form == "weight":
        return r"(?:lbf|kip|klbf|pound_force|force_pound)"  # read as weight ÷ standard gravity
    if form == "pound_per_length":
        return r"(?:lb|pound)" + _DIV + r"(?:in|inch|ft|foot)"  # read as lbf/in, lbf/ft
    if form == "speed":
        # the parser rewrites rpm, rps, cpm and rev(olution)s per time to cycles
        return r"(?:rpm|rps|cpm|(?:rev|revolutions?)" + _DIV + _factor("T") + ")"
    if form.startswith("1/"):
        return r"(?:1\s*)?/\s*" + _factor(form[2:])
    out = ""
    for part in re.split(r"([*/])", form):
        if part in ("*", "/"):
            out += _MUL if part == "*" else _DIV
            continue
        cls, power = part[0], part[1:]
        out += _factor(cls) + {"": "", "2": _SQUARE, "-2": _INVERSE_SQUARE, "3": _CUBE,
                               "4": _FOURTH}[power]
    return out


@functools.cache
def unit_pattern(dimension: str) -> str:
    """A number, then a unit of ``dimension`` in one of its UNIT_FORMS (none for plain
    numbers and angles in radians)."""
    forms = "|".join(_form(f) for f in UNIT_FORMS[dimension])
    optional = "?" if dimension in ("dimensionless", "angle") else ""
    qualifier = _QUALIFIER if dimension in AMPLITUDE_DIMENSIONS else ""
    return rf"^\s*{_NUMBER}(?:\s*(?:{forms})){optional}{qualifier}\s*$"


@functools.cache
def spread_pattern(dimension: str) -> str:
    """A range ("900 to 1800 rpm") or a tolerance ("350 kN/m ± 15 %", "12 mm ± 0.5 mm")
    of ``dimension``, as the parser reads them."""
    forms = "|".join(_form(f) for f in UNIT_FORMS[dimension])
    unit = rf"(?:\s*(?:{forms}))"
    need = "?" if dimension in ("dimensionless", "angle") else ""
    ranged = rf"{_NUMBER}{unit}?\s+to\s+{_NUMBER}{unit}{need}"
    toleranced = (rf"{_NUMBER}{unit}{need}\s*(?:±|\+/-|\+-)\s*{_NUMBER}"
                  rf"(?:\s*(?:%|percent)|{unit}{need})")
    return rf"^\s*(?:{ranged}|{toleranced})\s*$"


# ---------------------------------------------------------------- values


def _sign_pattern(spec: InputSpec | Column) -> str | None:
    if spec.positive or (spec.minimum is not None and spec.minimum > 0):
        return _POSITIVE
    if spec.minimum is not None and spec.minimum >= 0:
        return _NOT_NEGATIVE
    return None


def _number_range(spec: InputSpec | Column) -> dict[str, Any]:
    s: dict[str, Any] = {}
    if spec.positive:
        s["exclusiveMinimum"] = 0
    if spec.minimum is not None:
        s["minimum"] = spec.minimum
    if spec.maximum is not None:
        s["maximum"] = spec.maximum
    return s


def _quantity(spec: InputSpec | Column) -> dict[str, Any]:
    """One quantity as the job file writes it."""
    # $ref beside other keywords is ignored by draft-07 readers (some editors): allOf
    string: dict[str, Any] = {"allOf": [{"$ref": f"#/$defs/unit-{spec.dimension}"}]}
    sign = _sign_pattern(spec)
    if sign:
        string["allOf"].append({"pattern": sign})
    if spec.dimension != "dimensionless":
        return string
    return {"anyOf": [{"type": "number", **_number_range(spec)}, string]}


def _example(spec: InputSpec, value: float | None = None) -> Any:
    dim = DIMENSIONS[spec.dimension]
    if spec.dimension == "dimensionless":
        return value if value is not None else 0.05
    if value is None:
        return f"1 {dim.example.split()[0]}"
    if spec.dimension == "acceleration" and value:
        return f"{value / STANDARD_GRAVITY:g} g"
    return f"{value:g} {dim.si_unit}".strip()


def _column_schema(col: Column) -> dict[str, Any]:
    if col.kind == "text":
        s: dict[str, Any] = {"type": "string"}
    elif col.kind == "integer":
        s = {"type": "integer", **_number_range(col)}
    else:
        s = _quantity(col)
    dim = DIMENSIONS[col.dimension]
    unit = "" if col.dimension == "dimensionless" else f" ({dim.name.replace('_', ' × ')})"
    return {**s, "description": col.description + unit}


#: the criteria library of the schema being written (job_schema sets it for its call)
_LIBRARY: list[CriteriaLibrary] = []


def _criterion_name(spec: InputSpec) -> dict[str, Any]:
    """A criterion's name: any spelling (case, spaces, '-', '_') of a name or alias of the
    installed library whose quantity the calc takes. A firm's own curves (criteria/ in its
    template folder) are not in the schema: `reportgen check` knows them."""
    out: dict[str, Any] = {"type": "string", "minLength": 1, "description": spec.description
                           + " (the name of a criterion; `reportgen criteria` lists them)"}
    if not _LIBRARY:
        return out
    names = []
    for entry in _LIBRARY[-1]:
        c = entry.criterion
        if spec.choices and getattr(c, "quantity", None) not in spec.choices:
            continue
        names += [entry.name, *getattr(c, "aliases", ())]
    sep = r"[\s_-]*"
    alternatives = sorted({sep.join(f"[{ch}{ch.upper()}]" if ch.upper() != ch else
                                    re.escape(ch) for ch in normalise(n)) for n in names})
    if alternatives:
        out["pattern"] = f"^{sep}(?:{'|'.join(alternatives)}){sep}$"
        out["examples"] = sorted(names)[:3]
    return out


def _value_schema(spec: InputSpec) -> dict[str, Any]:
    dim = DIMENSIONS[spec.dimension]
    if spec.kind == "choice":
        choice: dict[str, Any] = {"enum": list(spec.choices) + (
            [True, False] if spec.choices == ("yes", "no") else []),  # TOML booleans too
            "description": spec.description}
        if spec.default is not None:
            choice["default"] = spec.default
        return choice
    if spec.kind == "text":
        return {"type": "string", "maxLength": spec.max_length,
                "description": spec.description}
    if spec.kind == "texts":
        return {"type": "array", "minItems": spec.min_rows, "maxItems": spec.max_rows,
                "uniqueItems": True, "description": spec.description,
                "items": {"type": "string", "minLength": 1, "maxLength": spec.max_length}}
    if spec.kind == "file":
        suffixes = "|".join(re.escape(f) for f in spec.formats)
        return {"type": "string", "description": spec.description + " (a file in the job's"
                " folder, relative path)", **({"pattern": rf"(?i)({suffixes})$"}
                                              if suffixes else {})}
    if spec.kind == "table" or (spec.kind == "criterion" and spec.columns):
        table = {"type": "array", "minItems": spec.min_rows, "maxItems": spec.max_rows,
                 "description": spec.description + " (an array of tables, one per row)",
                 "items": {"type": "object", "additionalProperties": False,
                           "properties": {c.name: _column_schema(c) for c in spec.columns},
                           "required": [c.name for c in spec.columns if c.required]}}
        if spec.kind == "table":
            return table
        return {"anyOf": [_criterion_name(spec), table], "description": spec.description}
    if spec.kind == "criterion":
        return _criterion_name(spec)
    if spec.kind == "integer":
        s: dict[str, Any] = {"type": "integer", **_number_range(spec)}
    elif spec.kind == "pair":
        s = {"type": "array", "items": _quantity(spec), "minItems": 2, "maxItems": 2}
    elif spec.kind == "points":
        s = {"type": "array", "minItems": 1, "maxItems": 1000,
             "items": {"type": "array", "items": _quantity(spec), "minItems": 2,
                       "maxItems": 2}}
    else:
        s = _quantity(spec)
    unit = "" if spec.dimension == "dimensionless" else f" ({dim.name.replace('_', ' × ')})"
    s["description"] = spec.description + unit
    if spec.kind == "quantity":
        s["examples"] = [_example(spec)]
        if spec.default is not None:
            s["default"] = _example(spec, spec.default)
    return s


def _wrapped(spec: InputSpec, inputs: bool) -> dict[str, Any]:
    """An input's value, plain or as a table { value, source, tolerance }; a quantity
    input may carry a range or a tolerance in its text."""
    plain = _value_schema(spec)
    if spec.kind == "table":
        return plain
    if spec.kind == "criterion" and spec.columns:  # a name (plain or wrapped), or a table
        named = _wrapped(dataclasses.replace(spec, columns=()), inputs)
        return {"anyOf": [named, plain["anyOf"][1]], "description": spec.description}
    values = [plain]
    spread = spec.kind == "quantity" and inputs and spec.rangeable
    if spread:
        values.append({"type": "string", "allOf": [{"$ref": f"#/$defs/spread-{spec.dimension}"}],
                       "description": plain.get("description", "") + "; a range (\"a to b"
                       " unit\") or a tolerance (\"value ± 15 %\")"})
    table_props: dict[str, Any] = {
        "value": {"anyOf": list(values)} if len(values) > 1 else plain,
        "source": {"type": "string", "pattern": r"\S",
                   "description": "the document the value comes from"}}
    if spread:
        table_props["tolerance"] = {"type": "string", "description": "\"± 15 %\","
                                    " \"+10 % / -5 %\" or \"± 0.5 mm\""}
    values.append({"type": "object", "additionalProperties": False, "required": ["value"],
                   "properties": table_props})
    out = {"anyOf": values, "description": plain.get("description", spec.description)}
    out.update((k, plain[k]) for k in ("examples", "default") if k in plain)
    return out


def _table(specs: tuple[InputSpec, ...], inputs: bool = True) -> dict[str, Any]:
    table: dict[str, Any] = {"type": "object", "additionalProperties": False,
                             "properties": {s.name: _wrapped(s, inputs) for s in specs}}
    required = [s.name for s in specs if s.required and s.default is None]
    if required:
        table["required"] = required
    if inputs and has_running_speed(specs):
        table["properties"]["orders"] = _orders()
    return table


def _orders() -> dict[str, Any]:
    """Excitation orders of the running speed (reportgen.job.orders)."""
    number = {"type": "number", "exclusiveMinimum": 0, "maximum": MAX_ORDER}
    return {"type": "array", "minItems": 1, "maxItems": MAX_ORDERS,
            "description": "excitation orders of the running speed, each assessed over the"
            " envelope: [1, 2, 0.5, { order = 9, label = \"blade pass\" }]",
            "items": {"anyOf": [number, {
                "type": "object", "additionalProperties": False, "required": ["order"],
                "properties": {"order": number, "label": {"type": "string"}}}]}}


# ---------------------------------------------------------------- the job


def _text(required: bool) -> dict[str, Any]:
    s: dict[str, Any] = {"type": "string", "maxLength": MAX_TEXT}
    if required:
        s["pattern"] = r"\S"  # present and not only blanks
    return s


def _date() -> dict[str, Any]:
    date = {"type": "string", "format": "date", "pattern": DATE_PATTERN,
            "examples": ["2026-12-01"]}
    if empty_date_allowed():
        return {"anyOf": [date, {"const": ""}], "description": "an ISO date, YYYY-MM-DD"}
    return {**date, "description": "an ISO date, YYYY-MM-DD"}


def _package_field(key: str, required: bool) -> dict[str, Any]:
    kind = PACKAGE_KINDS[key]
    if kind == "date":
        return _date()
    if kind == "units":
        return {"enum": list(UNIT_SYSTEMS), "default": UNIT_SYSTEMS[0]}
    if kind == "name":
        return {**_text(required), "pattern": NAME_PATTERN}
    if kind == "history":
        return {"type": "array", "items": {
            "type": "object", "additionalProperties": False,
            "required": [k for k, req in HISTORY_KEYS.items() if req],
            "properties": {k: (_date() if k == "date" else _text(req))
                           for k, req in HISTORY_KEYS.items()}}}
    if kind == "deviations":
        return {"type": "array", "description": "failing checks accepted, each with its"
                " justification", "items": {
                    "type": "object", "additionalProperties": False,
                    "required": [k for k, req in DEVIATION_KEYS.items() if req],
                    "properties": {k: (_date() if k == "date" else _text(req))
                                   for k, req in DEVIATION_KEYS.items()}}}
    if kind == "files":
        return {"type": "array", "maxItems": MAX_ATTACHMENTS, "uniqueItems": True,
                "items": {"type": "string", "description": "a file inside the job's folder,"
                          " embedded in the package"}}
    if kind == "path":
        return {"type": "string", "pattern": r"\S",
                "description": "a path relative to the job file"}
    return _text(required)


def _calc_variant(name: str, ct: Any) -> dict[str, Any]:
    return {
        "title": f"{name}: {getattr(ct, 'title', '') or name}",
        "type": "object", "additionalProperties": False,
        "required": ["id", "plugin", "title"],
        "properties": {
            "id": {"type": "string", "pattern": ID_PATTERN, "maxLength": MAX_ID},
            "plugin": {"const": name},
            "title": _text(True),
            "notes": _text(False),
            "inputs": _table(ct.inputs),
            "criteria": _table(ct.criteria, inputs=False),
        },
    }


def job_schema(plugins: PluginSet) -> dict[str, Any]:
    """The job format as a draft 2020-12 JSON Schema: one variant per calc type, chosen
    by ``plugin`` (a discriminated ``oneOf``, which editors' language servers follow)."""
    _LIBRARY.append(load_criteria(plugins))
    try:
        variants = [_calc_variant(n, plugins.calcs[n].calc_type) for n in plugins.names()]
    finally:
        _LIBRARY.pop()
    package_props = {k: _package_field(k, req) for k, req in PACKAGE_KEYS.items()}
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": SCHEMA_ID,
        "title": "reportgen job file",
        "type": "object",
        "additionalProperties": False,
        "required": ["package"],
        "anyOf": [{"required": ["calc"]}, {"required": ["schedule"]}],
        "properties": {
            "schedule": {
                "type": "object", "additionalProperties": False, "required": ["file", "calc"],
                "description": "an equipment schedule (.xlsx or .csv): one calc per row",
                "properties": {
                    "file": {"type": "string", "pattern": r"(?i)\.(xlsx|csv)$"},
                    "sheet": {"type": "string", "minLength": 1},
                    "calc": {"type": "object", "additionalProperties": False,
                             "required": ["plugin"],
                             "properties": {
                                 "plugin": {"enum": plugins.names()},
                                 "title": {"type": "string", "pattern": r"\{tag\}"},
                                 "notes": {"type": "string"},
                                 "inputs": {"type": "object"},
                                 "criteria": {"type": "object"}}}}},
            "package": {"type": "object", "additionalProperties": False,
                        "required": [k for k, req in PACKAGE_KEYS.items() if req] + ["date"],
                        "properties": package_props},
            "calc": {"type": "array", "minItems": 1, "maxItems": MAX_CALCS,
                     "items": {
                         "type": "object", "required": ["id", "plugin", "title"],
                         "properties": {"plugin": {"enum": plugins.names(),
                                                   "description": "the calc type"}},
                         "oneOf": variants} if variants else False,
                     "x-unique-calc-ids": True},
        },
        "$defs": {**{f"unit-{d}": {"type": "string", "pattern": unit_pattern(d)}
                     for d in sorted(DIMENSIONS)},
                  **{f"spread-{d}": {"type": "string", "pattern": spread_pattern(d)}
                     for d in sorted(DIMENSIONS)}},
        "x-calc-keys": sorted(CALC_KEYS),
        "x-known-differences": KNOWN_DIFFERENCES,
    }
