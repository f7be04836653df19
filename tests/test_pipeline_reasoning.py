"""Clinical reasoning on invented cases, end to end (case -> reading -> rule walk -> considerations).

Each test is a vignette made up for the point it checks, with the published source of the
principle beside it ("from memory" where the source was not checked against a stored copy).
"""

from __future__ import annotations

from typing import Any

from notegen.assess.considerations import load_considerations, select_considerations
from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.pipeline import Drafter

DRAFTER = Drafter()


def assess(data: dict[str, Any]) -> Assessment:
    return DRAFTER.assess(validate_case(data))


def tiers(assessment: Assessment) -> dict[str, str]:
    return {c.cause: c.tier for c in assessment.differential}


def considerations(assessment: Assessment) -> dict[str, str]:
    return {item.id: item.says for item in select_considerations(assessment, load_considerations())}


def alert_codes(assessment: Assessment) -> set[str]:
    return {a.code for a in assessment.alerts}


# --- Calcium and the calcium-alkali syndrome ------------------------------------------------------------
# Patel & Goldfarb, JASN 2010;21:1440; Medarov, Mayo Clin Proc 2009;84:261 (from memory): calcium with
# absorbable alkali, hypercalcemia and a reduced GFR; hypercalcemia is natriuretic, so a high urine
# chloride does not make the alkalosis saline-resistant; volume repletion and stopping the calcium
# and alkali are first-line.

CALCIUM_ALKALI: dict[str, Any] = {
    "case": "invented: calcium carbonate for dyspepsia, confused and dry",
    "patient": {"age": 63, "sex": "female", "weight_kg": 60},
    "gas": {"sample": "arterial", "ph": 7.50, "pco2": 47, "hco3": 36},
    "chem": {"na": 138, "k": 3.7, "cl": 96, "tco2": 37, "creatinine": 2.4, "albumin": 3.8, "ca": 13.4},
    "urine": {"na": 70, "cl": 68, "creatinine": 60},
    "context": {"bp": "104/60", "meds": ["calcium carbonate"]},
}


def test_calcium_alkali_syndrome_has_its_own_cause_and_is_likely() -> None:
    assessment = assess(CALCIUM_ALKALI)
    assert tiers(assessment)["calcium_alkali"] == "likely"


def test_hypercalcemia_keeps_a_high_urine_chloride_from_reading_as_chloride_resistant() -> None:
    assessment = assess(CALCIUM_ALKALI)
    assert assessment.chloride_class == "indeterminate"
    says = considerations(assessment)
    assert "chloride_resistant" not in says
    assert not any("saline will not correct" in text for text in says.values())
    assert "first-line" in says["calcium_alkali"]


def test_high_urine_chloride_with_hypercalcemia_does_not_raise_a_tubulopathy_or_covert_diuretic() -> None:
    found = tiers(assess(CALCIUM_ALKALI))
    assert found["salt_wasting_tubulopathy"] == "unlikely"
    assert found["diuretic"] == "unlikely"


def test_calcium_alerts_read_the_albumin_corrected_calcium() -> None:
    # Payne et al., BMJ 1973: Ca + 0.8 x (4.0 - albumin); 13.4 with albumin 3.8 -> 13.56, at or above the
    # critical 13 mg/dL (common practice).
    alerts = {a.code: a for a in assess(CALCIUM_ALKALI).alerts}
    assert alerts["hypercalcemia"].level == "critical"
    assert "13.6 mg/dL" in alerts["hypercalcemia"].message
    low = assess({**CALCIUM_ALKALI, "chem": {**CALCIUM_ALKALI["chem"], "ca": 6.0, "albumin": 4.0}})
    assert "severe_hypocalcemia" in alert_codes(low)
