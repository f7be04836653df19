"""The shipped templates render without the `assessment` dump; a service's template still gets it."""

from __future__ import annotations

from pathlib import Path

from notegen.intake.read import read_case
from notegen.note.writer import complete_assessment, note_context
from notegen.pipeline import Drafter, DraftOptions

SAMPLES = Path(__file__).resolve().parents[2] / "samples"


def test_context_without_the_dump_is_the_same_otherwise() -> None:
    assessment = complete_assessment(Drafter().assess(read_case(SAMPLES / "gastric_suction.yaml")))
    full = note_context(assessment, DraftOptions())
    lean = note_context(assessment, DraftOptions(), with_assessment=False)
    assert full["assessment"]["acid_base"]["primary"] == assessment.acid_base.primary
    assert "assessment" not in lean
    assert lean == {key: value for key, value in full.items() if key != "assessment"}
