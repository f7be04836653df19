"""The acidosis work-up in the note: the paragraph's sentences, the note's section, the JSON object.

The cases are the invented samples under samples/ (their golden notes are in samples/expected).
"""

from __future__ import annotations

import json
from functools import cache
from pathlib import Path
from typing import Any

from hypothesis import given, settings
from hypothesis import strategies as st
from test_no_invented_numbers import allowed_numbers, invented_numbers
from test_prose import assert_well_formed

from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.intake.read import read_case
from notegen.note.acidosis_paragraph import acidosis_sentences
from notegen.note.paragraph import draft_paragraph
from notegen.pipeline import Drafter, DraftOptions
from notegen.schemas import output_schema

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
DRAFTER = Drafter()


@cache
def sample(stem: str) -> Assessment:
    return DRAFTER.assess(read_case(str(SAMPLES / f"{stem}.yaml")))


def test_ketoacidosis_is_named_with_its_findings() -> None:
    # The complaint: a ketoacidosis sample was never named as ketoacidosis.
    sentences = acidosis_sentences(sample("diabetic_ketoacidosis"))
    assert sentences[0] == (
        "For the high anion gap acidosis the likely cause is ketoacidosis (beta-hydroxybutyrate 6.8 mmol/L is "
        "at or above 3 mmol/L; glucose 540 mg/dL is at or above 250 mg/dL, as in diabetic ketoacidosis)."
    )
    assert sentences[1] == "Lactic acidosis is also possible."


def test_a_normal_gap_acidosis_reads_the_urine_anion_gap() -> None:
    assessment = sample("ileostomy_normal_gap")
    assert assessment.acidosis is not None and assessment.acidosis.ammonium == "adequate"
    paragraph = draft_paragraph(assessment)
    assert "the likely cause is bicarbonate loss from the gut" in paragraph
    assert "the kidney is excreting ammonium" in paragraph
    assert assessment.calculations["urine_anion_gap"].value == 38 + 25 - 98


def test_both_work_ups_tell_one_story_in_order() -> None:
    paragraph = draft_paragraph(sample("salicylate_triple_disorder"))
    alkalosis = paragraph.index("The likely cause is gastric acid loss")
    acidosis = paragraph.index("For the high anion gap acidosis the likely cause is salicylate poisoning")
    tests = paragraph.index("Next test")  # one test left now: "Next test to consider:"
    assert alkalosis < acidosis < tests
    assert paragraph.count("Next test") == 1  # one list for both work-ups


def test_no_acidosis_sentence_without_the_work_up() -> None:
    assessment = sample("thiazide_and_vomiting")
    assert assessment.acidosis is None
    assert acidosis_sentences(assessment) == []


def test_the_note_has_its_acidosis_section_and_the_alkalosis_one_unchanged() -> None:
    case = read_case(str(SAMPLES / "toxic_alcohol_osmolal_gap.yaml"))
    note = DRAFTER.draft(case, DraftOptions(worksheet=True))  # the causes weighed are in the worksheet
    assert "## Causes of the metabolic acidosis weighed" not in DRAFTER.draft(case)
    assert "## Causes of the metabolic acidosis weighed" in note
    assert "### Toxic alcohol poisoning: likely" in note
    assert "## Tests that would help with the acidosis" in note
    assert "poison control or toxicology" in note
    # A cause nothing speaks for or against is not called unlikely.
    assert "**Not yet weighed (nothing in these values speaks for or against):** salicylate poisoning." in note


def test_json_holds_the_acidosis_object_and_the_alkalosis_keys() -> None:
    data = json.loads(
        DRAFTER.draft(read_case(str(SAMPLES / "salicylate_triple_disorder.yaml")), DraftOptions(output_format="json"))
    )
    for key in ("chloride_class", "chloride_notes", "generation", "differential", "maintenance", "next_tests"):
        assert key in data
    assert data["differential"][0]["cause"] == "gastric_loss"
    acidosis = data["acidosis"]
    assert acidosis["kind"] == "high_gap"
    first = acidosis["differential"][0]
    assert {"cause", "label", "tier", "for", "against"} <= set(first)
    assert first["cause"] == "salicylate" and first["tier"] == "likely"
    assert all({"test", "label", "why"} <= set(test) for test in acidosis["next_tests"])
    none = json.loads(
        DRAFTER.draft(read_case(str(SAMPLES / "thiazide_and_vomiting.yaml")), DraftOptions(output_format="json"))
    )
    assert none["acidosis"] is None


