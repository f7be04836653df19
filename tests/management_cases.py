"""Invented cases for the management-consideration tests (no real patients)."""

from __future__ import annotations

import json
from functools import cache
from typing import Any

from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.pipeline import Drafter
from notegen.workup.model import CauseEntry, SuggestedTest

# An invented adult with a metabolic alkalosis and nothing else of note: potassium, sodium,
# magnesium and kidney function normal, volume not recorded.
BASE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 60, "sex": "male", "weight_kg": 75},
    "gas": {"sample": "arterial", "ph": 7.50, "pco2": 48, "hco3": 36},
    "chem": {"na": 139, "k": 4.0, "cl": 94, "creatinine": 0.9, "albumin": 4.0, "mg": 2.0},
}
# An invented diarrheal normal-gap metabolic acidosis with hypokalemia.
ACIDOSIS: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 60, "sex": "male", "weight_kg": 75},
    "gas": {"sample": "arterial", "ph": 7.30, "pco2": 30, "hco3": 15},
    "chem": {"na": 138, "k": 2.9, "cl": 115, "creatinine": 0.9, "albumin": 4.0, "mg": 2.0},
    "context": {"findings": ["diarrhea"]},
}
# An invented high-gap lactic acidosis (lactate 6.0 mmol/L), findings and volume set by each test.
LACTIC: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 66, "sex": "male", "weight_kg": 80},
    "gas": {"sample": "arterial", "ph": 7.22, "pco2": 28, "hco3": 11},
    "chem": {"na": 138, "k": 4.6, "cl": 102, "creatinine": 1.2, "albumin": 4.0, "mg": 2.0, "lactate": 6.0},
}


def case(base: dict[str, Any] = BASE, **sections: dict[str, Any]) -> dict[str, Any]:
    """`base` with each named section updated key by key (`None` removes a key)."""
    data = {name: dict(value) if isinstance(value, dict) else value for name, value in base.items()}
    for name, changes in sections.items():
        merged = {**data.get(name, {}), **changes}
        data[name] = {key: value for key, value in merged.items() if value is not None}
    return data


@cache
def _assess(frozen: str) -> Assessment:
    return Drafter().assess(validate_case(json.loads(frozen)))


def assess(data: dict[str, Any], **update: Any) -> Assessment:
    assessment = _assess(json.dumps(data, sort_keys=True))
    return assessment.model_copy(update=update) if update else assessment


def cause(cause_id: str, tier: str = "likely") -> CauseEntry:
    return CauseEntry.model_validate({"cause": cause_id, "label": cause_id, "tier": tier, "for": [], "against": []})


def suggested(test_id: str) -> SuggestedTest:
    return SuggestedTest(test=test_id, label=test_id, why="")
