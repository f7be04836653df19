"""A creatinine that is not steady is flagged: the eGFR (CKD-EPI 2021, Inker et al., NEJM 2021) assumes a
steady state. Thresholds from KDIGO's acute kidney injury definition (Kidney Int Suppl 2012; from memory):
a rise of 0.3 mg/dL within 48 hours, or to 1.5 times a value from the last seven days. Cases are invented."""

from __future__ import annotations

from typing import Any

import pytest

from notegen.case.validation import validate_case
from notegen.pipeline import Drafter

DRAFTER = Drafter()


def _case(earlier: float, later: float, hours: int, findings: tuple[str, ...] = ()) -> dict[str, Any]:
    start = "2026-03-10T08:00"
    end = f"2026-03-{10 + (8 + hours) // 24:02d}T{(8 + hours) % 24:02d}:00"
    return {
        "units": "conventional",
        "patient": {"age": 58, "sex": "female"},
        "gas": {"sample": "arterial", "ph": 7.52, "pco2": 47, "hco3": 37},
        "chem": [
            {"taken_at": start, "na": 139, "k": 3.8, "cl": 99, "tco2": 29, "creatinine": earlier},
            {"taken_at": end, "na": 137, "k": 3.4, "cl": 90, "tco2": 37, "creatinine": later},
        ],
        "context": {"findings": list(findings)},
    }


def _flagged(data: dict[str, Any]) -> list[str]:
    return [a.message for a in DRAFTER.assess(validate_case(data)).alerts if a.code == "unsteady_creatinine"]


@pytest.mark.parametrize(
    ("earlier", "later", "hours", "flagged"),
    [
        (0.9, 1.2, 24, True),  # +0.3 within 48 h
        (0.9, 1.1, 24, False),  # +0.2, ratio 1.22
        (1.4, 1.7, 72, False),  # +0.3 but after 48 h, ratio 1.21
        (0.6, 0.9, 72, True),  # ratio 1.5 within seven days
        (0.6, 0.9, 200, False),  # ratio 1.5 after seven days
        (1.8, 1.2, 24, False),  # falling
    ],
)
def test_a_rise_by_kdigos_definition_is_flagged(earlier: float, later: float, hours: int, flagged: bool) -> None:
    assert bool(_flagged(_case(earlier, later, hours))) is flagged


def test_the_message_names_the_values_and_the_egfrs_limit() -> None:
    assert _flagged(_case(0.9, 1.8, 23)) == [
        "Creatinine rose from 0.9 mg/dL to 1.8 mg/dL across the results given, as in acute kidney injury: the eGFR "
        "assumes a steady creatinine and overstates kidney function while it rises."
    ]


def test_acute_kidney_injury_reported_is_flagged_with_one_creatinine() -> None:
    data = _case(0.9, 1.0, 24, findings=("acute kidney injury",))
    assert _flagged(data) == [
        "Acute kidney injury is reported: the eGFR assumes a steady creatinine and overstates kidney function while "
        "it rises."
    ]
    note = DRAFTER.draft(validate_case(data))
    assert "Acute kidney injury is reported" in note