def test_the_output_schema_describes_the_acidosis_object() -> None:
    schema = output_schema()
    assert "acidosis" in schema["properties"]
    workup = schema["$defs"]["AcidosisWorkup"]
    assert workup["properties"]["kind"]["enum"] == ["high_gap", "normal_gap", "mixed"]


@settings(max_examples=60, deadline=None, derandomize=True)
@given(
    normal_gap=st.booleans(),
    chem=st.fixed_dictionaries(
        {},
        optional={
            "bhb": st.sampled_from([0.2, 1.1, 3.0, 7.5]),
            "lactate": st.sampled_from([0.9, 2.0, 3.9, 11.2]),
            "osm": st.sampled_from([285, 300, 345]),
            "salicylate": st.sampled_from([2, 12, 30, 71]),
            "k": st.sampled_from([2.8, 3.6, 5.0, 6.3]),
            "phos": st.sampled_from([1.4, 3.5]),
            "creatinine": st.sampled_from([0.8, 2.5, 7.0]),
        },
    ),
    urine=st.fixed_dictionaries(
        {},
        optional={
            "na": st.sampled_from([8, 45]),
            "k": st.sampled_from([20, 40]),
            "cl": st.sampled_from([40, 110]),
            "ph": st.sampled_from([5.0, 6.6]),
            "ketones": st.sampled_from([0, 80]),
        },
    ),
    findings=st.lists(
        st.sampled_from(
            ["diabetes", "sepsis", "diarrhea", "ileostomy", "saline resuscitation", "short bowel", "overdose"]
        ),
        max_size=3,
        unique=True,
    ),
    meds=st.lists(
        st.sampled_from(["aspirin", "acetazolamide", "metformin", "paracetamol", "lisinopril"]), max_size=2, unique=True
    ),
)
def test_any_acidosis_work_up_reads_as_sentences_and_invents_no_number(
    normal_gap: bool,
    chem: dict[str, float],
    urine: dict[str, float],
    findings: list[str],
    meds: list[str],
) -> None:
    base = (
        {"sample": "arterial", "ph": 7.28, "pco2": 28, "hco3": 13}
        if normal_gap
        else {"sample": "arterial", "ph": 7.20, "pco2": 20, "hco3": 8}
    )
    data: dict[str, Any] = {
        "patient": {"age": 50, "sex": "female"},
        "gas": base,
        "chem": {
            "na": 138,
            "cl": 115 if normal_gap else 100,
            "albumin": 4.0,
            "bun": 20,
            "glucose": 110,
            "k": 4.2,
            **chem,
        },
        "context": {"findings": findings, "meds": meds},
    }
    if urine:
        data["urine"] = urine
    case = validate_case({"units": "conventional", **data})
    assessment = DRAFTER.assess(case)
    assert assessment.acidosis is not None
    assert_well_formed(assessment.paragraph)
    note = DRAFTER.draft(case)
    assert invented_numbers(note, allowed_numbers(assessment)) == []


def test_explain_shows_the_walk_of_the_acidosis_pack() -> None:
    note = DRAFTER.draft(read_case(str(SAMPLES / "ileostomy_normal_gap.yaml")), DraftOptions(explain=True))
    assert "The alkalosis pack was not walked for this case." in note
    assert "**Rule walk of the acidosis pack:**" in note
    assert "| node urine\\_gap\\_sign | urine anion gap below 0 mmol/L" in note
    plain = DRAFTER.draft(read_case(str(SAMPLES / "ileostomy_normal_gap.yaml")))
    assert "Rule walk of the acidosis pack" not in plain


def test_two_likely_causes_are_named_together_in_words() -> None:
    # Beta-hydroxybutyrate 5.5 with diabetes, and lactate 9.0 with septic shock: both lead.
    data: dict[str, Any] = {
        "patient": {"age": 50, "sex": "male"},
        "gas": {"sample": "arterial", "ph": 7.20, "pco2": 20, "hco3": 8},
        "chem": {"na": 138, "cl": 100, "k": 4.4, "albumin": 4.0, "glucose": 480, "bhb": 5.5, "lactate": 9.0},
        "context": {"findings": ["diabetes", "septic shock"]},
    }
    sentences = acidosis_sentences(DRAFTER.assess(validate_case({"units": "conventional", **data})))
    assert sentences[0].startswith("For the high anion gap acidosis two causes are likely together: ketoacidosis (")
    assert "; and lactic acidosis (lactate 9.0 mmol/L is at or above 4 mmol/L" in sentences[0]
