"""The printed JSON Schemas: the JSON output of every sample validates, and so does every case file."""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path
from typing import Any

import jsonschema
import pytest
import yaml

from notegen.errors import UsageError
from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions
from notegen.schemas import schema_text

ROOT = Path(__file__).resolve().parent.parent
CASES = sorted((ROOT / "samples").glob("*.yaml"))
Validator = jsonschema.Draft202012Validator


@pytest.fixture(scope="module")
def output_validator() -> jsonschema.protocols.Validator:
    schema = json.loads(schema_text("output"))
    Validator.check_schema(schema)
    return Validator(schema)


@pytest.fixture(scope="module")
def case_validator() -> jsonschema.protocols.Validator:
    schema = json.loads(schema_text("case"))
    Validator.check_schema(schema)
    return Validator(schema)


def as_json_data(value: Any) -> Any:
    """YAML reads ISO times as datetimes; JSON would hold them as text."""
    if isinstance(value, dict):
        return {key: as_json_data(item) for key, item in value.items()}
    if isinstance(value, list):
        return [as_json_data(item) for item in value]
    if isinstance(value, dt.date):
        return value.isoformat()
    return value


def errors(validator: jsonschema.protocols.Validator, data: Any) -> list[str]:
    return [f"{'/'.join(map(str, e.absolute_path))}: {e.message}" for e in validator.iter_errors(data)]


def test_schema_text_is_pretty_json_ending_in_a_newline() -> None:
    for kind in ("case", "output"):
        text = schema_text(kind)
        assert text.endswith("}\n") and text.startswith('{\n  "$schema"')
    with pytest.raises(UsageError):
        schema_text("note")


@pytest.mark.parametrize("case_path", CASES, ids=[path.stem for path in CASES])
def test_json_output_of_every_sample_validates(
    case_path: Path, output_validator: jsonschema.protocols.Validator
) -> None:
    output = Drafter().draft(read_case(str(case_path)), DraftOptions(output_format="json"))
    assert errors(output_validator, json.loads(output)) == []


def test_output_schema_names_the_issue_fields(output_validator: jsonschema.protocols.Validator) -> None:
    properties = output_validator.schema["properties"]
    for name in (
        "schema_version",
        "case",
        "acid_base",
        "alerts",
        "calculations",
        "chloride_class",
        "differential",
        "maintenance",
        "next_tests",
        "warnings",
        "paragraph",
        "management",
    ):
        assert name in properties
    cause = output_validator.schema["$defs"]["CauseEntry"]["properties"]
    assert "for" in cause and "against" in cause


def test_output_schema_rejects_a_wrong_output(output_validator: jsonschema.protocols.Validator) -> None:
    data = json.loads(Drafter().draft(read_case(str(CASES[0])), DraftOptions(output_format="json")))
    data["chloride_class"] = "salty"
    assert errors(output_validator, data)


@pytest.mark.parametrize("case_path", CASES, ids=[path.stem for path in CASES])
def test_every_sample_validates_against_the_case_schema(
    case_path: Path, case_validator: jsonschema.protocols.Validator
) -> None:
    data = as_json_data(yaml.safe_load(case_path.read_text(encoding="utf-8")))
    assert errors(case_validator, data) == []


def test_the_blank_case_file_validates(case_validator: jsonschema.protocols.Validator) -> None:
    data = yaml.safe_load((ROOT / "templates" / "new_case.yaml").read_text(encoding="utf-8"))
    assert errors(case_validator, data) == []


@pytest.mark.parametrize(
    "data",
    [
        {"paitent": {"age": 50}},
        {"chem": {"sodium": 140}},
        {"gas": {"ph": "seven"}},
        {"gas": {"sample": "capillary"}},
        {"chem": {"k": {"value": 3.1, "units": "mmol/L"}}},
        {"context": {"volume": "dry"}},
        {"context": {"bp": "high"}},
        {"context": {"meds": [{"name": "furosemide", "hours": 4}]}},
        {"units": "imperial"},
        {"patient": {"sex": "x"}},
    ],
    ids=[
        "top-level typo",
        "unknown analyte",
        "text value",
        "sample",
        "value mapping key",
        "volume",
        "bp",
        "med key",
        "units",
        "sex",
    ],
)
def test_case_schema_refuses_what_the_validator_refuses(
    data: dict[str, Any], case_validator: jsonschema.protocols.Validator
) -> None:
    from notegen.case.validation import validate_case
    from notegen.errors import InputError

    assert errors(case_validator, data)
    with pytest.raises(InputError):
        validate_case(data)


@pytest.mark.parametrize(
    "data",
    [
        {"gas": {"pco2": "6.2 kPa", "ph": 7.41, "sample": "Venous"}},
        {"chem": {"k": {"value": 3.1, "unit": "mEq/L"}, "urea": 6.8}, "units": "si"},
        {
            "urine": {"cl": "<10"},
            "context": {"meds": "furosemide, lisinopril", "bp": {"systolic": 120, "diastolic": 80}},
        },
        {
            "gas": [
                {"ph": 7.5, "pco2": 48, "taken_at": "2026-03-14T06:30"},
                {"ph": 7.48, "pco2": 47, "taken_at": "2026-03-14T09:30"},
            ]
        },
        {"patient": {"sex": "F"}, "context": {"volume": "Euvolemic", "findings": "vomiting, NG suction"}},
    ],
    ids=["kPa text", "SI mapping and urea", "qualifier and bp mapping", "serial gas", "synonyms"],
)
def test_case_schema_accepts_what_the_validator_accepts(
    data: dict[str, Any], case_validator: jsonschema.protocols.Validator
) -> None:
    from notegen.case.validation import validate_case

    validate_case(data)
    assert errors(case_validator, data) == []
