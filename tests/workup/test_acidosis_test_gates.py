"""When the acidosis pack asks for the poisoning tests: `gap_unexplained` and the tests' `suggest_when`.

Every case is invented. The rule (rules/acidosis/tests.yaml, common practice: lactate and ketones
first, toxicology where they fall short; Kraut & Madias, Nat Rev Nephrol 2010;6:274; Kraut & Xing,
AJKD 2011;58:480): the osmolal gap, toxic alcohol, salicylate and acetaminophen levels are held back
where the measured lactate, beta-hydroxybutyrate or uremia explain the gap excess (within
`gap_excess_explained_within`, 4 mmol/L, common practice; uremia up to `uremic_gap_excess_up_to`,
8 mmol/L, Kraut & Madias, Am J Kidney Dis 2016;67:307, from memory) and nothing else points to a
poisoning; they stay where the gap is unexplained or not yet decided.
"""

from __future__ import annotations

from typing import Any

import pytest

from notegen.acidbase.calculations import compute_calculations
from notegen.acidbase.reading import read_acid_base
from notegen.engine import BooleanFact, MissingFact
from notegen.intake.read import read_case_data
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter
from notegen.workup.acidosis import evaluate_acidosis
from notegen.workup.acidosis_facts import gap_unexplained_fact

PACK = shipped_knowledge().acidosis_pack
POISON_TESTS = {"serum_osmolality", "toxic_alcohol_levels", "salicylate_level", "acetaminophen_level"}
EMERGENCY = "poison control or toxicology, per local protocol; treatment may need to start"
# A high anion gap acidosis: 138 - (100 + 14) = 24 mmol/L, albumin 4.0 (the normal albumin, no
# correction), so the gap excess is 24 - 12 = 12 mmol/L (`anion_gap_normal`, rules/acid_base.yaml).
# Winter's formula (Albert, Dell & Winters 1967): 1.5 x 14 + 8 = 29 +/- 2, met by PaCO2 29.
BASE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 52, "sex": "female"},
    "gas": {"sample": "arterial", "ph": 7.31, "pco2": 29, "hco3": 14},
    "chem": {"na": 138, "k": 4.4, "cl": 100, "albumin": 4.0, "creatinine": 0.9, "bun": 14, "glucose": 110},
}


def case_data(chem: dict[str, Any] | None = None, **context: Any) -> dict[str, Any]:
    data = {**BASE, "chem": {**BASE["chem"], **(chem or {})}}
    if context:
        data["context"] = context
    return data


def suggested(data: dict[str, Any]) -> set[str]:
    case = read_case_data(data)
    result = evaluate_acidosis(case, read_acid_base(case), PACK, calculations=compute_calculations(case))
    assert result is not None and result.kind == "high_gap"
    return {t.test for t in result.next_tests}


def fact(data: dict[str, Any]) -> object:
    case = read_case_data(data)
    return gap_unexplained_fact(case, compute_calculations(case), PACK)


@pytest.mark.parametrize(
    ("chem", "expected"),
    [
        ({"lactate": 9.0}, BooleanFact(False)),  # 12 - 9 = 3, within 4: explained
        ({"lactate": 5.0, "bhb": 4.0}, BooleanFact(False)),  # 12 - 9 = 3
        ({"lactate": 2.0, "bhb": 0.3}, BooleanFact(True)),  # 12 - 2.3 = 9.7 left, both measured
        ({"lactate": 2.0}, MissingFact("lactate or beta-hydroxybutyrate not measured")),  # ketones could
        ({}, MissingFact("lactate or beta-hydroxybutyrate not measured")),
        # Kidney failure: creatinine 5.5 gives eGFR below 20 (CKD-EPI 2021), BUN 70 at or above 60;
        # the 12 mmol/L excess is more than the 8 that uremia alone accounts for, so not explained yet.
        ({"creatinine": 5.5, "bun": 70}, MissingFact("lactate or beta-hydroxybutyrate not measured")),
        ({"creatinine": 5.5, "bun": 70, "cl": 104, "tco2": 14}, BooleanFact(False)),  # gap 20, excess 8
        ({"bun": 70, "cl": 104, "lactate": 1.0, "bhb": 0.2}, BooleanFact(False)),  # BUN alone marks uremia
        ({"creatinine": 5.5, "bun": 70, "lactate": 1.0, "bhb": 0.2}, BooleanFact(True)),  # 10.8 > 8
    ],
    ids=[
        "lactate-explains",
        "lactate-and-ketones-explain",
        "both-fall-short",
        "ketones-missing",
        "nothing-measured",
        "uremia-too-small",
        "uremia-explains",
        "bun-uremia-explains",
        "uremia-and-acids-fall-short",
    ],
)
def test_gap_unexplained(chem: dict[str, Any], expected: object) -> None:
    assert fact(case_data(chem)) == expected


def test_the_post_arrest_vignette_gap_is_explained_by_lactate() -> None:
    # pH 7.05, PaCO2 50, HCO3 13.5, Na 138, Cl 100, albumin 4.0, lactate 9: gap 24.5, excess 12.5.
    data = case_data({"lactate": 9.0}, findings=["cardiac arrest"])
    data["gas"] = {"sample": "arterial", "ph": 7.05, "pco2": 50, "hco3": 13.5}
    assert fact(data) == BooleanFact(False)
    assert not suggested(data) & POISON_TESTS


