"""JSON Schemas printed by `notegen schema`: the case file as written, and the JSON output.

The output schema is generated from the `Assessment` model, so it cannot drift from what
`--format json` prints. The case file is looser than any model of the validated case (a value
may be a number, "6.2 kPa" or {value, unit}; a section may be a list of timed results), so its
schema is built here from the same tables the validator reads: section keys, field labels and
default units. Plausibility bounds depend on the unit and stay with the validator.
"""

from __future__ import annotations

import json
from typing import Any

from notegen.knowledge import shipped_knowledge

__all__ = ["SCHEMA_KINDS", "case_schema", "output_schema", "schema_text"]

SCHEMA_KINDS = ("case", "output")
DRAFT = "https://json-schema.org/draft/2020-12/schema"
# A number with an optional < or > and an optional unit, as the validator reads it.
VALUE_TEXT = r"^\s*[<>]?=?\s*[-+]?([0-9]+(\.[0-9]*)?|\.[0-9]+)\s*.*$"


def schema_text(kind: str) -> str:
    """The schema `kind` ("case" or "output") as pretty JSON ending in a newline."""
    from notegen.errors import UsageError

    if kind == "case":
        schema = case_schema()
    elif kind == "output":
        schema = output_schema()
    else:
        raise UsageError(f"unknown schema {kind!r}; choose one of {', '.join(SCHEMA_KINDS)}")
    return json.dumps(schema, indent=2, ensure_ascii=False) + "\n"


def output_schema() -> dict[str, Any]:
    """The schema of `notegen draft --format json`: the `Assessment` as dumped by alias."""
    from notegen.assess.model import Assessment

    body = Assessment.model_json_schema(by_alias=True, mode="serialization")
    return {"$schema": DRAFT, "title": "notegen JSON output", **{k: v for k, v in body.items() if k != "title"}}


def _any_case(word: str) -> str:
    return "".join(f"[{c.upper()}{c.lower()}]" if c.isalpha() else c for c in word)


def _words(words: list[str], description: str) -> dict[str, Any]:
    # The validator folds case and trims spaces before it looks a word up.
    alternatives = "|".join(_any_case(word) for word in words)
    return {"type": "string", "pattern": f"^\\s*({alternatives})\\s*$", "description": description}


def _nullable(schema: dict[str, Any]) -> dict[str, Any]:
    return {"anyOf": [schema, {"type": "null"}]}


def _lab_value(description: str) -> dict[str, Any]:
    return {
        "description": description,
        "anyOf": [
            {"type": "number"},
            {"type": "string", "pattern": VALUE_TEXT, "maxLength": 60},
            {
                "type": "object",
                "additionalProperties": False,
                "required": ["value"],
                "properties": {
                    "value": {"type": "number"},
                    "unit": {"type": ["string", "null"]},
                    "qualifier": {"enum": ["<", ">", None]},
                },
            },
            {"type": "null"},
        ],
    }


def _lab_section(section: str, description: str) -> dict[str, Any]:
    from notegen.case import units
    from notegen.case.validation import LAB_SECTIONS

    fields = shipped_knowledge().fields
    properties: dict[str, Any] = {
        "taken_at": {
            "description": "When the sample was taken (ISO date-time, e.g. 2026-03-14T06:30).",
            "type": ["string", "null"],
        }
    }
    if section == "gas":
        properties["sample"] = _nullable(_words(["arterial", "venous"], "arterial or venous"))
    for key in LAB_SECTIONS[section]:
        name = f"{section}.{key}"
        unit = units.FIELD_UNITS[name]
        default = f"default unit {unit.conventional or 'none'} (conventional), {unit.si or 'none'} (si)"
        properties[key] = _lab_value(f"{fields[name].label}; {default}")
    if section == "chem":
        properties["urea"] = _lab_value("urea, instead of bun; default unit mmol/L (si); mg/dL is urea mass")
    entry = {"type": "object", "additionalProperties": False, "properties": properties}
    return {
        "description": description,
        "anyOf": [
            entry,
            {"type": "array", "items": entry, "description": "serial results, each with taken_at"},
            {"type": "null"},
        ],
    }


