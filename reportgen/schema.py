"""JSON Schema of the job file format, including every installed calc type's inputs."""

from __future__ import annotations

from typing import Any

from .calc import InputSpec
from .jobfile import CALC_KEYS, MAX_ATTACHMENTS, PACKAGE_KEYS
from .plugins import PluginSet
from .units import DIMENSIONS

SCHEMA_ID = "https://reportgen.invalid/schema/job-1.json"


def _value_schema(spec: InputSpec) -> dict[str, Any]:
    dim = DIMENSIONS[spec.dimension]
    if spec.kind == "integer":
        s: dict[str, Any] = {"type": "integer"}
    elif spec.dimension == "dimensionless":
        s = {"type": "number"}
    else:
        s = {"type": "string", "pattern": r"^\s*[-+0-9.eE]+\s*\S.*$",
             "examples": [f"1 {dim.example.split()[0]}"]}
    if spec.kind == "pair":
        s = {"type": "array", "items": s, "minItems": 2, "maxItems": 2}
    elif spec.kind == "points":
        s = {"type": "array", "items": {"type": "array", "items": s, "minItems": 2,
                                        "maxItems": 2}}
    s["description"] = f"{spec.description} ({dim.name.replace('_', ' × ')})"
    return s


def job_schema(plugins: PluginSet) -> dict[str, Any]:
    calc_variants = []
    for name in plugins.names():
        ct = plugins.calcs[name].calc_type
        required = [s.name for s in ct.inputs if s.required and s.default is None]
        calc_variants.append({
            "if": {"properties": {"plugin": {"const": name}}},
            "then": {"properties": {
                "inputs": {"type": "object", "additionalProperties": False,
                           "properties": {s.name: _value_schema(s) for s in ct.inputs},
                           "required": required},
                "criteria": {"type": "object", "additionalProperties": False,
                             "properties": {s.name: _value_schema(s) for s in ct.criteria}},
            }},
        })
    text = {"type": "string"}
    package_props: dict[str, Any] = {k: dict(text) for k in PACKAGE_KEYS}
    package_props["units"] = {"enum": ["SI", "US"]}
    package_props["attachments"] = {
        "type": "array", "maxItems": MAX_ATTACHMENTS, "uniqueItems": True,
        "items": {"type": "string", "description": "a file inside the job's folder, embedded"
                  " in the package"}}
    package_props["revision_history"] = {"type": "array", "items": {
        "type": "object", "required": ["revision", "description"],
        "properties": {"revision": text, "date": text, "description": text, "by": text},
        "additionalProperties": False}}
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": SCHEMA_ID,
        "title": "reportgen job file",
        "type": "object",
        "additionalProperties": False,
        "required": ["package", "calc"],
        "properties": {
            "package": {"type": "object", "additionalProperties": False,
                        "required": [k for k, req in PACKAGE_KEYS.items() if req] + ["date"],
                        "properties": package_props},
            "calc": {"type": "array", "minItems": 1, "items": {
                "type": "object", "additionalProperties": False,
                "required": ["id", "plugin", "title"],
                "properties": {"id": {"type": "string", "pattern": "^[a-z0-9]+(-[a-z0-9]+)*$"},
                               "plugin": {"enum": plugins.names()}, "title": text,
                               "notes": text, "inputs": {"type": "object"},
                               "criteria": {"type": "object"}},
                "allOf": calc_variants}},
        },
        "x-calc-keys": sorted(CALC_KEYS),
    }