def test_lactate_explaining_the_gap_holds_the_poisoning_tests_back() -> None:
    assert not suggested(case_data({"lactate": 9.0, "bhb": 0.3})) & POISON_TESTS


def test_an_unexplained_gap_asks_for_the_poisoning_tests() -> None:
    tests = suggested(case_data({"lactate": 2.0, "bhb": 0.3}))
    assert {"serum_osmolality", "toxic_alcohol_levels", "salicylate_level"} <= tests


def test_an_undecided_gap_keeps_the_poisoning_tests_beside_lactate_and_ketones() -> None:
    # Never guess: without lactate or ketones the gap may still be unexplained, so nothing is hidden.
    tests = suggested(case_data())
    assert {"ketones", "lactate", "serum_osmolality", "toxic_alcohol_levels", "salicylate_level"} <= tests


def test_uremia_explaining_the_gap_holds_the_poisoning_tests_back_but_asks_for_lactate() -> None:
    tests = suggested(case_data({"creatinine": 5.5, "bun": 70, "cl": 104, "tco2": 14}))
    assert "lactate" in tests
    assert not tests & POISON_TESTS


def test_a_reported_ingestion_asks_for_the_levels_even_where_lactate_explains_the_gap() -> None:
    tests = suggested(case_data({"lactate": 9.0, "bhb": 0.3}, findings=["suspected ingestion"]))
    assert {"serum_osmolality", "toxic_alcohol_levels", "salicylate_level"} <= tests


def test_a_normal_measured_osmolal_gap_holds_toxic_alcohol_levels_back() -> None:
    # Osmolality 290 against 2 x 138 + 110/18 + 14/2.8 = 287: a gap of about 3, below 10 mOsm/kg.
    tests = suggested(case_data({"lactate": 2.0, "bhb": 0.3, "osm": 290}))
    assert "toxic_alcohol_levels" not in tests
    assert "salicylate_level" in tests  # the gap is still unexplained


def test_a_high_measured_osmolal_gap_asks_for_toxic_alcohol_levels_even_where_lactate_explains() -> None:
    # Osmolality 320 against about 287: a gap of about 33, at or above 10 mOsm/kg.
    tests = suggested(case_data({"lactate": 9.0, "bhb": 0.3, "osm": 320}))
    assert "toxic_alcohol_levels" in tests


def test_the_salicylate_pattern_or_a_listed_salicylate_asks_for_a_level_where_lactate_explains() -> None:
    explained = {"lactate": 9.0, "bhb": 0.3}
    assert "salicylate_level" in suggested(case_data(explained, meds=["aspirin"]))
    # A respiratory alkalosis beside the acidosis: HCO3 14 with PaCO2 20, below Winter's 27-31.
    data = case_data(explained)
    data["gas"] = {"sample": "arterial", "ph": 7.45, "pco2": 20, "hco3": 14}
    assert "salicylate_level" in suggested(data)
    assert "salicylate_level" not in suggested(case_data(explained))


def drafted(data: dict[str, Any]) -> str:
    return Drafter().draft(read_case_data(data))


def test_a_possible_salicylate_resting_on_the_pattern_alone_is_no_poisoning_emergency() -> None:
    # Sepsis, PaCO2 22 with HCO3 14 and a gap of 19: no ingestion, no level, no lactate yet.
    data = case_data({"cl": 105}, findings=["sepsis"])
    data["gas"] = {"sample": "arterial", "ph": 7.42, "pco2": 22, "hco3": 14}
    text = drafted(data)
    assert "**Salicylate level:**" in text and "**Lactate:**" in text
    assert EMERGENCY not in text


@pytest.mark.parametrize(
    ("chem", "context"),
    [
        ({"lactate": 2.0}, {"findings": ["suspected ingestion"]}),  # an ingestion reported
        ({"lactate": 2.0, "osm": 320}, {}),  # a high osmolal gap, no ingestion reported
        ({"lactate": 1.0}, {"meds": ["aspirin"], "findings": []}),  # salicylate likely: listed, with the pattern
    ],
    ids=["ingestion", "osmolal-gap", "aspirin-with-pattern"],
)
def test_the_poisoning_emergency_is_printed_where_a_poisoning_is_likely_or_shown(
    chem: dict[str, Any], context: dict[str, Any]
) -> None:
    data = case_data(chem, **context)
    if "meds" in context:
        data["gas"] = {"sample": "arterial", "ph": 7.45, "pco2": 20, "hco3": 14}
    assert EMERGENCY in drafted(data)


def test_a_toxic_salicylate_level_accounts_for_the_gap() -> None:
    # Salicylate 58 mg/dL, at or above `salicylate_toxic_from` (30 mg/dL, common practice, from memory):
    # its anion and the acids it drives explain the gap (Kraut & Madias, Nat Rev Nephrol 2010;6:274).
    toxic = {"lactate": 1.6, "salicylate": 58}
    assert fact(case_data(toxic)) == BooleanFact(False)
    assert not suggested(case_data(toxic)) & {"serum_osmolality", "toxic_alcohol_levels"}
    # A level below the toxic range explains nothing: the gap stays undecided without ketones.
    assert fact(case_data({"lactate": 1.6, "salicylate": 12})) == MissingFact(
        "lactate or beta-hydroxybutyrate not measured"
    )
    # A reported ingestion still asks for the toxic alcohol tests (a co-ingestion).
    tests = suggested(case_data(toxic, findings=["intentional ingestion"]))
    assert {"serum_osmolality", "toxic_alcohol_levels"} <= tests
