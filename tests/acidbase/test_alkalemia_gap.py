"""A high anion gap in alkalemia no larger than alkalemia itself causes is a possible, not an established,
acidosis (Madias, Ayus & Adrogue, N Engl J Med 1979;300:1421; from memory): no acidosis work-up, no
toxic-alcohol tests, no poisoning call. A measured lactate or ketone above normal, or a larger gap,
keeps it established. All cases are invented."""

from __future__ import annotations

from typing import Any

import pytest

from notegen.case.validation import validate_case
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter

DRAFTER = Drafter()
# Cirrhosis, vomiting and tachypnea: pH 7.62. Gap 133 - 86 - 33 = 14, corrected for albumin 2.8 g/dL by
# 2.5 x (4.0 - 2.8) = 3 (Figge et al., Crit Care Med 1998) to 17 mmol/L: 1 above 16, within 4.
DOUBLE_ALKALOSIS: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 49, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.62, "pco2": 32, "hco3": 32},
    "chem": {"na": 133, "k": 2.9, "cl": 86, "tco2": 33, "albumin": 2.8, "creatinine": 0.7},
    "urine": {"na": 12, "k": 30, "cl": 6},
    "context": {"volume": "low", "findings": ["cirrhosis", "vomiting"]},
}


def _assess(**chem: float) -> Any:
    return DRAFTER.assess(validate_case({**DOUBLE_ALKALOSIS, "chem": {**DOUBLE_ALKALOSIS["chem"], **chem}}))


def test_a_gap_within_alkalemias_own_rise_is_a_possible_acidosis_only() -> None:
    assessment = _assess()
    reading = assessment.acid_base
    assert reading.anion_gap_within_alkalemia_rise
    assert "metabolic_acidosis" in reading.possible_disorders and "metabolic_acidosis" not in reading.disorders
    assert assessment.acidosis is None
    note = DRAFTER.draft(validate_case(DOUBLE_ALKALOSIS))
    assert "a rise alkalemia itself can cause, so an added high anion gap acidosis is possible, not established" in note
    for struck in ("Toxic alcohol levels", "poison control", "concurrent metabolic alkalosis"):
        assert struck not in note


@pytest.mark.parametrize(
    "chem",
    [
        {"lactate": 2.0},  # at the upper reference limit: a measured acid
        {"bhb": 0.6},
        {"cl": 81},  # gap 19 + 3 = 22, above 16 + 4
    ],
    ids=["lactate", "ketone", "larger-gap"],
)
def test_a_measured_acid_or_a_larger_gap_keeps_the_acidosis_established(chem: dict[str, float]) -> None:
    assessment = _assess(**chem)
    assert "metabolic_acidosis" in assessment.acid_base.disorders
    assert not assessment.acid_base.anion_gap_within_alkalemia_rise
    assert assessment.acidosis is not None


def test_below_the_measured_acid_limits_the_rule_still_applies() -> None:
    assert _assess(lactate=1.9, bhb=0.5).acid_base.anion_gap_within_alkalemia_rise


def test_the_reading_and_the_acidosis_pack_share_the_normal_lactate_and_ketone_limits() -> None:
    knowledge = shipped_knowledge()
    pack = knowledge.acidosis_pack.settings
    assert knowledge.settings.lactate_normal_below.value == pack["lactate_normal_below"][0]
    assert knowledge.settings.bhb_normal_below.value == pack["bhb_normal_below"][0]
