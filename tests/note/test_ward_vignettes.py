"""Invented ward vignettes read as a nephrologist would: dialysis, chloride loading, acetazolamide with
hypercapnia. Each checks the sentences the chart note must and must not hold."""

from __future__ import annotations

from typing import Any

import pytest

from notegen.case.validation import validate_case
from notegen.pipeline import Drafter

DRAFTER = Drafter()

# End-stage kidney disease on haemodialysis, vomiting, calcium acetate: the urine no longer reads the
# kidney's handling of the alkalosis, and aldosterone no longer drives it (common practice).
DIALYSIS: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 61, "sex": "female"},
    "gas": {"sample": "venous", "ph": 7.50, "pco2": 46, "hco3": 35},
    "chem": {"na": 137, "k": 3.4, "cl": 94, "tco2": 35, "bun": 22, "creatinine": 4.8, "albumin": 3.5},
    "context": {"bp": "140/82", "volume": "normal", "meds": ["calcium acetate", "sevelamer"],
                "findings": ["esrd", "vomiting", "hemodialysis"]},
}  # fmt: skip
# Six litres of saline after septic shock, now overloaded: a normal-gap acidosis from chloride loading.
SALINE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 54, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.31, "pco2": 33, "hco3": 16.5},
    "chem": {"na": 141, "k": 3.9, "cl": 117, "tco2": 17, "creatinine": 1.0, "albumin": 3.4, "lactate": 1.4},
    "context": {"volume": "high", "findings": ["sepsis", "saline resuscitation", "edema"]},
}
# A CO2 retainer given acetazolamide: pH 7.28, PaCO2 62, bicarbonate 28.5 (6.1 + log(28.5 / (0.03 x 62)) = 7.29).
ACETAZOLAMIDE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 74, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.28, "pco2": 62, "hco3": 28.5},
    "chem": {"na": 138, "k": 3.6, "cl": 104, "tco2": 29, "creatinine": 1.1, "albumin": 3.8},
    "context": {"meds": ["acetazolamide", "furosemide"], "findings": ["chronic co2 retention"]},
}

READINGS: dict[str, tuple[dict[str, Any], tuple[str, ...], tuple[str, ...]]] = {
    "dialysis": (
        DIALYSIS,
        (
            "On dialysis that includes the dialysate bicarbonate",
            "Mineralocorticoid excess is unlikely (dialysis",
            "On dialysis the urine chloride does not show whether the alkalosis is chloride-responsive",
        ),
        ("Spot urine chloride", "Plasma renin", "not recognised", "Without a urine chloride", "bedside volume"),
    ),
    "saline": (SALINE, ("as a balanced crystalloid rather than isotonic saline",), ()),
    "acetazolamide": (ACETAZOLAMIDE, ("whether to continue acetazolamide is worth weighing",), ()),
}


@pytest.mark.parametrize("name", sorted(READINGS))
def test_the_note_fits_the_patient(name: str) -> None:
    data, says, lacks = READINGS[name]
    note = DRAFTER.draft(validate_case(data))
    for text in says:
        assert text in note, note
    for text in lacks:
        assert text not in note, note


def test_without_dialysis_the_urine_chloride_is_still_asked_for() -> None:
    data = {**DIALYSIS, "context": {**DIALYSIS["context"], "findings": ["esrd", "vomiting"]}}
    note = DRAFTER.draft(validate_case(data))
    assert "Spot urine chloride" in note and "dialysate" not in note


def test_the_fluid_and_acetazolamide_sentences_stay_out_where_they_do_not_fit() -> None:
    diarrhea = {**SALINE, "context": {"volume": "high", "findings": ["diarrhea"]}}
    assert "balanced crystalloid rather than isotonic saline" not in DRAFTER.draft(validate_case(diarrhea))
    no_drug = {**ACETAZOLAMIDE, "context": {**ACETAZOLAMIDE["context"], "meds": ["furosemide"]}}
    assert "acetazolamide" not in DRAFTER.draft(validate_case(no_drug)).lower()


