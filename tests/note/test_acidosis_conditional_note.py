"""The note words a test kept on an undecided condition as conditional, after the tests due now.

Every case is invented. Common practice (Kraut & Madias, Nat Rev Nephrol 2010;6:274; Kraut & Xing,
AJKD 2011;58:480): lactate and ketones first; the osmolal gap and toxicology where they leave the gap
unexplained (rules/acidosis/tests.yaml).
"""

from __future__ import annotations

from typing import Any

from notegen.intake.read import read_case_data
from notegen.note.options import DraftOptions
from notegen.note.paragraph import draft_paragraph
from notegen.note.worksheet import test_row as row_of
from notegen.pipeline import Drafter
from notegen.workup.model import SuggestedTest

# Gap 138 - (100 + 14) = 24 mmol/L at albumin 4.0; no lactate or ketones measured; no ingestion.
CASE: dict[str, Any] = {
    "units": "conventional",
    "patient": {"age": 47, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.31, "pco2": 29, "hco3": 14},
    "chem": {"na": 138, "k": 4.2, "cl": 100, "albumin": 4.0, "creatinine": 0.9, "bun": 15, "glucose": 105},
}


def test_the_note_words_the_conditional_tests_after_the_ones_due_now() -> None:
    drafter = Drafter()
    case = read_case_data(CASE)
    text = drafter.draft(case, DraftOptions())
    osmolality = (
        "- **Measured serum osmolality, for the osmolal gap:** If lactate and ketones leave the gap"
        " unexplained, it would bear on toxic alcohol poisoning."
    )
    assert osmolality in text, text
    assert text.index("**Lactate:**") < text.index("**Measured serum osmolality")
    paragraph = draft_paragraph(drafter.assess(case))
    assert "; then, if lactate and ketones leave the gap unexplained, measured serum osmolality" in paragraph
    assert "lactate, and salicylate level" not in paragraph  # salicylate is conditional here too




def test_the_paragraph_names_only_conditional_tests_with_their_condition() -> None:
    # Lactate 2.0 measured: the ketones are still missing, so the gap stays undecided.
    case = read_case_data({**CASE, "chem": {**CASE["chem"], "lactate": 2.0}})
    paragraph = draft_paragraph(Drafter().assess(case))
    assert "Next tests to consider: serum beta-hydroxybutyrate or urine ketones; then, if lactate" in paragraph


def test_with_only_conditional_tests_the_sentence_opens_with_the_condition() -> None:
    # The same work-up with the tests due now taken out, as a service pack could leave it.
    assessment = Drafter().assess(read_case_data(CASE))
    assert assessment.acidosis is not None
    pending = tuple(t for t in assessment.acidosis.next_tests if t.conditional)
    only = assessment.model_copy(
        update={"next_tests": (), "acidosis": assessment.acidosis.model_copy(update={"next_tests": pending})}
    )
    assert draft_paragraph(only).endswith(
        " Tests to consider if lactate and ketones leave the gap unexplained: measured serum osmolality, for the"
        " osmolal gap and salicylate level. Tests to consider if the osmolal gap is high or lactate and ketones"
        " leave the gap unexplained: toxic alcohol levels (methanol, ethylene glycol)."
    )


def test_a_conditional_alkalosis_test_row_says_on_what_it_waits() -> None:
    # The alkalosis pack ships no `suggest_when`; a service pack could add one.
    pending = SuggestedTest(
        test="urine_chloride", label="spot urine chloride", why="", conditional=True,
        conditional_on=("vomiting",), conditional_says="if the vomiting is confirmed",
    )  # fmt: skip
    sentence = row_of(pending)["sentence"]
    assert sentence.startswith("If the vomiting is confirmed: "), sentence
    assert row_of(pending.model_copy(update={"conditional": False}))["sentence"] == sentence.split(": ", 1)[1]
