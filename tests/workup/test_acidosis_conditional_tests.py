"""Poisoning tests kept on an undecided `suggest_when` are conditional, not due now.

Every case is invented. The rule (rules/acidosis/tests.yaml, common practice: lactate and ketones
first, toxicology where they fall short; Kraut & Madias, Nat Rev Nephrol 2010;6:274; Kraut & Xing,
AJKD 2011;58:480): while lactate or beta-hydroxybutyrate is not measured, `gap_unexplained` is
undecided, so the osmolal gap and toxicology tests are listed as "if lactate and ketones leave the
gap unexplained"; once both are measured and fall short they are plain; once they explain the gap
the tests are held back.
"""

from __future__ import annotations

from typing import Any

from notegen.acidbase.calculations import compute_calculations
from notegen.acidbase.reading import read_acid_base
from notegen.engine import walk
from notegen.engine.results import Suggestion
from notegen.intake.read import read_case_data
from notegen.knowledge import shipped_knowledge
from notegen.workup.acidosis import evaluate_acidosis
from notegen.workup.acidosis_facts import derive_acidosis_facts
from notegen.workup.acidosis_model import AcidosisTest
from notegen.workup.alkalosis import _conditional

PACK = shipped_knowledge().acidosis_pack
# Gap 138 - (100 + 14) = 24 mmol/L at albumin 4.0, an excess of 12 mmol/L over the normal 12
# (rules/acid_base.yaml); Winter's formula (Albert, Dell & Winters 1967): 1.5 x 14 + 8 = 29 +/- 2.
BASE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 47, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.31, "pco2": 29, "hco3": 14},
    "chem": {"na": 138, "k": 4.2, "cl": 100, "albumin": 4.0, "creatinine": 0.9, "bun": 15, "glucose": 105},
}
IF_UNEXPLAINED = "if lactate and ketones leave the gap unexplained"
UNRECOGNISED = {"meds": ["zorblatine"]}  # an invented name: every medication class is then undecided


def data_with(**chem: float) -> dict[str, Any]:
    return {**BASE, "chem": {**BASE["chem"], **chem}}


def next_tests_of(data: dict[str, Any]) -> dict[str, AcidosisTest]:
    case = read_case_data(data)
    result = evaluate_acidosis(case, read_acid_base(case), PACK, calculations=compute_calculations(case))
    assert result is not None and result.kind == "high_gap"
    return {t.test: t for t in result.next_tests}


def test_without_lactate_and_ketones_the_poisoning_tests_are_conditional_on_the_gap() -> None:
    tests = next_tests_of(data_with())
    assert not tests["lactate"].conditional and not tests["ketones"].conditional
    osmolality = tests["serum_osmolality"]
    assert osmolality.conditional
    assert osmolality.conditional_on == ("gap_unexplained",)
    assert osmolality.conditional_says == IF_UNEXPLAINED
    # the toxic alcohol levels wait on the osmolal gap as well as on the gap
    assert set(tests["toxic_alcohol_levels"].conditional_on) == {"osmolal_gap", "gap_unexplained"}
    assert tests["salicylate_level"].conditional_on == ("gap_unexplained",)


def test_with_lactate_alone_the_gap_is_still_undecided_so_the_tests_stay_conditional() -> None:
    tests = next_tests_of(data_with(lactate=2.0))  # 12 - 2 = 10 left; the ketones could still explain it
    assert "lactate" not in tests
    assert tests["serum_osmolality"].conditional


def test_a_measured_unexplained_gap_makes_the_poisoning_tests_plain() -> None:
    tests = next_tests_of(data_with(lactate=2.0, bhb=0.3))  # 12 - 2.3 = 9.7 left, both measured
    assert {"serum_osmolality", "toxic_alcohol_levels", "salicylate_level"} <= set(tests)
    for test in tests.values():
        assert not test.conditional and test.conditional_on == () and test.conditional_says == ""


def test_an_explained_gap_holds_the_poisoning_tests_back() -> None:
    tests = next_tests_of(data_with(lactate=9.0))  # 12 - 9 = 3, within 4 mmol/L
    assert not {"serum_osmolality", "toxic_alcohol_levels", "salicylate_level"} & set(tests)


def test_an_explained_gap_is_never_named_as_the_condition() -> None:
    # Lactate explains the gap; an unrecognised medication could still be a salicylate or acetaminophen.
    tests = next_tests_of({**data_with(lactate=9.0), "context": UNRECOGNISED})
    assert not {"serum_osmolality", "toxic_alcohol_levels"} & set(tests)
    salicylate = tests["salicylate_level"]
    assert salicylate.conditional_on == ("salicylate_listed",)
    assert salicylate.conditional_says == "if a medication not recognised is a salicylate"


def test_an_undecided_gap_and_medication_are_both_named() -> None:
    tests = next_tests_of({**data_with(), "context": UNRECOGNISED})
    assert tests["salicylate_level"].conditional_says == (
        "if lactate and ketones leave the gap unexplained or a medication not recognised is a salicylate"
    )
    assert tests["toxic_alcohol_levels"].conditional_says == (
        "if the osmolal gap is high or lactate and ketones leave the gap unexplained"
    )


def test_a_gate_that_holds_gives_no_condition() -> None:
    # A reported ingestion makes every poisoning gate true: nothing is left conditional.
    tests = next_tests_of({**data_with(), "context": {"findings": ["toxic_ingestion"]}})
    assert not any(t.conditional for t in tests.values())


def test_the_engine_names_the_missing_facts_that_leave_a_gate_open() -> None:
    case = read_case_data(data_with())
    facts = derive_acidosis_facts(case, read_acid_base(case), compute_calculations(case), PACK)
    found = {s.test: s for s in walk(PACK, facts).suggestions}
    assert found["serum_osmolality"].conditional_on == ("gap_unexplained",)
    assert found["serum_osmolality"].as_dict()["conditional_on"] == ["gap_unexplained"]
    assert not found["lactate"].conditional and "conditional_on" not in found["lactate"].as_dict()


def test_the_json_carries_the_conditional_state() -> None:
    tests = next_tests_of(data_with())
    dumped = tests["serum_osmolality"].model_dump(mode="json")
    assert dumped["conditional"] is True and dumped["conditional_on"] == ["gap_unexplained"]


def test_a_missing_fact_the_pack_does_not_word_is_named_by_its_label() -> None:
    suggestion = Suggestion(
        "acetaminophen_level", "acetaminophen level", ("acetaminophen_detected",), (), "", "",
        ("gap_unexplained", "acetaminophen_listed"), ("lactate and ketones leave the gap unexplained", ""),
    )  # fmt: skip
    assert _conditional(PACK, suggestion)["conditional_says"] == (
        "if lactate and ketones leave the gap unexplained, or depending on acetaminophen listed"
    )
    plain = Suggestion("lactate", "lactate", ("lactate",), (), "", "")
    assert _conditional(PACK, plain) == {}