def test_on_dialysis_a_normal_gap_acidosis_asks_for_no_urine_tests() -> None:
    # Invented: a dialysis patient between sessions, normal-gap acidosis: the urine no longer reads acid excretion.
    data = {
        "units": "conventional",
        "patient": {"age": 66, "sex": "male"},
        "gas": {"sample": "arterial", "ph": 7.30, "pco2": 30, "hco3": 14},
        "chem": {"na": 138, "k": 5.2, "cl": 112, "tco2": 15, "creatinine": 6.5, "albumin": 4.0},
        "context": {"findings": ["hemodialysis"]},
    }
    assert "Urine pH" not in DRAFTER.draft(validate_case(data))
    without = {**data, "context": {"findings": []}}
    assert "Urine pH" in DRAFTER.draft(validate_case(without))


def test_citrate_units_and_admitted_laxatives_read_as_a_clinician_writes() -> None:
    # Invented: 14 units of blood products after trauma; and a young woman admitting daily senna and bisacodyl.
    transfused = {
        "units": "conventional",
        "patient": {"age": 35, "sex": "male"},
        "gas": {"sample": "arterial", "ph": 7.51, "pco2": 44, "hco3": 34},
        "chem": {"na": 140, "k": 3.3, "cl": 100, "tco2": 35, "creatinine": 1.0, "albumin": 3.0},
        "context": {"findings": ["massive transfusion"], "blood_product_units": 14},
    }
    note = DRAFTER.draft(validate_case(transfused))
    assert "14 units of citrated blood products" in note and "units units" not in note
    laxatives = {
        "units": "conventional",
        "patient": {"age": 23, "sex": "female"},
        "gas": {"sample": "venous", "ph": 7.45, "pco2": 50, "hco3": 33},
        "chem": {"na": 136, "k": 2.6, "cl": 92, "tco2": 33, "creatinine": 0.7, "albumin": 4.1, "mg": 1.6},
        "urine": {"na": 8, "k": 18, "cl": 9},
        "context": {"volume": "low", "meds": ["senna", "bisacodyl"], "findings": ["laxative abuse"]},
    }
    note = DRAFTER.draft(validate_case(laxatives))
    # Galla, JASN 2000 (from memory): laxatives with a low urine chloride, as stool carries chloride away.
    assert "The likely cause is chloride-losing diarrhea or laxative misuse" in note
    assert "stopping them" in note and "Laxative use is worth asking about" not in note


def test_a_rising_creatinine_keeps_the_egfr_from_clearing_reduced_gfr() -> None:
    # Invented: vomiting, creatinine 0.9 mg/dL (eGFR about 80 by CKD-EPI 2021) with acute kidney injury reported:
    # "eGFR 80 is enough to excrete excess bicarbonate" would be struck while the creatinine rises (KDIGO 2012).
    data = {
        "units": "conventional",
        "patient": {"age": 58, "sex": "female"},
        "gas": {"sample": "arterial", "ph": 7.52, "pco2": 47, "hco3": 37},
        "chem": {"na": 137, "k": 3.0, "cl": 88, "tco2": 37, "creatinine": 0.9, "albumin": 4.0},
        "context": {"volume": "low", "findings": ["vomiting"]},
    }
    def against(case_data: dict[str, Any]) -> set[str]:
        assessment = DRAFTER.assess(validate_case(case_data))
        return {e.id for c in assessment.differential if c.cause == "reduced_gfr" for e in c.opposing}

    assert "egfr_adequate" in against(data)
    rising = {**data, "context": {"volume": "low", "findings": ["vomiting", "acute kidney injury"]}}
    assert "egfr_adequate" not in against(rising)
    assert "Acute kidney injury is reported" in DRAFTER.draft(validate_case(rising))
