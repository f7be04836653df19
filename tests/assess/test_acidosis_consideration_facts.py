"""The acidosis facts a consideration can read: `cause_<id>_likely` and `evidence_<cause>_<item>`.

Invented cases. A high anion gap of 24 mmol/L (138 - 100 - 14), albumin 4.0.
"""

from __future__ import annotations

from typing import Any

from notegen.assess.considerations import load_considerations
from notegen.assess.facts import EVIDENCE_PREFIX, consideration_facts
from notegen.engine import BooleanFact
from notegen.intake.read import read_case_data
from notegen.pipeline import Drafter

BASE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 47, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.31, "pco2": 29, "hco3": 14},
    "chem": {"na": 138, "k": 4.4, "cl": 100, "albumin": 4.0, "creatinine": 0.9, "bun": 14, "glucose": 110},
}


def facts_for(chem: dict[str, Any], **context: Any) -> dict[str, Any]:
    data = {**BASE, "chem": {**BASE["chem"], **chem}, "context": context}
    assessment = Drafter().assess(read_case_data(data))
    loaded = load_considerations()
    evidence = tuple(n for n in loaded.catalogue if n.startswith(EVIDENCE_PREFIX))
    assert "evidence_toxic_alcohol_osmolal_gap_high" in evidence
    return consideration_facts(assessment, loaded.pack, loaded.groups, loaded.acidosis_causes, evidence)


def test_a_high_osmolal_gap_is_a_positive_finding_though_the_cause_is_only_possible() -> None:
    # Osmolality 320 against 2 x 138 + 110/18 + 14/2.8 = 287: a gap of about 33 (Kraut & Xing, AJKD 2011).
    facts = facts_for({"lactate": 2.0, "osm": 320})
    assert facts["evidence_toxic_alcohol_osmolal_gap_high"] == BooleanFact(True)
    assert facts["cause_toxic_alcohol"] == BooleanFact(True)
    # 3 points for, 1 against (no ingestion reported): possible, not likely.
    assert facts["cause_toxic_alcohol_likely"] == BooleanFact(False)


def test_evidence_not_met_is_false_and_a_likely_cause_is_likely() -> None:
    facts = facts_for({"lactate": 9.0})
    assert facts["evidence_toxic_alcohol_osmolal_gap_high"] == BooleanFact(False)
    assert facts["evidence_lactic_acidosis_lactate_high"] == BooleanFact(True)
    assert facts["cause_lactic_acidosis_likely"] == BooleanFact(True)
