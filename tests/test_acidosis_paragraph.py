"""The acidosis work-up in the note: the paragraph's sentences, the note's section, the JSON object.

The cases are the invented samples under samples/ (their golden notes are in samples/expected).
"""

from __future__ import annotations

import json
from functools import cache
from pathlib import Path

from notegen.assess.model import Assessment
from notegen.intake.read import read_case
from notegen.note.acidosis_paragraph import acidosis_sentences
from notegen.note.paragraph import draft_paragraph
from notegen.pipeline import Drafter, DraftOptions
from notegen.schemas import output_schema

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
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
    tests = paragraph.index("Next tests to consider:")
    assert alkalosis < acidosis < tests
    assert paragraph.count("Next test") == 1  # one list for both work-ups


def test_no_acidosis_sentence_without_the_work_up() -> None:
    assessment = sample("thiazide_and_vomiting")
    assert assessment.acidosis is None
    assert acidosis_sentences(assessment) == []


def test_the_note_has_its_acidosis_section_and_the_alkalosis_one_unchanged() -> None:
    note = DRAFTER.draft(read_case(str(SAMPLES / "toxic_alcohol_osmolal_gap.yaml")))
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
