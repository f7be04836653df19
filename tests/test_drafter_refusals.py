"""A case with no measured value is refused by the `Drafter` itself, so every way in refuses it. Invented cases."""

from __future__ import annotations

from pathlib import Path

import pytest

import notegen
from notegen.case.model import Case, Chem
from notegen.case.validation import validate_case
from notegen.errors import InputError, NothingToAssessError
from notegen.pipeline import Drafter, DraftOptions

CONTEXT_ONLY = {"case": "nothing measured", "units": "conventional", "context": {"volume": "low"}}
MESSAGE = "nothing to assess: the case holds no measured value; give gas, chem or urine values"


def test_the_api_refuses_a_case_with_no_measured_value() -> None:
    # Before: notegen.draft() drafted a note for it, while the command line refused it.
    with pytest.raises(NothingToAssessError) as info:
        notegen.draft(CONTEXT_ONLY)
    assert str(info.value) == MESSAGE
    assert isinstance(info.value, InputError) and info.value.exit_code == 2


def test_every_drafter_entry_refuses_it() -> None:
    drafter = Drafter()
    case = validate_case(CONTEXT_ONLY, filename="blank.yaml")
    for attempt in (
        lambda: drafter.note(case),
        lambda: drafter.draft(case, DraftOptions(output_format="json")),
        lambda: drafter.draft_json_line(case),
        lambda: drafter.assess(case),
    ):
        with pytest.raises(NothingToAssessError):
            attempt()


def test_a_case_built_in_code_with_a_value_is_assessed() -> None:
    # values set on a Case directly count, though no measurement records how they were reported
    assessment = Drafter().assess(Case(chem=Chem(na=140, cl=104)))
    assert assessment.case.chem.na == 140


def test_the_context_only_sample_is_refused_alone_and_drafted_with_its_paste() -> None:
    samples = Path(__file__).resolve().parent.parent / "samples"
    sample = samples / "with_paste" / "context_only.yaml"
    with pytest.raises(NothingToAssessError):
        notegen.draft(sample)
    from notegen.intake.read import read_case

    note = Drafter().note(read_case(str(sample), paste=str(samples / "pasted_labs.txt")))
    assert "pH 7.52" in note.markdown and note.assessment.case.context.volume == "low"  # paste and file together


def test_the_refusal_names_its_input_once_located() -> None:
    error = NothingToAssessError().at("ward/bed3.yaml")
    assert str(error) == f"ward/bed3.yaml: {MESSAGE}"
    assert error.at("elsewhere") is error  # located once: a second name is not stacked on it
    hinted = NothingToAssessError().at("bed3.yaml", hint=", or --paste a lab block")
    assert str(hinted).endswith("give gas, chem or urine values, or --paste a lab block")