# long: a JSON Schema literal, declarative: splitting it would scatter one document
def case_schema() -> dict[str, Any]:
    """The schema of a case file (YAML or JSON), as `notegen draft` reads it."""
    from notegen.case.checks import MAX_TEXT
    from notegen.case.context import (
        LEVEL_WORDS,
        MAX_MEDICATIONS,
        SCREEN_WORDS,
        SEX_WORDS,
        VOLUME_WORDS,
        YES_NO,
    )

    medication = {
        "anyOf": [
            {"type": "string", "minLength": 1, "maxLength": MAX_TEXT},
            {
                "type": "object",
                "additionalProperties": False,
                "required": ["name"],
                "properties": {
                    "name": {"type": "string", "minLength": 1, "maxLength": MAX_TEXT},
                    "last_dose_hours": {"type": ["number", "null"], "minimum": 0, "maximum": 24 * 365},
                },
            },
        ]
    }
    number = {"type": ["number", "null"]}
    return {
        "$schema": DRAFT,
        "title": "notegen case file",
        "description": "One case: lab values with their units and the clinical context. Adults only.",
        "type": "object",
        "additionalProperties": False,
        "properties": {
            "case": {
                "description": "A label of your own (no names).",
                "type": ["string", "number", "null"],
                "maxLength": MAX_TEXT,
            },
            "units": {
                "description": "Unit system of bare numbers. Without it, a bare value readable in both systems "
                "is refused.",
                "enum": ["conventional", "si"],
                "default": "conventional",
            },
            "dates": {
                "description": "How a pasted date such as 03/04/2026 is read: day first or month first.",
                "enum": ["day-first", "month-first", None],
            },
            "patient": _nullable(
                {
                    "type": "object",
                    "additionalProperties": False,
                    "properties": {
                        "age": {**number, "minimum": 0, "maximum": 120, "description": "years"},
                        "sex": _nullable(_words(sorted(SEX_WORDS), "female or male")),
                        "weight_kg": {**number, "minimum": 1, "maximum": 400},
                        "height_cm": {**number, "minimum": 30, "maximum": 260},
                    },
                }
            ),
            "gas": _lab_section("gas", "Blood gas."),
            "chem": _lab_section("chem", "Serum or plasma chemistry."),
            "urine": _lab_section("urine", "Spot urine."),
            "context": _nullable(
                {
                    "type": "object",
                    "additionalProperties": False,
                    "properties": {
                        "bp": {
                            "description": 'Blood pressure, "168/98" or {systolic, diastolic}.',
                            "anyOf": [
                                {
                                    "type": "string",
                                    "pattern": r"^\s*[0-9]{2,3}\s*/\s*[0-9]{2,3}\s*([mM][mM] ?[hH][gG])?\s*$",
                                },
                                {
                                    "type": "object",
                                    "additionalProperties": False,
                                    "required": ["systolic", "diastolic"],
                                    "properties": {"systolic": {"type": "number"}, "diastolic": {"type": "number"}},
                                },
                                {"type": "null"},
                            ],
                        },
                        "volume": _nullable(
                            _words(sorted(VOLUME_WORDS), "low, normal, high or unknown (or a synonym)")
                        ),
                        "meds": {
                            "description": "Medications: a list of names or {name, last_dose_hours}, or one "
                            "comma-separated text.",
                            "anyOf": [
                                {"type": "array", "items": medication, "maxItems": MAX_MEDICATIONS},
                                {"type": "string"},
                                {"type": "null"},
                            ],
                        },
                        "findings": {
                            "description": "Clinical findings from the vocabulary (e.g. vomiting, edema), as a "
                            "list or one comma-separated text.",
                            "anyOf": [
                                {"type": "array", "items": {"type": "string", "minLength": 1, "maxLength": MAX_TEXT}},
                                {"type": "string"},
                                {"type": "null"},
                            ],
                        },
                        "renin": _nullable(_words(sorted(LEVEL_WORDS), "low, normal or high against the lab's range")),
                        "aldosterone": _nullable(
                            _words(sorted(LEVEL_WORDS), "low, normal or high against the lab's range")
                        ),
                        "diuretic_screen": _nullable(_words(sorted(SCREEN_WORDS), "urine diuretic screen result")),
                        "blood_product_units": {
                            "description": "Units of citrated blood products (red cells, plasma) given recently.",
                            "anyOf": [{"type": "integer", "minimum": 0, "maximum": 500}, {"type": "null"}],
                        },
                        "cortisol_excess": {
                            "description": "Result of an evaluation for cortisol excess (yes or no).",
                            "anyOf": [{"type": "boolean"}, _words(sorted(YES_NO), "yes or no"), {"type": "null"}],
                        },
                    },
                }
            ),
        },
    }
