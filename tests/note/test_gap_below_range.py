"""A calculated anion gap just below the reference range is read as within its variation, not explained.

The margin is `anion_gap_low_margin` in rules/acid_base.yaml (2 mmol/L, common practice: the gap
carries the error of three measurements). All cases are invented.
"""

from __future__ import annotations

from typing import Any

import pytest

from notegen.case.validation import validate_case
from notegen.note.paragraph import draft_paragraph
from notegen.pipeline import Drafter

DRAFTER = Drafter()
# A distal renal tubular acidosis: gap 139 - 116 - 15 = 8, corrected for albumin 4.1 g/dL by
# 2.5 x (4.0 - 4.1) (Figge et al., Crit Care Med 1998) to 7.75 mmol/L, reference 8-16.
NORMAL_GAP_ACIDOSIS: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 39, "sex": "female"},
    "gas": {"sample": "arterial", "ph": 7.29, "pco2": 30, "hco3": 14},
    "chem": {"na": 139, "k": 2.7, "cl": 116, "tco2": 15, "albumin": 4.1, "creatinine": 0.8},
}


def _case(chem: dict[str, float]) -> dict[str, Any]:
    return {**NORMAL_GAP_ACIDOSIS, "chem": {**NORMAL_GAP_ACIDOSIS["chem"], **chem}}


@pytest.mark.parametrize(
    ("chem", "expected"),
    [
        ({}, "within_variation"),  # 7.75: 0.25 below 8
        ({"cl": 114}, None),  # 139 - 114 - 15 = 10, corrected 9.75: inside the range
        ({"cl": 117.75, "albumin": 4.0}, "within_variation"),  # 139 - 117.75 - 15 = 6.25: 1.75 below 8
        ({"cl": 118.5, "albumin": 4.0}, "beyond_variation"),  # 5.5: 2.5 below 8
    ],
)
def test_how_far_below_the_range_the_reading_records(chem: dict[str, float], expected: str | None) -> None:
    reading = DRAFTER.assess(validate_case(_case(chem))).acid_base
    assert reading.anion_gap_below_range == expected


def test_a_gap_just_below_the_range_still_names_a_normal_gap_acidosis() -> None:
    paragraph = draft_paragraph(DRAFTER.assess(validate_case(_case({}))))
    assert (
        "The albumin-corrected anion gap of 7.8 mmol/L is just below the reference range (8–16 mmol/L), within the "
        "variation of a calculated gap, so this is a normal anion gap (hyperchloremic) acidosis." in paragraph
    )
    assert "unmeasured cations" not in paragraph


def test_a_gap_well_below_the_range_is_explained() -> None:
    paragraph = draft_paragraph(DRAFTER.assess(validate_case(_case({"cl": 118.5, "albumin": 4.0}))))
    assert "anion gap is below the reference range at 5.5 mmol/L" in paragraph
    assert "unmeasured cations (a high calcium or magnesium, lithium, a paraprotein)" in paragraph
